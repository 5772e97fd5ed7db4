"""Spin and pseudospin towers, certified for every value of one coupling in an interval.

For one electron number N, E_min(S) is the lowest level of total spin S (E_min(η) the
lowest of pseudospin η).  The *tower ordering* is E_min(S) < E_min(S + 1) for every S from
a starting value on (by default the smallest spin of the sector).  :func:`towers` decides
it for every value of the swept coupling in an interval, exactly, with the method of
:mod:`symcluster.theorems.envelope`: lower envelopes of exact level curves, crossing
points as real algebraic numbers (roots of resultants), one exact comparison per piece
between them, and exact comparisons at rational points and break points.

The verdict on each piece of the interval, for each pair (S, S + 1):

* ``holds``: E_min(S) < E_min(S + 1) on the whole piece;
* ``fails``: E_min(S) > E_min(S + 1) there, or the two are equal at an isolated point
  (a crossing or touching point), with the levels that cross;
* ``degenerate``: equal on a whole piece (the two minima are the lowest root of one and
  the same polynomial, which occurs in both sectors).
"""

from dataclasses import dataclass, field
from fractions import Fraction

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.spectrum import Spectrum, exact_rational
from symcluster.theorems.envelope import Curves, INF, NEG_INF
from symcluster.theorems.realalg import RealAlg
from symcluster.theorems.separate import LazyDict, sector_below_open

__all__ = ["Interval", "EnvelopePiece", "TowerVerdict", "TowerReport", "towers", "tower_rows",
           "KINDS"]

#: kind -> the quantum number whose towers are compared
KINDS = {"spin": "S", "eta": "eta"}


def _exact(p):
    if p is INF:
        return sympy.oo
    if p is NEG_INF:
        return -sympy.oo
    return p.exact()


@dataclass
class Interval:
    """A piece of the swept coupling's range with exact ends (sympy numbers or ±oo)."""

    lower: object
    upper: object
    lower_closed: bool
    upper_closed: bool
    points: tuple = field(default=(None, None), repr=False, compare=False)

    @property
    def is_point(self):
        return self.lower == self.upper

    def numeric(self, digits=15):
        """(lower, upper) as mpmath numbers."""
        out = []
        for v, p in zip((self.lower, self.upper), self.points):
            if v in (sympy.oo, -sympy.oo):
                out.append(mpmath.inf if v == sympy.oo else -mpmath.inf)
            elif p is not None:
                out.append(p.numeric(digits))
            else:
                out.append(mpmath.mpf(str(sympy.N(v, digits + 5))))
        return tuple(out)

    def __str__(self):
        if self.is_point:
            return f"{{{self.lower}}}"
        return (("[" if self.lower_closed else "(") + f"{self.lower}, {self.upper}"
                + ("]" if self.upper_closed else ")"))

    def as_dict(self):
        lo, hi = self.numeric(15)
        return {"lower": str(self.lower), "upper": str(self.upper),
                "lower_closed": self.lower_closed, "upper_closed": self.upper_closed,
                "lower_numeric": mpmath.nstr(lo, 15), "upper_numeric": mpmath.nstr(hi, 15)}


@dataclass
class EnvelopePiece:
    """E_min of one sector on an interval: the lowest root of ``polynomial`` (in E and the
    swept coupling), which is the energy of ``level``."""

    interval: Interval
    level: object
    polynomial: object


@dataclass
class TowerVerdict:
    """The verdict for one pair (value, next_value) on one interval."""

    interval: Interval
    value: object
    next_value: object
    verdict: str
    lower_level: object = None
    upper_level: object = None
    reason: str = ""

    def as_dict(self):
        return {"interval": self.interval.as_dict(), "value": str(self.value),
                "next_value": str(self.next_value), "verdict": self.verdict,
                "lower_level": _level_text(self.lower_level),
                "upper_level": _level_text(self.upper_level), "reason": self.reason}


def _level_text(level):
    if level is None:
        return None
    return {"energy": str(level.energy),
            "quantum_numbers": {k: str(v) for k, v in level.quantum_numbers.items()}}


