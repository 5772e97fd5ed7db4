"""Symmetry reduction: block sizes by counting, and reductions never change the spectrum.

Block dimensions are compared with multiplicities obtained from characters
alone (count, not construct): for a level family (S, eta, Gamma) the number of
highest-weight (spin) / lowest-weight (eta) states of one irrep row is, by
the representation theory of SU(2) x SU(2) (any text on angular momentum,
e.g. Sakurai, Modern Quantum Mechanics, sec. 3.5 -- common practice),

    m = n_G(Nu, Nd) - n_G(Nu+1, Nd-1) - n_Gx(Nu-1, Nd-1) + n_Gx(Nu, Nd-2)

where n_G(sector) is the character count of irrep G in that sector and Gx
is G times the sublattice character (eta- changes the lattice irrep by it).
"""

import re

import pytest
import sympy

import symcluster as sc
from symcluster.blocks.build import build_blocks, plan_symmetries
from symcluster.hilbert.fock import sector_states
from symcluster.symmetry.lattice import multiplicity


def _count(plan, irrep, n_up, n_dn, L):
    if not (0 <= n_up <= L and 0 <= n_dn <= L):
        return 0
    states = sector_states(L, n_up, n_dn)
    return multiplicity(states, plan.lattice.group, irrep)


def _twisted(plan, irrep):
    target = [a * b for a, b in zip(irrep.character, plan.sublattice_char)]
    return next(r for r in plan.lattice.irreps if list(r.character) == target)


@pytest.mark.parametrize("cluster", [sc.ring(4), sc.tetrahedron(), sc.grid(2, 3), sc.chain(4)],
                         ids=lambda c: c.name)
def test_block_sizes_equal_character_counts(cluster):
    model = sc.hubbard(cluster)
    plan = plan_symmetries(model)
    L = cluster.n_sites
    blocks = build_blocks(model, plan)
    assert blocks
    for b in blocks:
        n_up, n_dn = b.sector
        g = b.irrep
        gx = _twisted(plan, g) if plan.eta else None
        m = _count(plan, g, n_up, n_dn, L) - _count(plan, g, n_up + 1, n_dn - 1, L)
        if plan.eta:
            m -= _count(plan, gx, n_up - 1, n_dn - 1, L) - _count(plan, gx, n_up, n_dn - 2, L)
        expected = m * b.copies * g.orbit_size
        assert len(b.vectors) == expected, (cluster.name, b.sector, g.label)


def _families(spec):
    """{N: {polynomial: total degeneracy}} -- an exact fingerprint of a spectrum."""
    out = {}
    for lev in spec.levels:
        key = sympy.expand(lev.polynomial.as_expr())
        row = out.setdefault(lev.quantum_numbers["N"], {})
        row[key] = row.get(key, 0) + lev.degeneracy
    return out


def _merge(fam):
    """Merge equal polynomials' degeneracies per N (reductions may split one family)."""
    return {n: dict(sorted((str(k), v) for k, v in row.items())) for n, row in fam.items()}


@pytest.mark.parametrize("cluster", [sc.chain(2), sc.ring(3), sc.ring(4), sc.star(3)],
                         ids=lambda c: c.name)
def test_every_reduction_gives_the_same_spectrum_exactly(cluster):
    model = sc.hubbard(cluster)
    full = sc.solve(model, seed=3)
    none = sc.solve(model, lattice=False, spin=False, eta=False, seed=3)
    # exact comparison: product of P^(deg) per N as one polynomial
    for n in range(2 * cluster.n_sites + 1):
        def product(spec):
            acc = sympy.Integer(1)
            for lev in spec.levels:
                if lev.quantum_numbers["N"] == n:
                    p = lev.polynomial
                    d = p.degree(p.gens[0])
                    acc *= p.as_expr() ** sympy.Rational(lev.degeneracy, d)
            return acc
        a, b = product(full), product(none)
        assert sympy.expand(a - b) == 0 or sympy.simplify(a / b) == 1, n
    assert full.n_states == none.n_states == 4 ** cluster.n_sites


def test_ring6_reductions_agree_numerically_at_30_digits():
    model = sc.hubbard(sc.ring(6))
    full = sc.solve(model, electrons=[3, 6], seed=5)
    plain = sc.solve(model, electrons=[3, 6], lattice=False, eta=False, seed=5)
    pt = {"t": sympy.Rational(7, 5), "U": sympy.Rational(-23, 7)}
    a = [v for v, d in full.numeric(pt, 30) for _ in range(d)]
    b = [v for v, d in plain.numeric(pt, 30) for _ in range(d)]
    from math import comb
    assert len(a) == len(b) == comb(12, 3) + comb(12, 6)
    assert max(abs(x - y) for x, y in zip(a, b)) < 1e-28


