"""Float64 eigenvalues of a plain sector matrix, block-diagonalised by commuting site permutations.

The float64 tier of the verification (:mod:`symcluster.verify.core`) compares the levels of
each large sector with the eigenvalues of its plain matrix (:mod:`symcluster.verify.plain`).
Dense diagonalisation costs ``dim^3``; an abelian group ``A`` of site permutations that
commute with the matrix splits it into one block per character of ``A``, of about
``dim / |A|`` states each, and the eigenvalues of the sector are those of the blocks
together (a unitary change of basis).  Everything here is built again from the plain
occupations:

* ``U(g)`` moves the electron of spin-orbital ``(i, s)`` to ``(g(i), s)``; on a basis state
  (creators in the order of docs/conventions.md: up spin-orbitals by mode, then down ones)
  its sign is the parity of the reordering of the moved creators, counted as inversions
  of each spin's images;
* ``U(g) H U(g)^-1 = H`` is checked exactly, label by label, on the integer entries of the
  plain matrix, before any block is formed (a permutation that fails is a
  :class:`~symcluster.errors.VerificationError`);
* with ``w_b = sum_h chi(h)^* U(h)|r_b>`` for orbit representatives ``r_b`` (non-zero when
  ``chi`` equals the sign of ``U(s)|r_b> = sign |r_b>`` on the stabiliser), the block is
  ``H_chi[a, b] = sum_c H[c, r_b] sign_c chi(h_c) sqrt(|S_a| / |S_b|)`` over the states
  ``c = sign_c U(h_c)|r_a>`` of orbit ``a`` (characters of a product of cyclic groups,
  ``chi(h) = prod_i exp(2 pi i j_i e_i / m_i)``; standard representation theory, e.g.
  J.-P. Serre, Linear Representations of Finite Groups (1977), ch. 2, from memory).

Only the group's elements (site permutations) are taken from the symmetry detection;
which ones commute is checked here, and the blocks share no code with the block builder.
"""

import numpy as np

from symcluster.verify.failure import _fail
from symcluster.verify.plain import _keys      # the plain route's order of the states

__all__ = ["abelian_generators", "SectorSplit"]


def _order(g):
    n, k, h = len(g), 1, tuple(g)
    ident = tuple(range(n))
    while h != ident:
        h = tuple(g[x] for x in h)
        k += 1
    return k


def _powers(g, m):
    out = [tuple(range(len(g)))]
    for _ in range(m - 1):
        out.append(tuple(g[x] for x in out[-1]))
    return out


def abelian_generators(elements, limit=None):
    """Generators ``[(g, m)]`` of a direct product of cyclic groups inside a permutation
    group (greedy: the element of highest order first, then commuting elements whose
    cyclic groups meet the product so far only in the identity).

    Parameters
    ----------
    elements : sequence of tuple of int
        The group's permutations (``g[i]`` the image of site ``i``).
    limit : int, optional
        Stop once the product has at least this many elements.

    Examples
    --------
    >>> ring4 = [(0, 1, 2, 3), (1, 2, 3, 0), (2, 3, 0, 1), (3, 0, 1, 2),
    ...          (3, 2, 1, 0), (0, 3, 2, 1), (1, 0, 3, 2), (2, 1, 0, 3)]
    >>> [(g, m) for g, m in abelian_generators(ring4)]
    [((1, 2, 3, 0), 4)]
    """
    elements = [tuple(g) for g in elements]
    if not elements:
        return []
    ident = tuple(range(len(elements[0])))
    orders = {g: _order(g) for g in elements}
    group = {ident}
    gens = []
    for g in sorted(elements, key=lambda h: (-orders[h], h)):
        if g == ident or g in group:
            continue
        if any(tuple(g[x] for x in h) != tuple(h[x] for x in g) for h, _ in gens):
            continue
        pw = _powers(g, orders[g])
        if any(p in group for p in pw[1:]):
            continue
        group = {tuple(a[x] for x in p) for a in group for p in pw}
        gens.append((g, orders[g]))
        if limit is not None and len(group) >= limit:
            break
    return gens


def _signed_permutation(occ, perm):
    """``(pos, sign)``: ``U(g)|k> = sign[k] |pos[k]>`` on the states ``occ`` ([dim, 2M])."""
    m = occ.shape[1] // 2
    perm = np.asarray(perm)
    image = np.empty_like(occ)
    odd = np.zeros(len(occ), dtype=np.int64)
    for s in (0, 1):
        part = occ[:, s * m:(s + 1) * m].astype(np.int64)
        image[:, s * m + perm] = occ[:, s * m:(s + 1) * m]
        # inversions: occupied i < j whose images come in the other order
        for i in range(m):
            for j in range(i + 1, m):
                if perm[i] > perm[j]:
                    odd += part[:, i] * part[:, j]
    keys = _keys(occ)
    new = _keys(image)
    pos = np.searchsorted(keys, new)
    if np.any(pos >= len(keys)) or np.any(keys[np.minimum(pos, len(keys) - 1)] != new):
        _fail("a site permutation maps a sector state outside the sector")
    return pos, 1 - 2 * (odd % 2)


