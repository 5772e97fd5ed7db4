"""Spin rings reduced modulo primes (``symcluster.blocks.bloch``) against outside references.

Large sectors of a spin-1/2 ring with one coupling are reduced by momentum and spin
modulo primes, and their integer characteristic polynomials are lifted from residues
(``symcluster.algebra.lift``).  The checks here come from outside the package:

* the dense spin-matrix reference of ``tests/reference_models.py`` (Kronecker products,
  shares no code with symcluster), every level at two rational points, with the route
  switched on for every sector of rings of 5 to 8 and 10 sites;
* the Bethe-ansatz ground state of the antiferromagnetic Heisenberg ring
  (H. Bethe, Z. Phys. 71, 205 (1931); the logarithmic form of the equations,
  L arctan(2 lambda_a) = pi I_a + sum_b arctan(lambda_a - lambda_b), with
  E = J L / 4 - J sum_a 2 / (1 + 4 lambda_a^2), from memory), solved here with mpmath,
  on rings of 14 and 16 sites where the route is chosen by itself;
* the minimal polynomial of 2 cos(2 pi / n) from sympy (a general-purpose library) for
  the lift of a Galois norm.
"""

import mpmath
import numpy as np
import pytest
import sympy

import symcluster as sc
from symcluster.algebra.lift import lift_merged
from symcluster.blocks import bloch
from symcluster.errors import VerificationError
from reference_models import expand, heisenberg_ref, multiset_deviation


def ring_bonds(n):
    return [(i, (i + 1) % n, "J") for i in range(n)]


def bethe_ground_energy(L, dps=45):
    """Lowest energy of J sum S_i.S_(i+1) on an L-ring (L even, J = 1), Bethe ansatz.

    M = L/2 down spins; the ground state has the quantum numbers I_a = -(M-1)/2 ..
    (M-1)/2 (half-odd for even M), real rapidities; fixed-point iteration of the
    logarithmic equations, then mpmath's findroot.
    """
    mpmath.mp.dps = dps
    M = L // 2
    quantum = [mpmath.mpf(2 * a - (M - 1)) / 2 for a in range(M)]
    lam = [mpmath.tan(mpmath.pi * i / L) / 2 for i in quantum]
    for _ in range(100):
        lam = [mpmath.tan((mpmath.pi * quantum[a]
                           + sum(mpmath.atan(lam[a] - lam[b]) for b in range(M))) / L) / 2
               for a in range(M)]

    def equations(*x):
        return [L * mpmath.atan(2 * x[a]) - mpmath.pi * quantum[a]
                - sum(mpmath.atan(x[a] - x[b]) for b in range(M)) for a in range(M)]

    lam = mpmath.findroot(equations, lam)
    return mpmath.mpf(L) / 4 - sum(2 / (1 + 4 * v ** 2) for v in lam)


