"""Green's functions (symcluster.response.greens) against the world.

Expected values come from closed forms derived here, textbook limits, or the independent
numpy Lehmann computation of tests/helpers_lehmann.py (its own Jordan-Wigner build).
"""

import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

import symcluster as sc
from symcluster.errors import ModelError
from symcluster.response.greens import greens_function, greens_matrix

from helpers_greens import kanamori_dimer
from helpers_lehmann import (LehmannReference, anderson_h, hubbard_h, kanamori_dimer_h,
                             t_j_h)


def _close(a, b, tol):
    return abs(complex(a) - complex(b)) <= tol


# ----- two-site Hubbard at half filling, in closed form -----------------------------------
# Derivation (textbook exercise; e.g. Carrascal et al., J. Phys.: Condens. Matter 27,
# 393001 (2015) for the spectrum [journal details from memory]).  With bonding/antibonding
# operators b = (c_1 + c_2)/sqrt2 (energy -t), a = (c_1 - c_2)/sqrt2 (+t), the N = 2 ground
# state is u |b_up b_dn> - v |a_up a_dn>, E_0 = U/2 - D, D = sqrt(U^2/4 + 4t^2),
# u^2 = (1 + 2t/D)/2, v^2 = (1 - 2t/D)/2.  N = 3 states: one hole in the full state, a
# hole in b costs U + t (momentum 0), in a U - t (momentum pi); N = 1: -t (b), +t (a).
# Adding b_up reaches U + t with weight v^2, adding a_up reaches U - t with weight u^2;
# removing b_up leaves -t with weight u^2, removing a_up leaves +t with weight v^2.
# Measured from mu = U/2 (the midpoint (E_0(3) - E_0(1))/2 = (U - t + t)/2):
#   G_bb(z) = v^2/(z - (t + D)) + u^2/(z - (t - D)),
#   G_aa(z) = u^2/(z - (D - t)) + v^2/(z + (t + D)),
#   G_11 = (G_bb + G_aa)/2,  G_12 = (G_bb - G_aa)/2.
def _two_site_closed(t, U):
    D = mpmath.sqrt(U ** 2 / 4 + 4 * t ** 2)
    u2, v2 = (1 + 2 * t / D) / 2, (1 - 2 * t / D) / 2
    gbb = [(t + D, v2), (t - D, u2)]
    gaa = [(D - t, u2), (-(t + D), v2)]
    g11 = sorted([(om, w / 2) for om, w in gbb + gaa])
    g12 = sorted([(om, w / 2) for om, w in gbb] + [(om, -w / 2) for om, w in gaa])
    return g11, g12


@pytest.mark.parametrize("t,U", [(1, 4), (Fraction(1, 3), 5), (2, Fraction(1, 2))])
def test_two_site_half_filling_closed_form(t, U):
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with mpmath.workdps(40):
        g11, g12 = _two_site_closed(mpmath.mpf(t.numerator if isinstance(t, Fraction) else t)
                                    / (t.denominator if isinstance(t, Fraction) else 1),
                                    mpmath.mpf(U.numerator if isinstance(U, Fraction) else U)
                                    / (U.denominator if isinstance(U, Fraction) else 1))
    for (i, j), expected in (((0, 0), g11), ((0, 1), g12), ((1, 0), g12)):
        g = greens_function(spec, {"t": t, "U": U}, i=i, j=j, spin="up", N=2, digits=30)
        assert len(g.poles) == 4
        for (om, w), (om_e, w_e) in zip(g.poles, expected):
            assert abs(om - om_e) < mpmath.mpf(10) ** -30
            assert abs(w - w_e) < mpmath.mpf(10) ** -30
    # the down spin is the same (spin symmetry)
    gd = greens_function(spec, {"t": t, "U": U}, i=0, j=0, spin="down", N=2, digits=30)
    assert all(abs(w - w_e) < mpmath.mpf(10) ** -30 for (_, w), (_, w_e) in zip(gd.poles, g11))


