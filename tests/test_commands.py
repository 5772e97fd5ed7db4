"""The analysis subcommands (symcluster.analysis.commands) through the main command line:
every bad option is one line and exit code 2 before anything is computed or written, notes
go to standard error (issue "Reliability", findings 2 and 5)."""

import pytest

import symcluster as sc
from symcluster.analysis import series, thermo_table
from symcluster.cli import main
from symcluster.errors import ModelError
from helpers_cli import error_line


def _error_line(capsys):
    return error_line(capsys, quiet_stdout=True)


@pytest.mark.parametrize("argv, words", [
    (["gaps", "ring", "4", "--sector", "9"], "--sector 9 is impossible on 4 sites"),
    (["gaps", "ring", "4", "--sector", "-1"], "impossible"),
    (["gaps", "ring", "4", "--sector", "4", "--over", "U:5:1"], "range is empty"),
    (["gaps", "ring", "4", "--sector", "4", "--over", "V:0:1"], "unknown coupling 'V'"),
    (["gaps", "ring", "4", "--sector", "4", "--over", "U"], "NAME:LO:HI"),
    (["gaps", "ring", "4", "--sector", "4", "--electrons", "4"], "leaves out N=2, 3, 5"),
    (["plot", "chain", "2", "--color-by", "bogus"], "invalid choice: 'bogus'"),
    (["thermo", "chain", "2", "--temperatures", "0"], "temperature 0 is not positive"),
    (["thermo", "chain", "2", "--temperatures", "-1"], "not positive"),
    (["thermo", "ring", "4", "--electrons", "3,4", "--temperatures", "1", "--mu", "2"],
     "thermo is grand canonical"),
    (["thermo", "chain", "2", "--temperatures"] + ["1"] * 1001, "more than 1000"),
    (["thermo", "chain", "2", "--temperatures", "1:2:1"], "count 1 is not from 2"),
    (["gaps", "ring", "4", "--at", "t=1", "U=4"], "add --electrons N"),
    (["series", "chain", "2", "--sector", "2", "--order", "1000000"], "from 0 to 50"),
    (["series", "chain", "2", "--electrons", "1,2"], "add --sector N"),
    (["ground-map", "chain", "2", "--range", "3:1"], "--range 3:1 is empty"),
    (["ground-map", "chain", "2", "--coupling", "V"], "unknown coupling 'V'"),
    (["plot", "chain", "2", "--latex", "x.tex"], "unrecognized arguments"),
])
def test_bad_analysis_options_exit_2_with_one_line(argv, words, capsys, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert main(argv) == 2
    line = _error_line(capsys)
    assert words in line and ";" in line
    assert list(tmp_path.iterdir()) == []


def test_thermo_api_refuses_zero_temperature():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    with pytest.raises(ModelError, match="not positive"):
        thermo_table(spec, {"t": 1, "U": 4}, [0])
    with pytest.raises(ModelError, match="rows"):
        thermo_table(spec, {"t": 1, "U": 4}, [1] * 200, mus=list(range(100)))


def test_series_api_has_a_limit():
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=[2])
    with pytest.raises(ModelError, match="from 0 to 50"):
        series(spec.levels[0], "U", order=10 ** 6)


def test_notes_go_to_standard_error(tmp_path, capsys):
    tex = tmp_path / "g.tex"
    assert main(["gaps", "chain", "2", "--sector", "2", "--latex", str(tex)]) == 0
    captured = capsys.readouterr()
    assert "wrote" not in captured.out and f"symcluster: wrote {tex}" in captured.err
    assert "charge gap" in captured.out and tex.exists()


def test_plot_notes_go_to_standard_error(tmp_path, capsys):
    pytest.importorskip("matplotlib")
    stem = tmp_path / "lv"
    assert main(["plot", "chain", "2", "--sector", "2", "--output", str(stem)]) == 0
    captured = capsys.readouterr()
    assert captured.out == ""
    assert captured.err.splitlines() == [f"symcluster: wrote {stem}.png",
                                         f"symcluster: wrote {stem}.pdf"]
