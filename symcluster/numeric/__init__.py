"""Numeric values of exact energies at exact points, with certificates.

One layer above :mod:`symcluster.algebra` (which is exact and never evaluates at a
point) and below :mod:`symcluster.spectrum` (plain data that asks this package for
values):

* :mod:`~symcluster.numeric.isolate`: certified isolation of the real roots of integer
  polynomials, exact root counting (Sturm);
* :mod:`~symcluster.numeric.implicit`: :class:`ImplicitRoot` (the k-th real root of an
  irreducible polynomial), :func:`roots_of`, :func:`verify_roots`;
* :mod:`~symcluster.numeric.compiled`: closed forms compiled into one program of
  operations, evaluated in ball arithmetic;
* :mod:`~symcluster.numeric.evaluate`: :func:`energy_numeric` and the
  :class:`Evaluation` object that one caller owns to share work between evaluations;
* :mod:`~symcluster.numeric.residuals`: backward errors and root-inclusion disks of
  polynomials at a value (what the verification's root checks compute).
"""

from symcluster.numeric.evaluate import Evaluation, closed_values, energy_numeric
from symcluster.numeric.implicit import ImplicitRoot, roots_of, roots_of_irreducible, verify_roots
from symcluster.numeric.isolate import isolate, real_roots_at

__all__ = ["Evaluation", "ImplicitRoot", "closed_values", "energy_numeric", "isolate",
           "real_roots_at", "roots_of", "roots_of_irreducible", "verify_roots"]