def test_two_site_exact_poles_are_the_closed_forms():
    import sympy
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    g = greens_function(spec, {"t": 1, "U": 4}, N=2, digits=30)
    # t + D and t - D with D = sqrt(8) = 2 sqrt 2 (derivation above), and their negatives;
    # the weights v^2/2 = (1 - 1/sqrt2)/4 at the outer poles, u^2/2 at the inner ones
    s2 = sympy.sqrt(2)
    expected = sorted([1 + 2 * s2, 1 - 2 * s2, 2 * s2 - 1, -1 - 2 * s2], key=float)
    for (ex, w), e in zip(g.exact_poles, expected):
        assert sympy.simplify(ex - e) == 0
        outer = abs(float(e)) > 3
        assert sympy.simplify(w - (1 + (-1 if outer else 1) / s2) / 4) == 0


# ----- U = 0: the tight-binding resolvent ---------------------------------------------------
def _resolvent(bonds, L, t, z, mu):
    h = np.zeros((L, L))
    for i, j in bonds:
        h[i, j] -= t
        h[j, i] -= t
    return np.linalg.inv((z + mu) * np.eye(L) - h)


@pytest.mark.parametrize("cluster,N,T", [(sc.ring(4), 2, None), (sc.chain(3), 3, None),
                                         (sc.ring(5), 4, None), (sc.star(4), 3, 1)])
def test_noninteracting_limit_is_the_tight_binding_green_function(cluster, N, T):
    # G(z) = (z + mu - h)^-1 for every ensemble of free fermions (textbook; Ashcroft &
    # Mermin ch. 10 for the orbitals, from memory): the poles are the orbital energies,
    # each with total weight one
    spec = sc.solve(sc.hubbard(cluster))
    L = cluster.n_sites
    mu = Fraction(1, 7)
    gm = greens_matrix(spec, {"t": 1, "U": 0}, N=N, temperature=T, mu=mu, digits=30)
    beta = 3 if T is None else 1 / Fraction(T)
    vals = gm.matsubara(beta, 4)
    for n in range(4):
        z = 1j * (2 * n + 1) * math.pi / float(beta)
        ref = _resolvent([(i, j) for i, j, _ in cluster.bonds], L, 1.0, z, float(mu))
        for i in range(L):
            for j in range(L):
                assert _close(vals[n][i][j], ref[i, j], 1e-12)


# ----- atomic limit t = 0 -------------------------------------------------------------------
def test_atomic_limit_poles_at_eps_and_eps_plus_u_with_thermal_weights():
    # one isolated site (impurity with V = 0), grand canonical: poles at eps - mu and
    # eps + U - mu with weights 1 - <n_dn> and <n_dn>, <n_dn> = (x + x^2 y)/(1 + 2x + x^2 y),
    # x = exp(-beta (eps - mu)), y = exp(-beta U) (common practice, no source)
    spec = sc.solve(sc.anderson(1))
    eps, U, mu, T = Fraction(-1, 2), 3, Fraction(1, 4), Fraction(2, 3)
    g = greens_function(spec, {"eps_d": eps, "U": U, "eps_1": 1, "V_1": 0}, i=0, j=0,
                        mu=mu, temperature=T, digits=30)
    with mpmath.workdps(40):
        b = 1 / mpmath.mpf(T.numerator) * T.denominator
        x = mpmath.exp(-b * (mpmath.mpf(eps.numerator) / eps.denominator
                             - mpmath.mpf(mu.numerator) / mu.denominator))
        y = mpmath.exp(-b * U)
        n_dn = (x + x ** 2 * y) / (1 + 2 * x + x ** 2 * y)
        m = mpmath.mpf(mu.numerator) / mu.denominator
        e = mpmath.mpf(eps.numerator) / eps.denominator
        expected = [(e - m, 1 - n_dn), (e + U - m, n_dn)]
    assert len(g.poles) == 2
    for (om, w), (om_e, w_e) in zip(g.poles, expected):
        assert abs(om - om_e) < mpmath.mpf(10) ** -30
        assert abs(w - w_e) < mpmath.mpf(10) ** -30


