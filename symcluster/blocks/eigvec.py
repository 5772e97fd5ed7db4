"""Closed-form eigenvectors of small blocks (dimension <= 4).

For a block matrix M (the matrix of H in an exact reduced basis w_1..w_n of
an invariant subspace) and a simple root r of the irreducible factor P, every
non-zero column of adj(M - E 1), reduced modulo P(E), is an eigenvector of M
for E = r (Cayley–Hamilton: (M - E)adj(M - E) = det(M - E) = 0 at E = r).
The Fock-space vector is sum_j c_j w_j; it is not normalised.
"""

import sympy

from symcluster.algebra.block import ENERGY, to_sympy_matrix
from symcluster.symbols import CONSTANT, coupling_symbol

__all__ = ["block_eigenvector", "MAX_EIGVEC_DIM"]

MAX_EIGVEC_DIM = 4
#: energies with at most this many operations are substituted for E in the
#: coefficients; longer ones (trigonometric cubic/quartic forms, implicit
#: roots) leave the coefficients as polynomials in E, the level's energy.
SUBSTITUTE_OPS = 12


def block_eigenvector(block, vectors, poly, energy):
    """Eigenvector {(up, dn): coefficient} for the root ``energy`` of ``poly``, or None.

    Returns None when the block is larger than MAX_EIGVEC_DIM or the root is
    repeated inside the block (then the eigenvector is not unique).
    Coefficients are sympy expressions in the couplings; for long energies
    (see SUBSTITUTE_OPS) and implicit roots they are polynomials in the
    symbol E, which stands for the level's energy.
    """
    n = block.dim
    if n > MAX_EIGVEC_DIM:
        return None
    # the constant part of a block with fixed couplings has the value 1 (symbols.CONSTANT)
    m = to_sympy_matrix(block).subs(coupling_symbol(CONSTANT), 1) - ENERGY * sympy.eye(n)
    adj = m.adjugate() if n > 1 else sympy.Matrix([[1]])
    p_e = sympy.Poly(poly.as_expr(), ENERGY)
    column = None
    for j in range(n):
        col = []
        for i in range(n):
            num, den = sympy.fraction(sympy.together(adj[i, j]))
            rem = sympy.Poly(num, ENERGY).rem(p_e).as_expr()
            col.append(sympy.expand(rem) / den)
        if any(c != 0 for c in col):
            column = col
            break
    if column is None:
        return None
    if not hasattr(energy, "numeric") and sympy.count_ops(energy) <= SUBSTITUTE_OPS:
        column = [sympy.radsimp(c.subs(ENERGY, energy)) for c in column]
    out = {}
    for c, w in zip(column, vectors):
        if c == 0:
            continue
        for s, x in w.items():
            out[s] = out.get(s, 0) + c * x
    return {s: sympy.factor_terms(sympy.expand(v)) for s, v in out.items() if sympy.expand(v) != 0}