def test_labels_present():
    spec = sc.solve(sc.hubbard(sc.ring(4)), electrons=4)
    assert {lev.quantum_numbers["eta"] for lev in spec.levels} == {0, 1, 2}
    for lev in spec.levels:
        qn = lev.quantum_numbers
        assert isinstance(qn["S"], sympy.Rational)
        # eta_z = (N - L)/2 = 0 at half filling: every eta >= 0 occurs, integer-valued
        assert qn["eta"] >= 0 and qn["eta"].is_integer
        assert "irrep" in qn and lev.degeneracy % ((2 * qn["S"] + 1) * qn["irrep_dim"]) == 0


def test_eigenvectors_of_small_blocks_are_eigenvectors():
    """H v = E v checked with the model's own Hamiltonian action at a rational point."""
    from symcluster.hilbert.action import apply_hamiltonian
    model = sc.hubbard(sc.ring(4))
    spec = sc.solve(model, electrons=[2, 3])
    pt = {sympy.Symbol("t", real=True): sympy.Rational(3, 2),
          sympy.Symbol("U", real=True): sympy.Rational(17, 3)}
    checked = 0
    E = sympy.Symbol("E", real=True)
    for lev in spec.levels:
        vec = lev.eigenvector()
        if vec is None:
            continue
        e_val = sympy.N(lev.energy.subs(pt), 40)
        num = {s: sympy.N(sympy.sympify(c).subs(pt).subs(E, e_val), 40) for s, c in vec.items()}
        hv = {}
        for s, c in num.items():
            for s2, row in apply_hamiltonian(model, *s).items():
                hv[s2] = hv.get(s2, 0) + c * sum(a * pt[sympy.Symbol(l, real=True)]
                                                for l, a in row.items())
        norm = max(abs(c) for c in num.values())
        assert norm > 1e-20
        for s in set(hv) | set(num):
            assert abs(hv.get(s, 0) - e_val * num.get(s, 0)) < 1e-30 * (1 + norm)
        checked += 1
    assert checked >= 10


@pytest.mark.parametrize("cluster", [sc.ring(4), sc.chain(4), sc.ladder(3), sc.ring(6)],
                         ids=["ring4", "chain4", "ladder3", "ring6"])
def test_gauge_twin_blocks_have_t_negated_characteristic_polynomials(cluster):
    # Theorem (sublattice gauge transformation on a bipartite cluster, e.g. Lieb, PRL 62,
    # 1201 (1989), and Shiba's transformation): G = prod_{i in B} (-1)^{n_i} maps H(t, U)
    # to H(-t, U) and, for odd N, the lattice irrep Gamma onto Gamma x chi_sub.  The
    # solver derives such twin blocks instead of solving them; here both characteristic
    # polynomials are computed directly and compared symbolically.
    from symcluster.algebra.charpoly import charpoly
    from symcluster.blocks.build import build_blocks, plan_symmetries
    from symcluster.pipeline.solve import gauge_twins
    model = sc.hubbard(cluster)
    plan = plan_symmetries(model)
    blocks = build_blocks(model, plan)
    twins = gauge_twins(model, plan, blocks)
    # each has a symmetry that swaps the sublattices, so twins exist at odd N
    assert twins
    t = sympy.Symbol("t", real=True)
    for j, i in twins.items():
        assert blocks[j].labels["N"] % 2 == 1
        assert blocks[j].labels["irrep"] != blocks[i].labels["irrep"]
        pj = charpoly(blocks[j].block, model.labels).as_expr()
        pi = charpoly(blocks[i].block, model.labels).as_expr()
        assert sympy.expand(pj - pi.subs(t, -t)) == 0


@pytest.mark.parametrize("cluster", [sc.ring(4), sc.chain(4), sc.ring(6)],
                         ids=["ring4", "chain4", "ring6"])
def test_equal_blocks_are_equal_matrices_and_solved_once(cluster):
    # A block whose matrix equals an earlier one, entry for entry, takes that block's
    # factors (a copy).  Here both are solved on their own and compared, and the solved
    # spectrum gives every block Poly objects of its own (the verification counts roots
    # per object).
    from symcluster.pipeline.solve import equal_blocks, gauge_twins, solve_block
    model = sc.hubbard(cluster)
    plan = plan_symmetries(model)
    blocks = build_blocks(model, plan)
    twins = gauge_twins(model, plan, blocks)
    copies = equal_blocks(blocks, skip=twins)
    assert copies                       # e.g. the 1x1 zero blocks of several sectors
    for i, j in copies.items():
        assert i not in twins and j not in twins and j < i and j not in copies
        assert blocks[i].block.dim == blocks[j].block.dim
        assert blocks[i].block.terms == blocks[j].block.terms
        got = solve_block(blocks[i], model.labels)
        want = solve_block(blocks[j], model.labels)
        assert [(f.as_expr(), m, r) for f, m, r in got] == \
            [(f.as_expr(), m, r) for f, m, r in want]
    # and no two equal blocks are both solved
    for i, j in copies.items():
        for k in range(len(blocks)):
            if k != j and k not in copies and k not in twins and \
                    blocks[k].block.terms == blocks[i].block.terms and \
                    blocks[k].block.dim == blocks[i].block.dim:
                pytest.fail(f"blocks {k} and {j} are equal but both solved")
    spec = sc.solve(model, seed=3)
    by_block = {}
    for lev in spec.levels:
        by_block.setdefault(id(lev.polynomial), set()).add(lev.block)
    assert all(len(v) == 1 for v in by_block.values())


