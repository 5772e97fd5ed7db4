"""Certified eigenvectors of one sector through its exact lattice-symmetry blocks.

The whole-sector refinement of :mod:`symcluster.response.eigen` costs O(n^3) ball
operations per sweep for a sector of n states.  When the model has a lattice group G
(automorphisms of its terms, each checked on the operator), a sector splits into the
exact adapted subspaces W = P_lam P_psi V of :mod:`symcluster.symmetry.lattice`, one per
rational irrep, of dimension k much smaller than n.  For one such W with exact integer
basis B (n x k):

1. exactness: H B = B M is checked in exact rational arithmetic (python-flint
   ``fmpq_mat``), with M = G^-1 A, G = B^T B and A = B^T H B; so W is H-invariant and
   the spectrum of H on W is a subset of the sector's exact levels; an exact unit
   lower-triangular T with T G T^T = diag(d) (Gram-Schmidt in G, checked) makes the
   columns of Q = B T^T d^-1/2 orthonormal, and H_Q = d^-1/2 T A T^T d^-1/2 is the
   (symmetric) matrix of H in Q, enclosed in balls;
2. a float64 eigendecomposition of H_Q gives approximate coefficients; every column is
   matched with the nearest exact level of the sector (a mismatch is a
   :class:`VerificationError`);
3. refinement: the Ogita-Aishima step (R = 1 - X^T X, S = X^T H_Q X,
   F_ij = (S_ij + E_j R_ij) / (E_j - E_i) between levels, F_ij = R_ij / 2 within one,
   X += X F), R and S in ball arithmetic (``arb_mat``), F in float64 (it only steers the
   iteration), with the exact levels in the place of Ritz values;
4. certificate per level E of W with columns X_E (Fock vectors V_E = Q X_E): the Gram
   defect eta = ||X_E^T X_E - 1||_F and the residual r = ||H_Q X_E - E X_E||_F
   (= ||H V_E - E V_E||_F, Q being orthonormal), enclosed in balls; with delta the
   distance from E to the other exact levels of the whole sector (the spectrum of H on
   W is among them), Davis-Kahan gives ||Q_E - V_E V_E^T||_2 <= eps =
   eta + r / (sqrt(1 - eta) delta) for the projector Q_E onto the E-eigenvectors inside W;
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
import math

import flint
import mpmath
import numpy as np

from symcluster.errors import VerificationError
from symcluster.response.eigen import MAX_ITERATIONS, arb_precision, to_arb, upper

__all__ = ["BlockSector", "SymmetryBlock", "MemberVectors", "block_sector", "member_vectors",
           "symmetrizer"]


@dataclass
class SymmetryBlock:
    """One adapted subspace W of a sector with its certified eigen-coefficients.

    Attributes
    ----------
    factor : Fraction
        d / copies of its irrep: how many Fock states one column of W stands for.
    BT : flint.arb_mat
        The exact orthogonal basis of W, transposed: T B^T (k x n), T G T^T = diag(d).
    X : flint.arb_mat
        Coefficients (k x k) in that basis: the Fock eigenvectors are the columns of
        (T B^T)^T X, orthonormal to the certified Gram defect.
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


