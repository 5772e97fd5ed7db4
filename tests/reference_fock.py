"""Independent numeric reference for the Hubbard model on a small cluster.

Shares no code with symcluster: the full 4^L Fock-space Hamiltonian

    H = - sum_bonds sum_sigma t_b (c+_{i sigma} c_{j sigma} + h.c.)
        + U sum_i n_{i up} n_{i dn} + sum_i eps_i n_i

is assembled from Jordan-Wigner Kronecker products (P. Jordan, E. Wigner,
Z. Phys. 47, 631 (1928), from memory).  Modes are ordered
(0 up, 1 up, ..., (L-1) up, 0 dn, ..., (L-1) dn); mode 0 is the leftmost
Kronecker factor.  On one mode the basis is (|empty>, |occupied>), the
annihilator is a = [[0, 1], [0, 0]] and the string factor is Z = diag(1, -1):

    c_m = Z (x) ... (x) Z (x) a (x) 1 (x) ... (x) 1      (m string factors Z)

so every product of operators carries its fermion signs automatically,
including the string across the boundary bond of a ring.  ``fermionic=False``
drops all strings (hard-core bosons); on a ring this differs from the
fermion model exactly through the sign of the boundary bond, which is what the
convention tests use as a deliberately wrong model.

The Hamiltonian is kept as one exact integer matrix per coupling name
(scipy.sparse), so numeric matrices can be formed at any point in float64
or in mpmath at any precision.
"""

from fractions import Fraction
from itertools import combinations

import mpmath
import numpy as np
import scipy.sparse as sp

__all__ = ["FockReference", "expand", "max_deviation"]

_A = sp.csr_matrix(np.array([[0, 1], [0, 0]], dtype=np.int64))   # annihilator on one mode
_Z = sp.csr_matrix(np.diag(np.array([1, -1], dtype=np.int64)))   # string factor
_I = sp.identity(2, dtype=np.int64, format="csr")


def _mode_operator(m, n_modes, fermionic=True):
    """Annihilator of mode m on the 2^n_modes space (with or without the JW string)."""
    out = sp.identity(1, dtype=np.int64, format="csr")
    for k in range(n_modes):
        if k < m:
            f = _Z if fermionic else _I
        elif k == m:
            f = _A
        else:
            f = _I
        out = sp.kron(out, f, format="csr")
    return out


class FockReference:
    """Full Fock-space Hubbard Hamiltonian as integer coefficient matrices.

    Parameters
    ----------
    n_sites : int
    bonds : iterable of (i, j, label)
    site_labels : dict {site: label}, optional
    u_label : str
    fermionic : bool
        False drops every Jordan-Wigner string (deliberately wrong model).
    """

    def __init__(self, n_sites, bonds, site_labels=None, u_label="U", fermionic=True):
        L = n_sites
        self.n_sites = L
        n_modes = 2 * L
        dim = 4 ** L
        c = [_mode_operator(m, n_modes, fermionic) for m in range(n_modes)]
        cd = [op.T.tocsr() for op in c]
        num = [cd[m] @ c[m] for m in range(n_modes)]
        terms = {}

        def add(name, mat):
            terms[name] = terms.get(name, sp.csr_matrix((dim, dim), dtype=np.int64)) + mat

        for (i, j, label) in bonds:
            for s in (0, L):          # spin up modes 0..L-1, spin down modes L..2L-1
                hop = cd[i + s] @ c[j + s]
                add(label, -(hop + hop.T))
        for i in range(L):
            add(u_label, num[i] @ num[i + L])
        for i, label in (site_labels or {}).items():
            add(label, num[i] + num[i + L])
        self.terms = {k: v.tocsr() for k, v in terms.items()}
        self._c, self._cd = c, cd
        self.n_up = np.rint(sum(num[m] for m in range(L)).diagonal()).astype(int)
        self.n_dn = np.rint(sum(num[m] for m in range(L, n_modes)).diagonal()).astype(int)
        self.n_double = np.rint(sum((num[i] @ num[i + L]) for i in range(L)).diagonal()).astype(int)

    # ------------------------------------------------------------------ other operators
    def spin_plus(self):
        """S+ = sum_i c+_{i up} c_{i dn} (integer sparse matrix)."""
        L = self.n_sites
        return sum(self._cd[i] @ self._c[i + L] for i in range(L)).tocsr()

    def eta_plus(self, signs):
        """eta+ = sum_i signs_i c+_{i up} c+_{i dn} (C. N. Yang, PRL 63, 2144 (1989), from memory)."""
        L = self.n_sites
        return sum(int(signs[i]) * (self._cd[i] @ self._cd[i + L]) for i in range(L)).tocsr()

    @staticmethod
    def state_index(up, dn, n_sites):
        """Basis index of |up, dn> = prod_{i in up} c+_{i up} prod_{j in dn} c+_{j dn} |0>.

        Creators in ascending mode order acting on the vacuum pick up no Jordan-Wigner sign,
        so this basis vector enters with sign +1.  Mode m is bit (2L - 1 - m) of the index.
        """
        L = n_sites
        idx = 0
        for i in range(L):
            if up >> i & 1:
                idx |= 1 << (2 * L - 1 - i)
            if dn >> i & 1:
                idx |= 1 << (2 * L - 1 - (L + i))
        return idx

    # ------------------------------------------------------------------ sectors
    def sector_indices(self, n_up=None, n_dn=None, n=None):
        mask = np.ones(4 ** self.n_sites, dtype=bool)
        if n_up is not None:
            mask &= self.n_up == n_up
        if n_dn is not None:
            mask &= self.n_dn == n_dn
        if n is not None:
            mask &= (self.n_up + self.n_dn) == n
        return np.nonzero(mask)[0]

    def sectors(self, n=None):
        """All (n_up, n_dn) pairs, optionally with n_up + n_dn = n."""
        L = self.n_sites
        return [(a, b) for a in range(L + 1) for b in range(L + 1) if n is None or a + b == n]

    def integer_block(self, idx):
        """{name: dense int ndarray} restricted to the basis indices ``idx``."""
        return {k: v[idx][:, idx].toarray() for k, v in self.terms.items()}

    # ------------------------------------------------------------------ numbers
    def matrix(self, values, idx=None):
        """Dense float64 matrix at ``values`` ({name: number}), optionally restricted."""
        dim = 4 ** self.n_sites
        out = sp.csr_matrix((dim, dim), dtype=float)
        for k, v in self.terms.items():
            out = out + float(Fraction(str(values[k]))) * v.astype(float)
        if idx is not None:
            out = out[idx][:, idx]
        return out.toarray()

    def eigenvalues(self, values, n=None, n_up=None, n_dn=None):
        """Sorted float64 eigenvalues of H (whole space or one sector)."""
        if n is None and n_up is None and n_dn is None:
            out = []
            for a, b in self.sectors():
                out.extend(self.eigenvalues(values, n_up=a, n_dn=b))
            return np.sort(np.array(out))
        if n is not None and n_up is None and n_dn is None:
            out = []
            for a, b in self.sectors(n):
                out.extend(self.eigenvalues(values, n_up=a, n_dn=b))
            return np.sort(np.array(out))
        idx = self.sector_indices(n_up, n_dn, n)
        if len(idx) == 0:
            return np.array([])
        return np.linalg.eigvalsh(self.matrix(values, idx))

    def eigenvalues_mp(self, values, n_up, n_dn, digits=30):
        """Sorted mpmath eigenvalues of one (N_up, N_dn) sector at ``digits`` digits."""
        idx = self.sector_indices(n_up, n_dn)
        blocks = self.integer_block(idx)
        with mpmath.workdps(digits + 10):
            vals = {k: mpmath.mpf(Fraction(str(values[k])).numerator)
                    / Fraction(str(values[k])).denominator for k in blocks}
            d = len(idx)
            m = mpmath.matrix(d, d)
            for k, b in blocks.items():
                for r in range(d):
                    for s in range(d):
                        if b[r, s]:
                            m[r, s] += int(b[r, s]) * vals[k]
            ev = mpmath.eigsy(m, eigvals_only=True)
            return sorted(ev[r] for r in range(d))


