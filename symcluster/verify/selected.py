"""Checks of a sector selection: the selected levels against the selected part of each
plain sector matrix.

A spectrum solved with ``solve(model, sectors=...)`` holds only some of the levels of a
sector (N_up, N_dn), so the checks that need a whole sector (its dimension, its traces,
its characteristic polynomial, all its eigenvalues) do not apply.  Here each sector is
cut down to the selected subspace by projectors built, like the sector matrix itself,
from the plain route (:mod:`symcluster.verify.plain`) and not from the block builder:

* spin: ``M = S- S+`` from its ladder-operator products; on a state of spin S in the
  sector S^z = m it takes the value S(S+1) - m(m+1), so the Löwdin product
  ``P_S = prod_{S' != S} (M - mu(S')) / (mu(S) - mu(S'))`` over the spins the sector
  can hold projects onto spin S (P.-O. Löwdin, Phys. Rev. 97, 1509 (1955), from memory);
* eta-pseudospin: the same with ``eta- eta+``, eta+ = sum_i eps_i c+_{i up} c+_{i dn},
  eps the two-colouring of the cluster's bond graph (not the signs the symmetry
  detection found);
* lattice: ``P = sum_g w(g) U(g)`` with ``w`` the sum, over the selected irreps, of the
  orbit-sum character times d/|G|, and ``U(g)`` the site permutation acting on the
  occupation vectors, its fermion sign the parity of the permuted creators (computed
  here from the occupations).

All these commute with H and with each other; one selection dict gives their product,
several dicts the union ``1 - prod (1 - P_i)``.  Then:

* **count**: the selected levels' states in the sector equal the projector's trace,
  which is exact by characters: ``sum_g w(g) [Tr U(g) on S^z = m, minus on S^z = m + 1]``
  for every selected S (dimensions differences: every multiplet of spin > m reaches
  S^z = m + 1), when no eta is selected;
* **small sectors** (dim <= ``float_dim`` and <= ``SELECTED_DENSE_DIM`` = 2000): every eigenvalue of the dense float64 sector
  matrix at the first point, weighted by the projector (the trace of P on each
  eigenspace, an integer up to rounding), gives the selected eigenvalues with their
  multiplicities (eigenvalues within 1e-11 of the scale form one eigenspace); they must
  equal the selected levels' values to 1e-9 of the energy scale.  Sectors up to ``EXACT_DIM`` also get an exact test: det(x - H) of the whole
  sector modulo a random prime is divisible by the product of the selected levels'
  polynomials to their shares;
* **large sectors**: the Lanczos iteration of :mod:`symcluster.verify.large` with every
  vector projected onto the selected subspace; its lowest Ritz value must equal the
  lowest selected level, and every other converged one lie at a selected level.
"""

from types import SimpleNamespace

import numpy as np

import flint

from symcluster.tiers import EXACT_DIM, SELECTED_DENSE_DIM
from symcluster.verify.failure import _fail
from symcluster.verify.large import FLOAT_TOLERANCE, check_ritz_pairs, lowest_ritz_pairs
from symcluster.verify.modular import _charpoly_mod, _label_matrices, _poly_mod
from symcluster.verify.plain import _keys, sector_matrices, sector_matrix, sector_occupations
from symcluster.verify.sectors import _factor_groups, _sector_shares

__all__ = ["SectorProjector", "sector_projector", "selected_classes", "plain_group_action",
           "selected_eigenvalues", "check_selected_sectors"]


def _spin_products(n_modes):
    """S- S+ = sum_ij c+_{i dn} c_{i up} c+_{j up} c_{j dn} as ladder products."""
    return tuple((((i, 1, True), (i, 0, False), (j, 0, True), (j, 1, False)), 1)
                 for i in range(n_modes) for j in range(n_modes))


def _eta_products(signs):
    """eta- eta+ = sum_ij eps_i eps_j c_{i dn} c_{i up} c+_{j up} c+_{j dn}."""
    n = len(signs)
    return tuple((((i, 1, False), (i, 0, False), (j, 0, True), (j, 1, True)),
                  signs[i] * signs[j]) for i in range(n) for j in range(n))


