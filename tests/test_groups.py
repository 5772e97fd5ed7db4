"""Tests for symcluster.symmetry.groups: automorphisms and exact character tables."""

import random
from itertools import permutations

import numpy as np
import pytest

from symcluster.errors import ClusterError, TooLargeError, VerificationError
from symcluster.symmetry.groups import (
    CharacterTable, IrrepCharacter, PermutationGroup, _verify_table, automorphisms, compose,
    inverse,
)


# --- built-in shapes (bond conventions of the brief) -------------------------------

from bond_lists import chain, complete, cube, grid, ring, star  # noqa: E402


# Orders of symmetry groups of these graphs: textbook facts (dihedral group D_L of
# order 2L; S4 for the tetrahedron and for a 4-leaf star; O_h of order 48 for the cube;
# D2 of order 4 for a 2x3 rectangle; D4 of order 8 for the 3x3 square),
# e.g. M. Hamermesh, "Group Theory and its Application to Physical Problems" (1962),
# ch. 2 -- from memory.
ORDERS = [
    (ring(3), 6), (ring(4), 8), (ring(5), 10), (ring(6), 12), (ring(8), 16), (ring(12), 24),
    (complete(4), 24), (cube(), 48), (grid(2, 3), 4), (grid(3, 3), 8), (grid(2, 4), 4),
    (chain(2), 2), (chain(5), 2), (chain(8), 2), (star(4), 24),
]


@pytest.mark.parametrize("cluster,order", ORDERS)
def test_group_orders(cluster, order):
    n, bonds = cluster
    els = automorphisms(n, bonds)
    assert len(els) == order
    assert els[0] == tuple(range(n))
    assert len(set(els)) == order


@pytest.mark.parametrize("cluster", [c for c, _ in ORDERS])
def test_automorphisms_preserve_bonds_and_close(cluster):
    n, bonds = cluster
    edges = {frozenset((i, j)) for i, j, _ in bonds}
    els = automorphisms(n, bonds)
    for g in els:
        assert {frozenset((g[i], g[j])) for i, j, _ in bonds} == edges
    s = set(els)
    for g in els[:10]:
        for h in els:
            assert compose(g, h) in s


def test_brute_force_agrees_on_small_graphs():
    # independent: test every permutation of 6 sites against the bond set
    rng = random.Random(7)
    for _ in range(6):
        pairs = [(i, j) for i in range(6) for j in range(i + 1, 6) if rng.random() < 0.45]
        bonds = [(i, j, rng.choice("ab")) for i, j in pairs]
        labelled = {(frozenset((i, j)), lab) for i, j, lab in bonds}
        want = sorted(g for g in permutations(range(6))
                      if {(frozenset((g[i], g[j])), lab) for i, j, lab in bonds} == labelled)
        assert automorphisms(6, bonds) == want


def test_relabelled_cube_has_same_order():
    n, bonds = cube()
    rng = random.Random(3)
    p = list(range(n))
    rng.shuffle(p)
    assert len(automorphisms(n, [(p[i], p[j], t) for i, j, t in bonds])) == 48


def test_labels_break_symmetry():
    n, bonds = ring(4)
    # fixing one vertex of a square leaves the identity and one reflection (from memory)
    assert len(automorphisms(n, bonds, site_labels=["A", None, None, None])) == 2
    # alternating bond labels: identity, half turn, two mirror lines through bond centres
    alt = [(i, (i + 1) % 4, "t1" if i % 2 else "t2") for i in range(4)]
    assert len(automorphisms(n, alt)) == 4
    # a doubled bond differs from a single one
    assert len(automorphisms(3, [(0, 1, "t"), (0, 1, "t"), (1, 2, "t")])) == 1


@pytest.mark.parametrize("bonds,fix", [
    ([(0, 0, "t")], "itself"), ([(0, 5, "t")], "outside"), ([(0, 1)], "triple"),
])
def test_bad_bonds(bonds, fix):
    with pytest.raises(ClusterError, match=fix):
        automorphisms(3, bonds)


def test_bad_site_labels_and_too_large():
    with pytest.raises(ClusterError, match="one label"):
        automorphisms(3, [(0, 1, "t")], site_labels=["a"])
    n, bonds = complete(6)
    with pytest.raises(TooLargeError, match="lattice=False"):
        automorphisms(n, bonds, max_order=100)


# --- character tables --------------------------------------------------------------

TABLES = [ring(4), ring(5), ring(6), ring(8), complete(4), cube(), grid(2, 3), grid(3, 3),
          star(4), chain(2), complete(5)]


def group_of(cluster):
    return PermutationGroup(automorphisms(*cluster))


@pytest.mark.parametrize("cluster", TABLES)
def test_character_table_orthogonality(cluster):
    g = group_of(cluster)
    t = g.character_table()
    sizes = np.array([len(c) for c in g.classes])
    k = len(g.classes)
    assert len(t.irreps) == k
    assert sum(r.dim ** 2 for r in t.irreps) == g.order
    x = np.array([r.numeric for r in t.irreps])               # irreps x classes
    # first orthogonality: <chi_i, chi_j> = delta_ij (Serre, sect. 2.3 [mem])
    gram = (x * sizes) @ x.conj().T / g.order
    assert np.allclose(gram, np.eye(k), atol=1e-9)
    # second orthogonality: sum_chi chi(g) conj chi(h) = |C_G(g)| delta (Serre, sect. 2.5 [mem])
    col = x.T.conj() @ x
    assert np.allclose(col, np.diag(g.order / sizes), atol=1e-9)
    # exact parts
    for r in t.irreps:
        assert np.allclose(sum(t.irreps[j].numeric for j in t.orbits[r.orbit]), r.orbit_sum)
        if r.rational is not None:
            assert all(isinstance(v, int) for v in r.rational)
            assert np.allclose(r.numeric, r.rational)


