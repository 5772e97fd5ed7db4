"""Checks of the verification's own pieces (symcluster/verify.py) against independent algebra."""

import random
from fractions import Fraction

import pytest
import sympy

import symcluster as sc
from symcluster.errors import VerificationError
from symcluster.verify import _power_sums, verify_spectrum

E, t, U, x = sympy.symbols("E t U x")


def _as_expr(labels_poly, gens):
    """{sorted label tuple: Fraction} -> sympy expression in the generators named by the labels."""
    by_name = {g.name: g for g in gens}
    return sum((sympy.Rational(v.numerator, v.denominator) * sympy.Mul(*[by_name[n] for n in k])
                for k, v in labels_poly.items()), sympy.Integer(0))


@pytest.mark.parametrize("seed", range(40))
def test_power_sums_match_vieta(seed):
    # Vieta's formulas (any algebra text): for P = c_d E^d + c_{d-1} E^{d-1} + c_{d-2} E^{d-2}
    # + ..., the roots satisfy sum r = -c_{d-1}/c_d and sum r^2 = (sum r)^2 - 2 c_{d-2}/c_d.
    # The reference reads the coefficients with sympy's Expr.coeff, not the Poly's storage.
    rng = random.Random(seed)
    gens = rng.choice([(E,), (E, U), (E, t, U), (E, x, t, U)])
    d = rng.randint(1, 7)
    expr = rng.choice([1, 2, sympy.Rational(3, 2)]) * E**d
    for k in range(d):
        for _ in range(3):
            mon = sympy.Mul(*[g ** rng.randint(0, 2) for g in gens[1:]])
            expr += sympy.Rational(rng.randint(-9, 9), rng.randint(1, 4)) * E**k * mon
    P = sympy.Poly(expr, *gens, domain=sympy.QQ)
    if all(c.is_integer for c in P.coeffs()) and seed % 2:
        P = P.set_domain(sympy.ZZ)
    c = [sympy.expand(expr).coeff(E, d - j) for j in range(3)]
    e1 = sympy.expand(-c[1] / c[0])
    p2 = sympy.expand(e1**2 - 2 * c[2] / c[0])
    got1, got2 = _power_sums(P)
    assert sympy.expand(_as_expr(got1, gens) - e1) == 0
    assert sympy.expand(_as_expr(got2, gens) - p2) == 0


def test_power_sums_refuse_a_coupling_dependent_leading_coefficient():
    with pytest.raises(VerificationError, match="leading coefficient"):
        _power_sums(sympy.Poly(U * E**2 + E + 1, E, U))


def test_sum_rule_catches_a_shifted_level_polynomial():
    # Tr H over each N = 1 sector of the dimer is 0 (no on-site terms; common practice, no
    # source). Replacing the level polynomial E - t by E - t - U (and its closed form by
    # t + U, so that it is still a root of its polynomial) moves sum deg*E by U: the sum
    # rule, which runs before the eigenvalue comparison, must reject it.
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=1)
    tv, uv = (next(s for s in spec.symbols if s.name == n) for n in ("t", "U"))
    lev = next(l for l in spec.levels if l.energy == tv)
    gens = lev.polynomial.gens
    lev.polynomial = sympy.Poly(lev.polynomial.as_expr() - uv, *gens)
    lev.energy = tv + uv
    with pytest.raises(VerificationError, match="sum rule"):
        verify_spectrum(spec, electrons=[1], seed=5)
