"""Charge gap, spin gap and pair-binding energy, exactly.

Sign conventions (docs/analysis.md, section "Gaps"); E0(N) is the lowest level
with N electrons:

* charge gap      Δc(N) = E0(N+1) + E0(N−1) − 2 E0(N)   (> 0: E0 convex in N, insulating);
* spin gap        Δs(N) = E_min(N, S0+1) − E0(N), S0 the spin of the ground level
                  (smallest S if the ground set mixes spins); with ``mode="higher"``
                  the minimum runs over all S > S0;
* pair binding    Δp(N) = 2 E0(N−1) − E0(N) − E0(N−2)  (> 0: two added particles
                  gain energy by sharing the cluster, i.e. they bind).

The result is exact where the levels entering it are the same analytic
branch: the levels are chosen at the point ``at``; with ``over=(coupling,
(lo, hi))`` the ground-state map of every sector involved is computed and an
error is raised if a different level is lowest anywhere in that range.
"""

from dataclasses import dataclass

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.analysis.observables import level_value
from symcluster.analysis.sectors import require_electrons
from symcluster.analysis.transitions import ground_states

__all__ = ["GapResult", "lowest_level", "charge_gap", "spin_gap", "pair_binding"]

_TOL = 30  # digits within which two levels count as degenerate


@dataclass(repr=False)
class GapResult:
    """An energy difference Σ c_i E(level_i).

    Attributes
    ----------
    name : str
    terms : list of (int, Level)
    expr : sympy.Expr
        Exact expression; an implicit-root level enters as a symbol listed in
        ``symbols_for``.
    symbols_for : dict
        {Symbol: Level} for the implicit-root levels in ``expr``.
    value : mpmath.mpf
        Numeric value at ``point``.
    point : dict
    valid : str
        Where the expression is known to hold.
    """

    name: str
    terms: list
    expr: object
    symbols_for: dict
    value: object
    point: dict
    valid: str

    def _point_text(self):
        return ", ".join(f"{getattr(k, 'name', k)}={v}" for k, v in (self.point or {}).items())

    def __repr__(self):
        from symcluster.display import short
        value = mpmath.nstr(self.value, 12) if self.value is not None else "?"
        return (f"GapResult({self.name} = {short(sympy.sstr(self.expr))} = {value} at "
                f"{self._point_text()})")

    def _repr_latex_(self):
        from symcluster.display import tex
        value = mpmath.nstr(self.value, 12) if self.value is not None else "?"
        defs = "".join(rf",\ {tex(s)} = {tex(l.energy)}" for s, l in self.symbols_for.items())
        return (rf"$\text{{{self.name}}} = {tex(self.expr)} = {value}"
                rf"\quad ({self._point_text()}){defs}$")

    def _repr_html_(self):
        from symcluster.display import html_table, tex
        value = mpmath.nstr(self.value, 12) if self.value is not None else "?"
        return html_table(["quantity", "exact", "value", "at", "valid"],
                          [[self.name, ("math", tex(self.expr)), value, self._point_text(),
                            self.valid]])

    def numeric(self, values=None, digits=30):
        """Value at another point (default: the point it was computed at)."""
        pt = self.point if values is None else values
        with mpmath.workdps(digits + 5):
            tot = sum(c * level_value(l, pt, digits) for c, l in self.terms)
        with mpmath.workdps(digits):
            return +tot


def _point(spec, at):
    return at if all(isinstance(k, sympy.Symbol) for k in at) else spec.point(at)


def lowest_level(spec, at, digits=30, **qn):
    """The ground set of levels matching ``qn`` (e.g. N=2, S=1) at a point.

    Returns
    -------
    (tuple of Level, mpmath.mpf)
        The levels at the minimum (within 10**-30 relative) and the minimum.
    """
    want = ", ".join(f"{k}={v}" for k, v in qn.items())
    n = qn.get("N")
    if n is not None and (isinstance(n, bool) or not isinstance(n, int)):
        raise ModelError(f"N={n!r} is not an electron number; give an integer such as 2")
    require_electrons(spec, None if n is None else [n], f"the lowest level with {want or 'any N'}")
    levels = spec.select(**qn)
    if not levels:
        raise ModelError(f"no levels with {want}; choose quantum numbers that occur in the "
                         f"spectrum")
    pt = _point(spec, at)
    with mpmath.workdps(digits + 10):
        vals = [level_value(l, pt, digits + 5) for l in levels]
        e0 = min(vals)
        tol = mpmath.mpf(10) ** -_TOL * (1 + abs(e0))
        return tuple(l for l, v in zip(levels, vals) if v - e0 <= tol), +e0