def _plain_operator(space, products, sector):
    """The sector matrix of a sum of products (float64 sparse: rows, cols, vals), by the
    plain route."""
    term = SimpleNamespace(label="op", kind="checking operator", operator=products)
    fake = SimpleNamespace(space=space, terms=(term,))
    mat = sector_matrices(fake, [sector])[sector]
    if "op" not in mat.parts:
        z = np.zeros(0, dtype=np.int64)
        return z, z, np.zeros(0)
    rows, cols, nums, den = mat.parts["op"]
    return rows, cols, nums / den


def plain_group_action(space, sector, perms):
    """``(positions, signs)``: each site permutation on the sector's plain basis.

    ``positions[g, k]`` is the row of the image of state k under ``U(g)`` (c+_{m, s} ->
    c+_{g(m), s}), ``signs[g, k]`` its fermion sign: the parity of the permuted
    creators against the order of docs/conventions.md (up spin-orbitals first).

    Examples
    --------
    >>> import symcluster as sc
    >>> pos, sg = plain_group_action(sc.hubbard(sc.ring(3)).space, (2, 0), [(1, 2, 0)])
    >>> pos.tolist(), sg.tolist()     # c+_0 c+_2 -> c+_1 c+_0 = -c+_0 c+_1, c+_1 c+_2 -> c+_2 c+_0
    ([[2, 0, 1]], [[1.0, -1.0, -1.0]])
    """
    occ = sector_occupations(space, *sector)
    m = space.n_modes
    keys = _keys(occ)
    order = np.argsort(keys)
    dim = len(occ)
    pos = np.empty((len(perms), dim), dtype=np.int64)
    sign = np.empty((len(perms), dim))
    # occupied spin-orbitals of each row, ascending (every row has the same number)
    n_occ = int(occ[0].sum()) if dim else 0
    where = np.nonzero(occ)[1].reshape(dim, n_occ) if dim else np.zeros((0, 0), dtype=int)
    for gi, perm in enumerate(perms):
        target = np.array([perm[k] for k in range(m)] + [m + perm[k] for k in range(m)])
        img = np.zeros_like(occ)
        img[:, target] = occ
        moved = target[where]                          # the creators' new spin-orbitals
        inv = np.zeros(dim, dtype=np.int64)
        for a in range(n_occ):
            for b in range(a + 1, n_occ):
                inv += moved[:, a] > moved[:, b]
        k2 = _keys(img)
        at = order[np.searchsorted(keys[order], k2)]
        if np.any(keys[at] != k2):
            _fail("a site permutation leaves the plain sector basis (internal error)")
        pos[gi] = at
        sign[gi] = 1.0 - 2.0 * (inv % 2)
    return pos, sign


def selected_classes(selection, n, two_sz, spins, etas, irreps):
    """For one sector: per selection dict that can hold states of N = n, the selected
    spins, etas and irreps (None = every one): a list of (spins, etas, irreps).

    Examples
    --------
    >>> import sympy
    >>> from symcluster.blocks.selection import normalise_selection
    >>> sel = normalise_selection([{"N": 4, "S": 0}, {"N": 3}])
    >>> selected_classes(sel, 4, 0, [0, 1, 2], [0, 1, 2], [])
    [([0], None, None)]
    """
    from symcluster.blocks.selection import momenta_of
    out = []
    for sel in selection:
        if "N" in sel and sel["N"] != n:
            continue
        if "Sz" in sel and 2 * sel["Sz"] != two_sz:
            continue
        s_set = None
        if "S" in sel:
            if sel["S"] not in spins:
                continue
            s_set = [sel["S"]]
        e_set = None
        if "eta" in sel:
            if sel["eta"] not in etas:
                continue
            e_set = [sel["eta"]]
        g_set = None
        if "irrep" in sel or "k" in sel:
            g_set = [j for j, r in enumerate(irreps)
                     if ("irrep" not in sel or r.label == sel["irrep"])
                     and ("k" not in sel or sel["k"] in momenta_of(getattr(r, "momentum", None)))]
            if not g_set:
                continue
        out.append((s_set, e_set, g_set))
    return out


