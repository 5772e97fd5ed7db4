"""Certified eigenvectors of one sector through its exact lattice-symmetry blocks.

The whole-sector refinement of :mod:`symcluster.response.eigen` costs O(n^3) ball
operations per sweep for a sector of n states.  When the model has a lattice group G
(automorphisms of its terms, each checked on the operator), a sector splits into the
exact adapted subspaces W = P_lam P_psi V of :mod:`symcluster.symmetry.lattice`, one per
rational irrep, of dimension k much smaller than n.  For one such W with exact integer
basis B (n x k):

1. exactness: H B = B M is checked in exact rational arithmetic (python-flint
   ``fmpq_mat``), with M = G^-1 A, G = B^T B and A = B^T H B; so W is H-invariant and
   the spectrum of H on W is a subset of the sector's exact levels;
2. a float64 solution of A c = E G c gives approximate coefficients; every column is
   matched with the nearest exact level of the sector (a mismatch is a
   :class:`VerificationError`);
3. refinement: the Ogita-Aishima step in the G inner product (R = 1 - X^T G X,
   S = X^T A X, F_ij = (S_ij + E_j R_ij) / (E_j - E_i), F_ii = R_ii / 2, X += X F), in
   ball arithmetic (``arb_mat``), with the exact levels in the place of Ritz values;
4. certificate per level E of W with columns X_E (Fock vectors V_E = B X_E): the Gram
   defect eta = ||X_E^T G X_E - 1||_F and the residual r^2 = tr(D^T G D), D = M X_E -
   E X_E (= ||H V_E - E V_E||_F^2), enclosed in balls; with delta the distance from E to
   the other exact levels of the whole sector (the spectrum of H on W is among them),
   Davis-Kahan gives ||Q_E - V_E V_E^T||_2 <= eps = eta + r / (sqrt(1 - eta) delta) for the
   projector Q_E onto the E-eigenvectors inside W;
5. completeness: for every level E of the sector, sum over W of (d / copies) times the
   number of columns matched with E equals the multiplicity of E in the sector (d the
   irrep dimension; W holds each irrep ``copies`` times per occurrence).

How the blocks give the full projector.  G acts by orthogonal signed permutations
commuting with H; on the isotypic part of an irrep of dimension d, P_lam acts as
1 (x) pi with pi of rank ``copies``, so by Schur's lemma
(1/|G|) sum_g g Q_E g^-1 = (copies / d) P_E on that part.  With U_g c_m U_g^-1 =
c_{g(m)} and any G-invariant ensemble state,
sum_a p_a <a|c_i P_E c_j^+|a> = (d / (copies |G|)) sum_g sum_a p_a <a|c_{g(i)} Q_E c_{g(j)}^+|a>,
which :mod:`symcluster.response.lehmann` evaluates (J.-P. Serre, "Linear
Representations of Finite Groups", sect. 2.6, 2.7 [from memory]).
"""

from dataclasses import dataclass, field
from fractions import Fraction

import flint
import mpmath
import numpy as np

from symcluster.errors import VerificationError
from symcluster.response.eigen import MAX_ITERATIONS, arb_precision, to_arb, upper

__all__ = ["BlockSector", "SymmetryBlock", "block_sector", "symmetrizer"]


@dataclass
class SymmetryBlock:
    """One adapted subspace W of a sector with its certified eigen-coefficients.

    Attributes
    ----------
    factor : Fraction
        d / copies of its irrep: how many Fock states one column of W stands for.
    BT : flint.arb_mat
        The exact basis, transposed (k x n).
    X : flint.arb_mat
        Coefficients (k x k) of the eigenvectors in the basis, orthonormal in G = B^T B.
    clusters : list of (Eigenspace, list of int, float, float)
        Per exact level: the sector's eigenspace, its columns in X, eps and eta.
    """

    factor: Fraction
    BT: object
    X: object
    clusters: list = field(default_factory=list)


@dataclass
class BlockSector:
    """A sector whose eigenvectors are known block by block (see the module docstring)."""

    sector: tuple
    states: list
    index: dict
    H: object                   # arb_mat of H at the point (n x n)
    spaces: list                # Eigenspace per exact level of the sector
    blocks: list
    group: list                 # the lattice group's mode permutations
    worst_eps: float = 0.0


