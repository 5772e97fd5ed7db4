"""Independent tower checks for the tests: sector minima from the plain Fock reference.

E_min(S) < E_min(S + 1) < ... for every S >= S0 holds exactly when the lowest energies of
the Sz = S0, S0 + 1, ... sectors increase strictly (see tower_holds_at): the Sz = S sector holds every multiplet
with total spin >= S, so its lowest energy is min over S' >= S of E_min(S') (textbook
angular momentum, common practice).  Shares no code with symcluster.
"""

import numpy as np

from reference_fock import FockReference


def sz_minima(ref, n, values):
    """{2 Sz: lowest eigenvalue} of the N = n sectors of a FockReference at ``values``."""
    out = {}
    for n_up in range(n + 1):
        n_dn = n - n_up
        if n_up < n_dn or n_up > ref.n_sites or n_dn > ref.n_sites:
            continue
        out[n_up - n_dn] = float(np.min(ref.eigenvalues(values, n_up=n_up, n_dn=n_dn)))
    return out


def tower_holds_at(ref, n, values, tol=1e-9):
    """True when the spin tower from the smallest spin holds at this point.

    The Sz sector minima m(S) = min over S' >= S of E_min(S') never decrease with S; the
    tower holds exactly when they increase strictly, and fails exactly when two consecutive
    ones are equal (then E_min(S) >= E_min(S + 1) for some S).  Equal means within ``tol``
    (sample points are generic)."""
    m = sz_minima(ref, n, values)
    keys = sorted(m)
    diffs = [m[b] - m[a] for a, b in zip(keys, keys[1:])]
    assert all(d > -tol for d in diffs)
    return all(d > tol for d in diffs)


def reference(cluster):
    return FockReference(cluster.n_sites, list(cluster.bonds))
