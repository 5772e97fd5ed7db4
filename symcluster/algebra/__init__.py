"""Exact algebra: characteristic polynomials, factorization over Q, and closed-form roots.

Kernels work on plain data (:class:`LinearBlock`, sympy ``Poly``); nothing here knows
about clusters or models, and nothing here evaluates at a point: implicit roots and
every numeric value live one layer up, in :mod:`symcluster.numeric`.  The
characteristic-polynomial function is deliberately not re-exported here:
``symcluster.algebra.charpoly`` stays the module, so import the function as
``from symcluster.algebra.charpoly import charpoly``.
"""

from symcluster.algebra.block import ENERGY, LinearBlock, coupling_symbol, to_sympy_matrix
from symcluster.algebra.closed import closed_forms
from symcluster.algebra.factor import content_and_factors, factor_charpoly

__all__ = [
    "ENERGY",
    "LinearBlock",
    "coupling_symbol",
    "to_sympy_matrix",
    "factor_charpoly",
    "content_and_factors",
    "closed_forms",
]
