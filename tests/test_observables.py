"""Hellmann–Feynman derivatives (symcluster.analysis.observables)."""

import mpmath
import numpy as np
import sympy

from symcluster.analysis import double_occupancy, energy_derivative, kinetic_energy
from symcluster.spectrum import Level
from helpers_two_site import U, StandInRoot, fock_hamiltonian, t, two_site_levels


def test_closed_form_derivative():
    g = two_site_levels()[5]
    d = double_occupancy(g)
    assert not d.implicit
    assert sympy.simplify(d.expr - sympy.diff(g.energy, U)) == 0


def test_implicit_derivative_matches_closed_form():
    g = two_site_levels()[5]
    imp = Level(StandInRoot(g.polynomial, 0), 1, g.quantum_numbers, g.polynomial)
    pt = {t: sympy.Integer(1), U: sympy.Rational(7, 2)}
    for name in ("U", "t"):
        a = energy_derivative(imp, name)
        b = energy_derivative(g, name)
        assert a.implicit
        with mpmath.workdps(45):
            assert abs(a.numeric(pt, 40) - b.numeric(pt, 40)) < mpmath.mpf(10) ** -38


def test_double_occupancy_against_numeric_eigenvector():
    # Independent check: <Σ n↑n↓> from the numpy ground state of the two-site N=2 sector.
    states, H = fock_hamiltonian(2, [(0, 1)], 1.0, 0.0, 1, 1)
    _, V = fock_hamiltonian(2, [(0, 1)], 0.0, 1.0, 1, 1)
    w, vec = np.linalg.eigh(np.array(H) + 3.0 * np.array(V))
    expect = vec[:, 0] @ np.array(V) @ vec[:, 0]
    got = double_occupancy(two_site_levels()[5]).numeric({t: sympy.Integer(1), U: sympy.Integer(3)})
    assert abs(float(got) - expect) < 1e-12


def test_kinetic_plus_interaction_is_energy():
    # H is linear in t and U, so E = t dE/dt + U dE/dU (Euler's theorem, degree one).
    g = two_site_levels()[5]
    pt = {t: sympy.Rational(3, 2), U: sympy.Rational(5, 3)}
    with mpmath.workdps(40):
        lhs = kinetic_energy(g, pt, ("t",), 35) + \
            mpmath.mpf(5) / 3 * double_occupancy(g).numeric(pt, 35)
        assert abs(lhs - g.numeric(pt, 35)) < mpmath.mpf(10) ** -30


def test_float_points_mean_their_decimal():
    # {Symbol: 0.1} is the point t = 1/10 (docs/quickstart.md), also for numpy numbers:
    # Euler's relation E = t dE/dt + U dE/dU must hold at that point to 30 digits, with E
    # taken at the exact point t = 1/10, U = 4
    g = two_site_levels()[5]
    exact = {t: sympy.Rational(1, 10), U: sympy.Integer(4)}
    with mpmath.workdps(40):
        for pt in ({t: 0.1, U: 4}, {t: np.float32(0.1), U: np.int64(4)}):
            lhs = kinetic_energy(g, pt, ("t",), 35) + 4 * double_occupancy(g).numeric(pt, 35)
            assert abs(lhs - g.numeric(exact, 35)) < mpmath.mpf(10) ** -30