class SectorProjector:
    """The projector onto the selected subspace of one sector, applied to vectors or to
    the columns of a matrix (float64), with its exact trace where characters give it.

    Parameters
    ----------
    space : LocalSpace
    sector : (int, int)
    classes : list
        From :func:`selected_classes`.
    lattice : LatticeSymmetry or None
        Its group elements (site permutations) and irreps' characters.
    eta_signs : list of int or None
        The cluster's two-colouring, when the levels carry eta.
    """

    def __init__(self, space, sector, classes, lattice=None, eta_signs=None):
        import sympy
        self.space, self.sector, self.classes = space, sector, classes
        n_up, n_dn = sector
        n, m = n_up + n_dn, space.n_modes
        self.sz = sympy.Rational(n_up - n_dn, 2)
        self.spins = [abs(self.sz) + j for j in range(m + 2)
                      if abs(self.sz) + j <= sympy.Rational(min(n, 2 * m - n), 2)]
        self.eta_z = sympy.Rational(n - m, 2)
        self.etas = [abs(self.eta_z) + j for j in range(m + 1)
                     if abs(self.eta_z) + j <= sympy.Rational(m, 2)]
        self._spin = self._eta = self._group = None
        self.lattice = lattice
        self.eta_signs = eta_signs
        self.trivial = all(s is None and e is None and g is None for s, e, g in classes)
        # True when spin SU(2) commutes with H (the levels carry S and no Sz): the exact
        # traces may then take differences of S^z sectors
        self.su2 = False

    def _casimir(self, which):
        if which == "spin":
            if self._spin is None:
                self._spin = _plain_operator(self.space, _spin_products(self.space.n_modes),
                                             self.sector)
            return self._spin
        if self._eta is None:
            self._eta = _plain_operator(self.space, _eta_products(self.eta_signs), self.sector)
        return self._eta

    def _apply_casimir(self, which, x):
        rows, cols, vals = self._casimir(which)
        if x.ndim == 1:
            return np.bincount(rows, weights=vals * x[cols], minlength=len(x))
        out = np.zeros_like(x)
        np.add.at(out, rows, vals[:, None] * x[cols])
        return out

    def _lowdin(self, which, keep, x):
        """Sum over ``keep`` of the Löwdin projectors onto those values of spin (or eta)."""
        z = self.sz if which == "spin" else self.eta_z
        values = self.spins if which == "spin" else self.etas

        def mu(s):
            return float(s * (s + 1) - z * (z + 1))
        out = np.zeros_like(x)
        for s in keep:
            y = x
            for other in values:
                if other != s:
                    y = (self._apply_casimir(which, y) - mu(other) * y) / (mu(s) - mu(other))
            out += y
        return out

    def _group_action(self):
        if self._group is None:
            self._group = plain_group_action(self.space, self.sector,
                                             list(self.lattice.group.elements))
        return self._group

    def _weights(self, g_set):
        irreps = self.lattice.irreps
        order = self.lattice.group.order
        return sum(np.array(irreps[j].character, dtype=float) * irreps[j].dim / order
                   for j in g_set)

    def _lattice(self, g_set, x):
        pos, sign = self._group_action()
        w = self._weights(g_set)
        out = np.zeros_like(x)
        for g in range(len(w)):
            if w[g]:
                if x.ndim == 1:
                    out[pos[g]] += w[g] * sign[g] * x
                else:
                    out[pos[g]] += w[g] * sign[g][:, None] * x
        return out

    def _one(self, cls, x):
        s_set, e_set, g_set = cls
        if g_set is not None:
            x = self._lattice(g_set, x)
        if e_set is not None:
            x = self._lowdin("eta", e_set, x)
        if s_set is not None:
            x = self._lowdin("spin", s_set, x)
        return x

    def __call__(self, x):
        """P x (x a vector or a [dim, k] array)."""
        if self.trivial:
            return x
        if len(self.classes) == 1:
            return self._one(self.classes[0], x)
        rest = x
        for cls in self.classes:
            rest = rest - self._one(cls, rest)
        return x - rest

    def exact_power_traces(self, model, point_by_label):
        """Exact ``[Tr P, Tr P H, Tr P H^2]`` (Fractions) at a rational point, or None where
        the count is not known exactly (see :meth:`exact_trace`).

        ``Tr P X = sum over selected spins s of sum_g w(g) [Tr U(g) X on S^z = s minus on
        S^z = s + 1]`` for X = 1, H, H^2 (X commutes with spin and with every U(g)); the
        traces come from the plain sector matrices in integers (:func:`_group_traces`).
        """
        from fractions import Fraction
        if any(e is not None for _, e, _ in self.classes) or len(self.classes) != 1:
            return None
        s_set, _, g_set = self.classes[0]
        spins = self.spins if s_set is None else s_set
        if self.lattice is not None and g_set is not None:
            perms = list(self.lattice.group.elements)
            irreps, order = self.lattice.irreps, self.lattice.group.order
            w = [sum(Fraction(irreps[j].character[g] * irreps[j].dim, order) for j in g_set)
                 for g in range(len(perms))]
        else:
            perms, w = [tuple(range(self.space.n_modes))], [Fraction(1)]
        n = self.sector[0] + self.sector[1]
        cache = {}
        if not self.su2:
            # without spin SU(2) commuting with H (no symmetry, or a field splitting the
            # multiplets) the S^z sectors do not share energies: only the sector itself
            if s_set is not None:
                return None
            per_g, scale = _group_traces(model, self.sector, perms, point_by_label)
            return [sum((wg * t[m] for wg, t in zip(w, per_g)), Fraction(0)) / scale ** m
                    for m in range(3)]

        def traced(u, d):
            if (u, d) not in cache:
                per_g, scale = _group_traces(model, (u, d), perms, point_by_label)
                cache[u, d] = [sum((wg * t[m] for wg, t in zip(w, per_g)), Fraction(0))
                               / scale ** m for m in range(3)]
            return cache[u, d]
        total = [Fraction(0)] * 3
        for s in spins:
            two = int(2 * s)
            u, d = (n + two) // 2, (n - two) // 2
            a, b = traced(u, d), traced(u + 1, d - 1)
            total = [x + y - z for x, y, z in zip(total, a, b)]
        return total

    def exact_trace(self):
        """The number of selected states (an int), or None where it is not known
        exactly (a selected eta).  By characters: ``sum_g w(g) Tr U(g)`` over the sector
        minus over the sector S^z + 1, for each selected spin."""
        if any(e is not None for _, e, _ in self.classes) or len(self.classes) != 1:
            return None
        s_set, _, g_set = self.classes[0]
        n_up, n_dn = self.sector
        spins = self.spins if s_set is None else s_set

        def traced(u, d):
            if not (0 <= u <= self.space.n_modes and 0 <= d <= self.space.n_modes):
                return 0.0
            dim = self.space.sector_dim(u, d)
            if not dim:
                return 0.0
            if g_set is None:
                return float(dim)
            pos, sign = plain_group_action(self.space, (u, d), list(self.lattice.group.elements))
            fixed = (pos == np.arange(dim)[None, :]) * sign
            return float(self._weights(g_set) @ fixed.sum(axis=1))
        total = 0.0
        n = n_up + n_dn
        for s in spins:
            # states of spin exactly s in S^z = sz: those of S^z = s minus S^z = s + 1
            two = int(2 * s)
            u, d = (n + two) // 2, (n - two) // 2
            total += traced(u, d) - traced(u + 1, d - 1)
        out = round(total)
        if abs(total - out) > 1e-6:
            _fail(f"sector {self.sector}: the characters give {total} selected states, "
                  "not an integer")
        return out


