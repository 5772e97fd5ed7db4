"""An independent Lehmann computation of Green's functions with numpy (tests only).

Shares no code with symcluster.  Fermion operators are dense Jordan-Wigner matrices
(P. Jordan, E. Wigner, Z. Phys. 47, 631 (1928), from memory) on 2M spin-orbitals ordered
(mode 0 up, ..., mode M-1 up, mode 0 down, ..., mode M-1 down); a Green's function does
not depend on that ordering, only on which operator is c_{m sigma}.  Hamiltonians are
written here from the conventions in docs/conventions.md as formulas (hopping
-t (c+_a c_b + h.c.), hybridization +V (...), U n_up n_dn, the Kanamori interaction of
symcluster.kanamori's docstring).

The Lehmann sums follow the textbook form (G. D. Mahan, Many-Particle Physics, ch. 3,
from memory) with an ensemble given by N and T (canonical or ground state) or mu and T
(grand canonical), with the same measure of excitation energies as docs/greens.md:
G_ij(z) = sum_a p_a [sum_b <a|c_i|b><b|c_j+|a> / (z - (E_b - E_a - mu))
                     + sum_b <a|c_j+|b><b|c_i|a> / (z - (E_a - E_b - mu))].
"""

import numpy as np

__all__ = ["Fermions", "LehmannReference"]


class Fermions:
    """Dense c_{m, s} (s = 0 up, 1 down) on M modes."""

    def __init__(self, n_modes):
        self.M = n_modes
        n = 2 * n_modes
        self.dim = 2 ** n
        a = np.array([[0.0, 1.0], [0.0, 0.0]])
        z = np.diag([1.0, -1.0])
        eye = np.eye(2)
        self._c = []
        for k in range(n):
            mats = [z] * k + [a] + [eye] * (n - k - 1)
            out = np.array([[1.0]])
            for m in mats:
                out = np.kron(out, m)
            self._c.append(out)
        self.number = sum(c.T @ c for c in self._c)

    def c(self, mode, spin):
        return self._c[mode + spin * self.M]

    def cd(self, mode, spin):
        return self._c[mode + spin * self.M].T

    def n(self, mode, spin):
        return self.cd(mode, spin) @ self.c(mode, spin)

    def hop(self, a, b, spin=None):
        """c+_a c_b + c+_b c_a summed over spins (or one spin)."""
        spins = (0, 1) if spin is None else (spin,)
        return sum(self.cd(a, s) @ self.c(b, s) + self.cd(b, s) @ self.c(a, s) for s in spins)


def hubbard_h(bonds, n_sites, t, U, eps=None):
    f = Fermions(n_sites)
    h = np.zeros((f.dim, f.dim))
    for i, j in bonds:
        h -= t * f.hop(i, j)
    for i in range(n_sites):
        h += U * f.n(i, 0) @ f.n(i, 1)
        if eps is not None:
            h += eps[i] * (f.n(i, 0) + f.n(i, 1))
    return f, h


def anderson_h(eps_d, U, eps_bath, V):
    """Impurity on mode 0, bath modes 1..n (hybridization +V)."""
    f = Fermions(1 + len(eps_bath))
    h = eps_d * (f.n(0, 0) + f.n(0, 1)) + U * f.n(0, 0) @ f.n(0, 1)
    for k, (e, v) in enumerate(zip(eps_bath, V), start=1):
        h = h + e * (f.n(k, 0) + f.n(k, 1)) + v * f.hop(0, k)
    return f, h


def kanamori_dimer_h(t, U, J):
    """Two atoms of two orbitals (modes 2*site + orbital), U' = U - 2J, hopping t between
    equal orbitals of the two atoms."""
    f = Fermions(4)
    Up = U - 2 * J
    h = np.zeros((f.dim, f.dim))
    for site in (0, 1):
        a, b = 2 * site, 2 * site + 1
        for m in (a, b):
            h += U * f.n(m, 0) @ f.n(m, 1)
        for x, y in ((a, b), (b, a)):
            h += Up * f.n(x, 0) @ f.n(y, 1)
            # -J c+_x,up c_x,dn c+_y,dn c_y,up  and  +J c+_x,up c+_x,dn c_y,dn c_y,up
            h -= J * f.cd(x, 0) @ f.c(x, 1) @ f.cd(y, 1) @ f.c(y, 0)
            h += J * f.cd(x, 0) @ f.cd(x, 1) @ f.c(y, 1) @ f.c(y, 0)
        for s in (0, 1):
            h += (Up - J) * f.n(a, s) @ f.n(b, s)
    for orb in (0, 1):
        h -= t * f.hop(orb, 2 + orb)
    return f, h


def t_j_h(bonds, n_sites, t, J):
    """t-J model -t P (c+_i c_j + h.c.) P + J sum_b (S_i.S_j - n_i n_j / 4) and the mask of
    the allowed states (no double occupancy); P c P is c restricted to those states."""
    f = Fermions(n_sites)
    h = np.zeros((f.dim, f.dim))
    for i, j in bonds:
        h -= t * f.hop(i, j)
        sz = [(f.n(m, 0) - f.n(m, 1)) / 2 for m in (i, j)]
        sp = [f.cd(m, 0) @ f.c(m, 1) for m in (i, j)]
        n = [f.n(m, 0) + f.n(m, 1) for m in (i, j)]
        h += J * (sz[0] @ sz[1] + (sp[0] @ sp[1].T + sp[0].T @ sp[1]) / 2 - n[0] @ n[1] / 4)
    double = sum(f.n(m, 0) @ f.n(m, 1) for m in range(n_sites))
    allowed = np.diag(double) < 0.5
    return f, h, allowed


