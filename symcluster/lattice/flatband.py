"""Graph facts the rigorous theorems need: single-particle levels and flat bands, paths,
2-connectedness.

The single-particle Hamiltonian of a cluster with one hopping value t on every bond is
h = -t A (A the adjacency matrix; the sign convention of docs/conventions.md).  Its
levels come from sympy's exact eigenvalues; a *flat band* here is the lowest level when it
is degenerate, and its projector P (exact) is *irreducible* when the graph joining i and j
wherever P_ij != 0 connects every site (A. Mielke, J. Phys. A 24, 3311 (1991); from memory).
"""

import sympy

from symcluster.errors import ClusterError
from symcluster.lattice.clusters import Cluster

__all__ = ["single_particle_levels", "flat_band", "is_path", "is_biconnected"]


def _adjacency(cluster):
    labels = {b[2] for b in cluster.bonds}
    if len(labels) > 1:
        raise ClusterError(f"{cluster.name} has several hopping labels {sorted(labels)}; the "
                           "flat-band report needs one hopping coupling on every bond")
    A = sympy.zeros(cluster.n_sites, cluster.n_sites)
    for i, j, _lab in cluster.bonds:
        A[i, j] = A[j, i] = 1
    return A


def single_particle_levels(cluster: Cluster, t: object = 1) -> list:
    """Exact levels of h = -t A, ascending: list of (energy, degeneracy).

    Examples
    --------
    >>> from symcluster.lattice.clusters import star
    >>> single_particle_levels(star(4))
    [(-2, 1), (0, 3), (2, 1)]
    """
    h = -sympy.Rational(t) * _adjacency(cluster)
    vals = h.eigenvals()
    return sorted(((sympy.nsimplify(v) if v.is_number else v, m) for v, m in vals.items()),
                  key=lambda p: sympy.N(p[0], 50))


def flat_band(cluster: Cluster, t: object = 1) -> dict:
    """The lowest single-particle level of h = -t A: energy, degeneracy, exact projector and
    whether the projector is irreducible.

    Returns
    -------
    dict
        ``energy``, ``degeneracy``, ``projector`` (sympy Matrix), ``irreducible`` (bool).

    Examples
    --------
    >>> from symcluster.lattice.shapes import octahedron
    >>> fb = flat_band(octahedron(), t=-1)
    >>> fb["energy"], fb["degeneracy"], fb["irreducible"]
    (-2, 2, True)
    """
    t = sympy.Rational(t)
    h = -t * _adjacency(cluster)
    energy, deg = single_particle_levels(cluster, t)[0]
    V = (h - energy * sympy.eye(cluster.n_sites)).nullspace()
    M = sympy.Matrix.hstack(*V)
    P = sympy.simplify(M * (M.T * M).inv() * M.T)
    n = cluster.n_sites
    seen, todo = {0}, [0]
    while todo:
        i = todo.pop()
        for j in range(n):
            if j not in seen and P[i, j] != 0:
                seen.add(j)
                todo.append(j)
    return {"energy": energy, "degeneracy": deg, "projector": P,
            "irreducible": len(seen) == n}


def is_path(cluster):
    """True for an open chain: connected, n - 1 bonds, no site with more than two.

    Examples
    --------
    >>> from symcluster.lattice.clusters import chain, ring
    >>> is_path(chain(4)), is_path(ring(4))
    (True, False)
    """
    return (cluster.is_connected() and len(cluster.bonds) == cluster.n_sites - 1
            and all(len(cluster.neighbours(i)) <= 2 for i in range(cluster.n_sites)))


def is_biconnected(cluster):
    """True when the graph stays connected after removing any one site (n >= 3).

    Examples
    --------
    >>> from symcluster.lattice.clusters import chain, ring
    >>> is_biconnected(ring(5)), is_biconnected(chain(3))
    (True, False)
    """
    n = cluster.n_sites
    if n < 3 or not cluster.is_connected():
        return False
    for cut in range(n):
        start = 0 if cut else 1
        seen, todo = {start}, [start]
        while todo:
            i = todo.pop()
            for j in cluster.neighbours(i):
                if j != cut and j not in seen:
                    seen.add(j)
                    todo.append(j)
        if len(seen) != n - 1:
            return False
    return True
