"""Certified separation of two level branches on rational pieces of the swept interval.

The exact route of :mod:`symcluster.theorems.envelope` finds every point where the lowest
roots λ_g(x), λ_h(x) of two factors g(E, x), h(E, x) can meet as a real root of the
resultant Res_E(g, h)(x).  For factors of degree 30 in E and in x that resultant has degree
near 2,000 in x, and isolating its real roots over a long interval dominates the run time.
Most pairs never meet, or meet only at a few points, so this module proves most of the
interval free of meetings without any resultant:

*Level test.*  Let X = [u, v] be a rational interval and ℓ(x) a straight line with rational
values at u and v such that λ_g(u) < ℓ(u) < λ_h(u) (exact comparisons).  If g(ℓ(x), x) ≠ 0
and h(ℓ(x), x) ≠ 0 for every x in X, then λ_g(x) < ℓ(x) < λ_h(x) on all of X: the roots
are continuous functions of x (every root is real and the leading coefficient in E is a
nonzero constant, as :mod:`~symcluster.theorems.envelope` assumes), so the number of roots
of either factor below ℓ(x) can change only where one of them equals ℓ(x); g keeps at
least one root below the line and h none.  The two univariate integer polynomials are free
of roots on X when they are nonzero at u and v and Descartes' rule of signs counts no sign
variation on (u, v) after the Möbius map (an exact integer test; no rounding anywhere).
The line only has to be proposed well: it runs through the middle of the widest gap, at
both ends, between the roots of the lower factor that lie below the upper factor's lowest
root (floating-point proposals from python-flint's isolating balls), so that branches
with equal slopes and a small gap, as for bound pairs at strong attraction, separate on
long pieces.

*Subdivision.*  :func:`meeting_windows` bisects the interval wherever the test fails, down
to a minimum width; the small pieces that remain (where the branches really meet, or come
together as at a degenerate end point) are merged into windows, and only there does the
caller isolate the roots of the resultant.  The windows are the only places the branches
can meet.

Examples
--------
>>> import flint
>>> from fractions import Fraction
>>> cols = [flint.fmpz_poly([0, -1]), flint.fmpz_poly([1])]          # E - x
>>> p = line_values(cols, Fraction(0), Fraction(1, 2), Fraction(1), Fraction(1, 2))   # E = 1/2
>>> p, free_of_roots(p, Fraction(-1), Fraction(0)), free_of_roots(p, Fraction(0), Fraction(1))
((-2)*x + 1, True, False)
"""

from fractions import Fraction

import flint
import mpmath

from symcluster.theorems.realalg import _descartes, _scaled, value_at

__all__ = ["line_values", "free_of_roots", "meeting_windows", "sector_below", "sector_below_open", "LazyDict"]

#: the smallest window, as a fraction of the interval, below which the exact route is used
MIN_WIDTH_FRACTION = Fraction(1, 2 ** 12)


def free_of_roots(p, u, v):
    """True when the integer polynomial p is proven to have no root in the closed [u, v].

    False means only "not proven" (Descartes' bound counts sign variations, which may
    exceed the number of roots).

    Examples
    --------
    >>> free_of_roots(flint.fmpz_poly([-2, 0, 1]), Fraction(0), Fraction(1))
    True
    >>> free_of_roots(flint.fmpz_poly([-2, 0, 1]), Fraction(1), Fraction(2))
    False
    """
    if p.degree() <= 0:
        return p != 0
    if value_at(p, u) == 0 or value_at(p, v) == 0:
        return False
    return _descartes(_scaled(p, u, v - u), p.degree()) == 0


def line_values(columns, u, lu, v, lv):
    """The integer polynomial in x proportional (by a positive factor) to f(ℓ(x), x), where
    ℓ is the straight line through (u, lu) and (v, lv) and ``columns[i]`` is the
    coefficient of E**i of f as an integer polynomial in x.

    Examples
    --------
    >>> cols = [flint.fmpz_poly([0, -1]), flint.fmpz_poly([1])]       # E - x
    >>> line_values(cols, Fraction(0), Fraction(1), Fraction(1), Fraction(3))   # ℓ = 1 + 2x
    x + 1
    """
    slope = (lv - lu) / (v - u)
    line = flint.fmpq_poly([flint.fmpq(*_pq(lu - slope * u)), flint.fmpq(*_pq(slope))])
    acc = flint.fmpq_poly([0])
    for col in reversed(columns):
        acc = acc * line + flint.fmpq_poly(col)
    return acc.numer()