def _group_traces(model, sector, perms, point_by_label):
    """Exact ``[Tr U(g), Tr U(g) K, Tr U(g) K^2]`` per element g on one sector, and the
    scale s with H = K / s at the point (K an integer matrix from the plain route).

    ``U(g)|j> = sign_j |pos_j>``, so ``Tr U(g) A = sum_j sign_j A[j, pos_j]``, and for the
    symmetric K, ``(K^2)[j, pos_j] = sum_l K[j, l] K[pos_j, l]``: every entry K[j, l]
    meets the entry at (pos_j, l), looked up among the sorted positions of K.
    """
    from symcluster.verify.large import integer_matrix
    from fractions import Fraction
    space = model.space
    u, d = sector
    if not (0 <= u <= space.n_modes and 0 <= d <= space.n_modes) or not space.sector_dim(u, d):
        return [[0, 0, 0] for _ in perms], 1
    matrix = sector_matrix(model, u, d)
    dim = matrix.dim
    rows, cols, vals, scale = integer_matrix(matrix, {k: Fraction(v) for k, v in
                                                      point_by_label.items()})
    keys = rows * dim + cols                      # ascending (integer_matrix sorts them)
    pos, sign = plain_group_action(space, sector, perms)
    out = []
    for g in range(len(perms)):
        sg = sign[g].astype(np.int64)
        p = pos[g]
        t0 = int(sg[p == np.arange(dim)].sum())
        t1 = _lookup_sum(keys, vals, np.arange(dim) * dim + p, sg)
        # entries (j, l): partner (pos_j, l)
        t2 = _lookup_sum(keys, vals, p[rows] * dim + cols, sg[rows] * 1, weights=vals)
        out.append([t0, t1, t2])
    return out, scale