def _fmpq(v):
    return flint.fmpq(v.numerator, v.denominator)


def block_sector(system, lattice, n_up, n_dn):
    """The :class:`BlockSector` of sector (n_up, n_dn), or None when a block holds two
    distinct levels closer than float64 resolves (the caller then refines the whole
    sector).

    Raises
    ------
    VerificationError
        A block is not H-invariant, a float eigenvalue matches no exact level, the
        certificate does not reach the requested digits, or the blocks do not add up to
        the sector's multiplicities.
    """
    space = system.space
    states = space.sector_states(n_up, n_dn)
    index = {s: i for i, s in enumerate(states)}
    n = len(states)
    spaces = system.merged_spaces(system.sector_levels(n_up, n_dn))
    work = system._sector_work(spaces)
    exact = system.exact_matrix(states, index)
    Hq = flint.fmpq_mat(n, n)
    for (i, j), v in exact.items():
        Hq[i, j] = _fmpq(v)
    scale = float(system.scale)
    tol = 1e-7 * max([scale, 1.0] + [abs(float(sp.value)) for sp in spaces])
    close = 1e-9 * scale + 1e-12
    values = [float(sp.value) for sp in spaces]
    group = lattice.group.elements
    blocks = []
    count = {id(sp): Fraction(0) for sp in spaces}
    with arb_precision(work + 10), mpmath.workdps(work + 10):
        H = flint.arb_mat(Hq)
        for irrep, vecs in zip(lattice.irreps, lattice.adapted_bases(states)):
            if not vecs:
                continue
            k = len(vecs)
            B = flint.fmpq_mat(n, k)
            for c, vec in enumerate(vecs):
                for st, x in vec.items():
                    B[index[st], c] = x
            Bt = B.transpose()
            HB = Hq * B
            G = Bt * B
            A = Bt * HB
            M = G.solve(A)
            if B * M != HB:
                raise VerificationError(f"sector N_up={n_up}, N_dn={n_dn}: the adapted basis of "
                                        f"{irrep.label} is not invariant under H; report this model")
            Gf = np.array([[float(x) for x in row] for row in G.tolist()])
            Af = np.array([[float(x) for x in row] for row in A.tolist()])
            L = np.linalg.cholesky(Gf)
            Li = np.linalg.inv(L)
            Ar = Li @ Af @ Li.T
            fvals, V = np.linalg.eigh((Ar + Ar.T) / 2)
            C = Li.T @ V
            # every column to the nearest exact level of the sector
            owner = []
            for f in fvals:
                m = int(np.argmin([abs(f - v) for v in values]))
                if abs(f - values[m]) > tol:
                    raise VerificationError(
                        f"sector N_up={n_up}, N_dn={n_dn}, block {irrep.label}: eigenvalue "
                        f"{f:.12g} matches no level of the spectrum; report this model and point")
                owner.append(m)
            used = sorted(set(owner))
            if any(values[b] - values[a] <= close for a, b in zip(used, used[1:])):
                return None
            clusters = []
            for m in used:
                cols = [c for c, o in enumerate(owner) if o == m]
                clusters.append([spaces[m], cols, None, None])
                count[id(spaces[m])] += Fraction(irrep.dim, irrep.copies) * len(cols)
            X = _refine_block(flint.arb_mat(G), flint.arb_mat(A), flint.arb_mat(M),
                              flint.arb_mat(C.tolist()), spaces, clusters, owner, system, work,
                              (n_up, n_dn, irrep.label))
            blocks.append(SymmetryBlock(Fraction(irrep.dim, irrep.copies),
                                        flint.arb_mat(Bt), X, clusters))
    for sp in spaces:
        if count[id(sp)] != sp.dim:
            raise VerificationError(
                f"sector N_up={n_up}, N_dn={n_dn}: the symmetry blocks hold {count[id(sp)]} "
                f"states of the level {mpmath.nstr(sp.value, 12)}, the spectrum {sp.dim}; "
                "report this model and point")
    worst = max((c[2] for b in blocks for c in b.clusters), default=0.0)
    for sp in spaces:
        sp.eps = max((c[2] for b in blocks for c in b.clusters if c[0] is sp), default=0.0)
    return BlockSector((n_up, n_dn), states, index, H, spaces, blocks, group, worst)


