"""Momentum blocks of large spin rings, built modulo primes (no exact kernel over Q).

The exact route of :mod:`symcluster.blocks.build` reduces a sector over the rationals:
a Galois-merged lattice irrep first, then the kernel of S+.  On a ring of 16 spins that
kernel costs minutes and its basis has entries of hundreds of digits.  This module gives
the same characteristic polynomials without it, one prime at a time:

* for a prime p = 1 (mod L) the translation T (site i -> i + 1, with the fermion sign of
  :func:`~symcluster.symmetry.lattice.permute_state`) has all its eigenvalues omega^k in
  the integers modulo p, and the momentum-k Bloch states
  ``|r, k> = sum_m omega^(-k m) T^m |r>`` of the orbit representatives r span the
  eigenspace ``T = omega^k`` of a sector (Sz = S);
* H and S+ commute with T, so ``H |r, k> = sum_s <s|H|r> sign_s omega^(k m_s) |rho_s, k>``
  where ``|s> = sign_s T^(m_s) |rho_s>``; the same for S+ between Sz = S and Sz = S + 1;
* the highest weights of spin S at momentum k are the kernel of that S+ matrix modulo p,
  whose dimension must be ``dim(S, k) - dim(S + 1, k)`` (S+ maps Sz = S onto Sz = S + 1
  for S >= 0); a prime where it is larger is skipped;
* with the reflection R (site i -> -i) in the group, momenta k and -k have equal spectra,
  and at k = 0 and k = L/2 the highest weights split by the eigenvalue of R;
* a block of a rational (Galois-merged) irrep is the product of its members' polynomials,
  which is an integer polynomial; :func:`symcluster.algebra.lift.lift_monic` lifts it from
  its residues.

Which complex irreps make up which rational irrep is decided by characters: the
orbit-sum character of the members, computed here from the momenta and parities, must
equal the irrep's character on every group element, or the route is not used.

Only spin-1/2 models with one coupling (the polynomial is homogeneous) and the dihedral
group of a ring in site order use this route; it is chosen for sectors of more than
:data:`MODULAR_MIN_SECTOR` states.  Everything it returns is checked like any other block:
its factors against its own residues at a fresh prime, and the spectrum against the
plain sector matrices (:mod:`symcluster.verify`), which share none of this code.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from symcluster.algebra.lift import lift_merged
from symcluster.errors import VerificationError
from symcluster.hilbert.action import HamiltonianAction
from symcluster.hilbert.ladder import apply_s_plus
from symcluster.symmetry.lattice import permute_state

try:  # pragma: no cover - exercised implicitly
    import flint
except ImportError:  # pragma: no cover
    flint = None

__all__ = ["MODULAR_MIN_SECTOR", "ring_group", "ring_route", "BlochSector", "BlochBlock",
           "bloch_blocks"]

#: Sectors (Sz = S) with more states than this are reduced modulo primes when the
#: route applies (the exact kernel of ring(14)'s Sz = 0 sector, 3,432 states, is the
#: first that costs more than this route; common practice, no source).
MODULAR_MIN_SECTOR = 3000


def ring_group(lattice, n_sites):
    """``(T, R)`` when ``lattice``'s group is the dihedral group of a ring in site order.

    ``T`` is the translation ``i -> i + 1`` and ``R`` the reflection ``i -> -i`` (both
    mod ``n_sites``); None when the group is anything else.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.symmetry.termgraph import term_lattice_symmetry
    >>> t, r = ring_group(term_lattice_symmetry(sc.heisenberg(sc.ring(6))), 6)
    >>> t, r
    ((1, 2, 3, 4, 5, 0), (0, 5, 4, 3, 2, 1))
    """
    L = n_sites
    if lattice is None or L < 3:
        return None
    els = set(map(tuple, lattice.group.elements))
    t = tuple((i + 1) % L for i in range(L))
    r = tuple((-i) % L for i in range(L))
    if len(els) != 2 * L or t not in els or r not in els:
        return None
    return t, r


@dataclass
class BlochSector:
    """Prime-independent data of one sector (N_up, N_dn) of a spin ring.

    ``reps``: orbit representatives; ``period[j]``, ``flip[j]``: the smallest d with
    ``T^d |r_j> = (-1)^flip |r_j>``; ``h``: entries ``(row, col, m, a)``, one per image
    ``|s>`` of ``scale * H |r_col>``, where ``|s> = sign T^m |r_row>`` and ``a`` is the
    integer matrix element times that sign, so that
    ``scale * H |r_col, k> = sum a omega^(k m) |r_row, k>``; ``refl``: the same for R.
    """

    n_up: int
    n_dn: int
    reps: list
    period: list
    flip: list
    h: list
    refl: list
    where: dict = field(repr=False, default_factory=dict)  # state -> (rep, m, sign)

    def compatible(self, k, L):
        """Representatives whose Bloch state of momentum k is not zero."""
        return [j for j, (d, b) in enumerate(zip(self.period, self.flip))
                if (b * L - 2 * k * d) % (2 * L) == 0]     # omega^(-k d) (-1)^b = 1


def _sector(space, t, r, n_up, n_dn, action):
    L = space.n_modes
    states = space.sector_states(n_up, n_dn)
    where = {}
    reps, period, flip = [], [], []
    for s in states:
        if s in where:
            continue
        j = len(reps)
        reps.append(s)
        where[s] = (j, 0, 1)
        sign, cur = 1, s
        for m in range(1, L + 1):
            sg, u, d = permute_state(t, *cur)
            sign *= sg
            cur = (u, d)
            if cur == s:
                period.append(m)
                flip.append(0 if sign == 1 else 1)
                break
            where[cur] = (j, m, sign)
    h = []
    for col, s in enumerate(reps):
        for s2, _lab, a in action[s]:
            row, m, sign = where[s2]
            h.append((row, col, m, a * sign))
    refl = []
    if r is not None:
        for col, s in enumerate(reps):
            sg, u, d = permute_state(r, *s)
            row, m, sign = where[(u, d)]
            refl.append((row, col, m, sg * sign))
    return BlochSector(n_up, n_dn, reps, period, flip, h, refl, where)


def _raising(lower, upper, L):
    """S+ from sector ``lower`` to ``upper`` as ``(row, col, m, a)`` entries."""
    out = []
    for col, s in enumerate(lower.reps):
        for sign, s2 in apply_s_plus(L, *s):
            row, m, sg = upper.where[s2]
            out.append((row, col, m, sign * sg))
    return out


@dataclass
class BlochBlock:
    """A block given by its characteristic polynomial modulo primes.

    ``members``: ``(k, parity)`` pairs (parity None, +1 or -1) whose highest-weight
    polynomials multiply to the block's; ``dim`` their total dimension.  The residues
    are those of the characteristic polynomial of ``scale * H`` at coupling ``label`` = 1
    (``scale``: the integer that makes the matrix elements integers, 4 for S_i.S_j).
    """

    dim: int
    label: str
    L: int
    lower: BlochSector
    upper: object            # BlochSector of Sz = S + 1, or None at the top
    raising: list
    members: list
    scale: int
    parity_dims: dict = field(default_factory=dict)   # (k, parity) -> highest weights
    terms: dict = field(default_factory=dict)   # no exact matrix: empty

    def member_residues(self, p, omega):
        """``{k: ascending residues}``: the monic characteristic polynomial of
        ``scale * H`` on each member's highest weights modulo ``p``, or None when the
        prime does not suit (a kernel of the wrong dimension).

        ``omega`` is a primitive L-th root of unity modulo p.
        """
        powers = [pow(omega, j, p) for j in range(self.L)]
        out = {}
        for k, parity in self.members:
            got = _highest(self, k, p, powers)
            if got is None:
                return None
            hk, rk = got
            if parity is not None:
                hk = _parity_part(hk, rk, parity, p)
                if hk.nrows() != self.parity_dims[k, parity]:
                    return None
            out[k] = [int(c) for c in hk.charpoly().coeffs()] if hk.nrows() else [1]
        return out

    def residues(self, p, omega):
        """The block's monic characteristic polynomial modulo p (ascending residues of
        the product over the members), or None when the prime does not suit."""
        got = self.member_residues(p, omega)
        if got is None:
            return None
        prod = flint.nmod_poly([1], p)
        for poly in got.values():
            prod *= flint.nmod_poly(poly, p)
        return [int(c) for c in prod.coeffs()]

    def radius(self):
        """A bound on the modulus of every eigenvalue of ``scale * H`` on the sector
        (Gershgorin: the largest column sum of |matrix elements|; H commutes with T, so
        the representatives' columns are every column)."""
        sums = {}
        for _row, col, _m, a in self.lower.h:
            sums[col] = sums.get(col, 0) + abs(a)
        return max(sums.values(), default=0)

    def integer_charpoly(self, seed=0):
        """The monic integer characteristic polynomial of ``scale * H`` on the block
        (ascending coefficients), lifted by :func:`symcluster.algebra.lift.lift_merged`."""
        return lift_merged(self.member_residues, [k for k, _ in self.members], self.L,
                           self.dim, self.radius(), seed)


def _dense(entries, rows, cols, p, powers, k, L):
    """An nmod_mat from ``(row, col, m, a)`` entries on the compatible positions (the
    entries are few: set one by one into a zero matrix)."""
    acc = {}
    for row, col, m, a in entries:
        i = rows.get(row)
        if i is None:
            continue
        j = cols.get(col)
        if j is None:
            continue
        key = (i, j)
        acc[key] = acc.get(key, 0) + a * powers[(k * m) % L]
    mat = flint.nmod_mat(len(rows), len(cols), p)
    for (i, j), v in acc.items():
        mat[i, j] = v % p
    return mat


def _pivots(red, rank, n):
    """Pivot columns of a matrix in reduced row echelon form (its first ``rank`` rows)."""
    out, j = [], 0
    for i in range(rank):
        while int(red[i, j]) == 0:
            j += 1
            if j >= n:
                raise VerificationError("internal error: an echelon form has an empty row")
        out.append(j)
        j += 1
    return out


def _kernel(a, n, expect, p):
    """(X, free): a basis of the kernel of ``a`` (n columns) as the columns of the
    n x expect matrix X, which is the identity on the rows ``free``; None when the
    kernel's dimension is not ``expect``."""
    red, rank = a.rref()
    if n - rank != expect:
        return None
    piv = _pivots(red, rank, n)
    pset = set(piv)
    free = [j for j in range(n) if j not in pset]
    where = {f: c for c, f in enumerate(free)}
    x = flint.nmod_mat(n, expect, p)
    for i, j in enumerate(piv):
        for c, f in enumerate(free):
            v = int(red[i, f])
            if v:
                x[j, c] = p - v
    for f, c in where.items():
        x[f, c] = 1
    return x, free


def _highest(blk, k, p, powers):
    """(H, R) restricted to the highest weights of momentum k (nmod_mats), or None."""
    L = blk.L
    lo = blk.lower
    order = lo.compatible(k, L)                 # rep index of each Bloch column
    cols = {j: i for i, j in enumerate(order)}
    n = len(cols)
    if blk.upper is not None:
        up_rows = {j: i for i, j in enumerate(blk.upper.compatible(k, L))}
        expect = n - len(up_rows)
        if expect <= 0:
            if expect < 0:
                raise VerificationError("internal error: S+ cannot be onto at this momentum")
            empty = flint.nmod_mat(0, 0, [], p)
            return empty, empty
        if up_rows:
            got = _kernel(_dense(blk.raising, up_rows, cols, p, powers, k, L), n, expect, p)
            if got is None:
                return None
            x, free = got
        else:
            x, free = _identity(n, p), list(range(n))
    else:
        x, free = _identity(n, p), list(range(n))
    if n == 0:
        empty = flint.nmod_mat(0, 0, [], p)
        return empty, empty
    free_reps = {order[f]: i for i, f in enumerate(free)}
    hk = _dense(lo.h, free_reps, cols, p, powers, k, L) * x
    rk = None
    if lo.refl and 2 * k % L == 0:
        rk = _dense(lo.refl, free_reps, cols, p, powers, (-k) % L, L) * x
    return hk, rk


def _identity(n, p):
    return flint.nmod_mat(n, n, [1 if i == j else 0 for i in range(n) for j in range(n)], p)


def _parity_part(hk, rk, parity, p):
    """H on the eigenspace R = parity inside the highest weights."""
    r = hk.nrows()
    if r == 0:
        return hk
    shifted = rk - _identity(r, p) * parity
    red, rank = shifted.rref()
    expect = r - rank
    if expect == 0:
        return flint.nmod_mat(0, 0, [], p)
    y, free = _kernel(shifted, r, expect, p)
    hy = hk * y
    return flint.nmod_mat(expect, expect, [int(hy[i, c]) for i in free for c in range(expect)], p)


# ----------------------------------------------------------------------------
# the blocks of a model
# ----------------------------------------------------------------------------

def _galois_orbit(k, L):
    """The momenta 0 <= k' <= L/2 Galois-conjugate to k (k' = +-j k, gcd(j, L) = 1)."""
    out = set()
    for j in range(1, L):
        if math.gcd(j, L) == 1:
            q = (j * k) % L
            out.add(min(q, L - q))
    return sorted(out)


def _orbit_character(group, L, ks, parity):
    """Orbit-sum character (rounded to integers) of the momenta ``ks`` on every element."""
    out = []
    for g in group.elements:
        m = g[0]
        translation = g[1 % L] == (m + 1) % L
        if parity is None:
            val = 0.0 if not translation else sum(
                2 * math.cos(2 * math.pi * k * m / L) for k in ks)
        else:
            k = ks[0]
            val = (-1) ** ((k * m * 2 // L) % 2) * (1 if translation else parity)
        v = round(val)
        if abs(val - v) > 1e-9:
            return None
        out.append(v)
    return tuple(out)


def _reflection_dims(sector, k, L):
    """``{+1: dim, -1: dim}``: the eigenspaces of R on the Bloch space of momentum k."""
    comp = set(sector.compatible(k, L))
    tr = 0
    for row, col, m, a in sector.refl:
        if row == col and col in comp:
            tr += a * (-1 if (k * m * 2 // L) % 2 else 1)
    n = len(comp)
    return {1: (n + tr) // 2, -1: (n - tr) // 2}


def ring_route(model, plan):
    """``(T, R, matched)`` when the modular route applies to ``model``, else None.

    It applies to spin-1/2 models with one coupling, spin SU(2) proven (no field
    splitting it) and the dihedral group of a ring in site
    order, whose every rational irrep is matched by the characters of its momenta
    (``matched``: ``[(irrep, (momenta, parity))]``).

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import plan_symmetries
    >>> m = sc.heisenberg(sc.ring(8))
    >>> [(irr.label, ks, par) for irr, (ks, par) in ring_route(m, plan_symmetries(m))[2]]
    ... # doctest: +NORMALIZE_WHITESPACE
    [('k=0,+', (0,), 1), ('k=0,−', (0,), -1), ('k=±π/4,±3π/4', (1, 3), None),
     ('k=±π/2', (2,), None), ('k=π,+', (4,), 1), ('k=π,−', (4,), -1)]
    >>> ring_route(sc.hubbard(sc.ring(8)), plan_symmetries(sc.hubbard(sc.ring(8)))) is None
    True
    """
    space = model.space
    L = space.n_modes
    ring = ring_group(plan.lattice, L) if space.kind == "spins" else None
    if (ring is None or not plan.spin or plan.spin_split or len(model.labels) != 1
            or flint is None):
        return None
    candidates = []
    for k in range(L // 2 + 1):
        if 2 * k % L == 0:             # k = 0 (and L/2 on an even ring): R splits it
            candidates += [((k,), 1), ((k,), -1)]
        elif k == min(_galois_orbit(k, L)):
            candidates.append((tuple(_galois_orbit(k, L)), None))
    by_char = {}
    for ks, parity in candidates:
        ch = _orbit_character(plan.lattice.group, L, ks, parity)
        if ch is None or ch in by_char:
            return None
        by_char[ch] = (ks, parity)
    matched = []
    for irrep in plan.lattice.irreps:
        got = by_char.get(tuple(irrep.character))
        if got is None or irrep.copies != 1:
            return None
        matched.append((irrep, got))
    return ring[0], ring[1], matched


def bloch_blocks(model, plan, sectors, keep=None, report=None, route=None):
    """The blocks of ``sectors`` (list of (N_up, N_dn)) for the modular route.

    Returns a list of :class:`~symcluster.blocks.build.BlockSpec` whose ``block`` is a
    :class:`BlochBlock`, or None when the route does not apply to the model
    (:func:`ring_route`, or its result ``route`` if the caller has it); ``keep`` and
    ``report`` as in :func:`~symcluster.blocks.build.build_blocks`.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import plan_symmetries
    >>> m = sc.heisenberg(sc.ring(8))
    >>> specs = bloch_blocks(m, plan_symmetries(m), [(4, 4)])
    >>> sum(s.block.dim * s.labels["irrep_dim"] for s in specs)    # 14 singlets
    14
    """
    import sympy
    from symcluster.blocks.build import BlockSpec

    if route is None:
        route = ring_route(model, plan)
    if route is None:
        return None
    t, r, matched = route
    space = model.space
    L = space.n_modes
    action = HamiltonianAction(model, integral=True)
    label = model.labels[0]
    scale = getattr(action, "factor", 1)
    data = {}

    def sector(nu, nd):
        if (nu, nd) not in data:
            data[nu, nd] = _sector(space, t, r, nu, nd, action)
        return data[nu, nd]

    out = []
    for n_up, n_dn in sectors:
        if n_up < n_dn:
            continue
        lo = sector(n_up, n_dn)
        up = sector(n_up + 1, n_dn - 1) if n_dn > 0 else None
        raising = _raising(lo, up, L) if up is not None else []
        two_s = n_up - n_dn
        largest = 0
        for irrep, (ks, parity) in matched:
            if keep is not None and not keep((n_up, n_dn), irrep):
                continue
            dims = {}
            total = 0
            for k in ks:
                c = len(lo.compatible(k, L)) - (len(up.compatible(k, L)) if up else 0)
                if parity is not None:
                    c = _reflection_dims(lo, k, L)[parity] - (
                        _reflection_dims(up, k, L)[parity] if up else 0)
                    dims[k, parity] = c
                total += c
            if total == 0:
                continue
            largest = max(largest, total)
            blk = BlochBlock(total, label, L, lo, up, raising, [(k, parity) for k in ks],
                             scale, dims)
            labels = {"S": sympy.Rational(two_s, 2), "irrep": irrep.label,
                      "irrep_dim": irrep.dim}
            if getattr(irrep, "mulliken", None):
                labels["mulliken"] = irrep.mulliken
            if getattr(irrep, "momentum", None) is not None:
                labels["k"] = irrep.momentum
            stages = [("sector", len(lo.where)), ("momentum modulo primes " + irrep.label, total)]
            spec = BlockSpec((n_up, n_dn), labels, (two_s + 1) * irrep.dim, 1, blk, [], [],
                             1, 1, stages)
            spec.irrep = irrep
            out.append(spec)
        if report is not None:
            report.append({"sector": (n_up, n_dn), "sector_dim": len(lo.where),
                           "steps": [("momentum and spin modulo primes", largest)],
                           "largest_block": largest})
    for sec in data.values():
        sec.where = {}          # only the build reads it; the blocks travel to workers
    return out