def _lookup_sum(keys, vals, want, signs, weights=None):
    """sum_i signs_i * weights_i * K[want_i] (K given by its sorted keys and values; 0 where
    absent), exactly (Python integers)."""
    if not len(keys):
        return 0
    at = np.minimum(np.searchsorted(keys, want), len(keys) - 1)
    hit = keys[at] == want
    got = vals[at[hit]]
    term = got * signs[hit] if weights is None else got * weights[hit] * signs[hit]
    return int(np.sum(term.astype(object))) if len(term) else 0


def sector_projector(space, sector, selection, lattice=None, eta_signs=None):
    """The :class:`SectorProjector` of one sector for a (normalised) selection.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.selection import normalise_selection
    >>> space = sc.hubbard(sc.ring(4)).space
    >>> sector_projector(space, (2, 2), normalise_selection([{"N": 4, "S": 0}])).exact_trace()
    20
    """
    n = sector[0] + sector[1]
    proj = SectorProjector(space, sector, [], lattice, eta_signs)
    irreps = lattice.irreps if lattice is not None else []
    proj.classes = selected_classes(selection, n if space.has_charge else None,
                                    sector[0] - sector[1], proj.spins, proj.etas, irreps)
    proj.trivial = all(c == (None, None, None) for c in proj.classes)
    return proj


def _dense(matrix, by_label):
    rows, cols, vals = matrix.numeric(by_label)
    h = np.zeros((matrix.dim, matrix.dim))
    h[rows, cols] = vals
    return h


