"""Lower envelopes of exact level curves and their certified comparison along one coupling.

Every level of a spectrum is a root of an irreducible polynomial P(E, couplings).  With all
couplings but one (x) fixed to exact rationals, the polynomials of a set of levels (one
sector: one electron number and one spin, say) become integer polynomials in (E, x) whose
irreducible factors :class:`Curves` collects.  Every root of such a factor is a level of
the same sector (a factor of one block's characteristic polynomial), so the lowest level
of a sector at x is the lowest real root, in E, of the product of its factors.

Method (each step exact):

1. *Envelope.*  A sweep from the left end keeps the factor g whose lowest root is the
   minimum.  g stays the minimum until its roots meet those of another factor h of the
   sector, which happens only at real roots of the resultant Res_E(g, h)(x).  With y the
   first such root to the right of x, one exact comparison of the lowest roots of all
   factors at a rational point of (x, y) decides the minimum on the whole of (x, y): the
   order of g's and h's lowest roots cannot change there.  (A candidate that is not the
   minimum there is replaced by the one that is; every candidate is tried at most once.)
2. *Comparison of two envelopes.*  On a piece where both minima are fixed factors g ≠ h,
   they can be equal only at real roots of Res_E(g, h); between consecutive roots one
   exact comparison at a rational point gives the sign.  If g = h on a piece, the two
   envelopes are the same root of the same polynomial there: equal on the whole piece.
3. *Points.*  At a rational point the two minima are compared exactly.  At an irrational
   break point c the sign follows from the two sides by continuity when it changes or
   vanishes there; otherwise the minima can be equal at c only if c is a root of the
   resultant of the two minimal factors, which is decided exactly by polynomial
   division; the one case left (an irrational touching point) is reported as an error,
   never guessed.

The leading coefficient in E of every factor must be a nonzero constant (the roots stay
finite; true of every characteristic-polynomial factor).
"""

import math
from fractions import Fraction  # noqa: F401  (the doctests use it)

import flint
import mpmath

from symcluster.algebra.factor import proven_irreducible
from symcluster.errors import ModelError, VerificationError
from symcluster.theorems.realalg import (RealAlg, lowest_root, normalise, rational_between,
                                        roots_in)
from symcluster.theorems.rootsearch import complex_roots, fujiwara_bound, laguerre_roots
from symcluster.theorems.separate import meeting_windows

__all__ = ["Curves", "INF", "NEG_INF"]


class _Inf:
    """+inf or -inf as an end of the swept interval."""

    def __init__(self, sign):
        self.sign = sign

    def cmp(self, other):
        if isinstance(other, _Inf):
            return (self.sign > other.sign) - (self.sign < other.sign)
        return self.sign

    def __repr__(self):
        return "oo" if self.sign > 0 else "-oo"


INF, NEG_INF = _Inf(1), _Inf(-1)


def _cmp(p, q):
    if isinstance(p, _Inf):
        return p.cmp(q)
    if isinstance(q, _Inf):
        return -q.cmp(p)
    return p.cmp(q)


def _between(x, y):
    return rational_between(None if isinstance(x, _Inf) else x, None if isinstance(y, _Inf) else y)


