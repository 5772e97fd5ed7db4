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
from ..linalg import apply_op
from ..operators import apply_eta_plus, apply_hamiltonian, apply_s_plus

__all__ = ["has_spin_symmetry", "eta_symmetry"]


def _low_states(n):
    out = []
    for nu in range(3):
        for nd in range(3 - nu):
            if nu <= n and nd <= n:
                out.extend(sector_states(n, nu, nd))
    return out


def _h_on(model, vec):
    """H applied to a sparse vector, coefficients as {label: int} per state."""
    out = {}
    for s, c in vec.items():
        for s2, row in apply_hamiltonian(model, *s).items():
            tgt = out.setdefault(s2, {})
            for lab, a in row.items():
                tgt[lab] = tgt.get(lab, 0) + a * c
    return {s: {l: a for l, a in row.items() if a} for s, row in out.items()}


def _commutator_minus(model, op, shift, state):
    """([H, op] - shift*op)|state> with coefficients by label; shift is {label: int}."""
    vec = {state: 1}
    opv = apply_op(op, vec)
    out = _h_on(model, opv)                     # H op |state>
    for s, row in _h_on(model, vec).items():    # - op H |state>
        for a, s2 in op(s):
            tgt = out.setdefault(s2, {})
            for lab, x in row.items():
                tgt[lab] = tgt.get(lab, 0) - a * x
    for s, a in opv.items():
        tgt = out.setdefault(s, {})
        for lab, x in shift.items():
            tgt[lab] = tgt.get(lab, 0) - x * a
    return {s: {l: x for l, x in r.items() if x} for s, r in out.items() if any(r.values())}


def has_spin_symmetry(model):
    """True iff [H, S+] = 0 (checked exactly on all states with <= 2 electrons)."""
    n = model.n_sites
    op = lambda s: apply_s_plus(n, *s)
    return all(not _commutator_minus(model, op, {}, st) for st in _low_states(n))


def eta_symmetry(model):
    """Return (signs, shift) if [H, eta+] = shift * eta+ exactly, else None.

    ``signs`` are the sublattice signs eps_i (+1 on the sublattice of site 0
    of each component, -1 on the other); ``shift`` is a dict {label: int}
    (for the Hubbard model {U: 1}: each eta+ raises the energy by U).
    """
    subl = model.cluster.sublattices()
    if subl is None:
        return None
    a, _ = subl
    signs = [1 if i in a else -1 for i in range(model.n_sites)]
    op = lambda s: apply_eta_plus(signs, *s)
    # read off the shift on the vacuum: [H, eta+]|0> = H eta+|0> (H|0> = 0)
    n = model.n_sites
    hv = _h_on(model, apply_op(op, {(0, 0): 1}))
    # eta+|0> = sum_i eps_i |i up, i dn>, coefficient at site 0 is eps_0 = +1
    s0 = (1, 1)
    shift = dict(hv.get(s0, {}))
    if not all(not _commutator_minus(model, op, shift, st) for st in _low_states(n)):
        return None
    return signs, shift


def shift_expr(shift):
    """The energy shift per eta+ as a sympy expression."""
    from ..models import coupling_symbol
    return sympy.Add(*[c * coupling_symbol(l) for l, c in sorted(shift.items())])
