"""lattice/shapes.py and lattice/flatband.py against graph facts computed in the test."""

import numpy as np
import pytest
import sympy

import symcluster as sc


def _adjacency(c):
    A = np.zeros((c.n_sites, c.n_sites))
    for i, j, _ in c.bonds:
        A[i, j] = A[j, i] = 1
    return A


@pytest.mark.parametrize("nx, ny", [(1, 1), (2, 1), (2, 2)])
def test_lieb_fragment_counts(nx, ny):
    # corners (nx+1)(ny+1), edge midpoints nx(ny+1) + ny(nx+1): the Lieb lattice's unit cell
    # (one corner, two edge sites; common practice, no source)
    c = sc.lieb(nx, ny)
    corners = (nx + 1) * (ny + 1)
    mids = nx * (ny + 1) + ny * (nx + 1)
    assert c.n_sites == corners + mids
    assert sorted(map(len, c.sublattices())) == sorted([corners, mids])
    assert len(c.bonds) == 2 * mids


def test_octahedron_is_the_line_graph_of_the_tetrahedron():
    o = sc.octahedron()
    A = _adjacency(o)
    assert (A.sum(axis=0) == 4).all() and o.n_sites == 6
    # line graph of a non-bipartite root with m edges and n vertices: eigenvalue -2 with
    # multiplicity m - n (D. Cvetkovic, M. Doob, H. Sachs, Spectra of Graphs, from memory)
    ev = np.linalg.eigvalsh(A)
    assert np.sum(np.abs(ev + 2) < 1e-9) == 6 - 4


@pytest.mark.parametrize("make", [sc.kagome_bowtie, lambda: sc.kagome_strip(3),
                                  lambda: sc.line_graph(sc.ring(6))])
def test_line_graphs_have_no_eigenvalue_below_minus_two(make):
    # A(L(G)) = B^T B - 2 I with B the vertex-edge incidence matrix (from memory): >= -2
    assert np.linalg.eigvalsh(_adjacency(make())).min() > -2 - 1e-9


def test_decorated_chains():
    d = sc.decorated_chain(4)
    assert d.n_sites == 4 + 2 * 3 and sorted(map(len, d.sublattices())) == [4, 6]
    # Lieb 1989: a bipartite graph has at least ||B| - |A|| zero modes
    ev = np.linalg.eigvalsh(_adjacency(d))
    assert np.sum(np.abs(ev) < 1e-9) >= 2
    comb = sc.decorated_chain(3, "comb")
    assert comb.n_sites == 6 and sorted(map(len, comb.sublattices())) == [3, 3]
    with pytest.raises(sc.ClusterError, match="decoration 'x' unknown"):
        sc.decorated_chain(3, "x")


def test_flat_band_of_the_octahedron_and_its_projector():
    fb = sc.flat_band(sc.octahedron(), t=-1)
    P = np.array(fb["projector"].evalf(), dtype=float)
    assert np.allclose(P @ P, P) and np.isclose(np.trace(P), 2)
    h = _adjacency(sc.octahedron())          # -t A with t = -1
    assert np.allclose(h @ P, -2 * P)
    assert fb["irreducible"]


def test_single_particle_levels_are_exact():
    lv = sc.single_particle_levels(sc.ring(6))
    # ring: -2t cos(2 pi m / L) (textbook tight binding)
    assert lv == [(-2, 1), (-1, 2), (1, 2), (2, 1)]
    assert sc.single_particle_levels(sc.star(3))[0] == (-sympy.sqrt(3), 1)


def test_paths_and_biconnectivity():
    from symcluster.lattice.flatband import is_biconnected, is_path
    assert is_path(sc.chain(5)) and not is_path(sc.star(3))
    assert is_biconnected(sc.octahedron()) and not is_biconnected(sc.kagome_bowtie())
