"""Build the exact, symmetry-reduced blocks of a model.

For every sector (N_up, N_dn) that has to be solved, the Fock basis is
reduced step by step:

1. lattice symmetry: a basis of P_lambda P_Gamma V for each (rational)
   irreducible representation Gamma of the cluster's automorphism group;
2. spin SU(2): only N_up >= N_dn is solved, restricted to the kernel of S+
   (highest weight, S = Sz);
3. eta-pseudospin SU(2): only N <= L is solved, restricted to the kernel of
   eta- (lowest weight, eta = (L - N)/2); the other members of each eta
   multiplet are the same levels shifted by the exactly-detected shift.

Each resulting block is the matrix of H in an exact reduced (pivot) basis of
an H-invariant subspace.  Invariance is checked exactly while the matrix is
read off.
"""

import random
from dataclasses import dataclass, field
from fractions import Fraction
from math import lcm

import sympy

from symcluster.algebra.block import LinearBlock
from symcluster.blocks.centre import SPLIT_MIN_DIM, central_operator
from symcluster.errors import VerificationError
from symcluster.linalg import check_reduced, kernel_of, reduce_basis
from symcluster.hilbert.action import HamiltonianAction
from symcluster.hilbert.ladder import apply_eta_minus, apply_s_plus, per_state_memo
from symcluster.symmetry.spin import eta_symmetry, shift_expr, spin_ladder_shift
from symcluster.symmetry.termgraph import term_lattice_symmetry

__all__ = ["BlockSpec", "SymmetryPlan", "plan_symmetries", "build_blocks", "sectors_to_solve"]


@dataclass
class SymmetryPlan:
    """Which symmetries apply to a model (all detected exactly)."""

    spin: bool
    eta: object            # None or (signs, shift dict)
    lattice: object        # None or the lattice-symmetry object of symmetry.lattice
    sublattice_char: list = field(default_factory=list)  # +-1 per group element
    # [H, S+] = spin_shift S+ ({} without a field; {h: -2} in a uniform field -h sum 2 S^z)
    spin_shift: dict = field(default_factory=dict)
    # labels whose terms the sublattice gauge G maps to minus themselves (None: some
    # label's terms are neither even nor odd under G, so no gauge twins)
    odd_labels: object = None
    # H on basis states, as computed by the checks; build_blocks reuses it (same solve)
    action: object = field(default=None, repr=False, compare=False)

    @property
    def eta_shift(self):
        return shift_expr(self.eta[1]) if self.eta else None

    @property
    def spin_split(self):
        """True when a uniform field splits each spin multiplet by S^z (spin_shift != {})."""
        return bool(self.spin and self.spin_shift)

    def names(self):
        out = ["particle numbers N_up, N_dn"]
        if self.spin_split:
            out.append(f"spin SU(2) split by a uniform field (S+ shifts E by "
                       f"{shift_expr(self.spin_shift)})")
        elif self.spin:
            out.append("spin SU(2)")
        if self.eta:
            out.append(f"eta-pseudospin SU(2) (eta+ shifts E by {self.eta_shift})")
        if self.lattice is not None:
            out.append(f"lattice automorphisms (order {len(self.lattice.group.elements)})")
        return out


@dataclass
class BlockSpec:
    """One exact block plus everything needed to label its roots."""

    sector: tuple
    labels: dict
    states_per_root: int     # (2S+1) * irrep dimension
    copies: int              # each multiplet appears this many times in the block
    block: LinearBlock
    vectors: list
    pivots: list
    eta_members: int = 1     # number of eta multiplet members generated (2 eta + 1)
    spin_members: int = 1    # S^z members generated in a field (2 S + 1), else 1
    stages: list = field(default_factory=list)


