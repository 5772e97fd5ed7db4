"""Exact algebra: characteristic polynomials, factorization over Q, and roots.

Kernels work on plain data (:class:`LinearBlock`, sympy ``Poly``); nothing here knows
about clusters or models.  The characteristic-polynomial function is deliberately not
re-exported here: ``symcluster.algebra.charpoly`` stays the module, so import the function
as ``from symcluster.algebra.charpoly import charpoly``.
"""

from symcluster.algebra.block import ENERGY, LinearBlock, coupling_symbol, to_sympy_matrix
from symcluster.algebra.factor import content_and_factors, factor_charpoly
from symcluster.algebra.roots import ImplicitRoot, real_roots_at, roots_of, verify_roots

__all__ = [
    "ENERGY",
    "LinearBlock",
    "coupling_symbol",
    "to_sympy_matrix",
    "factor_charpoly",
    "content_and_factors",
    "ImplicitRoot",
    "roots_of",
    "real_roots_at",
    "verify_roots",
]