def _gap_levels(curves, g, u, v, tops):
    """Rational levels at u and v (proposals): the middle of the gap after the k-th root of
    g, below ``tops``, with the same k at both ends, chosen widest at the narrower end."""
    xs = [curves.roots_numeric(g, y, upto=top) for y, top in zip((u, v), tops)]
    if not xs[0] or not xs[1]:
        return None
    best, k_best = None, None
    for k in range(min(len(xs[0]), len(xs[1]))):
        widths = []
        for rs, top in zip(xs, tops):
            upper = min(rs[k + 1], top) if k + 1 < len(rs) else top
            widths.append(upper - rs[k])
        if min(widths) > 0 and (best is None or min(widths) > best):
            best, k_best = min(widths), k
    if k_best is None:
        return None
    out = []
    for rs, top in zip(xs, tops):
        upper = min(rs[k_best + 1], top) if k_best + 1 < len(rs) else top
        mid = (rs[k_best] + upper) / 2
        out.append(Fraction(mpmath.nstr(mid, 20, min_fixed=-mpmath.inf, max_fixed=mpmath.inf)))
    return out


def _pq(q):
    return q.numerator, q.denominator


def _separated(curves, g, h, u, v):
    """The level test on [u, v] for the lowest roots of factors g and h, with a straight
    level line ℓ chosen between them at both ends (in the widest gap between the roots of
    the lower factor that lie below the upper factor's lowest root)."""
    ends = []
    for y in (u, v):
        a, b = curves.lowest(g, y), curves.lowest(h, y)
        c = a.cmp(b)
        if c == 0:
            return False
        ends.append(c)
    if ends[0] != ends[1]:
        return False                           # their order differs at the two ends
    lo_f, hi_f = (g, h) if ends[0] < 0 else (h, g)
    tops = [curves.lowest(hi_f, y).numeric(20) for y in (u, v)]
    lvl = _gap_levels(curves, lo_f, u, v, tops)
    if lvl is None:
        return False
    for y, M in zip((u, v), lvl):
        if not (curves.lowest(lo_f, y).cmp(M) < 0 and curves.lowest(hi_f, y).cmp(M) > 0):
            return False
    for f in (hi_f, lo_f):
        if not free_of_roots(line_values(curves.columns(f), u, lvl[0], v, lvl[1]), u, v):
            return False
    return True


def meeting_windows(curves, g, h, u, v, min_width=None):
    """Disjoint rational windows (open intervals) outside of which, in the closed [u, v]
    less the windows, λ_g and λ_h are proven apart by the level test.

    Parameters
    ----------
    curves : Curves
        Supplies ``lowest(fid, m)`` and ``dicts[fid]``.
    g, h : int
        Factor ids.
    u, v : Fraction
        The interval (u < v).
    min_width : Fraction, optional
        Pieces narrower than this are not bisected further (default: (v - u) / 4096).

    Returns
    -------
    list of (Fraction, Fraction)
        Ascending windows (a, b); every point of [u, v] where λ_g = λ_h lies in one of them
        or is u or v themselves when they are window ends.
    """
    if min_width is None:
        min_width = (v - u) * MIN_WIDTH_FRACTION
    open_pieces = []
    stack = [(u, v)]
    while stack:
        a, b = stack.pop()
        if _separated(curves, g, h, a, b):
            continue
        if b - a <= min_width:
            open_pieces.append((a, b))
            continue
        mid = (a + b) / 2
        stack.append((mid, b))
        stack.append((a, mid))
    merged = []
    for a, b in sorted(open_pieces):
        if merged and merged[-1][1] == a:
            merged[-1] = (merged[-1][0], b)
        else:
            merged.append((a, b))
    return merged


