"""The version of symcluster, written once (pyproject.toml reads it from here).

Examples
--------
>>> from symcluster.version import __version__
>>> __version__.count(".") >= 1
True
"""

__version__ = "0.1.0"


def version_line():
    """``symcluster 0.1.0``: the line outputs carry.

    >>> version_line().startswith("symcluster ")
    True
    """
    return f"symcluster {__version__}"
