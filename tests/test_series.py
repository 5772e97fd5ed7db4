"""Exact strong- and weak-coupling series (symcluster.analysis.series)."""

from fractions import Fraction

import flint
import numpy as np
import pytest
import sympy

from symcluster.analysis import series, series_coefficients
from symcluster.errors import ModelError
from symcluster.spectrum import Level
from helpers_two_site import E, U, StandInRoot, fock_hamiltonian, t, two_site_levels

s = sympy.Symbol("s", positive=True)
tp = sympy.Symbol("tp", positive=True)


def _closed_form_series(expr, order, about_oo=True):
    """Independent expansion with sympy.series of the closed form (t > 0)."""
    e = expr.subs(t, tp)
    if about_oo:
        ser = sympy.series(e.subs(U, 1 / s), s, 0, order + 1).removeO()
        return sympy.expand(ser.subs(s, 1 / U).subs(tp, t))
    return sympy.expand(sympy.series(e, U, 0, order + 1).removeO().subs(tp, t))


def test_two_site_ground_state_to_order_7():
    # U/2 - sqrt(U²/4+4t²): -4t²/U + 16t⁴/U³ - 128t⁶/U⁵ + ... (Carrascal et al.,
    # J. Phys.: Condens. Matter 27, 393001 (2015); journal details from memory)
    g = two_site_levels()[5]
    got = series(g, "U", order=7)
    assert sympy.expand(got - _closed_form_series(g.energy, 7)) == 0
    assert got.coeff(U, -1) == -4 * t ** 2 and got.coeff(U, -5) == -128 * t ** 6
    assert got.coeff(U, -7) == 1280 * t ** 8


def test_weak_coupling_about_zero():
    for lev in two_site_levels()[5:7]:
        got = series(lev, "U", order=4, about=0)
        assert sympy.expand(got - _closed_form_series(lev.energy, 4, about_oo=False)) == 0


def test_superexchange_from_two_site_gap():
    # J = 4t²/U (P. W. Anderson, Phys. Rev. 115, 2 (1959), from memory): triplet (E=0)
    # minus singlet ground state at leading order in t/U.
    lv = two_site_levels()
    gap = sympy.expand(series(lv[3], "U", 3) - series(lv[5], "U", 3))
    assert gap.coeff(U, -1) == 4 * t ** 2 and gap.coeff(U, 0) == 0


def test_linear_levels_are_returned_exactly():
    lv = two_site_levels()
    assert series(lv[7], "U", 5) == U - t
    assert series(lv[9], "U", 5, about=0) == 2 * U


def test_branch_selected_by_at_for_negative_t():
    # For t < 0 the lower root near U = 0 is -2|t| = 2t: the branch follows `at`.
    g = two_site_levels()[5]
    assert series(g, "U", 1, about=0, at={"t": -1}).coeff(U, 0) == 2 * t


def test_bad_order_raises():
    with pytest.raises(ModelError, match="order"):
        series(two_site_levels()[5], "U", order=-1)


def _four_ring_sector(n_up, n_dn):
    """Exact charpoly P(E, U) at t = 1 of a 4-site ring sector, by evaluation/interpolation."""
    bonds = [(0, 1), (1, 2), (2, 3), (3, 0)]
    _, H0 = fock_hamiltonian(4, bonds, 1, 0, n_up, n_dn)
    _, H1 = fock_hamiltonian(4, bonds, 0, 1, n_up, n_dn)
    n = len(H0)
    xs = list(range(n + 1))
    cps = []
    for u in xs:
        m = flint.fmpz_mat([[H0[i][j] + u * H1[i][j] for j in range(n)] for i in range(n)])
        cps.append([int(c) for c in m.charpoly().coeffs()])
    # Newton divided-difference interpolation of each E-coefficient in U (degree <= n), exact
    coeff_polys = []
    for k in range(n + 1):
        dd = [Fraction(cp[k]) for cp in cps]
        for level in range(1, n + 1):
            for i in range(n, level - 1, -1):
                dd[i] = (dd[i] - dd[i - 1]) / (xs[i] - xs[i - level])
        mono = [Fraction(0)] * (n + 1)       # Horner on the Newton form, monomial coefficients
        for i in range(n, -1, -1):
            mono = [Fraction(0)] + mono[:-1]  # multiply by U ...
            for j in range(n):
                mono[j] -= xs[i] * mono[j + 1]  # ... minus xs[i]
            mono[0] += dd[i]
        coeff_polys.append(sum(sympy.Rational(c.numerator, c.denominator) * U ** j
                               for j, c in enumerate(mono) if c))
    P = sympy.Poly(sum(c * E ** k for k, c in enumerate(coeff_polys)), E, U)
    return P, H0, H1


def _lowest_level(n_up, n_dn):
    P, H0, H1 = _four_ring_sector(n_up, n_dn)
    u0 = 40
    e_min = np.linalg.eigvalsh(np.array(H0, float) + u0 * np.array(H1, float)).min()
    for fac, _m in sympy.factor_list(P.as_expr())[1]:
        f = sympy.Poly(fac, E, U)
        if f.degree(E) == 0:
            continue
        r = np.roots([float(c) for c in sympy.Poly(fac.subs(U, u0), E).all_coeffs()])
        if abs(min(r.real) - e_min) < 1e-8:
            return Level(StandInRoot(f, 0), 1, {"N": n_up + n_dn}, f)
    raise AssertionError("lowest level not found")


def test_four_site_ring_superexchange():
    # Half-filled 4-site ring, t = 1: ground singlet -> -3J, lowest triplet -> -2J with
    # J = 4t²/U (H_eff = J Σ (S_i·S_j - 1/4); Anderson 1959 from memory; Heisenberg ring
    # levels by the sublattice-spin argument, common practice).  Gap -> J.
    singlet = _lowest_level(2, 2)   # Sz = 0 sector: its lowest level is the S = 0 ground state
    triplet = _lowest_level(3, 1)   # Sz = 1 sector: lowest level has S = 1
    a = series_coefficients(singlet, "U", 3)
    b = series_coefficients(triplet, "U", 3)
    assert a[:3] == [0, 0, -12] and b[:3] == [0, 0, -8]
    assert b[2] - a[2] == 4


@pytest.mark.parametrize("order", [8, 9, 10, 12])
def test_high_orders_pass_their_own_check(order):
    # the self-check's fixed margin of 10**4 times the first omitted power refused every
    # even order >= 8 of this level (its next coefficient, -14336 t**10 at order 8, is
    # larger); the series is compared with sympy's expansion of the closed form
    g = two_site_levels()[5]
    got = series(g, "U", order=order)
    assert sympy.expand(got - _closed_form_series(g.energy, order)) == 0
