"""Quantities derived from a Spectrum: ground-state maps, gaps, series, thermodynamics.

Everything here uses only the public Level/Spectrum API (symcluster.spectrum).
See docs/analysis.md.
"""

from symcluster.analysis.gaps import GapResult, charge_gap, lowest_level, pair_binding, spin_gap
from symcluster.analysis.observables import (LevelDerivative, double_occupancy, energy_derivative,
                          kinetic_energy)
from symcluster.analysis.series import series, series_coefficients
from symcluster.analysis.thermo import high_temperature_series, partition_function, thermo_table
from symcluster.analysis.transitions import GroundPiece, Transition, crossings, ground_states, transitions

__all__ = [
    "transitions", "crossings", "ground_states", "Transition", "GroundPiece",
    "series", "series_coefficients",
    "charge_gap", "spin_gap", "pair_binding", "lowest_level", "GapResult",
    "partition_function", "thermo_table", "high_temperature_series",
    "energy_derivative", "double_occupancy", "kinetic_energy", "LevelDerivative",
    "plot_levels",
]


def plot_levels(*args, **kwargs):
    """Lazy wrapper around :func:`symcluster.analysis.plots.plot_levels` (needs matplotlib)."""
    from symcluster.analysis.plots import plot_levels as _plot
    return _plot(*args, **kwargs)
