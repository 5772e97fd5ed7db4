"""The JSON Schema of the spectrum files, shipped inside the package.

``symcluster/schemas/spectrum.schema.json`` (JSON Schema draft 2020-12) describes the
documents :func:`symcluster.export.write_json` writes (format ``symcluster-spectrum``,
version 2).  symcluster itself does not need a schema validator: its reader checks every
field on its own (docs/outputs.md); the schema is for other programs and for the tests,
which validate real outputs with the ``jsonschema`` package.
"""

import json
from importlib import resources

__all__ = ["SCHEMA_FILE", "schema_path", "spectrum_schema"]

#: file name of the schema inside the package folder ``symcluster/schemas``
SCHEMA_FILE = "spectrum.schema.json"


def schema_path():
    """Path of the spectrum schema inside the installed package.

    Returns
    -------
    pathlib.Path or importlib.resources.abc.Traversable

    Examples
    --------
    >>> schema_path().name
    'spectrum.schema.json'
    """
    return resources.files("symcluster").joinpath("schemas", SCHEMA_FILE)


def spectrum_schema():
    """The spectrum schema as a dict (a fresh copy on every call).

    Examples
    --------
    >>> spectrum_schema()["properties"]["format"]
    {'const': 'symcluster-spectrum'}
    """
    return json.loads(schema_path().read_text(encoding="utf-8"))