def plan_symmetries(model, lattice=True, spin=True, eta=True):
    """Detect the symmetries of ``model`` (exact checks, see symmetry/spin.py).

    The flags switch a reduction off (for cross-checks); a symmetry that is
    switched on is still used only where the exact check finds it.
    """
    h = HamiltonianAction(model)
    spin_shift = spin_ladder_shift(model, h) if spin else None
    spin = spin_shift is not None
    eta = eta_symmetry(model, h) if eta else None
    lat = None
    sub_char = []
    if lattice:
        lat = term_lattice_symmetry(model)
        if lat is not None and eta:
            signs = eta[0]
            # g eta+ g^-1 = chi(g) eta+ needs eps_{g(i)} = chi(g) eps_i on every site; on a
            # disconnected cluster a permutation may flip one component only: then eta+
            # is not an eigen-operator of the group and the eta reduction is not used.
            for g in lat.group.elements:
                chi = signs[g[0]] * signs[0]
                if any(signs[g[i]] * signs[i] != chi for i in range(model.n_modes)):
                    eta = None
                    sub_char = []
                    break
                sub_char.append(chi)
    return SymmetryPlan(spin, eta, lat, sub_char, spin_shift or {}, _odd_labels(model, eta),
                        action=h)


def _odd_labels(model, eta):
    """Labels whose every product is odd under c_m -> eps_m c_m (eps the eta signs); None
    when a label has products of both parities or there are no signs."""
    if not eta:
        return None
    signs = eta[0]
    parity = {}
    for term in model.terms:
        for prod, _ in term.operator:
            p = 1
            for m, _, _ in prod:
                p *= signs[m]
            if parity.setdefault(term.label, p) != p:
                return None
    return frozenset(lab for lab, p in parity.items() if p < 0)


def sectors_to_solve(space, plan, electrons=None):
    """The (N_up, N_dn) sectors whose blocks are built, given the symmetries.

    ``space`` is the model's :class:`~symcluster.hilbert.space.LocalSpace` (or a number
    of sites of spin-1/2 fermions).  ``electrons`` (None = all) is the set of N values
    the caller wants; with eta symmetry, lower sectors whose multiplets reach a wanted N
    are included.
    """
    if isinstance(space, int):
        from symcluster.hilbert.space import LocalSpace
        space = LocalSpace("electrons", space)
    L = space.n_modes
    wanted = set(space.particle_numbers()) if electrons is None else set(electrons)
    out = []
    for n_up, n_dn in space.sectors():
        n = n_up + n_dn
        if plan.eta:
            if n > L or not any(n <= m <= 2 * L - n and (m - n) % 2 == 0 for m in wanted):
                continue
        elif n not in wanted:
            continue
        if plan.spin and n_up < n_dn:
            continue
        out.append((n_up, n_dn))
    return out


def _check_coefficients(k, memo=None):
    """The random integers of the invariance check of a k-dimensional block.

    Drawn from ``random.Random(k)`` (reproducible); ``memo`` (a dict kept by
    the caller for one build) avoids re-seeding for every block of equal size.
    """
    out = memo.get(k) if memo is not None else None
    if out is None:
        rng = random.Random(k)
        out = [rng.randint(-9, 9) or 1 for _ in range(k)]
        if memo is not None:
            memo[k] = out
    return out


