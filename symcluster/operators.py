"""Exact action of the model's operators on Fock states (fermion signs included).

All functions work on plain ``(up, dn)`` bit-mask pairs in the ordering of
symcluster.fock; coefficients are Python ints, grouped by coupling label
where they carry one.
"""

from .fock import apply_hop, double_occupancy, parity_below, popcount

__all__ = ["apply_hamiltonian", "apply_s_plus", "apply_s_minus",
           "apply_eta_plus", "apply_eta_minus"]


def apply_hamiltonian(model, up, dn):
    """H|up,dn> as {(up', dn'): {label: int coefficient}}.

    H = -sum_b t_b sum_s (c+_i c_j + c+_j c_i) + U sum n_up n_dn + sum eps_i n_i.
    """
    out = {}

    def add(state, label, c):
        row = out.setdefault(state, {})
        v = row.get(label, 0) + c
        if v:
            row[label] = v
        else:
            row.pop(label, None)

    for i, j, lab in model.hops:
        for a, b in ((i, j), (j, i)):
            r = apply_hop(up, a, b)
            if r is not None:
                add((r[1], dn), lab, -r[0])
            r = apply_hop(dn, a, b)
            if r is not None:
                add((up, r[1]), lab, -r[0])
    if model.u_label is not None:
        d = double_occupancy(up, dn)
        if d:
            add((up, dn), model.u_label, d)
    for i, lab in model.onsite:
        n = ((up >> i) & 1) + ((dn >> i) & 1)
        if n:
            add((up, dn), lab, n)
    return {s: row for s, row in out.items() if row}


def apply_s_plus(n_sites, up, dn):
    """S+ = sum_i c+_{i up} c_{i dn}; returns list of (int, (up', dn'))."""
    out = []
    n_up = popcount(up)
    for i in range(n_sites):
        if (dn >> i) & 1 and not (up >> i) & 1:
            sign = (-1) ** (n_up & 1) * parity_below(dn, i) * parity_below(up, i)
            out.append((sign, (up | 1 << i, dn & ~(1 << i))))
    return out


def apply_s_minus(n_sites, up, dn):
    """S- = sum_i c+_{i dn} c_{i up}; returns list of (int, (up', dn'))."""
    out = []
    n_up = popcount(up)
    for i in range(n_sites):
        if (up >> i) & 1 and not (dn >> i) & 1:
            # c_{i up} first (passes up orbitals below i), then c+_{i dn}
            # (passes the remaining n_up - 1 up orbitals and dn orbitals below i)
            sign = parity_below(up, i) * (-1) ** ((n_up - 1) & 1) * parity_below(dn, i)
            out.append((sign, (up & ~(1 << i), dn | 1 << i)))
    return out


def apply_eta_plus(signs, up, dn):
    """eta+ = sum_i eps_i c+_{i up} c+_{i dn}; ``signs`` holds eps_i = +-1 per site."""
    out = []
    n_up = popcount(up)
    for i, e in enumerate(signs):
        if not (up >> i) & 1 and not (dn >> i) & 1:
            sign = e * (-1) ** (n_up & 1) * parity_below(dn, i) * parity_below(up, i)
            out.append((sign, (up | 1 << i, dn | 1 << i)))
    return out


def apply_eta_minus(signs, up, dn):
    """eta- = (eta+)^dagger = sum_i eps_i c_{i dn} c_{i up}."""
    out = []
    n_up = popcount(up)
    for i, e in enumerate(signs):
        if (up >> i) & 1 and (dn >> i) & 1:
            sign = e * parity_below(up, i) * (-1) ** ((n_up - 1) & 1) * parity_below(dn, i)
            out.append((sign, (up & ~(1 << i), dn & ~(1 << i))))
    return out
