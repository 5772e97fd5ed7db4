"""Charge gap, spin gap, pair binding (symcluster.analysis.gaps); sign conventions."""

import mpmath
import pytest
import sympy

from symcluster.analysis import charge_gap, pair_binding, spin_gap
from symcluster.errors import ModelError
from helpers_two_site import U, t, two_site_spectrum, spectrum_of, two_site_levels


def test_charge_gap_half_filling_closed_form():
    # E0(3) + E0(1) - 2E0(2) = (U - t) + (-t) - 2(U/2 - sqrt(U²/4 + 4t²)) = sqrt(U²+16t²) - 2t
    # (closed forms of Carrascal et al. 2015; algebra by hand)
    g = charge_gap(two_site_spectrum(), 2, {"t": 1, "U": 4}, over=("U", (0, 50)))
    assert sympy.simplify(g.expr - (sympy.sqrt(U ** 2 + 16 * t ** 2) - 2 * t)) == 0
    with mpmath.workdps(40):
        assert abs(g.value - (mpmath.sqrt(32) - 2)) < mpmath.mpf(10) ** -28
    assert g.value > 0 and g.valid == "U in (0, 50)"


def test_charge_gap_tends_to_u_at_strong_coupling():
    g = charge_gap(two_site_spectrum(), 2, {"t": 1, "U": 1000})
    assert abs(g.value - 1000) < 2.1


def test_spin_gap_is_singlet_triplet_splitting():
    g = spin_gap(two_site_spectrum(), 2, {"t": 1, "U": 4})
    assert sympy.simplify(g.expr - (sympy.sqrt(U ** 2 + 16 * t ** 2) - U) / 2) == 0
    assert g.value > 0
    assert g.terms[0][1].quantum_numbers["S"] == 1


def test_pair_binding_sign():
    spec = two_site_spectrum()
    # 2E0(1) - E0(2) - E0(0) = -2t - U/2 + sqrt(U²/4+4t²): zero at U = 0, > 0 for U < 0
    assert pair_binding(spec, 2, {"t": 1, "U": 0}).value == 0
    assert pair_binding(spec, 2, {"t": 1, "U": -4}).value > 0
    assert pair_binding(spec, 2, {"t": 1, "U": 4}).value < 0


def test_range_certification_fails_across_a_transition():
    # The all-sector ground changes at U = 3, but within N = 1 nothing changes: use a
    # spectrum where the N=1 ground changes sign of t.
    with pytest.raises(ModelError, match="changes"):
        charge_gap(two_site_spectrum(), 2, {"t": 1, "U": 4}, over=("t", (-1, 1)))


def test_errors():
    spec = two_site_spectrum()
    with pytest.raises(ModelError, match="N=5"):
        charge_gap(spec, 4, {"t": 1, "U": 4})
    nospin = spectrum_of([type(l)(l.energy, l.degeneracy, {"N": l.quantum_numbers["N"]},
                                   l.polynomial) for l in two_site_levels()])
    with pytest.raises(ModelError, match="spin"):
        spin_gap(nospin, 2, {"t": 1, "U": 4})
    with pytest.raises(ModelError, match="mode"):
        spin_gap(spec, 2, {"t": 1, "U": 4}, mode="other")
