"""The verification's plain sector matrices (symcluster/verify/plain.py) against the
Kronecker-product Jordan-Wigner reference of tests/reference_fock.py."""

from fractions import Fraction
from itertools import product

import numpy as np
import pytest

import symcluster as sc
from symcluster.verify.plain import sector_matrices, sector_matrix, sector_occupations
from symcluster.errors import VerificationError
from symcluster.models.model import make_model
from symcluster.models.terms import Term

from reference_fock import FockReference, operator_matrix

_MODELS = {
    "t-J ring(4)": lambda: sc.t_j(sc.ring(4)),
    "Heisenberg ring(5)": lambda: sc.heisenberg(sc.ring(5)),
    "Kanamori 2 orbitals": lambda: sc.kanamori(2),
    "Anderson 2 bath sites": lambda: sc.anderson(2),
    "Hubbard chain(3) in a field": lambda: sc.with_field(sc.hubbard(sc.chain(3))),
    "extended Hubbard ring(4)": lambda: sc.hubbard(sc.ring(4), V="V"),
}


def _allowed(kind, projected, n_modes, up, dn):
    """The local spaces of docs (written out here): spins one fermion per site, projected
    electrons no doubly occupied mode."""
    occ_up = [(up >> m) & 1 for m in range(n_modes)]
    occ_dn = [(dn >> m) & 1 for m in range(n_modes)]
    if kind == "spins":
        return all(a + b == 1 for a, b in zip(occ_up, occ_dn))
    if projected:
        return not any(a and b for a, b in zip(occ_up, occ_dn))
    return True


def _reference_sector(model, n_up, n_dn, matrices):
    """{label: dense Fraction array} of one sector, and its states (up, dn), sorted;
    ``matrices`` are the terms' :func:`operator_matrix`."""
    space = model.space
    m = space.n_modes
    states = sorted((u, d) for u, d in product(range(2 ** m), repeat=2)
                    if bin(u).count("1") == n_up and bin(d).count("1") == n_dn
                    and _allowed(space.kind, space.projected, m, u, d))
    idx = [FockReference.state_index(u, d, m) for u, d in states]
    out = {}
    for term, (mat, den) in zip(model.terms, matrices):
        block = mat[idx][:, idx].toarray()
        acc = out.setdefault(term.label, np.zeros(block.shape, dtype=object))
        acc += np.vectorize(lambda a: Fraction(int(a), den), otypes=[object])(block)
    return states, out


@pytest.mark.parametrize("name", sorted(_MODELS))
def test_plain_sector_matrices_match_the_kronecker_reference(name):
    # every sector of the model, every label: the projected matrix P H P on the sector's
    # states in ascending (up mask, down mask) order, entry for entry, exactly
    model = _MODELS[name]()
    sectors = model.space.sectors()
    built = sector_matrices(model, sectors)
    matrices = [operator_matrix(term.operator, model.space.n_modes) for term in model.terms]
    for sector in sectors:
        states, ref = _reference_sector(model, *sector, matrices)
        got = built[sector].as_dicts()
        assert built[sector].dim == len(states)
        assert sector_matrix(model, *sector).as_dicts() == got       # one sector alone
        for label, mat in ref.items():
            want = {(i, j): v for (i, j), v in np.ndenumerate(mat) if v != 0}
            assert {k: Fraction(v) for k, v in got.get(label, {}).items()} == want, (sector, label)


@pytest.mark.parametrize("name", sorted(_MODELS))
def test_plain_basis_is_the_package_sector_order(name):
    # the order the lattice-label check assumes: LocalSpace.sector_states (public)
    space = _MODELS[name]().space
    m = space.n_modes
    for sector in space.sectors():
        occ = sector_occupations(space, *sector)
        mine = [(sum(int(r[k]) << k for k in range(m)), sum(int(r[m + k]) << k for k in range(m)))
                for r in occ]
        assert mine == space.sector_states(*sector)


def test_a_term_that_changes_the_sector_is_refused():
    # c+_{0 up} c_{0 dn} changes N_up - N_dn: the verification checks sector by sector
    flip = Term("custom", "h", (0,), ((((0, 0, True), (0, 1, False)), Fraction(1)),))
    with pytest.raises(sc.ModelError, match="changes N_up"):
        make_model(sc.chain(2), [flip])
    # built around the validation, the plain route still refuses it on its own
    model = sc.Model(sc.chain(2), sc.hubbard(sc.chain(2)).space, (flip,), "custom")
    with pytest.raises(VerificationError, match="changes"):
        sector_matrix(model, 0, 1)


def test_plain_route_sees_a_wrong_sign_convention():
    # the same hopping with the Jordan-Wigner strings dropped (hard-core bosons,
    # FockReference(fermionic=False)) differs on the ring's boundary bond: the plain
    # matrices follow the fermion reference, not the boson one
    model = sc.hubbard(sc.ring(4))
    L = 4
    boson = FockReference(L, [(i, (i + 1) % L, "t") for i in range(L)], fermionic=False)
    fermion = FockReference(L, [(i, (i + 1) % L, "t") for i in range(L)])
    states = model.space.sector_states(2, 0)       # one fermion passed on the boundary bond
    idx = [FockReference.state_index(u, d, L) for u, d in states]
    got = np.zeros((len(states), len(states)), dtype=int)
    for (i, j), v in sector_matrix(model, 2, 0).as_dicts()["t"].items():
        got[i, j] = v
    assert np.array_equal(got, fermion.terms["t"][idx][:, idx].toarray())
    assert not np.array_equal(got, boson.terms["t"][idx][:, idx].toarray())


def test_plain_route_imports_nothing_of_the_block_builder():
    # the independence claimed in docs/verification.md, read off the module's imports
    # (Python's ast): nothing from symcluster.hilbert, directly or relatively
    import ast
    import symcluster.verify.plain as plain
    tree = ast.parse(open(plain.__file__, encoding="utf-8").read())
    names = []
    for node in ast.walk(tree):
        if isinstance(node, ast.ImportFrom):
            names.append("." * node.level + (node.module or ""))
        elif isinstance(node, ast.Import):
            names.extend(a.name for a in node.names)
    parts = {p for n in names for p in n.strip(".").split(".")}
    assert names and not parts & {"hilbert", "action", "fock", "ladder"}, names
