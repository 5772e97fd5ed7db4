"""Exact sparse blocks that are linear in the couplings.

A :class:`LinearBlock` is the plain-data hand-over between the block builder and the
exact algebra: ``H = sum(Symbol(name, real=True) * terms[name])`` where every
``terms[name]`` is a sparse ``{(row, col): exact number}`` matrix.  Blocks may be
non-symmetric (symmetry-adapted bases need not be orthonormal) but always have
real eigenvalues.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from fractions import Fraction
from math import lcm

import sympy

from symcluster.errors import ModelError
from symcluster.symbols import ENERGY, coupling_symbol

__all__ = ["LinearBlock", "to_sympy_matrix", "coupling_symbol", "ENERGY"]

@dataclass
class LinearBlock:
    """A square exact matrix linear in named couplings.

    Parameters
    ----------
    dim : int
        Number of rows (= columns).
    terms : dict[str, dict[tuple[int, int], Fraction | int]]
        Coupling name -> sparse matrix ``{(row, col): value}``; missing entries are 0.
    integral : bool
        True when the block is the matrix of an integer operator (one integer matrix per
        coupling) on an invariant subspace.  Its characteristic polynomial is then a
        monic factor of an integer one, so its coefficients are integers (Gauss's lemma)
        even when the entries are fractions; the fast characteristic-polynomial path
        uses this to lift the block itself instead of its integer multiple.
    centre : (tuple of int, dict) or None
        Optional ``(f, C)``: a matrix ``C`` (sparse, like a term) that commutes with
        every term and a monic integer polynomial ``f`` (ascending coefficients) with
        distinct roots and ``f(C) = 0``.  The fast path then splits the block into the
        eigenspaces of ``C`` modulo suitable primes (a Galois-merged block of conjugate
        irreps, see :mod:`symcluster.blocks.centre`); both properties are checked there.

    Examples
    --------
    >>> b = LinearBlock(2, {"t": {(0, 1): -2, (1, 0): -2}, "U": {(0, 0): 1}})
    >>> b.names()
    ('t', 'U')
    """

    dim: int
    terms: dict = field(default_factory=dict)
    integral: bool = False
    centre: object = None

    def __post_init__(self):
        if not isinstance(self.dim, int) or self.dim < 0:
            raise ModelError(
                f"block dimension {self.dim!r} is not a non-negative int; pass the number of basis states"
            )
        for name, mat in self.terms.items():
            if not isinstance(name, str) or not name.isidentifier():
                raise ModelError(
                    f"coupling name {name!r} is not a plain identifier; use names like 't' or 'U1'"
                )
            for (i, j), v in mat.items():
                if not (0 <= i < self.dim and 0 <= j < self.dim):
                    raise ModelError(
                        f"entry ({i}, {j}) of coupling {name!r} lies outside a {self.dim}x{self.dim} "
                        "block; fix the basis indices"
                    )
                if not isinstance(v, (int, Fraction)) or isinstance(v, bool):
                    raise ModelError(
                        f"entry ({i}, {j}) of coupling {name!r} is {v!r} of type {type(v).__name__}; "
                        "use int or fractions.Fraction"
                    )

    def names(self):
        """Names of the couplings with at least one nonzero entry, in insertion order."""
        return tuple(n for n, m in self.terms.items() if any(v != 0 for v in m.values()))

    def denominator(self):
        """Least common denominator of all entries (1 for an integer block)."""
        d = 1
        for mat in self.terms.values():
            for v in mat.values():
                if isinstance(v, Fraction):
                    d = lcm(d, v.denominator)
        return d

    def integer_terms(self, scale):
        """Return ``{name: {(i, j): int}}`` equal to `scale` times the nonzero entries.

        Parameters
        ----------
        scale : int
            A multiple of :meth:`denominator`.
        """
        out = {}
        for name, mat in self.terms.items():
            m = {}
            for key, v in mat.items():
                if type(v) is int:
                    if v:
                        m[key] = v * scale
                elif v != 0:
                    w = Fraction(v) * scale
                    if w.denominator != 1:
                        raise ModelError(
                            f"scale {scale} does not clear the denominator of entry {key} "
                            f"of {name!r}; use block.denominator()"
                        )
                    m[key] = int(w)
            if m:
                out[name] = m
        return out


def to_sympy_matrix(block, symbols=None):
    """Return the block as an explicit ``sympy.Matrix``.

    Parameters
    ----------
    block : LinearBlock
        The block.
    symbols : dict[str, sympy.Expr] or sequence of sympy.Symbol, optional
        What to put for each coupling name.  A sequence is matched by symbol name;
        by default ``Symbol(name, real=True)``.

    Returns
    -------
    sympy.Matrix
        ``sum(symbol * terms[name])`` with exact rational entries.

    Examples
    --------
    >>> b = LinearBlock(2, {"t": {(0, 1): -1, (1, 0): -1}})
    >>> to_sympy_matrix(b)
    Matrix([
    [ 0, -t],
    [-t,  0]])
    """
    if symbols is None:
        sym = {}
    elif isinstance(symbols, dict):
        sym = dict(symbols)
    else:
        sym = {s.name: s for s in symbols}
    M = sympy.zeros(block.dim, block.dim)
    for name, mat in block.terms.items():
        s = sym.get(name, coupling_symbol(name))
        for (i, j), v in mat.items():
            if v != 0:
                f = Fraction(v)
                M[i, j] += sympy.Rational(f.numerator, f.denominator) * s
    return M
