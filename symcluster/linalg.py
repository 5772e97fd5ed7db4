"""Exact sparse linear algebra on Fock-space vectors.

A vector is a dict {state: Fraction}.  A *reduced basis* is a list of vectors
together with one pivot state per vector such that vector i has coefficient 1
at its own pivot and 0 at every other vector's pivot; coordinates of any
vector of the span are then read off at the pivots.
"""

from fractions import Fraction

import flint

__all__ = ["reduce_basis", "kernel_of", "coordinates", "apply_op"]


def _rref_rows(rows, columns):
    """Exact RREF of the given dense rows (lists of Fractions); returns (R rows, pivot cols)."""
    m, n = len(rows), len(columns)
    mat = flint.fmpq_mat(m, n, [flint.fmpq(x.numerator, x.denominator) for r in rows for x in r])
    red, rank = mat.rref()
    pivots = []
    out = []
    for r in range(rank):
        row = [Fraction(int(red[r, c].p), int(red[r, c].q)) for c in range(n)]
        pivots.append(next(c for c in range(n) if row[c] != 0))
        out.append(row)
    return out, pivots


def _components(vectors):
    """Group vector indices whose supports overlap (connected through shared states)."""
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


def reduce_basis(vectors, order=None):
    """Reduced basis (vectors, pivots) spanning the same space as ``vectors``.

    Works component by component (vectors with disjoint supports never mix).
    ``order`` is an optional key for the states (pivots are chosen earliest).
    """
    out_vecs, out_piv = [], []
    for group in _components(vectors):
        states = sorted({s for k in group for s in vectors[k]}, key=order)
        idx = {s: c for c, s in enumerate(states)}
        rows = []
        for k in group:
            row = [Fraction(0)] * len(states)
            for s, c in vectors[k].items():
                row[idx[s]] = Fraction(c)
            rows.append(row)
        red, piv = _rref_rows(rows, states)
        for row, p in zip(red, piv):
            out_vecs.append({states[c]: x for c, x in enumerate(row) if x})
            out_piv.append(states[p])
    return out_vecs, out_piv


def apply_op(op, vector):
    """Apply an operator given as state -> list of (coeff, state') to a sparse vector."""
    out = {}
    for s, c in vector.items():
        for a, s2 in op(s):
            out[s2] = out.get(s2, 0) + a * c
    return {s: c for s, c in out.items() if c}


def kernel_of(op, vectors, pivots):
    """Reduced basis of {sum_i c_i v_i : op(sum c_i v_i) = 0}.

    The result is again in reduced form, with pivots a subset of ``pivots``.
    """
    k = len(vectors)
    if k == 0:
        return [], []
    images = [apply_op(op, v) for v in vectors]
    targets = sorted({s for im in images for s in im})
    if not targets:
        return list(vectors), list(pivots)
    # columns = basis vectors; we need the nullspace of the (targets x k) matrix.
    # Split into independent column groups by shared target states.
    col_groups = _components(images)
    zero_cols = [g[0] for g in col_groups if not images[g[0]]]
    new_vecs, new_piv = [], []
    for c in zero_cols:
        new_vecs.append(vectors[c])
        new_piv.append(pivots[c])
    for group in col_groups:
        if len(group) == 1 and not images[group[0]]:
            continue
        rows_states = sorted({s for c in group for s in images[c]})
        ridx = {s: r for r, s in enumerate(rows_states)}
        dense = [[Fraction(0)] * len(group) for _ in rows_states]
        for cc, c in enumerate(group):
            for s, a in images[c].items():
                dense[ridx[s]][cc] = Fraction(a)
        red, piv_cols = _rref_rows(dense, group) if rows_states else ([], [])
        free = [cc for cc in range(len(group)) if cc not in set(piv_cols)]
        for f in free:
            comb = {group[f]: Fraction(1)}
            for row, pc in zip(red, piv_cols):
                if row[f]:
                    comb[group[pc]] = -row[f]
            vec = {}
            for c, a in comb.items():
                for s, x in vectors[c].items():
                    vec[s] = vec.get(s, 0) + a * x
            new_vecs.append({s: x for s, x in vec.items() if x})
            new_piv.append(pivots[group[f]])
    return new_vecs, new_piv


def coordinates(vector, pivots):
    """Coordinates of ``vector`` (assumed in the span) in a reduced basis."""
    return [vector.get(p, 0) for p in pivots]
