"""Every level at many coupling points at once, in float64: :class:`GridEvaluator`.

The engine behind :meth:`symcluster.spectrum.Spectrum.energies`.  Closed forms are
compiled once with :func:`sympy.lambdify` and evaluated on whole numpy arrays.  The
implicit roots of one polynomial are computed together, on its centred form (the
variable shifted so that the roots sum to zero, :func:`_centred`): the roots at every
fourth point start as the eigenvalues of its companion matrix (one batched LAPACK call),
those between start on straight lines between their neighbours', and all are polished by
Newton steps whose residual is computed in double-double arithmetic (error-free
transformations, T. J. Dekker, Numer. Math. 18, 224 (1971), from memory): the
high-degree level polynomials are far too ill-conditioned in their monomial form for
float64 alone (companion roots of a degree-20 factor of ring(6) are off by 1e-7).  When
one coupling varies and the others are fixed, the polynomial's coefficients at each
point are computed in double-double from its exact coefficients as well; otherwise in
float64, and a point whose root condition makes the float64 value doubtful is
recomputed exactly.

Where this float64 route cannot be trusted, the value is recomputed exactly as the
single-point evaluation does, with certified isolation
(:func:`~symcluster.numeric.evaluate.energy_numeric`): at points where two roots of a
polynomial come closer than :data:`CLOSE` (relative to the size of the roots), where
the companion eigenvalues are not real to that tolerance, and where a closed form gives
no finite number (0/0, a square root of a rounding residue below zero).  The grid's float
values stand for exact decimals (0.1 is 1/10), as everywhere in symcluster.
"""

from __future__ import annotations

from fractions import Fraction

import numpy as np
import sympy

from symcluster.numeric.evaluate import energy_numeric
from symcluster.numeric.isolate import real_roots_at

__all__ = ["GridEvaluator", "CLOSE", "CLOSE_DD"]

#: Relative distance of two roots of one polynomial below which the float64 values are
#: replaced by certified values (coefficients in float64; in double-double: CLOSE_DD).
CLOSE = 1e-6
CLOSE_DD = 1e-8


def _safe_sqrt(x):
    x = np.asarray(x, dtype=float)
    return np.sqrt(np.where((x < 0) & (x > -1e-12 * (1 + np.abs(x))), 0.0, x))


def _clip_unit(f):
    def g(x):
        x = np.asarray(x, dtype=float)
        return f(np.where(np.abs(x) - 1 < 1e-12, np.clip(x, -1.0, 1.0), x))
    return g


_MODULES = [{"sqrt": _safe_sqrt, "acos": _clip_unit(np.arccos),
             "asin": _clip_unit(np.arcsin)}, "numpy"]