def _check_over(spec, lev, over, pt, qn):
    """Raise unless ``lev`` is the lowest level with ``qn`` over the whole range."""
    if over is None:
        return ""
    coupling, interval = over
    fixed = {s.name: v for s, v in pt.items() if s.name != str(coupling)}
    pieces = ground_states(spec, coupling=coupling, interval=interval, fixed=fixed,
                           levels=spec.select(**qn))
    if len(pieces) != 1 or lev not in pieces[0].levels:
        raise ModelError(
            f"the lowest level with {qn} changes inside {coupling} in {tuple(interval)}; "
            "split the range at the transition points (see transitions())")
    return f"{coupling} in ({interval[0]}, {interval[1]})"


def _build(name, spec, parts, at, over, digits):
    pt = _point(spec, at)
    terms, expr, syms, valid = [], sympy.Integer(0), {}, []
    for coef, qn in parts:
        levs, _ = lowest_level(spec, pt, digits, **qn)
        lev = levs[0]
        v = _check_over(spec, lev, over, pt, qn)
        if v:
            valid.append(v)
        terms.append((coef, lev))
        if lev.is_closed_form:
            expr += coef * lev.energy
        else:
            label = ",".join(f"{k}={val}" for k, val in qn.items())
            sym = sympy.Symbol(f"E_0({label})", real=True)
            syms[sym] = lev
            expr += coef * sym
    res = GapResult(name, terms, sympy.simplify(expr) if not syms else expr, syms,
                    None, pt, valid[0] if valid else "at the given point")
    res.value = res.numeric(digits=digits)
    return res


def _electron_number(n):
    if isinstance(n, bool) or not hasattr(n, "__index__"):
        raise ModelError(f"n_electrons={n!r} is not an electron number; give an integer such "
                         f"as 2")
    return int(n.__index__())


def charge_gap(spec, n_electrons, at, over=None, digits=30):
    """Δc = E0(N+1) + E0(N−1) − 2 E0(N), exact.

    Parameters
    ----------
    spec : Spectrum
    n_electrons : int
    at : dict
        Values of every coupling, e.g. {"t": 1, "U": 4}; the ground levels are
        chosen there.
    over : (str, (lo, hi)), optional
        Also certify that the same levels are lowest for this coupling range.
    digits : int

    Returns
    -------
    GapResult
    """
    n = _electron_number(n_electrons)
    require_electrons(spec, [n - 1, n, n + 1], f"the charge gap at N={n}")
    return _build("charge gap", spec, [(1, {"N": n + 1}), (1, {"N": n - 1}), (-2, {"N": n})],
                  at, over, digits)


def pair_binding(spec, n_electrons, at, over=None, digits=30):
    """Δp = 2 E0(N−1) − E0(N) − E0(N−2), exact (> 0 means binding)."""
    n = _electron_number(n_electrons)
    require_electrons(spec, [n - 2, n - 1, n], f"the pair binding at N={n}")
    return _build("pair binding", spec, [(2, {"N": n - 1}), (-1, {"N": n}), (-1, {"N": n - 2})],
                  at, over, digits)


def spin_gap(spec, n_electrons, at, over=None, digits=30, mode="next"):
    """Δs = E_min(N, S0+1) − E0(N) (mode="next") or min over S > S0 (mode="higher").

    Raises
    ------
    ModelError
        If the levels carry no spin label "S", or no level has the required spin.
    """
    n_electrons = _electron_number(n_electrons)
    require_electrons(spec, [n_electrons], f"the spin gap at N={n_electrons}")
    pt = _point(spec, at)
    ground, _ = lowest_level(spec, pt, digits, N=n_electrons)
    if any("S" not in l.quantum_numbers for l in ground):
        raise ModelError("the levels carry no total-spin label 'S' (spin not conserved?); "
                         "the spin gap needs spin-labelled levels")
    s0 = min(l.quantum_numbers["S"] for l in ground)
    spins = sorted({l.quantum_numbers.get("S") for l in spec.select(N=n_electrons)} - {None})
    if mode == "next":
        targets = [s0 + 1] if s0 + 1 in spins else []
    elif mode == "higher":
        targets = [s for s in spins if s > s0]
    else:
        raise ModelError(f"mode={mode!r}; use 'next' (S0+1) or 'higher' (any S > S0)")
    if not targets:
        raise ModelError(f"no level with N={n_electrons} and S > {s0} as required by "
                         f"mode={mode!r}; spins present: {spins}")
    best = min(targets, key=lambda s: lowest_level(spec, pt, digits, N=n_electrons, S=s)[1])
    return _build("spin gap", spec, [(1, {"N": n_electrons, "S": best}),
                                     (-1, {"N": n_electrons, "S": s0})], at, over, digits)
