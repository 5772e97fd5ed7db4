"""symcluster.theorems.realalg: lowest real roots and root proposals.

Expected values come from sympy's exact real-root isolation (``sympy.Poly.real_roots``,
CRootOf) and from polynomials built from known roots; none shares code with the module.
"""

import random

import flint
import mpmath
import pytest
import sympy

from symcluster.theorems.realalg import lowest_root
from symcluster.theorems.rootsearch import fujiwara_bound, laguerre_roots

x = sympy.Symbol("x")


def _charpoly_factors(seed, n):
    """Irreducible factors of the characteristic polynomial of a random symmetric integer
    matrix: real-rooted (eigenvalues), like the level polynomials the towers work on."""
    rng = random.Random(seed)
    a = [[0] * n for _ in range(n)]
    for i in range(n):
        for j in range(i, n):
            a[i][j] = a[j][i] = rng.randint(-9, 9)
    p = sympy.Matrix(a).charpoly(x).as_expr()
    return [sympy.Poly(f, x) for f, _ in sympy.factor_list(p)[1] if sympy.degree(f, x) >= 1]


@pytest.mark.parametrize("seed", range(12))
def test_lowest_root_isolates_the_smallest_real_root(seed):
    for f in _charpoly_factors(seed, 9):
        coeffs = [int(c) for c in reversed(f.all_coeffs())]
        r = lowest_root(flint.fmpz_poly(coeffs))
        smallest = f.real_roots()[0]                  # sympy: exact, ascending
        with mpmath.workdps(60):
            v = mpmath.mpf(str(sympy.N(smallest, 60)))
            if r.is_rational:
                assert sympy.Rational(r.lo.numerator, r.lo.denominator) == smallest
            else:
                assert mpmath.mpf(r.lo.numerator) / r.lo.denominator < v
                assert v < mpmath.mpf(r.hi.numerator) / r.hi.denominator


def test_lowest_root_of_a_polynomial_with_complex_roots():
    # x^4 - 2: real roots -+2^(1/4), two imaginary ones (not a level polynomial; the
    # answer must still be right, by whichever route)
    r = lowest_root(flint.fmpz_poly([-2, 0, 0, 0, 1]))
    assert r.hi < 0 and r.lo ** 4 > 2 > r.hi ** 4


def test_root_proposals_up_to_a_threshold():
    # (x - 1)(x - 2)(x - 3)(x - 5): the roots up to the first one above 2.5
    p = sympy.Poly((x - 1) * (x - 2) * (x - 3) * (x - 5), x)
    cs = [int(c) for c in reversed(p.all_coeffs())]
    got = laguerre_roots(cs, fujiwara_bound(cs), mpmath.mpf(2.5), None)
    assert [round(float(r), 12) for r in got] == [1.0, 2.0, 3.0]
    # a double root is found twice (repeated by multiplicity)
    q = sympy.Poly((x + 1) ** 2 * (x - 4), x)
    cs = [int(c) for c in reversed(q.all_coeffs())]
    got = laguerre_roots(cs, fujiwara_bound(cs), None, 3)
    assert [round(float(r), 6) for r in got] == [-1.0, -1.0, 4.0]


@pytest.mark.parametrize("seed", range(6))
def test_fujiwara_bound_exceeds_every_root(seed):
    for f in _charpoly_factors(100 + seed, 8):
        cs = [int(c) for c in reversed(f.all_coeffs())]
        B = fujiwara_bound(cs)
        assert all(abs(complex(sympy.N(z))) < B for z in f.all_roots())
