"""Spin SU(2) and eta-pseudospin SU(2): exact detection and highest-weight projections.

Detection never trusts the cluster's name: the commutators are checked
exactly on every Fock state with at most two electrons.  This suffices:
H, S+ and eta+ are normal-ordered with at most two annihilators in H and at
most one in S+ (none in eta+), so [H, X] - c X is a normal-ordered operator
with at most two annihilators, and such an operator vanishes iff it vanishes
on every state with <= 2 particles.
"""

import sympy

from ..fock import sector_states
from ..operators import HamiltonianAction, apply_eta_plus, apply_s_plus, per_state_memo

__all__ = ["has_spin_symmetry", "eta_symmetry"]


def _low_states(n):
    out = []
    for nu in range(3):
        for nd in range(3 - nu):
            if nu <= n and nd <= n:
                out.extend(sector_states(n, nu, nd))
    return out


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

    ``h`` is an optional :class:`~symcluster.operators.HamiltonianAction` of
    ``model`` to share with other checks of the same solve.
    """
    n = model.n_sites
    if h is None:
        h = HamiltonianAction(model)
    op = per_state_memo(lambda s: apply_s_plus(n, *s))
    return all(_commutator_vanishes(h, op, {}, st) for st in _low_states(n))


def eta_symmetry(model, h=None):
    """Return (signs, shift) if [H, eta+] = shift * eta+ exactly, else None.

    ``signs`` are the sublattice signs eps_i (+1 on the sublattice of site 0
    of each component, -1 on the other); ``shift`` is a dict {label: int}
    (for the Hubbard model {U: 1}: each eta+ raises the energy by U).
    ``h`` is an optional :class:`~symcluster.operators.HamiltonianAction` of
    ``model`` to share with other checks of the same solve.
    """
    subl = model.cluster.sublattices()
    if subl is None:
        return None
    a, _ = subl
    signs = [1 if i in a else -1 for i in range(model.n_sites)]
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
    n = model.n_sites
    if not all(_commutator_vanishes(h, op, shift, st) for st in _low_states(n)):
        return None
    return signs, shift


def shift_expr(shift):
    """The energy shift per eta+ as a sympy expression."""
    from ..models import coupling_symbol
    return sympy.Add(*[c * coupling_symbol(l) for l, c in sorted(shift.items())])
