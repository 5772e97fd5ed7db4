"""Pieces of the verification that share no code with the block builder.

* :mod:`symcluster.checks.plain`: the unreduced sector matrices of a model, built from its
  terms by a plain Jordan-Wigner route on occupation vectors (nothing of
  :mod:`symcluster.hilbert` but the model's own data);
* :mod:`symcluster.checks.large`: the checks of sectors too large for a dense float64
  diagonalisation (exact power traces at a rational point, Lanczos in float64).

docs/verification.md says why each is independent.
"""