@dataclass
class TowerReport:
    """The certified tower ordering of one sector along one coupling.

    Attributes
    ----------
    kind : str
        "spin" or "eta".
    n_electrons : int
    coupling : sympy.Symbol
    interval : Interval
    fixed : dict
    values : list
        The spins (or pseudospins) of the sector, ascending.
    start : sympy.Rational
        The ordering is checked for every value from ``start`` on.
    verdicts : list of TowerVerdict
        For every consecutive pair, the interval split into runs of one verdict.
    crossings : list of dict
        Points where E_min of a pair are equal: ``{"value", "next_value", "at"}`` (exact).
    asymptotics : list of dict
        With an unbounded upper end: ``{"value", "next_value", "difference"}``, the
        strong-coupling series of E_min(next) - E_min(value) through order 1/x**2 (exact
        coefficients; symcluster.analysis.series), on the last piece.
    """

    kind: str
    n_electrons: int
    coupling: object
    interval: Interval
    fixed: dict
    values: list
    start: object
    verdicts: list
    crossings: list
    envelopes: dict = field(repr=False, default_factory=dict)
    asymptotics: list = field(default_factory=list)

    @property
    def violations(self):
        """The verdicts that are not ``holds`` (``fails`` or ``degenerate``)."""
        return [v for v in self.verdicts if v.verdict != "holds"]

    @property
    def holds(self):
        """True when the ordering holds on the whole interval."""
        return not self.violations

    def envelope(self, value):
        """E_min of one spin (pseudospin) as a list of :class:`EnvelopePiece`."""
        key = sympy.Rational(value)
        if key not in self.envelopes:
            raise ModelError(f"no levels with {KINDS[self.kind]} = {value} in this sector; "
                             f"the values are {', '.join(map(str, self.values))}")
        return self.envelopes[key]

    def as_dict(self):
        return {"format": "symcluster-towers", "version": 1, "kind": self.kind,
                "n_electrons": self.n_electrons, "coupling": str(self.coupling),
                "interval": self.interval.as_dict(),
                "fixed": {str(k): str(v) for k, v in self.fixed.items()},
                "values": [str(v) for v in self.values], "start": str(self.start),
                "holds": self.holds, "verdicts": [v.as_dict() for v in self.verdicts],
                "crossings": [{"value": str(c["value"]), "next_value": str(c["next_value"]),
                               "at": str(c["at"]), "numeric": mpmath.nstr(c["numeric"], 15)}
                              for c in self.crossings],
                "asymptotics": [{"value": str(a["value"]), "next_value": str(a["next_value"]),
                                 "difference": str(a["difference"])} for a in self.asymptotics],
                "envelopes": {str(k): [{"interval": p.interval.as_dict(),
                                        "level": _level_text(p.level)} for p in pieces]
                              for k, pieces in self.envelopes.items()}}


def _end(name, v):
    if v in (sympy.oo, "oo", "inf", "+oo") or (isinstance(v, float) and v == float("inf")):
        return None, 1
    if v in (-sympy.oo, "-oo", "-inf") or (isinstance(v, float) and v == float("-inf")):
        return None, -1
    r = exact_rational(name, v)
    return Fraction(int(r.p), int(r.q)), 0


def _prepare(spec, n_electrons, coupling, fixed, kind, irrep):
    if kind not in KINDS:
        raise ModelError(f"kind={kind!r}; give one of {', '.join(KINDS)}")
    qn = KINDS[kind]
    if isinstance(n_electrons, bool) or not isinstance(n_electrons, int):
        raise ModelError(f"n_electrons={n_electrons!r}; give a whole number of electrons")
    levels = spec.select(N=n_electrons)
    if not levels:
        raise ModelError(f"the spectrum has no levels with N = {n_electrons}; solve that "
                         "electron number")
    if irrep is not None:
        levels = [l for l in levels if l.quantum_numbers.get("irrep") == irrep]
        if not levels:
            raise ModelError(f"no levels in the lattice irrep {irrep!r} at N = {n_electrons}")
    if any(qn not in l.quantum_numbers for l in levels):
        raise ModelError(f"the levels carry no {qn} quantum number (kind={kind!r}); the "
                         f"{'spin is' if qn == 'S' else 'eta pseudospin is'} not conserved "
                         "by this model")
    syms = {}
    for l in levels:
        if l.polynomial is None:
            raise ModelError("a level carries no polynomial; solve the model with symcluster")
        for s in l.polynomial.gens[1:]:
            syms[s.name] = s
    name = coupling.name if isinstance(coupling, sympy.Symbol) else str(coupling)
    spec_fixed = {str(k): v for k, v in getattr(spec, "fixed", {}).items()}
    if name not in syms:
        raise ModelError(f"the levels do not depend on {name!r}; their couplings are "
                         f"{', '.join(sorted(syms)) or '(none)'}")
    values = {}
    for k, v in (fixed or {}).items():
        kn = k.name if isinstance(k, sympy.Symbol) else str(k)
        r = exact_rational(kn, v)
        if kn == name:
            raise ModelError(f"coupling {kn} is both swept and fixed; drop it from fixed=")
        if kn in spec_fixed:
            if spec_fixed[kn] != r:
                raise ModelError(f"{kn} was held at {spec_fixed[kn]} in the solve, not {r}; "
                                 f"give fixed={{'{kn}': {spec_fixed[kn]}}} or solve again")
            continue
        if kn not in syms:
            raise ModelError(f"unknown coupling {kn!r} in fixed=; the couplings are "
                             f"{', '.join(sorted(syms))}")
        values[kn] = r
    missing = sorted(set(syms) - set(values) - {name})
    if missing:
        raise ModelError("no fixed value for " + ", ".join(missing)
                         + f"; pass fixed={{'{missing[0]}': 1}} (every coupling but {name})")
    return qn, levels, syms[name], values


