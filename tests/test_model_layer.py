"""The model layer: terms, local spaces, families, symmetries found from the terms, fixed couplings.

Expected values come from outside symcluster: the canonical anticommutation relations,
counting formulas, and dense Hamiltonians written here from each family's documented
convention with Jordan-Wigner matrices (P. Jordan, E. Wigner, Z. Phys. 47, 631 (1928),
from memory) or Pauli matrices for spins, sharing no code with symcluster.
"""

from fractions import Fraction
from functools import reduce
from itertools import product
from math import comb

import numpy as np
import pytest

import symcluster as sc
from symcluster.hilbert.space import LocalSpace
from symcluster.models.terms import (exchange, hopping, hubbard_u, normal_order, onsite,
                                     pair_hopping, spin_flip, zeeman)

# ------------------------------------------------------------------ independent dense builders
_A = np.array([[0.0, 1.0], [0.0, 0.0]])
_Z = np.diag([1.0, -1.0])
_I2 = np.eye(2)


def _annihilators(n_spin_orbitals):
    """Jordan-Wigner annihilators, spin-orbital 0 the leftmost Kronecker factor."""
    out = []
    for m in range(n_spin_orbitals):
        fs = [_Z] * m + [_A] + [_I2] * (n_spin_orbitals - m - 1)
        out.append(reduce(np.kron, fs))
    return out


class _Fermions:
    """c_{i s} for L sites, spin-orbitals ordered (0 up .. L-1 up, 0 dn .. L-1 dn)."""

    def __init__(self, L):
        self.L = L
        self.c = _annihilators(2 * L)

    def cc(self, i, s):
        return self.c[i + s * self.L]

    def n(self, i, s):
        c = self.cc(i, s)
        return c.T @ c

    def hop(self, i, j):
        return sum(self.cc(i, s).T @ self.cc(j, s) + self.cc(j, s).T @ self.cc(i, s) for s in (0, 1))


def _levels_at(spec, point):
    out = []
    for value, deg in spec.numeric(point, digits=30):
        out += [float(value)] * deg
    return np.array(sorted(out))


def _assert_spectrum(spec, point, dense):
    got = _levels_at(spec, point)
    want = np.sort(np.linalg.eigvalsh(dense))
    assert len(got) == len(want)
    assert np.max(np.abs(got - want)) < 1e-9


# ------------------------------------------------------------------ terms
def test_normal_order_obeys_the_anticommutation_relations():
    # {c_a, c+_b} = delta_ab, c_a c_a = 0, n_a n_a = n_a (canonical anticommutation relations)
    a, b = (0, 0), (1, 1)
    anti = normal_order([(1, ((*a, False), (*b, True))), (1, ((*b, True), (*a, False)))])
    assert anti == {}
    same = normal_order([(1, ((*a, False), (*a, True))), (1, ((*a, True), (*a, False)))])
    assert same == {(): Fraction(1)}
    assert normal_order([(1, ((*a, False), (*a, False)))]) == {}
    n = ((*a, True), (*a, False))
    assert normal_order([(1, n + n)]) == {n: Fraction(1)}


def test_term_builders_validate_their_input():
    with pytest.raises(sc.ModelError, match="itself"):
        hopping(1, 1)
    with pytest.raises(sc.ModelError, match="not a valid name"):
        hubbard_u(0, "1U")
    with pytest.raises(sc.ModelError, match="reserved"):
        onsite(0, "E")
    for bad in ("None", "True", "class", "import"):
        with pytest.raises(sc.ModelError):
            onsite(0, bad)
    with pytest.raises(sc.ModelError, match="outside"):
        sc.make_model(sc.chain(2), [hopping(0, 2)])


# ------------------------------------------------------------------ local spaces
@pytest.mark.parametrize("L", [1, 2, 3, 4])
def test_local_space_dimensions(L):
    # 4^L fermion states, 3^L without double occupancy, 2^L spins (counting, common practice)
    assert LocalSpace("electrons", L).dimension == 4 ** L
    assert LocalSpace("electrons", L, projected=True).dimension == 3 ** L
    assert LocalSpace("spins", L).dimension == 2 ** L
    assert LocalSpace("electrons", L, n_orbitals=2).dimension == 16 ** L
    sp = LocalSpace("electrons", L, projected=True)
    for u, d in sp.sectors():
        states = sp.sector_states(u, d)
        assert len(states) == sp.sector_dim(u, d) == comb(L, u) * comb(L - u, d)
        assert all(x & y == 0 and bin(x).count("1") == u for x, y in states)


