"""Reference files and the comparer (symcluster.response.reference / compare / commands).

The JSON is validated with the published schema by the jsonschema library; the values of
the tables are checked against the closed form of the two-site Green's function derived in
the test (see tests/test_greens.py for the derivation, repeated briefly here), so the
reference is honest before the comparer is tested with it.
"""

import csv
import io
import json
import os
import subprocess
import sys

import jsonschema
import mpmath
import pytest

import symcluster as sc
from symcluster.cli import main
from symcluster.response.compare import compare, comparison_figure
from symcluster.response.reference import build_reference, load_reference, reference_texts, schema

from helpers_cli import error_line


@pytest.fixture(scope="module")
def dimer_reference():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    return build_reference(spec, {"t": 1, "U": 4}, N=2, temperatures=["1/4", "1/2", 1],
                           n_matsubara=16, n_tau=9, digits=14)


def test_reference_follows_the_published_schema(dimer_reference):
    jsonschema.validate(dimer_reference, schema())
    broken = json.loads(json.dumps(dimer_reference))
    del broken["conventions"]["beta"]
    with pytest.raises(jsonschema.ValidationError):
        jsonschema.validate(broken, schema())


def test_reference_values_are_the_closed_form(dimer_reference):
    # G_00(i w) at T = 0, half filling, mu = U/2: poles +-(t + D) with weight v^2/2 and
    # +-(D - t) with weight u^2/2, D = sqrt(U^2/4 + 4t^2), u^2, v^2 = (1 +- 2t/D)/2
    # (derivation in tests/test_greens.py); G(i w) = -i w sum_p w_p / (w^2 + om_p^2) for
    # these symmetric poles
    with mpmath.workdps(30):
        t, U = 1, 4
        D = mpmath.sqrt(U ** 2 / 4 + 4 * t ** 2)
        poles = [(t + D, (1 - 2 * t / D) / 4), (D - t, (1 + 2 * t / D) / 4)]
        rows = dimer_reference["tables"]["matsubara"]["rows"]
        for n, wn_text, re_text, im_text in rows:
            wn = (2 * int(n) + 1) * mpmath.pi / 10
            im = -2 * wn * sum(w / (wn ** 2 + om ** 2) for om, w in poles)
            assert abs(mpmath.mpf(im_text) - im) < mpmath.mpf(10) ** -13 * abs(im)
            assert mpmath.mpf(re_text) == 0
            assert abs(mpmath.mpf(wn_text) - wn) < 1e-13


def test_csv_tables_have_the_schema_columns(dimer_reference, tmp_path):
    files = dict(reference_texts(dimer_reference, tmp_path / "dimer"))
    assert sorted(os.path.basename(p) for p in files) == [
        "dimer.json", "dimer_matsubara.csv", "dimer_tau.csv", "dimer_thermo.csv"]
    thermo = list(csv.reader(io.StringIO(files[str(tmp_path / "dimer_thermo.csv")])))
    assert thermo[0] == ["T", "energy", "specific_heat", "susceptibility", "double_occupancy"]
    assert len(thermo) == 4


def _table_csv(ref, name, perturb=None):
    table = ref["tables"][name]
    rows = [list(r) for r in table["rows"]]
    if perturb is not None:
        k, col, delta = perturb
        c = table["columns"].index(col)
        rows[k][c] = repr(float(rows[k][c]) + delta)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(table["columns"])
    w.writerows(rows)
    return buf.getvalue()


def test_comparer_passes_the_reference_against_itself(dimer_reference):
    for name in ("thermo", "matsubara", "tau"):
        assert compare(dimer_reference, _table_csv(dimer_reference, name)).passed


def test_comparer_flags_a_one_in_a_million_change_of_one_value(dimer_reference):
    c = compare(dimer_reference, _table_csv(dimer_reference, "matsubara", (5, "im_G", 1e-6)))
    assert not c.passed
    bad = [q for q in c.quantities if not q.passed]
    assert [q.name for q in bad] == ["im_G"] and bad[0].worst_key == "5"
    assert abs(bad[0].max_deviation - 1e-6) < 1e-9


def test_error_bars_widen_the_tolerance(dimer_reference):
    text = _table_csv(dimer_reference, "tau", (3, "G", 1e-6))
    lines = text.splitlines()
    lines = [lines[0] + ",G_err"] + [l + ",1e-6" for l in lines[1:]]
    c = compare(dimer_reference, "\n".join(lines) + "\n", sigmas=3)
    assert c.passed and abs(c.quantities[0].max_sigmas - 1) < 1e-3


