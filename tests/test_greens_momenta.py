"""Momentum-resolved Green's functions on clusters with a translation group beyond rings
(symcluster/response/momenta.py): periodic grids and the tetrahedron, against the
tight-binding formula at U = 0 and the independent numpy Lehmann computation of
tests/helpers_lehmann.py (which shares no code with symcluster).
"""

import itertools
import math
from fractions import Fraction

import mpmath
import numpy as np
import pytest

import symcluster as sc
from symcluster.errors import ModelError
from symcluster.response.greens import greens_matrix

from helpers_lehmann import LehmannReference, hubbard_h


def _check_translations(tr, bonds, L):
    """The test's own checks that a reported translation group is one: every generator
    maps bonds to bonds, the generators commute, and site 0 reaches every site once."""
    bondset = {frozenset(b) for b in bonds}
    for g in tr.generators:
        assert {frozenset((g[a], g[b])) for a, b in bonds} == bondset
        for h in tr.generators:
            assert [g[h[i]] for i in range(L)] == [h[g[i]] for i in range(L)]
    seen = set()
    for e in itertools.product(*(range(n) for n in tr.orders)):
        site = 0
        for g, x in zip(tr.generators, e):
            for _ in range(x):
                site = g[site]
        assert tr.coords[site] == e
        seen.add(site)
    assert seen == set(range(L))


@pytest.mark.parametrize("nx, ny", [(3, 3), (4, 3)])
def test_free_periodic_grid_has_one_pole_per_momentum_at_the_band_energy(nx, ny):
    # U = 0, empty ground state: G(k, z) = 1/(z - eps(k)) with the tight-binding band
    # eps(k) = -2t (cos kx + cos ky) of the torus (textbook); the band is also checked as
    # the spectrum of the hopping matrix (numpy, built here from the bonds)
    cl = sc.grid(nx, ny, periodic=True)
    spec = sc.solve(sc.hubbard(cl), electrons=[0, 1])
    gm = greens_matrix(spec, {"t": 1, "U": 0}, N=0, mu=0, digits=30)
    L = nx * ny
    bonds = [(a, b) for a, b, _ in cl.bonds]
    tr = gm.translations
    _check_translations(tr, bonds, L)
    hop = np.zeros((L, L))
    for a, b in bonds:
        hop[a, b] = hop[b, a] = -1.0
    band = sorted(np.linalg.eigvalsh(hop))
    poles = []
    for m in itertools.product(*(range(n) for n in tr.orders)):
        g = gm.momentum(m if len(m) > 1 else m[0])
        assert len(g.poles) == 1, m
        om, w = g.poles[0]
        assert abs(w - 1) < mpmath.mpf(10) ** -25
        # k . r for the site reached by the generators with exponents e: the test's own
        # coordinates (x, y) of site x + nx y give the band energy directly
        kx = ky = 0.0
        for e_r, n_r, gen in zip(m, tr.orders, tr.generators):
            dx = gen[0] % nx
            dy = gen[0] // nx
            kx += 2 * math.pi * e_r * dx / n_r
            ky += 2 * math.pi * e_r * dy / n_r
        poles.append(float(om))
        if len(tr.orders) == 2 and all(
                gen[x + nx * y] == (x + gen[0] % nx) % nx + nx * ((y + gen[0] // nx) % ny)
                for gen in tr.generators for x in range(nx) for y in range(ny)):
            # both generators are translations by (dx, dy): k = sum_r m_r (dx, dy)_r / n_r
            assert abs(float(om) + 2 * (math.cos(kx) + math.cos(ky))) < 1e-12
    assert np.allclose(sorted(poles), band, atol=1e-12)


@pytest.mark.parametrize("name", ["tetrahedron", "grid(2,2)"])
def test_momentum_green_function_agrees_with_an_independent_fourier_transform(name):
    cl = sc.tetrahedron() if name == "tetrahedron" else sc.grid(2, 2, periodic=True)
    L = cl.n_sites
    bonds = [(a, b) for a, b, _ in cl.bonds]
    spec = sc.solve(sc.hubbard(cl), electrons=[1, 2, 3])
    point = {"t": 1, "U": 3}
    gm = greens_matrix(spec, point, N=2, digits=30)
    tr = gm.translations
    _check_translations(tr, bonds, L)
    ref = LehmannReference(*hubbard_h(bonds, L, 1.0, 3.0))
    beta = 3.0
    vals = {(i, j): ref.matsubara(i, j, 0, beta, 4, N=2) for i in range(L) for j in range(L)}
    for m in itertools.product(*(range(n) for n in tr.orders)):
        k = [2 * math.pi * x / n for x, n in zip(m, tr.orders)]
        expect = sum(np.exp(-1j * sum(kr * (a - b) for kr, a, b in
                                      zip(k, tr.coords[i], tr.coords[j]))) * vals[i, j]
                     for i in range(L) for j in range(L)) / L
        got = gm.momentum(m if len(m) > 1 else m[0]).matsubara(Fraction(3), 4)
        for n in range(4):
            assert abs(complex(got[n]) - expect[n]) < 1e-10, (name, m, n)


def test_momentum_labels_must_fit_the_translation_group():
    spec = sc.solve(sc.hubbard(sc.grid(3, 3, periodic=True)), electrons=[0, 1])
    gm = greens_matrix(spec, {"t": 1, "U": 0}, N=0, mu=0, digits=20)
    with pytest.raises(ModelError, match="one per translation generator"):
        gm.momentum(1)
    with pytest.raises(ModelError, match="one per translation generator"):
        gm.momentum((1, 2, 0))
