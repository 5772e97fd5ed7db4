"""Mulliken symbols of the lattice irreps (symcluster.symmetry.mulliken).

The one-electron levels of the Hubbard model are those of -t times the adjacency matrix,
and their symmetry is textbook knowledge (from memory):

* ring of n sites: eigenvalue -2t cos k; k = 0 is totally symmetric (A1), k = pi (even n)
  alternates in sign, even under a mirror through two sites (B1 in the convention of
  docs/outputs.md), +-k form E_m with k = 2 pi m / n;
* tetrahedron (Td): the four vertex orbitals span A1 + T2 (-3t once, +t three times);
* cube (Oh): the eight vertex orbitals span A1g + T1u + T2g + A2u, with hopping energies
  -3t, -t, +t, +3t (the functions 1, x, xy, xyz of the vertex coordinates +-1).
"""

import pytest
import sympy

import symcluster as sc

t = sympy.Symbol("t", real=True)


def _one_electron(cluster):
    spec = sc.solve(sc.hubbard(cluster), electrons=[1])
    out = {}
    for lev in spec.levels:
        q = lev.quantum_numbers
        if q.get("N") == 1:
            out.setdefault(q.get("mulliken"), set()).add(sympy.simplify(lev.energy))
    return out


@pytest.mark.parametrize("n, want", [
    (3, {"A1": -2 * t, "E": t}),
    (4, {"A1": -2 * t, "E": 0 * t, "B1": 2 * t}),
    (6, {"A1": -2 * t, "E1": -t, "E2": t, "B1": 2 * t}),
])
def test_ring_one_electron_levels(n, want):
    got = _one_electron(sc.ring(n))
    assert got == {k: {sympy.S(v)} for k, v in want.items()}


def test_ring_of_five_names_the_galois_orbit():
    got = _one_electron(sc.ring(5))
    # -2t cos(2 pi m / 5), m = 1, 2: irrational, one rational irrep E1/E2
    assert set(got) == {"A1", "E1/E2"}


def test_tetrahedron_one_electron_levels():
    assert _one_electron(sc.tetrahedron()) == {"A1": {-3 * t}, "T2": {t}}


def test_cube_one_electron_levels():
    assert _one_electron(sc.cube()) == {"A1g": {-3 * t}, "T1u": {-t}, "T2g": {t},
                                        "A2u": {3 * t}}


def test_star_of_four_has_td_labels():
    # a centre with four ligands (CH4-like): the centre is A1, the ligands A1 + T2
    spec = sc.solve(sc.hubbard(sc.star(4)), electrons=[1])
    labels = {lev.quantum_numbers.get("mulliken") for lev in spec.levels}
    assert labels == {"A1", "T2"}


def test_unknown_groups_get_no_symbol_and_keep_their_label():
    spec = sc.solve(sc.hubbard(sc.chain(3)), electrons=[1])
    assert all("mulliken" not in lev.quantum_numbers and "irrep" in lev.quantum_numbers
               for lev in spec.levels)


def test_symbols_survive_the_json_round_trip(tmp_path):
    from symcluster.export import read_json, write_json
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=[2])
    write_json(spec, tmp_path / "r.json")
    doc = read_json(tmp_path / "r.json")
    assert sorted(l["quantum_numbers"]["mulliken"] for l in doc["levels"]) == \
        sorted(l.quantum_numbers["mulliken"] for l in spec.levels)
