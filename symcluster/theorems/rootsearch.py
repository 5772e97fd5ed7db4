"""Finding real roots quickly for :mod:`symcluster.theorems.realalg`: Fujiwara's bound on
the roots' moduli, Laguerre's iteration from the left (floating balls; proposals only,
nothing here is a proof) and python-flint's isolating balls of all complex roots, kept
for the polynomials asked for last.  realalg proves what it takes from here with exact
Descartes tests.
"""

from fractions import Fraction

import flint
import mpmath

__all__ = ["fujiwara_bound", "laguerre_roots", "complex_roots", "ROOTS_KEPT"]


def fujiwara_bound(cs):
    """A rational B > |z| for every root z of sum cs[k] x**k: 2 max_k |a_(n-k) / a_n|^(1/k)
    (Fujiwara), rounded up, plus one.

    Examples
    --------
    >>> fujiwara_bound([-48, -16, 1]) > 18.6       # x^2 - 16x - 48: roots -2.58, 18.58
    True
    """
    n = len(cs) - 1
    lead = abs(cs[-1])
    with mpmath.workdps(30):
        m = max((mpmath.mpf(abs(cs[n - k])) / lead) ** (mpmath.mpf(1) / k)
                for k in range(1, n + 1))
        return Fraction(int(mpmath.ceil(2 * m * (1 + mpmath.mpf(10) ** -20))) + 1)


def _working_bits(cs, B):
    """Bits for ~40 digits of p(x) next to a root: the largest term of p at |x| < B is at
    most max|c| (1 + B)**n."""
    n = len(cs) - 1
    big = max(abs(c) for c in cs)
    return 140 + big.bit_length() + n * ((B.numerator // B.denominator + 1).bit_length() + 1)


def laguerre_roots(cs, B, upto, count):
    """The smallest real roots of sum cs[k] x**k, ascending, as mpmath numbers (about 40
    digits): ``count`` of them, or (``upto`` given) all up to and including the first one
    above ``upto``; None if an iteration does not settle.  Proposals only: nothing is
    proven here.

    Laguerre's iteration from a point left of every remaining root converges
    monotonically to the smallest one when all roots are real; after each root the
    iteration runs on the deflated polynomial implicitly (the found roots' terms taken out
    of p'/p and -(p'/p)', Maehly's form), restarted just left of the last root found.

    Examples
    --------
    >>> [float(r) for r in laguerre_roots([6, -5, 1], Fraction(10), None, 2)]
    [2.0, 3.0]
    """
    n = len(cs) - 1
    old = flint.ctx.prec
    flint.ctx.prec = _working_bits(cs, B)
    try:
        coeffs = [flint.arb(v) for v in reversed(cs)]      # leading coefficient first
        tiny = flint.arb(2) ** -130
        found = []
        x = flint.arb(flint.fmpq(-B.numerator, B.denominator))
        while len(found) < n:
            for _ in range(200):
                p, dp, half_ddp = coeffs[0], flint.arb(0), flint.arb(0)
                for a in coeffs[1:]:
                    half_ddp = half_ddp * x + dp
                    dp = dp * x + p
                    p = p * x + a
                if 0 in p:
                    break                       # at a root to working precision
                G = dp / p
                H = G * G - 2 * half_ddp / p
                for r in found:
                    d = 1 / (x - r)
                    G -= d
                    H -= d * d
                m = n - len(found)
                disc = (m - 1) * (m * H - G * G)
                root = disc.mid().sqrt() if disc.mid() > 0 else flint.arb(0)
                gp, gm = (G + root).mid(), (G - root).mid()
                den = gp if abs(gp) >= abs(gm) else gm
                if den == 0:
                    return None
                step = (flint.arb(m) / den).mid()
                x = (x - step).mid()
                if abs(step) <= tiny * (1 + abs(x)):
                    break
            else:
                return None
            found.append(x)
            if (upto is None and len(found) >= count) or (
                    upto is not None and x.mid() > flint.arb(str(upto))):
                break
            x = (x - flint.arb(10) ** -3 * (1 + abs(x))).mid()
        return [mpmath.mpf(r.mid().str(45, radius=False)) for r in found]
    finally:
        flint.ctx.prec = old


_ROOTS = {}
#: complex_roots results kept (the level tests ask for the roots of one polynomial twice:
#: its lowest root, and all real roots as proposals for a level line)
ROOTS_KEPT = 64


def complex_roots(p):
    """python-flint's isolating balls of the roots of the integer polynomial p, with their
    multiplicities (``p.complex_roots()``), remembered for the last ``ROOTS_KEPT``
    polynomials.

    Examples
    --------
    >>> [(str(z), m) for z, m in complex_roots(flint.fmpz_poly([-1, 0, 1]))]
    [('-1.00000000000000', 1), ('1.00000000000000', 1)]
    """
    key = tuple(int(c) for c in p.coeffs())
    got = _ROOTS.get(key)
    if got is None:
        got = p.complex_roots()
        if len(_ROOTS) >= ROOTS_KEPT:
            _ROOTS.pop(next(iter(_ROOTS)))
        _ROOTS[key] = got
    return got
