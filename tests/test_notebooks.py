"""The worked notebooks run top to bottom (nbclient), and what they assert holds.

Each notebook checks its own results with assert statements (the spectrum's state count,
DataFrame dtypes, the reloaded spectrum against the original); an exception in any cell
fails this test."""

import pathlib

import pytest

nbformat = pytest.importorskip("nbformat")
nbclient = pytest.importorskip("nbclient")
pytest.importorskip("ipykernel")
pytest.importorskip("matplotlib")
pytest.importorskip("pandas")

WORKED = pathlib.Path(__file__).resolve().parent.parent / "worked"


@pytest.mark.parametrize("name", ["ecosystem.ipynb"])
def test_notebook_runs(name, tmp_path):
    nb = nbformat.read(WORKED / name, as_version=4)
    client = nbclient.NotebookClient(nb, timeout=240, kernel_name="python3",
                                     resources={"metadata": {"path": str(tmp_path)}})
    client.execute()
    outputs = [o for c in nb.cells if c.cell_type == "code" for o in c.get("outputs", [])]
    assert not [o for o in outputs if o.get("output_type") == "error"]
    # the first cell displays the spectrum through its rich display
    first = nb.cells[1]["outputs"][0]["data"]
    assert "text/html" in first and "text/latex" in first
