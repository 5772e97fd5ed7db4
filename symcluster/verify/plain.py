"""Unreduced sector matrices from a model's terms, by a deliberately plain route.

The verification compares the levels with the matrix of each sector (N_up, N_dn).  That
matrix must not come from the code that built the blocks (:mod:`symcluster.hilbert`), or a
wrong term action would be checked against itself.  Here it is built again, from nothing
but the model's terms and the rule of its local space:

* a state is a vector of 0/1 occupations of the 2M spin-orbitals, in the fermion order of
  docs/conventions.md: the up spin-orbitals of modes 0 .. M-1, then the down ones;
* the sector's states are enumerated with :func:`itertools.combinations` (occupied up
  modes, occupied down modes) and kept if the local space allows them: every state for
  electrons, no doubly occupied mode for projected electrons, exactly one fermion per site
  for spins;
* each product of ladder operators (written left to right) acts from the right: an
  annihilator needs its spin-orbital occupied, a creator needs it empty, and each carries
  the Jordan-Wigner sign (-1)^(occupied spin-orbitals before it in that order)
  (P. Jordan, E. Wigner, Z. Phys. 47, 631 (1928), from memory);
* an image outside the local space is dropped (the matrix is that of P H P, P the
  projection onto the space); an image with other particle numbers is an error, since the
  verification checks sector by sector.

The operators act on all states of a sector at once (numpy arrays of occupations), which
is the same rule applied row by row.  States are ordered by ascending up occupation
number sum_m 2^m n_{m up}, then ascending down number: the order of the sector bases of
the rest of the package, computed here on its own (and checked: the keys must ascend).
"""

from fractions import Fraction
from itertools import combinations
from math import lcm

import numpy as np

from symcluster.errors import VerificationError

__all__ = ["sector_occupations", "SectorMatrix", "sector_matrices", "sector_matrix"]


def _in_space(space, occ):
    """Boolean array: which rows of the occupation array ``occ`` ([n, 2M]) the space allows."""
    m = space.n_modes
    up, dn = occ[:, :m], occ[:, m:]
    if space.kind == "spins":
        # one fermion per site (a spin space has one mode per site)
        return np.all(up + dn == 1, axis=1)
    if space.projected:
        return ~np.any((up == 1) & (dn == 1), axis=1)
    return np.ones(len(occ), dtype=bool)


def _ordered_choices(n_modes, n):
    """The sets of ``n`` occupied modes out of ``n_modes``, by ascending sum of 2^mode.

    Comparing two such sets by that sum is comparing their largest modes first (colex
    order): sort by the tuple of modes in descending order.
    """
    return sorted(combinations(range(n_modes), n), key=lambda c: c[::-1])


def sector_occupations(space, n_up, n_dn):
    """The states of sector (n_up, n_dn) as an occupation array, in the package's order.

    Parameters
    ----------
    space : LocalSpace
        The model's local space (``kind``, ``n_modes``, ``projected`` are read).
    n_up, n_dn : int

    Returns
    -------
    numpy.ndarray
        ``[dim, 2M]`` of 0/1 (int8): row k is state k, columns the up spin-orbitals of
        modes 0 .. M-1, then the down ones.

    Examples
    --------
    >>> import symcluster as sc
    >>> sector_occupations(sc.heisenberg(sc.chain(2)).space, 1, 1).tolist()
    [[1, 0, 0, 1], [0, 1, 1, 0]]
    """
    m = space.n_modes
    if not (0 <= n_up <= m and 0 <= n_dn <= m):
        return np.zeros((0, 2 * m), dtype=np.int8)
    # candidates: a space without double occupancy (projected electrons, spins) takes
    # the down modes among those left empty by the up ones; the space's rule decides
    disjoint = space.kind == "spins" or space.projected
    rows = []
    for up in _ordered_choices(m, n_up):
        free = [k for k in range(m) if k not in up] if disjoint else list(range(m))
        for dn in _ordered_choices(len(free), n_dn):
            dn = [free[k] for k in dn]
            row = [0] * (2 * m)
            for k in up:
                row[k] = 1
            for k in dn:
                row[m + k] = 1
            rows.append(row)
    occ = np.array(rows, dtype=np.int8).reshape(len(rows), 2 * m)
    return occ[_in_space(space, occ)]


