"""Lattice symmetry from the model's terms, never from the cluster or the family name.

The candidates are the automorphisms of the labelled *term graph*: its nodes are the
spatial modes, a node's colour lists the terms acting on that mode alone, an edge's
colour the terms acting on exactly that pair (both orientations, so the colour does not
depend on the order of the pair).  Terms on more modes do not enter the graph.  Every
candidate g is then checked exactly: for every coupling, the sum of its terms, with each
mode m replaced by g(m) and brought back to normal order, must equal the sum itself
(U(g) H U(g)^-1 = H for all couplings, U(g) c+_m U(g)^-1 = c+_{g(m)}).  The elements
that pass form a group (the stabiliser of H), which is returned.
"""

from symcluster.models.terms import normal_order
from symcluster.symmetry.groups import PermutationGroup, automorphisms
from symcluster.symmetry.lattice import LatticeSymmetry

__all__ = ["term_automorphisms", "term_lattice_symmetry"]


def _local(prod, order):
    """The product with its modes renamed 0, 1, ... in the given order."""
    pos = {m: i for i, m in enumerate(order)}
    return tuple((pos[m], s, d) for m, s, d in prod)


def _local_form(term, order):
    ops = normal_order([(c, _local(p, order)) for p, c in term.operator])
    return tuple(sorted(ops.items()))


def _graph(model):
    nodes = [[] for _ in range(model.n_modes)]
    edges = {}
    for term in model.terms:
        modes = sorted({m for p, _ in term.operator for m, _, _ in p})
        if len(modes) == 1:
            nodes[modes[0]].append((term.label, _local_form(term, modes)))
        elif len(modes) == 2:
            a, b = modes
            colour = (term.label, frozenset([_local_form(term, (a, b)), _local_form(term, (b, a))]))
            edges.setdefault((a, b), []).append(colour)
    site_labels = [repr(sorted(n, key=repr)) for n in nodes]
    bonds = [(a, b, repr(sorted(c, key=repr))) for (a, b), c in sorted(edges.items())]
    return bonds, site_labels


def _per_label(model, perm=None):
    """{label: normal-ordered operator dict} of H, with modes mapped through ``perm``."""
    out = {}
    for term in model.terms:
        prods = term.operator if perm is None else [
            (tuple((perm[m], s, d) for m, s, d in p), c) for p, c in term.operator]
        out.setdefault(term.label, []).extend((c, p) for p, c in prods)
    return {lab: normal_order(raw) for lab, raw in out.items()}


def term_automorphisms(model):
    """The mode permutations that leave every coupling's part of H unchanged (exact).

    Parameters
    ----------
    model : Model

    Returns
    -------
    list of tuple of int
        Permutations of the spatial modes (``g[m]`` the image of mode m), identity first.

    Examples
    --------
    >>> import symcluster as sc
    >>> len(term_automorphisms(sc.hubbard(sc.ring(4))))
    8
    >>> len(term_automorphisms(sc.kanamori(3)))
    6
    """
    bonds, site_labels = _graph(model)
    candidates = automorphisms(model.n_modes, bonds, site_labels)
    ref = _per_label(model)
    return [g for g in candidates if _per_label(model, g) == ref]


def term_lattice_symmetry(model):
    """The :class:`LatticeSymmetry` of the term automorphisms, or None if only the identity.

    Examples
    --------
    >>> import symcluster as sc
    >>> term_lattice_symmetry(sc.heisenberg(sc.ring(6))).group.order
    12
    """
    if model.n_modes < 2:
        return None
    elements = term_automorphisms(model)
    if len(elements) == 1:
        return None
    # a cyclic permutation of the orbitals of one atom is no translation: no momenta there
    return LatticeSymmetry(PermutationGroup(elements), momenta=model.n_sites > 1)
