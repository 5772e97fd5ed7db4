"""symcluster: exact, verified energy levels of small interacting-electron clusters.

Public API (stable names)::

    import symcluster as sc
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    spec = sc.solve(sc.anderson(2), fixed={"eps_1": 0, "V_1": 1})   # any model family
    spec.levels                              # Level objects with energy, degeneracy, quantum_numbers
    spec.numeric({"t": 1, "U": 4}, digits=30)
"""

from symcluster.lattice.clusters import (Cluster, chain, cluster, complete, cube, grid, ladder,
                                         load_cluster_file, parse_cluster_toml, ring, star,
                                         tetrahedron)
from symcluster.errors import (ClusterError, InputError, ModelError, SymclusterError,
                               TooLargeError, VerificationError)
from symcluster.models import (Model, anderson, heisenberg, hubbard, kanamori, load_model_file,
                               make_model, parse_model_toml, t_j, with_field)
from symcluster.spectrum import Level, Spectrum, VerificationReport
from symcluster.pipeline.solve import solve
from symcluster.export.load import load

from symcluster.version import __version__

__all__ = [
    "Cluster", "chain", "cluster", "complete", "cube", "grid", "ladder", "load_cluster_file",
    "parse_cluster_toml", "ring", "star", "tetrahedron", "Model", "hubbard", "solve",
    "Level", "Spectrum", "VerificationReport", "SymclusterError", "ClusterError", "ModelError",
    "InputError", "VerificationError", "TooLargeError", "load_model_file", "parse_model_toml",
    "anderson", "kanamori", "heisenberg", "t_j", "with_field", "make_model", "load",
]
from symcluster.analysis import series, transitions  # noqa: E402  (depends on the classes above)

__all__ += ["series", "transitions"]
from symcluster.response.greens import greens_function, greens_matrix  # noqa: E402

__all__ += ["greens_function", "greens_matrix"]


def run_catalogue(spec: str | dict, db: str | None = None, **kwargs: object) -> object:
    """:func:`symcluster.catalogue.run_catalogue` (imported on first use: ``import
    symcluster`` stays as light as it was).

    Examples
    --------
    >>> import symcluster as sc
    >>> run_catalogue is not None and sc.catalogue_tasks is not None
    True
    """
    from symcluster.catalogue import run_catalogue as run
    return run(spec, db=db, **kwargs)


def catalogue_tasks(spec: str | dict) -> list:
    """:func:`symcluster.catalogue.catalogue_tasks` (imported on first use).

    Examples
    --------
    >>> len(catalogue_tasks({"format": "symcluster-catalogue",
    ...                      "clusters": {"list": [["chain", 2]]}}))
    5
    """
    from symcluster.catalogue import catalogue_tasks as tasks
    return tasks(spec)


__all__ += ["run_catalogue", "catalogue_tasks"]
from symcluster.theorems import tower_rows, towers  # noqa: E402

__all__ += ["towers", "tower_rows"]
from symcluster.lattice.shapes import (decorated_chain, kagome_bowtie, kagome_strip,  # noqa: E402
                                       lieb, line_graph, octahedron)
from symcluster.lattice.flatband import flat_band, single_particle_levels  # noqa: E402
from symcluster.theorems.checks import theorem_report  # noqa: E402

__all__ += ["theorem_report", "lieb", "line_graph", "octahedron", "kagome_bowtie",
            "kagome_strip", "decorated_chain", "flat_band", "single_particle_levels"]
