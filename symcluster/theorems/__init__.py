"""Certified orderings of levels by quantum number (towers) and checks of the rigorous
theorems of the Hubbard model on a solved spectrum (docs/towers.md).

A stage after analysis/: uses the public Spectrum API, analysis/ and lattice/."""

from symcluster.theorems.towers import (EnvelopePiece, Interval, TowerReport, TowerVerdict,
                                        tower_rows, towers)

__all__ = ["towers", "tower_rows", "TowerReport", "TowerVerdict", "EnvelopePiece", "Interval"]
