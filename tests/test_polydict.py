"""poly_from_dict against sympy's own Poly.from_dict (an independent construction)."""

import random
from fractions import Fraction

import pytest
import sympy

from symcluster.algebra.polydict import poly_from_dict

GENS = sympy.symbols("E t U x", real=True)


def _random_rep(rng, n, domain):
    rep = {}
    for _ in range(rng.randint(0, 12)):
        m = tuple(rng.randint(0, 6) for _ in range(n))
        if domain.is_ZZ:
            rep[m] = rng.choice([0, rng.randint(-10**30, 10**30), rng.randint(-3, 3)])
        else:
            rep[m] = rng.choice([Fraction(rng.randint(-50, 50), rng.randint(1, 9)),
                                 sympy.Rational(rng.randint(-50, 50), rng.randint(1, 9)), 0])
    return rep


@pytest.mark.parametrize("seed", range(60))
def test_same_poly_and_representation_as_from_dict(seed):
    rng = random.Random(seed)
    n = 1 + seed % 4
    domain = sympy.ZZ if seed % 3 else sympy.QQ
    rep = _random_rep(rng, n, domain)
    gens = GENS[:n]
    want = sympy.Poly.from_dict({m: sympy.sympify(c) for m, c in rep.items()}, gens, domain=domain)
    got = poly_from_dict(rep, gens, domain)
    assert got == want
    assert got.rep.to_list() == want.rep.to_list()      # the canonical dense form, exactly
    assert got.domain == want.domain and got.gens == want.gens
    # the result takes part in arithmetic like any Poly
    assert (got * got - want**2).is_zero and (got - want).is_zero


def test_homogeneous_high_degree():
    # the case it is made for: one non-zero entry per innermost list
    E, t, U = GENS[:3]
    rng = random.Random(1)
    d = 60
    rep = {(k, i, d - k - i): rng.randint(-10**20, 10**20) for k in range(d + 1)
           for i in range(0, d - k + 1, 2)}
    want = sympy.Poly.from_dict(rep, (E, t, U), domain=sympy.ZZ)
    got = poly_from_dict(rep, (E, t, U), sympy.ZZ)
    assert got == want and got.rep.to_list() == want.rep.to_list()


def test_zero_and_constant():
    E, t = GENS[:2]
    assert poly_from_dict({}, (E, t), sympy.ZZ).is_zero
    assert poly_from_dict({(0, 0): 0}, (E, t), sympy.ZZ).is_zero
    assert poly_from_dict({(0, 0): 5}, (E, t), sympy.ZZ) == sympy.Poly(5, E, t, domain=sympy.ZZ)


def test_bad_exponent_tuple():
    E, t = GENS[:2]
    with pytest.raises(ValueError, match="does not fit"):
        poly_from_dict({(1, 2, 3): 1}, (E, t), sympy.ZZ)


@pytest.mark.parametrize("seed", range(20))
def test_integer_dict_and_dense_terms_read_back_the_poly(seed):
    # against sympy's own Poly.as_dict (an independent reading of the same Poly)
    from symcluster.algebra.polydict import dense_terms, integer_dict
    rng = random.Random(seed)
    n = 1 + seed % 4
    rep = _random_rep(rng, n, sympy.ZZ)
    poly = sympy.Poly.from_dict({m: sympy.sympify(c) for m, c in rep.items()}, GENS[:n],
                                domain=sympy.ZZ)
    want = {m: int(c) for m, c in poly.as_dict().items()}
    got = integer_dict(poly)
    assert got == want and all(type(c) is int for c in got.values())
    assert dict(dense_terms(poly.rep.to_list(), n)) == want
    assert dense_terms(poly.rep.to_list(), n, prefix=(7,)) == [
        ((7,) + m, c) for m, c in dense_terms(poly.rep.to_list(), n)]