def _matrix_of_h(h, vectors, pivots, rng=None, coeff_memo=None):
    """H restricted to span(vectors) in the reduced basis.

    Entry (i, j) is (H w_j) at pivot i divided by w_i's pivot value; only the
    rows of H at the pivots are needed (H is real symmetric in the Fock
    basis).  Invariance of the span is then checked exactly on a random
    integer combination of the basis vectors.

    Parameters
    ----------
    h : HamiltonianAction
    vectors, pivots : list
        A reduced basis (see :mod:`symcluster.linalg`).
    rng : random.Random, optional
        Source of the combination; by default ``random.Random(len(vectors))``.
    coeff_memo : dict, optional
        Per-build memo of the default combinations (see :func:`_check_coefficients`).
    """
    k = len(vectors)
    # inverted index: state -> [(j, coefficient of w_j at that state)]
    index = {}
    for j, w in enumerate(vectors):
        for st, x in w.items():
            hits = index.get(st)
            if hits is None:
                index[st] = [(j, x)]
            else:
                hits.append((j, x))
    terms = {}
    for i, p in enumerate(pivots):
        piv_val = vectors[i][p]
        acc = {}
        # (H w_j)[p] = sum_s H[p, s] w_j[s]; H[p, s] = H[s, p] read from H|p>
        for st, lab, a in h[p]:
            hits = index.get(st)
            if hits:
                row = acc.get(lab)
                if row is None:
                    row = acc[lab] = {}
                for j, x in hits:
                    row[j] = row.get(j, 0) + a * x
        for lab, row in acc.items():
            mat = terms.get(lab)
            if mat is None:
                mat = terms[lab] = {}
            for j, v in row.items():
                if v:
                    # an int where the pivot divides the entry (always for pivot 1)
                    q, rem = divmod(v, piv_val)
                    mat[(i, j)] = Fraction(v, piv_val) if rem else q
    # exact invariance check on a random combination r = sum a_j w_j (in integers: the
    # scale below also clears the denominators of H's coefficients)
    if rng is None:
        coeffs = _check_coefficients(k, coeff_memo)
    else:
        coeffs = [rng.randint(-9, 9) or 1 for _ in range(k)]
    r = {}
    for a, w in zip(coeffs, vectors):
        for s, x in w.items():
            r[s] = r.get(s, 0) + a * x
    # H r must equal sum_i c_i w_i with c_i = sum_j M_ij a_j; compare scale * H r with
    # sum_i (scale c_i) w_i in integers (scale = lcm of the pivot values, a multiple of
    # every entry's denominator), one label at a time
    scale = 1
    for i, p in enumerate(pivots):
        scale = lcm(scale, abs(vectors[i][p]))
    scale *= h.denominator      # 1 for an integral action
    res = {lab: {} for lab in h.labels}
    for s, x in r.items():
        if x:
            x *= scale
            for s2, lab, a in h[s]:
                d = res[lab]
                d[s2] = d.get(s2, 0) + a * x
    scaled = {}
    for lab, mat in terms.items():
        num = {}
        for (i, j), v in mat.items():
            q, rem = divmod(scale, v.denominator)
            if rem:
                raise VerificationError("internal error: block coordinates are not consistent")
            num[i] = num.get(i, 0) + v.numerator * q * coeffs[j]
        scaled[lab] = num
        d = res.get(lab)
        if d is None:
            d = res[lab] = {}
        for i, ci in num.items():
            if ci:
                for st, x in vectors[i].items():
                    d[st] = d.get(st, 0) - ci * x
    if any(any(d.values()) for d in res.values()):
        st = _first_failure(h, r, vectors, scaled, res)
        raise VerificationError(
            f"internal error: reduced basis is not invariant under H (state {st}); "
            "please report this cluster")
    factor = getattr(h, "factor", 1)
    if factor != 1:             # the images were those of factor * H
        terms = {lab: {key: Fraction(v) / factor for key, v in mat.items()}
                 for lab, mat in terms.items()}
    return LinearBlock(k, terms, integral=h.integral and factor == 1)


def _first_failure(h, r, vectors, scaled, res):
    """The state named by a failed invariance check: the first one, in the order the
    check meets states (H r's terms, then the basis vectors), where a label's residual
    is non-zero."""
    bad = {st for d in res.values() for st, v in d.items() if v}
    for s, x in r.items():
        if x:
            for s2, _, _ in h[s]:
                if s2 in bad:
                    return s2
    for num in scaled.values():
        for i, ci in num.items():
            if ci:
                for st in vectors[i]:
                    if st in bad:
                        return st
    return None


def _irrep_times_char(lattice, irrep, char):
    target = [a * b for a, b in zip(irrep.character, char)]
    for other in lattice.irreps:
        if list(other.character) == target:
            return other
    return None


