"""The version is written once (symcluster/version.py) and recorded in every output.

Single-sourcing the version and recording it in outputs is common practice, no source.
"""

import importlib.metadata
import json
import pathlib
import re
import sys

import symcluster as sc
from symcluster.export import dumps_spectrum, format_table, latex_table

if sys.version_info >= (3, 11):
    import tomllib
else:                                   # pragma: no cover
    import tomli as tomllib

ROOT = pathlib.Path(sc.__file__).resolve().parent.parent


def test_pyproject_reads_the_version_from_the_package():
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())
    assert "version" not in project["project"]
    assert "version" in project["project"]["dynamic"]
    attr = project["tool"]["setuptools"]["dynamic"]["version"]["attr"]
    assert attr == "symcluster.version.__version__"
    assert importlib.metadata.version("symcluster") == sc.__version__
    assert re.fullmatch(r"\d+\.\d+\.\d+.*", sc.__version__)


def test_no_other_file_spells_the_version_out():
    pattern = re.compile(r"""__version__\s*=\s*["']""")
    spelled = [p.relative_to(ROOT) for p in (ROOT / "symcluster").rglob("*.py")
               if pattern.search(p.read_text())]
    assert spelled == [pathlib.Path("symcluster/version.py")]


def test_every_output_records_the_version():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    assert json.loads(dumps_spectrum(spec))["symcluster_version"] == sc.__version__
    header = [l for l in format_table(spec).splitlines() if l.startswith("#")]
    assert any(l.endswith(f" states; symcluster {sc.__version__}") for l in header)
    assert latex_table(spec).splitlines()[0].startswith(f"% symcluster {sc.__version__} ")


def test_command_line_version(capsys):
    from symcluster.cli import main
    try:
        main(["--version"])
    except SystemExit as exc:
        assert exc.code == 0
    assert capsys.readouterr().out.strip() == f"symcluster {sc.__version__}"
