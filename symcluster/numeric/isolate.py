"""Certified real roots of integer polynomials at exact rational points.

Two services for the rest of :mod:`symcluster.numeric`, both on plain data (integer or
rational coefficient lists):

* :func:`isolate` encloses every real root of an integer polynomial in a ball narrow
  enough for a requested number of digits, with a certificate (python-flint's
  ``complex_roots``, or, for factors of degree >= :data:`LAGUERRE_MIN_DEGREE`, a
  Laguerre iteration whose every root is certified by an exact sign change);
  :func:`real_roots_at` does this for a sympy Poly ``P(E, couplings)`` at a point;
* :class:`RootCounter` counts the distinct real roots of a rational polynomial in a
  closed interval exactly (Sturm's theorem), which the closed-form enclosures of
  :mod:`symcluster.numeric.evaluate` use to single out one root.

Results of :func:`isolate` computed elsewhere (for instance on a process pool) can be
handed to :func:`real_roots_at` and :func:`roots_from_coeffs` in an ``isolations``
dict keyed ``(coefficients, digits)``; nothing is kept between callers except the
memoisation of these pure functions.
"""

from __future__ import annotations

import functools
from fractions import Fraction
from math import lcm

import flint
import mpmath
import sympy

from symcluster.algebra.factor import to_integer_dict
from symcluster.errors import ModelError, VerificationError

__all__ = ["LAGUERRE_MIN_DEGREE", "RootCounter", "exact_value", "isolate", "scaled_isolation",
           "real_roots_at",
           "root_counter_at", "roots_from_coeffs", "specialised"]


def point_values(gens, point):
    """Exact Fractions for each generator in `gens` from a point dict (Symbol or name keys).

    Examples
    --------
    >>> t = sympy.Symbol("t")
    >>> point_values((t,), {"t": sympy.Rational(1, 3)})
    [Fraction(1, 3)]
    """
    vals = []
    for s in gens:
        if s in point:
            v = point[s]
        elif s.name in point:
            v = point[s.name]
        else:
            raise ModelError(
                f"point {point!r} gives no value for coupling {s.name!r}; add {s.name!r} to it"
            )
        if isinstance(v, bool):
            v = None
        if isinstance(v, (int, Fraction)):
            vals.append(Fraction(v))
        elif isinstance(v, sympy.Rational):
            vals.append(Fraction(int(v.p), int(v.q)))
        else:
            raise ModelError(
                f"value {v!r} for coupling {s.name!r} is not an exact rational; "
                "use sympy.Rational, int or fractions.Fraction"
            )
    return vals


@functools.lru_cache(maxsize=8192)
def univariate_ints(terms, deg, vals):
    """Integer coefficients (ascending) of ``P(E, vals)`` up to a positive factor.

    Homogeneous polynomials (every characteristic-polynomial factor is) are
    handled in pure integers: with vals = a_i / D, P(E, a/D) is proportional
    to P(D E, a), whose coefficients C_k = D^k sum c prod a_i^e_i are integers.
    The roots are then divided by D.

    Examples
    --------
    >>> univariate_ints((((0, 1), -1), ((2, 0), 2)), 2, (Fraction(1, 2),))   # 2 E^2 - t
    (-1, 0, 4)
    """
    coeffs = [Fraction(0)] * (deg + 1)
    for mon, c in terms:
        x = Fraction(c)
        for v, e in zip(vals, mon[1:]):
            if e:
                x *= v**e
        coeffs[mon[0]] += x
    den = 1
    for c in coeffs:
        den = lcm(den, c.denominator)
    return tuple(int(c * den) for c in coeffs)


@functools.lru_cache(maxsize=8192)
def homogeneous_ints(terms, deg, nums, den):
    """Coefficients (ascending) of P(x, nums) for homogeneous P, x = den * E; None if not
    homogeneous.

    Examples
    --------
    >>> homogeneous_ints((((0, 2), -4), ((2, 0), 1)), 2, (1,), 2)   # E^2 - 4 t^2, t = 1/2
    (-4, 0, 1)
    """
    total = None
    coeffs = [0] * (deg + 1)
    powers = [dict() for _ in nums]
    for mon, c in terms:
        d = sum(mon)
        if total is None:
            total = d
        elif d != total:
            return None
        x = c
        for k, (a, e) in enumerate(zip(nums, mon[1:])):
            if e:
                pw = powers[k].get(e)
                if pw is None:
                    pw = powers[k][e] = a ** e
                x *= pw
        coeffs[mon[0]] += x
    return tuple(coeffs)


