"""Model files (symcluster.models.modelfile): every term kind read into the model built in
Python, the families, the worked example files solved against independent dense
references written here, and every kind of bad input refused with one message."""

import doctest
import os
from fractions import Fraction
from functools import reduce

import numpy as np
import pytest
import scipy.sparse as sp
import sympy

import symcluster as sc
from symcluster.errors import ClusterError, InputError, ModelError, SymclusterError
from symcluster.models import model as model_module
from symcluster.models import modelfile
from symcluster.models.modelfile import MAX_BYTES, load_model_file, parse_model_toml
from symcluster.models.terms import (chemical_potential, density_density, exchange, exchange_xy,
                                     exchange_z, hopping, hubbard_u, hybridization,
                                     number_product, onsite, pair_hopping, spin_flip, zeeman)

HERE = os.path.dirname(os.path.abspath(__file__))
WORKED = os.path.join(os.path.dirname(HERE), "worked")
HEAD = 'format = "symcluster-model"\nversion = 1\n'
ELECTRONS3 = HEAD + '[space]\nkind = "electrons"\nsites = 3\n'
SPINS3 = HEAD + '[space]\nkind = "spins"\nsites = 3\n'


def _terms(text):
    return parse_model_toml(text)[0].terms


# --------------------------------------------------------------------------- every kind

F = Fraction
KIND_CASES = [
    ("hopping", ELECTRONS3, 'coupling = "t"\nbonds = [[0, 1], [2, 1]]\nspin = "down"\n'
     'factor = "-1/2"', [hopping(0, 1, "t", 1, F(-1, 2)), hopping(2, 1, "t", 1, F(-1, 2))]),
    ("hopping", ELECTRONS3, 'coupling = "t"\nbonds = [[0, 1]]', [hopping(0, 1, "t")]),
    ("hybridization", ELECTRONS3, 'coupling = "V"\nbonds = [[0, 2]]\nfactor = 3',
     [hybridization(0, 2, "V", 3)]),
    ("onsite", ELECTRONS3, 'coupling = "eps"\nsites = [1, 2]', [onsite(1, "eps"), onsite(2, "eps")]),
    ("hubbard_u", ELECTRONS3, 'coupling = "U"\nsites = "all"',
     [hubbard_u(0, "U"), hubbard_u(1, "U"), hubbard_u(2, "U")]),
    ("number_product", ELECTRONS3, 'coupling = "W"\nspin = ["up", "down"]\nbonds = [[0, 1]]',
     [number_product(0, 0, 1, 1, "W")]),
    ("density_density", ELECTRONS3, 'coupling = "V"\nbonds = [[0, 1]]\nfactor = "0.25"',
     [density_density(0, 1, "V", F(1, 4))]),
    ("zeeman", ELECTRONS3, 'coupling = "h"\nsites = [0]', [zeeman(0, "h")]),
    ("chemical_potential", ELECTRONS3, 'coupling = "mu"\nsites = "all"',
     [chemical_potential(m, "mu") for m in range(3)]),
    ("exchange", SPINS3, 'coupling = "J"\nbonds = [[0, 1], [1, 2]]',
     [exchange(0, 1, "J"), exchange(1, 2, "J")]),
    ("exchange_z", SPINS3, 'coupling = "J_z"\nbonds = [[0, 2]]\nfactor = "-1"',
     [exchange_z(0, 2, "J_z", -1)]),
    ("exchange_xy", SPINS3, 'coupling = "J_xy"\nbonds = [[0, 2]]', [exchange_xy(0, 2, "J_xy")]),
    ("spin_flip", SPINS3, 'coupling = "J_H"\nbonds = [[1, 2]]', [spin_flip(1, 2, "J_H")]),
    ("zeeman", SPINS3, 'coupling = "h"\nsites = "all"', [zeeman(m, "h") for m in range(3)]),
    ("pair_hopping", ELECTRONS3, 'coupling = "J_P"\nbonds = [[0, 2]]', [pair_hopping(0, 2, "J_P")]),
]


@pytest.mark.parametrize("kind, head, body, expected", KIND_CASES,
                         ids=[f"{c[0]}-{k}" for k, c in enumerate(KIND_CASES)])
def test_every_term_kind_is_read_into_the_python_builders_terms(kind, head, body, expected):
    text = head + f'[[term]]\nkind = "{kind}"\n' + body + "\n"
    assert _terms(text) == tuple(expected)


def test_every_builder_has_a_case_above():
    assert {c[0] for c in KIND_CASES} == set(modelfile.TERM_KINDS)