# ------------------------------------------------------------------ families against dense references
def test_hubbard_ring_in_a_field_against_jordan_wigner():
    # H = -t sum (c+c + h.c.) + U sum n_up n_dn - h sum_i (n_i,up - n_i,dn), ring(4)
    f = _Fermions(4)
    t, U, h = 1.0, 3.5, 0.3
    H = sum(-t * f.hop(i, (i + 1) % 4) for i in range(4))
    H = H + sum(U * f.n(i, 0) @ f.n(i, 1) - h * (f.n(i, 0) - f.n(i, 1)) for i in range(4))
    spec = sc.solve(sc.with_field(sc.hubbard(sc.ring(4))))
    _assert_spectrum(spec, {"t": 1, "U": "7/2", "h": "3/10"}, H)
    # a uniform field keeps S and adds Sz: each level has both, and E(Sz) - E(S) = 2 h (S - Sz)
    assert all("S" in l.quantum_numbers and "Sz" in l.quantum_numbers for l in spec.levels)
    assert any("field" in s for s in spec.symmetries[0]["symmetries"])
    # the spectrum is even in h (spin flip), so the sign convention shows in the labels only:
    # -h 2 S^z lowers Sz = +1/2 below Sz = -1/2 by 2h = 3/5 in the one-electron ground level
    pt = {"t": 1, "U": "7/2", "h": "3/10"}
    one = {l.quantum_numbers["Sz"]: float(l.numeric(pt)) for l in spec.levels
           if l.quantum_numbers["N"] == 1 and l.quantum_numbers["k"] == 0}
    up = min(v for sz, v in one.items() if sz > 0)
    dn = min(v for sz, v in one.items() if sz < 0)
    assert abs((dn - up) - 0.6) < 1e-12


def test_site_dependent_field_keeps_only_sz_and_shrinks_the_group():
    spec = sc.solve(sc.with_field(sc.hubbard(sc.ring(4)), sites=[0]))
    assert all("S" not in l.quantum_numbers and "Sz" in l.quantum_numbers for l in spec.levels)
    # the automorphisms of ring(4) fixing site 0: the identity and one reflection
    assert "lattice automorphisms (order 2)" in spec.symmetries[0]["symmetries"]
    f = _Fermions(4)
    H = sum(-f.hop(i, (i + 1) % 4) for i in range(4)) + sum(2 * f.n(i, 0) @ f.n(i, 1)
                                                            for i in range(4))
    H = H - 0.5 * (f.n(0, 0) - f.n(0, 1))
    _assert_spectrum(spec, {"t": 1, "U": 2, "h": "1/2"}, H)


def test_extended_hubbard_keeps_spin_but_not_eta():
    spec = sc.solve(sc.hubbard(sc.ring(4), V="V"))
    names = " ".join(spec.symmetries[0]["symmetries"])
    assert "spin SU(2)" in names and "eta" not in names
    assert all("eta" not in l.quantum_numbers for l in spec.levels)
    f = _Fermions(4)
    dens = [f.n(i, 0) + f.n(i, 1) for i in range(4)]
    H = sum(-f.hop(i, (i + 1) % 4) + 0.7 * dens[i] @ dens[(i + 1) % 4] for i in range(4))
    H = H + sum(5 * f.n(i, 0) @ f.n(i, 1) for i in range(4))
    _assert_spectrum(spec, {"t": 1, "U": 5, "V": "7/10"}, H)


def test_heisenberg_ring_against_pauli_matrices_and_has_no_electron_number():
    # H = J sum S_i . S_(i+1), S = sigma / 2 (Pauli matrices), ring(5)
    sx = np.array([[0, 1], [1, 0]]) / 2
    sy = np.array([[0, -1j], [1j, 0]]) / 2
    sz = np.diag([0.5, -0.5])
    L = 5

    def site(op, i):
        return reduce(np.kron, [op if k == i else np.eye(2) for k in range(L)])

    H = sum(site(s, i) @ site(s, (i + 1) % L) for i in range(L) for s in (sx, sy, sz)).real
    spec = sc.solve(sc.heisenberg(sc.ring(L)))
    _assert_spectrum(spec, {"J": 1}, H)
    assert all("N" not in l.quantum_numbers and "S" in l.quantum_numbers for l in spec.levels)
    assert spec.n_states == 2 ** L
    with pytest.raises(sc.ModelError, match="no electron number"):
        sc.solve(sc.heisenberg(sc.ring(4)), electrons=[4])


