"""The conventions of docs/architecture.md, each tested against an independent oracle.

H = -sum_bonds sum_sigma t_b (c+_{i sigma} c_{j sigma} + h.c.) + U sum n_up n_dn + sum eps_i n_i,
fermion ordering: all up orbitals (by site), then all down orbitals (by site).
"""

import functools

import mpmath
import numpy as np
import pytest
import sympy

import symcluster as sc
from reference_fock import FockReference, expand, max_deviation

t, U = sympy.symbols("t U", real=True)


@functools.lru_cache(maxsize=None)
def ring4(electrons):
    return sc.solve(sc.hubbard(sc.ring(4)), electrons=electrons)


def _energies(spec, pt, digits=30):
    return expand(spec.numeric(pt, digits=digits))


# ---------------------------------------------------------------- sign of the hopping
@pytest.mark.parametrize("L", [3, 4, 5])
def test_one_electron_ring_ground_energy_is_minus_2t(L):
    # tight binding with -t: k = 0 orbital at -2t (Ashcroft & Mermin ch. 10, from memory)
    spec = sc.solve(sc.hubbard(sc.ring(L)), electrons=1)
    for tv in (1, sympy.Rational(7, 3)):
        e0 = spec.numeric({"t": tv, "U": 4})[0]
        assert max_deviation([e0[0]], [-2 * tv]) < 1e-28 and e0[1] == 2   # spin doublet, k = 0


def test_triangle_sign_of_t_matters():
    # ring(3), one electron: -2t cos(2 pi m / 3) = {-2t, t, t}; frustrated, so t -> -t is
    # not a symmetry (tight binding, from memory): levels -2t (x2) and t (x4)
    spec = sc.solve(sc.hubbard(sc.ring(3)), electrons=1)
    got = sorted((str(l.energy), l.degeneracy) for l in spec.levels)
    assert got == sorted([(str(-2 * t), 2), (str(t), 4)])
    assert [float(e) for e, _ in spec.numeric({"t": -1, "U": 0})] == [-1.0, 2.0]


def test_positive_hopping_lowers_bonding_orbital_dimer():
    # dimer, one electron: bonding orbital (c0 + c1)/sqrt2 at -t (Carrascal et al.,
    # J. Phys.: Condens. Matter 27, 393001 (2015))
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=1)
    low = min(spec.levels, key=lambda l: l.numeric({"t": 1, "U": 1}))
    assert sympy.simplify(low.energy + t) == 0


# ---------------------------------------------------------------- the boundary bond of a ring
@pytest.mark.parametrize("n", [2, 4])
def test_ring_boundary_bond_sign(n):
    """ring(4) with an even electron number: the boundary bond (0, 3) carries the fermion string.

    The correct reference (Jordan-Wigner strings everywhere) and a wrong one (strings dropped,
    i.e. the boundary bond's sign lost) differ in these sectors; the solver must agree with the
    correct one and not with the wrong one.
    """
    c = sc.ring(4)
    good = FockReference(4, list(c.bonds))
    bad = FockReference(4, list(c.bonds), fermionic=False)
    spec = ring4(n)
    for pt in ({"t": 1, "U": 4}, {"t": 1, "U": -2}, {"t": sympy.Rational(3, 2), "U": 0}):
        got = _energies(spec, pt)
        d_good = max_deviation(got, good.eigenvalues(pt, n=n))
        d_bad = max_deviation(got, bad.eigenvalues(pt, n=n))
        assert d_good < 1e-10, f"N={n} at {pt}: deviation {d_good:.2e} from the correct reference"
        assert d_bad > 0.1, f"N={n} at {pt}: matches the model without the boundary sign"


def test_ring_two_electrons_closed_shell_u0():
    # U = 0, N = 2 on ring(4): both electrons in k = 0, E = -4t (ground state unique, S = 0);
    # the wrong boundary sign would give antiperiodic k = +-pi/4 and E = -2 sqrt2 t (from memory)
    spec = ring4(2)
    e0, d0 = spec.numeric({"t": 1, "U": 0})[0]
    assert abs(e0 + 4) < 1e-28 and d0 == 1