def expand(pairs):
    """[(value, degeneracy), ...] -> sorted list of values repeated by degeneracy."""
    out = []
    for v, d in pairs:
        out.extend([v] * int(d))
    return sorted(out, key=float)


def _mp(x):
    """mpmath number from int, float, mpf, Fraction or an exact rational with .p/.q."""
    if isinstance(x, Fraction):
        return mpmath.mpf(x.numerator) / x.denominator
    if hasattr(x, "p") and hasattr(x, "q"):
        return mpmath.mpf(int(x.p)) / int(x.q)
    return mpmath.mpf(x)


def max_deviation(a, b):
    """Largest |a_k - b_k| of two equally long sorted sequences, computed at 50 digits."""
    assert len(a) == len(b), f"lengths differ: {len(a)} vs {len(b)}"
    with mpmath.workdps(50):
        return float(max((abs(_mp(x) - _mp(y)) for x, y in zip(a, b)), default=0))


def free_levels(single_particle, n_up, n_dn):
    """U = 0 many-body energies: all sums over occupied orbitals (multiset, sorted)."""
    L = len(single_particle)
    ups = [sum(single_particle[k] for k in occ) for occ in combinations(range(L), n_up)]
    dns = [sum(single_particle[k] for k in occ) for occ in combinations(range(L), n_dn)]
    return sorted(a + b for a in ups for b in dns)


def operator_matrix(products, n_modes):
    """Exact Fock-space matrix of a sum of ladder-operator products on ``n_modes`` spatial
    modes (2 * n_modes spin-orbitals: up modes first, then down modes).

    ``products`` is an iterable of ``(product, Fraction)``, each product a tuple of
    ``(mode, spin, dagger)`` written left to right.  Returns ``(int sparse matrix, den)``
    with the operator equal to ``matrix / den``; basis indices as :meth:`FockReference.state_index`.
    """
    products = list(products)
    n = 2 * n_modes
    c = [_mode_operator(m, n) for m in range(n)]
    den = 1
    for _, coef in products:
        den = den * Fraction(coef).denominator // np.gcd(den, Fraction(coef).denominator)
    out = sp.csr_matrix((2 ** n, 2 ** n), dtype=np.int64)
    for prod, coef in products:
        mat = sp.identity(2 ** n, dtype=np.int64, format="csr")
        for mode, spin, dagger in prod:
            op = c[spin * n_modes + mode]
            mat = mat @ (op.T.tocsr() if dagger else op)
        out = out + int(Fraction(coef) * den) * mat
    return out.tocsr(), den
