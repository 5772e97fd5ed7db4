"""Independent labelled eigenvalues of the Hubbard ring, for the sector-selection tests.

Shares no code with symcluster.  The Hamiltonian, S+ and the basis come from the
Jordan-Wigner reference (tests/reference_fock.py).  The translation T (site j -> j + 1,
c+_{j s} -> c+_{j+1 s}) is built here from the basis states: a state is the product of
its creators in ascending mode order (modes 0..L-1 up, then down) on the vacuum, so its
image is the product of the moved creators, brought back into ascending order with the
sign of that permutation.  In one sector (N_up, N_dn) at a point, H, S^2 and
C = (T + T^+)/2 commute; a generic combination of them has simple eigenvalues, whose
eigenvectors give each level's energy, spin S (from S(S+1)) and cos k.
"""

import numpy as np

from reference_fock import FockReference


def _translation(ref, L, idx):
    """T restricted to the basis indices ``idx`` (dense, float), T c+_j T^-1 = c+_{j+1}."""
    where = {int(i): a for a, i in enumerate(idx)}
    n_modes = 2 * L
    t = np.zeros((len(idx), len(idx)))
    for a, i in enumerate(idx):
        # mode m is bit (2L - 1 - m) of the index (FockReference.state_index)
        modes = [m for m in range(n_modes) if int(i) >> (n_modes - 1 - m) & 1]
        moved = [(m + 1) % L + (L if m >= L else 0) for m in modes]
        inversions = sum(1 for x in range(len(moved)) for y in range(x + 1, len(moved))
                         if moved[x] > moved[y])
        j = 0
        for m in moved:
            j |= 1 << (n_modes - 1 - m)
        t[where[j], a] = -1.0 if inversions % 2 else 1.0
    return t


def ring_levels(L, point, n_up, n_dn):
    """``[(E, S, cos k)]`` of every eigenstate of the Hubbard ring in sector (n_up, n_dn) at
    ``point`` ({"t": ..., "U": ...}), float64."""
    ref = FockReference(L, [(i, (i + 1) % L, "t") for i in range(L)])
    idx = ref.sector_indices(n_up, n_dn)
    h = ref.matrix(point, idx)
    sp = ref.spin_plus().astype(float)
    sz = (n_up - n_dn) / 2
    # S^2 = S- S+ + Sz^2 + Sz; S+ leaves the sector, so S- S+ needs the sector above
    up = ref.sector_indices(n_up + 1, n_dn - 1) if n_dn > 0 else np.array([], dtype=int)
    if len(up):
        block = sp[up][:, idx].toarray()
        s2 = block.T @ block + (sz * sz + sz) * np.eye(len(idx))
    else:
        s2 = (sz * sz + sz) * np.eye(len(idx))
    t = _translation(ref, L, idx)
    c = (t + t.T) / 2
    mix = h + 0.37 * s2 + 0.53 * c
    _, vecs = np.linalg.eigh(mix)
    out = []
    for v in vecs.T:
        e = float(v @ h @ v)
        s2v = float(v @ s2 @ v)
        spin = (-1 + np.sqrt(1 + 4 * s2v)) / 2
        out.append((e, round(2 * spin) / 2, float(v @ c @ v)))
    return out
