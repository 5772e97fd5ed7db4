"""Exact sparse linear algebra on Fock-space vectors, in integers.

A vector is a dict {state: int}.  A *reduced basis* is a list of integer
vectors with one pivot state each: vector i is non-zero at its own pivot and
zero at every other vector's pivot.  The coordinate of a vector of the span
along basis vector i is then its value at pivot i divided by the pivot value.
"""

from math import gcd

import flint

__all__ = ["reduce_basis", "kernel_of", "apply_op", "check_reduced", "primitive",
           "integer_multiple"]


def primitive(vec):
    """Divide an integer vector by the gcd of its entries (sign kept)."""
    g = 0
    for x in vec.values():
        g = gcd(g, x)
        if g == 1:
            return vec
    return {s: x // g for s, x in vec.items()} if g > 1 else vec


def integer_multiple(values):
    """(scale, ints) with values == scale * ints, ints integer with gcd 1 (dict in, dict out).

    ``values`` maps keys to Fractions/ints; ``scale`` is a positive Fraction
    (0 for an empty or all-zero dict).
    """
    from fractions import Fraction
    from math import lcm
    if all(type(x) is int for x in values.values()):
        den, ints = 1, values            # the usual case: an integer block's charpoly
    else:
        den = 1
        for x in values.values():
            den = lcm(den, Fraction(x).denominator)
        ints = {k: int(Fraction(x) * den) for k, x in values.items()}
    g = 0
    for x in ints.values():
        g = gcd(g, x)
    if g == 0:
        return Fraction(0), {}
    return Fraction(g, den), {k: x // g for k, x in ints.items()}


def _components(vectors):
    """Group vector indices whose supports overlap (connected through shared states)."""
    if sum(map(len, vectors)) == len(set().union(*vectors)):     # disjoint supports
        return [[k] for k in range(len(vectors))]
    parent = list(range(len(vectors)))

    def find(a):
        while parent[a] != a:
            parent[a] = parent[parent[a]]
            a = parent[a]
        return a

    owner = {}
    for k, v in enumerate(vectors):
        for s in v:
            if s in owner:
                ra, rb = find(owner[s]), find(k)
                if ra != rb:
                    parent[ra] = rb
            else:
                owner[s] = k
    groups = {}
    for k in range(len(vectors)):
        groups.setdefault(find(k), []).append(k)
    return list(groups.values())


def _rref(rows, ncols):
    """Integer RREF: returns (R as list of int rows, den, pivot columns); R/den is the RREF."""
    return _rref_flat(len(rows), ncols, [x for r in rows for x in r])


def _rref_flat(nrows, ncols, entries):
    """:func:`_rref` of the matrix given row by row as one flat list of ints."""
    red, den, rank = flint.fmpz_mat(nrows, ncols, entries).rref()
    entries = [int(x) for x in red.entries()[:rank * ncols]]
    out, piv = [], []
    for r in range(rank):
        row = entries[r * ncols:(r + 1) * ncols]
        piv.append(next(c for c in range(ncols) if row[c]))
        out.append(row)
    return out, int(den), piv


def reduce_basis(vectors):
    """Reduced basis (vectors, pivots) with the same span, component by component."""
    out_vecs, out_piv = [], []
    for group in _components(vectors):
        states = sorted({s for k in group for s in vectors[k]})
        idx = {s: c for c, s in enumerate(states)}
        rows = []
        for k in group:
            row = [0] * len(states)
            for s, c in vectors[k].items():
                row[idx[s]] = c
            rows.append(row)
        red, _, piv = _rref(rows, len(states))
        for row, p in zip(red, piv):
            out_vecs.append(primitive({states[c]: x for c, x in enumerate(row) if x}))
            out_piv.append(states[p])
    return out_vecs, out_piv


def check_reduced(vectors, pivots):
    """True iff every vector is non-zero at its pivot and zero at all other pivots."""
    pset = {p: i for i, p in enumerate(pivots)}
    if len(pset) != len(pivots):
        return False
    for i, v in enumerate(vectors):
        if not v.get(pivots[i]):
            return False
        for s in v:
            j = pset.get(s)
            if j is not None and j != i:
                return False
    return True


def apply_op(op, vector):
    """Apply an operator given as state -> list of (coeff, state') to a sparse vector."""
    out = {}
    for s, c in vector.items():
        for a, s2 in op(s):
            out[s2] = out.get(s2, 0) + a * c
    return out if all(out.values()) else {s: c for s, c in out.items() if c}


def kernel_of(op, vectors, pivots):
    """Reduced integer basis of {sum_i c_i v_i : op(sum c_i v_i) = 0}.

    The result is again reduced, with pivots a subset of ``pivots``.
    """
    if not vectors:
        return [], []
    images = [apply_op(op, v) for v in vectors]
    if not any(images):             # op annihilates every vector
        return list(vectors), list(pivots)
    new_vecs, new_piv = [], []
    for group in _components(images):
        if len(group) == 1:
            if not images[group[0]]:
                new_vecs.append(vectors[group[0]])
                new_piv.append(pivots[group[0]])
            # else: one vector with a non-zero image, no kernel (rank 1, no free column)
            continue
        ncols = len(group)
        rows_states = sorted({s for c in group for s in images[c]})
        start = {s: r * ncols for r, s in enumerate(rows_states)}
        flat = [0] * (len(rows_states) * ncols)       # row = state, column = vector
        for cc, c in enumerate(group):
            for s, a in images[c].items():
                flat[start[s] + cc] = a
        red, den, piv_cols = _rref_flat(len(rows_states), ncols, flat)
        pset = set(piv_cols)
        for f in range(len(group)):
            if f in pset:
                continue
            comb = {group[f]: den}
            for row, pc in zip(red, piv_cols):
                if row[f]:
                    comb[group[pc]] = -row[f]
            vec = {}
            for c, a in comb.items():
                for s, x in vectors[c].items():
                    vec[s] = vec.get(s, 0) + a * x
            new_vecs.append(primitive({s: x for s, x in vec.items() if x}))
            new_piv.append(pivots[group[f]])
    return new_vecs, new_piv
