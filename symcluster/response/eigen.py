"""Eigenvectors of every level at an exact point, certified against the exact spectrum.

For a solved model and an exact rational point, :class:`PointSystem` gives, sector by
sector ``(N_up, N_dn)``, an orthonormal basis of every eigenspace of H in the Fock basis
(the fermion ordering of docs/conventions.md), at a working precision well beyond the
requested digits, with a proven bound on its error:

1. the sector matrix of H is read off the model's terms (``hilbert.action``) with exact
   rational entries at the point;
2. a float64 eigendecomposition gives approximate eigenvectors; each float eigenvalue is
   matched with the exact level it belongs to (the spectrum's certified values and
   multiplicities per sector; a mismatch is a :class:`VerificationError`);
3. the eigenvectors are refined in ball arithmetic (python-flint ``arb_mat``) by the
   iteration of Ogita and Aishima, with the exact eigenvalues in the place of Ritz
   values, until the certificate below reaches the requested digits;
4. certificate, per eigenspace A of dimension d_A with computed basis X_A: the Gram
   defect eta = ||X_A^T X_A - 1||_F and the residual r = ||H X_A - E_A X_A||_F are
   enclosed in balls; with delta the distance from E_A to the other exact levels of the
   sector, the Davis-Kahan sin-theta theorem bounds the projector error
   ||P_A - X_A X_A^T||_2 <= eps_A = eta + r / (sqrt(1 - eta) delta).

The exact eigenvalues and their multiplicities come from the spectrum (each verified when
it was solved); the vectors come from the sector matrix.  Levels whose values coincide
at the point to within ``10**-(digits + 8)`` of the energy scale form one eigenspace.

References
----------
T. Ogita, K. Aishima, "Iterative refinement for symmetric eigenvalue decomposition",
Japan J. Indust. Appl. Math. 35, 1007 (2018) [from memory].
C. Davis, W. M. Kahan, "The rotation of eigenvectors by a perturbation. III",
SIAM J. Numer. Anal. 7, 1 (1970) [from memory].
"""

from dataclasses import dataclass, field
from fractions import Fraction
import flint
import mpmath
import numpy as np

from symcluster.errors import ModelError, VerificationError
from symcluster.hilbert.action import HamiltonianAction
from symcluster.response.balls import arb_precision, to_arb, to_mpf, to_mpf_list, upper
from symcluster.spectrum import check_digits, energy_numeric
from symcluster.symmetry.termgraph import term_lattice_symmetry

__all__ = ["PointSystem", "SectorEigen", "Eigenspace", "arb_precision", "to_mpf", "to_arb",
           "upper", "ladder_matrix", "sector_sign", "to_mpf_list"]

#: iterations of the refinement before giving up (each roughly doubles the digits)
MAX_ITERATIONS = 12


def sector_sign(up, dn, mode, spin):
    """Sign of c_{mode,spin} (or its adjoint) on |up, dn>: the parity of the occupied
    spin-orbitals before it in the ordering of docs/conventions.md (all up, then all down)."""
    below = (1 << mode) - 1
    if spin == 0:
        n = (up & below).bit_count()
    else:
        n = up.bit_count() + (dn & below).bit_count()
    return -1 if n & 1 else 1


def ladder_matrix(space, src_states, dst_index, mode, spin, dagger):
    """The matrix of c_{mode,spin} (``dagger``: its adjoint) from one sector to the next.

    Returns a list of ``(row, column, sign)``: row in the target sector (``dst_index``,
    state -> row), column in ``src_states``.  On a projected space, images outside the
    space are dropped (the projected operator P c P).
    """
    out = []
    bit = 1 << mode
    for col, (up, dn) in enumerate(src_states):
        word = up if spin == 0 else dn
        if bool(word & bit) == dagger:
            continue
        sign = sector_sign(up, dn, mode, spin)
        new = (up ^ bit, dn) if spin == 0 else (up, dn ^ bit)
        if space.projected and not space.allows(*new):
            continue
        out.append((dst_index[new], col, sign))
    return out