def _int_dict(poly, x, values):
    """The level polynomial with the fixed couplings substituted: {(i, j): int} in (E, x)."""
    acc = {}
    gens = poly.gens
    for mon, c in poly.as_dict().items():
        c = sympy.Rational(c)
        ex = 0
        for g, e in zip(gens[1:], mon[1:]):
            if g == x:
                ex = e
            elif e:
                c *= values[g.name] ** e
        acc[(mon[0], ex)] = acc.get((mon[0], ex), 0) + c
    den = 1
    for v in acc.values():
        den = sympy.ilcm(den, sympy.Rational(v).q)
    return {k: int(v * den) for k, v in acc.items() if v != 0}


class _Context:
    """One tower computation: the curves, the levels of each factor, representatives."""

    def __init__(self, levels, x, values, lower, upper):
        self.levels, self.x, self.values = levels, x, values
        polys, self.poly_of_level = [], []
        seen = {}
        for l in levels:
            key = l.polynomial
            if key not in seen:
                seen[key] = len(polys)
                polys.append(_int_dict(l.polynomial, x, values))
            self.poly_of_level.append(seen[key])
        self.curves = Curves(polys, lower, upper)
        self._rep = {}

    def factors_of(self, idx):
        return set().union(*(self.curves.of_poly[self.poly_of_level[k]] for k in idx))

    def point(self, m):
        pt = {self.x: sympy.Rational(m.numerator, m.denominator)}
        for l in self.levels[:1]:
            for s in l.polynomial.gens[1:]:
                if s.name in self.values:
                    pt[s] = self.values[s.name]
        return pt

    def representative(self, fid, idx, m):
        """The level among ``idx`` that is the lowest root of factor ``fid`` at x = m."""
        key = (fid, tuple(idx), m)
        if key not in self._rep:
            target = self.curves.lowest(fid, m).numeric(30)
            cands = [k for k in idx if fid in self.curves.of_poly[self.poly_of_level[k]]]
            pt = self.point(m)
            best = min(cands, key=lambda k: abs(self.levels[k].numeric(pt, digits=30) - target))
            self._rep[key] = self.levels[best]
        return self._rep[key]

    def sympy_factor(self, fid):
        if ("poly", fid) not in self._rep:
            self._rep[("poly", fid)] = sympy.Poly.from_dict(
                {k: int(c) for k, c in self.curves.factors[fid].to_dict().items()},
                sympy.Symbol("E"), self.x)
        return self._rep[("poly", fid)]


def _interval(lo, hi, lc, hc):
    return Interval(_exact(lo), _exact(hi), lc, hc, (None if lo in (INF, NEG_INF) else lo,
                                                     None if hi in (INF, NEG_INF) else hi))


def _mid(ctx, lo, hi):
    from symcluster.theorems.envelope import _between
    return _between(lo, hi)


def _runs(ctx, elements, v, w, idx_v, idx_w, closed):
    """Merge the comparison elements of one pair into runs of one verdict."""
    verdict = []
    for k, e in enumerate(elements):
        if "at" not in e:
            verdict.append({"<": "holds", ">": "fails", "=": "degenerate"}[e["sign"]])
            continue
        if e["sign"] == "<":
            verdict.append("holds")
        elif e["sign"] == ">":
            verdict.append("fails")
        else:
            near = [elements[j] for j in (k - 1, k + 1) if 0 <= j < len(elements)]
            verdict.append("degenerate" if any("at" not in n and n["sign"] == "="
                                               for n in near) else "fails")
    runs = []
    for e, vd in zip(elements, verdict):
        if runs and runs[-1]["verdict"] == vd:
            runs[-1]["items"].append(e)
        else:
            runs.append({"verdict": vd, "items": [e]})
    out = []
    for r in runs:
        first, last = r["items"][0], r["items"][-1]
        lo, lc = (first["at"], True) if "at" in first else (first["lo"], False)
        hi, hc = (last["at"], True) if "at" in last else (last["hi"], False)
        piece = next((e for e in r["items"] if "at" not in e), None)
        if piece is not None:
            m = _mid(ctx, piece["lo"], piece["hi"])
        else:
            m = None
        lower = upper = None
        if m is not None:
            lower = ctx.representative(piece["lower"], idx_v, m)
            upper = ctx.representative(piece["upper"], idx_w, m)
        reason = ""
        if r["verdict"] == "degenerate":
            reason = (f"E_min({v}) and E_min({w}) are the lowest root of the same polynomial "
                      f"{ctx.sympy_factor(piece['lower']).as_expr()} = 0, which occurs in both "
                      "sectors")
        elif r["verdict"] == "fails" and piece is None:
            reason = f"E_min({v}) = E_min({w}) at this point"
        elif r["verdict"] == "fails":
            reason = f"E_min({v}) > E_min({w})"
        out.append(TowerVerdict(_interval(lo, hi, lc, hc), v, w, r["verdict"], lower, upper,
                                reason))
    return out