def test_t_j_ring_against_a_projected_jordan_wigner_hamiltonian():
    # H = P [-t sum (c+c + h.c.)] P + J sum (S_i.S_j - n_i n_j / 4), no double occupancy
    L = 4
    f = _Fermions(L)
    allowed = np.diag(reduce(lambda a, b: a @ b,
                             [np.eye(4 ** L) - f.n(i, 0) @ f.n(i, 1) for i in range(L)]))
    P = np.diag(allowed)

    def spin(i):
        up, dn = f.cc(i, 0), f.cc(i, 1)
        return up.T @ dn, dn.T @ up, (f.n(i, 0) - f.n(i, 1)) / 2

    t, J = 1.0, 0.4
    H = np.zeros((4 ** L, 4 ** L))
    for i in range(L):
        j = (i + 1) % L
        (pi, mi, zi), (pj, mj, zj) = spin(i), spin(j)
        ni, nj = f.n(i, 0) + f.n(i, 1), f.n(j, 0) + f.n(j, 1)
        H += -t * f.hop(i, j) + J * (zi @ zj + (pi @ mj + mi @ pj) / 2 - ni @ nj / 4)
    keep = allowed > 0.5
    Hp = (P @ H @ P)[np.ix_(keep, keep)]
    spec = sc.solve(sc.t_j(sc.ring(L)))
    assert spec.n_states == 3 ** L
    _assert_spectrum(spec, {"t": 1, "J": "2/5"}, Hp)


def test_kanamori_pieces_against_jordan_wigner():
    # pair hopping and spin flip between two orbitals of one site, with their documented signs
    f = _Fermions(2)              # two "sites" = the two orbitals of one atom
    m = sc.make_model(sc.cluster(2, [(0, 1)]), [pair_hopping(0, 1, "P"), spin_flip(0, 1, "F"),
                                                exchange(0, 1, "X"), zeeman(1, "h")])
    up0, dn0, up1, dn1 = f.cc(0, 0), f.cc(0, 1), f.cc(1, 0), f.cc(1, 1)
    pair = up0.T @ dn0.T @ dn1 @ up1
    flip = up0.T @ dn0 @ dn1.T @ up1
    s = [(up0.T @ dn0, dn0.T @ up0, (f.n(0, 0) - f.n(0, 1)) / 2),
         (up1.T @ dn1, dn1.T @ up1, (f.n(1, 0) - f.n(1, 1)) / 2)]
    ex = s[0][2] @ s[1][2] + (s[0][0] @ s[1][1] + s[0][1] @ s[1][0]) / 2
    H = 0.3 * (pair + pair.T) + 0.7 * (flip + flip.T) + 1.1 * ex - 0.2 * (f.n(1, 0) - f.n(1, 1))
    spec = sc.solve(m)
    _assert_spectrum(spec, {"P": "3/10", "F": "7/10", "X": "11/10", "h": "1/5"}, H)


# ------------------------------------------------------------------ fixed couplings
def test_fixed_couplings_leave_the_free_ones_exact():
    # two-site Anderson model with eps_1 = 0 and V_1 = 1 fixed, against Jordan-Wigner:
    # H = eps_d n_0 + U n_0up n_0dn + eps_1 n_1 + V_1 sum_s (c+_0s c_1s + h.c.)
    spec = sc.solve(sc.anderson(1), fixed={"eps_1": 0, "V_1": "1"})
    assert [s.name for s in spec.symbols] == ["eps_d", "U"]
    assert spec.fixed == {"eps_1": 0, "V_1": 1}
    assert all(l.energy.free_symbols <= set(spec.symbols) for l in spec.levels
               if hasattr(l.energy, "free_symbols"))
    f = _Fermions(2)
    for eps_d, U in [(Fraction(-3, 7), Fraction(5, 2)), (Fraction(2), Fraction(-1, 3))]:
        H = (float(eps_d) * (f.n(0, 0) + f.n(0, 1)) + float(U) * f.n(0, 0) @ f.n(0, 1)
             + 1.0 * f.hop(0, 1))
        _assert_spectrum(spec, {"eps_d": eps_d, "U": U}, H)


def test_bad_fixed_values_are_refused():
    m = sc.anderson(1)
    with pytest.raises(sc.ModelError, match="not a coupling"):
        sc.solve(m, fixed={"W": 1})
    with pytest.raises(sc.ModelError, match="exact number"):
        sc.solve(m, fixed={"U": 0.5})
    with pytest.raises(sc.ModelError, match="every coupling is fixed"):
        sc.solve(m, fixed={lab: 1 for lab in m.labels})
    with pytest.raises(sc.InputError):
        sc.solve(m, fixed={"U": "1/0"})