def _sector_separated(curves, low, high, u, v):
    """The level test for two sets of factors: min over ``low`` of the lowest roots stays
    below a level line that every factor of ``high`` stays above, on all of [u, v]."""
    mins = []
    for y in (u, v):
        a = curves.argmin(low, y)
        b = curves.argmin(high, y)
        if curves.lowest(a, y).cmp(curves.lowest(b, y)) >= 0:
            return None                         # not below at y: no use bisecting
        mins.append((a, b))
    g = mins[0][0]
    tops = [curves.lowest(b, y).numeric(20) for y, (_a, b) in zip((u, v), mins)]
    lvl = _gap_levels(curves, g, u, v, tops)
    if lvl is None:
        return False
    for y, M, (_a, b) in zip((u, v), lvl, mins):
        if not (curves.lowest(g, y).cmp(M) < 0 and curves.lowest(b, y).cmp(M) > 0):
            return False
    for f in [g] + sorted(high):
        if not free_of_roots(line_values(curves.columns(f), u, lvl[0], v, lvl[1]), u, v):
            return False
    return True


def sector_below(curves, low, high, u, v, min_width=None):
    """True when the lowest root over the factors ``low`` is proven below the lowest root
    over the factors ``high`` at every point of the closed [u, v] (the level test on a
    bisection of [u, v] down to ``min_width``, default (v - u) / 4096); False means only
    "not proven this way" (the exact route decides then).

    With g a factor of ``low`` below a level line ℓ at u, g(ℓ(x), x) ≠ 0 on the piece and
    every factor of ``high`` above ℓ at u and h(ℓ(x), x) ≠ 0 there, the minimum of ``low``
    is at most λ_g(x) < ℓ(x) < the minimum of ``high`` on the whole piece; no resultant
    and no envelope is needed.
    """
    if min_width is None:
        min_width = (v - u) * MIN_WIDTH_FRACTION
    low, high = sorted(set(low)), sorted(set(high))
    stack = [(u, v)]
    while stack:
        a, b = stack.pop()
        ok = _sector_separated(curves, low, high, a, b)
        if ok:
            continue
        if ok is None or b - a <= min_width:
            return False
        mid = (a + b) / 2
        stack.append((mid, b))
        stack.append((a, mid))
    return True


class LazyDict(dict):
    """A dict filled by ``build()`` (which returns a dict) at the first look: a tower that
    the level lines decide needs no envelope, and the exact envelope sweep is slow.

    Examples
    --------
    >>> d = LazyDict(lambda: {"a": 1})
    >>> dict.__len__(d), d["a"], len(d)
    (0, 1, 1)
    """

    def __init__(self, build):
        super().__init__()
        self._build, self._done = build, False

    def fill(self):
        if not self._done:
            self._done = True
            dict.update(self, self._build())
        return self

    def __getitem__(self, key):
        return dict.__getitem__(self.fill(), key)

    def __contains__(self, key):
        return dict.__contains__(self.fill(), key)

    def __iter__(self):
        return dict.__iter__(self.fill())

    def __len__(self):
        return dict.__len__(self.fill())

    def __repr__(self):
        return dict.__repr__(self.fill())

    def items(self):
        return dict.items(self.fill())

    def keys(self):
        return dict.keys(self.fill())

    def values(self):
        return dict.values(self.fill())

    def get(self, key, default=None):
        return dict.get(self.fill(), key, default)