def selected_eigenvalues(h, proj, sector=None):
    """The eigenvalues of the dense symmetric matrix ``h`` on the range of the projector
    ``proj`` (a function of a [dim, k] array), with multiplicity, and the energy scale.

    The trace of the projector on each eigenspace is the number of selected states there
    and must be an integer up to rounding.  Eigenvalues within 1e-11 of the scale are one
    eigenspace: exactly degenerate eigenvalues come out of the solver within about 1e-14,
    and distinct ones that close have eigenvectors mixed by about 1e-16/1e-11, which moves
    the traces by its square.  (A wider window of 1e-8 merged distinct eigenvalues of a
    ring(8) sector at U/t = 0.02 and returned their mean.)

    Examples
    --------
    >>> import numpy as np
    >>> h = np.diag([0.0, 5e-9, 1.0])
    >>> ev, scale = selected_eigenvalues(h, lambda x: x * np.array([0.0, 1.0, 1.0])[:, None])
    >>> ev, scale
    ([5e-09, 1.0], 1.0)
    """
    w, q = np.linalg.eigh(h)
    weights = np.einsum("ij,ij->j", q, proj(q))
    scale = max(1.0, float(np.max(np.abs(w)))) if len(w) else 1.0
    out, start = [], 0
    for i in range(1, len(w) + 1):
        if i == len(w) or w[i] - w[i - 1] > 1e-11 * scale:
            c = float(weights[start:i].sum())
            count = round(c)
            if abs(c - count) > 1e-6:
                _fail(f"sector {sector}: the selected part of the eigenspace at {w[start]:.12g} "
                      f"has trace {c:.8f}, not an integer")
            out.extend([float(w[start:i].mean())] * count)
            start = i
    return out, scale


def _check_traces(traces, members, vals, point_by_label, sector, digits, pt):
    """The selected levels carry the exact Tr P H and Tr P H^2 of their subspace (values at
    digits + 5 digits; tolerance 10^-digits of max(sum share |E|^m, count * s^m), s the
    largest |coupling|, as for the large sectors)."""
    import mpmath
    from fractions import Fraction
    scale = max((abs(Fraction(v)) for v in point_by_label.values()), default=Fraction(1))
    count = sum(share for _, share in members)
    with mpmath.workdps(digits + 10):
        for m in (1, 2):
            got = mpmath.fsum(share * vals[li] ** m for li, share in members)
            norm = max(mpmath.fsum(share * abs(vals[li]) ** m for li, share in members),
                       max(count, 1) * mpmath.mpf(scale.numerator) ** m / scale.denominator ** m)
            want = mpmath.mpf(traces[m].numerator) / traces[m].denominator
            dev = abs(got - want) / norm
            if dev > mpmath.mpf(10) ** (-digits):
                _fail(f"sector {sector} at {pt}: the selected levels' sum of share*E^{m} "
                      f"differs from the exact trace of H^{m} on the selected subspace by "
                      f"{mpmath.nstr(dev, 3)} (relative)")