# ---------------------------------------------------------------- block matrices
def _reference_terms(cluster):
    """Integer matrices per coupling of the Jordan-Wigner reference, and its state index."""
    from reference_fock import FockReference
    labels = {i: lab for i, lab in enumerate(cluster.site_labels) if lab}
    ref = FockReference(cluster.n_sites, list(cluster.bonds), labels)
    return {k: v.toarray() for k, v in ref.terms.items()}, FockReference.state_index


@pytest.mark.parametrize("cluster", [sc.ring(4), sc.cluster(4, [(0, 1), (1, 2, "tp"), (2, 3)],
                                                            site_labels={1: "e"})],
                         ids=["ring4", "labels"])
def test_block_entries_are_reference_matrix_elements(cluster):
    # M_ij = (H w_j)[p_i] / w_i[p_i] with H from the independent reference
    from fractions import Fraction
    model = sc.hubbard(cluster)
    plan = plan_symmetries(model)
    dense, index = _reference_terms(cluster)
    L = cluster.n_sites
    for b in build_blocks(model, plan):
        for name, mat in dense.items():
            got = b.block.terms.get(name, {})
            # exact entries: an int where the pivot divides the entry, else a Fraction
            assert all(type(v) is int or (type(v) is Fraction and v.denominator != 1)
                       for v in got.values())
            for i, p in enumerate(b.pivots):
                row = index(*p, L)
                for j, w in enumerate(b.vectors):
                    hw = sum(int(mat[row, index(*s, L)]) * x for s, x in w.items())
                    assert got.get((i, j), 0) == Fraction(hw, b.vectors[i][p]), (b.sector, name)


def test_invariance_check_names_the_first_state_outside_the_span():
    # one basis vector |s>: H|s> leaves its span at every state a hop reaches
    from symcluster.blocks.build import _matrix_of_h
    from symcluster.errors import VerificationError
    from symcluster.hilbert.action import HamiltonianAction, apply_hamiltonian
    model = sc.hubbard(sc.ring(4))
    s = (0b0011, 0b0101)
    first = next(st for st in apply_hamiltonian(model, *s) if st != s)
    message = re.escape(f"not invariant under H (state {first})")
    with pytest.raises(VerificationError, match=message):
        _matrix_of_h(HamiltonianAction(model), [{s: 1}], [s])
    # an invariant one passes: the whole sector with its identity basis
    states = [(u, d) for u in (3, 5, 6, 9, 10, 12) for d in (3, 5, 6, 9, 10, 12)]
    blk = _matrix_of_h(HamiltonianAction(model), [{st: 1} for st in states], states)
    assert blk.dim == 36


def test_blocks_do_not_depend_on_the_shared_hamiltonian_memo():
    import dataclasses
    model = sc.hubbard(sc.grid(2, 2))
    plan = plan_symmetries(model)
    assert plan.action is not None and len(plan.action) > 0     # filled by the checks
    shared = build_blocks(model, plan)
    fresh = build_blocks(model, dataclasses.replace(plan, action=None))
    assert len(shared) == len(fresh)
    for a, b in zip(shared, fresh):
        assert (a.sector, a.labels, a.pivots) == (b.sector, b.labels, b.pivots)
        assert a.vectors == b.vectors
        assert a.block.terms == b.block.terms