def _refine_block(G, A, M, X, spaces, clusters, owner, system, work, where):
    """Ogita-Aishima steps in the G inner product until the certificate holds (sets eps
    and eta of every cluster); returns the coefficients."""
    k = X.nrows()
    vals = [to_arb(spaces[o].value) for o in owner]
    target = mpmath.mpf(10) ** (-(system.digits + 8))
    E = flint.arb_mat(k, k)
    for c in range(k):
        E[c, c] = vals[c]
    for _ in range(MAX_ITERATIONS):
        Xt = X.transpose()
        r = (Xt * (G * X)).tolist()
        s = (Xt * (A * X)).tolist()
        F = flint.arb_mat(k, k)
        for i in range(k):
            ei, oi, ri, si = vals[i], owner[i], r[i], s[i]
            for j in range(k):
                rij = -ri[j] + (1 if i == j else 0)
                if owner[j] == oi:
                    F[i, j] = rij / 2
                else:
                    ej = vals[j]
                    F[i, j] = (si[j] + ej * rij) / (ej - ei)
        X = (X + X * F).mid()
        worst = _certify_block(G, M, X, E, spaces, clusters, system, work)
        if worst <= target:
            return X
    raise VerificationError(f"eigenvectors of sector N_up={where[0]}, N_dn={where[1]}, block "
                            f"{where[2]} could not be certified to {system.digits} digits "
                            f"(bound {float(worst):.1e}); report this model and point")


def _certify_block(G, M, X, E, spaces, clusters, system, work):
    """Set eps and eta of every cluster (module docstring, step 4); the largest eps x dim."""
    Xt = X.transpose()
    gram = (Xt * (G * X)).tolist()
    D = M * X - X * E
    res = (D.transpose() * (G * D)).tolist()
    rho = mpmath.mpf(10) ** (-work) * (float(system.scale) + 1)
    values = [sp.value for sp in spaces]
    pos = {id(sp): m for m, sp in enumerate(spaces)}
    worst = mpmath.mpf(0)
    for cl in clusters:
        sp, cols = cl[0], cl[1]
        m = pos[id(sp)]
        gaps = [abs(values[m] - values[q]) for q in (m - 1, m + 1) if 0 <= q < len(values)]
        delta = (min(gaps) if gaps else mpmath.inf) - 2 * rho
        if delta <= 0:
            raise VerificationError("two levels of one sector cannot be separated at the "
                                    "point; evaluate at a nearby point")
        g2 = flint.arb(0)
        r2 = flint.arb(0)
        for a in cols:
            r2 += res[a][a]
            for b in cols:
                x = gram[a][b] - (1 if a == b else 0)
                g2 += x * x
        eta = mpmath.sqrt(mpmath.mpf(upper(g2)))
        r = mpmath.sqrt(mpmath.mpf(upper(r2))) + rho * mpmath.sqrt(len(cols))
        eps = mpmath.inf if eta >= mpmath.mpf(1) / 2 else eta + r / (mpmath.sqrt(1 - eta) * delta)
        cl[2], cl[3] = float(eps) if eps != mpmath.inf else float("inf"), float(eta)
        worst = max(worst, eps * len(cols))
    return worst


def symmetrizer(group, n_modes):
    """The integer matrix S (M^2 x M^2), S[(i, j), (i', j')] = #{g : g(i) = i', g(j) = j'}
    (module docstring), as an exact arb_mat."""
    M = n_modes
    S = flint.arb_mat(M * M, M * M)
    counts = {}
    for g in group:
        for i in range(M):
            for j in range(M):
                key = (i * M + j, g[i] * M + g[j])
                counts[key] = counts.get(key, 0) + 1
    for (a, b), c in counts.items():
        S[a, b] = c
    return S