def test_u_on_some_sites_only_shrinks_the_group():
    # a 5-site cross (Lieb-type fragment): U on the centre only keeps the square's symmetry
    # (order 8: the automorphisms of a star with four leaves fixing the centre form S_4 of
    # order 24; U on the leaves 1 and 3 only keeps the four permutations preserving {1, 3})
    cl = sc.star(4)
    terms = [hopping(0, k) for k in range(1, 5)]
    full = sc.make_model(cl, terms + [hubbard_u(i) for i in range(5)])
    part = sc.make_model(cl, terms + [hubbard_u(1), hubbard_u(3)])
    assert "lattice automorphisms (order 24)" in sc.solve(full, electrons=[1]).symmetries[0]["symmetries"]
    assert "lattice automorphisms (order 4)" in sc.solve(part, electrons=[1]).symmetries[0]["symmetries"]


def test_terms_a_space_cannot_hold_are_refused():
    # a spin space holds one spin per site (no charge moves); a projected space has no
    # doubly occupied mode for U or pair hopping to act on
    with pytest.raises(sc.ModelError, match="moves fermions between sites"):
        sc.make_model(sc.chain(2), [hopping(0, 1)], LocalSpace("spins", 2))
    with pytest.raises(sc.ModelError, match="doubly occupied"):
        sc.make_model(sc.chain(2), [hopping(0, 1), hubbard_u(0)],
                      LocalSpace("electrons", 2, projected=True))
    with pytest.raises(sc.ModelError, match="doubly occupied"):
        sc.make_model(sc.chain(2), [pair_hopping(0, 1)], LocalSpace("electrons", 2, projected=True))


def test_thermodynamics_of_a_spin_model_and_of_a_field_split_spectrum():
    # Heisenberg 4-ring multiplets (S=0: -2J, 0; S=1: -J, 0, 0; S=2: J; textbook, from
    # H = (J/2)[S^2 - S_A^2 - S_B^2]): Z(T=J=1) = e^2 + 1 + 3e + 6 + 5/e
    import math
    from symcluster.analysis.thermo import thermo_table
    spec = sc.solve(sc.heisenberg(sc.ring(4)))
    row = thermo_table(spec, {"J": 1}, [1], n_electrons=4, interaction=None)[0]
    z = math.exp(2) + 1 + 3 * math.e + 6 + 5 / math.e
    assert abs(float(row["lnZ"]) - math.log(z)) < 1e-12
    # a field-split two-site spectrum: its Sz members are counted once each (the grand
    # canonical density at mu = U/2 is exactly 2 at every T and h, particle-hole symmetry)
    spec = sc.solve(sc.with_field(sc.hubbard(sc.chain(2))))
    row = thermo_table(spec, {"t": 1, "U": 4, "h": "1/2"}, [1], mus=[2], interaction="U")[0]
    assert abs(float(row["density"]) - 2) < 1e-20
    assert float(row["magnetization"]) > 0


def test_a_spectrum_with_fixed_couplings_writes_json_and_eigenvectors_without_the_constant():
    # the fixed part of a block is an internal variable set to 1; nothing a user sees may
    # carry it: eigenvectors (H v = E v checked here in exact arithmetic against the
    # two-site matrices written in the test) and the JSON document
    import json
    import sympy
    from symcluster.export import dumps_spectrum
    spec = sc.solve(sc.anderson(1), fixed={"V_1": 1, "eps_1": 0})
    eps_d = sympy.Symbol("eps_d", real=True)
    one = [l for l in spec.levels if l.quantum_numbers.get("N") == 1]
    for lev in one:
        vec = lev.eigenvector()
        assert vec is not None
        assert all(not (sympy.sympify(c).free_symbols - {eps_d}) for c in vec.values())
        # one up electron: states (up=1, dn=0) impurity, (up=2, dn=0) bath; H = [[eps_d, 1], [1, 0]]
        a, b = vec.get((1, 0), 0), vec.get((2, 0), 0)
        E = lev.energy
        assert sympy.simplify(eps_d * a + b - E * a) == 0
        assert sympy.simplify(a - E * b) == 0
    doc = json.loads(dumps_spectrum(spec, point={"eps_d": -1, "U": 2}))
    assert doc["fixed"] == {"V_1": "1", "eps_1": "0"}
    assert "\"_1\"" not in json.dumps(doc)       # no symbol named _1 anywhere
