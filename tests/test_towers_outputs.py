"""Outputs of the tower and theorem reports: JSON, LaTeX (compiled), plot, command line."""

import functools
import json
import os
import shutil
import subprocess

import pytest
import sympy

import symcluster as sc
from symcluster.cli import main
from symcluster.theorems.outputs import (plot_towers, theorems_json, theorems_latex,
                                         towers_json, towers_latex)


@functools.lru_cache(maxsize=None)
def report():
    spec = sc.solve(sc.hubbard(sc.ring(4)), fixed={"t": 1})
    return sc.towers(spec, 3, "U", (0, 40), {"t": 1})


def test_json_carries_the_exact_crossing():
    d = json.loads(towers_json(report()))
    assert d["format"] == "symcluster-towers" and d["holds"] is False
    # the crossing string parses back to the same exact number (parsed by sympy in the
    # test only; symcluster never parses expressions from files)
    at = sympy.sympify(d["crossings"][0]["at"])
    assert sympy.simplify(at - 8 - 4 * sympy.sqrt(7)) == 0


def test_theorems_json_lists_every_theorem():
    spec = sc.solve(sc.hubbard(sc.chain(3)), fixed={"t": 1})
    d = json.loads(theorems_json(sc.theorem_report(spec, fixed={"t": 1})))
    assert d["format"] == "symcluster-theorems" and len(d["theorems"]) == 7


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex not installed")
def test_latex_compiles(tmp_path):
    spec = sc.solve(sc.hubbard(sc.chain(3)), fixed={"t": 1})
    for name, text in (("towers.tex", towers_latex(report())),
                       ("theorems.tex", theorems_latex(sc.theorem_report(spec,
                                                                         fixed={"t": 1})))):
        (tmp_path / name).write_text(text)
        run = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", name],
                             cwd=tmp_path, capture_output=True, timeout=120)
        assert run.returncode == 0, run.stdout.decode(errors="replace")[-2000:]


def test_plot_draws_into_a_given_axes_and_marks_the_crossing():
    matplotlib = pytest.importorskip("matplotlib")
    from matplotlib.figure import Figure
    backend = matplotlib.get_backend()
    fig = Figure()
    ax = fig.add_subplot()
    assert plot_towers(report(), ax=ax, n_points=21) is fig
    assert len(ax.lines) == 3               # two envelopes and one crossing line
    assert abs(ax.lines[-1].get_xdata()[0] - 18.583005244) < 1e-6
    assert matplotlib.get_backend() == backend


def test_command_line_towers_writes_json_and_latex(tmp_path, capsys):
    j, t = tmp_path / "r.json", tmp_path / "r.tex"
    code = main(["towers", "ring", "4", "--sector", "3", "--range", "0:100",
                 "--json", str(j), "--latex", str(t)])
    out = capsys.readouterr().out
    assert code == 0 and "8 + 4*sqrt(7)" in out and "fails" in out
    assert json.loads(j.read_text())["holds"] is False and "booktabs" in t.read_text()


def test_command_line_theorems(capsys):
    assert main(["theorems", "star", "3", "--range", "0:20", "--only", "lieb-spin"]) == 0
    assert "verified" in capsys.readouterr().out


@pytest.mark.parametrize("argv", [
    ["towers", "ring", "4", "--sector", "3", "--range", "0:x"],
    ["towers", "ring", "4", "--sector", "9", "--range", "0:1"],
    ["theorems", "ring", "4", "--only", "nothing"],
])
def test_command_line_bad_input_exits_2_and_writes_nothing(argv, tmp_path, capsys):
    j = tmp_path / "r.json"
    assert main(argv + ["--json", str(j)]) == 2
    err = capsys.readouterr().err
    assert err.startswith("symcluster: error:") and len(err.strip().splitlines()) == 1
    assert not j.exists()


def test_help_describes_both_commands(capsys):
    for cmd in ("towers", "theorems"):
        assert main([cmd, "--help"]) == 0
        assert "examples:" in capsys.readouterr().out