def test_signs_and_factors_reach_the_operator_as_documented():
    # docs/conventions.md: hopping = -coupling (c+_a c_b + h.c.); times factor -1/2 gives
    # +1/2 on each of the two normal-ordered products (written out here, not computed)
    (t,) = _terms(ELECTRONS3 + '[[term]]\nkind = "hopping"\ncoupling = "t"\nbonds = [[0, 1]]\n'
                  'spin = "up"\nfactor = "-1/2"\n')
    assert dict(t.operator) == {((0, 0, True), (1, 0, False)): F(1, 2),
                                ((1, 0, True), (0, 0, False)): F(1, 2)}
    # zeeman = -coupling (n_up - n_dn): a field lowers the up spin
    (z,) = _terms(ELECTRONS3 + '[[term]]\nkind = "zeeman"\ncoupling = "h"\nsites = [2]\n')
    assert dict(z.operator) == {((2, 0, True), (2, 0, False)): -1,
                                ((2, 1, True), (2, 1, False)): 1}


def test_orbitals_sites_and_site_orbital_pairs():
    head = HEAD + '[space]\nkind = "electrons"\nsites = 2\norbitals = 2\n'
    # a bare site means every orbital of it; a bond of two sites joins equal orbitals
    got = _terms(head + '[[term]]\nkind = "onsite"\ncoupling = "eps"\nsites = [1]\n'
                 '[[term]]\nkind = "hopping"\ncoupling = "t"\nbonds = [[0, 1]]\n'
                 '[[term]]\nkind = "hopping"\ncoupling = "tx"\nbonds = [[[0, 0], [1, 1]]]\n')
    # mode = 2 * site + orbital
    assert got == (onsite(2, "eps"), onsite(3, "eps"), hopping(0, 2, "t"), hopping(1, 3, "t"),
                   hopping(0, 3, "tx"))


def test_bonds_from_a_cluster_table_and_from_a_shape():
    text = SPINS3.replace("sites = 3\n", "") + (
        '[cluster]\nsites = 3\nbonds = [[0, 1, "a"], [1, 2, "b"]]\n'
        '[[term]]\nkind = "exchange"\ncoupling = "J"\nbonds = "cluster"\nbond_label = "b"\n'
        '[[term]]\nkind = "exchange_z"\ncoupling = "K"\nbonds = "cluster"\n')
    model = parse_model_toml(text)[0]
    assert model.terms == (exchange(1, 2, "J"), exchange_z(0, 1, "K"), exchange_z(1, 2, "K"))
    assert model.cluster.bonds == ((0, 1, "a"), (1, 2, "b"))
    ring = parse_model_toml(HEAD + '[space]\nkind = "spins"\n[cluster]\nshape = "ring 5"\n'
                            '[[term]]\nkind = "exchange"\ncoupling = "J"\nbonds = "cluster"\n')[0]
    assert ring.terms == sc.heisenberg(sc.ring(5)).terms and ring.n_sites == 5


def test_a_model_without_cluster_gets_the_site_pairs_of_its_terms():
    model = parse_model_toml(ELECTRONS3 + '[[term]]\nkind = "hopping"\ncoupling = "t"\n'
                             'bonds = [[2, 0]]\n[[term]]\nkind = "hubbard_u"\ncoupling = "U"\n'
                             'sites = [1]\n')[0]
    assert model.cluster.n_sites == 3 and [b[:2] for b in model.cluster.bonds] == [(0, 2)]


# --------------------------------------------------------------------------- families

@pytest.mark.parametrize("table, python", [
    ('[cluster]\nshape = "ring 4"\n[family]\nname = "hubbard"\nV = "V"\n',
     lambda: sc.hubbard(sc.ring(4), V="V")),
    ('[family]\nname = "anderson"\nn_bath = 2\nfield = "h"\n',
     lambda: sc.with_field(sc.anderson(2), "h")),
    ('[family]\nname = "kanamori"\nn_orbitals = 2\nU_prime = "Up"\n',
     lambda: sc.kanamori(2, U_prime="Up")),
    ('[cluster]\nsites = 3\nbonds = [[0, 1], [1, 2, "J2"]]\n[family]\nname = "heisenberg"\n',
     lambda: sc.heisenberg(sc.cluster(3, [(0, 1), (1, 2, "J2")]))),
    ('[cluster]\nsites = 3\nbonds = [[0, 1], [1, 2]]\nsite_energy = { 1 = "eps" }\n'
     '[family]\nname = "t_j"\nfield = "h"\nfield_sites = [0]\n',
     lambda: sc.with_field(sc.t_j(sc.cluster(3, [(0, 1), (1, 2)], site_labels={1: "eps"})),
                           "h", sites=[0])),
])
def test_family_tables_give_the_python_families(table, python):
    got, fixed = parse_model_toml(HEAD + table)
    want = python()
    assert (got.terms, got.space, got.name) == (want.terms, want.space, want.name)
    assert fixed == {}


