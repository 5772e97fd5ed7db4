"""Exact real algebraic numbers for the certified tower and theorem reports.

Everything here is exact integer or rational arithmetic (python-flint's ``fmpz_poly``,
``fmpq_poly``, ``fmpq``); no floating-point value ever decides anything.

* :func:`roots_in` isolates the real roots of a square-free integer polynomial inside an
  interval by Descartes' rule of signs on Möbius-transformed polynomials (the
  Vincent–Collins–Akritas bisection; G. E. Collins, A. G. Akritas, SYMSAC 1976 [from
  memory]): a transformed polynomial with no sign variation has no root in the piece, one
  with exactly one variation has exactly one.
* :class:`RealAlg` is the unique root of an irreducible integer polynomial inside an open
  rational interval (or a rational number); two of them compare exactly (bisection with
  exact signs until their intervals separate; equal only when they are the same root of
  the same polynomial).
* :func:`lowest_root` gives the smallest real root of an integer polynomial.

Examples
--------
>>> import flint
>>> r = roots_in(flint.fmpz_poly([-48, -16, 1]), Fraction(0), Fraction(100))
>>> [x.exact() for x in r]
[8 + 4*sqrt(7)]
"""

from fractions import Fraction

import flint
import mpmath
import sympy

from symcluster.errors import VerificationError
from symcluster.theorems.rootsearch import complex_roots, fujiwara_bound, laguerre_roots

__all__ = ["RealAlg", "roots_in", "lowest_root", "cauchy_bound", "normalise", "value_at",
           "rational_between"]