class LehmannReference:
    """Eigenstates of a dense H by particle number, and Green's functions from them.

    ``allowed`` (optional) restricts the states to a mask of the Fock basis; the ladder
    operators are then the projected P c P (their eigenbasis matrices vanish outside)."""

    def __init__(self, fermions, h, allowed=None):
        self.f = fermions
        self.h = h
        ns = np.rint(np.diag(fermions.number)).astype(int)
        if allowed is None:
            allowed = np.ones(len(ns), dtype=bool)
        self.vals, self.vecs, self.ns = [], [], []
        for n in sorted(set(ns[allowed])):
            idx = np.nonzero((ns == n) & allowed)[0]
            e, v = np.linalg.eigh(h[np.ix_(idx, idx)])
            full = np.zeros((fermions.dim, len(idx)))
            full[idx, :] = v
            self.vals.append(e)
            self.vecs.append(full)
            self.ns += [n] * len(idx)
        self.E = np.concatenate(self.vals)
        self.V = np.concatenate(self.vecs, axis=1)
        self.ns = np.array(self.ns)

    def ground(self, n):
        return float(np.min(self.E[self.ns == n]))

    def probabilities(self, N=None, T=None, mu=None):
        if N is not None:
            k = np.where(self.ns == N, self.E, np.inf)
        else:
            k = self.E - mu * self.ns
        kmin = np.min(k)
        if T is None:
            p = (np.abs(k - kmin) < 1e-9).astype(float)
        else:
            p = np.where(np.isfinite(k), np.exp(-(k - kmin) / T), 0.0)
        return p / p.sum()

    def default_mu(self, N):
        top = max(self.ns)
        if N in (0, top):
            return 0.0
        return (self.ground(N + 1) - self.ground(N - 1)) / 2

    def _eigenbasis(self, mode, spin):
        cache = self.__dict__.setdefault("_cache", {})
        if (mode, spin) not in cache:
            cache[mode, spin] = self.V.T @ self.f.c(mode, spin) @ self.V
        return cache[mode, spin]

    def poles(self, i, j, spin, N=None, T=None, mu=None):
        """(omegas, weights) as arrays, unmerged."""
        if mu is None:
            mu = self.default_mu(N)
        p = self.probabilities(N, T, mu)
        ci, cj = self._eigenbasis(i, spin), self._eigenbasis(j, spin)
        occ = np.nonzero(p > 1e-300)[0]
        E = self.E
        # particle: <a|c_i|b><b|c_j+|a> = ci[a, b] cj[a, b], at E_b - E_a - mu
        wp = p[occ, None] * ci[occ, :] * cj[occ, :]
        op = E[None, :] - E[occ, None] - mu
        # hole: <a|c_j+|b><b|c_i|a> = cj[b, a] ci[b, a], at E_a - E_b - mu
        wh = p[occ, None] * (cj[:, occ] * ci[:, occ]).T
        oh = E[occ, None] - E[None, :] - mu
        om = np.concatenate([op.ravel(), oh.ravel()])
        w = np.concatenate([wp.ravel(), wh.ravel()])
        keep = np.abs(w) > 1e-18
        return om[keep], w[keep]

    def matsubara(self, i, j, spin, beta, n_max, **ens):
        om, w = self.poles(i, j, spin, **ens)
        wn = (2 * np.arange(n_max) + 1) * np.pi / beta
        return (w[None, :] / (1j * wn[:, None] - om[None, :])).sum(axis=1)

    def imaginary_time(self, i, j, spin, beta, taus, **ens):
        om, w = self.poles(i, j, spin, **ens)
        out = []
        for tau in taus:
            pos = om >= 0
            val = np.where(pos, np.exp(-tau * np.abs(om)) / (1 + np.exp(-beta * np.abs(om))),
                           np.exp(-(beta - tau) * np.abs(om)) / (1 + np.exp(-beta * np.abs(om))))
            out.append(-(w * val).sum())
        return np.array(out)


def correlation_reference(ref, N=None, T=None, mu=None, level_energy=None):
    """<n_i n_j>, <S_i.S_j>, <Sz_i Sz_j>, <n_i up n_i dn>, <Delta_i+ Delta_j> from dense
    operators (Delta_i = c_i dn c_i up), in the ensemble of ``ref.probabilities``."""
    f = ref.f
    M = f.M
    if level_energy is not None:
        p = ((np.abs(ref.E - level_energy) < 1e-9) & (ref.ns == N)).astype(float)
        p /= p.sum()
    else:
        p = ref.probabilities(N, T, ref.default_mu(N) if mu is None and N is not None else mu)
    rho = (ref.V * p[None, :]) @ ref.V.T

    def ev(op):
        return float(np.trace(rho @ op))
    n = [f.n(m, 0) + f.n(m, 1) for m in range(M)]
    sz = [(f.n(m, 0) - f.n(m, 1)) / 2 for m in range(M)]
    sp = [f.cd(m, 0) @ f.c(m, 1) for m in range(M)]
    delta = [f.c(m, 1) @ f.c(m, 0) for m in range(M)]
    out = {"density": [[ev(n[i] @ n[j]) for j in range(M)] for i in range(M)],
           "sz": [[ev(sz[i] @ sz[j]) for j in range(M)] for i in range(M)],
           "spin": [[ev(sz[i] @ sz[j] + (sp[i] @ sp[j].T + sp[i].T @ sp[j]) / 2)
                     for j in range(M)] for i in range(M)],
           "double_occupancy": [ev(f.n(m, 0) @ f.n(m, 1)) for m in range(M)],
           "pair": [[ev(delta[i].T @ delta[j]) for j in range(M)] for i in range(M)]}
    return out