def test_family_plus_terms_and_a_matching_space():
    text = HEAD + ('[space]\nkind = "electrons"\nsites = 2\n[family]\nname = "anderson"\n'
                   'n_bath = 1\n[[term]]\nkind = "density_density"\ncoupling = "W"\n'
                   'bonds = [[0, 1]]\n')
    model = parse_model_toml(text)[0]
    assert model.terms == sc.anderson(1).terms + (density_density(0, 1, "W"),)


# --------------------------------------------------------------------------- worked examples

def test_the_t2g_file_written_term_by_term_is_the_kanamori_family():
    model, _ = load_model_file(os.path.join(WORKED, "kanamori_t2g.toml"))
    key = lambda t: (t.kind, t.label, t.operator)
    assert sorted(map(key, model.terms)) == sorted(map(key, sc.kanamori(3).terms))
    assert model.space == sc.kanamori(3).space


def test_the_two_bath_anderson_file_is_the_family():
    model, fixed = load_model_file(os.path.join(WORKED, "anderson_two_bath.toml"))
    assert model.terms == sc.anderson(2).terms
    assert fixed == {"eps_1": sympy.Rational(-1, 2), "eps_2": sympy.Rational(1, 2)}


def _pauli_reference(n, bonds):
    """{label: dense matrix} of sum_b S_i.S_j on n spins-1/2 from Kronecker products of
    Pauli matrices (S = sigma / 2), written here without symcluster."""
    sx = np.array([[0, 1], [1, 0]]) / 2
    sy = np.array([[0, -1j], [1j, 0]]) / 2
    sz = np.array([[1, 0], [0, -1]]) / 2

    def site_op(op, i):
        return reduce(np.kron, [op if k == i else np.eye(2) for k in range(n)])

    out = {}
    for i, j, lab in bonds:
        m = sum(site_op(s, i) @ site_op(s, j) for s in (sx, sy, sz))
        out[lab] = out.get(lab, 0) + m
    return out


def _jordan_wigner(n_sites):
    """Annihilators c[(site, spin)] on the 4^n Fock space (Jordan-Wigner, sparse):
    c_m = Z x ... x Z x a x 1 x ... x 1 (P. Jordan, E. Wigner, Z. Phys. 47, 631 (1928),
    from memory)."""
    a = sp.csr_matrix(np.array([[0.0, 1.0], [0.0, 0.0]]))
    z = sp.csr_matrix(np.diag([1.0, -1.0]))
    one = sp.identity(2, format="csr")
    n_modes = 2 * n_sites
    order = [(i, s) for s in (0, 1) for i in range(n_sites)]
    out = {}
    for m, key in enumerate(order):
        out[key] = reduce(lambda x, y: sp.kron(x, y, format="csr"),
                          [z] * m + [a] + [one] * (n_modes - m - 1))
    return out


def _levels_at(spec, point):
    vals = []
    for value, deg in spec.numeric(point, digits=20):
        vals += [float(value)] * deg
    return np.array(sorted(vals))


def _dense_levels(mats, point, sectors=None):
    """Sorted eigenvalues of sum_k point[k] * mats[k], block by block if ``sectors`` (one
    conserved label per basis state) is given."""
    h = sum(float(sympy.Rational(point[k])) * m for k, m in mats.items())
    h = h.toarray() if sp.issparse(h) else h
    if sectors is None:
        return np.linalg.eigvalsh(h)
    vals = [np.linalg.eigvalsh(h[np.ix_(idx, idx)])
            for idx in (np.nonzero(sectors == v)[0] for v in np.unique(sectors))]
    return np.sort(np.concatenate(vals))


