"""Built-in shapes that the rigorous theorems are about: Lieb-lattice fragments, line
graphs (octahedron, kagome fragments) and decorated chains.

Sublattices come from ``Cluster.sublattices()``; single-particle levels and flat bands from
:mod:`symcluster.lattice.flatband`.
"""

from symcluster.errors import ClusterError
from symcluster.lattice.clusters import Cluster, _need_int, cluster, tetrahedron

__all__ = ["lieb", "line_graph", "octahedron", "kagome_bowtie", "kagome_strip",
           "decorated_chain", "THEOREM_SHAPES"]


def lieb(nx: int, ny: int, t: str = "t") -> Cluster:
    """A fragment of nx x ny cells of the Lieb lattice (corners and edge midpoints).

    The sites are the points (i, j), 0 <= i <= 2 nx, 0 <= j <= 2 ny, not both odd, joined
    to their grid neighbours.  ``lieb(1, 1)`` is the square plaquette with its four edge
    midpoints (an 8-site ring: 4 corners, 4 midpoints, equal sublattices); larger
    fragments have more midpoints than corners' partners, e.g. ``lieb(2, 1)`` has 6
    corners and 7 midpoints.

    Examples
    --------
    >>> c = lieb(1, 1)
    >>> c.n_sites, [len(s) for s in c.sublattices()]
    (8, [4, 4])
    >>> [len(s) for s in lieb(2, 1).sublattices()]
    [6, 7]
    """
    _need_int(nx, "number of cells in x", 1)
    _need_int(ny, "number of cells in y", 1)
    pts = [(i, j) for j in range(2 * ny + 1) for i in range(2 * nx + 1)
           if not (i % 2 and j % 2)]
    index = {p: k for k, p in enumerate(pts)}
    bonds = []
    for (i, j), k in index.items():
        for q in ((i + 1, j), (i, j + 1)):
            if q in index:
                bonds.append((k, index[q], t))
    return cluster(len(pts), bonds, name=f"lieb({nx},{ny})")


def line_graph(root: Cluster, t: str = "t", name: str | None = None) -> Cluster:
    """The line graph of a cluster: one site per bond, joined when the bonds share a site.

    Examples
    --------
    >>> from symcluster.lattice.clusters import ring
    >>> line_graph(ring(5)).n_sites
    5
    """
    bonds = [b[:2] for b in root.bonds]
    if not bonds:
        raise ClusterError(f"{root.name} has no bonds; its line graph is empty")
    out = [(a, b, t) for a in range(len(bonds)) for b in range(a + 1, len(bonds))
           if set(bonds[a]) & set(bonds[b])]
    return cluster(len(bonds), out, name=name or f"line({root.name})")


def octahedron(t: str = "t") -> Cluster:
    """The octahedron, the line graph of the tetrahedron (6 sites, 12 bonds).

    Examples
    --------
    >>> octahedron().n_sites, len(octahedron().bonds)
    (6, 12)
    """
    return line_graph(tetrahedron(), t, name="octahedron")


def kagome_bowtie(t: str = "t") -> Cluster:
    """Two corner-sharing triangles (5 sites), the smallest kagome fragment with a shared
    corner: the line graph of two joined three-leaf stars.

    Examples
    --------
    >>> kagome_bowtie().n_sites, len(kagome_bowtie().bonds)
    (5, 6)
    """
    root = cluster(6, [(0, 1), (0, 2), (0, 3), (1, 4), (1, 5)], name="double-star")
    return line_graph(root, t, name="kagome_bowtie")


def kagome_strip(n: int, t: str = "t") -> Cluster:
    """``n`` triangles in a row, each sharing a corner with the next (2n + 1 sites).

    Examples
    --------
    >>> kagome_strip(2).n_sites
    5
    """
    _need_int(n, "number of triangles", 1)
    bonds = []
    for k in range(n):
        a, b, c = 2 * k, 2 * k + 1, 2 * k + 2
        bonds += [(a, b, t), (b, c, t), (a, c, t)]
    return cluster(2 * n + 1, bonds, name=f"kagome_strip({n})")


def decorated_chain(n: int, kind: str = "diamond", t: str = "t") -> Cluster:
    """A chain of ``n`` backbone sites with decorations.

    ``kind="diamond"``: consecutive backbone sites joined through two intermediate sites
    (n + 2 (n - 1) sites; bipartite, n backbone against 2 (n - 1) intermediate sites).
    ``kind="comb"``: one pendant site on every backbone site (2 n sites).

    Examples
    --------
    >>> c = decorated_chain(3)
    >>> c.n_sites, sorted(len(s) for s in c.sublattices())
    (7, [3, 4])
    >>> decorated_chain(3, "comb").n_sites
    6
    """
    _need_int(n, "number of backbone sites", 2)
    if kind == "diamond":
        bonds, k = [], n
        for i in range(n - 1):
            for _ in range(2):
                bonds += [(i, k, t), (k, i + 1, t)]
                k += 1
        return cluster(k, bonds, name=f"diamond_chain({n})")
    if kind == "comb":
        bonds = [(i, i + 1, t) for i in range(n - 1)] + [(i, n + i, t) for i in range(n)]
        return cluster(2 * n, bonds, name=f"comb({n})")
    raise ClusterError(f"decoration {kind!r} unknown; use 'diamond' or 'comb'")


#: name -> (constructor, number of integer arguments), as lattice.clusters.BUILTIN_SHAPES
THEOREM_SHAPES = {"lieb": (lieb, 2), "octahedron": (octahedron, 0),
                  "kagome_bowtie": (kagome_bowtie, 0), "kagome_strip": (kagome_strip, 1),
                  "diamond_chain": (decorated_chain, 1)}