def exact_mid(ball):
    """The midpoint of a python-flint ``arb`` ball as an exact Fraction.

    Examples
    --------
    >>> exact_mid(flint.arb(0.375))
    Fraction(3, 8)
    """
    man, exp = ball.mid().man_exp()
    man, exp = int(man), int(exp)
    return Fraction(man * 2**exp) if exp >= 0 else Fraction(man, 2**-exp)


#: Irreducible factors of at least this degree are isolated by descending Laguerre
#: iteration with an exact sign-change certificate (below) before the general complex
#: root finder is tried.  Measured on 2 cores for real-rooted integer polynomials:
#: ``complex_roots`` needs minutes at degree 336, the iteration about a second.
LAGUERRE_MIN_DEGREE = 24

#: Bits per degree of the first, shorter working precision of the Laguerre iteration:
#: Horner's scheme on a real-rooted polynomial near a root loses about the bits of
#: max_j |c_j x^j| / |x f'(x)|, a few per degree for spread roots (common practice, no
#: source); the worst-case bound (coefficient bits + degree * root-bound bits) is often
#: ten times more.
_SHORT_BITS_PER_DEGREE = 4


def _short(x, nbits):
    """The midpoint of `x` rounded down to `nbits` mantissa bits, as an exact arb."""
    man, exp = x.mid().man_exp()
    man, exp = int(man), int(exp)
    drop = man.bit_length() - nbits
    if drop > 0:
        man, exp = man >> drop, exp + drop
    return flint.arb(flint.arf((man, exp)))


def _sign_at(poly, cs, x, prec):
    """Exact sign (−1, 0, 1) of the integer polynomial `cs` (arb_poly `poly`) at the dyadic `x`."""
    for _ in range(3):
        with flint.ctx.workprec(prec):
            v = poly(x)
        if not v.contains(0):
            return 1 if v > 0 else -1
        prec *= 2
    exact = exact_mid(x)            # exact: den^d f(num/den) in integers
    num, den = exact.numerator, exact.denominator
    d = len(cs) - 1
    val = sum(c * num**j * den ** (d - j) for j, c in enumerate(cs))
    return (val > 0) - (val < 0)


