"""The float64 tier's block diagonalisation by site permutations (symcluster.verify.sitegroup).

The eigenvalues of the blocks together must be those of the whole sector, computed here
independently: dense Jordan-Wigner matrices (tests/helpers_lehmann.py, sharing no code with
symcluster) restricted to the sector's occupation numbers.
"""

import numpy as np
import pytest

import symcluster as sc
from helpers_lehmann import hubbard_h
from symcluster.errors import VerificationError
from symcluster.verify.plain import sector_matrix, sector_occupations
from symcluster.verify.sitegroup import SectorSplit, abelian_generators


def _jw_sector(cluster, t, U, n_up, n_dn):
    bonds = [(i, j) for i, j, _ in cluster.bonds]
    f, h = hubbard_h(bonds, cluster.n_sites, t, U)
    L = cluster.n_sites
    nu = sum(np.diag(f.n(i, 0)) for i in range(L))
    nd = sum(np.diag(f.n(i, 1)) for i in range(L))
    idx = np.flatnonzero((np.rint(nu) == n_up) & (np.rint(nd) == n_dn))
    return np.linalg.eigvalsh(h[np.ix_(idx, idx)])


def _group(cluster):
    # the lattice group the solver detects (its elements only are used)
    from symcluster.blocks.build import plan_symmetries
    return plan_symmetries(sc.hubbard(cluster)).lattice.group.elements


@pytest.mark.parametrize("cluster, sector", [
    (sc.ring(4), (2, 2)), (sc.ring(4), (2, 1)), (sc.ring(5), (3, 2)), (sc.ring(5), (1, 1)),
    (sc.grid(2, 2), (1, 2)), (sc.chain(5), (2, 2))],
    ids=["ring4-22", "ring4-21", "ring5-32", "ring5-11", "grid22-12", "chain5-22"])
def test_blocks_hold_the_sector_eigenvalues(cluster, sector):
    model = sc.hubbard(cluster)
    gens = abelian_generators(_group(cluster))
    assert gens
    split = SectorSplit(sector_matrix(model, *sector), sector_occupations(model.space, *sector),
                        gens)
    assert len(split.blocks) == split.order > 1
    for t, U in ((1.0, 4.0), (-0.6, 2.5)):
        got = split.eigenvalues({"t": t, "U": U})
        want = _jw_sector(cluster, t, U, *sector)
        assert got.shape == want.shape
        assert np.max(np.abs(got - want)) < 1e-10


def test_abelian_generators_take_the_translations_of_a_ring_and_both_mirrors_of_a_ladder():
    # the dihedral group of the 6-ring: its largest abelian subgroup through the greedy
    # rule is the cyclic group of the six translations; the open 2x4 ladder's group
    # (two mirrors, order 4) is abelian: Z2 x Z2
    ring = abelian_generators(_group(sc.ring(6)))
    assert [m for _, m in ring] == [6]
    ladder = abelian_generators(_group(sc.ladder(4)))
    assert sorted(m for _, m in ladder) == [2, 2]


def test_a_permutation_that_is_no_symmetry_is_refused():
    # swapping the first two sites of an open 4-chain is no automorphism of its bonds
    model = sc.hubbard(sc.chain(4))
    with pytest.raises(VerificationError, match="does not commute"):
        SectorSplit(sector_matrix(model, 2, 1), sector_occupations(model.space, 2, 1),
                    [((1, 0, 2, 3), 2)])
