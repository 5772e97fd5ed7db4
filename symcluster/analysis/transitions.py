"""Ground state versus one coupling, with exact transition points.

Method (docs/analysis.md, section "Ground-state map"):

1. Every other coupling is fixed to an exact rational; each level's
   irreducible polynomial becomes P_i(E, x) with integer coefficients in the
   swept coupling x.
2. Two levels can be equal only where Res_E(P_i, P_j)(x) = 0 (or, when the two
   levels are roots of the same polynomial, where its discriminant in E
   vanishes).  The real roots of the irreducible factors inside the interval
   are isolated exactly (rationals, radicals, or sympy ``CRootOf``) and kept
   only where the two levels really agree (high-precision check).
3. A sweep from the left end follows the current ground level g: between two
   consecutive crossings of g with any level nothing can pass below g, so
   one high-precision evaluation of every level at the midpoint certifies g
   as the ground there (or hands over to the lower level found).
4. Neighbouring pieces with the same ground set are merged; the remaining
   boundaries are the transitions.

Degenerate ground states: the ground "state" on a piece is the *set* of levels
whose energies equal the minimum there (e.g. several lattice irreps with the
same polynomial and root).  A transition is a point where that set changes.
"""

from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import flint
import mpmath
import sympy

from symcluster.errors import ModelError, VerificationError
from symcluster.spectrum import Level, Spectrum, exact_rational
from symcluster.analysis.observables import find_symbol, level_polynomial, level_symbols, level_value
from symcluster.analysis.sectors import require_electrons

__all__ = ["Transition", "GroundPiece", "transitions", "ground_states", "crossings"]

_WORK = 45      # working digits for comparisons
_TOL = mpmath.mpf(10) ** -30
_PROBE = 30     # crossings are confirmed at a decimal rational within 10**-_PROBE of the root


@dataclass
class Transition:
    """A point where the ground state changes.

    Attributes
    ----------
    value : sympy number
        Exact location (Rational, radical, or ``CRootOf``) of the coupling.
    below, above : Level
        A ground level just below / above the point (representative of the set).
    below_set, above_set : tuple of Level
        All levels at the minimum on either side (degenerate ground states).
    coupling : sympy.Symbol
    polynomial : sympy.Poly
        Irreducible integer polynomial in the coupling that ``value`` is a root of.
    """

    value: object
    below: object
    above: object
    below_set: tuple
    above_set: tuple
    coupling: object
    polynomial: object

    def numeric(self, digits=30):
        """The transition point as mpmath.mpf with ``digits`` significant digits."""
        with mpmath.workdps(digits):
            return +_num(self.value, digits + 10)

    def __repr__(self):
        qb, qa = self.below.quantum_numbers, self.above.quantum_numbers
        return (f"Transition({self.coupling} = {self.value} ~ {mpmath.nstr(self.numeric(15), 15)}: "
                f"{qb} -> {qa})")


@dataclass
class GroundPiece:
    """The ground set on the open interval (lower, upper) of the swept coupling."""

    lower: object
    upper: object
    levels: tuple


def _num(value, digits):
    with mpmath.workdps(digits):
        return mpmath.mpf(sympy.Float(sympy.N(value, digits + 5), digits + 5)._mpf_)


def _rat(x):
    """An exact sympy Rational from an mpmath number."""
    sign, man, exp, _bc = mpmath.mpf(x)._mpf_ if not isinstance(x, mpmath.mpf) else x._mpf_
    return (-1) ** sign * sympy.Integer(man) * sympy.Integer(2) ** exp  # exact, no rounding


