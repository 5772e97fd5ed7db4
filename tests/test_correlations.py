"""Equal-time correlations (symcluster.response.correlations) against the independent
dense-operator reference of tests/helpers_lehmann.py and textbook facts."""

from fractions import Fraction

import mpmath
import pytest

import symcluster as sc
from symcluster.errors import ModelError
from symcluster.response.correlations import correlations

from helpers_greens import kanamori_dimer
from helpers_lehmann import (LehmannReference, anderson_h, correlation_reference, hubbard_h,
                             kanamori_dimer_h)

CASES = {
    "ring(4) T=0 N=4": (lambda: sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 3}, dict(N=4),
                        lambda: hubbard_h([(0, 1), (1, 2), (2, 3), (3, 0)], 4, 1.0, 3.0)),
    "chain(3) canonical": (lambda: sc.solve(sc.hubbard(sc.chain(3))), {"t": 1, "U": 2},
                           dict(N=2, temperature=Fraction(1, 2)),
                           lambda: hubbard_h([(0, 1), (1, 2)], 3, 1.0, 2.0)),
    "anderson(1) grand canonical": (lambda: sc.solve(sc.anderson(1)),
                                    {"eps_d": -1, "U": 2, "eps_1": 0, "V_1": Fraction(1, 2)},
                                    dict(mu=0, temperature=1),
                                    lambda: anderson_h(-1.0, 2.0, [0.0], [0.5])),
    "kanamori dimer T=0": (lambda: sc.solve(kanamori_dimer()), {"t": 1, "U": 3, "J": Fraction(1, 2)},
                           dict(N=4), lambda: kanamori_dimer_h(1.0, 3.0, 0.5)),
}


@pytest.mark.parametrize("name", sorted(CASES))
def test_correlations_agree_with_dense_operators(name):
    build, point, ens, ref_build = CASES[name]
    c = correlations(build(), point, digits=30, **ens)
    ref = LehmannReference(*ref_build())
    T = ens.get("temperature")
    expect = correlation_reference(ref, N=ens.get("N"), T=None if T is None else float(T),
                                   mu=None if ens.get("mu") is None else float(ens["mu"]))
    M = len(c.density)
    for key in ("density", "sz", "spin", "pair"):
        got = getattr(c, key)
        for i in range(M):
            for j in range(M):
                assert abs(float(got[i][j]) - expect[key][i][j]) < 1e-10, (key, i, j)
    for i in range(M):
        assert abs(float(c.double_occupancy[i]) - expect["double_occupancy"][i]) < 1e-10


def test_one_level_and_hellmann_feynman():
    # the double occupancy of a level is dE/dU (Hellmann-Feynman; textbook)
    import sympy
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    ground = min(spec.select(N=2), key=lambda l: l.numeric({"t": 1, "U": 4}))
    c = correlations(spec, {"t": 1, "U": 4}, level=ground, digits=30)
    t, U = sympy.symbols("t U", real=True)
    d = sympy.diff(U / 2 - sympy.sqrt(U ** 2 / 4 + 4 * t ** 2), U).subs({t: 1, U: 4})
    with mpmath.workdps(40):
        assert abs(sum(c.double_occupancy) - mpmath.mpf(sympy.N(d, 50))) < mpmath.mpf(10) ** -30


def test_structure_factor_sum_rule_and_susceptibility():
    # sum_q S(q) = sum_i <S_i . S_i> = (3/4) sum_i (n_i - 2 d_i) (textbook); the Curie
    # law of free spins: an isolated site at U -> large, T small compared with U, half
    # filled, has chi = beta/4 (common practice, no source) -- checked on a ring at t = 0
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    c = correlations(spec, {"t": 1, "U": 2}, N=4, digits=30)
    with mpmath.workdps(40):
        total = sum(c.structure_factor(m) for m in range(4))
        local = sum(c.spin[i][i] for i in range(4))
        assert abs(total - local) < mpmath.mpf(10) ** -28
    c0 = correlations(spec, {"t": 0, "U": 40}, N=4, temperature=1, digits=30)
    with mpmath.workdps(40):
        # four free spins 1/2: chi = beta * <Sz_tot^2> = 4 * (1/4) = 1, up to exp(-U/T)
        assert abs(c0.chi_spin - 1) < 1e-12


def test_level_and_ensemble_are_exclusive():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with pytest.raises(ModelError, match="either level="):
        correlations(spec, {"t": 1, "U": 1}, N=2, level=spec.levels[0])


def test_zero_temperature_susceptibility_is_the_limit_of_the_thermal_one():
    # chi(T) = beta Var(S^z_tot) (fluctuation-dissipation for a conserved S^z_tot,
    # textbook, from memory).  A singlet ground state: the T -> 0 limit is 0 exactly, and
    # chi(T) at small T is exponentially small.  A doublet (S = 1/2, odd N): Var = 1/4 over
    # the ground states, so chi ~ 1/(4T) (Curie law) diverges and T = 0 is refused, while
    # T chi(T) -> 1/4 as T -> 0.
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    pt = {"t": 1, "U": 2}
    c0 = correlations(spec, pt, N=4, digits=30)
    assert c0.chi_spin == 0
    # the lowest triplet lies 0.1426 above the singlet here: at T = 1/400,
    # chi ~ 2 beta exp(-0.1426 beta) ~ 1e-22
    warm = correlations(spec, pt, N=4, temperature=Fraction(1, 400), digits=30)
    assert 0 <= warm.chi_spin < 1e-15
    c3 = correlations(spec, pt, N=3, digits=30)
    with pytest.raises(ModelError, match="diverges as T -> 0.*variance 1/4"):
        c3.chi_spin
    cold = correlations(spec, pt, N=3, temperature=Fraction(1, 200), digits=30)
    with mpmath.workdps(40):
        # the next N = 3 level lies 1.2 above: corrections ~ exp(-240)
        assert abs(cold.chi_spin / 200 - mpmath.mpf(1) / 4) < mpmath.mpf(10) ** -25


def test_zero_temperature_compressibility_in_the_mott_gap_and_at_a_charge_degeneracy():
    # grand canonical, T -> 0: inside the half-filling gap of the particle-hole symmetric
    # ring (mu = U/2, a unique N = 4 singlet: Lieb's theorem, from memory) N and S^z_tot do
    # not fluctuate, so both limits are 0; at mu = E0(4) - E0(3) the N = 3 doublet and the
    # N = 4 singlet are degenerate, N fluctuates and the compressibility diverges
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    pt = {"t": 1, "U": 4}
    c = correlations(spec, pt, mu=2, digits=30)
    assert c.chi_spin == 0 and c.compressibility == 0
    with pytest.raises(ModelError, match="fixed-N ensemble has no compressibility"):
        correlations(spec, pt, N=4, digits=30).compressibility
    # a rational crossing: at U = 0, E0(4) - E0(3) = 0 (the k = +-pi/2 orbitals sit at 0)
    free = {"t": 1, "U": 0}
    assert abs(min(lev.numeric(free) for lev in spec.select(N=4))
               - min(lev.numeric(free) for lev in spec.select(N=3))) < 1e-12
    with pytest.raises(ModelError, match="compressibility diverges"):
        correlations(spec, free, mu=0, digits=30).compressibility


def test_one_level_has_no_susceptibility():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    c = correlations(spec, {"t": 1, "U": 1}, level=spec.levels[0], digits=20)
    with pytest.raises(ModelError, match="not a thermal ensemble"):
        c.chi_spin
