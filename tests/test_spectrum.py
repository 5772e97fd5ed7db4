"""Spectrum.select (symcluster.spectrum): unknown keys are an error, never an empty list
(issue "Reliability", finding 6)."""

import pytest

import symcluster as sc
from symcluster.errors import ModelError


@pytest.fixture(scope="module")
def dimer():
    return sc.solve(sc.hubbard(sc.chain(2)))


def test_select_matches_known_keys(dimer):
    # two sites, N = 2: four levels (references.md: 0 (S = 1), U, U/2 +- sqrt(U^2/4 + 4t^2))
    assert len(dimer.select(N=2)) == 4
    assert sum(l.degeneracy for l in dimer.select(N=2)) == 6        # C(4, 2) states
    assert dimer.select(N=7) == []                                  # a value, not a key


@pytest.mark.parametrize("key", ["n", "bogus", "spin", "s"])
def test_select_with_an_unknown_key_names_the_valid_ones(dimer, key):
    with pytest.raises(ModelError) as info:
        dimer.select(**{key: 4})
    msg = str(info.value)
    assert repr(key) in msg and "N, S" in msg
