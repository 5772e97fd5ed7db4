"""Spin SU(2) and eta-pseudospin SU(2): exact detection from the model's terms.

Detection never trusts the model's name: the commutators are checked exactly on
every Fock state with at most k particles, k the largest number of annihilators in
one normal-ordered product of the terms (2 for every built-in term).  This
suffices: S+ has one annihilator and eta+ none, so [H, X] - c X is a normal-ordered
operator with at most k annihilators, and such an operator vanishes iff it vanishes
on every state with <= k particles (apply its products with the fewest annihilators
to the state holding exactly their annihilated modes).

On a projected space (no double occupancy, or spins as singly occupied sites) the
Hamiltonian is P H P with P the projector onto the space.  S+ preserves every
mode's occupation number, so it commutes with P, and [P H P, S+] = P [H, S+] P:
the Fock-space identity [H, S+] = 0 proves the symmetry there too.  eta+ leaves
such spaces, so it is never used on them.
"""

import sympy

from symcluster.hilbert.fock import sector_states
from symcluster.hilbert.action import HamiltonianAction
from symcluster.lattice.clusters import two_colouring
from symcluster.hilbert.ladder import apply_eta_plus, apply_s_plus, per_state_memo

__all__ = ["has_spin_symmetry", "spin_ladder_shift", "eta_symmetry", "mode_sublattices"]


def _low_states(n, k=2):
    """Every Fock state on ``n`` modes with at most ``k`` particles."""
    out = []
    for nu in range(k + 1):
        for nd in range(k + 1 - nu):
            if nu <= n and nd <= n:
                out.extend(sector_states(n, nu, nd))
    return out


def _fock_action(model, h):
    """An action of the model's terms on the whole Fock space (no projection), for the
    commutator checks: ``h`` itself when the space is not projected."""
    if h is not None and not model.space.projected and model.space.kind == "electrons":
        return h
    return HamiltonianAction(model, project=False)


def _max_annihilators(model):
    return max((t.max_annihilators() for t in model.terms), default=0)


def _commutator_vanishes(h, op, shift, state):
    """True iff ([H, op] - shift*op)|state> = 0 for every coupling label.

    ``h`` is a :class:`HamiltonianAction`, ``op`` maps a state to a list of
    ``(int, state')`` and ``shift`` is ``{label: int}``.  The coefficient of
    each (state', label) is accumulated exactly and must vanish.
    """
    acc = {}
    opv = op(state)
    for a, s in opv:                            # H op |state>
        for s2, lab, x in h[s]:
            k = (s2, lab)
            acc[k] = acc.get(k, 0) + a * x
    for s, lab, x in h[state]:                  # - op H |state>
        for a, s2 in op(s):
            k = (s2, lab)
            acc[k] = acc.get(k, 0) - a * x
    for a, s in opv:                            # - shift op |state>
        for lab, x in shift.items():
            k = (s, lab)
            acc[k] = acc.get(k, 0) - x * a
    return not any(acc.values())


def has_spin_symmetry(model, h=None):
    """True iff [H, S+] = 0 (checked exactly on all states with <= 2 electrons).

    ``h`` is an optional :class:`~symcluster.hilbert.action.HamiltonianAction` of
    ``model`` to share with other checks of the same solve.
    """
    n = model.n_modes
    h = _fock_action(model, h)
    op = per_state_memo(lambda s: apply_s_plus(n, *s))
    return all(_commutator_vanishes(h, op, {}, st)
               for st in _low_states(n, max(1, _max_annihilators(model))))


def spin_ladder_shift(model, h=None):
    """``{label: int}`` with [H, S+] = shift * S+ exactly, or None when no such shift exists.

    A shift of zero (``{}``) is full spin SU(2).  A nonzero shift comes from a uniform field
    along z: H = H0 - h sum_i 2 S^z_i with [H0, S+] = 0 gives shift {h: -2}.  With N_up and
    N_dn conserved ([H, S^z] = 0), [H, S+] = d S+ implies [H, S-] = -d S- and [H, S^2] = 0:
    the kernel of S+ in the sector S^z = S holds the S = S^z states, and S- maps them to the
    other members of their multiplet, each step down in S^z moving the energy by -d.
    """
    n = model.n_modes
    h = _fock_action(model, h)
    op = per_state_memo(lambda s: apply_s_plus(n, *s))
    # read the shift on one down spin: [H, S+]|dn at mode 0> = shift * S+|...> + ...
    s0 = (0, 1)
    target = (1, 0)
    shift = {}
    for c, st in op(s0):                        # H S+ |s0>
        for s2, lab, x in h[st]:
            if s2 == target:
                shift[lab] = shift.get(lab, 0) + c * x
    for s1, lab, x in h[s0]:                    # - S+ H |s0>
        for c, s2 in op(s1):
            if s2 == target:
                shift[lab] = shift.get(lab, 0) - c * x
    shift = {lab: x for lab, x in shift.items() if x}
    # the coefficient of |target> in S+|s0> is +1, so shift is the eigen-shift if one exists
    if not all(_commutator_vanishes(h, op, shift, st)
               for st in _low_states(n, max(1, _max_annihilators(model)))):
        return None
    return shift


def eta_symmetry(model, h=None):
    """Return (signs, shift) if [H, eta+] = shift * eta+ exactly, else None.

    ``signs`` are the sublattice signs eps_i (+1 on the sublattice of site 0
    of each component, -1 on the other); ``shift`` is a dict {label: int}
    (for the Hubbard model {U: 1}: each eta+ raises the energy by U).
    ``h`` is an optional :class:`~symcluster.hilbert.action.HamiltonianAction` of
    ``model`` to share with other checks of the same solve.
    """
    if model.space.projected or model.space.kind != "electrons":
        return None
    signs = mode_sublattices(model)
    if signs is None:
        return None
    if h is None:
        h = HamiltonianAction(model)
    op = per_state_memo(lambda s: apply_eta_plus(signs, *s))
    # read off the shift on the vacuum: [H, eta+]|0> = H eta+|0> (H|0> = 0);
    # eta+|0> = sum_i eps_i |i up, i dn>, coefficient at site 0 is eps_0 = +1
    s0 = (1, 1)
    shift = {}
    for c, s in op((0, 0)):
        for s2, lab, x in h[s]:
            if s2 == s0:
                shift[lab] = shift.get(lab, 0) + c * x
    shift = {lab: x for lab, x in shift.items() if x}
    n = model.n_modes
    if not all(_commutator_vanishes(h, op, shift, st)
               for st in _low_states(n, max(1, _max_annihilators(model)))):
        return None
    return signs, shift


def mode_sublattices(model):
    """Signs eps_m = +-1 per spatial mode that alternate across every one-body move.

    The graph joins two modes when a normal-ordered product c+_a c_b (a != b) occurs in
    a term; eps is +1 on the lowest mode of each connected component.  None when the
    graph is not bipartite.
    """
    n = model.n_modes
    nbrs = [set() for _ in range(n)]
    for term in model.terms:
        for prod, _ in term.operator:
            if len(prod) == 2 and prod[0][2] and not prod[1][2] and prod[0][0] != prod[1][0]:
                a, b = prod[0][0], prod[1][0]
                nbrs[a].add(b)
                nbrs[b].add(a)
    return two_colouring(n, nbrs.__getitem__)


def shift_expr(shift):
    """The energy shift per eta+ as a sympy expression."""
    from symcluster.symbols import coupling_symbol
    return sympy.Add(*[c * coupling_symbol(l) for l, c in sorted(shift.items())])