# ---------------------------------------------------------------- fermion ordering
def _state_index(up, dn, L):
    return FockReference.state_index(up, dn, L)


def test_ordering_reference_singlet_sign():
    # Independent of the solver: with up orbitals first, the U = 0 dimer ground state
    # b+_up b+_dn |0>, b+ = (c+_0 + c+_1)/sqrt2, is (1/2) sum over the four states
    # c+_{i up} c+_{j dn}|0> with equal signs (derivation, common practice). Pins the
    # reference's own convention before it is used as an oracle below.
    ref = FockReference(2, [(0, 1, "t")])
    H = ref.matrix({"t": 1, "U": 0})
    v = np.zeros(16)
    for up in (0b01, 0b10):
        for dn in (0b01, 0b10):
            v[_state_index(up, dn, 2)] = 1
    assert np.allclose(H @ v, -2 * v)


def _assert_columns(L, ops):
    """Each operator ``op(up, dn) -> [(coefficient, (up', dn'))]`` gives, on every basis
    state, the column of its reference matrix (Jordan-Wigner, up orbitals first)."""
    for up in range(2 ** L):
        for dn in range(2 ** L):
            col = _state_index(up, dn, L)
            for op, mat in ops:
                have = {_state_index(*st, L): c for c, st in op(up, dn)}
                exp = {r: int(mat[r, col]) for r in np.nonzero(mat[:, col])[0]}
                assert have == exp, f"column (up={up:b}, dn={dn:b})"


def _model_and_reference(cluster):
    """The Hubbard model of `cluster` and the Jordan-Wigner reference's dense label matrices."""
    labels = {i: lab for i, lab in enumerate(cluster.site_labels) if lab}
    ref = FockReference(cluster.n_sites, list(cluster.bonds), labels)
    return sc.hubbard(cluster), {k: v.toarray() for k, v in ref.terms.items()}


@pytest.mark.parametrize("cluster", [sc.ring(4), sc.chain(3), sc.ring(3),
                                     sc.cluster(3, [(0, 2, "t"), (1, 2, "tp")],
                                                site_labels={1: "eps"})],
                         ids=["ring4", "chain3", "ring3", "custom"])
def test_hamiltonian_matrix_elements_in_up_first_ordering(cluster):
    # every matrix element <up',dn'|H|up,dn> of symcluster's operator layer equals the
    # Jordan-Wigner reference's, with basis states ordered up orbitals first
    from symcluster.hilbert.action import apply_hamiltonian
    L = cluster.n_sites
    model, dense = _model_and_reference(cluster)
    for up in range(2 ** L):
        for dn in range(2 ** L):
            col = _state_index(up, dn, L)
            got = apply_hamiltonian(model, up, dn)
            for name, mat in dense.items():
                exp = {r: int(mat[r, col]) for r in np.nonzero(mat[:, col])[0]}
                have = {_state_index(*st, L): row[name] for st, row in got.items() if name in row}
                assert have == exp, f"{cluster.name} H[{name}] column (up={up:b}, dn={dn:b})"


def test_spin_and_eta_operators_in_up_first_ordering():
    # S+ = sum c+_{i up} c_{i dn} and eta+ = sum eps_i c+_{i up} c+_{i dn}, sign by sign
    # (Yang, PRL 63, 2144 (1989), from memory), against the reference's operators
    from symcluster.hilbert.ladder import apply_eta_plus, apply_s_plus
    L = 4
    signs = [1, -1, 1, -1]
    ref = FockReference(L, list(sc.ring(4).bonds))
    sp_ = ref.spin_plus().toarray()
    ep_ = ref.eta_plus(signs).toarray()
    _assert_columns(L, [(lambda u, d: apply_s_plus(L, u, d), sp_),
                        (lambda u, d: apply_eta_plus(signs, u, d), ep_)])


