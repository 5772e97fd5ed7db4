"""A central element of the group algebra on a Galois-merged block, for splitting it.

A rational irrep (:class:`~symcluster.symmetry.lattice.RationalIrrep`) with
``orbit_size = s > 1`` joins ``s`` Galois-conjugate irreducible representations in one
block (for a ring of ``L`` sites, the momenta ``±2πj/L`` whose cosines are conjugate
algebraic numbers).  Its characteristic polynomial over the rationals is the product of
``s`` conjugate factors, each of a block ``s`` times smaller.  The exact algebra
(:mod:`symcluster.algebra.charpoly`) computes it from those smaller blocks when it is
handed an operator ``C`` on the block that

* commutes with the matrix of every coupling, and
* satisfies ``f(C) = 0`` for a monic integer polynomial ``f`` of degree ``s`` with
  distinct roots;

then the eigenspaces of ``C`` modulo a prime at which ``f`` splits are the conjugate
blocks.  A class sum ``C = sum_{g in class} g`` of the lattice group is central in the
group algebra, so it commutes with every term of the Hamiltonian that the group
preserves, and on the isotypic component of an irrep ``Γ`` it acts as the scalar
``ω_Γ = |class| χ_Γ(g) / dim Γ`` (Schur's lemma); ``f = prod (x - ω_Γ)`` over the irreps
of the orbit.  The ``ω_Γ`` are algebraic integers and ``f`` is fixed by the Galois group,
so ``f`` has integer coefficients (J.-P. Serre, Linear Representations of Finite Groups,
1977, sect. 6.5 (central characters are algebraic integers) and 12.4 [mem]).

Nothing here is trusted by the algebra: it checks the commutation exactly and ``f(C) = 0``
modulo every prime it uses (docs/performance.md, "Galois splitting").
"""

from fractions import Fraction

import numpy as np

from symcluster.symmetry.lattice import permute_state

__all__ = ["SPLIT_MIN_DIM", "class_polynomial", "central_operator"]

#: Merged blocks smaller than this are solved without splitting (the gain is nil there).
SPLIT_MIN_DIM = 24


def class_polynomial(lattice, irrep):
    """A conjugacy class that separates the irreps of a Galois orbit, and its polynomial.

    Parameters
    ----------
    lattice : LatticeSymmetry
    irrep : RationalIrrep
        With ``orbit_size > 1``.

    Returns
    -------
    (list of int, tuple of int) or None
        The element indices of the smallest class whose central characters ``ω_Γ`` are
        distinct over the orbit, and the ascending integer coefficients of
        ``f(x) = prod_Γ (x - ω_Γ)`` (monic, degree ``orbit_size``); None when no class
        separates them or the rounding to integers is not clean.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.symmetry.termgraph import term_lattice_symmetry
    >>> lat = term_lattice_symmetry(sc.hubbard(sc.ring(8)))
    >>> merged = [r for r in lat.irreps if r.orbit_size > 1][0]
    >>> merged.label, class_polynomial(lat, merged)[1]       # omega = 2 cos(k), k = pi/4, 3 pi/4
    ('k=±π/4,±3π/4', (-2, 0, 1))
    """
    table = lattice.table
    by_name = {c.name: c for c in table.irreps}
    chars = [by_name[name] for name in irrep.members]
    group = lattice.group
    order = sorted(range(1, len(group.classes)), key=lambda c: len(group.classes[c]))
    for c in order:
        size = len(group.classes[c])
        omegas = [size * ch.numeric[c] / ch.dim for ch in chars]
        gaps = [abs(a - b) for i, a in enumerate(omegas) for b in omegas[i + 1:]]
        if min(gaps) < 1e-6:
            continue
        coeffs = np.poly(np.array(omegas, dtype=complex))[::-1]       # ascending
        ints = [int(round(x.real)) for x in coeffs]
        if max(abs(x - n) for x, n in zip(coeffs, ints)) > 1e-6:
            return None
        return list(group.classes[c]), tuple(ints)
    return None


def central_operator(lattice, irrep, vectors, pivots):
    """``(f, C)`` for a merged block, or None (see the module docstring).

    Parameters
    ----------
    lattice : LatticeSymmetry
    irrep : RationalIrrep
    vectors, pivots : list
        The block's reduced basis (see :mod:`symcluster.linalg`).

    Returns
    -------
    (tuple of int, dict) or None
        ``f`` (ascending integer coefficients) and the matrix of the class sum in the
        block's basis, ``{(i, j): int or Fraction}``: entry ``(i, j)`` is ``(C w_j)`` at
        pivot ``i`` divided by ``w_i``'s pivot value.

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.blocks.build import build_blocks, plan_symmetries
    >>> model = sc.hubbard(sc.ring(8))
    >>> plan = plan_symmetries(model)
    >>> big = max(build_blocks(model, plan, electrons=[4]), key=lambda b: b.block.dim)
    >>> f, C = central_operator(plan.lattice, big.irrep, big.vectors, big.pivots)
    >>> f, big.block.dim, len(C) > 0
    ((-2, 0, 1), 88, True)
    """
    found = class_polynomial(lattice, irrep)
    if found is None:
        return None
    elements, f = found
    perms = [lattice.group.elements[g] for g in elements]
    inverses = []
    for g in perms:
        inv = [0] * len(g)
        for i, x in enumerate(g):
            inv[x] = i
        inverses.append(tuple(inv))
    # only the pivot entries of C w_j are needed: (C w)[p] = sum_g sign(g, s) w[s] with
    # g s = p, so look up s = g^-1 p for each pivot p instead of moving every state of w
    sources = {}                        # state s -> [(pivot row i, sign of g on s)]
    for i, (up, dn) in enumerate(pivots):
        for g, gi in zip(perms, inverses):
            _, su, sd = permute_state(gi, up, dn)
            sign, u2, d2 = permute_state(g, su, sd)
            if (u2, d2) != (up, dn):    # pragma: no cover - a permutation and its inverse
                raise ValueError("central_operator: a group element's inverse is wrong")
            sources.setdefault((su, sd), []).append((i, sign))
    acc = {}
    for j, w in enumerate(vectors):
        for st in w.keys() & sources.keys():
            x = w[st]
            for i, sign in sources[st]:
                acc[(i, j)] = acc.get((i, j), 0) + sign * x
    mat = {}
    for (i, j), v in acc.items():
        if v:
            piv = vectors[i][pivots[i]]
            q, rem = divmod(v, piv)
            mat[(i, j)] = Fraction(v, piv) if rem else q
    return f, mat
