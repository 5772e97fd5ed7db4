"""Translation groups of clusters beyond rings, for momentum-resolved Green's functions.

A *translation group* here is an abelian group T of automorphisms of the model (the
lattice group of :mod:`symcluster.symmetry.lattice`, every element checked on the
operator) that acts regularly on the sites: every site is ``t(0)`` for exactly one
``t`` in T.  Then T = Z_{n_1} x ... x Z_{n_r} with generators a_1..a_r, site i has the
coordinates ``e(i)`` with ``a_1^e_1 ... a_r^e_r (0) = i``, and the momenta are the
characters k = 2 pi (m_1/n_1, ..., m_r/n_r):

    G(k) = (1/L) sum_ij cos(2 pi sum_r m_r (e_r(i) - e_r(j)) / n_r) G_ij

(the sine part cancels: G_ij = G_ji for real eigenvectors).  The generators are chosen
by a depth-first search among fixed-point-free automorphisms commuting with those chosen:
largest order first (translations before glide reflections), then the smallest image of
site 0; a choice is kept only if the group it generates meets the one so far trivially
and moves every site.  On a periodic nx x ny grid (both > 2) this gives x -> x+1 and
y -> y+1 when nx, ny are not coprime; when they are, Z_nx x Z_ny is cyclic and one
generator of order nx ny is found (the same momenta, labelled by one integer).

Only one orbital per site is handled (the modes are the sites).
"""

from dataclasses import dataclass
from itertools import product

__all__ = ["Translations", "translation_group"]


@dataclass
class Translations:
    """A regular abelian group of automorphisms (see the module docstring).

    Attributes
    ----------
    generators : list of tuple of int
        Site permutations (``g[i]`` the image of site i).
    orders : list of int
    coords : list of tuple of int
        ``coords[i]`` = exponents e with prod a_r^e_r (0) = i.
    """

    generators: list
    orders: list
    coords: list


def _compose(a, b):
    """a after b."""
    return tuple(a[x] for x in b)


def _order(g):
    ident = tuple(range(len(g)))
    k, h = 1, g
    while h != ident:
        h = _compose(g, h)
        k += 1
    return k


def translation_group(model, lattice):
    """The :class:`Translations` of a model's lattice group, or None.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.symmetry.termgraph import term_lattice_symmetry
    >>> m = sc.hubbard(sc.grid(4, 3, periodic=True))
    >>> tr = translation_group(m, term_lattice_symmetry(m))
    >>> tr.orders, tr.generators[0][0]      # Z_12, cyclic (4, 3 coprime): x+1 with y+1
    ([12], 5)
    """
    L = model.n_sites
    if lattice is None or model.space.n_orbitals != 1 or L < 2:
        return None
    ident = tuple(range(L))
    free = [tuple(g) for g in lattice.group.elements
            if all(g[i] != i for i in range(L))]
    def powers_of(g):
        out = [ident]
        while True:
            nxt = _compose(g, out[-1])
            if nxt == ident:
                return out
            out.append(nxt)

    def search(gens, group):
        """Depth-first: generators in order of preference; the first complete group."""
        if len(group) == L:
            return gens, group
        cands = [g for g in free if g not in group
                 and all(_compose(g, h) == _compose(h, g) for h, _ in gens)]
        cands.sort(key=lambda g: (-_order(g), g[0], g))
        for g in cands:
            powers = powers_of(g)
            new = {_compose(p, h) for p in powers for h in group}
            # <g> must meet the group found so far trivially, and every new element must
            # move every site (a regular action has no fixed points)
            if len(new) != len(group) * len(powers) or L % len(new) or any(
                    any(t[i] == i for i in range(L)) for t in new - group):
                continue
            found = search(gens + [(g, len(powers))], new)
            if found is not None:
                return found
        return None

    found = search([], {ident})
    if found is None:
        return None
    gens, group = [g for g, _ in found[0]], found[1]
    orders = [k for _, k in found[0]]
    if len(group) != L or any(any(t[i] == i for i in range(L)) for t in group - {ident}):
        return None
    coords = [None] * L
    for e in product(*(range(n) for n in orders)):
        t = ident
        for g, x in zip(gens, e):
            for _ in range(x):
                t = _compose(g, t)
        if coords[t[0]] is not None:
            return None
        coords[t[0]] = e
    return Translations(gens, orders, coords)