def build_blocks(model, plan, electrons=None, report=None, keep=None):
    """All reduced blocks for the wanted electron numbers.

    Returns a list of BlockSpec; appends per-sector reduction sizes to ``report``.
    ``keep`` (optional, a function of the sector (N_up, N_dn) and the lattice irrep, or
    None without a lattice group) says which blocks to build (sector selection); the
    others are never built, and a sector with no block kept is skipped whole.
    """
    space = model.space
    L = space.n_modes
    h = plan.action
    if h is None or h.model is not model:
        h = HamiltonianAction(model)
    if not h.integral:
        # rational coefficients (spin exchange, t-J): the blocks are read off the integer
        # action of factor * H and divided by factor (integer arithmetic, not Fractions)
        h = HamiltonianAction(model, integral=True)
    coeff_memo = {}
    s_plus = per_state_memo(lambda s: apply_s_plus(L, *s))
    if plan.eta:
        signs = plan.eta[0]
        eta_minus = per_state_memo(lambda s: apply_eta_minus(signs, *s))
    blocks = []
    for n_up, n_dn in sectors_to_solve(space, plan, electrons):
        only = None
        if keep is not None:
            irreps = plan.lattice.irreps if plan.lattice is not None else [None]
            only = [i for i, r in enumerate(irreps) if keep((n_up, n_dn), r)]
            if not only:
                continue
        states = space.sector_states(n_up, n_dn)
        n = n_up + n_dn
        if plan.lattice is not None:
            parts = []
            for irrep, vecs in zip(plan.lattice.irreps,
                                   plan.lattice.adapted_bases(states, only=only)):
                if vecs:
                    piv = [next(iter(v)) for v in vecs]
                    if not check_reduced(vecs, piv):
                        vecs, piv = reduce_basis(vecs)
                    parts.append((irrep, vecs, piv))
        else:
            parts = [(None, [{s: 1} for s in states], list(states))]
        sizes = {"sector": (n_up, n_dn), "sector_dim": len(states), "steps": []}
        if plan.lattice is not None:
            sizes["steps"].append(("lattice", max((len(v) for _, v, _ in parts), default=0)))
        spin_max = eta_max = 0
        for irrep, vecs, piv in parts:
            stages = [("sector", len(states))]
            if irrep is not None:
                stages.append(("lattice " + irrep.label, len(vecs)))
            if plan.spin:
                if n_dn > 0 and n_up < L:      # otherwise every state is already highest weight
                    vecs, piv = kernel_of(s_plus, vecs, piv)
                stages.append(("spin highest weight", len(vecs)))
                spin_max = max(spin_max, len(vecs))
            if plan.eta:
                if n_up > 0 and n_dn > 0:      # otherwise eta- annihilates every state
                    vecs, piv = kernel_of(eta_minus, vecs, piv)
                stages.append(("eta lowest weight", len(vecs)))
                eta_max = max(eta_max, len(vecs))
            if not vecs:
                continue
            labels = {"N": n} if space.has_charge else {}
            spin_members = 1
            if plan.spin_split:
                two_s = n_up - n_dn
                labels["S"] = sympy.Rational(two_s, 2)
                labels["Sz"] = sympy.Rational(two_s, 2)
                spin_mult, spin_members = 1, two_s + 1
            elif plan.spin:
                two_s = n_up - n_dn
                labels["S"] = sympy.Rational(two_s, 2)
                spin_mult = two_s + 1
            else:
                labels["Sz"] = sympy.Rational(n_up - n_dn, 2)
                spin_mult = 1
            members = 1
            if plan.eta:
                labels["eta"] = sympy.Rational(L - n, 2)
                members = L - n + 1
            dim, copies = 1, 1
            if irrep is not None:
                labels["irrep"] = irrep.label
                labels["irrep_dim"] = irrep.dim
                if getattr(irrep, "mulliken", None):
                    labels["mulliken"] = irrep.mulliken
                if getattr(irrep, "momentum", None) is not None:
                    labels["k"] = irrep.momentum
                dim, copies = irrep.dim, getattr(irrep, "copies", 1)
            blk = _matrix_of_h(h, vecs, piv, coeff_memo=coeff_memo)
            if irrep is not None and irrep.orbit_size > 1 and blk.dim >= SPLIT_MIN_DIM:
                blk.centre = central_operator(plan.lattice, irrep, vecs, piv)
            spec = BlockSpec((n_up, n_dn), labels, spin_mult * dim, copies, blk,
                             vecs, piv, members, spin_members, stages)
            spec.irrep = irrep
            blocks.append(spec)
        if plan.spin:
            sizes["steps"].append(("spin", spin_max))
        if plan.eta:
            sizes["steps"].append(("eta", eta_max))
        sizes["largest_block"] = max(
            (len(b.vectors) for b in blocks if b.sector == (n_up, n_dn)), default=0)
        if report is not None:
            report.append(sizes)
    return blocks


def eta_member_irrep(plan, irrep, k):
    """Lattice irrep of eta+^k applied to a state of irrep ``irrep``."""
    if irrep is None or k % 2 == 0 or not plan.sublattice_char:
        return irrep
    return _irrep_times_char(plan.lattice, irrep, plan.sublattice_char)