def _laguerre_real_roots(f, bits, prec=None):
    """Certified real roots of a squarefree integer polynomial with only real roots.

    Laguerre's method with implicit deflation over the roots already found
    (``G = f'/f − Σ 1/(x − r_j)``, ``H = (f'/f)² − f''/f − Σ 1/(x − r_j)²``), started
    above a root bound and then just below each root found, finds the roots in
    descending order: for a real-rooted polynomial the iterates from above its largest
    root decrease monotonically to it, with cubic convergence near a simple root
    (Wilkinson, The Algebraic Eigenvalue Problem, 1965, ch. 7; Stoer & Bulirsch,
    Introduction to Numerical Analysis, section 5.5).  Nothing is trusted from the
    iteration itself: the result is accepted only if ``f`` changes sign, evaluated
    exactly, across each ``[r − ε, r + ε]`` with ``ε = |r|·2**−bits``, and these d
    intervals are disjoint; d disjoint sign changes of a degree-d polynomial enclose
    exactly one root each.

    ``prec`` is the working precision in bits; by default a bound under which no
    evaluation on the root region loses more than its guard bits.  A lower one only
    risks no certificate (None), never a wrong root.

    Returns ascending arb balls ``r ± ε`` (exact midpoints), or None when no certificate
    was obtained (non-real roots, stagnation); the caller then uses the general method.
    """
    d = f.degree()
    cs = [int(c) for c in f.coeffs()]
    if cs[-1] < 0:
        cs = [-c for c in cs]
    lead = cs[-1]
    if cs[0] == 0:
        return None  # zero root: relative accuracy needs the general method
    # Fujiwara's bound: every root satisfies |x| <= 2 max_j |c_j / c_d|^(1/(d-j))
    lb = max(((abs(c).bit_length() - lead.bit_length() + 1) / (d - j)
              for j, c in enumerate(cs[:-1]) if c), default=0.0)
    top_exp = int(lb) + 2
    cbits = max(abs(c).bit_length() for c in cs)
    # |c_j x^j| <= 2^guard on the root region: evaluations lose at most guard bits
    guard = cbits + d * max(top_exp, 0)
    if prec is None:
        prec = guard + 2 * bits + 64
    found = []
    Q = dQ = ddQ = None               # deflation polynomial prod (x - r_j) over found roots
    with flint.ctx.workprec(prec):
        P = flint.arb_poly(cs)       # exact: the coefficients fit in prec bits
        dP = P.derivative()
        ddP = dP.derivative()
        tol = flint.arb(2) ** (-bits - 6)
        x = flint.arb(2) ** top_exp
        for k in range(d):
            n = d - k
            if found:
                # restart just below the last root, at a relative gap delta = 2**(-bits/4):
                # the deflation term 1/(x - r)**2 then differs from f's own by about
                # 2*err(r)/delta**3 = 2**(-bits/4 - 63), with err(r) = 2**(-bits-64) below
                r = found[-1]
                x = _short(r - abs(r) * flint.arb(2) ** (-(bits // 4)), bits + 64)
            for _it in range(200):
                fx = P(x)
                if fx.contains(0):
                    break
                g1 = dP(x) / fx
                G = g1
                H = g1 * g1 - ddP(x) / fx
                if Q is not None:   # deflation: sum 1/(x - r_j) = Q'/Q
                    qx = Q(x)
                    q1 = dQ(x) / qx
                    G -= q1
                    H -= q1 * q1 - ddQ(x) / qx
                disc = (n - 1) * (n * H - G * G)
                disc = disc.mid()
                root = flint.arb(disc).sqrt() if disc > 0 else flint.arb(0)
                den = (G + root if G.mid() >= 0 else G - root).mid()
                if den == 0:
                    return None
                step = (n / flint.arb(den)).mid()
                if not step.is_finite():
                    return None    # a too short working precision: no certificate here
                if step < 0:
                    break          # at the noise level: x is as good as this precision allows
                x = _short(flint.arb(x.mid() - step), bits + 64)
                if abs(step) <= abs(x.mid()) * tol:
                    break
            else:
                return None
            found.append(flint.arb(x.mid()))
            lin = flint.arb_poly([-found[-1], 1])
            Q = lin if Q is None else Q * lin
            dQ = Q.derivative()
            ddQ = dQ.derivative()
    # certificate: exact signs at r -+ eps, intervals disjoint
    found.sort(key=exact_mid)
    balls = []
    prev_hi = None
    for r in found:
        for polish in range(4):
            with flint.ctx.workprec(prec):
                if polish:      # Newton on f itself, at full precision
                    r = r - P(r) / dP(r)
                    if not r.is_finite():
                        return None  # f'(r) ~ 0: leave it to the general method
                    r = flint.arb(r.mid())
                eps = abs(r) * flint.arb(2) ** (-bits)
                lo = flint.arb((r - eps).mid())
                hi = flint.arb((r + eps).mid())
                ball = flint.arb(r.mid(), (eps * 1.001).mid())
            if eps == 0:
                return None
            s_lo = _sign_at(P, cs, lo, prec)
            s_hi = _sign_at(P, cs, hi, prec)
            if s_lo * s_hi < 0:
                break
        else:
            return None
        if prev_hi is not None and not (exact_mid(prev_hi) < exact_mid(lo)):
            return None
        balls.append(ball)
        prev_hi = hi
    return balls


@functools.lru_cache(maxsize=4096)
def isolate(coeffs, digits):
    """Certified real roots (ascending, with multiplicity) of an integer polynomial.

    The polynomial is first factored exactly (python-flint), so roots that
    coincide at this point are found exactly with their multiplicity; the
    distinct roots of each irreducible factor are then enclosed with ball
    arithmetic, raising the precision until every real root is isolated from
    the others and accurate to ``digits``.

    Parameters
    ----------
    coeffs : tuple of int
        Coefficients, ascending powers; the leading one non-zero.
    digits : int
        Correct significant digits wanted of every real root.

    Returns
    -------
    tuple
        ``(roots, nonreal)``: the real roots as ``(mantissa, exponent)`` pairs (value
        ``mantissa * 2**exponent``), ascending, each repeated to its multiplicity, and
        the number of non-real roots.  Plain integers, so that the call can run in
        another process.

    Examples
    --------
    >>> isolate((-2, 0, 1), 10)[1]          # x^2 - 2: two real roots
    0
    >>> [float(m) * 2.0 ** e for m, e in isolate((-2, 0, 1), 10)[0]]
    [-1.4142135623730951, 1.4142135623730951]
    """
    fp = flint.fmpz_poly(list(coeffs))
    _, factors = fp.factor()
    bits = int(digits * 3.33) + 24
    prec = bits + 32
    for _ in range(12):
        with flint.ctx.workprec(prec):
            real, nonreal = [], 0
            for f, mult in factors:
                if f.degree() >= LAGUERRE_MIN_DEGREE:
                    # first at a working precision of about what evaluating f near its
                    # roots loses in practice (a few bits per degree), then at the
                    # worst-case bound; only the certificate decides either way
                    balls = _laguerre_real_roots(f, prec - 16, prec=_SHORT_BITS_PER_DEGREE
                                                 * f.degree() + 2 * prec + 64)
                    if balls is None:
                        balls = _laguerre_real_roots(f, prec - 16)
                    if balls is not None:
                        real.extend((b, mult) for b in balls)
                        continue
                for c, m in f.complex_roots():
                    if c.imag.is_zero():
                        real.append((c.real, m * mult))
                    else:
                        nonreal += m * mult
        real.sort(key=lambda rm: exact_mid(rm[0]))
        ok = True
        with flint.ctx.workprec(prec):   # at the default 53 bits upper()/lower() round
            for r, _m in real:
                if r.rad() != 0 and not (r.rad() * 2**bits <= abs(r.mid())):
                    ok = False
            for (r1, _), (r2, _) in zip(real, real[1:]):
                if not (r1.upper() < r2.lower()):
                    ok = False
        if ok:
            out = []
            for r, m in real:
                man, exp = r.mid().man_exp()
                out.extend([(int(man), int(exp))] * m)
            return tuple(out), nonreal
        prec *= 2
    raise VerificationError(  # pragma: no cover - needs pathological input
        f"could not isolate the real roots of {coeffs!r} to {digits} digits; lower digits"
    )


def real_roots_at(poly, point, digits=30, isolations=None):
    """Certified real roots of ``poly(E, point)``, ascending, with multiplicity.

    Parameters
    ----------
    poly : sympy.Poly
        In generators ``(E, *couplings)``, rational coefficients.
    point : dict
        Exact rational value for each coupling (keys: Symbols or their names).
    digits : int
        Requested correct significant digits.
    isolations : dict, optional
        Results of :func:`isolate` computed ahead, keyed ``(coefficients, digits)``.

    Returns
    -------
    list of mpmath.mpf
        Rounded to `digits` digits.

    Raises
    ------
    VerificationError
        If the degree in E drops at the point or some root is not real.

    Examples
    --------
    >>> E, t = sympy.symbols("E t", real=True)
    >>> real_roots_at(sympy.Poly(E**2 - 4*t**2, E, t), {t: sympy.Rational(1, 2)}, 15)
    [mpf('-1.0'), mpf('1.0')]
    """
    deg = poly.degree(poly.gens[0])
    _, rep = to_integer_dict(poly)
    vals = point_values(poly.gens[1:], point)
    coeffs = univariate_ints(tuple(rep.items()), deg, tuple(vals))
    return roots_from_coeffs(coeffs, deg, digits, poly, point, isolations)


def scaled_isolation(result, coeffs, factor, scaled_coeffs):
    """The :func:`isolate` result of ``sum_a c_a factor^(n - a) x^a`` from that of
    ``sum_a c_a x^a`` (``coeffs``; ``factor`` a non-zero integer).

    The roots of the first are ``factor`` times those of the second, so every enclosure
    is multiplied exactly by ``factor`` (its relative accuracy, hence its digits, is
    unchanged) and the order is reversed for a negative factor.  ``scaled_coeffs`` must be
    exactly those coefficients (checked; otherwise ValueError), so that the result can
    stand for ``isolate(scaled_coeffs, digits)``.

    Examples
    --------
    >>> base = isolate((-2, 0, 1), 10)              # x^2 - 2
    >>> scaled = scaled_isolation(base, (-2, 0, 1), -3, (-18, 0, 1))   # x^2 - 18
    >>> [round(float(m) * 2.0 ** e, 9) for m, e in scaled[0]]
    [-4.242640687, 4.242640687]
    """
    n = len(coeffs) - 1
    if not factor or tuple(scaled_coeffs) != tuple(c * factor ** (n - a)
                                                   for a, c in enumerate(coeffs)):
        raise ValueError("scaled_isolation: the coefficients are not a scaling of the base")
    roots, nonreal = result
    out = [(m * factor, e) for m, e in roots]
    if factor < 0:
        out.reverse()
    return tuple(out) if isinstance(roots, tuple) else out, nonreal


def roots_from_coeffs(coeffs, deg, digits, poly, point, isolations=None):
    """:func:`real_roots_at` for the integer coefficients (ascending) of ``poly`` at
    ``point``, already computed; `poly` and `point` only name the polynomial in errors.

    Examples
    --------
    >>> E = sympy.Symbol("E")
    >>> roots_from_coeffs((-1, 0, 1), 2, 15, sympy.Poly(E**2 - 1, E), {})
    [mpf('-1.0'), mpf('1.0')]
    """
    if deg < 0 or coeffs[-1] == 0:
        raise VerificationError(
            f"leading coefficient of {poly.as_expr()} in {poly.gens[0]} vanishes at {point}; "
            "choose another parameter point"
        )
    key = (coeffs, int(digits))
    hit = isolations.get(key) if isolations else None
    found, nonreal = hit if hit is not None else isolate(*key)
    if nonreal:
        raise VerificationError(
            f"{poly.as_expr()} has {nonreal} non-real root(s) at {point}, but levels of a "
            "Hermitian block must be real; check the block or the factor"
        )
    with mpmath.workdps(digits):
        return [+mpmath.mpf(me) for me in found]


def exact_value(point, s):
    """The coupling `s` at `point` (keyed by Symbol or name) as a python-flint fmpq.

    Examples
    --------
    >>> exact_value({"U": 3}, sympy.Symbol("U"))
    3
    """
    v = point[s] if s in point else point.get(s.name)
    if v is None:
        raise ModelError(f"point {point!r} gives no value for coupling {s.name!r}; add it")
    if isinstance(v, int) and not isinstance(v, bool):
        v = sympy.Integer(v)
    elif isinstance(v, Fraction):
        v = sympy.Rational(v.numerator, v.denominator)
    if not isinstance(v, sympy.Rational):
        raise ModelError(f"value {v!r} for coupling {s.name!r} is not an exact rational; "
                         "use sympy.Rational, int or fractions.Fraction")
    return flint.fmpq(int(v.p), int(v.q))


def specialised(polynomial, point):
    """Exact rational coefficients (ascending in E) of polynomial(E, point), as fmpq.

    Examples
    --------
    >>> E, t = sympy.symbols("E t")
    >>> specialised(sympy.Poly(E**2 - t, E, t), {t: sympy.Rational(1, 4)})
    [-1/4, 0, 1]
    """
    gens = polynomial.gens
    vals = [exact_value(point, s) for s in gens[1:]]
    coeffs = [flint.fmpq(0)] * (polynomial.degree(gens[0]) + 1)
    for monom, c in polynomial.terms():
        c = sympy.Rational(c)
        x = flint.fmpq(int(c.p), int(c.q))
        for v, e in zip(vals, monom[1:]):
            if e:
                x *= v ** e
        coeffs[monom[0]] += x
    return coeffs


class RootCounter:
    """Exact count of the distinct real roots of a rational polynomial in a closed interval.

    Sturm's theorem (C. Sturm, 1835; e.g. S. Basu, R. Pollack, M.-F. Roy, Algorithms in
    Real Algebraic Geometry, ch. 2): for the squarefree part g of p and its Sturm chain
    g_0 = g, g_1 = g', g_(k+1) = -rem(g_(k-1), g_k), the number of distinct real roots of
    p in (a, b) is V(a) - V(b) for a < b not roots, where V(x) counts the sign changes of
    g_0(x), g_1(x), ... with zeros dropped.  At a root r of g, g'(r) != 0 (g is
    squarefree) and just right of r g and g' have one sign, so V(r) = V(r+) and the
    count in the closed interval [a, b] is V(a) - V(b) + [g(a) = 0] for any a < b.
    Every evaluation is exact (python-flint fmpq), so the counts are certificates; each
    chain member is divided by the absolute value of its leading coefficient, which
    changes no sign.

    Examples
    --------
    >>> c = RootCounter([flint.fmpq(-2), flint.fmpq(0), flint.fmpq(1)])     # x^2 - 2
    >>> c.n_real, c.count(flint.fmpq(0), flint.fmpq(2)), c.count(flint.fmpq(2), flint.fmpq(3))
    (2, 1, 0)
    """

    def __init__(self, coeffs):
        p = flint.fmpq_poly(list(coeffs))
        self.degree = p.degree()
        g = p // p.gcd(p.derivative()) if self.degree > 0 else p
        chain = [g, g.derivative()]
        while chain[-1].degree() > 0:
            chain.append(-(chain[-2] % chain[-1]))
        chain = [c for c in chain if c.degree() >= 0 and c != 0]
        self.chain = [c / abs(c.coeffs()[-1]) for c in chain]
        self.squarefree = self.chain[0]
        lead = [int(c.coeffs()[-1] > 0) * 2 - 1 for c in self.chain]
        at_minus = [s * (-1) ** c.degree() for s, c in zip(lead, self.chain)]
        self.n_real = self._changes(at_minus) - self._changes(lead)
        self.n_distinct = self.squarefree.degree()
        nums = [abs(int(c.p)) for c in coeffs if c != 0] + [abs(int(c.q)) for c in coeffs]
        self.height_bits = max(n.bit_length() for n in nums)

    @staticmethod
    def _changes(signs):
        signs = [s for s in signs if s]
        return sum(1 for a, b in zip(signs, signs[1:]) if a != b)

    def _variations(self, x):
        return self._changes([(v > 0) - (v < 0) for v in (c(x) for c in self.chain)])

    def is_root(self, x):
        return self.squarefree(x) == 0

    def count(self, lo, hi):
        """Number of distinct real roots in [lo, hi] (exact fmpq bounds, lo <= hi)."""
        on_lo = int(self.is_root(lo))
        if lo == hi:
            return on_lo
        return self._variations(lo) - self._variations(hi) + on_lo

    def only_root(self):
        """The root when every root coincides (squarefree part linear): exact fmpq."""
        c0, c1 = self.squarefree.coeffs()
        return -c0 / c1


@functools.lru_cache(maxsize=2048)
def _root_counter(key):
    return RootCounter([flint.fmpq(p, q) for p, q in key])


def root_counter_at(polynomial, point):
    """The :class:`RootCounter` of polynomial(E, point); checks degree and real roots.

    Raises
    ------
    VerificationError
        If the degree in E drops at the point or a root there is not real.

    Examples
    --------
    >>> E, t = sympy.symbols("E t")
    >>> root_counter_at(sympy.Poly(E**2 - t, E, t), {t: 4}).n_real
    2
    """
    coeffs = specialised(polynomial, point)
    if coeffs[-1] == 0:
        raise VerificationError(
            f"leading coefficient of {polynomial.as_expr()} in {polynomial.gens[0]} vanishes "
            f"at {point}; choose another parameter point")
    counter = _root_counter(tuple((int(c.p), int(c.q)) for c in coeffs))
    if counter.n_real != counter.n_distinct:
        raise VerificationError(
            f"{polynomial.as_expr()} has {counter.n_distinct - counter.n_real} distinct non-real "
            f"root(s) at {point}, but levels of a Hermitian block must be real; check the "
            "block or the factor")
    return counter
