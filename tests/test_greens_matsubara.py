"""The Matsubara sums of symcluster/response/matsubara.py (kernel at low frequencies, a
finite expansion in 1/omega_n^2 with a bounded remainder at high ones) against the
definition sum_p w_p / (i omega_n - omega_p) summed directly in mpmath in the test, and
G_ij(i omega_n) of ring(4) on a long grid against the independent numpy Lehmann
computation of tests/helpers_lehmann.py."""

from fractions import Fraction
import random

import mpmath

import symcluster as sc
from symcluster.response.eigen import PointSystem
from symcluster.response.greens import greens_matrix
from symcluster.response.matsubara import matsubara_sums

from helpers_lehmann import LehmannReference, hubbard_h


def test_sums_agree_with_the_definition_at_every_frequency_to_the_requested_digits():
    rng = random.Random(7)
    with mpmath.workdps(50):
        omegas = [mpmath.mpf(rng.uniform(-6, 6)) for _ in range(9)] + [mpmath.mpf(2),
                                                                       mpmath.mpf(-2)]
        cols = [[mpmath.mpf(rng.uniform(-1, 1)) for _ in omegas] for _ in range(3)]
        beta = mpmath.mpf(7) / 2
        n_max = 2000            # reaches far past a_max / x_n = 1/256 (the expansion)
        got = matsubara_sums(omegas, cols, beta, n_max, 30)
        for c, col in enumerate(cols):
            for n in list(range(0, n_max, 37)) + [n_max - 1]:
                w = (2 * n + 1) * mpmath.pi / beta
                expect = mpmath.fsum(x / (mpmath.mpc(0, w) - om) for om, x in zip(omegas, col))
                assert abs(got[c][n] - expect) < mpmath.mpf(10) ** -31, (c, n)


def test_ring4_on_a_long_grid_agrees_with_an_independent_lehmann_computation():
    point = {"t": 1, "U": 3}
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    ps = PointSystem(spec, point, digits=30)
    gm = greens_matrix(spec, point, spin="up", N=4, digits=30, system=ps)
    beta, n_max = Fraction(10), 800
    vals = gm.matsubara(beta, n_max)
    ref = LehmannReference(*hubbard_h([(i, (i + 1) % 4) for i in range(4)], 4, 1.0, 3.0))
    for i in range(4):
        for j in range(4):
            expect = ref.matsubara(i, j, 0, float(beta), n_max, N=4, T=None, mu=None)
            for n in range(n_max):
                assert abs(complex(vals[n][i][j]) - expect[n]) <= 1e-10 * max(1, abs(expect[n]))