class Curves:
    """The factors of the level polynomials in (E, x), and exact questions about them.

    Parameters
    ----------
    polys : list of dict
        Each ``{(i, j): int}``: the integer coefficients of E**i x**j of one level's
        polynomial with the fixed couplings substituted.
    lower, upper : Fraction or None
        The ends of the swept interval (None: -inf / +inf).

    Examples
    --------
    >>> c = Curves([{(1, 0): 1, (0, 0): 2}, {(1, 0): 1, (0, 1): -1}], Fraction(-5), Fraction(5))
    >>> [p[2] for p in c.envelope([0, 1])]        # E = -2, then E = x below x = -2
    [1, 0]
    >>> c.meetings(0, 1)[0].exact()
    -2
    """

    def __init__(self, polys, lower, upper):
        self.ctx = flint.fmpz_mpoly_ctx.get(("E", "x"), "lex")
        self.a = NEG_INF if lower is None else RealAlg.rational(lower)
        self.b = INF if upper is None else RealAlg.rational(upper)
        self.lower, self.upper = lower, upper
        self.factors, self._ids = [], {}
        self.of_poly = []                       # for each input polynomial: its factor ids
        for d in polys:
            d = {k: int(v) for k, v in d.items() if v}
            p = self.ctx.from_dict(d)
            ids = []
            # a level's polynomial is irreducible as a rule: proven by one univariate
            # factorisation, which spares the bivariate one (minutes on some of degree ~30)
            if proven_irreducible(d):
                g = math.gcd(*d.values())          # the primitive part, as factor() gives
                parts = [(self.ctx.from_dict({k: v // g for k, v in d.items()}), 1)]
            else:
                parts = p.factor()[1]
            for f, _m in parts:
                if f.degrees()[0] == 0:
                    continue
                dE = f.degrees()[0]
                lead = [(j, c) for (i, j), c in f.to_dict().items() if i == dE]
                if len(lead) != 1 or lead[0][0] != 0:
                    raise ModelError("a level's polynomial has a leading coefficient in E "
                                     "that depends on the swept coupling; its levels are not "
                                     "finite everywhere")
                if int(lead[0][1]) < 0:
                    f = -f
                key = tuple(sorted((k, int(v)) for k, v in f.to_dict().items()))
                if key not in self._ids:
                    self._ids[key] = len(self.factors)
                    self.factors.append(f)
                ids.append(self._ids[key])
            self.of_poly.append(ids)
        self.dicts = [{k: int(v) for k, v in f.to_dict().items()} for f in self.factors]
        self._low, self._res, self._polys = {}, {}, {}
        self.stats = {"pairs": 0, "pairs_separated": 0, "windows": 0, "resultants": 0}

    # -- univariate questions -------------------------------------------------------------
    def at(self, fid, m):
        """Factor ``fid`` at the rational x = m, as an integer polynomial in E (up to a
        positive factor)."""
        d = self.factors[fid].to_dict()
        dx = max(j for (_i, j) in d)
        p, q = m.numerator, m.denominator
        coeffs = [0] * (max(i for (i, _j) in d) + 1)
        for (i, j), c in d.items():
            coeffs[i] += int(c) * p ** j * q ** (dx - j)
        return flint.fmpz_poly(coeffs)

    def lowest(self, fid, m):
        """The lowest root in E of factor ``fid`` at the rational x = m (RealAlg)."""
        key = (fid, m)
        if key not in self._low:
            r = lowest_root(self.at(fid, m))
            if r is None:
                raise VerificationError(f"a level polynomial has no real root at x = {m}; "
                                        "report this spectrum")
            self._low[key] = r
        return self._low[key]

    def roots_numeric(self, fid, m, upto=None):
        """The real roots in E of factor ``fid`` at the rational x = m, ascending and repeated
        by multiplicity, as mpmath numbers (proposals only, never used to decide anything).

        All of them (midpoints of python-flint's isolating balls); or, with ``upto``, those
        up to and including the first one above ``upto``, from Laguerre's iteration with
        deflation (``rootsearch.laguerre_roots``; much cheaper when few roots lie below)."""
        key = ("num", fid, m, None if upto is None else mpmath.nstr(upto, 20))
        if key not in self._low:
            p = normalise(self.at(fid, m))
            got = None
            if upto is not None and p.degree() > 2:
                cs = [int(c) for c in p.coeffs()]
                got = laguerre_roots(cs, fujiwara_bound(cs), upto, None)
            if got is None:
                with mpmath.workdps(30):
                    got = sorted(mpmath.mpf(z.real.mid().str(25, radius=False))
                                 for z, mult in complex_roots(p) for _ in range(mult)
                                 if abs(z.imag.mid()) <= 1e-10 * (1 + abs(z.real.mid())))
            self._low[key] = got
        return self._low[key]

    def columns(self, fid):
        """Factor ``fid`` as integer polynomials in x, the coefficients of E**0, E**1, ..."""
        key = ("cols", fid)
        if key not in self._low:
            d = self.dicts[fid]
            cols = [[0] * (max(j for (_i, j) in d) + 1) for _ in range(max(i for (i, _j) in d) + 1)]
            for (i, j), c in d.items():
                cols[i][j] = c
            self._low[key] = [flint.fmpz_poly(c) for c in cols]
        return self._low[key]

    def derivative_dict(self, fid, var):
        """∂f/∂E (var 0) or ∂f/∂x (var 1) of factor ``fid`` as {(i, j): int} (cached)."""
        key = ("der", fid, var)
        if key not in self._low:
            out = {}
            for (i, j), c in self.dicts[fid].items():
                k = (i, j)[var]
                if k:
                    out[(i - (var == 0), j - (var == 1))] = c * k
            self._low[key] = out
        return self._low[key]

    def argmin(self, fids, m):
        """The factor among ``fids`` whose lowest root at the rational m is smallest."""
        best = None
        for f in sorted(fids):
            if best is None or self.lowest(f, m).cmp(self.lowest(best, m)) < 0:
                best = f
        return best

    def resultant(self, i, j):
        """Res_E(factor i, factor j) as an integer polynomial in x (cached)."""
        key = ("res", min(i, j), max(i, j))
        if key not in self._polys:
            self._polys[key] = self._resultant(key[1], key[2])
        return self._polys[key]

    def _resultant(self, i, j):
        r = self.factors[i].resultant(self.factors[j], "E")
        coeffs = [0] * (max((e for (_, e) in r.to_dict()), default=0) + 1)
        for (_, e), c in r.to_dict().items():
            coeffs[e] += int(c)
        return flint.fmpz_poly(coeffs)

    def discriminant(self, i):
        """Disc_E(factor i) as an integer polynomial in x (cached)."""
        if ("disc", i) not in self._polys:
            self._polys[("disc", i)] = self._discriminant(i)
        return self._polys[("disc", i)]

    def _discriminant(self, i):
        f = self.factors[i]
        if f.degrees()[0] < 2:
            return flint.fmpz_poly([1])
        r = f.discriminant("E")
        coeffs = [0] * (max((e for (_, e) in r.to_dict()), default=0) + 1)
        for (_, e), c in r.to_dict().items():
            coeffs[e] += int(c)
        return flint.fmpz_poly(coeffs)

    def meetings(self, i, j):
        """Ascending real roots, inside the open interval, of Res_E(factor i, factor j)
        where the lowest roots of the two factors can meet.

        On a bounded interval the level test (:mod:`symcluster.theorems.separate`) first
        proves most of the interval free of meetings; the resultant is computed, and its
        roots isolated, only inside the small windows that remain (every point where the
        two lowest roots are equal is among the returned roots).  On an unbounded
        interval all real roots of the resultant inside it are returned."""
        key = (min(i, j), max(i, j))
        if key not in self._res:
            self.stats["pairs"] += 1
            if self.lower is None or self.upper is None:
                windows = [(self.lower, self.upper)]
            else:
                windows = meeting_windows(self, key[0], key[1], self.lower, self.upper)
            self.stats["windows"] += len(windows)
            if not windows:
                self.stats["pairs_separated"] += 1
                self._res[key] = []
                return self._res[key]
            r = self.resultant(i, j)
            self.stats["resultants"] += 1
            if r == 0:
                raise VerificationError("two distinct irreducible factors share a factor; "
                                        "report this spectrum")
            found = []
            if r.degree() > 0:
                for a, b in windows:
                    found += roots_in(r, a, b)
            self._res[key] = found
        return self._res[key]

    # -- envelopes ------------------------------------------------------------------------
    def _next_event(self, g, x, fids):
        best = self.b
        for h in fids:
            if h == g:
                continue
            for r in self.meetings(g, h):
                if _cmp(r, x) > 0:
                    if _cmp(r, best) < 0:
                        best = r
                    break
        return best

    def envelope(self, fids):
        """Pieces ``[lo, hi, fid]``: factor ``fid``'s lowest root is the minimum over
        ``fids`` on the open interval (lo, hi); the pieces cover the interval in order."""
        fids = sorted(set(fids))
        if not fids:
            raise ModelError("no levels in this sector")
        pieces, x = [], self.a
        while True:
            tried, cap = {}, self.b
            g = self.argmin(fids, _between(x, cap))
            for _ in range(len(fids) + 1):
                y = self._next_event(g, x, fids)
                tried[g] = y
                if _cmp(y, cap) < 0:
                    cap = y
                h = self.argmin(fids, _between(x, cap))
                if h in tried:
                    break
                g = h
            else:
                raise VerificationError("envelope sweep did not settle; report this spectrum")
            if pieces and pieces[-1][2] == h:
                pieces[-1][1] = tried[h]
            else:
                pieces.append([x, tried[h], h])
            x = tried[h]
            if _cmp(x, self.b) >= 0:
                return pieces

    # -- comparison of two envelopes ------------------------------------------------------
    def compare(self, env_lo, env_hi, closed=(True, True)):
        """Elements along the interval comparing two envelopes (d = upper − lower).

        Returns a list of dicts, in order: ``{"lo", "hi", "sign", "lower", "upper"}`` for
        open pieces and ``{"at", "sign", "lower", "upper"}`` for points (interior break
        points and closed finite ends); ``sign`` is "<" (the first envelope lies below the
        second), "=" or ">"; ``lower``/``upper`` are the factor ids of the two minima.
        """
        # joint pieces
        joint, i, j, x = [], 0, 0, self.a
        while i < len(env_lo) and j < len(env_hi):
            y1, y2 = env_lo[i][1], env_hi[j][1]
            c = _cmp(y1, y2)
            y = y1 if c <= 0 else y2
            joint.append((x, y, env_lo[i][2], env_hi[j][2]))
            x = y
            if c <= 0:
                i += 1
            if c >= 0:
                j += 1
        pieces = []
        for lo, hi, g, h in joint:
            cuts = [lo]
            if g != h:
                cuts += [r for r in self.meetings(g, h) if _cmp(r, lo) > 0 and _cmp(r, hi) < 0]
            cuts.append(hi)
            for u, v in zip(cuts, cuts[1:]):
                if g == h:
                    sign = "="
                else:
                    m = _between(u, v)
                    sign = "<>"[self.lowest(g, m).cmp(self.lowest(h, m)) > 0] \
                        if self.lowest(g, m).cmp(self.lowest(h, m)) != 0 else "="
                pieces.append({"lo": u, "hi": v, "sign": sign, "lower": g, "upper": h})
        out = []
        if closed[0] and not isinstance(self.a, _Inf):
            p = pieces[0]
            out.append(self._point(self.a, p["lower"], p["upper"], None, None))
        for k, p in enumerate(pieces):
            out.append(p)
            if k + 1 < len(pieces):
                q = pieces[k + 1]
                out.append(self._point(p["hi"], p["lower"], p["upper"], p, q))
        if closed[1] and not isinstance(self.b, _Inf):
            p = pieces[-1]
            out.append(self._point(self.b, p["lower"], p["upper"], None, None))
        return out

    def _point(self, c, g, h, left, right):
        """The comparison at the break point c (left/right: the adjacent pieces, or None at
        an end of the interval, where c is rational)."""
        if c.is_rational:
            m = c.lo
            s = self.lowest(g, m).cmp(self.lowest(h, m))
            return {"at": c, "sign": "<=>"[s + 1], "lower": g, "upper": h}
        sl, sr = left["sign"], right["sign"]
        if "=" in (sl, sr) or sl != sr:
            return {"at": c, "sign": "=", "lower": g, "upper": h}
        pairs = {(p["lower"], p["upper"]) for p in (left, right)}
        for gl, hl in pairs:
            if self.resultant(gl, hl).gcd(c.poly).degree() < 1:
                return {"at": c, "sign": sl, "lower": g, "upper": h}   # no common root at c
        if len(pairs) == 1:
            # the same two factors on both sides, the same sign: if c is a simple root of
            # their resultant and both have simple roots at c, the pair of roots that meets
            # at c crosses (a simple zero of one factor of the resultant), so it is not the
            # pair of minima, which keep their order
            (gl, hl), = pairs
            quotient = self.resultant(gl, hl) // c.poly     # exact: c.poly divides it
            if quotient.gcd(c.poly).degree() < 1 and \
                    all(self.discriminant(k).gcd(c.poly).degree() < 1 for k in (gl, hl)):
                return {"at": c, "sign": sl, "lower": g, "upper": h}
        # by continuity the minima at c are the lowest roots of the left piece's factors
        return {"at": c, "sign": "=" if _touching(self, c, left["lower"], left["upper"]) else sl,
                "lower": g, "upper": h}


# -- exact arithmetic in Q(c), c a real algebraic number -------------------------------------
def _qc_poly(fac, fc):
    """Factor (E, x) at x = c: list of Q(c) elements (fmpq_poly mod fc), ascending in E."""
    d = fac.to_dict()
    out = [flint.fmpq_poly([0]) for _ in range(max(i for (i, _j) in d) + 1)]
    for (i, j), v in d.items():
        out[i] = out[i] + flint.fmpq_poly([0] * j + [int(v)])
    return [a % fc for a in out]


def _trim(p):
    while p and p[-1] == 0:
        p = p[:-1]
    return p


def _inv(a, fc):
    g, s, _t = a.xgcd(fc)
    if g.degree() != 0:
        raise VerificationError("a minimal polynomial is not irreducible; report this spectrum")
    return (s / g.coeffs()[0]) % fc


def _qc_rem(a, b, fc):
    a, b = _trim(list(a)), _trim(list(b))
    inv = _inv(b[-1], fc)
    while len(a) >= len(b):
        q = (a[-1] * inv) % fc
        shift = len(a) - len(b)
        for k, bk in enumerate(b):
            a[shift + k] = (a[shift + k] - q * bk) % fc
        a = _trim(a)
    return a


def _qc_gcd(a, b, fc):
    a, b = _trim(a), _trim(b)
    while b:
        a, b = b, _qc_rem(a, b, fc)
    return a


def _balls(poly, c, prec):
    """Isolating balls of the (real) roots of a Q(c)-polynomial, ascending by midpoint."""
    old = flint.ctx.prec
    try:
        flint.ctx.prec = prec
        cb = flint.arb(flint.fmpq(c.lo.numerator, c.lo.denominator)).union(
            flint.arb(flint.fmpq(c.hi.numerator, c.hi.denominator)))     # encloses c
        coeffs = [sum((flint.arb(k) * cb ** j for j, k in enumerate(e.coeffs())), flint.arb(0))
                  for e in poly]
        roots = flint.acb_poly([flint.acb(a) for a in coeffs]).roots()
        return sorted((r.real for r in roots), key=lambda b: b.mid())
    finally:
        flint.ctx.prec = old


def _touching(curves, c, g, h):
    """Whether the lowest roots of factors g and h are equal at the irrational point c.

    G = gcd(g(., c), h(., c)) in Q(c)[E] (exact Euclid) holds all their common roots.  With
    rigorous isolating balls of the roots of g(., c), h(., c) and G (c enclosed in its
    isolating interval; every root is real, the factors being factors of characteristic
    polynomials), the lowest roots are equal exactly when one root of G lies in the balls
    of both lowest roots (each ball holds one root of its polynomial, and G divides both);
    they differ when the two lowest balls are disjoint."""
    fc = flint.fmpq_poly(c.poly)
    pg, ph = _qc_poly(curves.factors[g], fc), _qc_poly(curves.factors[h], fc)
    G = _qc_gcd(pg, ph, fc)
    if len(G) <= 1:
        return False                            # no common root at all
    for prec in (128, 512, 2048, 8192):
        c.tighten(prec // 2)
        try:
            bg, bh, bG = _balls(pg, c, prec), _balls(ph, c, prec), _balls(G, c, prec)
        except ValueError:
            continue
        lg, lh = bg[0], bh[0]
        if not lg.overlaps(lh):
            return False
        for r in bG:
            if all(_inside(r, b) for b in (lg, lh)) and \
                    all(not r.overlaps(o) for o in bg[1:] + bh[1:]):
                return True
    raise VerificationError(
        f"the lowest levels at the irrational point x = {c.exact()} could not be separated "
        "or matched; narrow the interval to exclude that point")


def _inside(a, b):
    return b.lower() <= a.lower() and a.upper() <= b.upper()