def _keys(occ):
    """One integer per row: its up occupation number times 2^M plus its down one, so
    that the package's order is ascending key order.  Needs 2M <= 62 (int64)."""
    weights = 2 ** np.arange(occ.shape[1], dtype=np.int64)
    m = occ.shape[1] // 2
    weights = np.concatenate([weights[m:], weights[:m]])     # up modes weigh more
    return occ.astype(np.int64) @ weights


class SectorMatrix:
    """The unreduced matrix of one sector, one sparse exact matrix per coupling label.

    ``H = sum_l u_l * parts[l]`` with ``parts[l] = (rows, cols, nums, den)``: entry
    ``(rows[k], cols[k])`` is ``nums[k] / den`` (int64 arrays, each position once, no
    zeros), row index the image state, column index the state acted on.

    Attributes
    ----------
    dim : int
    parts : dict
        label -> (rows, cols, nums, den), in the order of the model's terms.
    """

    def __init__(self, dim, parts):
        self.dim = dim
        self.parts = parts

    def as_dicts(self):
        """``{label: {(i, j): int or Fraction}}`` (an int where the entry is integral).

        Examples
        --------
        >>> import symcluster as sc
        >>> sector_matrix(sc.hubbard(sc.chain(2)), 1, 1).as_dicts()["U"]    # doubly occupied
        {(0, 0): 1, (3, 3): 1}
        """
        out = {}
        for label, (rows, cols, nums, den) in self.parts.items():
            if den == 1:
                out[label] = dict(zip(zip(rows.tolist(), cols.tolist()), nums.tolist()))
            else:
                out[label] = {(i, j): (a // den if a % den == 0 else Fraction(a, den))
                              for i, j, a in zip(rows.tolist(), cols.tolist(), nums.tolist())}
        return out

    def numeric(self, point_by_label):
        """``(rows, cols, values)`` of H at a point in float64, duplicate positions summed.

        ``point_by_label`` maps labels to exact rationals (sympy Rational or Fraction).
        """
        keys, vals = [], []
        for label, (rows, cols, nums, den) in self.parts.items():
            v = Fraction(point_by_label[label])
            keys.append(rows * self.dim + cols)
            vals.append(nums * (v.numerator / (v.denominator * den)))
        if not keys:
            empty = np.zeros(0, dtype=np.int64)
            return empty, empty, np.zeros(0)
        keys, vals = np.concatenate(keys), np.concatenate(vals)
        uniq, inv = np.unique(keys, return_inverse=True)
        total = np.zeros(len(uniq))
        np.add.at(total, inv, vals)
        return uniq // self.dim, uniq % self.dim, total


def _image(product, occ, n_modes):
    """Apply one product (left to right; the rightmost acts first) to every row of ``occ``.

    Returns ``(sources, images, signs)``: the rows that survive, their image occupations
    and the Jordan-Wigner signs.
    """
    src = np.arange(len(occ))
    cur, sign = occ, np.ones(len(occ), dtype=np.int64)
    for mode, spin, dagger in reversed(product):
        k = spin * n_modes + mode                       # up spin-orbitals first
        keep = cur[:, k] == (0 if dagger else 1)        # a creator needs it empty
        src, cur, sign = src[keep], cur[keep], sign[keep]       # copies: occ is untouched
        before = cur[:, :k].sum(axis=1)                 # occupied spin-orbitals before k
        sign = sign * (1 - 2 * (before % 2))
        cur[:, k] = 1 - cur[:, k]
    return src, cur, sign


def _summed(keys, nums):
    """Equal ``keys`` merged, their ``nums`` added (exact int64): ``(keys, sums)``, ascending."""
    if not len(keys):
        return keys, nums
    order = np.argsort(keys, kind="stable")
    keys, nums = keys[order], nums[order]
    starts = np.flatnonzero(np.concatenate([[True], keys[1:] != keys[:-1]]))
    return keys[starts], np.add.reduceat(nums, starts)


def sector_matrices(model, sectors):
    """The unreduced matrices of several sectors of ``model``, from its terms alone.

    Parameters
    ----------
    model : Model
        Its ``terms`` (each ``term.operator`` a tuple of ``(product, Fraction)``) and its
        ``space`` are read; nothing of :mod:`symcluster.hilbert` is used.
    sectors : iterable of (n_up, n_dn)
        All sectors are built in one pass (each operator acts once on all their states).

    Returns
    -------
    dict
        ``{(n_up, n_dn): SectorMatrix}``; labels with no entry in a sector are left out.

    Raises
    ------
    VerificationError
        If a term takes a state to other particle numbers.

    Examples
    --------
    >>> import symcluster as sc
    >>> h = sector_matrices(sc.hubbard(sc.chain(2)), [(1, 0), (1, 1)])
    >>> h[1, 0].dim, h[1, 0].as_dicts()["t"]
    (2, {(0, 1): -1, (1, 0): -1})
    >>> h[1, 1].as_dicts()["U"]     # (site of up, site of dn): (0, 0), (0, 1), (1, 0), (1, 1)
    {(0, 0): 1, (3, 3): 1}
    """
    space = model.space
    m = space.n_modes
    if 2 * m > 62:
        raise VerificationError(f"{m} modes are too many for the verification's sector keys "
                                "(at most 31); use a smaller cluster")
    sectors = list(dict.fromkeys(sectors))
    blocks = [sector_occupations(space, u, d) for u, d in sectors]
    offsets = np.cumsum([0] + [len(b) for b in blocks])
    total = int(offsets[-1])
    occ = (np.concatenate(blocks) if blocks else np.zeros((0, 2 * m), dtype=np.int8))
    keys = _keys(occ)
    for a, b in zip(offsets[:-1], offsets[1:]):
        if np.any(np.diff(keys[a:b]) <= 0):
            raise VerificationError("the plain sector basis is not in ascending order "
                                    "(internal error: please report this model)")
    by_key = np.argsort(keys)                   # global row of the k-th smallest key
    sorted_keys = keys[by_key]
    n_up_of, n_dn_of = occ[:, :m].sum(axis=1), occ[:, m:].sum(axis=1)
    collected = {}          # label -> [(global rows, global cols, signs, coefficient)]
    for term in model.terms:
        for product, coef in term.operator:
            src, img, sign = _image(product, occ, m)
            if not len(src):
                continue
            if (np.any(img[:, :m].sum(axis=1) != n_up_of[src])
                    or np.any(img[:, m:].sum(axis=1) != n_dn_of[src])):
                raise VerificationError(
                    f"a {term.kind} term with coupling {term.label!r} changes (N_up, N_dn): "
                    "the verification checks sector by sector and cannot check this model")
            inside = _in_space(space, img)          # P H P: images outside are dropped
            src, img, sign = src[inside], img[inside], sign[inside]
            if not len(src):
                continue
            want = _keys(img)
            pos = np.minimum(np.searchsorted(sorted_keys, want), max(total - 1, 0))
            rows = by_key[pos]
            if np.any(keys[rows] != want):
                raise VerificationError("an image state is missing from the plain sector basis "
                                        "(internal error: please report this model)")
            collected.setdefault(term.label, []).append((rows, src, sign, Fraction(coef)))
    parts = [{} for _ in sectors]
    for label, pieces in collected.items():
        den = lcm(*(c.denominator for *_, c in pieces))
        pair, nums = _summed(
            np.concatenate([r * total + c for r, c, _, _ in pieces]),
            np.concatenate([s * (c.numerator * (den // c.denominator)) for _, _, s, c in pieces]))
        nz = nums != 0
        pair, nums = pair[nz], nums[nz]
        rows, cols = pair // total, pair % total
        # rows ascend: each sector's entries are one slice
        cuts = np.searchsorted(rows, offsets)
        for si, (a, b) in enumerate(zip(cuts[:-1], cuts[1:])):
            if a == b:
                continue
            g = int(np.gcd.reduce(np.append(nums[a:b], den)))
            off = offsets[si]
            parts[si][label] = (rows[a:b] - off, cols[a:b] - off, nums[a:b] // g, den // g)
    return {sec: SectorMatrix(len(b), p) for sec, b, p in zip(sectors, blocks, parts)}


def sector_matrix(model, n_up, n_dn):
    """The unreduced matrix of one sector (:func:`sector_matrices` of that sector).

    Examples
    --------
    >>> import symcluster as sc
    >>> sector_matrix(sc.heisenberg(sc.chain(2)), 1, 1).as_dicts()["J"]
    {(0, 0): Fraction(-1, 4), (0, 1): Fraction(-1, 2), (1, 0): Fraction(-1, 2), (1, 1): Fraction(-1, 4)}
    """
    return sector_matrices(model, [(n_up, n_dn)])[n_up, n_dn]
