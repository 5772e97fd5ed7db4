"""The published JSON Schema (symcluster/export/spectrum.schema.json) accepts every
document symcluster writes and rejects documents that break the format; the version
is written once and recorded in every output."""

import importlib.resources
import json

import pytest
import sympy

import symcluster as sc
from symcluster.export import dumps_spectrum, format_table, latex_table

jsonschema = pytest.importorskip("jsonschema")


def _schema():
    text = importlib.resources.files("symcluster.export").joinpath(
        "spectrum.schema.json").read_text()
    schema = json.loads(text)
    jsonschema.Draft202012Validator.check_schema(schema)
    return schema


@pytest.mark.parametrize("make", [lambda: sc.hubbard(sc.ring(4)),
                                  lambda: sc.hubbard(sc.ring(5)),
                                  lambda: sc.heisenberg(sc.ring(4)),
                                  lambda: sc.anderson(1)])
def test_written_documents_follow_the_schema(make):
    spec = sc.solve(make())
    point = {s.name: 1 for s in spec.symbols}
    for doc in (dumps_spectrum(spec), dumps_spectrum(spec, point=point)):
        jsonschema.validate(json.loads(doc), _schema())


@pytest.mark.parametrize("damage", [
    lambda d: d.update(format="other"),
    lambda d: d["levels"][0].update(degeneracy=0),
    lambda d: d["levels"][0].update(energy={"op": "gamma", "args": [{"int": "1"}]}),
    lambda d: d["levels"][0].update(energy={"rat": "1.5"}),
    lambda d: d.pop("levels"),
])
def test_damaged_documents_are_rejected(damage):
    doc = json.loads(dumps_spectrum(sc.solve(sc.hubbard(sc.chain(2)))))
    damage(doc)
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(doc, _schema())


def test_the_version_is_written_once_and_recorded_in_every_output():
    from symcluster.version import __version__
    assert sc.__version__ == __version__
    import importlib.metadata
    assert importlib.metadata.version("symcluster") == __version__
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    assert json.loads(dumps_spectrum(spec))["symcluster_version"] == __version__
    assert f"symcluster {__version__}" in latex_table(spec).splitlines()[0]
    header = [l for l in format_table(spec).splitlines() if l.startswith("#")]
    assert f"# written by symcluster {__version__}" in header


def test_the_package_is_typed():
    assert importlib.resources.files("symcluster").joinpath("py.typed").is_file()
    import inspect
    for fn in (sc.load, sc.Spectrum.energies, sc.Spectrum.to_dataframe):
        assert inspect.signature(fn).return_annotation is not inspect.Signature.empty


def test_available_memory_reads_a_portable_source(monkeypatch):
    from symcluster.pipeline import resources
    real = resources.available_memory()
    assert real is None or real > 0
    # without /proc/meminfo (macOS, Windows) another source answers on a POSIX system
    import builtins
    opener = builtins.open

    def no_proc(path, *a, **k):
        if str(path) == "/proc/meminfo":
            raise OSError("no such file")
        return opener(path, *a, **k)
    monkeypatch.setattr(builtins, "open", no_proc)
    other = resources.available_memory()
    assert other is not None and other > 0