def towers(spec: Spectrum, n_electrons: int, coupling: str = "U", interval: tuple = (0, 10),
           fixed: dict | None = None, kind: str = "spin", irrep: str | None = None,
           start: object = None, closed: tuple = (True, True)) -> "TowerReport":
    """Certified spin (or η) tower ordering of one electron number along one coupling.

    Parameters
    ----------
    spec : Spectrum
    n_electrons : int
    coupling : str
        The swept coupling.
    interval : (lower, upper)
        Exact ends (numbers, "3/2"; "oo"/"-oo" or sympy.oo for an unbounded side).
    fixed : dict
        Exact values of every other coupling (couplings held fixed in the solve may be
        repeated with the same value).
    kind : {"spin", "eta"}
    irrep : str, optional
        Only the levels of this lattice irrep (its label, e.g. ``"k=0,+"``).
    start : number, optional
        The ordering E_min(S) < E_min(S') of consecutive values is checked from this value
        on (default: the smallest value in the sector).
    closed : (bool, bool)
        Whether each finite end belongs to the interval.

    Returns
    -------
    TowerReport

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.ring(4)), fixed={"t": 1})
    >>> rep = sc.towers(spec, n_electrons=3, coupling="U", interval=(0, 100), fixed={"t": 1})
    >>> rep.holds
    False
    >>> v = rep.violations[0]
    >>> v.value, v.next_value, v.verdict, v.interval.lower
    (1/2, 3/2, 'fails', 8 + 4*sqrt(7))
    """
    qn, levels, x, values = _prepare(spec, n_electrons, coupling, fixed, kind, irrep)
    if not (isinstance(interval, (tuple, list)) and len(interval) == 2):
        raise ModelError(f"interval={interval!r}; give (lower, upper), e.g. (0, 10)")
    lo, slo = _end("interval", interval[0])
    hi, shi = _end("interval", interval[1])
    if slo == 1 or shi == -1 or (lo is not None and hi is not None and not lo < hi):
        raise ModelError(f"interval {tuple(interval)} is empty; give (lower, upper) with "
                         "lower < upper")
    closed = (bool(closed[0]) and lo is not None, bool(closed[1]) and hi is not None)
    ctx = _Context(levels, x, values, lo, hi)
    by_value = {}
    for k, l in enumerate(levels):
        by_value.setdefault(sympy.Rational(l.quantum_numbers[qn]), []).append(k)
    vals = sorted(by_value)
    first = vals[0] if start is None else sympy.Rational(exact_rational("start", start))
    chain = [v for v in vals if v >= first]
    whole = Interval(sympy.oo * (-1) if lo is None else sympy.Rational(lo.numerator, lo.denominator),
                     sympy.oo if hi is None else sympy.Rational(hi.numerator, hi.denominator),
                     closed[0], closed[1])
    raw = {}

    def sweep():
        if not raw:
            raw.update({v: ctx.curves.envelope(ctx.factors_of(by_value[v])) for v in vals})
        return _envelope_pieces(ctx, by_value, raw)
    lazy = LazyDict(sweep)
    if lo is not None and hi is not None and all(
            sector_below_open(ctx.curves, ctx.factors_of(by_value[v]),
                              ctx.factors_of(by_value[w]), lo, hi, closed)
            for v, w in zip(chain, chain[1:])):
        # every consecutive pair proven apart on the interval by level lines (and, next to
        # an open end where the minima are equal, by resultants without roots in a small
        # window; symcluster.theorems.separate): the ordering holds everywhere
        m = (lo + hi) / 2
        verdicts = []
        for v, w in zip(chain, chain[1:]):
            gv = ctx.curves.argmin(ctx.factors_of(by_value[v]), m)
            gw = ctx.curves.argmin(ctx.factors_of(by_value[w]), m)
            verdicts.append(TowerVerdict(
                _interval(RealAlg.rational(lo), RealAlg.rational(hi), closed[0], closed[1]),
                v, w, "holds", ctx.representative(gv, by_value[v], m),
                ctx.representative(gw, by_value[w], m), ""))
        return TowerReport(kind, n_electrons, x, whole, dict(values), vals, first, verdicts,
                           [], lazy, [])
    sweep()
    envs = raw
    verdicts, crossings = [], []
    for v, w in zip(chain, chain[1:]):
        elements = ctx.curves.compare(envs[v], envs[w], closed)
        verdicts += _runs(ctx, elements, v, w, by_value[v], by_value[w], closed)
        for e in elements:
            if "at" in e and e["sign"] == "=":
                crossings.append({"value": v, "next_value": w, "at": e["at"].exact(),
                                  "numeric": e["at"].numeric(20)})
    asymptotics = []
    if hi is None:
        asymptotics = _asymptotics(verdicts, x, values)
    return TowerReport(kind, n_electrons, x, whole, dict(values), vals, first, verdicts,
                       crossings, lazy, asymptotics)