def test_j1j2_file_levels_match_a_pauli_matrix_reference_at_two_points():
    model, _ = load_model_file(os.path.join(WORKED, "heisenberg_j1j2.toml"))
    bonds = [(i, (i + 1) % 6, "J1") for i in range(6)] + [(i, (i + 2) % 6, "J2") for i in range(6)]
    mats = _pauli_reference(6, bonds)
    spec = sc.solve(model, executor="serial")
    assert spec.n_states == 64
    for point in ({"J1": 1, "J2": "1/2"}, {"J1": "-3/2", "J2": "2/7"}):
        got = _levels_at(spec, point)
        assert len(got) == 64
        assert np.max(np.abs(got - _dense_levels(mats, point))) < 1e-9


def test_lieb_fragment_file_levels_match_a_jordan_wigner_reference_at_two_points():
    model, _ = load_model_file(os.path.join(WORKED, "lieb_fragment.toml"))
    c = _jordan_wigner(5)
    n = {k: op.T @ op for k, op in c.items()}
    hop = sum(-(c[(0, s)].T @ c[(k, s)] + c[(k, s)].T @ c[(0, s)])
              for k in range(1, 5) for s in (0, 1))
    mats = {"t": hop, "U": n[(0, 0)] @ n[(0, 1)],          # U on the corner site only
            "eps_p": sum(n[(k, s)] for k in range(1, 5) for s in (0, 1))}
    # (N_up, N_dn) of each basis state, to diagonalise sector by sector
    n_up = np.rint(sum(n[(k, 0)] for k in range(5)).diagonal()).astype(int)
    n_dn = np.rint(sum(n[(k, 1)] for k in range(5)).diagonal()).astype(int)
    spec = sc.solve(model, executor="serial")
    assert spec.n_states == 4 ** 5
    for point in ({"t": 1, "U": 4, "eps_p": "1/3"}, {"t": "2/3", "U": 7, "eps_p": -1}):
        got = _levels_at(spec, point)
        want = _dense_levels(mats, point, sectors=10 * n_up + n_dn)
        assert len(want) == 4 ** 5
        assert np.max(np.abs(got - want)) < 1e-9


# --------------------------------------------------------------------------- fixed values

def test_fixed_values_are_exact_and_checked():
    text = HEAD + ('[family]\nname = "anderson"\nn_bath = 1\n[fixed]\neps_1 = "-1/2"\n'
                   'V_1 = 1\nU = "2.5e1"\n')
    model, fixed = parse_model_toml(text)
    assert fixed == {"eps_1": sympy.Rational(-1, 2), "V_1": 1, "U": 25}
    assert all(isinstance(v, sympy.Rational) for v in fixed.values())


@pytest.mark.parametrize("line, words", [
    ('x = 1', "'x' is not a coupling of this model; its couplings are eps_d, U, eps_1, V_1"),
    ('V_1 = 0.5', "binary floating-point"),
    ('V_1 = "1/0"', "divides by zero"),
    ('V_1 = "sqrt(2)"', "is not a number"),
    ('V_1 = true', "is not a number"),
])
def test_bad_fixed_values_are_refused(line, words):
    text = HEAD + '[family]\nname = "anderson"\nn_bath = 1\n[fixed]\n' + line + "\n"
    with pytest.raises(SymclusterError) as info:
        parse_model_toml(text)
    assert words in str(info.value)


# --------------------------------------------------------------------------- bad input

def _term(kind, body, head=ELECTRONS3):
    return head + f'[[term]]\nkind = "{kind}"\n{body}\n'