class SectorSplit:
    """The blocks of one plain sector under an abelian group of site permutations.

    Parameters
    ----------
    matrix : SectorMatrix
        The plain sector matrix (:mod:`symcluster.verify.plain`).
    occ : numpy.ndarray
        Its states (:func:`~symcluster.verify.plain.sector_occupations`).
    gens : list of (tuple, int)
        Commuting generators and their orders (:func:`abelian_generators`).

    Raises
    ------
    VerificationError
        If a generator does not commute with the matrix (exact, label by label).

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.verify.plain import sector_matrix, sector_occupations
    >>> model = sc.hubbard(sc.ring(4))
    >>> split = SectorSplit(sector_matrix(model, 2, 2), sector_occupations(model.space, 2, 2),
    ...                     [((1, 2, 3, 0), 4)])
    >>> sorted(len(b) for b in split.blocks)           # the four momenta of 36 states
    [8, 8, 10, 10]
    >>> import numpy as np
    >>> rows, cols, vals = sector_matrix(model, 2, 2).numeric({"t": 1, "U": 4})
    >>> dense = np.zeros((36, 36)); dense[rows, cols] = vals
    >>> bool(np.allclose(split.eigenvalues({"t": 1, "U": 4}), np.linalg.eigvalsh(dense)))
    True
    """

    def __init__(self, matrix, occ, gens):
        self.matrix = matrix
        dim = matrix.dim
        self.dim = dim
        maps = [_signed_permutation(occ, g) for g, _ in gens]
        for (pos, sign), (g, _) in zip(maps, gens):
            self._check_commutes(pos, sign, g)
        orders = [m for _, m in gens]
        # every element prod_i g_i^e_i: (exponents, pos, sign)
        elems = [((), np.arange(dim), np.ones(dim, dtype=np.int64))]
        for (pos, sign), m in zip(maps, orders):
            grown = []
            for e, p, s in elems:
                cur_p, cur_s = p, s
                for a in range(m):
                    grown.append((e + (a,), cur_p, cur_s))
                    # U(g) U(h)|k> = s[k] U(g)|p[k]> = s[k] sign[p[k]] |pos[p[k]]>
                    cur_p, cur_s = pos[cur_p], cur_s * sign[cur_p]
            elems = grown
        self.order = len(elems)
        exps = np.array([e for e, _, _ in elems], dtype=np.int64).reshape(self.order, len(gens))
        P = np.stack([p for _, p, _ in elems])          # [|A|, dim]
        S = np.stack([s for _, _, s in elems])
        rep = P.min(axis=0)                              # the orbit's smallest state
        reps = np.unique(rep)
        # each state c = sign_c U(h_c) |rep_c>: the first element that reaches it
        h_of = np.full(dim, -1, dtype=np.int64)
        for h in range(self.order):
            tgt = P[h, reps]
            new = h_of[tgt] < 0
            h_of[tgt[new]] = h
        sign_of = S[h_of, rep]
        # stabilisers: elements fixing a representative, with the sign they give it
        fix_h, fix_r = np.nonzero(P[:, reps] == reps[None, :])
        stab = np.bincount(fix_r, minlength=len(reps))
        # characters: chi_j(e) = exp(2 pi i sum_i j_i e_i / m_i), j over the same grid
        frac = (exps[:, None, :] * exps[None, :, :] / np.array(orders, dtype=float)).sum(axis=2) \
            if gens else np.zeros((1, 1))
        chi = np.exp(2j * np.pi * frac)                  # [character j, element h]
        self.blocks = []
        where = np.full(dim, -1, dtype=np.int64)         # representative -> its row, per block
        self._parts = []
        for j in range(self.order):
            bad = np.abs(chi[j, fix_h] - S[fix_h, reps[fix_r]]) > 1e-9
            ok = np.ones(len(reps), dtype=bool)
            ok[fix_r[bad]] = False
            members = reps[ok]
            self.blocks.append(members)
            self._parts.append((chi[j], stab[ok]))
        self._rep, self._h, self._sign, self._where = rep, h_of, sign_of, where
        if sum(len(b) for b in self.blocks) != dim:
            _fail(f"the symmetry blocks of a sector hold {sum(len(b) for b in self.blocks)} "
                  f"orbit vectors, not its {dim} states")

    def _check_commutes(self, pos, sign, g):
        """Exact: ``U(g) H U(g)^-1 = H`` for every label's integer entries."""
        for label, (rows, cols, nums, den) in self.matrix.parts.items():
            key = rows * self.dim + cols
            moved = pos[rows] * self.dim + pos[cols]
            val = nums * sign[rows] * sign[cols]
            a, b = np.argsort(key), np.argsort(moved)
            if not (np.array_equal(key[a], moved[b]) and np.array_equal(nums[a], val[b])):
                _fail(f"the site permutation {tuple(g)} does not commute with the plain "
                      f"sector matrix (label {label})")

    def eigenvalues(self, point_by_label):
        """All eigenvalues of the sector at a point (float64, ascending), block by block."""
        rows, cols, vals = self.matrix.numeric(point_by_label)
        out = []
        where = self._where
        for members, (chi, stab) in zip(self.blocks, self._parts):
            d = len(members)
            if not d:
                continue
            where[:] = -1
            where[members] = np.arange(d)
            b = where[cols]                    # columns: representatives of this block
            a = where[self._rep[rows]]         # rows: states of a compatible orbit
            keep = (b >= 0) & (a >= 0)
            r, a, b, v = rows[keep], a[keep], b[keep], vals[keep]
            weight = v * self._sign[r] * chi[self._h[r]] * np.sqrt(stab[a] / stab[b])
            block = np.zeros((d, d), dtype=complex)
            np.add.at(block, (a, b), weight)
            scale = max(1.0, float(np.abs(block).max(initial=0.0)))
            if np.abs(block - block.conj().T).max(initial=0.0) > 1e-12 * scale:
                _fail("a symmetry block of a plain sector matrix is not Hermitian")
            if np.abs(block.imag).max(initial=0.0) == 0.0:
                out.append(np.linalg.eigvalsh(block.real))
            else:
                out.append(np.linalg.eigvalsh(block))
        ev = np.sort(np.concatenate(out)) if out else np.zeros(0)
        if len(ev) != self.dim:
            _fail(f"the symmetry blocks of a sector give {len(ev)} eigenvalues for its "
                  f"{self.dim} states")
        return ev
