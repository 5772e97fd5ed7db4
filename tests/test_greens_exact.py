"""Exact Lehmann weights (symcluster.response.exactweights) against the world.

Expected values: the two-site closed form derived in tests/test_greens.py (repeated here
as a formula), the independent numpy Lehmann computation of tests/helpers_lehmann.py, and
the anticommutator sum rule {c_i, c_i^+} = 1 (canonical anticommutation relations).
"""

from fractions import Fraction

import mpmath
import numpy as np
import pytest
import sympy

import symcluster as sc
from symcluster.errors import VerificationError
from symcluster.response.greens import greens_function, greens_matrix

from helpers_lehmann import LehmannReference, anderson_h, hubbard_h


def _num(expr, digits=50):
    return mpmath.mpf(str(sympy.N(expr, digits)))


@pytest.mark.parametrize("t,U", [(1, 4), (Fraction(1, 3), 5)])
def test_two_site_exact_weights_are_the_closed_forms(t, U):
    # derivation in tests/test_greens.py (bonding/antibonding basis): at half filling
    # G_11 has the poles -+(t + D) with weight v^2/2 and -+(D - t) with weight u^2/2,
    # u^2 = (1 + 2t/D)/2, v^2 = (1 - 2t/D)/2, D = sqrt(U^2/4 + 4t^2); G_12 the same with
    # signs + for the bonding poles (t + D, t - D) and - for the antibonding ones
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    ts, Us = sympy.nsimplify(t), sympy.nsimplify(U)
    D = sympy.sqrt(Us ** 2 / 4 + 4 * ts ** 2)
    u2, v2 = (1 + 2 * ts / D) / 2, (1 - 2 * ts / D) / 2
    g11 = {ts + D: v2 / 2, ts - D: u2 / 2, D - ts: u2 / 2, -(ts + D): v2 / 2}
    g12 = {ts + D: v2 / 2, ts - D: u2 / 2, D - ts: -u2 / 2, -(ts + D): -v2 / 2}
    for (i, j), table in (((0, 0), g11), ((0, 1), g12)):
        g = greens_function(spec, {"t": t, "U": U}, i=i, j=j, N=2, digits=30)
        assert len(g.exact_poles) == 4
        for om, w in g.exact_poles:
            expected = [v for k, v in table.items() if sympy.simplify(k - om) == 0]
            assert len(expected) == 1
            assert sympy.simplify(w - expected[0]) == 0


def _reference_weight(ref, om, i, j, **ens):
    oms, ws = ref.poles(i, j, 0, **ens)
    return float(np.sum(ws[np.abs(oms - float(om)) < 1e-7]))


CASES = [
    # (name, spectrum factory, point, symcluster ensemble, reference builder, reference ensemble)
    ("triangle N=2", lambda: sc.solve(sc.hubbard(sc.ring(3))), {"t": 1, "U": 4}, dict(N=2),
     lambda: hubbard_h([(0, 1), (1, 2), (2, 0)], 3, 1.0, 4.0), dict(N=2)),
    ("ring(4) N=3, degenerate ground states",
     lambda: sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 3}, dict(N=3),
     lambda: hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1.0, 3.0), dict(N=3)),
    ("ring(4) grand canonical T=0", lambda: sc.solve(sc.hubbard(sc.ring(4))),
     {"t": 1, "U": 4}, dict(mu=2), lambda: hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)], 4,
                                                      1.0, 4.0), dict(mu=2.0)),
    ("Anderson, one bath site", lambda: sc.solve(sc.anderson(1)),
     {"eps_d": Fraction(-3, 2), "U": 4, "eps_1": Fraction(1, 2), "V_1": 1}, dict(N=2),
     lambda: anderson_h(-1.5, 4.0, [0.5], [1.0]), dict(N=2)),
]


@pytest.mark.parametrize("name,make,point,ens,build,ref_ens", CASES, ids=[c[0] for c in CASES])
def test_exact_weights_agree_with_an_independent_lehmann_sum(name, make, point, ens, build,
                                                             ref_ens):
    spec = make()
    gm = greens_matrix(spec, point, digits=30, **ens)
    ref = LehmannReference(*build())
    if "mu" not in ref_ens:
        ref_ens = dict(ref_ens, mu=float(gm.mu))
    n_exact = 0
    for i, j in ((0, 0), (0, 1)):
        g = gm.element(i, j)
        for (om, _), (ex_om, ex_w) in zip(g.poles, g.exact_poles):
            if ex_w is None:
                continue
            n_exact += 1
            expect = _reference_weight(ref, om, i, j, **ref_ens)
            assert abs(float(_num(ex_w)) - expect) < 1e-10, (name, i, j, float(om))
    # every level of these small clusters is a closed form, so every weight is exact
    assert n_exact == len(gm.element(0, 0).poles) + len(gm.element(0, 1).poles)


def test_exact_weights_satisfy_the_anticommutator_sum_rule_to_40_digits():
    # sum_p w_p(i, i) = <{c_i, c_i^+}> = 1 (canonical anticommutation), and
    # sum_p w_p(0, 1) = <{c_0, c_1^+}> = 0, here summed over the exact weights only
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    gm = greens_matrix(spec, {"t": 1, "U": 5}, N=4, digits=30)
    for (i, j), target in (((0, 0), 1), ((0, 1), 0)):
        with mpmath.workdps(60):
            total = mpmath.fsum(_num(w, 60) for _, w in gm.element(i, j).exact_poles)
            assert abs(total - target) < mpmath.mpf(10) ** -40


def test_exact_momentum_weights_sum_to_one():
    # G(k) = (1/L) sum_ij cos(k (i - j)) G_ij: the weights of each k sum to
    # <{c_k, c_k^+}> = 1 (anticommutation of the Fourier modes)
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    gm = greens_matrix(spec, {"t": 1, "U": 2}, N=4, digits=30)
    for m in range(4):
        gk = gm.momentum(m)
        assert all(w is not None for _, w in gk.exact_poles)
        with mpmath.workdps(40):
            for (om, w), (_, ex) in zip(gk.poles, gk.exact_poles):
                assert abs(_num(ex) - w) < mpmath.mpf(10) ** -29
        with mpmath.workdps(60):
            total = mpmath.fsum(_num(ex, 60) for _, ex in gk.exact_poles)
            assert abs(total - 1) < mpmath.mpf(10) ** -40


def test_thermal_weights_are_not_made_exact():
    # Boltzmann factors make thermal weights transcendental in general: only numbers
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    g = greens_function(spec, {"t": 1, "U": 4}, N=2, temperature=1, digits=20)
    assert g.poles and all(w is None for _, w in g.exact_poles)


def test_a_wrong_ladder_operator_in_the_exact_route_is_caught(monkeypatch):
    # the exact route builds its own ladder matrices; one with a flipped sign for mode 1
    # gives exact weights of G_01 with the wrong sign, which the comparison with the
    # certified weights must refuse
    import symcluster.response.exactweights as ew
    plain = ew.ladder_matrix

    def flipped(space, src, dst, mode, spin, dagger):
        out = plain(space, src, dst, mode, spin, dagger)
        return [(r, c, -s) for r, c, s in out] if mode == 1 else out

    monkeypatch.setattr(ew, "ladder_matrix", flipped)
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with pytest.raises(VerificationError, match="exact weight"):
        greens_matrix(spec, {"t": 1, "U": 4}, N=2, digits=30)
