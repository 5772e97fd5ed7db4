"""The lattice labels of a sector's levels against the traces of H^0, H^1, H^2 on each
irrep's isotypic subspace (float64, first point)."""

import numpy as np

from symcluster.hilbert.fock import states_with
from symcluster.symmetry.lattice import spin_block_images
from symcluster.verify.failure import _fail
from symcluster.verify.sectors import _numeric_matrix


def _check_lattice_labels(spectrum, lattice, members, dim, terms, by_label, vals, sector,
                          images):
    """Check the lattice labels of one sector's levels; return the worst deviation.

    For each irrep orbit with orbit-sum character ``psi`` and dimension ``d``, the
    isotypic projector is ``P = (d/|G|) sum_g psi(g) U(g)`` (``U(g)`` the site permutation
    with its fermion sign).  The levels labelled with it must carry ``Tr P H^m`` for
    m = 0, 1, 2: their number of states, the sum and the sum of squares of their values
    (each level counted with its share of the sector).  ``Tr U(g) A`` is read off the
    permuted states, ``sum_j sign_j A[j, g(j)]``; float64 at the first point, where
    ``vals`` are the members' values (floats).  ``images`` is a :class:`_BlockImages` of
    this call (the permuted spin blocks).
    ``dim`` is the sector's dimension; ``terms`` are its matrices in the basis order of
    :func:`~symcluster.verify.plain.sector_occupations` (every up block with every down
    block, each ascending).
    Returns None when a level's label is not one of the group's irreps (a derived
    label, marked ``*``).
    """
    where = images.known
    idx = [where.get(spectrum.levels[li].quantum_numbers.get("irrep")) for li, _ in members]
    if None in idx:
        return None
    want = _isotypic_traces(terms, dim, by_label, sector, images)       # [m][irrep]
    # the members' states, and the sums of their values and squares, by irrep (a few
    # levels: plain floats)
    n_irreps = len(images.irreps)
    mine = [[0.0] * n_irreps for _ in range(3)]
    for j, (_, share), x in zip(idx, members, vals):
        mine[0][j] += share
        mine[1][j] += share * x
        mine[2][j] += share * (x * x)
    scale = max(1.0, max(map(abs, vals), default=1.0))
    worst = 0.0
    for j, (irrep, _, _) in enumerate(images.irreps):
        if abs(want[0][j] - mine[0][j]) > 0.5:
            _fail(f"sector {sector}: {mine[0][j]:.0f} states are labelled {irrep.label}, but "
                  f"its isotypic subspace has dimension {want[0][j]:.0f}")
        for m in (1, 2):
            dev = abs(mine[m][j] - want[m][j]) / (max(1, dim) * scale ** m)
            if not dev <= 1e-9:
                _fail(f"sector {sector}: the levels labelled {irrep.label} do not carry the "
                      f"trace of H^{m} on that irrep's subspace (relative deviation {dev:.2e})")
            worst = max(worst, dev)
    return worst


def _isotypic_traces(terms, dim, by_label, sector, images):
    """``[m][j] = Tr P_j H^m`` (m = 0, 1, 2, float64) on the sector, for each irrep ``j``
    of ``images`` (a :class:`_BlockImages`), with ``P_j`` its isotypic projector.

    ``Tr U(g) A = sum_k sign_k A[k, g(k)]`` is read off the permuted states, for the three
    powers of H and every group element at once; the sum over g with the characters
    times ``d / |G|`` gives the projectors' traces.
    """
    powers = np.zeros((3, dim, dim))            # H^0, H^1, H^2
    powers[0].flat[::dim + 1] = 1.0
    h = _numeric_matrix(terms, dim, by_label, out=powers[1])
    np.matmul(h, h, out=powers[2])
    # state k = (up block a, down block b) has index a * n_b + b; its image under g is
    # the pair of the blocks' images, with the product of their fermion signs
    pos_up, sign_up = images(sector[0])
    pos_dn, sign_dn = images(sector[1])
    order = pos_up.shape[0]
    perm = (pos_up[:, :, None] * pos_dn.shape[1] + pos_dn[:, None, :]).reshape(order, dim)
    sign = (sign_up[:, :, None] * sign_dn[:, None, :]).reshape(order, dim)
    traces = (powers[:, np.arange(dim), perm] * sign).sum(axis=2)      # [m, g]
    return (traces @ images.characters).tolist()


class _BlockImages:
    """The lattice group on the spin blocks of one cluster, for one verification call.

    ``self(n)`` is ``(positions, signs)``, two ``[|G|, C(L, n)]`` arrays: element ``g``
    maps the ``a``-th block with ``n`` electrons (in the order of
    :func:`~symcluster.hilbert.fock.states_with`) to ``signs[g, a]`` times the block at
    ``positions[g, a]``.  ``irreps`` lists each irrep with its character (a float
    array) and ``d / |G|``; ``known`` maps their labels to their positions there, and
    ``characters`` is the ``[|G|, irreps]`` array of the characters times ``d / |G|``.
    """

    def __init__(self, lattice, n_sites):
        self.group = lattice.group
        self.n_sites = n_sites
        self.known = {r.label: j for j, r in enumerate(lattice.irreps)}
        self.irreps = [(r, np.array(r.character, dtype=float), r.dim / self.group.order)
                       for r in lattice.irreps]
        # column j: irrep j's character times d / |G| (the isotypic projector's weights)
        self.characters = (np.stack([c * w for _, c, w in self.irreps], axis=1)
                           if self.irreps else np.zeros((self.group.order, 0)))
        self._masks = {}        # mask -> [(sign, mask') per element] (spin_block_images)
        self._by_n = {}

    def __call__(self, n):
        hit = self._by_n.get(n)
        if hit is None:
            blocks = states_with(self.n_sites, n)
            where = {b: a for a, b in enumerate(blocks)}
            pos = np.empty((self.group.order, len(blocks)), dtype=np.int64)
            sign = np.empty((self.group.order, len(blocks)))
            for a, b in enumerate(blocks):
                for g, (sg, b2) in enumerate(spin_block_images(self.group, b, self._masks)):
                    pos[g, a] = where[b2]
                    sign[g, a] = sg
            hit = self._by_n[n] = (pos, sign)
        return hit
