"""Fock basis kernels on plain integers.

A basis state is a pair of bit masks ``(up, dn)``: bit ``i`` of ``up`` is set
when site ``i`` holds a spin-up electron, likewise for ``dn``.

Fermion ordering (see docs/conventions.md)::

    |up, dn> = c+_{i1 up} c+_{i2 up} ... c+_{j1 dn} c+_{j2 dn} ... |0>,
               i1 < i2 < ...            j1 < j2 < ...

i.e. all spin-up orbitals first, each spin block in increasing site order.
The sign of an operator string is the parity of the number of occupied
orbitals it has to pass in this order.
"""

from itertools import combinations

__all__ = [
    "popcount", "states_with", "sector_states", "hop_sign",
    "apply_hop", "double_occupancy", "parity_below",
]


def popcount(x):
    return x.bit_count()


def states_with(n_sites, n_particles):
    """All bit masks on ``n_sites`` bits with ``n_particles`` set bits, ascending."""
    out = []
    for occ in combinations(range(n_sites), n_particles):
        m = 0
        for i in occ:
            m |= 1 << i
        out.append(m)
    out.sort()
    return out


def sector_states(n_sites, n_up, n_dn):
    """The basis of sector (N_up, N_dn) as a list of (up, dn), in a fixed order."""
    ups = states_with(n_sites, n_up)
    dns = states_with(n_sites, n_dn)
    return [(u, d) for u in ups for d in dns]


def parity_below(mask, i):
    """(-1)**(number of set bits of ``mask`` strictly below bit i)."""
    return -1 if popcount(mask & ((1 << i) - 1)) & 1 else 1


def hop_sign(mask, i, j):
    """Sign of c+_j c_i acting on one spin species' occupation ``mask``.

    Requires bit i set and bit j clear.  The sign is (-1)**(number of
    occupied orbitals strictly between i and j); orbitals of the other spin
    species never contribute (they are passed twice or not at all).
    """
    lo, hi = (i, j) if i < j else (j, i)
    between = mask & ((1 << hi) - 1) & ~((1 << (lo + 1)) - 1)
    return -1 if between.bit_count() & 1 else 1


def apply_hop(mask, i, j):
    """c+_j c_i on one species: returns (sign, new_mask) or None if it vanishes."""
    if not (mask >> i) & 1 or (mask >> j) & 1:
        return None
    return hop_sign(mask, i, j), mask ^ (1 << i) ^ (1 << j)


def double_occupancy(up, dn):
    return popcount(up & dn)