class _Prepared:
    """Exact matrices and float eigen-coefficients of every block of one sector."""

    def __init__(self, system, lattice, n_up, n_dn):
        self.sector = (n_up, n_dn)
        self.gaps = None
        base = system._prepare(n_up, n_dn)       # states, eigenspaces (shared objects), work
        self.states, self.index = base["states"], base["index"]
        self.spaces, self.work = base["spaces"], base["work"]
        n = len(self.states)
        exact = system.exact_matrix(self.states, self.index)
        den = 1                     # H = Hz / den with Hz an integer matrix
        for v in exact.values():
            den = math.lcm(den, v.denominator)
        Hz = flint.fmpz_mat(n, n)
        for (i, j), v in exact.items():
            Hz[i, j] = v.numerator * (den // v.denominator)
        self.Hq = flint.fmpq_mat(Hz) / den
        scale = float(system.scale)
        values = [float(sp.value) for sp in self.spaces]
        tol = 1e-7 * max([scale, 1.0] + [abs(v) for v in values])
        close = 1e-9 * scale + 1e-12
        self.group = lattice.group.elements
        # levels closer than float64 resolves cannot be told apart by the float matching
        self.separable = all(b - a > close for a, b in zip(values, values[1:]))
        self.values, self.tol, self.Hz, self.den = np.array(values), tol, Hz, den
        self.bases = []
        if self.separable:
            self.bases = [(irrep, vecs) for irrep, vecs in
                          zip(lattice.irreps, lattice.adapted_bases(self.states)) if vecs]
        self._blocks = {}
        self._counted = False

    def block(self, b):
        """Block ``b`` (built once): (factor, T B^T, d, Ap, float eigenvectors, owner)."""
        if b in self._blocks:
            return self._blocks[b]
        irrep, vecs = self.bases[b]
        n, k = len(self.states), len(vecs)
        n_up, n_dn = self.sector
        Hz, den = self.Hz, self.den
        B = flint.fmpz_mat(n, k)
        for c, vec in enumerate(vecs):
            for st, x in vec.items():
                B[self.index[st], c] = x
        Bt = B.transpose()
        HB = Hz * B                     # integer products; den H B
        G = flint.fmpq_mat(Bt * B)
        A = flint.fmpq_mat(Bt * HB) / den
        M = G.solve(A)
        if flint.fmpq_mat(B) * (M * den) != flint.fmpq_mat(HB):
            raise VerificationError(f"sector N_up={n_up}, N_dn={n_dn}: the adapted basis of "
                                    f"{irrep.label} is not invariant under H; report this model")
        # exact G-orthogonal basis B T^T: T G T^T = diag(d), checked exactly
        T, d = _orthogonalizer(G)
        Dm = flint.fmpq_mat(k, k)
        for i in range(k):
            Dm[i, i] = d[i]
        if T * G * T.transpose() != Dm:
            raise VerificationError("internal error: block Gram matrix not diagonalised")
        Ap = T * A * T.transpose()      # H in the basis B T^T; H_Q = d^-1/2 Ap d^-1/2
        df = np.array([float(x) for x in d])
        Hf = np.array(Ap.tolist(), dtype=float) / np.sqrt(np.outer(df, df))
        fvals, V = np.linalg.eigh((Hf + Hf.T) / 2)
        # every column to the nearest exact level of the sector
        vals = self.values
        hi = np.clip(np.searchsorted(vals, fvals), 1, len(vals) - 1) if len(vals) > 1 \
            else np.zeros(len(fvals), dtype=int)
        lo = np.maximum(hi - 1, 0)
        owner = np.where(np.abs(fvals - vals[lo]) <= np.abs(fvals - vals[hi]), lo, hi)
        bad = np.abs(fvals - vals[owner]) > self.tol
        if bad.any():
            f = fvals[np.argmax(bad)]
            raise VerificationError(
                f"sector N_up={n_up}, N_dn={n_dn}, block {irrep.label}: eigenvalue "
                f"{f:.12g} matches no level of the spectrum; report this model and point")
        out = self._blocks[b] = (Fraction(irrep.dim, irrep.copies),
                                 T * flint.fmpq_mat(Bt), d, Ap, V, [int(o) for o in owner])
        return out

    def all_blocks(self):
        """Every block, and the check that together they hold every level of the sector
        exactly as often as the spectrum says."""
        blocks = [self.block(b) for b in range(len(self.bases))]
        if not self._counted:
            count = [Fraction(0)] * len(self.spaces)
            for factor, *_, owner in blocks:
                for m in owner:
                    count[m] += factor
            for sp, c in zip(self.spaces, count):
                if c != sp.dim:
                    raise VerificationError(
                        f"sector N_up={self.sector[0]}, N_dn={self.sector[1]}: the symmetry "
                        f"blocks hold {c} states of the level {mpmath.nstr(sp.value, 12)}, "
                        f"the spectrum {sp.dim}; report this model and point")
            self._counted = True
        return blocks

    def refine(self, system, b):
        """Refine and certify block ``b``: (X, clusters)."""
        _, _, d, Ap, V, owner = self.block(b)
        clusters = [[self.spaces[m], [c for c, o in enumerate(owner) if o == m], None, None]
                    for m in sorted(set(owner))]
        with arb_precision(self.work + 10), mpmath.workdps(self.work + 10):
            rs = np.array([1 / flint.arb(x).sqrt() for x in d], dtype=object)   # d^-1/2
            HQ = flint.arb_mat((np.array(flint.arb_mat(Ap).tolist(), dtype=object)
                                * rs[:, None] * rs[None, :]).tolist())
            if self.gaps is None:
                self.gaps = _gaps(self.spaces, system, self.work)
            X = _refine_block(HQ, flint.arb_mat(V.tolist()), self.spaces, clusters, owner,
                              system, self.work, self.sector, self.gaps)
            # coefficients in the basis T B^T: rows scaled by d^-1/2
            X = flint.arb_mat((rs[:, None] * np.array(X.tolist(), dtype=object)).tolist())
        return X, clusters


def _orthogonalizer(G):
    """Exact unit lower-triangular T and d with T G T^T = diag(d), for a symmetric
    positive definite rational G: Gram-Schmidt in the G inner product, one connected
    component of G's off-diagonal pattern at a time (adapted basis vectors of different
    state orbits are orthogonal, so the components are small)."""
    k = G.nrows()
    rows = G.tolist()
    ent = {(i, j): Fraction(int(x.p), int(x.q)) for i, row in enumerate(rows)
           for j, x in enumerate(row) if x != 0}
    parent = list(range(k))

    def root(a):
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a
    for i, j in ent:
        if i != j:
            parent[root(i)] = root(j)
    comps = {}
    for i in range(k):
        comps.setdefault(root(i), []).append(i)
    T = flint.fmpq_mat(k, k)
    d = [None] * k
    for comp in comps.values():
        done = []                   # (index, vector {a: Fraction}, d)
        for i in comp:
            vec = {i: Fraction(1)}
            for j, u, dj in done:
                # <u, e_i>_G
                g = sum((x * ent.get((a, i), 0) for a, x in u.items()), Fraction(0))
                if g:
                    c = g / dj
                    for a, x in u.items():
                        vec[a] = vec.get(a, 0) - c * x
            di = sum((x * y * ent.get((a, b), 0) for a, x in vec.items() for b, y in vec.items()),
                     Fraction(0))
            done.append((i, vec, di))
            d[i] = flint.fmpq(di.numerator, di.denominator)
            for a, x in vec.items():
                if x:
                    T[i, a] = flint.fmpq(x.numerator, x.denominator)
    return T, d


def _prepared(system, lattice, n_up, n_dn):
    key = (n_up, n_dn)
    if key not in system.block_cache:
        system.block_cache[key] = _Prepared(system, lattice, n_up, n_dn)
    return system.block_cache[key]


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

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.response.eigen import PointSystem
    >>> ps = PointSystem(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 2}, digits=20)
    >>> bs = block_sector(ps, ps.lattice(), 2, 1)
    >>> int(sum(b.factor * b.X.nrows() for b in bs.blocks)), len(bs.states)   # blocks fill it
    (24, 24)
    >>> bs.worst_eps < 1e-28
    True
    """
    prep = _prepared(system, lattice, n_up, n_dn)
    if not prep.separable:
        return None
    blocks = []
    with arb_precision(prep.work + 10), mpmath.workdps(prep.work + 10):
        H = flint.arb_mat(prep.Hq)
        for b, (factor, TBt, *_) in enumerate(prep.all_blocks()):
            X, clusters = prep.refine(system, b)
            blocks.append(SymmetryBlock(factor, flint.arb_mat(TBt), X, clusters))
    worst = max((c[2] for b in blocks for c in b.clusters), default=0.0)
    return BlockSector((n_up, n_dn), prep.states, prep.index, H, prep.spaces, blocks,
                       prep.group, worst)


@dataclass
class MemberVectors:
    """Certified Fock vectors of some eigenspaces of one sector, read off one block each;
    ``rows[i][c]`` is entry i of the vector in column c (the columns of the eigenspaces
    as numbered by :class:`~symcluster.response.eigen.PointSystem`)."""

    states: list
    index: dict
    H: object
    rows: list
    worst_eps: float = 0.0


def member_vectors(system, lattice, n_up, n_dn, spaces):
    """Fock vectors of the eigenspaces ``spaces`` (of ``system.spaces(n_up, n_dn)``) when
    each lies whole in one block of a one-dimensional irrep (factor 1), else None.  Sets
    ``eps`` and ``eta`` of each space from its block's certificate (the block holds the
    whole eigenspace: its certified columns number the level's multiplicity).

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.response.eigen import PointSystem
    >>> ps = PointSystem(sc.solve(sc.hubbard(sc.ring(4))), {"t": 1, "U": 2}, digits=20)
    >>> ground = ps.spaces(2, 2)[:1]              # the unique singlet at half filling
    >>> mv = member_vectors(ps, ps.lattice(), 2, 2, ground)
    >>> mv.worst_eps < 1e-28, len(mv.rows)
    (True, 36)
    """
    prep = _prepared(system, lattice, n_up, n_dn)
    if not prep.separable:
        return None
    where = []
    for sp in spaces:
        m = next((m for m, s in enumerate(prep.spaces) if s is sp), None)
        if m is None:
            return None
        # the first block holding the level must hold all of it (factor 1): then, by the
        # dimension count, the whole eigenspace lies in that block
        for b in range(len(prep.bases)):
            blk = prep.block(b)
            hits = blk[5].count(m)
            if hits:
                if blk[0] != 1 or hits != sp.dim:
                    return None
                where.append((sp, m, b))
                break
        else:
            return None
    n = len(prep.states)
    rows = [dict() for _ in range(n)]
    done = {}
    with arb_precision(prep.work + 10), mpmath.workdps(prep.work + 10):
        H = flint.arb_mat(prep.Hq)
        for sp, m, b in where:
            if b not in done:
                done[b] = prep.refine(system, b)
            X, clusters = done[b]
            cl = next(c for c in clusters if c[0] is prep.spaces[m])
            if len(cl[1]) != sp.dim:
                return None
            V = (flint.arb_mat(prep.block(b)[1]).transpose() * X).tolist()
            for c, bc in zip(sp.columns, cl[1]):
                for i in range(n):
                    rows[i][c] = V[i][bc]
            sp.eps, sp.eta = cl[2], cl[3]
    worst = max(sp.eps for sp in spaces)
    return MemberVectors(prep.states, prep.index, H, rows, worst)


def _refine_block(HQ, X, spaces, clusters, owner, system, work, where, gaps=None):
    """Ogita-Aishima steps on the symmetric block HQ until the certificate holds (sets eps
    and eta of every cluster); returns the eigenvector coefficients.  A step squares the
    error, so a step runs at about twice the bits of the accuracy it starts from (the
    first from float64's 48 bits); the last steps and the certificate at full precision."""
    k = X.nrows()
    full = flint.ctx.prec
    vals = [to_arb(spaces[o].value) for o in owner]
    target = 10.0 ** (-(system.digits + 8))
    ev = np.array(vals, dtype=object)
    own = np.array(owner)
    same = own[:, None] == own[None, :]
    # F = S o dinv + R o evd: off the clusters dinv = 1/(E_j - E_i), evd = E_j dinv; on
    # them dinv = 0, evd = 1/2.  F is a correction of the size of the current error and is
    # needed to float64's relative accuracy only (the certificate, in balls, decides), so
    # it is formed in float64 from R and S, which are computed in balls
    dinv = 1 / np.where(same, flint.arb(1), ev[None, :] - ev[:, None])
    evd = np.where(same, 0.5, (ev[None, :] * dinv).astype(float))
    dinv = np.where(same, 0.0, dinv.astype(float))
    eye = flint.arb_mat(k, k)
    for i in range(k):
        eye[i, i] = 1
    worst = float("inf")
    gaps = gaps or _gaps(spaces, system, work)
    acc = 48
    for it in range(MAX_ITERATIONS):
        prec = min(full, 2 * acc + 32)
        flint.ctx.prec = prec
        try:
            Xt = X.transpose()
            r = np.array((eye - Xt * X).tolist(), dtype=float)
            s = np.array((Xt * (HQ * X)).tolist(), dtype=float)
            F = s * dinv + r * evd
            X = (X + X * flint.arb_mat(F.tolist())).mid()
        finally:
            flint.ctx.prec = full
        acc = 2 * acc - 8
        if prec < full and it + 1 < MAX_ITERATIONS:
            continue        # not yet at the accuracy a certificate needs
        worst = _certify_block(HQ, X, ev, gaps, clusters)
        if worst <= target:
            return X
    raise VerificationError(f"eigenvectors of sector N_up={where[0]}, N_dn={where[1]} could "
                            f"not be certified to {system.digits} digits in a symmetry block "
                            f"(bound {float(worst):.1e}); report this model and point")


def _gaps(spaces, system, work):
    """Per eigenspace of the sector, a float lower bound of the distance from its exact
    value to the other exact values, less twice their error rho; and rho."""
    rho = float(mpmath.mpf(10) ** (-work) * (float(system.scale) + 1)) * 1.01
    out = {}
    with mpmath.workdps(work + 10):
        values = [sp.value for sp in spaces]
        for m, sp in enumerate(spaces):
            near = [abs(values[m] - values[q]) for q in (m - 1, m + 1) if 0 <= q < len(values)]
            delta = (float(min(near)) * (1 - 1e-12) if near else float("inf")) - 2 * rho
            if delta <= 0:
                raise VerificationError("two levels of one sector cannot be separated at the "
                                        "point; evaluate at a nearby point")
            out[id(sp)] = delta
    return out, rho


def _certify_block(HQ, X, E, gaps, clusters):
    """Set eps and eta of every cluster (module docstring, step 4); the largest eps x dim.
    Float arithmetic rounded up: every bound is an upper bound."""
    delta, rho = gaps
    # only the cluster-diagonal parts of X^T X and D^T D are needed: column dots
    Xn = np.array(X.tolist(), dtype=object)
    D = np.array((HQ * X).tolist(), dtype=object) - Xn * E[None, :]
    res = (D * D).sum(axis=0)
    worst = 0.0
    for cl in clusters:
        sp, cols = cl[0], cl[1]
        r2 = sum(res[a] for a in cols)
        gram = Xn[:, cols].T.dot(Xn[:, cols]) - np.eye(len(cols), dtype=int)
        g2 = (gram * gram).sum()
        eta = math.sqrt(upper(g2)) * (1 + 1e-12)
        r = math.sqrt(upper(r2)) * (1 + 1e-12) + rho * math.sqrt(len(cols))
        eps = float("inf") if eta >= 0.5 else \
            (eta + r / (math.sqrt(1 - eta) * delta[id(sp)])) * (1 + 1e-12)
        cl[2], cl[3] = eps, eta
        worst = max(worst, eps * len(cols))
    return worst


def symmetrizer(group, n_modes):
    """The integer matrix S (M^2 x M^2), S[(i, j), (i', j')] = #{g : g(i) = i', g(j) = j'}
    (module docstring), as an exact arb_mat.

    Examples
    --------
    >>> S = symmetrizer([(0, 1), (1, 0)], 2)        # identity and the swap of two modes
    >>> [[int(S[a, b].unique_fmpz()) for b in range(4)] for a in range(4)]
    [[1, 0, 0, 1], [0, 1, 1, 0], [0, 1, 1, 0], [1, 0, 0, 1]]
    """
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