class GridEvaluator:
    """Float64 values of a fixed list of levels over arrays of coupling values.

    Parameters
    ----------
    energies : list
        Each level's energy: a sympy expression or an implicit root (``.poly``, ``.index``).
    polynomials : list
        Each level's polynomial (or None), passed to the certified fallback.
    symbols : tuple of sympy.Symbol
        The couplings, in the order of :meth:`values`'s columns.

    Examples
    --------
    >>> import numpy as np, sympy
    >>> U, t = sympy.symbols("U t", real=True)
    >>> ev = GridEvaluator([U / 2 - sympy.sqrt(U**2 + 16 * t**2) / 2], [None], (t, U))
    >>> ev.values([np.ones(2), np.array([0.0, 3.0])], [None, None]).round(12).tolist()
    [[-2.0], [-1.0]]
    """

    def __init__(self, energies, polynomials, symbols):
        self.symbols = tuple(symbols)
        self.energies = list(energies)
        self.polynomials = list(polynomials)
        self._closed = {}            # expression -> (compiled function, [level positions])
        self._roots = {}             # polynomial -> {index: [level positions]}
        for k, e in enumerate(self.energies):
            if hasattr(e, "poly") and hasattr(e, "index") and not isinstance(e, sympy.Basic):
                self._roots.setdefault(e.poly, {}).setdefault(int(e.index), []).append(k)
            else:
                entry = self._closed.get(e)
                if entry is None:
                    fn = sympy.lambdify(self.symbols, e, modules=_MODULES)
                    entry = self._closed[e] = (fn, [])
                entry[1].append(k)
        self._float_coeffs = {}
        self._centred = {p: _centred(p) for p in self._roots}

    def values(self, columns, exact_columns):
        """Values of every level at every point: float64 array (points, levels).

        Parameters
        ----------
        columns : list of numpy.ndarray
            One float64 array per symbol, all of the same length (the points).
        exact_columns : list
            Per symbol, a sympy Rational when that coupling has one exact value at every
            point, else None (the float values are then read as their decimals).
        """
        n = len(columns[0])
        out = np.empty((n, len(self.energies)))
        needs_exact = {}
        with np.errstate(all="ignore"):
            for fn, positions in self._closed.values():
                vals = np.broadcast_to(np.asarray(fn(*columns), dtype=float), (n,))
                for k in positions:
                    out[:, k] = vals
                bad = ~np.isfinite(vals)
                poly = self.polynomials[positions[0]]
                if poly is not None and poly.degree(poly.gens[0]) >= 3 and not bad.all():
                    # trigonometric forms lose digits where roots of their polynomial
                    # meet (acos near +-1): polish on the polynomial, distrust what moves
                    hi, lo = self._coefficients(poly, columns, exact_columns)
                    start = np.where(bad, 0.0, vals)[:, None]
                    polished, last, _ = _newton_dd(start, hi, lo)
                    scale = np.abs(polished[:, 0]) + np.abs(hi[:, -1] / hi[:, 0]) ** (
                        1.0 / (hi.shape[1] - 1)) + 1e-300
                    moved = np.abs(polished[:, 0] - start[:, 0]) / scale
                    bad |= (moved > 1e-12) | (np.abs(last[:, 0]) / scale > 1e-13)
                    vals = np.where(bad, vals, polished[:, 0])
                    for k in positions:
                        out[:, k] = vals
                bad = np.flatnonzero(bad).tolist()
                for k in positions if bad else ():
                    needs_exact.setdefault(k, set()).update(bad)
            # closed forms of one polynomial whose values come close: their float64 forms
            # (a square root of a cancelling difference) cannot separate them
            by_poly = {}
            for fn, positions in self._closed.values():
                poly = self.polynomials[positions[0]]
                if poly is not None and poly.degree(poly.gens[0]) >= 2:
                    by_poly.setdefault(poly, []).append(positions)
            for poly, groups in by_poly.items():
                if len(groups) < 2:
                    continue
                vals = np.stack([out[:, g[0]] for g in groups], axis=-1)
                ordered = np.sort(vals, axis=-1)
                scale = np.max(np.abs(vals), axis=-1) + np.max(np.abs(np.diff(ordered, axis=-1)),
                                                               axis=-1) + 1e-300
                gaps = np.min(np.diff(ordered, axis=-1), axis=-1) / scale
                rows = np.flatnonzero((gaps < CLOSE) | ~np.isfinite(gaps)).tolist()
                for g in groups if rows else ():
                    for k in g:
                        needs_exact.setdefault(k, set()).update(rows)
            for poly, by_index in self._roots.items():
                centred, scale, shift = self._centred[poly]
                hi, lo = self._coefficients(centred, columns, exact_columns)
                roots, doubtful = _polished_roots(hi, lo)
                if shift is not None:
                    roots = (roots - self._shift_values(shift, columns)[:, None]) / scale
                for i in np.flatnonzero(doubtful).tolist():
                    roots[i] = self._certified_roots(poly, i, columns, exact_columns)
                for index, positions in by_index.items():
                    for k in positions:
                        out[:, k] = roots[:, index]
        for k, rows in needs_exact.items():
            for i in sorted(rows):
                out[i, k] = self._certified(k, i, columns, exact_columns)
        return out

    def _coefficients(self, poly, columns, exact_columns):
        """Coefficients (highest power first) at every point: double-double (hi, lo),
        each of shape (points, degree + 1)."""
        gens = poly.gens[1:]
        pos = [self.symbols.index(g) for g in gens]
        varying = [j for j, p in enumerate(pos) if exact_columns[p] is None]
        deg = poly.degree(poly.gens[0])
        n = len(columns[0])
        if len(varying) <= 1:
            fixed = {j: Fraction(int(exact_columns[p].p), int(exact_columns[p].q))
                     for j, p in enumerate(pos) if exact_columns[p] is not None}
            top = max((m[1 + varying[0]] for m in poly.monoms()), default=0) if varying else 0
            table = [[Fraction(0)] * (top + 1) for _ in range(deg + 1)]
            for monom, c in poly.terms():
                v = Fraction(int(c))
                for j, f in fixed.items():
                    v *= f ** monom[1 + j]
                k = monom[1 + varying[0]] if varying else 0
                table[deg - monom[0]][k] += v
            b_hi = np.array([[float(q) for q in row] for row in table])
            b_lo = np.array([[float(q - Fraction(float(q))) for q in row] for row in table])
            if not varying:
                return (np.broadcast_to(b_hi[:, 0], (n, deg + 1)),
                        np.broadcast_to(b_lo[:, 0], (n, deg + 1)))
            x = columns[pos[varying[0]]][:, None]
            hi = np.broadcast_to(b_hi[:, top], (n, deg + 1)).copy()
            lo = np.broadcast_to(b_lo[:, top], (n, deg + 1)).copy()
            for k in range(top - 1, -1, -1):
                hi, lo = _dd_mul_float(hi, lo, x)
                hi, lo = _dd_add(hi, lo, b_hi[:, k], b_lo[:, k])
            return hi, lo
        fn = self._float_coeffs.get(poly)
        if fn is None:
            coeffs = [sympy.Integer(0)] * (deg + 1)
            for monom, c in poly.terms():
                coeffs[deg - monom[0]] += sympy.Mul(sympy.Integer(int(c)), *[
                    g ** e for g, e in zip(gens, monom[1:])])
            fn = self._float_coeffs[poly] = sympy.lambdify(gens, coeffs, modules="numpy")
        cs = [np.broadcast_to(np.asarray(c, dtype=float), (n,))
              for c in fn(*[columns[p] for p in pos])]
        hi = np.stack(cs, axis=-1)
        # float64 coefficients: their rounding is taken into the condition test below
        return hi, None

    def _shift_values(self, shift, columns):
        fn = self._float_coeffs.get(shift)
        if fn is None:
            fn = self._float_coeffs[shift] = sympy.lambdify(self.symbols, shift, modules="numpy")
        return np.broadcast_to(np.asarray(fn(*columns), dtype=float), (len(columns[0]),))

    def _point(self, i, columns, exact_columns):
        point = {}
        for s, col, ex in zip(self.symbols, columns, exact_columns):
            if ex is None:
                q = Fraction(repr(float(col[i])))
                ex = sympy.Rational(q.numerator, q.denominator)
            point[s] = ex
        return point

    def _certified(self, k, i, columns, exact_columns):
        point = self._point(i, columns, exact_columns)
        return float(energy_numeric(self.energies[k], point, 20, self.polynomials[k]))

    def _certified_roots(self, poly, i, columns, exact_columns):
        point = self._point(i, columns, exact_columns)
        return np.array([float(r) for r in real_roots_at(poly, point, 17)])


