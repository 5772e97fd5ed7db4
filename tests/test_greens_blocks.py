"""Green's functions whose eigenvectors come from the exact lattice-symmetry blocks
(symcluster/response/blockeig.py), checked against the independent numpy Lehmann
computation of tests/helpers_lehmann.py (dense Jordan-Wigner matrices, shares no code
with symcluster), and the block checks made to fail on a wrong symmetry group.
"""

from fractions import Fraction

import pytest

import symcluster as sc
from symcluster.errors import VerificationError
from symcluster.response.blockeig import block_sector
from symcluster.response.eigen import PointSystem
from symcluster.response.greens import greens_matrix

from helpers_lehmann import LehmannReference, hubbard_h


def _ring_bonds(L):
    return [(i, (i + 1) % L) for i in range(L)]


def _close(z, w, tol):
    return abs(complex(z) - w) <= tol * max(1.0, abs(w))


CASES = [
    # (cluster, bonds for the reference, point, ensemble)
    ("ring(4), N=4, T=0 (unique ground state)", lambda: sc.ring(4), _ring_bonds(4), 4,
     {"t": 1, "U": 3}, dict(N=4)),
    ("ring(5), N=4, T=0", lambda: sc.ring(5), _ring_bonds(5), 5,
     {"t": 1, "U": Fraction(5, 2)}, dict(N=4)),
    ("ring(4), N=3, canonical", lambda: sc.ring(4), _ring_bonds(4), 4,
     {"t": 1, "U": 2}, dict(N=3, temperature=Fraction(1, 2))),
    ("grid(2,2) periodic, N=2, T=0", lambda: sc.grid(2, 2, periodic=True),
     [(0, 1), (0, 2), (1, 3), (2, 3)], 4, {"t": 1, "U": 4}, dict(N=2)),
]


@pytest.mark.parametrize("case", CASES, ids=[c[0] for c in CASES])
def test_block_path_agrees_with_an_independent_lehmann_computation(case):
    _, cluster, bonds, L, point, ens = case
    spec = sc.solve(sc.hubbard(cluster()))
    ps = PointSystem(spec, point, digits=30)
    gm = greens_matrix(spec, point, spin="up", digits=30, system=ps, **ens)
    # the target sectors went through the symmetry blocks (the path under test)
    assert any(b is not None for b in ps.block_sectors.values())
    assert gm.certificate["weight_error"] < 1e-32
    ref = LehmannReference(*hubbard_h(bonds, L, float(point["t"]), float(point["U"])))
    T = ens.get("temperature")
    beta = Fraction(1) / T if T is not None else Fraction(5, 2)
    ref_kw = {"N": ens["N"], "T": None if T is None else float(T), "mu": None}
    vals = gm.matsubara(beta, 5)
    for i in range(L):
        for j in range(L):
            expect = ref.matsubara(i, j, 0, float(beta), 5, **ref_kw)
            for n in range(5):
                assert _close(vals[n][i][j], expect[n], 1e-10), (case[0], i, j, n)


def test_a_wrong_symmetry_group_is_caught_by_the_exact_invariance_check():
    # the 4-ring's group (rotations) is not a symmetry of the open 4-chain: its adapted
    # bases are not invariant under the chain's H, which H B = B M (exact) must detect
    chain = sc.solve(sc.hubbard(sc.chain(4)), electrons=[3])
    ring = sc.solve(sc.hubbard(sc.ring(4)), electrons=[3])
    ps = PointSystem(chain, {"t": 1, "U": 3}, digits=20)
    wrong = PointSystem(ring, {"t": 1, "U": 3}, digits=20).lattice()
    with pytest.raises(VerificationError, match="not invariant under H"):
        block_sector(ps, wrong, 2, 1)
