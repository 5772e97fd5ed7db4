"""Spectrum.energies: every eigenvalue on a grid of couplings, float64, against the
independent Jordan-Wigner reference (tests/reference_fock.py) diagonalised with numpy."""

import numpy as np
import pytest
import sympy

import symcluster as sc

from reference_fock import FockReference


def _ring(n):
    return FockReference(n, [(i, (i + 1) % n, "t") for i in range(n)])


def test_ring4_over_a_grid_of_u_matches_the_reference():
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    us = np.concatenate([np.linspace(-3, 12, 61), [0.0, 1e-9, 4.0]])
    e = spec.energies({"t": 1, "U": us})
    assert e.shape == (len(us), 256) and e.dtype == np.float64
    assert np.all(np.diff(e, axis=1) >= 0)          # each row ascending
    ref = _ring(4)
    worst = max(np.max(np.abs(ref.eigenvalues({"t": 1.0, "U": float(u)}) - e[k]))
                for k, u in enumerate(us))
    assert worst < 1e-10


def test_implicit_roots_on_a_grid_match_the_reference():
    spec = sc.solve(sc.hubbard(sc.ring(5)))
    assert any(not l.is_closed_form for l in spec.levels)
    us = np.array([0.0, 1e-7, 0.3, 2.0, 5.5, 11.0, -4.0])
    e = spec.energies({"t": 1, "U": us})
    ref = _ring(5)
    for k, u in enumerate(us):
        assert np.max(np.abs(ref.eigenvalues({"t": 1.0, "U": float(u)}) - e[k])) < 1e-10


def test_ring6_far_from_zero_and_in_random_order_matches_the_reference():
    # ring(6)'s level polynomials of the N = 10..12 sectors have their roots near 3U..6U,
    # tens of units from zero for large U, where their monomial form loses most digits;
    # the points come in random order, so no point's roots are a good start for the next
    spec = sc.solve(sc.hubbard(sc.ring(6)))
    us = np.random.default_rng(5).permutation(np.r_[np.linspace(0.0, 40.0, 25), [-7.5, 1e-6]])
    e = spec.energies({"t": 1, "U": us})
    ref = _ring(6)
    for k, u in enumerate(us):
        assert np.max(np.abs(ref.eigenvalues({"t": 1.0, "U": float(u)}) - e[k])) < 1e-10


def test_both_couplings_varying_and_a_scalar_point():
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    ts = np.array([0.5, 1.0, 2.0])
    us = np.array([1.0, -2.0, 8.0])
    e = spec.energies({"t": ts, "U": us})
    ref = _ring(4)
    for k in range(3):
        assert np.max(np.abs(ref.eigenvalues({"t": ts[k], "U": us[k]}) - e[k])) < 1e-10
    one = spec.energies({"t": 1, "U": sympy.Rational(7, 2)})
    assert one.shape == (1, 256)
    assert np.max(np.abs(ref.eigenvalues({"t": 1.0, "U": 3.5}) - one[0])) < 1e-10


@pytest.mark.parametrize("values, words", [
    ({"t": 1}, "no value given"),
    ({"t": 1, "U": 1, "V": 2}, "unknown coupling"),
    ({"t": 1, "U": np.array([[1.0, 2.0]])}, "1-D array"),
    ({"t": np.ones(2), "U": np.ones(3)}, "same length"),
    ({"t": 1, "U": np.array([np.nan])}, "finite"),
])
def test_bad_values_are_model_errors(values, words):
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with pytest.raises(sc.ModelError, match=words):
        spec.energies(values)
