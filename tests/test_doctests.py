"""Every docstring Example of the package runs (doctest), as part of the default suite."""

import doctest
import importlib
import pkgutil

import pytest

import symcluster


def _modules():
    out = []
    for info in pkgutil.walk_packages(symcluster.__path__, "symcluster."):
        if info.name.endswith("__main__"):
            continue
        out.append(info.name)
    return sorted(out)


@pytest.mark.parametrize("name", _modules())
def test_docstring_examples_run(name):
    module = importlib.import_module(name)
    result = doctest.testmod(module, optionflags=doctest.ELLIPSIS | doctest.NORMALIZE_WHITESPACE)
    assert result.failed == 0, f"{result.failed} doctest example(s) failed in {name}"