def _near_end(curves, low, high, end, inner):
    """True when, on the open window between ``inner`` and the open end ``end`` (rationals),
    the minimum over ``low`` is proven below the minimum over ``high``, in the case where the
    two minima are equal at ``end`` itself (a degenerate level at U = 0, say).

    The factors whose lowest root at ``end`` is the common minimum E0 ("near") are the only
    ones that matter on the window: a level line through the gap above E0 at ``end`` (and
    above every near factor's lowest root at ``inner``) has every other factor above it and
    every near factor's lowest root below it on the closed window (the level test).  For
    each near pair (g in low, h in high) Res_E(g, h) has no root in the open window
    (Descartes' rule, no factorisation), so their order is the same on all of it; one exact
    comparison at ``inner`` then decides."""
    pts = sorted((end, inner))
    u, v = pts
    allf = sorted(set(low) | set(high))
    e0 = min((curves.lowest(f, end) for f in allf), key=_Key)
    near = [f for f in allf if curves.lowest(f, end).cmp(e0) == 0]
    far = [f for f in allf if f not in near]
    near_low = [f for f in near if f in low]
    near_high = [f for f in near if f in high]
    if not near_low or not near_high or set(near_low) & set(near_high):
        return None
    slope = _slope_line(curves, near_low, near_high, end, inner, e0)
    big = any(curves.factors[g].degrees()[0] * curves.factors[h].degrees()[1]
              + curves.factors[h].degrees()[0] * curves.factors[g].degrees()[1] > 600
              for g in near_low for h in near_high)
    if slope is None and big:
        return None                             # neither a slope line nor a small resultant
    if not slope and big:
        return False
    # the line: at the end, halfway between E0 and the next root of any factor there; at
    # inner, halfway between the highest branch that starts at E0 (the m_f lowest roots of
    # a near factor f with E0 an m_f-fold root at the end) and the next root above it
    mult = {f: _multiplicity(curves, f, end) for f in near}
    lvl = {}
    for y in (end, inner):
        top_near = max(curves.roots_numeric(f, y)[mult[f] - 1] for f in near)
        above = [r for f in allf for r in curves.roots_numeric(f, y) if r > top_near + 1e-12]
        lowest_far = min((curves.lowest(f, y).numeric(20) for f in far), default=None)
        if lowest_far is not None and lowest_far <= top_near:
            return False
        mid = (top_near + min(above)) / 2 if above else top_near + 1
        M = Fraction(mpmath.nstr(mid, 20, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
        if any(curves.lowest(f, y).cmp(M) >= 0 for f in near) or \
                any(curves.lowest(f, y).cmp(M) <= 0 for f in far):
            return False
        lvl[y] = M
    for f in allf:
        if not free_of_roots(line_values(curves.columns(f), u, lvl[u], v, lvl[v]), u, v):
            return False
    if slope:
        return True
    for g in near_low:
        for h in near_high:
            r = curves.resultant(g, h)
            if r == 0 or (r.degree() > 0 and
                          _descartes(_scaled(r, u, v - u), r.degree()) != 0):
                return False
    b = min((curves.lowest(h, inner) for h in near_high), key=_Key)
    return any(curves.lowest(g, inner).cmp(b) < 0 for g in near_low)


def _arb(q):
    return flint.arb(flint.fmpq(q.numerator, q.denominator))


def _ball(r):
    """An arb ball holding the real algebraic number r."""
    return _arb(r.lo).union(_arb(r.hi))


def _eval(d, e, x):
    """Sum of c E**i x**j over the dict d, at the balls e, x (arb: rigorous enclosure)."""
    acc = flint.arb(0)
    for (i, j), c in d.items():
        acc += c * e ** i * x ** j
    return acc


def _sides_at_inner(curves, g, near_high, inner, at_inner):
    """At ``inner`` (rigorous balls): g's lowest root below the line's value ``at_inner``
    and every factor of ``near_high`` above it."""
    for f in [g] + near_high:
        r = curves.lowest(f, inner)
        r.tighten(200)
        rb = _ball(r)
        if (f == g and not rb < at_inner) or (f != g and not rb > at_inner):
            return False
    return True


def _slope_line(curves, near_low, near_high, end, inner, e0):
    """The near factors' branches all start at the common minimum E0 at ``end``; show,
    without resultants, that one branch of ``near_low`` stays below the line
    ℓ(x) = E0 + σ (x - end) and every branch of ``near_high`` above it on the half-open
    window from ``inner`` to ``end``.

    For a factor f, F(x) = f(ℓ(x), x) vanishes at ``end`` (f(E0, end) = 0), so by the mean
    value theorem F(x) = (x - end) F'(ξ) with ξ in the window; F'(ξ) = σ f_E + f_x on the
    line is enclosed with arb balls (E0 in a ball from its isolating interval, x the whole
    closed window), and an enclosure without 0 proves F ≠ 0 on the window less ``end``:
    the number of roots of f below the line is constant there, and it is read at
    ``inner`` by rigorous balls (none for the high factors, at least one for g).  σ lies
    between the slopes of the branches at ``end`` (rigorous balls of -f_x / f_E; a
    vanishing f_E, a multiple root, gives up)."""
    old = flint.ctx.prec
    try:
        flint.ctx.prec = 256
        e0.tighten(240)
        eb = _ball(e0)
        xb = _arb(end)
        d = 1 if inner > end else -1
        slopes = {}
        for f in near_low + near_high:
            fe = _eval(curves.derivative_dict(f, 0), eb, xb)
            fx = _eval(curves.derivative_dict(f, 1), eb, xb)
            if 0 in fe:
                # a multiple root at the end (a degenerate level inside one factor)
                return _slope_line_multiple(curves, near_low, near_high, end, inner)
            slopes[f] = -fx / fe * d           # the rise of the branch into the window
        g = min(near_low, key=lambda f: slopes[f].mid())
        top = min((slopes[h] for h in near_high), key=lambda b: b.mid())
        if not slopes[g] < top:
            return None                         # equal first-order slopes: give up
        mid = (slopes[g].mid() + top.mid()) / 2
        sigma = Fraction(mid.str(30, radius=False)) * d
        if not (slopes[g] < _arb(sigma * d) < top):
            return False
        window = _arb(end).union(_arb(inner))
        line = eb + _arb(sigma) * (window - xb)
        for f in [g] + near_high:
            dF = _arb(sigma) * _eval(curves.derivative_dict(f, 0), line, window) + \
                _eval(curves.derivative_dict(f, 1), line, window)
            if 0 in dF:
                return False
        at_inner = eb + _arb(sigma) * (_arb(inner) - xb)
        return _sides_at_inner(curves, g, near_high, inner, at_inner)
    finally:
        flint.ctx.prec = old


def _multiplicity(curves, f, end):
    """The multiplicity m of the lowest root E0 of factor f at x = ``end`` (exact: its
    irreducible polynomial divides f(E, end) exactly m times)."""
    r = curves.lowest(f, end)
    p, m = curves.at(f, end), 0
    while True:
        quo, rem = divmod(p, r.poly)
        if rem != 0:
            return m
        p, m = quo, m + 1


def _taylor_in_t(d, eb, sigma, end, step, prec):
    """F(t) = f(E0 + sigma t, end + step t) as a list of arb coefficients (t**0, t**1, ...),
    f given by its dict {(i, j): c} of c E**i x**j, E0 the ball ``eb``."""
    old = flint.ctx.prec
    flint.ctx.prec = prec
    try:
        e = flint.arb_poly([eb, _arb(sigma)])
        x = flint.arb_poly([_arb(end), flint.arb(step)])
        ie = max(i for i, _ in d)
        jx = max(j for _, j in d)
        epow = [flint.arb_poly([1])]
        for _ in range(ie):
            epow.append(epow[-1] * e)
        xpow = [flint.arb_poly([1])]
        for _ in range(jx):
            xpow.append(xpow[-1] * x)
        acc = flint.arb_poly([0])
        for (i, j), c in d.items():
            acc += epow[i] * xpow[j] * int(c)
        return acc.coeffs()
    finally:
        flint.ctx.prec = old


def _slope_line_multiple(curves, near_low, near_high, end, inner):
    """:func:`_slope_line` where E0 is a multiple root at ``end`` of some near factor.

    With t = |x - end| and the line ℓ = E0 + σ t, F_f(t) = f(ℓ, x) is a polynomial in t.
    The branches of f through (E0, end) are m_f eigenvalue curves of a symmetric matrix
    that depends linearly on x, analytic in x (Rellich's theorem; F. Rellich, Perturbation
    Theory of Eigenvalue Problems (1969), from memory), each E_i = E0 + O(t), so F_f is
    divisible by t^m_f, m_f the exact multiplicity of E0 as a root of f(E, end).  If
    G_f(t) = F_f(t) / t^m_f has no zero on the closed [0, T] (T = |inner - end|; its
    coefficients and values enclosed in arb balls), F_f has none on (0, T]: the number of
    roots of f below ℓ is constant on the window less ``end`` and is read at ``inner`` by
    rigorous balls, as in :func:`_slope_line`.  σ is proposed from the roots near the end
    (floating point; the checks decide).  None gives up (no σ found), False: not proven."""
    d = 1 if inner > end else -1
    T = abs(inner - end)
    e0 = min((curves.lowest(f, end) for f in near_low + near_high), key=_Key)
    e0.tighten(400)
    # proposal: the rises (lambda(t) - E0)/t of the lowest roots at t = T/1024
    ts = T / 1024
    y = end + d * ts
    with mpmath.workdps(40):
        e0n = e0.numeric(30)
        lam_g = min(curves.roots_numeric(g, y)[0] for g in near_low)
        lam_h = min(curves.roots_numeric(h, y)[0] for h in near_high)
        if not lam_g < lam_h:
            return None
        rise = ((lam_g + lam_h) / 2 - e0n) / mpmath.mpf(ts.numerator) * ts.denominator
        sigma = Fraction(mpmath.nstr(rise, 25, min_fixed=-mpmath.inf, max_fixed=mpmath.inf))
    g = min(near_low, key=lambda f: curves.roots_numeric(f, y)[0])
    old = flint.ctx.prec
    try:
        for prec in (512, 2048):
            flint.ctx.prec = prec
            eb = _ball(e0)
            window = flint.arb(flint.fmpq(T.numerator, 2 * T.denominator),
                               flint.fmpq(T.numerator, 2 * T.denominator))
            ok = True
            for f in [g] + near_high:
                m = _multiplicity(curves, f, end)
                coeffs = _taylor_in_t(curves.dicts[f], eb, sigma, end, d, prec)
                if any(0 not in c for c in coeffs[:m]):
                    return False            # not divisible by t^m: not the case assumed
                acc = flint.arb(0)
                for c in reversed(coeffs[m:]):
                    acc = acc * window + c
                if 0 in acc:
                    ok = False
                    break
            if ok:
                break
        else:
            return False
        at_inner = eb + _arb(sigma) * _arb(T)
        return _sides_at_inner(curves, g, near_high, inner, at_inner)
    finally:
        flint.ctx.prec = old


class _Key:
    def __init__(self, r):
        self.r = r

    def __lt__(self, other):
        return self.r.cmp(other.r) < 0


def sector_below_open(curves, low, high, u, v, closed):
    """:func:`sector_below` on the interval from u to v with ends closed or open as in
    ``closed``; at an open end where the two minima are equal (a degeneracy at that end
    point) a small window next to it is decided by :func:`_near_end`.

    Examples
    --------
    >>> from symcluster.theorems.envelope import Curves
    >>> c = Curves([{(1, 0): 1, (0, 1): -1}, {(1, 0): 1}], Fraction(-1), Fraction(0))
    >>> sector_below_open(c, [0], [1], Fraction(-1), Fraction(0), (True, False))  # x < 0
    True
    >>> sector_below_open(c, [0], [1], Fraction(-1), Fraction(0), (True, True))
    False
    """
    low, high = sorted(set(low)), sorted(set(high))
    a, b = u, v
    for end, is_closed, step in ((u, closed[0], 1), (v, closed[1], -1)):
        if is_closed:
            continue
        if curves.lowest(curves.argmin(low, end), end).cmp(
                curves.lowest(curves.argmin(high, end), end)) != 0:
            continue
        width = (v - u) / 64
        for _ in range(12):
            inner = end + step * width
            ok = _near_end(curves, low, high, end, inner)
            if ok:
                break
            if ok is None:                      # a smaller window would not help
                return False
            width /= 4
        else:
            return False
        if step == 1:
            a = inner
        else:
            b = inner
    return a < b and sector_below(curves, low, high, a, b)