def test_comparison_figure_has_data_and_residual_panels(dimer_reference):
    c = compare(dimer_reference, _table_csv(dimer_reference, "tau", (2, "G", 1e-3)))
    fig = comparison_figure(c)
    axes = fig.get_axes()
    assert len(axes) == 2
    assert axes[1].get_ylabel() == "theirs - reference"
    residuals = axes[1].lines[0].get_ydata()
    assert max(abs(r) for r in residuals) > 5e-4


def test_command_line_round_trip(tmp_path, capsys):
    stem = str(tmp_path / "dimer")
    assert main(["reference", "chain", "2", "--at", "t=1,U=4", "--n", "2", "--temperatures",
                 "0.1:2:5", "--matsubara", "8", "--tau", "5", "--output", stem]) == 0
    capsys.readouterr()
    ref = load_reference(stem + ".json")
    jsonschema.validate(ref, schema())
    theirs = tmp_path / "theirs.csv"
    theirs.write_text(open(stem + "_matsubara.csv").read())
    assert main(["compare", stem + ".json", str(theirs)]) == 0
    assert (tmp_path / "theirs_compare.png").stat().st_size > 1000
    out = capsys.readouterr().out
    assert "overall: pass" in out
    theirs.write_text(_table_csv(ref, "matsubara", (2, "re_G", 1e-6)))
    assert main(["compare", stem + ".json", str(theirs), "--no-plot"]) == 1
    assert "FAIL" in capsys.readouterr().out


@pytest.mark.parametrize("text,needle", [
    ("n,foo\n0,1\n", "column 'foo'"),
    ("omega_n,re_G\n1,2\n", "key column"),
    ("n\n0\n", "no value column"),
    ("n,re_G\n99,0\n", "n=99 is not in"),
    ("n,re_G\n0,abc\n", "'abc' is not a number"),
    ("n,re_G_err\n0,1\n", "error column"),
])
def test_bad_comparisons_exit_2_with_one_line(tmp_path, capsys, dimer_reference, text, needle):
    ref = tmp_path / "ref.json"
    ref.write_text(json.dumps(dimer_reference))
    theirs = tmp_path / "theirs.csv"
    theirs.write_text(text)
    assert main(["compare", str(ref), str(theirs)]) == 2
    line = error_line(capsys, quiet_stdout=True)
    assert needle in line
    assert not (tmp_path / "theirs_compare.png").exists()


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_an_endless_input_is_refused_without_reading_it_all(tmp_path, capsys, dimer_reference):
    """A device never ends: both inputs are read only up to their limit, then refused."""
    ref = tmp_path / "ref.json"
    ref.write_text(json.dumps(dimer_reference))
    assert main(["compare", str(ref), "/dev/zero", "--no-plot"]) == 2
    assert "larger than" in error_line(capsys, quiet_stdout=True)
    theirs = tmp_path / "t.csv"
    theirs.write_text("n,re_G\n0,0\n")
    assert main(["compare", "/dev/zero", str(theirs), "--no-plot"]) == 2
    assert "larger than" in error_line(capsys, quiet_stdout=True)


def test_not_a_reference_is_refused(tmp_path, capsys):
    bad = tmp_path / "x.json"
    bad.write_text('{"format": "something else"}')
    theirs = tmp_path / "t.csv"
    theirs.write_text("n,re_G\n0,0\n")
    assert main(["compare", str(bad), str(theirs)]) == 2
    assert "not a symcluster reference" in error_line(capsys)


def test_reference_command_refuses_bad_input(tmp_path, capsys):
    assert main(["reference", "chain", "2", "--at", "t=1,U=4", "--output",
                 str(tmp_path / "x")]) == 2
    assert "--n N" in error_line(capsys)
    assert main(["reference", "chain", "2", "--at", "t=1,U=4", "--n", "9", "--output",
                 str(tmp_path / "x")]) == 2
    assert "--n 9" in error_line(capsys)
    assert not list(tmp_path.iterdir())


def test_compare_as_a_real_process(tmp_path, dimer_reference):
    ref = tmp_path / "ref.json"
    ref.write_text(json.dumps(dimer_reference))
    theirs = tmp_path / "theirs.csv"
    theirs.write_text(_table_csv(dimer_reference, "tau"))
    proc = subprocess.run([sys.executable, "-m", "symcluster", "compare", str(ref), str(theirs),
                           "--no-plot"], capture_output=True, text=True, timeout=300)
    assert proc.returncode == 0, proc.stderr
    assert "overall: pass" in proc.stdout
