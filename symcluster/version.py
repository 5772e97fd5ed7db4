"""The version of symcluster, written once (pyproject.toml reads it from here).

Every output file records it: the JSON key ``"symcluster_version"``, a ``%`` comment line
in LaTeX, a ``#`` header line in text tables.
"""

__all__ = ["__version__", "version_line"]

__version__ = "0.1.0"


def version_line():
    """``symcluster 0.1.0``: the line outputs carry.

    Examples
    --------
    >>> version_line().startswith("symcluster ")
    True
    """
    return f"symcluster {__version__}"