# ---------------------------------------------------------------- units / homogeneity
@pytest.mark.parametrize("lam", [sympy.Integer(3), sympy.Rational(2, 7), sympy.Integer(-2)])
def test_homogeneity(lam):
    # H is linear in (t, U): E(lam t, lam U) = lam E(t, U) for every real lam (exact)
    base = {"t": sympy.Rational(5, 4), "U": sympy.Rational(-8, 3)}
    scaled = {k: lam * v for k, v in base.items()}
    for n in (2, 4):
        spec = ring4(n)
        with mpmath.workdps(40):
            a = sorted(mpmath.mpf(lam.p) / lam.q * e for e in _energies(spec, base))
        b = _energies(spec, scaled)
        assert max_deviation(a, b) < 1e-25


def test_homogeneity_symbolic_dimer():
    lam = sympy.Symbol("lam", positive=True)
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    for lev in spec.levels:
        e = lev.energy
        assert sympy.simplify(e.subs({t: lam * t, U: lam * U}, simultaneous=True) - lam * e) == 0


def test_energies_carry_units_of_couplings():
    # Setting t = 1 and restoring: E(t, U) = t E(1, U/t) for t > 0 (exact)
    spec = sc.solve(sc.hubbard(sc.tetrahedron()), electrons=2)
    tv, uv = sympy.Rational(9, 4), sympy.Rational(3, 1)
    a = _energies(spec, {"t": tv, "U": uv})
    with mpmath.workdps(40):
        b = [mpmath.mpf(9) / 4 * e for e in _energies(spec, {"t": 1, "U": uv / tv})]
    assert max_deviation(a, sorted(b)) < 1e-25


# ---------------------------------------------------------------- memoised operator layer
@pytest.mark.parametrize("cluster", [sc.ring(4), sc.chain(3),
                                     sc.cluster(4, [(0, 1), (1, 2, "tp"), (2, 3), (0, 3, "tp")],
                                                site_labels={0: "e", 2: "e", 3: "f"})],
                         ids=["ring4", "chain3", "labels"])
def test_hamiltonian_action_matches_reference_and_apply_hamiltonian(cluster):
    # HamiltonianAction (the per-solve memo) gives every matrix element of the Jordan-Wigner
    # reference, and exactly apply_hamiltonian's entries in the same order
    from symcluster.hilbert.action import HamiltonianAction, apply_hamiltonian
    L = cluster.n_sites
    model, dense = _model_and_reference(cluster)
    h = HamiltonianAction(model)
    assert set(h.labels) == set(dense)
    for up in range(2 ** L):
        for dn in range(2 ** L):
            got = h[up, dn]
            assert h[up, dn] is got                         # computed once, then kept
            flat = [(s2, lab, a) for s2, row in apply_hamiltonian(model, up, dn).items()
                    for lab, a in row.items()]
            assert list(got) == flat
            col = _state_index(up, dn, L)
            for name, mat in dense.items():
                exp = {r: int(mat[r, col]) for r in np.nonzero(mat[:, col])[0]}
                have = {_state_index(*st, L): a for st, lab, a in got if lab == name}
                assert have == exp, f"{name} column (up={up:b}, dn={dn:b})"


def test_hamiltonian_action_merges_repeated_bonds_and_site_terms():
    # a hand-made model: bond (0, 1) twice with label t and once reversed, a site energy
    # repeated on one site; H is then the reference with those terms counted that often
    from symcluster.models import make_model
    from symcluster.models.terms import hopping, hubbard_u, onsite as onsite_term
    from symcluster.hilbert.action import HamiltonianAction
    c = sc.ring(4)
    hops = c.bonds + ((0, 1, "t"), (1, 0, "t"))
    onsite = ((0, "e"), (0, "e"), (2, "e"))
    terms = ([hopping(i, j, lab) for i, j, lab in hops] + [onsite_term(i, lab) for i, lab in onsite]
             + [hubbard_u(i, "U") for i in range(4)])
    model = make_model(c, terms)
    ref = FockReference(4, list(hops))
    site = {i: FockReference(4, [], {i: "e"}).terms["e"] for i in (0, 2)}
    e_ref = 2 * site[0] + site[2]
    dense = {"t": ref.terms["t"].toarray(), "U": ref.terms["U"].toarray(), "e": e_ref.toarray()}
    h = HamiltonianAction(model)
    for up in range(16):
        for dn in range(16):
            got = h[up, dn]
            keys = [(st, lab) for st, lab, _ in got]
            assert len(set(keys)) == len(keys) and all(a for _, _, a in got)
            col = _state_index(up, dn, 4)
            for name, mat in dense.items():
                exp = {r: int(mat[r, col]) for r in np.nonzero(mat[:, col])[0]}
                have = {_state_index(*st, 4): a for st, lab, a in got if lab == name}
                assert have == exp, f"{name} column (up={up:b}, dn={dn:b})"


