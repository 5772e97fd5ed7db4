"""Response functions of a solved model at an exact point: Lehmann Green's functions,
static and thermal correlations, reference files and their comparer.

``eigen`` (sector matrices at the point, eigenvectors refined to high precision and
certified against the spectrum's exact levels) -> ``ensemble`` (T = 0, canonical and
grand-canonical states) -> ``greens`` (poles, weights, sum rules) and ``correlations``
-> ``reference`` / ``compare`` (files) -> ``plots``, ``commands`` (command line).
"""

from symcluster.response.greens import GreensFunction, GreensMatrix, greens_function, greens_matrix

__all__ = ["GreensFunction", "GreensMatrix", "greens_function", "greens_matrix"]