@pytest.mark.parametrize("cluster", TABLES)
def test_permutation_character_decomposes(cluster):
    # the site-permutation character (fixed points) is a character: integer, non-negative
    # multiplicities, and the trivial irrep occurs once per site orbit (Burnside's lemma)
    g = group_of(cluster)
    t = g.character_table()
    fix = np.array([sum(1 for i, x in enumerate(g.elements[c[0]]) if i == x) for c in g.classes])
    sizes = np.array([len(c) for c in g.classes])
    mult = [np.sum(sizes * fix * r.numeric.conj()) / g.order for r in t.irreps]
    assert np.allclose(mult, np.rint(np.real(mult)), atol=1e-9)
    assert min(np.rint(np.real(mult))) >= 0
    n_site_orbits = len({min(h[i] for h in g.elements) for i in range(g.n_sites)})
    assert round(mult[0].real) == n_site_orbits
    assert all(v == 1 for v in t.irreps[0].rational)


# irreducible dimensions and rationality, textbook tables (Hamermesh ch. 3-4, from memory):
# D4 and D6 rational; D5 has a Galois pair of 2-dim irreps (values involving sqrt 5);
# D8 has a Galois pair of 2-dim irreps (values +-sqrt 2); S4 = 1,1,2,3,3; O_h = S4 x Z2.
@pytest.mark.parametrize("cluster,dims,irrational", [
    (ring(4), [1, 1, 1, 1, 2], 0), (ring(6), [1, 1, 1, 1, 2, 2], 0),
    (ring(5), [1, 1, 2, 2], 2), (ring(8), [1, 1, 1, 1, 2, 2, 2], 2),
    (complete(4), [1, 1, 2, 3, 3], 0), (cube(), [1, 1, 1, 1, 2, 2, 3, 3, 3, 3], 0),
    (complete(5), [1, 1, 4, 4, 5, 5, 6], 0),
])
def test_known_dimensions(cluster, dims, irrational):
    t = group_of(cluster).character_table()
    assert sorted(r.dim for r in t.irreps) == dims
    assert sum(1 for r in t.irreps if r.rational is None) == irrational


def test_group_helpers():
    g = group_of(ring(6))
    assert g.order == 12 and not g.is_abelian and g.exponent == 6
    assert group_of(chain(3)).is_abelian
    for a in range(g.order):
        assert g.mul(a, g.inv(a)) == 0
        assert g.power(a, g.element_order(a)) == 0
        assert compose(g.elements[a], inverse(g.elements[a])) == tuple(range(6))
    assert sorted(len(c) for c in g.classes) == [1, 1, 2, 2, 3, 3]     # D6 classes, from memory
    assert len(g.generated_subgroup([1])) in (1, 2, 3, 6)


def test_bad_group_input():
    with pytest.raises(VerificationError, match="identity"):
        PermutationGroup([(1, 0), (0, 1)])
    with pytest.raises(VerificationError, match="closed"):
        PermutationGroup([(0, 1, 2), (1, 2, 0)])


def test_verification_catches_a_wrong_table():
    g = group_of(ring(4))
    good = g.character_table()
    bad = [IrrepCharacter(r.name, r.dim, r.numeric, r.rational, r.orbit, r.orbit_sum)
           for r in good.irreps]
    s = list(bad[1].orbit_sum)
    s[-1] = -s[-1]
    bad[1].orbit_sum = tuple(s)
    with pytest.raises(VerificationError):
        _verify_table(CharacterTable(g, bad, good.orbits), {1: list(range(len(g.classes)))})


# --- multiplication table and the products read from it --------------------------------

@pytest.mark.parametrize("cluster", [ring(4), ring(6), complete(4), cube(), grid(2, 3), chain(2)])
def test_table_products_powers_and_classes_by_composition(cluster, monkeypatch):
    # the table (built at once for small groups) against composing the permutations,
    # and the same group with the table built only on request gives the same answers
    import symcluster.symmetry.groups as groups_mod
    n, bonds = cluster
    els = automorphisms(n, bonds)
    eager = PermutationGroup(els)
    monkeypatch.setattr(groups_mod, "_EAGER_TABLE", 0)
    lazy = PermutationGroup(els)
    assert lazy._table is None and eager._table is not None
    index = {g: a for a, g in enumerate(els)}
    ident = tuple(range(n))
    for grp in (eager, lazy):
        for a, g in enumerate(els):
            order, r = 1, g
            while r != ident:
                r, order = compose(g, r), order + 1
            assert grp.element_order(a) == order
            r = ident
            for k in range(2 * order + 1):
                assert grp.power(a, k) == index[r]
                r = compose(g, r)
            for b, h in enumerate(els):
                assert grp.mul(a, b) == index[compose(g, h)]
        cls = {a: {index[compose(compose(h, g), inverse(h))] for h in els}
               for a, g in enumerate(els)}
        assert all(set(c) == cls[c[0]] for c in grp.classes)
        assert sorted(a for c in grp.classes for a in c) == list(range(len(els)))
    assert eager.classes == lazy.classes and eager.class_of == lazy.class_of
    rows, cols = eager.table_rows(), eager.table_columns()
    assert lazy.table_rows() == rows and lazy.table_columns() == cols
    assert eager.table().tolist() == rows
    for a in range(len(els)):
        for b in range(len(els)):
            assert rows[a][b] == cols[b][a] == index[compose(els[a], els[b])]