def sz_sectors(spec, point):
    """{2 S^z: sorted values}, each level spread over S^z = -S..S."""
    out = {}
    for val, lev in ((float(lev.numeric(spec.point(point), digits=30)), lev)
                     for lev in spec.levels):
        two_s = int(2 * lev.quantum_numbers["S"])
        for two_m in range(-two_s, two_s + 1, 2):
            out.setdefault(two_m, []).extend([val] * (lev.degeneracy // (two_s + 1)))
    return {k: np.sort(v) for k, v in out.items()}


def assert_sectors_match(spec, ref, point):
    """Every S^z sector's multiset of values equals the dense reference's, to 1e-10 of
    the spectrum's scale."""
    theirs = {key[0]: np.sort(v) for key, v in ref.block_eigenvalues(point).items()}
    mine = sz_sectors(spec, point)
    assert set(mine) == set(theirs)
    scale = 1.0 + max(float(np.max(np.abs(v))) for v in theirs.values())
    for key, vals in theirs.items():
        assert multiset_deviation(mine[key], vals) < 1e-10 * scale, (point, key)


def used_modular_route(spec):
    return any(step[0] == "momentum and spin modulo primes"
               for entry in spec.symmetries[1:] for step in entry["steps"])


@pytest.fixture
def modular_everywhere(monkeypatch):
    """Every sector goes the modular route (normally only sectors above 3,000 states)."""
    monkeypatch.setattr(bloch, "MODULAR_MIN_SECTOR", 0)


@pytest.mark.parametrize("L", [5, 6, 7, 8, 10])
def test_every_level_matches_the_dense_reference(L, modular_everywhere):
    spec = sc.solve(sc.heisenberg(sc.ring(L)))
    assert used_modular_route(spec)
    assert spec.n_states == 2 ** L
    ref = heisenberg_ref(L, ring_bonds(L))
    for point in ({"J": 1}, {"J": "-3/7"}):
        assert_sectors_match(spec, ref, point)
        got = expand(spec.numeric(point, digits=30))
        assert len(got) == 2 ** L


@pytest.mark.parametrize("L", [7, 8])
def test_a_frustrated_one_label_ring_matches_the_dense_reference(L, modular_everywhere):
    """J on the nearest- and next-nearest-neighbour bonds (one label: the group is still
    the ring's dihedral group, the model is frustrated)."""
    bonds = ring_bonds(L) + [(i, (i + 2) % L, "J") for i in range(L)]
    spec = sc.solve(sc.heisenberg(sc.cluster(L, bonds)))
    assert used_modular_route(spec)
    ref = heisenberg_ref(L, bonds)
    for point in ({"J": 1}, {"J": "-5/3"}):
        assert_sectors_match(spec, ref, point)


def test_momentum_labels_match_the_exact_route(modular_everywhere, monkeypatch):
    """The same levels with the same (S, irrep) labels whichever route reduced them; the
    exact route's irreps are checked against the plain projectors by the verification."""
    modular = sc.solve(sc.heisenberg(sc.ring(8)))
    monkeypatch.setattr(bloch, "MODULAR_MIN_SECTOR", 10 ** 9)
    exact = sc.solve(sc.heisenberg(sc.ring(8)))
    assert not used_modular_route(exact)

    def key(spec):
        return sorted((lev.quantum_numbers["S"], lev.quantum_numbers["irrep"], lev.degeneracy,
                       str(lev.polynomial.as_expr())) for lev in spec.levels)

    assert key(modular) == key(exact)


def test_ring14_ground_state_is_the_bethe_ansatz_energy():
    """The Sz = 0 sector of ring(14) (3,432 states) goes the modular route by itself."""
    spec = sc.solve(sc.heisenberg(sc.ring(14)))
    assert used_modular_route(spec)
    assert spec.n_states == 2 ** 14
    pairs = spec.numeric({"J": 1}, digits=35)
    lowest = min(v for v, _ in pairs)
    assert abs(lowest - bethe_ground_energy(14)) < mpmath.mpf(10) ** -30
    ground = [lev for lev in spec.levels
              if abs(lev.numeric(spec.point({"J": 1}), digits=35) - lowest) < 1e-20]
    # Lieb-Mattis (1962): the bipartite antiferromagnet's ground state is a singlet
    assert [lev.quantum_numbers["S"] for lev in ground] == [0]


def test_a_selected_singlet_sector_of_ring14_holds_the_bethe_ground_state():
    """sectors=[{"S": 0}] builds only the singlet blocks (modular in Sz = 0): they hold
    every S = 0 state (C(14, 7) - C(14, 6) = 429, the Catalan number C_7) and
    the Bethe-ansatz ground state."""
    spec = sc.solve(sc.heisenberg(sc.ring(14)), sectors=[{"S": 0}])
    assert used_modular_route(spec)
    assert {lev.quantum_numbers["S"] for lev in spec.levels} == {0}
    assert spec.n_states == 3432 - 3003
    lowest = min(v for v, _ in spec.numeric({"J": 1}, digits=35))
    assert abs(lowest - bethe_ground_energy(14)) < mpmath.mpf(10) ** -30


@pytest.mark.slow
def test_ring16_full_spectrum_and_bethe_ground_state():
    spec = sc.solve(sc.heisenberg(sc.ring(16)))
    assert used_modular_route(spec)
    assert spec.n_states == 2 ** 16
    pairs = spec.numeric({"J": 1}, digits=35)
    assert abs(min(v for v, _ in pairs) - bethe_ground_energy(16)) < mpmath.mpf(10) ** -30
    # the ferromagnetic multiplet S = 8 sits at J L / 4 = 4 (all spins parallel)
    top = [lev for lev in spec.levels if lev.quantum_numbers["S"] == 8]
    assert len(top) == 1 and top[0].degeneracy == 17
    assert top[0].numeric(spec.point({"J": 1}), digits=30) == 4


def test_lift_of_a_galois_norm_is_the_minimal_polynomial():
    """prod_k (x - 2 cos(2 pi k / 16)) over k = 1, 3, 5, 7 is the minimal polynomial of
    2 cos(pi / 8) (sympy computes it independently)."""
    L = 16

    def residues(p, w):
        return {k: [(-(pow(w, k, p) + pow(w, L - k, p))) % p, 1] for k in (1, 3, 5, 7)}

    got = lift_merged(residues, [1, 3, 5, 7], L, 4, 2)
    x = sympy.Symbol("x")
    want = sympy.Poly(sympy.minimal_polynomial(2 * sympy.cos(sympy.pi / 8), x), x)
    assert got == [int(c) for c in reversed(want.all_coeffs())]


def test_a_wrong_factor_of_a_ring_block_is_refused(modular_everywhere):
    """The block-polynomial tier recomputes a ring block's residues at a fresh prime: a
    factor with the right degree and leading terms but a wrong constant term fails."""
    from symcluster.blocks.build import plan_symmetries
    from symcluster.pipeline.solve import solve_block
    from symcluster.verify.core import verify_blocks

    model = sc.heisenberg(sc.ring(8))
    plan = plan_symmetries(model)
    specs = bloch.bloch_blocks(model, plan, [(4, 4)])
    spec = max(specs, key=lambda s: s.block.dim)
    factors = solve_block(spec, model.labels)
    assert verify_blocks([spec], [factors], seed=3) == 1
    fac, mult, roots = factors[0]
    gens = fac.gens
    bad = sympy.Poly(fac.as_expr() + gens[1] ** fac.total_degree(), *gens)
    with pytest.raises(VerificationError, match="differs from the product"):
        verify_blocks([spec], [[(bad, mult, roots)] + factors[1:]], seed=3)


def test_the_route_is_not_taken_where_it_does_not_apply(modular_everywhere):
    """Two couplings (J1-J2), a field, or a chain without translations: the exact route."""
    j1j2 = sc.heisenberg(sc.cluster(8, [(i, (i + 1) % 8, "J1") for i in range(8)]
                                    + [(i, (i + 2) % 8, "J2") for i in range(8)]))
    chain = sc.heisenberg(sc.chain(8))
    field = sc.with_field(sc.heisenberg(sc.ring(8)), h="h")
    for model in (j1j2, chain, field):
        assert not used_modular_route(sc.solve(model))
