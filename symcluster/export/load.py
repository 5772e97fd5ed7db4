"""A JSON result back into a :class:`~symcluster.spectrum.Spectrum`: :func:`load`.

:func:`~symcluster.export.jsonio.read_json` checks a file against the schema and
returns the document with its exact objects reloaded; :func:`spectrum_from_document`
turns that document into the Spectrum every analysis accepts (levels with their
exact energies, polynomials, quantum numbers and eigenvectors; the symmetries, the
verification report and the fixed couplings as written).

The model is rebuilt from the file where it came from a family: the cluster is
rebuilt from its bonds and site labels, and each family that could have made it is
tried; a candidate is taken only if its Hamiltonian text equals the one written in
the file.  Otherwise the spectrum carries a :class:`SavedModel`, which answers the
questions analyses and exports ask of a model (couplings, cluster, description).
"""

from __future__ import annotations

import os
from dataclasses import dataclass

import sympy

from symcluster.errors import InputError, SymclusterError
from symcluster.export.jsonio import read_json
from symcluster.lattice.clusters import Cluster, cluster as make_cluster
from symcluster.spectrum import Level, Spectrum, VerificationReport
from symcluster.symbols import coupling_symbol

__all__ = ["load", "spectrum_from_document", "SavedModel"]


@dataclass(frozen=True)
class SavedModel:
    """The model of a reloaded result that no family rebuilds: what the file says of it.

    Attributes
    ----------
    cluster : Cluster
    name : str
    labels : tuple of str
        Coupling labels in the order of the file.
    description, hamiltonian : str
        The one-line description and the Hamiltonian text written in the file.
    """

    cluster: Cluster
    name: str
    labels: tuple
    description: str
    hamiltonian: str

    @property
    def n_sites(self) -> int:
        return self.cluster.n_sites

    @property
    def symbols(self) -> tuple:
        return tuple(coupling_symbol(l) for l in self.labels)

    def symbol(self, label: str) -> sympy.Symbol:
        if label not in self.labels:
            raise InputError(f"unknown coupling {label!r}; this model's couplings are "
                             + ", ".join(self.labels))
        return coupling_symbol(label)

    def describe(self) -> str:
        return self.description

    def hamiltonian_text(self) -> str:
        return self.hamiltonian

    def geometry_text(self) -> str:
        return self.cluster.describe()


def _rebuild_cluster(doc, source):
    c = doc["model"].get("cluster")
    if not isinstance(c, dict):
        raise InputError(f"{source}: model.cluster is missing; regenerate the file")
    try:
        return make_cluster(int(c["n_sites"]), [tuple(b) for b in c["bonds"]],
                            list(c["site_labels"]), name=str(c["name"]))
    except (KeyError, TypeError, ValueError, SymclusterError) as exc:
        raise InputError(f"{source}: model.cluster cannot be rebuilt ({exc}); regenerate "
                         f"the file") from None


def _candidates(cl):
    from symcluster.models import anderson, heisenberg, hubbard, kanamori, t_j, with_field
    bases = [lambda: hubbard(cl), lambda: hubbard(cl, V="V"), lambda: heisenberg(cl),
             lambda: t_j(cl), lambda: anderson(cl.n_sites - 1), lambda: kanamori(cl.n_sites)]
    for make in bases:
        try:
            model = make()
        except SymclusterError:
            continue
        yield model
        try:
            yield with_field(model)
        except SymclusterError:
            pass


def _rebuild_model(doc, source):
    m = doc["model"]
    cl = _rebuild_cluster(doc, source)
    labels = tuple(str(x) for x in m.get("couplings", []))
    text = m.get("hamiltonian")
    for model in _candidates(cl):
        if (model.name == m.get("name") and model.labels == labels
                and model.hamiltonian_text() == text):
            return model
    return SavedModel(cl, str(m.get("name", "custom")), labels, str(m.get("description", "")),
                      str(text or ""))


def spectrum_from_document(doc: dict, source: str = "<data>") -> Spectrum:
    """The Spectrum of a decoded document (:func:`~symcluster.export.jsonio.read_json`).

    Parameters
    ----------
    doc : dict
        As returned by ``read_json`` or ``loads_spectrum``.
    source : str
        Named in error messages.

    Returns
    -------
    Spectrum

    Examples
    --------
    >>> import symcluster as sc
    >>> from symcluster.export.jsonio import dumps_spectrum, loads_spectrum
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> back = spectrum_from_document(loads_spectrum(dumps_spectrum(spec)))
    >>> sorted(map(str, (l.energy for l in back.levels))) == sorted(
    ...     map(str, (l.energy for l in spec.levels)))
    True
    """
    model = _rebuild_model(doc, source)
    levels = []
    for entry in doc["levels"]:
        vec = entry.get("eigenvector")
        levels.append(Level(entry["energy"], int(entry["degeneracy"]),
                            dict(entry["quantum_numbers"]), entry.get("polynomial"),
                            [vec] if vec else None, str(entry.get("block", ""))))
    ver = doc["verification"]
    report = VerificationReport(list(ver.get("checks", [])), int(ver.get("digits", 30)))
    fixed = {str(k): sympy.Rational(str(v)) for k, v in (doc.get("fixed") or {}).items()}
    return Spectrum(model, levels, list(doc.get("symmetries") or []), report,
                    dict(doc.get("timings") or {}), fixed)


def load(path: str | os.PathLike) -> Spectrum:
    """Reload a result written as JSON (``--json``, ``write_json``) into a Spectrum, exactly.

    Parameters
    ----------
    path : str or os.PathLike

    Returns
    -------
    Spectrum
        Accepted by every analysis (gaps, transitions, thermodynamics, series, plots)
        and by the exports.

    Raises
    ------
    InputError
        If the file cannot be read or does not follow the schema.

    Examples
    --------
    >>> import os, tempfile, symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)))
    >>> path = os.path.join(tempfile.mkdtemp(), "dimer.json")
    >>> sc.export.write_json(spec, path)
    >>> back = sc.load(path)
    >>> back.n_states, back.model.name
    (16, 'hubbard')
    """
    return spectrum_from_document(read_json(path), os.fspath(path))