# ---------------------------------------------------------------- kernels (linalg)
def test_kernel_of_shortcuts_and_a_brute_force_null_space():
    from symcluster.linalg import apply_op, kernel_of
    from symcluster.hilbert.ladder import apply_s_plus
    L = 4
    op = lambda s: apply_s_plus(L, *s)
    # S+ annihilates every state without down electrons: the input comes back
    vecs = [{(0b0011, 0): 1}, {(0b0101, 0): 2, (0b1001, 0): -1}]
    assert kernel_of(op, vecs, [(0b0011, 0), (0b0101, 0)]) == (vecs, [(0b0011, 0), (0b0101, 0)])
    # one vector with a non-zero image: nothing of its span survives
    assert kernel_of(op, [{(0b0001, 0b0010): 1}], [(0b0001, 0b0010)]) == ([], [])
    # the whole sector (2, 1): kernel = highest-weight states, dimension
    # C(4,2) C(4,1) - C(4,3) C(4,0) = 20 (spin counting)
    states = sector_states(L, 2, 1)
    basis, piv = kernel_of(op, [{s: 1} for s in states], list(states))
    assert len(basis) == 20
    for i, (v, p) in enumerate(zip(basis, piv)):
        assert not apply_op(op, v)
        assert v[p] and all(p not in w for j, w in enumerate(basis) if j != i)
    # same span as sympy's null space of the S+ matrix
    targets = sector_states(L, 3, 0)
    col = {s: c for c, s in enumerate(states)}
    m = sympy.zeros(len(targets), len(states))
    for s in states:
        for a, t2 in op(s):
            m[targets.index(t2), col[s]] += a
    null = m.nullspace()
    ours = sympy.Matrix([[v.get(s, 0) for s in states] for v in basis]).T
    assert ours.rank() == len(null) == sympy.Matrix.hstack(ours, *null).rank()


# ---------------------------------------------------------------- symmetry detection
@pytest.mark.parametrize("cluster", [sc.ring(4), sc.chain(3),
                                     sc.cluster(4, [(0, 1), (1, 2), (2, 3), (3, 0)],
                                                site_labels=["e"] * 4),
                                     sc.cluster(4, [(0, 1), (1, 2), (2, 3), (3, 0)],
                                                site_labels={0: "e"}),
                                     sc.ring(3)],
                         ids=["ring4", "chain3", "uniform_e", "one_e", "ring3"])
def test_eta_detection_agrees_with_reference_commutators(cluster):
    # [H_lab, eta+] = c_lab eta+ for every coupling, computed on the full Fock space of the
    # reference, exactly when the plan reports eta symmetry with shift {lab: c_lab}
    import numpy as np
    from reference_fock import FockReference
    model = sc.hubbard(cluster)
    plan = plan_symmetries(model)
    assert plan.spin                       # every model here is spin-independent
    sub = cluster.sublattices()
    if sub is None:
        assert plan.eta is None
        return
    signs = [1 if i in sub[0] else -1 for i in range(cluster.n_sites)]
    labels = {i: lab for i, lab in enumerate(cluster.site_labels) if lab}
    ref = FockReference(cluster.n_sites, list(cluster.bonds), labels)
    eta = ref.eta_plus(signs).toarray()
    shift, ok = {}, True
    for lab, mat in ref.terms.items():
        comm = mat.toarray() @ eta - eta @ mat.toarray()
        c = comm[np.nonzero(eta)][0] / eta[np.nonzero(eta)][0]
        ok = ok and np.array_equal(comm, c * eta)
        if c:
            shift[lab] = int(c)
    if ok:
        assert plan.eta == (signs, shift)
    else:
        assert plan.eta is None


def test_a_factor_met_in_several_blocks_gets_its_closed_forms_once(monkeypatch):
    # within one solve, the closed forms of equal factors are written once and shared
    # (and polynomials in the couplings shared between factors); each block's factors
    # and roots equal those of solving it alone, tree for tree
    import sys
    from symcluster.pipeline.derived import Written, equal_blocks, gauge_twins
    from symcluster.pipeline.solve import _generators, solve_block
    solve_mod = sys.modules["symcluster.pipeline.derived"]     # where the forms are written
    model = sc.hubbard(sc.ring(4))
    plan = plan_symmetries(model)
    blocks = build_blocks(model, plan)
    skip = gauge_twins(model, plan, blocks)
    skip = {**skip, **equal_blocks(blocks, skip=skip)}
    todo = [b for i, b in enumerate(blocks) if i not in skip]
    gens = _generators(tuple(model.labels))
    calls = []
    real = solve_mod.closed_forms

    def counting(rep, g, **kwargs):
        calls.append(tuple(sorted(rep.items())))
        return real(rep, g, **kwargs)

    monkeypatch.setattr(solve_mod, "closed_forms", counting)
    written = Written()
    shared = [solve_block(b, model.labels, gens, written) for b in todo]
    assert len(calls) == len(set(calls)) == len(written.by_factor)
    calls.clear()
    alone = [solve_block(b, model.labels, gens) for b in todo]
    assert len(calls) > len(written.by_factor)      # ring(4) has factors in several blocks
    for a, b in zip(shared, alone):
        assert [(f.as_expr(), m, r) for f, m, r in a] == [(f.as_expr(), m, r) for f, m, r in b]