def normalise(f):
    """The primitive integer polynomial with positive leading coefficient proportional to f.

    Examples
    --------
    >>> normalise(flint.fmpz_poly([4, 0, -2]))
    x^2 + (-2)
    """
    c = f.content()
    if c != 0 and c != 1:
        f = flint.fmpz_poly([int(a) // int(c) for a in f.coeffs()])
    if f.degree() >= 0 and f.leading_coefficient() < 0:
        f = -f
    return f


def value_at(f, x):
    """Exact value of the integer polynomial f at the rational x (a Fraction).

    Examples
    --------
    >>> value_at(flint.fmpz_poly([-2, 0, 1]), Fraction(3, 2))
    Fraction(1, 4)
    """
    v = flint.fmpq_poly(f)(flint.fmpq(x.numerator, x.denominator))
    return Fraction(int(v.p), int(v.q))


def _sign(f, x):
    v = value_at(f, x)
    return (v > 0) - (v < 0)


def cauchy_bound(f):
    """A rational B with every root of f in (-B, B) (Cauchy's bound, plus one).

    Examples
    --------
    >>> cauchy_bound(flint.fmpz_poly([-48, -16, 1]))
    Fraction(49, 1)
    """
    cs = [int(c) for c in f.coeffs()]
    lead = abs(cs[-1])
    return Fraction(max(abs(c) for c in cs[:-1]) if len(cs) > 1 else 0, lead) + 1


def _variations(coeffs):
    signs = [c > 0 for c in coeffs if c != 0]
    return sum(1 for u, v in zip(signs, signs[1:]) if u != v)


def _descartes(F, n):
    """Sign variations of (1 + y)^n F(1 / (1 + y)): an upper bound, exact for 0 and 1, of the
    number of roots of F in (0, 1)."""
    cs = [int(c) for c in F.coeffs()] + [0] * (n + 1 - (F.degree() + 1))
    rev = flint.fmpz_poly(list(reversed(cs)))
    return _variations([int(c) for c in rev(flint.fmpz_poly([1, 1])).coeffs()])


def _scaled(f, lo, width):
    """A positive multiple of f(lo + width * y) with integer coefficients."""
    g = flint.fmpq_poly(f)(flint.fmpq_poly([flint.fmpq(lo.numerator, lo.denominator),
                                            flint.fmpq(width.numerator, width.denominator)]))
    den = 1
    for c in g.coeffs():
        den = den * int(c.q) // _gcd(den, int(c.q))
    return flint.fmpz_poly([int(c * den) for c in g.coeffs()])


def _gcd(a, b):
    while b:
        a, b = b, a % b
    return a


def _isolate(f, lo, hi, first_only=False):
    """Disjoint open intervals (l, h), each with exactly one root of f, for all roots of f
    in the open interval (lo, hi), ascending (only the lowest with ``first_only``).

    ``f`` is irreducible of degree >= 2, so it has no rational root and in particular none
    at a bisection point."""
    n = f.degree()
    out = []
    stack = [(lo, hi - lo, _scaled(f, lo, hi - lo))]
    while stack:
        l, w, F = stack.pop()
        v = _descartes(F, n)
        if v == 0:
            continue
        if v == 1:
            out.append((l, l + w))
            if first_only:
                break
            continue
        half = w / 2
        FL = flint.fmpz_poly([int(c) * 2 ** (n - i) for i, c in enumerate(F.coeffs())])
        FR = FL(flint.fmpz_poly([1, 1]))
        if FR.coeffs()[0] == 0:
            raise VerificationError(f"polynomial {f} has the rational root {l + half}; "
                                    "it is not irreducible")
        stack.append((l + half, half, FR))
        stack.append((l, half, FL))
    return sorted(out)


def _squarefree_factors(f):
    """The distinct irreducible factors (normalised) of a nonzero integer polynomial."""
    _c, facs = f.factor()
    return [normalise(g) for g, _m in facs if g.degree() > 0]


class RealAlg:
    """A real algebraic number: the only root of the irreducible integer polynomial
    ``poly`` in the open interval (lo, hi), or the rational ``lo`` when lo == hi.

    Examples
    --------
    >>> import flint
    >>> a = RealAlg(flint.fmpz_poly([-2, 0, 1]), Fraction(1), Fraction(2))
    >>> a < Fraction(3, 2), a > Fraction(7, 5)
    (True, True)
    >>> a.exact()
    sqrt(2)
    """

    def __init__(self, poly, lo, hi):
        self.poly, self.lo, self.hi = normalise(poly), Fraction(lo), Fraction(hi)
        self._key = tuple(int(c) for c in self.poly.coeffs())
        if self.poly.degree() == 1:
            c0, c1 = (int(c) for c in self.poly.coeffs())
            self.lo = self.hi = Fraction(-c0, c1)
        self._exact = None

    @classmethod
    def rational(cls, q):
        q = Fraction(q)
        return cls(flint.fmpz_poly([-q.numerator, q.denominator]), q, q)

    @property
    def is_rational(self):
        return self.lo == self.hi

    def key(self):
        """The coefficients of the (normalised) polynomial."""
        return self._key

    def refine(self, steps=1):
        """Halve the isolating interval ``steps`` times (exact signs)."""
        if self.is_rational:
            return self
        for _ in range(steps):
            m = (self.lo + self.hi) / 2
            s = _sign(self.poly, m)
            if s == 0:       # impossible for an irreducible polynomial of degree >= 2
                raise VerificationError(f"polynomial {self.poly} is not irreducible")
            if s == _sign(self.poly, self.lo):
                self.lo = m
            else:
                self.hi = m
        return self

    def tighten(self, bits):
        """Narrow the isolating interval to width <= 2**-bits around the root: Newton's
        iteration in mpmath gives a candidate, two exact signs certify it (the new interval
        lies inside the old one and f changes sign across it); plain bisection otherwise."""
        width = Fraction(1, 2 ** bits)
        if self.is_rational or self.hi - self.lo <= width:
            return self
        cs = [int(c) for c in reversed(self.poly.coeffs())]
        with mpmath.workprec(bits + 64):
            m = (self.lo + self.hi) / 2
            x = mpmath.mpf(m.numerator) / m.denominator
            for _ in range(200):
                fx, dfx = mpmath.polyval(cs, x, derivative=True)
                if dfx == 0:
                    break
                step = fx / dfx
                x -= step
                if abs(step) < mpmath.ldexp(1, -(bits + 8)):
                    break
            man, exp = mpmath.frexp(x)
            q = Fraction(int(mpmath.ldexp(man, bits + 64)), 2 ** (bits + 64)) * \
                (Fraction(2) ** int(exp))
        lo, hi = q - width / 2, q + width / 2
        if self.lo <= lo and hi <= self.hi:
            s_lo, s_hi = _sign(self.poly, lo), _sign(self.poly, hi)
            if s_lo and s_hi and s_lo != s_hi:
                self.lo, self.hi = lo, hi
                return self
        while self.hi - self.lo > width:
            self.refine(8)
        return self

    def _cmp_rational(self, q):
        if self.is_rational:
            return (self.lo > q) - (self.lo < q)
        while self.lo <= q <= self.hi:
            self.refine()
            if self.lo < q < self.hi and _sign(self.poly, q) == 0:
                raise VerificationError(f"polynomial {self.poly} has the rational root {q}")
        return 1 if self.lo > q else -1

    def cmp(self, other):
        """-1, 0 or 1: the exact order of two real algebraic numbers (or a rational)."""
        if not isinstance(other, RealAlg):
            return self._cmp_rational(Fraction(other))
        if other.is_rational:
            return self._cmp_rational(other.lo)
        if self.is_rational:
            return -other._cmp_rational(self.lo)
        if self is other:
            return 0
        if self.key() == other.key():
            for _ in range(64):         # two roots of one polynomial: separate them cheaply
                if self.hi <= other.lo:
                    return -1
                if other.hi <= self.lo:
                    return 1
                if self.lo == other.lo and self.hi == other.hi:
                    break
                self.refine()
                other.refine()
            lo, hi = min(self.lo, other.lo), max(self.hi, other.hi)
            if len(_isolate(self.poly, lo, hi)) == 1 and self.lo < other.hi and other.lo < self.hi:
                return 0                # one root of the polynomial in the union: the same root
        for _ in range(10000):
            if self.hi <= other.lo:
                return -1
            if other.hi <= self.lo:
                return 1
            self.refine()
            other.refine()
        raise VerificationError("two real algebraic numbers could not be separated; "
                                "report this spectrum")

    def __lt__(self, other):
        return self.cmp(other) < 0

    def __gt__(self, other):
        return self.cmp(other) > 0

    def __le__(self, other):
        return self.cmp(other) <= 0

    def __ge__(self, other):
        return self.cmp(other) >= 0

    def numeric(self, digits=30):
        """The number as mpmath.mpf, correct to ``digits`` significant digits (bisection)."""
        if not self.is_rational:
            with mpmath.workdps(digits + 10):
                tol = mpmath.mpf(10) ** -(digits + 5) * (1 + abs(mpmath.mpf(self.lo.numerator)
                                                               / self.lo.denominator))
                while mpmath.mpf(self.hi.numerator) / self.hi.denominator \
                        - mpmath.mpf(self.lo.numerator) / self.lo.denominator > tol:
                    self.refine(8)
        with mpmath.workdps(digits + 10):
            m = (self.lo + self.hi) / 2
            return mpmath.mpf(m.numerator) / m.denominator

    def index(self):
        """The number of real roots of ``poly`` below this one (sympy's CRootOf index)."""
        if self.is_rational:
            return 0
        return len(_isolate(self.poly, -cauchy_bound(self.poly), self.lo))

    def exact(self):
        """Rational, quadratic surd, or sympy ``CRootOf``."""
        if self._exact is None:
            if self.is_rational:
                self._exact = sympy.Rational(self.lo.numerator, self.lo.denominator)
            else:
                x = sympy.Symbol("x")
                P = sympy.Poly([int(c) for c in reversed(self.poly.coeffs())], x)
                if P.degree() == 2:
                    cands = list(sympy.roots(P, x))
                    num = self.numeric(30)
                    self._exact = min(cands, key=lambda c: abs(mpmath.mpf(str(sympy.N(c, 40))) - num))
                else:
                    self._exact = sympy.CRootOf(P.as_expr(), self.index())
        return self._exact

    def __repr__(self):
        return f"RealAlg({self.exact()} ~ {mpmath.nstr(self.numeric(15), 15)})"


def roots_in(f, lo, hi):
    """The real roots of the nonzero integer polynomial f in the open interval (lo, hi), as
    ascending RealAlg (each distinct root once).  ``lo``/``hi`` may be None for -inf/+inf.

    Examples
    --------
    >>> [r.exact() for r in roots_in(flint.fmpz_poly([2, 0, -3, 0, 1]), 0, None)]
    [1, sqrt(2)]
    """
    out = []
    for g in _squarefree_factors(f):
        B = cauchy_bound(g)
        a = -B if lo is None else max(Fraction(lo), -B)
        b = B if hi is None else min(Fraction(hi), B)
        if not a < b:
            continue
        if g.degree() == 1:
            r = RealAlg(g, 0, 0)
            if a < r.lo < b:
                out.append(r)
            continue
        for l, h in _isolate(g, a, b):
            out.append(RealAlg(g, l, h))
    out.sort(key=_SortKey)
    return out


class _SortKey:
    def __init__(self, r):
        self.r = r

    def __lt__(self, other):
        return self.r.cmp(other.r) < 0


def lowest_root(f):
    """The smallest real root of the nonzero integer polynomial f (RealAlg), or None.

    Examples
    --------
    >>> lowest_root(flint.fmpz_poly([2, 0, -3, 0, 1])).exact()
    -sqrt(2)
    >>> lowest_root(flint.fmpz_poly([1, 0, 1])) is None
    True
    """
    best = None
    for g in _squarefree_factors(f):
        if g.degree() == 1:
            r = RealAlg(g, 0, 0)
        else:
            found = _lowest_by_laguerre(g)
            if found is None:
                found = _lowest_by_balls(g)
            if found is None:
                B = cauchy_bound(g)
                found = _isolate(g, -B, B, first_only=True)
                found = found[0] if found else None
            if found is None:
                continue
            r = RealAlg(g, *found)
        if best is None or r.cmp(best) < 0:
            best = r
    return best


#: Irreducible polynomials up to this degree have their lowest root isolated by
#: python-flint's ``complex_roots`` (rigorous isolating balls; real roots come with an
#: imaginary part exactly zero), which is much faster there than the bisection above (degree
#: 115: 0.35 s against about 3 s; measured on the towers of 6-site graphs).
BALL_MAX_DEGREE = 400


def _lowest_by_laguerre(g):
    """(lo, hi) isolating the lowest real root of the irreducible g, or None (the caller
    then uses the balls below).

    Laguerre's iteration started left of every root (at -B, below) converges
    monotonically, and cubically, to the smallest root when all roots are real, as those of
    level polynomials (eigenvalues) are; it only proposes.  The proof is exact: Descartes'
    rule counts one sign variation on (lo, hi) (exactly one root there) and none on
    (-B, lo) (no root below), with lo and hi rational and no root at either (g is
    irreducible of degree >= 2).  B is Fujiwara's bound on the roots' moduli (M. Fujiwara,
    Tohoku Math. J. 10, 167 (1916), from memory), much tighter than Cauchy's here.

    Examples
    --------
    >>> lo, hi = _lowest_by_laguerre(flint.fmpz_poly([-2, 0, 1]))        # -sqrt(2)
    >>> hi < 0 and lo * lo > 2 > hi * hi, float(hi - lo) < 1e-8
    (True, True)
    """
    n = g.degree()
    cs = [int(c) for c in g.coeffs()]
    B = fujiwara_bound(cs)
    got = laguerre_roots(cs, B, None, 1)
    if not got:
        return None
    x = got[0]
    with mpmath.workdps(50):
        # short rationals around x (small denominators keep the exact Taylor shifts of
        # Descartes' test cheap); narrower only if another root is that close
        for digits in (12, 20, 32):
            delta = mpmath.mpf(10) ** (3 - digits) * (1 + abs(x))
            lo = Fraction(mpmath.nstr(x - delta, digits, min_fixed=-mpmath.inf,
                                      max_fixed=mpmath.inf))
            hi = Fraction(mpmath.nstr(x + delta, digits, min_fixed=-mpmath.inf,
                                      max_fixed=mpmath.inf))
            if not -B < lo < hi:
                return None
            if _descartes(_scaled(g, lo, hi - lo), n) == 1:
                break
        else:
            return None
    if _descartes(_scaled(g, -B, lo + B), n) != 0:
        return None
    return lo, hi


def _dyadic(x):
    man, exp = x.man_exp()
    man, exp = int(man), int(exp)
    return Fraction(man * 2 ** exp) if exp >= 0 else Fraction(man, 2 ** -exp)


def _lowest_by_balls(g):
    """(lo, hi) isolating the lowest real root of the irreducible g from flint's isolating
    balls, confirmed by an exact sign change; None to use the bisection instead (or when g
    has no real root, which the bisection then confirms)."""
    if g.degree() > BALL_MAX_DEGREE:
        return None
    reals = [z.real for z, _m in complex_roots(g) if z.imag == 0]
    if not reals:
        return None
    r = min(reals, key=lambda b: _dyadic(b.mid()))
    mid, rad = _dyadic(r.mid()), _dyadic(r.rad())
    lo, hi = mid - rad, mid + rad
    if lo == hi:
        lo, hi = lo - Fraction(1, 2 ** 60), hi + Fraction(1, 2 ** 60)
    s_lo, s_hi = _sign(g, lo), _sign(g, hi)
    if s_lo == 0 or s_hi == 0 or s_lo == s_hi:
        return None
    return lo, hi


def rational_between(x, y):
    """A simple rational strictly between two RealAlg (or None for -inf / +inf) with x < y.

    Examples
    --------
    >>> rational_between(RealAlg.rational(0), RealAlg(flint.fmpz_poly([-2, 0, 1]), 1, 2))
    Fraction(1, 1)
    """
    if x is None and y is None:
        return Fraction(0)
    if x is None:
        return Fraction(int(_floor(y.lo)) - 1)
    if y is None:
        return Fraction(int(_floor(x.hi)) + 1)
    while x.hi >= y.lo:
        x.refine()
        y.refine()
    lo, hi = x.hi, y.lo
    for k in range(0, 400):          # the shortest decimal strictly inside (lo, hi)
        scale = 10 ** k
        q = Fraction(_floor(lo * scale) + 1, scale)
        if q < hi or (q == hi and not y.is_rational):     # y > y.lo when y is irrational
            return q
    return (lo + hi) / 2


def _floor(q):
    return q.numerator // q.denominator