# ----- the independent numpy Lehmann computation --------------------------------------------
CASES = {
    "hubbard chain(2), T=0": (lambda: sc.solve(sc.hubbard(sc.chain(2))),
                              {"t": 1, "U": 4}, dict(N=2),
                              lambda: hubbard_h([(0, 1)], 2, 1.0, 4.0)),
    "hubbard ring(4), N=3 degenerate, T=0": (lambda: sc.solve(sc.hubbard(sc.ring(4))),
                                             {"t": 1, "U": 3}, dict(N=3),
                                             lambda: hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)],
                                                               4, 1.0, 3.0)),
    "hubbard chain(3), canonical": (lambda: sc.solve(sc.hubbard(sc.chain(3))),
                                    {"t": 1, "U": Fraction(5, 2)}, dict(N=3, T=Fraction(1, 2)),
                                    lambda: hubbard_h([(0, 1), (1, 2)], 3, 1.0, 2.5)),
    "hubbard ring(3), grand canonical": (lambda: sc.solve(sc.hubbard(sc.ring(3))),
                                         {"t": -1, "U": 5}, dict(mu=1, T=1),
                                         lambda: hubbard_h([(0, 1), (1, 2), (0, 2)], 3, -1.0, 5.0)),
    "anderson(2), grand canonical": (
        lambda: sc.solve(sc.anderson(2), fixed={"eps_1": 1, "eps_2": -1, "V_1": 1,
                                                 "V_2": Fraction(1, 2)}),
        {"eps_d": Fraction(-3, 2), "U": 3}, dict(mu=0, T=Fraction(1, 3)),
        lambda: anderson_h(-1.5, 3.0, [1.0, -1.0], [1.0, 0.5])),
    "anderson(2), T=0": (
        lambda: sc.solve(sc.anderson(2)),
        {"eps_d": Fraction(-3, 2), "U": 3, "eps_1": Fraction(1, 3), "V_1": 1, "eps_2": -1,
         "V_2": Fraction(2, 3)}, dict(N=3),
        lambda: anderson_h(-1.5, 3.0, [1 / 3, -1.0], [1.0, 2 / 3])),
    "kanamori dimer, canonical": (lambda: sc.solve(kanamori_dimer()),
                                  {"t": 1, "U": 3, "J": Fraction(1, 2)}, dict(N=4, T=1),
                                  lambda: kanamori_dimer_h(1.0, 3.0, 0.5)),
    "t-J ring(3), grand canonical": (lambda: sc.solve(sc.t_j(sc.ring(3))),
                                     {"t": 1, "J": Fraction(1, 2)}, dict(mu=Fraction(-1, 2), T=1),
                                     lambda: t_j_h([(0, 1), (1, 2), (0, 2)], 3, 1.0, 0.5)),
    "t-J chain(3), T=0": (lambda: sc.solve(sc.t_j(sc.chain(3))),
                          {"t": 1, "J": Fraction(1, 3)}, dict(N=2),
                          lambda: t_j_h([(0, 1), (1, 2)], 3, 1.0, 1 / 3)),
    "kanamori atom, T=0": (lambda: sc.solve(sc.kanamori(2)),
                           {"U": 4, "J": 1}, dict(N=2, mu=Fraction(1, 2)),
                           None),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_agrees_with_an_independent_lehmann_computation(name):
    build, point, ens, ref_build = CASES[name]
    if ref_build is None:
        from helpers_lehmann import Fermions
        f = Fermions(2)
        U, J = 4.0, 1.0
        Up = U - 2 * J
        h = sum(U * f.n(m, 0) @ f.n(m, 1) for m in (0, 1))
        for x, y in ((0, 1), (1, 0)):
            h = h + Up * f.n(x, 0) @ f.n(y, 1) - J * f.cd(x, 0) @ f.c(x, 1) @ f.cd(y, 1) @ f.c(y, 0) \
                + J * f.cd(x, 0) @ f.cd(x, 1) @ f.c(y, 1) @ f.c(y, 0)
        h = h + sum((Up - J) * f.n(0, s) @ f.n(1, s) for s in (0, 1))
        ref = LehmannReference(f, h)
    else:
        ref = LehmannReference(*ref_build())
    spec = build()
    T = ens.get("T")
    kw = {"N": ens.get("N"), "temperature": T, "mu": ens.get("mu")}
    ref_kw = {"N": ens.get("N"), "T": None if T is None else float(T),
              "mu": None if ens.get("mu") is None else float(ens["mu"])}
    beta = Fraction(1) / T if T is not None else Fraction(5, 2)
    M = spec.model.space.n_modes
    taus = [0, beta / 3, beta / 2, beta]
    for spin in ("up", "down"):
        gm = greens_matrix(spec, point, spin=spin, digits=30, **kw)
        vals = gm.matsubara(beta, 6)
        s = 0 if spin == "up" else 1
        for i in range(M):
            for j in range(M):
                expect = ref.matsubara(i, j, s, float(beta), 6, **ref_kw)
                for n in range(6):
                    assert _close(vals[n][i][j], expect[n], 1e-10), (name, spin, i, j, n)
                if j not in (i, (i + 1) % M):
                    continue
                g = gm.element(i, j)
                tau_vals = g.imaginary_time(beta, taus)
                expect = ref.imaginary_time(i, j, s, float(beta), [float(x) for x in taus],
                                            **ref_kw)
                for a, b in zip(tau_vals, expect):
                    assert abs(float(a) - b) < 1e-10, (name, spin, i, j)