@dataclass
class Eigenspace:
    """One eigenspace of a sector at the point.

    Attributes
    ----------
    value : mpmath.mpf
        The certified energy (digits + 15 digits).
    dim : int
    columns : list of int
        Its columns in the sector's eigenvector matrix.
    levels : list of Level
        The spectrum's levels whose states it holds in this sector.
    eps : float
        Proven bound of ||P - X X^T||_2 (see the module docstring).
    eta : float
        Gram defect ||X^T X - 1||_F of its columns.
    """

    value: object
    dim: int
    columns: list
    levels: list
    eps: object = None       # set when the eigenspace is refined and certified
    eta: object = None


@dataclass
class SectorEigen:
    """Every eigenspace of one sector, with the refined eigenvector matrix."""

    sector: tuple
    states: list
    index: dict
    X: object                    # arb_mat n x n, columns = eigenvectors
    spaces: list
    H: object                    # arb_mat of H at the point
    iterations: int = 0
    worst_eps: float = 0.0
    rows: list = field(default=None, repr=False)   # X as a list of rows of arb

    def columns(self, space):
        """The columns of one eigenspace as an arb_mat (n x d)."""
        rows = self.rows
        return flint.arb_mat([[r[c] for c in space.columns] for r in rows])


class PointSystem:
    """A solved model at one exact point: certified eigenspaces of every sector, on demand.

    The object caches what it computed (sector eigenvectors, level values); one caller
    owns it for one point and one precision.

    Parameters
    ----------
    spectrum : Spectrum
        A solved model with electrons (every sector that is asked for must be solved).
    values : dict
        ``{coupling: value}`` for every free coupling; exact (ints, Fractions, "3/2").
    digits : int
        Digits the results must carry (the work runs at ``digits + 15``).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> ps = PointSystem(spec, {"t": 1, "U": 4}, digits=20)
    >>> [mpmath.nstr(s.value, 12) for s in ps.sector(1, 1).spaces]   # U/2 -+ sqrt(U^2/4+4t^2), 0, U
    ['-0.828427124746', '0.0', '4.0', '4.82842712475']
    """

    def __init__(self, spectrum, values, digits=30):
        check_digits(digits)
        model = spectrum.model
        if not model.space.has_charge:
            raise ModelError("a spin model has no electron operators; Green's functions and "
                             "charge correlations need a model of electrons (hubbard, anderson, "
                             "kanamori, t_j or a model file of electrons)")
        self.spectrum = spectrum
        self.model = model
        self.space = model.space
        self.digits = digits
        self.work = digits + 15
        self.point = spectrum.point(values)
        self.values = {}
        for label in model.labels:
            if label in spectrum.fixed:
                v = spectrum.fixed[label]
            else:
                v = next(x for s, x in self.point.items() if s.name == label)
            self.values[label] = Fraction(int(v.p), int(v.q))
        self.scale = max([abs(v) for v in self.values.values()] + [Fraction(1, 10 ** 6)])
        self._action = HamiltonianAction(model)
        self._level_values = {}
        self._sectors = {}
        self._partial = {}
        self._prepared = {}
        self._lattice = False
        self._exact = {}
        self.block_sectors = {}       # response.blockeig.BlockSector per sector, by lehmann
        self.block_cache = {}         # response.blockeig's exact block data per sector

    # ----- levels ---------------------------------------------------------------------
    def _values_of_n(self, n):
        if n not in self._level_values:
            out = []
            with mpmath.workdps(self.work):
                for lev in self.spectrum.levels:
                    if lev.quantum_numbers.get("N") == n:
                        out.append((lev, +energy_numeric(lev.energy, self.point, self.work,
                                                         lev.polynomial)))
            self._level_values[n] = out
        return self._level_values[n]

    def sector_levels(self, n_up, n_dn):
        """``[(Level, value, states in this sector)]`` of one sector."""
        n, sz2 = n_up + n_dn, n_up - n_dn
        out = []
        for lev, val in self._values_of_n(n):
            qn = lev.quantum_numbers
            if "Sz" in qn:
                if int(2 * qn["Sz"]) == sz2:
                    out.append((lev, val, lev.degeneracy))
            elif "S" in qn:
                s2 = int(2 * qn["S"])
                if abs(sz2) <= s2 and (s2 - sz2) % 2 == 0:
                    out.append((lev, val, lev.degeneracy // (s2 + 1)))
            else:
                raise ModelError(f"level {lev.energy} carries neither S nor Sz; it cannot be "
                                 "placed in a sector (N_up, N_dn)")
        dim = self.space.sector_dim(n_up, n_dn)
        if sum(m for _, _, m in out) != dim:
            raise ModelError(f"the spectrum does not hold every level with N={n} (sector "
                             f"N_up={n_up}, N_dn={n_dn} has {dim} states); solve with all "
                             f"electron numbers, or include N={n} in electrons=")
        return out

    def level_vectors(self, level):
        """Orthonormal eigenvectors of one level at the point, certified.

        Returns
        -------
        dict
            ``{(N_up, N_dn): [ {(up, dn): mpmath.mpf}, ... ]}``: an orthonormal basis of the
            level's states in each sector where it has states (all its multiplet members),
            in the fermion ordering of docs/conventions.md; each vector's projector is
            within ``eps`` (see :class:`Eigenspace`) of the exact one.

        Raises
        ------
        ModelError
            The level is degenerate at the point with another level of the same sector
            (their states cannot be told apart there), or not one of the spectrum's levels.

        Examples
        --------
        >>> import symcluster as sc
        >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
        >>> ps = PointSystem(spec, {"t": 1, "U": 0}, digits=20)
        >>> singlet = [l for l in spec.select(N=2) if l.numeric({"t": 1, "U": 0}) < -1][0]
        >>> vecs = ps.level_vectors(singlet)
        >>> sorted(vecs), len(vecs[(1, 1)])
        ([(1, 1)], 1)
        >>> sorted(mpmath.nstr(abs(x), 6) for x in vecs[(1, 1)][0].values())   # all four 1/2
        ['0.5', '0.5', '0.5', '0.5']
        """
        n = level.quantum_numbers.get("N")
        out = {}
        for sec in self.space.sectors([n] if n is not None else None):
            if not any(lev is level for lev, _, _ in self.sector_levels(*sec)):
                continue
            for sp in self.spaces(*sec):
                if not any(lev is level for lev in sp.levels):
                    continue
                if len(sp.levels) > 1:
                    raise ModelError("this level is degenerate with another level of its "
                                     "sector at the point; evaluate at a nearby point")
                eig = self.vectors(*sec, [sp])
                vecs = []
                for c in sp.columns:
                    vec = {}
                    for st, row in zip(eig.states, eig.rows):
                        x = to_mpf(row[c])
                        if x:
                            vec[st] = x
                    vecs.append(vec)
                out[sec] = vecs
        if not out:
            raise ModelError("the level is not one of this spectrum's levels")
        return out

    def worst_eps(self):
        """The largest projector bound of the eigenspaces certified so far."""
        return max([sp.eps for prep in self._prepared.values() for sp in prep["spaces"]
                    if sp.eps is not None] + [b.worst_eps for b in self.block_sectors.values()
                                              if b is not None], default=0.0)

    # ----- sectors ----------------------------------------------------------------------
    def has_sector(self, n_up, n_dn):
        return self.space.sector_dim(n_up, n_dn) > 0

    def sector(self, n_up, n_dn):
        """The :class:`SectorEigen` of sector (n_up, n_dn), every eigenspace refined and
        certified; computed once."""
        key = (n_up, n_dn)
        if key not in self._sectors:
            self._sectors[key] = self._refine_sector(key, None)
        return self._sectors[key]

    def spaces(self, n_up, n_dn):
        """The eigenspaces of a sector (values, dimensions, columns), before refinement."""
        return self._prepare(n_up, n_dn)["spaces"]

    def vectors(self, n_up, n_dn, spaces):
        """A :class:`SectorEigen` whose columns of ``spaces`` are refined and certified
        (the whole sector if it was computed already; else only those columns, the others
        staying float64 approximations that the caller must not use)."""
        key = (n_up, n_dn)
        if key in self._sectors:
            return self._sectors[key]
        want = frozenset(id(sp) for sp in spaces)
        part = self._partial.get(key)
        if part is None or not want <= part[0]:
            self._partial[key] = (want, self._refine_sector(key, spaces))
        return self._partial[key][1]

    def exact_matrix(self, states, index):
        """H of a sector at the point: ``{(row, col): int or Fraction}`` (computed once per
        sector; both have ``numerator`` and ``denominator``)."""
        key = (states[0], len(states)) if states else None
        cache = self._exact
        if key in cache:
            return cache[key]
        entries = {}
        # integer values as ints: the sums stay integers where they can
        vals = {lab: (v.numerator if v.denominator == 1 else v) for lab, v in self.values.items()}
        for col, st in enumerate(states):
            for st2, lab, c in self._action[st]:
                row = index.get(st2)
                if row is None:
                    continue
                entries[(row, col)] = entries.get((row, col), 0) + c * vals[lab]
        out = cache[key] = {k: v for k, v in entries.items() if v}
        return out

    def _prepare(self, n_up, n_dn, floats=False):
        """Sector states and its eigenspaces (exact levels, columns in ascending order);
        with ``floats``, also the exact matrix and its float eigenvectors, matched with
        the eigenspaces (computed on first need)."""
        key = (n_up, n_dn)
        out = self._prepared.get(key)
        if out is None:
            states = self.space.sector_states(n_up, n_dn)
            spaces = self.merged_spaces(self.sector_levels(n_up, n_dn))
            col = 0
            for sp in spaces:
                sp.columns = list(range(col, col + sp.dim))
                col += sp.dim
            out = self._prepared[key] = {"states": states, "spaces": spaces,
                                         "index": {s: i for i, s in enumerate(states)},
                                         "work": self._sector_work(spaces)}
        if floats and "fvecs" not in out:
            n = len(out["states"])
            exact = self.exact_matrix(out["states"], out["index"])
            dense = np.zeros((n, n))
            for (i, j), v in exact.items():
                dense[i, j] = float(v)
            fvals, fvecs = np.linalg.eigh(dense)
            self._match(out["spaces"], fvals, key)
            out["exact"], out["fvecs"] = exact, fvecs
        return out

    def _sector_work(self, spaces):
        """Working digits for a sector: ``work``, plus the decades of its smallest relative
        gap between distinct levels when that is below 1e-8 (the certificate divides by the
        gap, so the energies must be known that much better); the values of the sector's
        eigenspaces are recomputed at that precision."""
        with mpmath.workdps(self.work):
            gaps = [spaces[k + 1].value - spaces[k].value for k in range(len(spaces) - 1)]
            g = min(gaps, default=mpmath.mpf(1)) / (float(self.scale) + 1)
            if g >= mpmath.mpf(10) ** -8:
                return self.work
            work = self.work + int(-mpmath.log10(g)) + 4
        with mpmath.workdps(work):
            for sp in spaces:
                lev = sp.levels[0]
                sp.value = +energy_numeric(lev.energy, self.point, work, lev.polynomial)
        return work

    def _refine_sector(self, key, only):
        """Refine every column (``only`` None) or the columns of the eigenspaces ``only``."""
        prep = self._prepare(*key, floats=True)
        states, index, exact, spaces = prep["states"], prep["index"], prep["exact"], prep["spaces"]
        work = prep["work"]
        n = len(states)
        with arb_precision(work + 10), mpmath.workdps(work + 10):
            H = flint.arb_mat(n, n)
            for (i, j), v in exact.items():
                H[i, j] = flint.arb(flint.fmpq(v.numerator, v.denominator))
            X = flint.arb_mat(prep["fvecs"].tolist())
            col_value = [None] * n
            group = [0] * n
            for g, members in enumerate(self._groups(spaces)):
                for sp in members:
                    for c in sp.columns:
                        group[c] = g
            for sp in spaces:
                for c in sp.columns:
                    col_value[c] = to_arb(sp.value)
            targets = spaces if only is None else list(only)
            if only is not None:
                # a cluster of close eigenspaces is refined (and rotated) as a whole
                ids = {group[c] for sp in only for c in sp.columns}
                targets = [sp for sp in spaces if group[sp.columns[0]] in ids]
            cols = sorted(c for sp in targets for c in sp.columns)
            target = mpmath.mpf(10) ** (-(self.digits + 8))
            for it in range(1, MAX_ITERATIONS + 1):
                if only is None:
                    X = _refine(H, X, col_value, group).mid()
                else:
                    X = _refine_columns(H, X, col_value, group, cols).mid()
                X = self._rotate_groups(H, X, targets)
                rows = X.tolist()
                worst = self._certify(H, X, rows, spaces, targets, work)
                if worst <= target:
                    break
            else:
                raise VerificationError(
                    f"eigenvectors of sector N_up={key[0]}, N_dn={key[1]} could not be certified "
                    f"to {self.digits} digits (bound {float(worst):.1e}); report this model and point")
        return SectorEigen(key, states, index, X, spaces, H, it, worst, rows)

    def merged_spaces(self, levels):
        """Eigenspaces of ``sector_levels``: exact levels merged where equal at the point."""
        tol_equal = mpmath.mpf(10) ** (-(self.digits + 8)) * float(self.scale)
        spaces = []
        for lev, val, mult in sorted(levels, key=lambda x: x[1]):
            if spaces and abs(val - spaces[-1].value) <= tol_equal:
                spaces[-1].dim += mult
                spaces[-1].levels.append(lev)
            else:
                spaces.append(Eigenspace(val, mult, [], [lev]))
        return spaces

    def lattice(self):
        """The model's lattice group (term automorphisms, each checked on H), or None."""
        if self._lattice is False:
            self._lattice = term_lattice_symmetry(self.model)
        return self._lattice

    def _match(self, spaces, fvals, sector):
        """Check the float eigenvalues against the eigenspaces' exact values, column by
        column (ascending)."""
        norm = float(np.max(np.abs(fvals))) if len(fvals) else 1.0
        tol = 1e-7 * max(norm, float(self.scale), 1.0)
        for sp in spaces:
            for c in sp.columns:
                if abs(fvals[c] - float(sp.value)) > tol:
                    raise VerificationError(
                        f"sector N_up={sector[0]}, N_dn={sector[1]}: eigenvalue {fvals[c]:.12g} "
                        f"of the sector matrix does not match the level {float(sp.value):.12g} "
                        "of the spectrum; report this model and point")

    def _groups(self, spaces):
        """Eigenspaces closer than float64 can resolve: refined as one cluster, then split."""
        tol = 1e-9 * float(self.scale) + 1e-12
        groups = []
        for sp in spaces:
            if groups and float(sp.value - groups[-1][-1].value) <= tol:
                groups[-1].append(sp)
            else:
                groups.append([sp])
        return groups

    def _rotate_groups(self, H, X, spaces):
        """Rayleigh-Ritz inside each group of close eigenspaces among ``spaces``
        (high-precision eigsy)."""
        groups = [g for g in self._groups(spaces) if len(g) > 1]
        if not groups:
            return X
        rows = X.tolist()
        n = len(rows)
        for g in groups:
            cols = [c for sp in g for c in sp.columns]
            Xg = flint.arb_mat([[r[c] for c in cols] for r in rows])
            M = Xg.transpose() * (H * Xg)
            k = len(cols)
            Mm = mpmath.matrix(k, k)
            for a in range(k):
                for b in range(k):
                    Mm[a, b] = (to_mpf(M[a, b]) + to_mpf(M[b, a])) / 2
            _, V = mpmath.eigsy(Mm)
            Va = flint.arb_mat([[to_arb(V[a, b]) for b in range(k)] for a in range(k)])
            Y = Xg * Va
            for i in range(n):
                for b, c in enumerate(cols):
                    rows[i][c] = Y[i, b]
        return flint.arb_mat(rows)

    def _certify(self, H, X, rows, spaces, targets=None, work=None):
        """Set eps and eta of the eigenspaces ``targets`` (default all; module docstring);
        the largest eps times dimension."""
        n = len(rows)
        targets = spaces if targets is None else targets
        cols = sorted(c for sp in targets for c in sp.columns)
        pos = {c: k for k, c in enumerate(cols)}
        Xc = flint.arb_mat([[r[c] for c in cols] for r in rows])
        hx_c = (H * Xc).tolist()
        hx = [{c: hrow[pos[c]] for c in cols} for hrow in hx_c]
        worst = mpmath.mpf(0)
        values = [sp.value for sp in spaces]
        # the energies are known to 10**-(work) relative to the scale
        rho = mpmath.mpf(10) ** (-(work or self.work)) * (float(self.scale) + 1)
        target_ids = {id(sp) for sp in targets}
        for k, sp in enumerate(spaces):
            if id(sp) not in target_ids:
                continue
            gaps = [abs(values[k] - values[m]) for m in (k - 1, k + 1) if 0 <= m < len(spaces)]
            delta = (min(gaps) if gaps else mpmath.inf) - 2 * rho
            if delta <= 0:
                raise VerificationError("two levels of one sector cannot be separated at the "
                                        "point; evaluate at a nearby point")
            e = to_arb(sp.value)
            gram = flint.arb(0)
            res = flint.arb(0)
            for a in sp.columns:
                for b in sp.columns:
                    s = flint.arb(0)
                    for i in range(n):
                        s += rows[i][a] * rows[i][b]
                    if a == b:
                        s -= 1
                    gram += s * s
                for i in range(n):
                    d = hx[i][a] - e * rows[i][a]
                    res += d * d
            eta = mpmath.sqrt(mpmath.mpf(upper(gram)))
            r = mpmath.sqrt(mpmath.mpf(upper(res))) + rho * mpmath.sqrt(sp.dim)
            if eta >= mpmath.mpf(1) / 2:
                eps = mpmath.inf
            else:
                eps = eta + r / (mpmath.sqrt(1 - eta) * delta)
            sp.eps, sp.eta = float(eps) if eps != mpmath.inf else float("inf"), float(eta)
            worst = max(worst, eps * sp.dim)
        return worst


def _refine_columns(H, X, col_value, group, cols):
    """The Ogita-Aishima step for the columns ``cols`` only (the other columns are the
    float64 approximations and stay as they are): X_c += X F[:, c]."""
    n = X.nrows()
    Xt = X.transpose()
    Xc = flint.arb_mat([[r[c] for c in cols] for r in X.tolist()])
    r = (Xt * Xc).tolist()
    s = (Xt * (H * Xc)).tolist()
    F = flint.arb_mat(n, len(cols))
    for i in range(n):
        ei, gi = col_value[i], group[i]
        for k, j in enumerate(cols):
            rij = -r[i][k] + (1 if i == j else 0)
            if group[j] == gi:
                F[i, k] = rij / 2
            else:
                ej = col_value[j]
                F[i, k] = (s[i][k] + ej * rij) / (ej - ei)
    new = (Xc + X * F).tolist()
    rows = X.tolist()
    for i in range(n):
        for k, j in enumerate(cols):
            rows[i][j] = new[i][k]
    return flint.arb_mat(rows)


def _refine(H, X, col_value, group):
    """One Ogita-Aishima step with the exact eigenvalues ``col_value`` per column; columns
    of one ``group`` are treated as one cluster (only their Gram defect is corrected)."""
    n = X.nrows()
    Xt = X.transpose()
    R = Xt * X
    S = Xt * (H * X)
    r = R.tolist()
    s = S.tolist()
    F = flint.arb_mat(n, n)
    for i in range(n):
        ei, gi = col_value[i], group[i]
        ri, si = r[i], s[i]
        for j in range(n):
            rij = -ri[j] + (1 if i == j else 0)
            if group[j] == gi:
                F[i, j] = rij / 2
            else:
                ej = col_value[j]
                F[i, j] = (si[j] + ej * rij) / (ej - ei)
    return X + X * F