BAD = [
    # (text, error class, words the one message must contain)
    (_term("hopping_x", 'coupling = "t"\nbonds = [[0, 1]]'), ModelError,
     "kind = 'hopping_x' is not a term kind; choose one of hopping, hybridization"),
    (_term("hopping", 'coupling = "V"\nbonds = [[0, 1]]')
     + '[[term]]\nkind = "density_density"\ncoupling = "V"\nbonds = [[0, 1]]\n', ModelError,
     "coupling 'V' already multiplies hopping terms; one name for two kinds of term"),
    (HEAD + '[family]\nname = "anderson"\nn_bath = 1\n[[term]]\nkind = "hopping"\ncoupling = "U"\n'
     'bonds = [[0, 1]]\n', ModelError, "'U' already multiplies hubbard_u terms (from the [family])"),
    (_term("onsite", 'coupling = "eps"\nsites = [3]'), ModelError,
     "site 3 is outside 0..2; fix the index or raise [space] sites"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 7]]'), ModelError, "site 7 is outside 0..2"),
    (_term("hopping", 'coupling = "t"\nbonds = [[[0, 0], [1, 2]]]',
           HEAD + '[space]\nkind = "electrons"\nsites = 2\norbitals = 2\n'), ModelError,
     "orbital 2 in [1, 2] is outside 0..1; fix the index or raise [space] orbitals"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 0]]'), ModelError,
     "joins mode 0 to itself; use an on-site term instead"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]\nfactor = "2*x"'), InputError,
     "factor = '2*x' is not a number; write e.g. 4, -2.5, 1e-3 or 3/2"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]\nfactor = "1/0"'), InputError,
     "divides by zero"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]\nfactor = 0'), InputError,
     "factor = 0 removes the term"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]\nfactor = 0.5'), InputError,
     "binary floating-point number; write it as a string"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]\nspin = "sideways"'), InputError,
     "spin = 'sideways'; write spin = \"up\" or spin = \"down\""),
    (_term("number_product", 'coupling = "W"\nbonds = [[0, 1]]\nspin = "up"'), InputError,
     "number_product needs spin = [\"up\", \"down\"]"),
    (_term("hopping", 'coupling = "t+1"\nbonds = [[0, 1]]'), ModelError,
     "label 't+1' is not a valid name"),
    (_term("hopping", 'coupling = "E"\nbonds = [[0, 1]]'), ModelError, "label 'E' is reserved"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1], [1, 0]]'), ModelError,
     "on site 1 and site 0 is given twice (term 1 (hopping) and this one); give it once, or "
     "use factor = 2"),
    (_term("hopping", 'coupling = "t"\nbond = [[0, 1]]'), InputError,
     "unknown key 'bond' in term 1 (hopping); allowed keys are kind, coupling, factor, spin, "
     "bonds, bond_label"),
    (_term("hopping", 'coupling = "t"\nsites = [0]'), InputError, "unknown key 'sites'"),
    (_term("hopping", 'coupling = "t"\nbonds = "cluster"'), InputError,
     "bonds = \"cluster\" needs a [cluster] table"),
    (_term("hopping", 'coupling = "t"\nbonds = [[0, 1]]', SPINS3), ModelError,
     "a hopping term moves charge or is a constant on a spin space"),
    (_term("hubbard_u", 'coupling = "U"\nsites = [0]',
           ELECTRONS3 + "projected = true\n"), ModelError,
     "needs doubly occupied sites, which a projected space"),
    (_term("hopping", 'bonds = [[0, 1]]'), InputError, "add coupling = \"...\""),
    ('format = "symcluster-cluster"\nsites = 2\n', InputError,
     "missing or wrong 'format' key ('symcluster-cluster'); the first line must be "
     "format = \"symcluster-model\""),
    (HEAD.replace("version = 1", "version = 2") + '[space]\nkind = "spins"\nsites = 2\n',
     InputError, "model file version 2 is not supported; use version = 1"),
    (ELECTRONS3 + "colour = 1\n", InputError, "unknown key 'colour' in [space]"),
    (HEAD + "nmae = \"x\"\n", InputError, "unknown key 'nmae' in the top level"),
    (HEAD + '[family]\nname = "anderson"\nn_bath = 1\nbath = 2\n', InputError,
     "unknown key 'bath' in [family] anderson; allowed keys are name, field, field_sites, "
     "n_bath, eps_d, U"),
    (HEAD + '[family]\nname = "hubard"\n', ModelError,
     "[family] name = 'hubard' is not a family; choose one of hubbard, anderson"),
    (HEAD + '[family]\nname = "heisenberg"\n', ModelError,
     "the heisenberg family needs a [cluster]"),
    (HEAD + '[cluster]\nshape = "ring 2"\n[family]\nname = "hubbard"\n', ClusterError,
     "ring length must be an integer >= 3"),
    (HEAD + '[cluster]\nshape = "hexagon 6"\n[family]\nname = "hubbard"\n', InputError,
     "is not a built-in shape"),
    (HEAD + '[cluster]\nsites = 2\nbonds = [[0, 5]]\n[family]\nname = "hubbard"\n',
     ClusterError, "bond (0, 5) uses site 5, outside 0..1"),
    (HEAD + '[space]\nkind = "spins"\nsites = 3\n[family]\nname = "anderson"\nn_bath = 2\n',
     ModelError, "[space] kind = 'spins' disagrees with the [family]'s space"),
    (HEAD + '[space]\nkind = "fermions"\nsites = 2\n', InputError,
     "[space] kind = 'fermions'; write kind = \"electrons\" or kind = \"spins\""),
    (HEAD + '[space]\nkind = "spins"\n', InputError, "[space] needs sites = ..."),
    (SPINS3, ModelError, "the model has no terms"),
    (HEAD + "[space\n", InputError, "not valid TOML"),
]