# ----- sum rules on random clusters (hypothesis) --------------------------------------------
@st.composite
def small_clusters(draw):
    L = draw(st.integers(2, 4))
    pairs = [(i, j) for i in range(L) for j in range(i + 1, L)]
    bonds = draw(st.lists(st.sampled_from(pairs), min_size=1, max_size=len(pairs), unique=True))
    return L, bonds


@settings(max_examples=6, deadline=None)
@given(small_clusters(), st.fractions(-3, 3, max_denominator=4),
       st.fractions(0, 6, max_denominator=3), st.data())
def test_sum_rules_on_random_clusters(cl, t, U, data):
    # textbook identities (Mahan ch. 3, from memory): the weights of G_ij add up to
    # {c_i, c_j+} = delta_ij; the first moment is {[c_i, H - mu N], c_j+} = h_ij
    # + delta_ij (U <n_i,-s> - mu) for H = h + U sum n_up n_dn; G(0+) + G(beta-) = -delta_ij
    L, bonds = cl
    if t == 0:
        t = Fraction(1)
    spec = sc.solve(sc.hubbard(sc.cluster(L, bonds)))
    N = data.draw(st.integers(0, 2 * L))
    T = data.draw(st.sampled_from([None, Fraction(1, 2), 2]))
    gm = greens_matrix(spec, {"t": t, "U": U}, spin="up", N=N, temperature=T, digits=30)
    gd = greens_matrix(spec, {"t": t, "U": U}, spin="down", N=N, temperature=T, digits=30)
    h = [[0] * L for _ in range(L)]
    for i, j in bonds:
        h[i][j] = h[j][i] = -t
    mu = gm.mu
    mpmath.mp.dps = 40          # conftest restores the precision after the test
    for i in range(L):
        for j in range(L):
            s0 = sum(W[i][j] for W in gm.weights)
            assert abs(s0 - (1 if i == j else 0)) < 1e-25
            s1 = sum(om * W[i][j] for om, W in zip(gm.omegas, gm.weights))
            n_dn = gd.n[i][i]
            expected = h[i][j] + ((U * n_dn - mu) if i == j else 0)
            assert abs(s1 - expected) < 1e-25
            g = gm.element(i, j)
            a, b = g.imaginary_time(Fraction(3, 2) if T is None else 1 / T,
                                    [0, Fraction(3, 2) if T is None else 1 / T])
            assert abs(a + b + (1 if i == j else 0)) < 1e-25


# ----- momentum ------------------------------------------------------------------------------
def test_momentum_green_function_of_a_free_ring_has_one_pole():
    # at U = 0 on a ring G(k, z) = 1/(z + mu + 2t cos k) (textbook tight binding)
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    gm = greens_matrix(spec, {"t": 1, "U": 0}, N=4, mu=0, digits=30)
    mpmath.mp.dps = 40          # conftest restores the precision after the test
    for m in range(4):
        g = gm.momentum(m)
        assert len(g.poles) == 1
        om, w = g.poles[0]
        assert abs(om + 2 * mpmath.cos(2 * mpmath.pi * m / 4)) < 1e-25
        assert abs(w - 1) < 1e-25


def test_momentum_needs_a_translation():
    spec = sc.solve(sc.hubbard(sc.chain(3)))
    gm = greens_matrix(spec, {"t": 1, "U": 1}, N=3, digits=30)
    with pytest.raises(ModelError, match="translation group"):
        gm.momentum(0)


