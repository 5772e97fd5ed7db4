"""Blocks whose results are derived from another block's (symcluster.pipeline.derived).

The spectral twins are found by an exact comparison at a random point and then derived;
the spectra with them must equal an independent dense Jordan-Wigner diagonalisation
(tests/helpers_lehmann.py, sharing no code with symcluster), and a wrong derivation must
be refused by the block check.
"""

import numpy as np
import pytest

import symcluster as sc
import symcluster.pipeline.derived as derived
from helpers_lehmann import hubbard_h


def _values(spec, t, U):
    out = []
    for lev in spec.levels:
        x = float(lev.numeric({"t": t, "U": U}, digits=20))
        out.extend([x] * lev.degeneracy)
    return np.sort(out)


@pytest.mark.parametrize("cluster", [sc.chain(5), sc.ring(4), sc.grid(2, 2)],
                         ids=["chain5", "ring4", "grid2x2"])
def test_spectral_twins_give_the_dense_reference_spectrum(monkeypatch, cluster):
    # with twins searched down to dimension 2, many blocks of these bipartite clusters are
    # derived (the Shiba transformation relates spin S, pseudospin eta to spin eta,
    # pseudospin S with U -> -U: H. Shiba, Prog. Theor. Phys. 48, 2171 (1972), from
    # memory); every level must still be an eigenvalue of the dense Hamiltonian with its
    # multiplicity, all 4^L states accounted for
    monkeypatch.setattr(derived, "TWIN_MIN_DIM", 2)
    spec = sc.solve(sc.hubbard(cluster), executor="serial", seed=5)
    used = spec.symmetries[0]["symmetries"]
    assert any(u.startswith("spectral twins") for u in used), used
    bonds = [(i, j) for i, j, _ in cluster.bonds]
    for t, U in ((1, 3), (-0.75, -2.5)):
        _, h = hubbard_h(bonds, cluster.n_sites, t, U)
        want = np.linalg.eigvalsh(h)
        got = _values(spec, t, U)
        assert got.shape == want.shape == (4 ** cluster.n_sites,)
        assert np.max(np.abs(got - want)) < 1e-9


def test_twins_are_found_in_equal_dimensions_only_and_with_integer_shifts():
    # two 1x1 blocks U and U + 2t: the second is the first moved by 2t (shift {t: 2})
    from symcluster.algebra.block import LinearBlock

    class Spec:
        def __init__(self, block):
            self.block = block

    a = Spec(LinearBlock(1, {"U": {(0, 0): 1}}))
    b = Spec(LinearBlock(1, {"U": {(0, 0): 1}, "t": {(0, 0): 2}}))
    c = Spec(LinearBlock(2, {"U": {(0, 0): 1}}))
    half = Spec(LinearBlock(1, {"U": {(0, 0): -1}, "t": {(0, 0): 1}}))
    old = derived.TWIN_MIN_DIM
    try:
        derived.TWIN_MIN_DIM = 1
        got = derived.spectral_twins([a, b, c, half], ("t", "U"))
    finally:
        derived.TWIN_MIN_DIM = old
    assert got[1] == (0, (), {"t": 2, "U": 0})
    assert 2 not in got                     # another dimension
    # -U + t: found as U moved by t - 2U (the first sign pattern that fits); the relation
    # E_3(t, U) = E_0(+-t, +-U) + shift must hold at any point
    i, flipped, shift = got[3]
    assert i == 0
    for tv, uv in ((1, 2), (-3, 5)):
        e0 = -uv if "U" in flipped else uv
        assert e0 + shift["t"] * tv + shift["U"] * uv == -uv + tv


def test_a_wrong_twin_is_refused_by_the_block_check(monkeypatch):
    # plant a derivation with the wrong shift: the verification compares every block's
    # own characteristic polynomial with its factors, so the solve must fail
    real = derived.spectral_twins

    def wrong(blocks, names, skip=(), seed=0):
        found = real(blocks, names, skip, seed)
        assert found
        return {j: (i, flipped, {**shift, "U": shift["U"] + 1})
                for j, (i, flipped, shift) in found.items()}

    monkeypatch.setattr(derived, "TWIN_MIN_DIM", 2)
    monkeypatch.setattr(derived, "spectral_twins", wrong)     # what derived_blocks calls
    with pytest.raises(sc.VerificationError, match="differs from the product of its computed"):
        sc.solve(sc.hubbard(sc.chain(4)), executor="serial", seed=1)


def test_spectral_twins_with_three_couplings_give_the_dense_reference(monkeypatch):
    # the extended Hubbard ring(4) (t, U, V: eight sign patterns per pair of blocks); the
    # dense reference adds V (n_i n_j on every bond, n = n_up + n_dn) to the Jordan-Wigner
    # Hubbard matrix of tests/helpers_lehmann.py
    from helpers_lehmann import Fermions
    monkeypatch.setattr(derived, "TWIN_MIN_DIM", 2)
    cluster = sc.ring(4)
    spec = sc.solve(sc.hubbard(cluster, V="V"), executor="serial", seed=9)
    used = spec.symmetries[0]["symmetries"]
    assert any(u.startswith("spectral twins") for u in used), used
    bonds = [(i, j) for i, j, _ in cluster.bonds]
    f = Fermions(4)
    dens = [f.n(i, 0) + f.n(i, 1) for i in range(4)]
    for t, U, V in ((1.0, 3.0, 0.5), (-0.4, -2.0, 1.25)):
        _, h = hubbard_h(bonds, 4, t, U)
        h = h + V * sum(dens[i] @ dens[j] for i, j in bonds)
        want = np.linalg.eigvalsh(h)
        got = np.sort(np.concatenate([
            [float(lev.numeric({"t": t, "U": U, "V": V}, digits=20))] * lev.degeneracy
            for lev in spec.levels]))
        assert got.shape == want.shape == (256,)
        assert np.max(np.abs(got - want)) < 1e-9
