"""The version of symcluster, written once (pyproject.toml reads it from here).

Examples
--------
>>> from symcluster.version import __version__
>>> __version__.count(".") >= 1
True
"""

__version__ = "0.1.0"