def test_lowering_operators_in_up_first_ordering():
    # S- = (S+)^T and eta- = (eta+)^T in the real Fock basis, against the reference
    from symcluster.hilbert.ladder import apply_eta_minus, apply_s_minus
    L = 4
    signs = [1, -1, -1, 1]
    ref = FockReference(L, list(sc.ring(4).bonds))
    sm = ref.spin_plus().T.toarray()
    em = ref.eta_plus(signs).T.toarray()
    _assert_columns(L, [(lambda u, d: apply_s_minus(L, u, d), sm),
                        (lambda u, d: apply_eta_minus(signs, u, d), em)])


def test_per_state_memo_calls_the_operator_once_per_state():
    from symcluster.hilbert.ladder import apply_s_plus, per_state_memo
    calls = []

    def op(state):
        calls.append(state)
        return apply_s_plus(3, *state)

    f = per_state_memo(op)
    states = [(0b001, 0b110), (0b000, 0b111), (0b001, 0b110)]
    got = [f(s) for s in states]
    assert calls == states[:2]
    assert got == [apply_s_plus(3, *s) for s in states]
    assert got[0] is got[2]


def _plain_spin_ring_ground(L):
    """Ground state of sum S_i.S_(i+1) on an L-ring (Sz = 0) in plain spin states (no
    fermion signs), with its translation and reflection eigenvalues."""
    states = [s for s in range(1 << L) if bin(s).count("1") == L // 2]
    idx = {s: i for i, s in enumerate(states)}
    h = np.zeros((len(states), len(states)))
    for s in states:
        i = idx[s]
        for a in range(L):
            b = (a + 1) % L
            if (s >> a) & 1 == (s >> b) & 1:
                h[i, i] += 0.25
            else:
                h[i, i] -= 0.25
                h[idx[s ^ (1 << a) ^ (1 << b)], i] += 0.5
    _, vecs = np.linalg.eigh(h)
    g = vecs[:, 0]
    full = (1 << L) - 1
    t = [idx[((s << 1) | (s >> (L - 1))) & full] for s in states]
    r = [idx[sum(((s >> i) & 1) << ((-i) % L) for i in range(L))] for s in states]
    return round(float(g @ g[t])), round(float(g @ g[r]))


@pytest.mark.parametrize("L", [4, 6, 8])
def test_spin_ring_labels_against_a_plain_spin_translation(L):
    """docs/conventions.md: on spin models the translation is (-1)^(L-1) times the plain
    spin translation and the reflection fixing site 0 is (-1)^((L-1)(L-2)/2) times the
    plain one.  The plain eigenvalues come from a dense spin computation written here;
    the ground state is non-degenerate (Lieb-Mattis), so its eigenvalues are +-1."""
    t_plain, r_plain = _plain_spin_ring_ground(L)
    spec = sc.solve(sc.heisenberg(sc.ring(L)))
    point = spec.point({"J": 1})
    ground = min(spec.levels, key=lambda lev: lev.numeric(point, digits=20))
    t_sign = t_plain * (-1) ** (L - 1)
    r_sign = r_plain * (-1) ** ((L - 1) * (L - 2) // 2)
    want = ("k=0," if t_sign == 1 else "k=π,") + ("+" if r_sign == 1 else "−")
    assert ground.quantum_numbers["irrep"] == want
