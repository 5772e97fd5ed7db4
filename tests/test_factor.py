"""Tests for symcluster.algebra.factor."""

import random

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from symcluster.algebra.block import ENERGY, LinearBlock
from symcluster.algebra.charpoly import charpoly
from symcluster.algebra.factor import content_and_factors, factor_charpoly
from symcluster.errors import ModelError

E = ENERGY
t, U = sympy.symbols("t U", real=True)


def product(constant, factors):
    out = sympy.sympify(constant)
    for f, m in factors:
        out *= f.as_expr() ** m
    return sympy.expand(out)


def sympy_factors(expr):
    """(constant, {factor: multiplicity}) of sympy's factor_list (an independent
    factorization), each factor's lex-leading coefficient made positive."""
    const, ref = sympy.factor_list(expr, E, t, U)
    out = {}
    for g, m in ref:
        g = sympy.Poly(g, E, t, U)
        if g.as_dict()[max(g.as_dict())] < 0:
            g, const = -g, const * (-1) ** m
        out[g.as_expr()] = out.get(g.as_expr(), 0) + m
    return const, out


def assert_normalised_irreducible(f):
    assert f.domain == sympy.ZZ
    assert f.gens[0] == E
    c, prim = f.primitive()
    assert c == 1
    lead = max(f.as_dict())
    assert f.as_dict()[lead] > 0
    # independent irreducibility check: sympy's own factorisation
    _, fl = sympy.factor_list(f.as_expr(), *f.gens)
    assert len(fl) == 1 and fl[0][1] == 1


def test_two_site_full_sector():
    # N = 2 sector of the two-site Hubbard model: levels 0 (triplet, Sz = 0 member),
    # U, and the roots of E^2 - U E - 4 t^2 (Carrascal et al., J. Phys.: Condens.
    # Matter 27, 393001 (2015)).  Basis |ud,0>, |0,ud>, |u,d>, |d,u> (integer entries).
    b = LinearBlock(4, {
        "U": {(0, 0): 1, (1, 1): 1},
        "t": {(0, 2): -1, (0, 3): 1, (1, 2): -1, (1, 3): 1,
              (2, 0): -1, (2, 1): -1, (3, 0): 1, (3, 1): 1},
    })
    P = charpoly(b, ("t", "U"))
    facs = factor_charpoly(P)
    got = {f.as_expr(): m for f, m in facs}
    assert got == {E: 1, E - U: 1, E**2 - E * U - 4 * t**2: 1}
    assert product(1, facs) == sympy.expand(P.as_expr())


@settings(max_examples=12, deadline=None)
@given(st.integers(0, 2**32))
def test_product_equals_input_and_factors_irreducible(seed):
    rng = random.Random(seed)
    parts = []
    for _ in range(rng.randint(1, 3)):
        deg = rng.randint(1, 3)
        f = E**deg + sum(
            (rng.randint(-3, 3) * t + rng.randint(-3, 3) * U) ** (deg - k) * E**k for k in range(deg)
        )
        parts.append((f, rng.randint(1, 2)))
    expr = sympy.Mul(*[f**m for f, m in parts])
    P = sympy.Poly(expr, E, t, U)
    facs = factor_charpoly(P)
    assert product(1, facs) == sympy.expand(expr)  # monic integer input: constant is 1
    for f, _ in facs:
        assert_normalised_irreducible(f)
    # the multiset of factors agrees with sympy's factor_list (independent)
    assert {f.as_expr(): m for f, m in facs} == sympy_factors(expr)[1]


@pytest.mark.parametrize("expr", [E, E - t, E + 3 * U - 2 * t, E - t**2 * U + 5,
                                  2 * E - 2 * t, -(E - t), t * E - U * t, U * E + t])
def test_degree_one_in_e(expr):
    # the monic ones are returned as they are, without a factorization; all must agree
    # with sympy's factor_list (independent), constant included
    P = sympy.Poly(expr, E, t, U)
    c, facs = content_and_factors(P)
    assert sympy.expand(product(c, facs) - P.as_expr()) == 0
    for f, _ in facs:
        assert_normalised_irreducible(f)
    const, ref = sympy_factors(expr)
    assert {f.as_expr(): m for f, m in facs} == ref
    assert c == const


def test_rational_input_content():
    P = sympy.Poly(-sympy.Rational(2, 3) * (E - t / 2) ** 2 * (E**2 - U * E - 4 * t**2), E, t, U)
    c, facs = content_and_factors(P)
    assert sympy.expand(product(c, facs) - P.as_expr()) == 0
    assert {f.as_expr(): m for f, m in facs} == {2 * E - t: 2, E**2 - E * U - 4 * t**2: 1}
    assert c == -sympy.Rational(1, 6)


def test_sign_normalisation_and_univariate():
    P = sympy.Poly(-(E - 1) * (E + 2) * (3 - E), E)
    c, facs = content_and_factors(P)
    assert all(f.LC() > 0 for f, _ in facs)
    assert sympy.expand(product(c, facs) - P.as_expr()) == 0
    assert [f.degree() for f, _ in facs] == [1, 1, 1]


def test_zero_polynomial_rejected():
    with pytest.raises(ModelError, match="zero polynomial"):
        factor_charpoly(sympy.Poly(0, E, t))


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 3), st.integers(0, 3), st.integers(-6, 6)),
                min_size=1, max_size=8),
       st.integers(2, 5))
def test_proven_irreducible_is_never_wrong(terms, n):
    # soundness against sympy's factor_list (an independent factorisation): a polynomial
    # monic in E that proven_irreducible accepts has one irreducible factor over Q
    from symcluster.algebra.factor import proven_irreducible
    rep = {(n, 0): 1}
    for i, j, c in terms:
        if i < n and c:
            rep[(i, j)] = rep.get((i, j), 0) + c
    rep = {k: v for k, v in rep.items() if v}
    expr = sum(c * E ** i * U ** j for (i, j), c in rep.items())
    if proven_irreducible(rep):
        _c, facs = sympy.factor_list(expr, E, U)
        assert len(facs) == 1 and facs[0][1] == 1


def test_proven_irreducible_on_products_and_a_charpoly():
    from symcluster.algebra.factor import proven_irreducible
    # (E - U)(E + U - 1) and (E^2 - U)^2 are not irreducible: never "proven"
    assert not proven_irreducible({(2, 0): 1, (1, 0): -1, (0, 2): -1, (0, 1): 1})
    assert not proven_irreducible({(4, 0): 1, (2, 1): -2, (0, 2): 1})
    # E^3 - 3 U^2 E - U^3 - 1 is irreducible (sympy says so; checked here)
    rep = {(3, 0): 1, (1, 2): -3, (0, 3): -1, (0, 0): -1}
    assert len(sympy.factor_list(E ** 3 - 3 * U ** 2 * E - U ** 3 - 1, E, U)[1]) == 1
    assert proven_irreducible(rep)
