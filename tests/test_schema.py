"""The published JSON Schema (symcluster/schemas/spectrum.schema.json) against real outputs.

Validation uses the ``jsonschema`` package (JSON Schema draft 2020-12, an open standard),
not symcluster's own reader.  Negative cases: documents broken in one place each must be
rejected.  Publishing a schema beside a file format is common practice, no source.
"""

import copy
import json
import sys

import pytest

import symcluster as sc
from symcluster.export import dumps_spectrum
from symcluster.export.schema import schema_path, spectrum_schema

jsonschema = pytest.importorskip("jsonschema")

if sys.version_info >= (3, 11):
    import tomllib
else:                                   # pragma: no cover
    import tomli as tomllib


@pytest.fixture(scope="module")
def validator():
    schema = spectrum_schema()
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema)


def _doc(model, point=True, **kw):
    spec = sc.solve(model, **kw)
    pt = {s.name: k + 2 for k, s in enumerate(spec.symbols)} if point else None
    return json.loads(dumps_spectrum(spec, point=pt, digits=20))


@pytest.fixture(scope="module")
def documents():
    return {
        "ring5 (implicit roots, E1/E2)": _doc(sc.hubbard(sc.ring(5)), electrons=[2, 3]),
        "ring4 without a point": _doc(sc.hubbard(sc.ring(4)), point=False),
        "tetrahedron": _doc(sc.hubbard(sc.tetrahedron()), electrons=[1, 2]),
        "heisenberg ring (no N)": _doc(sc.heisenberg(sc.ring(4))),
        "anderson with fixed bath": _doc(sc.anderson(1), fixed={"V_1": 1, "eps_1": 0}),
        "field-split dimer": _doc(sc.with_field(sc.hubbard(sc.chain(2)))),
        "ring4 sector selection": _doc(sc.hubbard(sc.ring(4)),
                                       sectors=[{"N": 2, "S": 0}, {"N": 3, "k": 1}]),
    }


def test_real_outputs_of_several_models_validate(validator, documents):
    seen_root = seen_mulliken = False
    for name, doc in documents.items():
        errors = sorted(validator.iter_errors(doc), key=lambda e: list(e.path))
        assert not errors, f"{name}: {[(list(e.path), e.message[:200]) for e in errors[:3]]}"
        seen_root |= any("root" in lev["energy"] for lev in doc["levels"])
        seen_mulliken |= any("mulliken" in lev["quantum_numbers"] for lev in doc["levels"])
        assert doc["symcluster_version"] == sc.__version__
    assert seen_root and seen_mulliken       # the cases exercise those parts of the schema


def _breakers():
    def level0(d):
        return d["levels"][0]
    return {
        "wrong format": lambda d: d.update(format="other"),
        "version 3": lambda d: d.update(version=3),
        "sectors a list": lambda d: d.update(sectors=[{"N": 2}]),
        "missing levels": lambda d: d.pop("levels"),
        "unknown top-level key": lambda d: d.update(extra=1),
        "degeneracy 0": lambda d: level0(d).update(degeneracy=0),
        "spin as a decimal": lambda d: level0(d)["quantum_numbers"].update(S="0.5"),
        "momentum not a multiple of pi": lambda d: level0(d)["quantum_numbers"].update(k="2*x"),
        "mulliken not a symbol": lambda d: level0(d)["quantum_numbers"].update(mulliken="Γ1"),
        "unknown operator": lambda d: level0(d).update(
            energy={"op": "eval", "args": [{"int": "1"}]}),
        "float in a tree": lambda d: level0(d).update(energy={"int": 1.5}),
        "bad symbol name": lambda d: level0(d).update(energy={"sym": "1x"}),
        "negative root index": lambda d: level0(d).update(
            energy={"root": {"ref": 0, "var": "E", "index": -1}}),
        "root with a polynomial inline (version 1 form)": lambda d: level0(d).update(
            energy={"root": {"poly": {}, "var": "E", "index": 0}}),
        "value not a decimal": lambda d: level0(d).update(values={"20": "about 3"}),
        "point value a float": lambda d: d.update(point={"t": 0.5}),
        "polynomial coefficient a float": lambda d: d["polynomials"][0]["poly"]["poly"][
            "terms"][0].__setitem__(1, 2.5),
    }


@pytest.mark.parametrize("case", sorted(_breakers()))
def test_a_document_broken_in_one_place_is_rejected(validator, documents, case):
    full = documents["ring5 (implicit roots, E1/E2)"]
    # a short document (validation of the 300 kB one takes seconds): three levels, one a root
    doc = copy.deepcopy(dict(full, levels=[full["levels"][0]] + [
        lev for lev in full["levels"] if "root" in lev["energy"]][:2]))
    assert validator.is_valid(doc)
    _breakers()[case](doc)
    assert not validator.is_valid(doc)


def test_the_schema_ships_as_package_data():
    assert schema_path().is_file()
    with open(sc.__file__.replace("__init__.py", "../pyproject.toml"), "rb") as fh:
        project = tomllib.load(fh)
    data = project["tool"]["setuptools"]["package-data"]["symcluster"]
    assert "schemas/*.json" in data and "py.typed" in data
