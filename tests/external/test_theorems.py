"""Exact theorems used as oracles; each test checks the theorem's hypotheses first."""

import functools

import mpmath
import numpy as np
import pytest
import sympy

import symcluster as sc
from reference_fock import FockReference, max_deviation

SHAPES = {
    "chain(2)": lambda: sc.chain(2),
    "chain(3)": lambda: sc.chain(3),
    "chain(4)": lambda: sc.chain(4),
    "ring(3)": lambda: sc.ring(3),
    "ring(4)": lambda: sc.ring(4),
    "star(3)": lambda: sc.star(3),
    "star(4)": lambda: sc.star(4),
    "tetrahedron": lambda: sc.tetrahedron(),
}


@functools.lru_cache(maxsize=None)
def solved(name):
    return sc.solve(sc.hubbard(SHAPES[name]()))


def _mpq(x):
    x = sympy.Rational(x)
    return mpmath.mpf(int(x.p)) / int(x.q)


def _levels_at(spec, n, pt):
    p = spec.point(pt)
    out = [(l.numeric(p, digits=30), l) for l in spec.levels if l.quantum_numbers["N"] == n]
    return sorted(out, key=lambda x: x[0])


# ---------------------------------------------------------------- Lieb 1989 (a)
# E. H. Lieb, Phys. Rev. Lett. 62, 1201 (1989): connected graph, real hopping, U < 0 on every
# site, N even -> the ground state is unique and has S = 0.
@pytest.mark.parametrize("name", ["chain(2)", "ring(3)", "ring(4)", "star(3)", "tetrahedron"])
@pytest.mark.parametrize("pt", [{"t": 1, "U": -4}, {"t": -1, "U": sympy.Rational(-1, 3)}])
def test_lieb_attractive_unique_singlet(name, pt):
    spec = solved(name)
    assert spec.model.cluster.is_connected()
    L = spec.model.n_sites
    for n in range(2, 2 * L - 1, 2):
        lv = _levels_at(spec, n, pt)
        (e0, g), (e1, _) = lv[0], lv[1]
        assert g.degeneracy == 1, f"{name} N={n}: ground degeneracy {g.degeneracy}"
        assert g.quantum_numbers["S"] == 0
        assert e1 - e0 > 1e-8, f"{name} N={n}: ground state not unique"


# ---------------------------------------------------------------- Lieb 1989 (b)
# bipartite, hopping only between sublattices, uniform U > 0, N = L: ground multiplet unique,
# S = ||B| - |A|| / 2. Example in the paper's spirit: 5-site star has S = 3/2.
@pytest.mark.parametrize("name, S", [("chain(2)", 0), ("chain(3)", sympy.Rational(1, 2)),
                                     ("ring(4)", 0), ("star(3)", 1),
                                     ("star(4)", sympy.Rational(3, 2))])
@pytest.mark.parametrize("uv", [4, sympy.Rational(1, 2)])
def test_lieb_half_filling_spin(name, S, uv):
    spec = solved(name)
    a, b = spec.model.cluster.sublattices()
    assert abs(len(a) - len(b)) == 2 * S          # the theorem's value, from the graph
    L = spec.model.n_sites
    lv = _levels_at(spec, L, {"t": 1, "U": uv})
    (e0, g), (e1, _) = lv[0], lv[1]
    assert g.quantum_numbers["S"] == S
    assert g.degeneracy == 2 * S + 1
    assert e1 - e0 > 1e-8


def test_star_flat_band():
    # a bipartite graph has >= ||B|-|A|| zero modes (Lieb 1989): star(4) one-electron levels
    # -2t, 0 (x3), +2t, each with two spins
    spec = sc.solve(sc.hubbard(sc.star(4)), electrons=1)
    got = [(float(e), d) for e, d in spec.numeric({"t": 1, "U": 3})]
    merged = {}
    for e, d in got:
        merged[round(e, 12) + 0.0] = merged.get(round(e, 12) + 0.0, 0) + d
    assert merged == {-2.0: 2, 0.0: 6, 2.0: 2}


# ---------------------------------------------------------------- Yang's eta pairing
# C. N. Yang, Phys. Rev. Lett. 63, 2144 (1989) (from memory): on a bipartite graph
# [H, eta+] = U eta+, eta+ = sum_j eps_j c+_{j up} c+_{j dn}. Fails on a triangle.
def _eta_signs(cluster):
    sub = cluster.sublattices()
    if sub is None:
        return None
    a, _ = sub
    return [1 if i in a else -1 for i in range(cluster.n_sites)]


@pytest.mark.parametrize("name", ["ring(4)", "chain(3)", "star(3)"])
def test_eta_commutator_on_reference(name):
    # the theorem itself on the independent reference (hypothesis check for the next test)
    c = SHAPES[name]()
    ref = FockReference(c.n_sites, list(c.bonds))
    eta = ref.eta_plus(_eta_signs(c))
    T, Um = ref.terms["t"], ref.terms["U"]
    assert abs(T @ eta - eta @ T).max() == 0
    assert abs(Um @ eta - eta @ Um - eta).max() == 0


def test_eta_commutator_fails_on_triangle():
    c = sc.ring(3)
    ref = FockReference(3, list(c.bonds))
    for signs in ([1, -1, 1], [1, 1, -1], [1, -1, -1]):
        eta = ref.eta_plus(signs)
        assert abs(ref.terms["t"] @ eta - eta @ ref.terms["t"]).max() > 0