class _Sweep:
    """Shared state: the swept symbol, the fixed point, cached polynomials and values."""

    def __init__(self, levels, coupling, interval, fixed):
        if not levels:
            raise ModelError("no levels to compare; check n_electrons against the spectrum")
        syms = sorted({s for l in levels for s in level_symbols(l)}, key=lambda s: s.name)
        self.x = find_symbol(syms, coupling) if syms else sympy.Symbol(str(coupling), real=True)
        fixed = dict(fixed or {})
        self.fixed = {}
        for key, val in fixed.items():
            s = find_symbol(syms, key)
            if s == self.x:
                raise ModelError(f"coupling {s} is both swept and fixed; drop it from fixed=")
            self.fixed[s] = exact_rational(s.name, val)
        missing = [s.name for s in syms if s != self.x and s not in self.fixed]
        if missing:
            raise ModelError("no fixed value for " + ", ".join(missing)
                             + f"; pass fixed={{'{missing[0]}': 1}} (every coupling but {self.x})")
        a, b = (exact_rational("interval", v) for v in interval)
        if not a < b:
            raise ModelError(f"interval ({a}, {b}) is empty; give (lower, upper) with lower < upper")
        self.a, self.b = a, b
        self.levels = list(levels)
        self._poly, self._vals, self._cross, self._checked = {}, {}, {}, set()
        self.ctx = flint.fmpz_mpoly_ctx.get(("E", "x"), "lex")

    def point(self, xval):
        p = dict(self.fixed)
        p[self.x] = xval
        return p

    def value(self, k, xval):
        key = (k, xval)
        if key not in self._vals:
            lev = self.levels[k]
            if hasattr(lev.energy, "index"):
                val = self._root_value(k, xval)
                if k not in self._checked:  # once per level: agree with the level's own value
                    own = level_value(lev, self.point(xval), 20)
                    if abs(own - val) > mpmath.mpf(10) ** -15 * (1 + abs(val)):
                        raise VerificationError(
                            f"root no. {lev.energy.index} of the polynomial of level "
                            f"{lev.quantum_numbers} is {mpmath.nstr(val, 20)} at {self.x} = "
                            f"{xval}, but the level evaluates to {mpmath.nstr(own, 20)}; "
                            "report this spectrum")
                    self._checked.add(k)
                self._vals[key] = val
            else:
                self._vals[key] = level_value(lev, self.point(xval), _WORK)
        return self._vals[key]

    def _root_value(self, k, xval):
        """Value of an implicit root from its polynomial with rigorous ball arithmetic.

        The roots of P(E, x = xval) are isolated by flint (complex_roots); every
        root is real (P divides the characteristic polynomial of a symmetrisable
        block) and the level's ``energy.index`` picks one in ascending order.
        This stays reliable next to points where two roots coincide.
        """
        lev = self.levels[k]
        p, q = int(xval.p), int(xval.q)
        d = self.poly(k).to_dict()
        dx = max(j for (_i, j) in d)
        coeffs = [0] * (max(i for (i, _j) in d) + 1)
        for (i, j), c in d.items():
            coeffs[i] += int(c) * p ** j * q ** (dx - j)
        roots = _flint_real_roots(flint.fmpz_poly(coeffs), _WORK)
        return roots[lev.energy.index]

    def poly(self, k):
        """Level k's polynomial with the fixed couplings substituted, as fmpz_mpoly in (E, x)."""
        if k not in self._poly:
            P = level_polynomial(self.levels[k])
            gens = P.gens
            acc = {}
            for mon, c in P.as_dict().items():
                c = sympy.Rational(c)
                ex = 0
                for g, e in zip(gens[1:], mon[1:]):
                    if e == 0:
                        continue
                    if g == self.x:
                        ex = e
                    elif g in self.fixed:
                        c *= self.fixed[g] ** e
                    else:
                        raise ModelError(f"coupling {g} has no fixed value; add it to fixed=")
                key = (mon[0], ex)
                acc[key] = acc.get(key, 0) + c
            den = 1
            for v in acc.values():
                den = sympy.ilcm(den, sympy.Rational(v).q)
            self._poly[k] = self.ctx.from_dict({m: int(v * den) for m, v in acc.items() if v != 0})
        return self._poly[k]

    def identical(self, i, j):
        """True if levels i and j agree at two generic points of the interval."""
        if self.poly(i) != self.poly(j):
            return False
        for f in (sympy.Rational(3, 7), sympy.Rational(5, 9)):
            xv = self.a + f * (self.b - self.a)
            if abs(self.value(i, xv) - self.value(j, xv)) > _TOL * (1 + abs(self.value(i, xv))):
                return False
        return True

    def _meet(self, i, j, val):
        """True if levels i and j agree at the exact point val (probed nearby).

        The probe is a decimal rational within 10**-p of val: transversal crossings
        differ there by ~10**-p, two roots of one polynomial that touch by
        ~10**-(p/2), unrelated roots of the resultant by O(1).  If the level
        evaluation cannot separate nearly double roots so close to val, a
        coarser probe is used.
        """
        for places in (_PROBE, 20, 14):
            xr = _decimal(val.num, places)
            try:
                with mpmath.workdps(_WORK):
                    vi, vj = self.value(i, xr), self.value(j, xr)
                    return abs(vi - vj) <= mpmath.mpf(10) ** -(places // 2 - 3) * (1 + abs(vi))
            except VerificationError:
                continue
        raise VerificationError(f"could not evaluate the levels near {self.x} = {val}; "
                                "report this spectrum")

    def crossings(self, i, j):
        """[(exact point, its minimal polynomial, numeric value)] where levels i and j are equal."""
        key = (min(i, j), max(i, j))
        if key in self._cross:
            return self._cross[key]
        p, q = self.poly(i), self.poly(j)
        r = p.resultant(q, "E")
        if r == 0:
            g = p.gcd(q)
            r = (p * q / g).discriminant("E")  # exact division: lcm
        out = []
        for root in _real_roots_in(r, self.x, self.a, self.b):
            if self._meet(i, j, root):
                out.append((root, None, root.num))
        self._cross[key] = out
        return out


class _AlgRoot:
    """A real root of an irreducible integer polynomial: numeric value now, exact on demand."""

    def __init__(self, fac, k, num, xsym):
        self.fac, self.k, self.num, self.xsym = fac, k, num, xsym
        self._exact = None

    def minpoly(self):
        return sympy.Poly([int(c) for c in reversed(self.fac.coeffs())], self.xsym)

    def exact(self):
        """Rational, quadratic radical, or sympy CRootOf (k-th real root, ascending)."""
        if self._exact is None:
            P = self.minpoly()
            if P.degree() <= 2:
                cands = sympy.roots(P, filter="R")
                self._exact = min(cands, key=lambda c: abs(_num(c, _WORK) - self.num))
            else:
                self._exact = sympy.CRootOf(P.as_expr(), self.k)
        return self._exact


def _flint_real_roots(f, digits):
    """Real roots of an fmpz_poly (multiplicity expanded), ascending, as mpmath numbers."""
    old = flint.ctx.prec
    try:
        flint.ctx.prec = int(3.33 * (digits + 20))
        found = []
        for z, mult in f.complex_roots():
            if z.imag == 0:
                found += [z.real.mid().str(digits + 15, radius=False)] * mult
    finally:
        flint.ctx.prec = old
    with mpmath.workdps(digits + 10):
        return sorted(mpmath.mpf(v) for v in found)


def _real_roots_in(r, xsym, a, b):
    """Real roots of the fmpz_mpoly r(x) inside the open interval (a, b), as _AlgRoot."""
    if r.is_constant():
        return []
    coeffs = [0] * (r.degrees()[1] + 1)
    for (_, e), c in r.to_dict().items():
        coeffs[e] += int(c)
    out = []
    with mpmath.workdps(_WORK + 10):
        an, bn = mpmath.mpf(a.p) / a.q, mpmath.mpf(b.p) / b.q
        for fac, _mult in flint.fmpz_poly(coeffs).factor()[1]:
            for k, num in enumerate(_flint_real_roots(fac, _WORK)):
                if fac.degree() == 1:
                    inside = a < sympy.Rational(-int(fac.coeffs()[0]), int(fac.coeffs()[1])) < b
                else:  # irrational: never equal to a rational end point
                    inside = an < num < bn
                if inside:
                    out.append(_AlgRoot(fac, k, num, xsym))
    return out


def _min_ground(sw, xv, ks):
    vals = {k: sw.value(k, xv) for k in ks}
    g = min(ks, key=lambda k: vals[k])
    return g, vals


def _pieces(sw, ks):
    """Sweep the interval; list of (lower, upper, [level indices at the minimum])."""
    with mpmath.workdps(_WORK):
        return _pieces_at_work_precision(sw, ks)


def _pieces_at_work_precision(sw, ks):
    pieces = []
    x, xn = sw.a, _num(sw.a, _WORK)
    g = None
    while True:
        g = g if g is not None else min(ks, key=lambda k: sw.value(k, _midpoint(xn, _num(sw.b, _WORK))))
        for _ in range(4 * len(ks) + 10):
            ahead = []
            for j in ks:
                if j != g and not sw.identical(g, j):
                    ahead += [(v, vn) for v, _p, vn in sw.crossings(g, j)]
            ahead = sorted((c for c in ahead if c[1] > xn + _TOL), key=lambda c: c[1])
            y, yn = ahead[0] if ahead else (sw.b, _num(sw.b, _WORK))
            m = _midpoint(xn, yn)
            h, vals = _min_ground(sw, m, ks)
            if vals[h] < vals[g] - _TOL * (1 + abs(vals[g])):
                g = h
                continue
            break
        else:
            raise ModelError("ground-state sweep did not settle; report this spectrum as a bug")
        gset = [k for k in ks if abs(vals[k] - vals[g]) <= _TOL * (1 + abs(vals[g]))]
        pieces.append([x, y, gset])
        if y is sw.b or yn >= _num(sw.b, _WORK) - _TOL:
            pieces[-1][1] = sw.b
            break
        x, xn = y, yn
    merged = [pieces[0]]
    for p in pieces[1:]:
        if set(p[2]) == set(merged[-1][2]):
            merged[-1][1] = p[1]
        else:
            merged.append(p)
    return merged


def _decimal(v, places):
    """A decimal rational within 10**-places of a real number (mpmath)."""
    with mpmath.workdps(places + 30):
        return sympy.Rational(int(mpmath.nint(v * mpmath.mpf(10) ** places)), 10 ** places)


def _midpoint(xn, yn):
    """The simplest-looking decimal rational strictly between xn and yn (near the middle)."""
    with mpmath.workdps(_WORK + 20):
        m, half = (xn + yn) / 2, (yn - xn) / 4
        for k in range(0, _WORK + 15):
            q = mpmath.nint(m * mpmath.mpf(10) ** k)
            if abs(q / mpmath.mpf(10) ** k - m) < half:
                return sympy.Rational(int(q), 10 ** k)
        return _rat(m)


def _select(spec, n_electrons):
    """The levels of one sector, or of all (None); refused unless the spectrum holds them."""
    if n_electrons is None:
        require_electrons(spec, None, "the ground state over all electron numbers",
                          "solve all electron numbers (solve(model) without electrons=; on "
                          "the command line leave out --electrons), or scan one sector "
                          "(n_electrons=N; on the command line --sector N)")
        return list(spec.levels)
    require_electrons(spec, [n_electrons], f"the ground state of N={n_electrons}")
    levels = spec.select(N=n_electrons)
    if not levels:
        raise ModelError(f"no levels with N={n_electrons}; choose an electron number the "
                         f"spectrum holds")
    return levels


def ground_states(spec, n_electrons=None, coupling="U", interval=(0, 10), fixed=None, levels=None):
    """The ground set of levels on each piece of the interval, exactly delimited.

    Parameters
    ----------
    spec : Spectrum
    n_electrons : int or None
        Sector to scan (None: all levels together).
    coupling : str
        Name of the swept coupling.
    interval : (lower, upper)
        Exact rationals (int, Fraction, "3/2").
    fixed : dict
        Exact values of every other coupling, e.g. ``{"t": 1}``.
    levels : list of Level, optional
        Scan these levels instead of a sector of ``spec``.

    Returns
    -------
    list of GroundPiece
    """
    levels = levels if levels is not None else _select(spec, n_electrons)
    sw = _Sweep(levels, coupling, interval, fixed)
    ks = list(range(len(levels)))
    return [GroundPiece(_exact_end(lo), _exact_end(hi), tuple(levels[k] for k in gs))
            for lo, hi, gs in _pieces(sw, ks)]


def _exact_end(v):
    return v.exact() if isinstance(v, _AlgRoot) else v


def transitions(spec: Spectrum, n_electrons: int | None = None, coupling: str | sympy.Symbol = "U",
                interval: tuple = (0, 10), fixed: Mapping[str, object] | None = None,
                levels: Sequence[Level] | None = None) -> list[Transition]:
    """Exact points where the ground state of a sector changes, ascending.

    Parameters are those of :func:`ground_states`.

    Returns
    -------
    list of Transition

    Notes
    -----
    A transition is reported where the *set* of levels at the minimum changes;
    points where an excited level only touches the ground level are not
    transitions.  See the module docstring for the method.

    Examples
    --------
    See docs/analysis.md; tests/test_transitions.py builds a spectrum by hand.
    """
    levels = levels if levels is not None else _select(spec, n_electrons)
    sw = _Sweep(levels, coupling, interval, fixed)
    ks = list(range(len(levels)))
    pieces = _pieces(sw, ks)
    out = []
    with mpmath.workdps(_WORK):
        pairs = list(zip(pieces, pieces[1:]))
    for left, right in pairs:
        root = left[1]
        below = tuple(levels[k] for k in left[2])
        above = tuple(levels[k] for k in right[2])
        out.append(Transition(root.exact(), below[0], above[0], below, above, sw.x,
                              root.minpoly()))
    return out


def crossings(level_a, level_b, coupling="U", interval=(0, 10), fixed=None):
    """Exact points inside the open interval where two levels have equal energy.

    Returns
    -------
    list of sympy numbers, ascending (empty if the levels never meet, or if
    they coincide identically).
    """
    sw = _Sweep([level_a, level_b], coupling, interval, fixed)
    if sw.identical(0, 1):
        return []
    with mpmath.workdps(_WORK):
        pts = sorted(sw.crossings(0, 1), key=lambda c: c[2])
    return [v.exact() for v, _p, _vn in pts]
