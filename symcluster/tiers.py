"""Sector dimensions at which the verification changes tier (docs/verification.md).

A leaf module: the verification (:mod:`symcluster.verify.core`) applies these limits and the
memory estimate (:mod:`symcluster.pipeline.resources`) counts the float64 tier's dense matrices,
so both import them from here.
"""

#: Sectors up to this dimension: certified eigenvalues in ball arithmetic.
MP_DIM = 4
#: Up to this dimension: the exact characteristic polynomial modulo a random prime.
EXACT_DIM = 500
#: Up to this dimension: float64 eigenvalues of the dense sector matrix; above, none.
FLOAT_DIM = 6000
#: Sector selections: up to this dimension the dense float64 eigenvectors (the projector's
#: trace on each eigenspace); above, the projected Lanczos iteration.
SELECTED_DENSE_DIM = 2000
