"""Bond lists of the built-in shapes, written independently of symcluster.lattice.clusters.

Each function returns (n_sites, [(i, j, "t"), ...]); used by the group and
lattice tests so that they do not depend on the cluster constructors.
"""


def ring(n):
    return n, [(i, (i + 1) % n, "t") for i in range(n)]


def chain(n):
    return n, [(i, i + 1, "t") for i in range(n - 1)]


def complete(n):
    return n, [(i, j, "t") for i in range(n) for j in range(i + 1, n)]


def cube():
    return 8, [(a, a ^ (1 << b), "t") for a in range(8) for b in range(3) if a < a ^ (1 << b)]


def grid(nx, ny):
    bonds = []
    for y in range(ny):
        for x in range(nx):
            s = x + nx * y
            if x + 1 < nx:
                bonds.append((s, s + 1, "t"))
            if y + 1 < ny:
                bonds.append((s, s + nx, "t"))
    return nx * ny, bonds


def star(leaves):
    return leaves + 1, [(0, i, "t") for i in range(1, leaves + 1)]