def check_selected_sectors(spectrum, selection, values, points, primes, forms, lattice,
                           float_dim, seed, progress=None, digits=30):
    """Check the levels of a sector selection against the plain sector matrices.

    Parameters
    ----------
    spectrum : Spectrum
        Its levels, model and space.
    selection : list of dict
        The normalised selection (``symcluster.blocks.selection.normalise_selection``).
    values : list of list
        Each level's value at each point (mpmath).
    points : list of dict
        The random points ({Symbol: Rational}).
    primes : list of int
        One prime per point, for the exact test of small sectors.
    forms : FormCache
    lattice : LatticeSymmetry or None
        The group whose irreps the levels' labels name.
    float_dim : int
        Sectors above this dimension get the projected Lanczos check.
    seed : int

    Returns
    -------
    dict
        ``sectors``, ``dense``, ``lanczos``, ``counted`` (sectors whose count was
        checked by characters), ``traced`` (those whose exact traces were checked),
        ``worst`` (the largest relative deviation) and ``lanczos_residual``.

    Examples
    --------
    It runs inside :func:`symcluster.verify.core.verify_spectrum` for every solve with
    ``sectors=``:

    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.ring(4)), sectors=[{"N": 4, "S": 0}], seed=1)
    >>> [c["sectors"] for c in spec.verification.checks if "selected sectors" in c["check"]]
    [1, 1, 1]
    """
    model = spectrum.model
    space = model.space
    L = space.n_modes
    n_fixed = None if space.has_charge else L
    by_sector = {}
    for li, lev in enumerate(spectrum.levels):
        for sector, share in _sector_shares(lev, L, n_fixed):
            by_sector.setdefault(sector, []).append((li, share))
    spin_labels = any("S" in lev.quantum_numbers and "Sz" not in lev.quantum_numbers
                      for lev in spectrum.levels)
    eta_signs = None
    if any("eta" in lev.quantum_numbers for lev in spectrum.levels):
        from symcluster.lattice.clusters import two_colouring
        cl = model.cluster
        eta_signs = two_colouring(cl.n_sites, cl.neighbours) if cl.n_sites == L else None
        if eta_signs is None:
            _fail("the levels carry eta but the cluster's bond graph has no two-colouring "
                  "of its modes (internal error)")
    out = {"sectors": 0, "dense": 0, "lanczos": 0, "counted": 0, "traced": 0, "worst": 0.0,
           "lanczos_residual": 0.0}
    todo = sorted(s for s in by_sector if not (spin_labels and s[0] < s[1]))
    if progress is not None:
        progress.phase("verification, selected sectors", len(todo), "sectors")
    for sector in todo:
        if progress is not None:
            progress.step()
        members = by_sector[sector]
        n = sector[0] + sector[1]
        proj = sector_projector(space, sector, selection, lattice, eta_signs)
        proj.su2 = spin_labels
        if not proj.classes:
            _fail(f"sector {sector} holds levels that the selection does not name")
        got = sum(s for _, s in members)
        exact = proj.exact_trace()
        if exact is not None:
            out["counted"] += 1
            if exact != got:
                _fail(f"sector {sector}: the selected levels hold {got} states, but the "
                      f"selected subspace of the sector has {exact}")
        by_label = [{s.name: v for s, v in pt.items()} for pt in points]
        if exact is not None:
            for pi, lab in enumerate(by_label):
                traces = proj.exact_power_traces(model, lab)
                if traces is None:
                    break
                _check_traces(traces, members, values[pi], lab, sector, digits, points[pi])
            else:
                out["traced"] += 1
        matrix = sector_matrix(model, *sector)
        dim = matrix.dim
        level_vals = sorted(float(values[0][li]) for li, share in members for _ in range(share))
        out["sectors"] += 1
        if dim <= min(float_dim, SELECTED_DENSE_DIM):
            ev, scale = selected_eigenvalues(_dense(matrix, by_label[0]), proj, sector)
            if len(ev) != len(level_vals):
                _fail(f"sector {sector}: the selected subspace holds {len(ev)} states "
                      f"(float64 eigenspaces), the selected levels {len(level_vals)}")
            dev = max((abs(a - b) for a, b in zip(ev, level_vals)), default=0.0) / scale
            if dev > FLOAT_TOLERANCE:
                _fail(f"sector {sector} at {points[0]}: the selected levels differ from the "
                      f"selected eigenvalues of the plain sector matrix by {dev:.2e} (relative)")
            out["worst"] = max(out["worst"], dev)
            out["dense"] += 1
            if dim <= EXACT_DIM:
                terms = matrix.as_dicts()
                mats = _label_matrices(terms, dim)
                groups = _factor_groups(spectrum, members, sector)
                for pt, lab, prime in zip(points, by_label, primes):
                    cp = _charpoly_mod(mats, dim, lab, prime)
                    prod = flint.nmod_poly([1], prime)
                    cache = {}
                    for p, share in groups:
                        prod *= _poly_mod(forms(p), pt, prime, cache) ** share
                    if cp % prod != 0:
                        _fail(f"sector {sector}: at {pt} the product of the selected levels' "
                              f"polynomials does not divide the sector's characteristic "
                              f"polynomial (exact comparison modulo the prime {prime})")
            continue
        ritz = lowest_ritz_pairs(matrix, by_label[0], count=4, steps=min(dim, 300),
                                 seed=seed, project=None if proj.trivial else proj)
        escale = max(1.0, max(abs(x) for x in level_vals))
        res = check_ritz_pairs(ritz, level_vals, sector, points[0], escale,
                               space="selected subspace", level="selected level",
                               iteration=" on the selected subspace")
        out["lanczos"] += 1
        out["worst"] = max(out["worst"], abs(level_vals[0] - ritz[0][0]) / escale)
        out["lanczos_residual"] = max(out["lanczos_residual"], res / escale)
    return out