@pytest.mark.parametrize("name", ["chain(2)", "ring(4)", "star(3)"])
def test_eta_multiplets_shift_by_U(name):
    # a level with pseudospin eta at N has partners at N + 2k, energy E + kU, for every N + 2k
    # with |N + 2k - L| / 2 <= eta (eta_z = (N - L)/2); same S and degeneracy
    spec = solved(name)
    L = spec.model.n_sites
    pt = {"t": 1, "U": sympy.Rational(7, 3)}
    p = spec.point(pt)
    table = {}
    for l in spec.levels:
        table.setdefault(l.quantum_numbers["N"], []).append(
            (l.numeric(p), l.quantum_numbers["S"], l.degeneracy, l.quantum_numbers.get("eta")))
    checked = 0
    for n, rows in table.items():
        for e, s, d, eta in rows:
            assert eta is not None, f"{name}: bipartite level without eta label"
            assert abs(n - L) <= 2 * eta, f"{name} N={n}: eta={eta} impossible"
            if n + 2 <= L + 2 * eta:
                with mpmath.workdps(40):
                    target = e + _mpq(pt["U"])
                    hits = [r for r in table[n + 2] if abs(r[0] - target) < 1e-20 and r[1] == s
                            and r[3] == eta]
                assert sum(r[2] for r in hits) >= d, f"{name}: no eta partner of {e} (N={n})"
                checked += 1
    assert checked > 0


@pytest.mark.parametrize("name", ["ring(4)", "chain(3)"])
def test_eta_labels_against_reference(name):
    # eta(eta+1) = eigenvalue of eta^2 = eta_z^2 + (eta+ eta- + eta- eta+)/2 in each eigenspace of H,
    # computed from the reference; the solver's labels (weighted by degeneracy) must match
    c = SHAPES[name]()
    L = c.n_sites
    ref = FockReference(L, list(c.bonds))
    ep = ref.eta_plus(_eta_signs(c)).toarray().astype(float)
    em = ep.T
    pt = {"t": 1, "U": 3}
    H = ref.matrix(pt)
    spec = solved(name)
    p = spec.point(pt)
    for n in range(2 * L + 1):
        idx = ref.sector_indices(n=n)
        ez = (n - L) / 2
        eta2 = (ez * ez * np.eye(4 ** L) + (ep @ em + em @ ep) / 2)[np.ix_(idx, idx)]
        w, v = np.linalg.eigh(H[np.ix_(idx, idx)])
        exp = []
        k = 0
        while k < len(w):
            j = k
            while j < len(w) and w[j] - w[k] < 1e-8:
                j += 1
            sub = v[:, k:j].T @ eta2 @ v[:, k:j]
            for x in np.linalg.eigvalsh(sub):
                exp.append((round(w[k], 6) + 0.0, round((np.sqrt(1 + 4 * x) - 1), 6) + 0.0))
            k = j
        got = []
        for l in spec.levels:
            if l.quantum_numbers["N"] == n:
                got += [(round(float(l.numeric(p)), 6) + 0.0,
                         float(2 * l.quantum_numbers["eta"]))] * l.degeneracy
        assert sorted(got) == sorted(exp), f"{name} N={n}"


def test_no_eta_label_on_frustrated_clusters():
    for name in ("ring(3)", "tetrahedron"):
        spec = solved(name)
        assert all("eta" not in l.quantum_numbers for l in spec.levels), name
    assert all("eta" in l.quantum_numbers for l in solved("ring(4)").levels)


# ---------------------------------------------------------------- particle-hole
# H. Shiba, Prog. Theor. Phys. 48, 2171 (1972) (from memory): bipartite graph,
# c_{i sigma} -> eps_i c+_{i sigma} gives E_{2L-N} = E_N + U (L - N).
@pytest.mark.parametrize("name", ["chain(2)", "chain(3)", "ring(4)", "star(3)"])
@pytest.mark.parametrize("pt", [{"t": 1, "U": 5}, {"t": sympy.Rational(2, 3), "U": -2}])
def test_particle_hole(name, pt):
    spec = solved(name)
    assert spec.model.cluster.sublattices() is not None
    L = spec.model.n_sites
    p = spec.point(pt)
    by = {}
    for l in spec.levels:
        by.setdefault(l.quantum_numbers["N"], []).extend([l.numeric(p)] * l.degeneracy)
    with mpmath.workdps(40):
        for n in range(L + 1):
            shifted = sorted(e + _mpq(pt["U"]) * (L - n) for e in by[n])
            assert max_deviation(sorted(by[2 * L - n]), shifted) < 1e-25, f"{name} N={n}"


def test_particle_hole_fails_on_triangle():
    # hypothesis matters: ring(3) is not bipartite and the relation is violated
    spec = solved("ring(3)")
    p = spec.point({"t": 1, "U": 5})
    e1 = sorted(l.numeric(p) for l in spec.levels if l.quantum_numbers["N"] == 1)
    e5 = sorted(l.numeric(p) for l in spec.levels if l.quantum_numbers["N"] == 5)
    assert max_deviation(e5, [e + 10 for e in e1]) > 0.5