def _centred(poly):
    """``(Q, s, g)``: the polynomial in the variable ``y = s E + g`` whose roots sum to zero.

    A level polynomial ``P(E) = a E^d + b E^(d-1) + ...`` with a constant leading
    coefficient ``a`` is rewritten in ``y = d a E + b`` (``s = d a``, ``g = b``, a
    polynomial in the couplings): ``Q(y) = s^d / a * P((y - b) / s)`` is monic with integer
    coefficients and its roots ``y_i = s E_i + b`` sum to zero.  The roots of a block often
    sit far from zero (a shift of several U in a sector with many doubly occupied sites),
    where the monomial form loses most of its digits; centred, they lose few.  Returns
    ``(P, 1, None)`` when the leading coefficient depends on the couplings.
    """
    E = poly.gens[0]
    d = poly.degree(E)
    by_power = {}
    for monom, c in poly.terms():
        by_power.setdefault(monom[0], []).append((monom[1:], c))
    top = by_power.get(d, [])
    if d < 2 or len(top) != 1 or any(top[0][0]):
        return poly, 1, None
    a = int(top[0][1])
    b = sympy.Add(*[sympy.Integer(int(c)) * sympy.Mul(*[g ** e for g, e in zip(poly.gens[1:], m)])
                    for m, c in by_power.get(d - 1, [])])
    s = d * a
    gens = poly.gens
    # Q(y) = sum_k c_k s^(d-k) / a (y - b)^k, by polynomial arithmetic in (y, couplings)
    shift = sympy.Poly(E - b, *gens, domain="ZZ")
    power = sympy.Poly(1, *gens, domain="ZZ")
    q = sympy.Poly(0, *gens, domain="ZZ")
    for k in range(d + 1):
        terms = {(0,) + m: c for m, c in by_power.get(k, [])}
        if terms:
            ck = sympy.Poly.from_dict(terms, *gens, domain="ZZ")
            q += ck * power * (s ** (d - k) // a)
        power *= shift
    return q, s, b


# --------------------------------------------------------------------- double-double kernels

_STEPS = 30                   # most Aberth iterations from one start
_PASSES = 8                   # restarts of doubtful points from trusted neighbours
_STRIDE = 4                   # points between two companion-matrix eigenvalue starts
_STALL = 6                    # Aberth steps after which a row must keep converging
_SPLIT = 134217729.0          # 2**27 + 1 (Dekker's splitting of a double into two halves)


def _two_sum(a, b):
    s = a + b
    bb = s - a
    return s, (a - (s - bb)) + (b - bb)


def _split(a):
    c = _SPLIT * a
    hi = c - (c - a)
    return hi, a - hi


def _two_prod(a, b):
    p = a * b
    ah, al = _split(a)
    bh, bl = _split(b)
    return p, ((ah * bh - p) + ah * bl + al * bh) + al * bl


def _dd_mul_float(hi, lo, x):
    p, e = _two_prod(hi, x)
    e = e + lo * x
    s = p + e
    return s, e - (s - p)


def _dd_add(ahi, alo, bhi, blo):
    s, e = _two_sum(ahi, bhi)
    e = e + alo + blo
    t = s + e
    return t, e - (t - s)


def _aberth_dd(roots, hi, lo, steps):
    """Real Aberth iterations (O. Aberth, Math. Comp. 27, 339 (1973), from memory) with the
    residual in double-double (float64 when lo is None); the approximations repel each
    other, so each real root is found once.  Rows stop once their largest correction is
    below 1e-15 of their size.  Returns (roots, last corrections, p' at the roots)."""
    roots = roots.copy()
    last = np.full(roots.shape, np.inf)
    dps = np.ones_like(roots)
    active = np.arange(len(roots))
    previous = np.full(len(roots), np.inf)
    for it in range(steps):
        lo_a = None if lo is None else lo[active]
        new, step, dp = _aberth_once(roots[active], hi[active], lo_a)
        roots[active], last[active], dps[active] = new, step, dp
        scale = np.max(np.abs(new), axis=-1) + 1e-300
        size = np.max(np.abs(step), axis=-1) / scale
        keep = size > 1e-15
        if it >= _STALL:
            # simple roots converge at least quadratically from close starts; a row whose
            # correction no longer shrinks tenfold sits on a cluster of roots: it stays doubtful
            # (its last correction is kept) and goes to the certified route
            keep &= size < 0.1 * previous[active]
        previous[active] = size
        active = active[keep]
        if not len(active):
            break
    return roots, last, dps


def _residuals(roots, hi, lo):
    """``(p, plo, p')`` at every root: ``p + plo`` the polynomial's value (Horner, in
    double-double when ``lo`` is given, else float64 with ``plo = 0``), ``p'`` its
    derivative in float64."""
    d1 = hi.shape[1]
    p = np.zeros_like(roots)
    if lo is None:
        for j in range(d1):
            p = p * roots + hi[:, j:j + 1]
        plo = 0.0
    else:
        plo = np.zeros_like(roots)
        for j in range(d1):
            p, plo = _dd_mul_float(p, plo, roots)
            p, plo = _dd_add(p, plo, hi[:, j:j + 1], lo[:, j:j + 1])
    dp = np.zeros_like(roots)
    q = np.zeros_like(roots)
    for j in range(d1):
        dp = dp * roots + q
        q = q * roots + hi[:, j:j + 1]
    return p, plo, dp


def _newton_dd(roots, hi, lo, steps=2):
    """Newton steps on chosen roots (no repulsion), residual in double-double."""
    step = np.zeros_like(roots)
    dp = np.ones_like(roots)
    for _ in range(steps):
        p, plo, dp = _residuals(roots, hi, lo)
        step = np.divide(p + plo, dp, out=np.zeros_like(roots), where=dp != 0)
        roots = roots - step
    return roots, step, dp


def _aberth_once(roots, hi, lo):
    off = ~np.eye(hi.shape[1] - 1, dtype=bool)
    p, plo, dp = _residuals(roots, hi, lo)
    w = np.divide(p + plo, dp, out=np.zeros_like(roots), where=dp != 0)
    diff = roots[:, :, None] - roots[:, None, :]
    inv = np.divide(1.0, diff, out=np.zeros_like(diff), where=off & (diff != 0))
    denom = 1.0 - w * inv.sum(axis=-1)
    step = np.divide(w, denom, out=w.copy(), where=denom != 0)
    roots = roots - step
    return roots, step, dp


def _polished_roots(hi, lo):
    """Sorted real roots per point of sum (hi + lo)_j x^(d - j), and a flag per point where
    they cannot be trusted to about 1e-12 relative (close or non-converged roots)."""
    n, d1 = hi.shape
    deg = d1 - 1
    if deg == 1:
        roots = (-(hi[:, 1]) / hi[:, 0])[:, None]
        return roots, ~np.isfinite(roots[:, 0])
    # companion eigenvalues at every _STRIDE-th point (and the last); the points between
    # start from the straight line between their neighbours' sorted roots
    picked = np.unique(np.r_[np.arange(0, n, _STRIDE), n - 1])
    comp = np.zeros((len(picked), deg, deg))
    comp[:, 0, :] = -hi[picked, 1:] / hi[picked, :1]
    comp[:, np.arange(1, deg), np.arange(deg - 1)] = 1.0
    ev = np.linalg.eigvals(comp)
    # a spurious complex pair a +- ib stands for two real roots near a: start them apart
    known = np.sort(ev.real + np.where(ev.imag >= 0, 1.0, -1.0) * np.abs(ev.imag), axis=-1)
    right = np.clip(np.searchsorted(picked, np.arange(n)), 1, max(len(picked) - 1, 1))
    left = right - 1 if len(picked) > 1 else right * 0
    right = np.minimum(right, len(picked) - 1)
    span = np.maximum(picked[right] - picked[left], 1)
    w = ((np.arange(n) - picked[left]) / span)[:, None]
    start = (1 - w) * known[left] + w * known[right]
    # equal starts would stay equal: spread them by a small fraction of the scale
    size = np.max(np.abs(start), axis=-1, keepdims=True) + 1.0
    start = start + size * 1e-7 * (np.arange(deg) - deg / 2)
    roots, last, dp = _aberth_dd(start, hi, lo, _STEPS)
    n_bad = n + 1
    for _ in range(_PASSES):
        bad = _doubtful(roots, last, dp, hi, lo)
        good = np.flatnonzero(~bad)
        if not bad.any() or not len(good) or bad.sum() >= n_bad:
            break       # nothing doubtful, nothing to start from, or no progress
        n_bad = bad.sum()
        # restart each doubtful point from the roots of the nearest trusted point: the
        # roots move continuously with the couplings, so the start is in the right order
        rows = np.flatnonzero(bad)
        near = good[np.clip(np.searchsorted(good, rows), 0, len(good) - 1)]
        left = good[np.clip(np.searchsorted(good, rows) - 1, 0, len(good) - 1)]
        near = np.where(np.abs(left - rows) < np.abs(near - rows), left, near)
        lo_r = None if lo is None else lo[rows]
        r2, l2, d2 = _aberth_dd(np.sort(roots[near], axis=-1), hi[rows], lo_r, _STEPS)
        roots[rows], last[rows], dp[rows] = r2, l2, d2
    return np.sort(roots, axis=-1), _doubtful(roots, last, dp, hi, lo)


def _doubtful(roots, last, dp, hi, lo):
    """Points whose roots cannot be trusted to about 1e-12 relative."""
    d1 = hi.shape[1]
    scale = np.max(np.abs(roots), axis=-1, keepdims=True) + 1e-300
    ordered = np.sort(roots, axis=-1)
    gaps = np.min(np.diff(ordered, axis=-1), axis=-1) / scale[:, 0]
    close = CLOSE if lo is None else CLOSE_DD
    doubtful = (gaps < close) | ~np.all(np.isfinite(roots), axis=-1)
    doubtful |= np.max(np.abs(last) / scale, axis=-1) > 1e-13
    if lo is None:
        # float64 coefficients: the residual carries their rounding; trust a root only if
        # that rounding moves it by less than about 1e-12 of the scale
        absval = np.zeros_like(roots)
        for j in range(d1):
            absval = absval * np.abs(roots) + np.abs(hi[:, j:j + 1])
        moved = 4 * d1 * np.finfo(float).eps * absval / (np.abs(dp) + 1e-300) / scale
        doubtful |= np.max(moved, axis=-1) > 1e-12
    return doubtful