def _envelope_pieces(ctx, by_value, raw):
    """{value: list of EnvelopePiece} from the sweep's raw pieces."""
    out = {}
    for v, env in raw.items():
        out[v] = [EnvelopePiece(_interval(a, b, False, False),
                                ctx.representative(fid, by_value[v], _mid(ctx, a, b)),
                                ctx.sympy_factor(fid)) for a, b, fid in env]
    return out


def _asymptotics(verdicts, x, values):
    """E_min(S') - E_min(S) as the swept coupling -> +oo, from the exact strong-coupling
    series of the two levels of the last piece (symcluster.analysis.series)."""
    from symcluster.analysis.series import series
    from symcluster.errors import SymclusterError
    out = []
    for v in verdicts:
        if v.interval.upper != sympy.oo or v.lower_level is None:
            continue
        try:
            d = sympy.expand(series(v.upper_level, x.name, 2, fixed=values)
                             - series(v.lower_level, x.name, 2, fixed=values))
        except SymclusterError as exc:
            d = f"no series: {exc}"
        out.append({"value": v.value, "next_value": v.next_value, "difference": d})
    return out


def tower_rows(spec: Spectrum, coupling: str = "U", interval: tuple = (0, 10),
               fixed: dict | None = None, kinds: tuple = ("spin", "eta"),
               n_electrons: list | None = None, closed: tuple = (True, True),
               label: str = "") -> list:
    """One plain row per (N, kind) with the tower verdict: the catalogue's unit of work.

    Parameters
    ----------
    spec : Spectrum
    coupling, interval, fixed, closed
        As for :func:`towers`.
    kinds : iterable of {"spin", "eta"}
        Kinds whose quantum number the levels do not carry are skipped.
    n_electrons : iterable of int, optional
        Default: every electron number of the spectrum.
    label : str
        Copied into every row (e.g. the cluster's name in a catalogue).

    Returns
    -------
    list of dict
        Keys ``label, n_electrons, kind, holds, verdicts, violations, crossings`` (plain
        JSON-ready values: strings, numbers, booleans), or ``error`` instead of the
        verdict fields when a sector cannot be decided (the message).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), fixed={"t": 1})
    >>> rows = tower_rows(spec, interval=(-20, 0), closed=(True, False), kinds=("spin",))
    >>> [(r["n_electrons"], r["holds"]) for r in rows]
    [(0, True), (1, True), (2, True), (3, True), (4, True)]
    """
    ns = sorted({l.quantum_numbers["N"] for l in spec.levels}) if n_electrons is None \
        else list(n_electrons)
    rows = []
    for n in ns:
        for kind in kinds:
            lv = spec.select(N=n)
            if not lv or any(KINDS[kind] not in l.quantum_numbers for l in lv):
                continue
            row = {"label": label, "n_electrons": int(n), "kind": kind}
            try:
                rep = towers(spec, n, coupling, interval, fixed, kind, closed=closed)
            except Exception as exc:     # noqa: BLE001 -- recorded in the row, never hidden
                from symcluster.errors import SymclusterError
                if not isinstance(exc, SymclusterError):
                    raise
                row["error"] = str(exc)
                rows.append(row)
                continue
            row.update({"holds": rep.holds, "values": [str(v) for v in rep.values],
                        "violations": [v.as_dict() for v in rep.violations],
                        "crossings": [str(c["at"]) for c in rep.crossings]})
            rows.append(row)
    return rows
