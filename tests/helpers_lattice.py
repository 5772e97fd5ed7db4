"""An independent fermion algebra for the lattice tests (test modules import from here,
never from each other): creation-operator lists, their sorting sign, and a site
permutation applied to a state with its fermion sign, written without symcluster."""


def ops_of(up, dn, n):
    """Canonical operator list: (spin, site), spin 0 = up first, sites ascending."""
    return [(0, i) for i in range(n) if up >> i & 1] + [(1, j) for j in range(n) if dn >> j & 1]


def bubble(ops):
    """Sort a list of creation operators; return (sign, sorted list) or (0, None) if repeated."""
    ops = list(ops)
    if len(set(ops)) != len(ops):
        return 0, None
    swaps = 0
    for a in range(len(ops)):
        for b in range(len(ops) - 1 - a):
            if ops[b] > ops[b + 1]:
                ops[b], ops[b + 1] = ops[b + 1], ops[b]
                swaps += 1
    return (-1) ** swaps, ops


def masks_of(ops):
    up = dn = 0
    for spin, i in ops:
        if spin == 0:
            up |= 1 << i
        else:
            dn |= 1 << i
    return up, dn


def ref_permute(perm, up, dn, n):
    sign, ops = bubble([(s, perm[i]) for s, i in ops_of(up, dn, n)])
    return (sign, *masks_of(ops))