# ----- bad input -----------------------------------------------------------------------------
def test_bad_inputs_are_one_line_errors():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with pytest.raises(ModelError, match="spin="):
        greens_function(spec, {"t": 1, "U": 1}, spin="sideways", N=2)
    with pytest.raises(ModelError, match="mode 5"):
        greens_function(spec, {"t": 1, "U": 1}, i=5, N=2)
    with pytest.raises(ModelError, match="N=9"):
        greens_function(spec, {"t": 1, "U": 1}, N=9)
    with pytest.raises(ModelError, match="give an electron number"):
        greens_function(spec, {"t": 1, "U": 1})
    with pytest.raises(ModelError, match="spin model"):
        greens_function(sc.solve(sc.heisenberg(sc.chain(2))), {"J": 1}, N=2)
    part = sc.solve(sc.hubbard(sc.chain(2)), electrons=[2])
    with pytest.raises(ModelError, match="include N=[13] in electrons="):
        greens_function(part, {"t": 1, "U": 1}, N=2)
    g = greens_function(spec, {"t": 1, "U": 1}, N=2, temperature=1)
    with pytest.raises(ModelError, match="beta=2 differs"):
        g.matsubara(2, 3)


def test_levels_closer_than_float64_resolves_are_separated_and_certified():
    # U = 1e-12 on ring(4): levels that differ by O(U) and O(U^2) sit in one sector; the
    # eigenvectors must still be certified (the working precision follows the smallest gap)
    # and agree with the independent reference, which sees them as degenerate (G is
    # continuous in U, so float64 suffices there)
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    U = Fraction(1, 10 ** 12)
    ref = LehmannReference(*hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1.0, float(U)))
    for ens, ref_ens, beta in ((dict(N=4, temperature=1), dict(N=4, T=1.0), 1),
                               (dict(N=3), dict(N=3), Fraction(5, 2))):
        gm = greens_matrix(spec, {"t": 1, "U": U}, digits=30, **ens)
        assert gm.certificate["weight_error"] < 1e-32
        vals = gm.matsubara(beta, 4)
        for i, j in ((0, 0), (0, 1), (0, 2)):
            expect = ref.matsubara(i, j, 0, float(beta), 4, **ref_ens)
            for n in range(4):
                assert _close(vals[n][i][j], expect[n], 1e-10)


def test_eigenvectors_of_any_level_at_a_point():
    # the unique half-filled ground state of ring(4) (Lieb 1989: S = 0) against the
    # independent reference's eigenvector; the reference's basis vector of spin-orbitals
    # k = mode + spin * M (Jordan-Wigner, mode 0 leftmost) is prod_{k ascending} c+_k |0>,
    # the ordering of docs/conventions.md, so the two bases agree without signs
    from symcluster.response.eigen import PointSystem
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    point = {"t": 1, "U": 3}
    ps = PointSystem(spec, point, digits=30)
    ground = min(spec.select(N=4), key=lambda l: l.numeric(point))
    vecs = ps.level_vectors(ground)
    assert list(vecs) == [(2, 2)] and len(vecs[(2, 2)]) == 1
    ref = LehmannReference(*hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1.0, 3.0))
    k = int(np.argmin(np.where(ref.ns == 4, ref.E, np.inf)))
    v_ref = ref.V[:, k]
    M = 4
    overlap = 0.0
    for (up, dn), x in vecs[(2, 2)][0].items():
        idx = 0
        for m in range(M):
            if up >> m & 1:
                idx |= 1 << (2 * M - 1 - m)
            if dn >> m & 1:
                idx |= 1 << (2 * M - 1 - (m + M))
        overlap += float(x) * v_ref[idx]
    assert abs(abs(overlap) - 1) < 1e-12
    # a multiplet (the two-site triplet): orthonormal vectors in every S^z sector it reaches
    dimer = sc.solve(sc.hubbard(sc.chain(2)))
    triplet = [l for l in dimer.select(N=2) if l.quantum_numbers["S"] == 1][0]
    vecs = PointSystem(dimer, point, digits=30).level_vectors(triplet)
    assert sorted(vecs) == [(0, 2), (1, 1), (2, 0)]
    with mpmath.workdps(40):
        for sector, vs in vecs.items():
            for a in vs:
                for b in vs:
                    dot = sum(x * b.get(s, 0) for s, x in a.items())
                    assert abs(dot - (1 if a is b else 0)) < mpmath.mpf(10) ** -30