@pytest.mark.parametrize("text, cls, words", BAD, ids=[b[2][:40] for b in BAD])
def test_bad_model_text_gets_one_message_naming_problem_and_fix(text, cls, words):
    with pytest.raises(cls) as info:
        parse_model_toml(text, source="m.toml")
    msg = str(info.value)
    assert words in msg
    assert msg.startswith("m.toml: ") and "\n" not in msg


def test_a_shared_label_is_accepted_when_declared():
    text = ELECTRONS3.replace("version = 1\n", 'version = 1\nshared = ["J"]\n') + (
        '[[term]]\nkind = "exchange"\ncoupling = "J"\nbonds = [[0, 1]]\n'
        '[[term]]\nkind = "density_density"\ncoupling = "J"\nbonds = [[0, 1]]\nfactor = "-1/4"\n')
    model = parse_model_toml(text)[0]
    assert model.labels == ("J",) and len(model.terms) == 2


def test_dev_zero_is_refused_by_size_without_reading_it_all():
    with pytest.raises(InputError) as info:
        load_model_file("/dev/zero")
    assert f"larger than {MAX_BYTES:,} bytes" in str(info.value)


def test_a_file_just_over_the_limit_is_refused_and_one_at_the_limit_is_read(tmp_path):
    ok = HEAD + '[space]\nkind = "spins"\nsites = 2\n[[term]]\nkind = "exchange"\n' \
        'coupling = "J"\nbonds = [[0, 1]]\n'
    at_limit = tmp_path / "at.toml"
    at_limit.write_bytes(ok.encode() + b"#" * (MAX_BYTES - len(ok.encode())))
    assert load_model_file(at_limit)[0].labels == ("J",)
    over = tmp_path / "over.toml"
    over.write_bytes(ok.encode() + b"#" * (MAX_BYTES + 1 - len(ok.encode())))
    with pytest.raises(InputError, match="larger than"):
        load_model_file(over)


def test_not_utf8_missing_and_directory_are_refused(tmp_path):
    bad = tmp_path / "latin.toml"
    bad.write_bytes(HEAD.encode() + b'name = "caf\xe9"\n')
    offset = len(HEAD) + len('name = "caf')
    with pytest.raises(InputError, match=rf"is not UTF-8 text \(byte {offset}\); save it as UTF-8"):
        load_model_file(bad)
    with pytest.raises(InputError, match="cannot read model file .*; check the path"):
        load_model_file(tmp_path / "missing.toml")
    with pytest.raises(InputError, match="cannot read model file"):
        load_model_file(tmp_path)


def test_the_file_name_is_the_default_model_name(tmp_path):
    p = tmp_path / "my_dimer.toml"
    p.write_text(HEAD + '[space]\nkind = "spins"\nsites = 2\n[[term]]\nkind = "exchange"\n'
                 'coupling = "J"\nbonds = [[0, 1]]\n', encoding="utf-8")
    assert load_model_file(p)[0].name == "my_dimer"


def test_nothing_in_a_file_is_evaluated(monkeypatch):
    # a coupling or a number that would mean something to sympy is refused, never run
    def boom(*a, **k):
        raise AssertionError("sympify called")
    monkeypatch.setattr(sympy, "sympify", boom)
    for body in ('coupling = "__import__"', 'coupling = "t"\nfactor = "2**10"'):
        with pytest.raises(SymclusterError):
            parse_model_toml(_term("hopping", body + "\nbonds = [[0, 1]]"))


@pytest.mark.parametrize("module", [modelfile, model_module])
def test_docstring_examples_run(module):
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS)
    assert result.attempted > 0 and result.failed == 0


@pytest.mark.parametrize("doc", ["model-files.md", "conventions.md"])
def test_the_docs_give_every_term_kind_a_sign_convention(doc):
    text = open(os.path.join(os.path.dirname(HERE), "docs", doc), encoding="utf-8").read()
    for kind in modelfile.TERM_KINDS:
        assert f"| `{kind}` |" in text, (doc, kind)


def test_every_worked_model_file_loads():
    names = sorted(f for f in os.listdir(WORKED) if f.endswith(".toml"))
    assert names == ["anderson_two_bath.toml", "heisenberg_j1j2.toml", "kanamori_t2g.toml",
                     "lieb_fragment.toml"]
    for name in names:
        model, fixed = load_model_file(os.path.join(WORKED, name))
        assert model.terms and set(fixed) <= set(model.labels)
