"""Type hints on the public API and the py.typed marker (PEP 561; common practice, no source).

Every function named in ``symcluster.__all__`` and every public method or property of
Spectrum and Level must annotate each parameter and its return value, and the hints must
resolve (``typing.get_type_hints`` evaluates them, so a misspelt name fails here).
"""

import inspect
import pathlib
import typing

import pytest

import symcluster as sc


def _functions():
    out = []
    for name in sc.__all__:
        obj = getattr(sc, name)
        if inspect.isfunction(obj):
            out.append((name, obj))
    for cls in (sc.Spectrum, sc.Level):
        for name, member in vars(cls).items():
            if name.startswith("_"):
                continue
            if isinstance(member, property):
                out.append((f"{cls.__name__}.{name}", member.fget))
            elif inspect.isfunction(member):
                out.append((f"{cls.__name__}.{name}", member))
    return out


FUNCTIONS = _functions()


def test_the_list_covers_the_api():
    names = {n for n, _ in FUNCTIONS}
    assert {"solve", "hubbard", "ring", "Spectrum.numeric", "Level.numeric",
            "Spectrum.select", "series", "transitions"} <= names
    assert len(FUNCTIONS) >= 30


@pytest.mark.parametrize("name, fn", FUNCTIONS, ids=[n for n, _ in FUNCTIONS])
def test_every_parameter_and_the_return_value_are_annotated(name, fn):
    hints = typing.get_type_hints(fn)
    params = [p for p in inspect.signature(fn).parameters.values() if p.name != "self"]
    missing = [p.name for p in params if p.name not in hints]
    assert not missing, f"{name}: no hint for {missing}"
    assert "return" in hints, f"{name}: no return annotation"


def test_data_classes_annotate_their_fields():
    for cls in (sc.Cluster, sc.Model, sc.Level, sc.Spectrum, sc.VerificationReport):
        fields = getattr(cls, "__dataclass_fields__", {})
        assert fields and set(fields) <= set(typing.get_type_hints(cls)), cls


def test_py_typed_marker_is_shipped():
    package = pathlib.Path(sc.__file__).parent
    assert (package / "py.typed").is_file()
