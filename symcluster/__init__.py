"""symcluster: exact, verified energy levels of small interacting-electron clusters."""

__version__ = "0.1.0"
