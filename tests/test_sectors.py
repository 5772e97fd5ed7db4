"""Quantities that need electron numbers a spectrum does not hold are refused
(symcluster.analysis.sectors and its callers; issue "Reliability", finding 2).

The grand-canonical table of a spectrum solved for N = 2, 3, 4 only used to be the
ensemble of those sectors, labelled grand canonical: at mu = U/2 on the 4-site ring it gave
<N> = 3.709 where particle-hole symmetry (common practice, no source) gives 4.
"""

import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.analysis import (charge_gap, high_temperature_series, lowest_level,
                                 pair_binding, partition_function, spin_gap, thermo_table,
                                 transitions)
from symcluster.errors import ModelError

AT = {"t": 1, "U": 4}


@pytest.fixture(scope="module")
def ring4_partial():
    return sc.solve(sc.hubbard(sc.ring(4)), electrons=[2, 3, 4])


@pytest.fixture(scope="module")
def dimer():
    return sc.solve(sc.hubbard(sc.chain(2)))


def test_grand_canonical_table_on_a_partial_spectrum_is_refused(ring4_partial):
    with pytest.raises(ModelError) as info:
        thermo_table(ring4_partial, AT, [1], mus=[2])
    msg = str(info.value)
    assert "missing N=0, 1, 5-8" in msg and "electrons" in msg


def test_every_grand_canonical_function_refuses_a_partial_spectrum(ring4_partial):
    for call in (lambda: partition_function(ring4_partial),
                 lambda: high_temperature_series(ring4_partial, 2),
                 lambda: transitions(ring4_partial, None, "U", (0, 10), {"t": 1}),
                 lambda: lowest_level(ring4_partial, AT)):
        with pytest.raises(ModelError, match="missing N=0, 1, 5-8"):
            call()


def test_gaps_name_the_missing_neighbours(ring4_partial):
    with pytest.raises(ModelError, match=r"missing N=5\b"):
        charge_gap(ring4_partial, 4, AT)
    with pytest.raises(ModelError, match=r"missing N=1\b"):
        pair_binding(ring4_partial, 3, AT)
    with pytest.raises(ModelError, match="missing N=6"):
        spin_gap(ring4_partial, 6, AT)
    # what the spectrum does hold is still computed: canonical N = 4, charge gap at N = 3
    assert thermo_table(ring4_partial, AT, [1], n_electrons=4)[0]["density"] == 4
    charge_gap(ring4_partial, 3, AT)


def test_an_incomplete_sector_is_refused(dimer):
    from symcluster.analysis.sectors import held_electrons
    # a hand-made spectrum without the N = 2 triplet holds 3 of that sector's 6 states
    partial = sc.Spectrum(dimer.model, [l for l in dimer.levels
                                        if l.quantum_numbers["N"] != 2
                                        or l.quantum_numbers["S"] != 1])
    assert held_electrons(partial) == [0, 1, 3, 4]
    with pytest.raises(ModelError, match=r"missing N=2\b"):
        thermo_table(partial, AT, [1], n_electrons=2)


def test_grand_canonical_density_of_the_full_dimer_against_the_published_sum(dimer):
    # Xi of the two-site cluster (H. Shiba, P. A. Pincus, Phys. Rev. B 5, 1966 (1972);
    # shared/references.md): <N> = T d(ln Xi)/d(mu), differentiated here with sympy
    b, mu, t, U = sympy.symbols("beta mu t U", real=True)
    D = sympy.sqrt(U ** 2 / 4 + 4 * t ** 2)
    xi = (1 + 4 * sympy.exp(b * mu) * sympy.cosh(b * t)
          + sympy.exp(2 * b * mu) * (3 + sympy.exp(-b * U) + 2 * sympy.exp(-b * U / 2)
                                     * sympy.cosh(b * D))
          + 4 * sympy.exp(b * (3 * mu - U)) * sympy.cosh(b * t) + sympy.exp(b * (4 * mu - 2 * U)))
    density = sympy.diff(sympy.log(xi), mu) / b
    for T, m in ((1, 1), (sympy.Rational(1, 3), sympy.Rational(-1, 2)), (2, 3)):
        want = sympy.N(density.subs({b: 1 / sympy.Rational(T), mu: m, t: 1, U: 4}), 40)
        row = thermo_table(dimer, AT, [T], mus=[m], digits=30)[0]
        with mpmath.workdps(40):
            assert abs(row["density"] - mpmath.mpf(str(want))) < mpmath.mpf(10) ** -25
    # and the same on a partial dimer spectrum is refused, not computed
    part = sc.solve(sc.hubbard(sc.chain(2)), electrons=[1, 2, 3])
    with pytest.raises(ModelError, match=r"missing N=0, 4"):
        thermo_table(part, AT, [1], mus=[1])


def test_impossible_electron_numbers_are_named(dimer):
    from symcluster.analysis.sectors import require_electrons
    with pytest.raises(ModelError, match="N=5, which is impossible on 2 sites"):
        charge_gap(dimer, 4, AT)
    with pytest.raises(ModelError, match="impossible"):
        require_electrons(dimer, [-1], "a test")


def test_format_numbers():
    from symcluster.analysis.sectors import format_numbers
    assert format_numbers([0, 1, 2, 5, 7, 8]) == "0-2, 5, 7, 8"
    assert format_numbers([]) == ""
