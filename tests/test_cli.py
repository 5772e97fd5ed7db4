"""Tests of the command line (symcluster.cli): in-process with a stand-in solver, plus one
real end-to-end subprocess run through ``python -m symcluster``."""

import json
import os
import subprocess
import sys

import pytest
import sympy

import symcluster
from symcluster.cli import main, parse_electrons, parse_point
from symcluster.errors import InputError, VerificationError

from helpers_export import two_site_spectrum
from helpers_cli import error_line


@pytest.fixture
def fake_solve(monkeypatch):
    calls = []

    def solve(model, electrons=None, verify=True, **options):   # options: progress, ...
        calls.append((model, electrons))
        spec = two_site_spectrum()
        if electrons is not None:
            spec.levels = [l for l in spec.levels if l.quantum_numbers["N"] in electrons]
        spec.model = model
        return spec

    monkeypatch.setattr(symcluster, "solve", solve, raising=False)
    return calls


def _one_error_line(capsys):
    return error_line(capsys, quiet_stdout=False)


def test_levels_prints_table_and_passes_model_and_electrons(fake_solve, capsys):
    rc = main(["levels", "chain", "2", "--electrons", "1,2", "--at", "t=1,U=4"])
    out = capsys.readouterr().out
    assert rc == 0
    model, electrons = fake_solve[0]
    assert model.cluster.n_sites == 2 and electrons == [1, 2]
    assert "-0.828427124746" in out          # dimer 2 - 2*sqrt(2) at t=1, U=4 (from memory)
    assert "2*U" not in out                  # N=4 was not asked for


def test_shape_word_without_subcommand(fake_solve, capsys):
    assert main(["ring", "4"]) == 0
    assert fake_solve[0][0].cluster.name == "ring(4)"
    assert main(["pgrid", "3", "3"]) == 0
    assert len(fake_solve[1][0].cluster.bonds) == 18


def test_outputs_written_atomically(fake_solve, tmp_path, capsys):
    tex, js = tmp_path / "o.tex", tmp_path / "o.json"
    rc = main(["levels", "chain", "2", "--at", "t=1,U=4", "--latex", str(tex), "--standalone",
               "--json", str(js), "--digits", "20", "--show-symmetry"])
    assert rc == 0
    assert tex.read_text().startswith(r"\documentclass")
    doc = json.loads(js.read_text())
    assert doc["digits"] == 20 and doc["point"] == {"t": "1", "U": "4"}
    assert sorted(os.listdir(tmp_path)) == ["o.json", "o.tex"]
    assert "symmetry reduction per sector" in capsys.readouterr().out


def test_no_arguments_runs_the_demo(fake_solve, tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main([]) == 0
    assert fake_solve[0][0].cluster.name == "chain(2)"
    assert (tmp_path / "symcluster-demo.tex").read_text().rstrip().endswith(r"\end{document}")
    assert json.loads((tmp_path / "symcluster-demo.json").read_text())["point"] == \
        {"t": "1", "U": "4"}


def test_failed_solve_writes_nothing(monkeypatch, tmp_path, capsys):
    def solve(model, electrons=None, verify=True, **options):
        raise VerificationError("level 3 differs from its block by 1e-5; report this bug")
    monkeypatch.setattr(symcluster, "solve", solve, raising=False)
    rc = main(["levels", "chain", "2", "--json", str(tmp_path / "x.json")])
    assert rc == 2
    assert "level 3 differs" in _one_error_line(capsys)
    assert os.listdir(tmp_path) == []


@pytest.mark.parametrize("argv, words", [
    (["levels", "hexagon", "6"], "unknown shape 'hexagon'"),
    (["levels", "ring", "four"], "not a whole number"),
    (["levels", "ring", "-3"], "sizes must be positive"),
    (["levels", "ring", "2"], "chain 2"),
    (["levels", "grid", "2"], "takes 2 size(s)"),
    (["levels"], "no cluster given"),
    (["levels", "chain", "2", "--at", "t=1,x=2,U=3"], "unknown coupling 'x'"),
    (["levels", "chain", "2", "--at", "t=1"], "no value for U"),
    (["levels", "chain", "2", "--at", "t=one,U=3"], "'one' is not a number"),
    (["levels", "chain", "2", "--at", "t=1/0,U=3"], "divides by zero"),
    (["levels", "chain", "2", "--electrons", "5"], "impossible on 2 sites"),
    (["levels", "chain", "2", "--electrons", "two"], "not a number or range"),
    (["levels", "chain", "2", "--digits", "abc"], "--digits"),
    (["levels", "chain", "2", "--no-verify"], "unrecognized arguments: --no-verify"),
    (["levels", "--cluster-file", "/nonexistent/c.toml"], "cannot read cluster file"),
    (["levels", "chain", "2", "--standalone"], "--standalone needs --latex"),
    (["levels", "chain", "2", "--json", "/nonexistent/dir/x.json"], "does not exist"),
    (["levels", "chain", "2", "--at", "t=1,U=" + "1" * 5000], "at most 1000"),
    (["gaps", "chain", "2", "--sector", "2", "--at", "t=1", "U=" + "1" * 5000], "at most 1000"),
    (["gaps", "chain", "2", "--sector", "2", "--digits", "0"], "from 1 to 1000"),
    (["gaps", "chain", "2", "--sector", "2", "--at", "t=2.5/3", "U=4"], "not of the form"),
])
def test_bad_input_is_one_line_and_exit_2(fake_solve, capsys, argv, words):
    assert main(argv) == 2
    line = _one_error_line(capsys)
    assert words in line
    assert ";" in line                       # every message says how to fix it
    assert capsys.readouterr().out == ""


def test_bad_cluster_file_content(fake_solve, tmp_path, capsys):
    f = tmp_path / "c.toml"
    f.write_text('format = "symcluster-cluster"\nsites = 2\nbonds = [[0, 0]]\n')
    assert main(["levels", "--cluster-file", str(f)]) == 2
    assert "joins a site to itself" in _one_error_line(capsys)


def test_help_explains_model_and_convention(capsys):
    assert main(["--help"]) == 0
    text = capsys.readouterr().out
    assert "Hubbard" in text and "sign convention" in text
    assert "symcluster-demo.tex" in text and "examples:" in text
    assert main(["levels", "--help"]) == 0
    assert "pgrid NX NY" in capsys.readouterr().out
    assert main(["shapes"]) == 0
    assert "tetrahedron" in capsys.readouterr().out


def test_point_and_electron_grammars():
    assert parse_point("t=1, U=-2.5 tp=3/4 V=1e-2") == {
        "t": 1, "U": sympy.Rational(-5, 2), "tp": sympy.Rational(3, 4),
        "V": sympy.Rational(1, 100)}
    for bad in ("t", "=1", "t=__import__('os')", "t=1,t=2", "t=nan", "t=1e99999"):
        with pytest.raises(InputError):
            parse_point(bad)
    assert parse_electrons("all", 4) is None
    assert parse_electrons("1-3,6", 4) == [1, 2, 3, 6]
    with pytest.raises(InputError, match="backwards"):
        parse_electrons("3-1", 4)


def test_end_to_end_subprocess(tmp_path):
    """The real solver through ``python -m symcluster`` (no stand-ins)."""
    assert hasattr(symcluster, "solve"), \
        "symcluster.pipeline.solve is missing: the end-to-end CLI run cannot work"
    js = tmp_path / "dimer.json"
    root = os.path.dirname(os.path.dirname(os.path.abspath(symcluster.__file__)))
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [root] + [p for p in os.environ.get("PYTHONPATH", "").split(os.pathsep) if p]))
    run = subprocess.run(
        [sys.executable, "-m", "symcluster", "levels", "chain", "2", "--at", "t=1,U=4",
         "--json", str(js)],
        cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stderr
    doc = json.loads(js.read_text())
    assert sum(l["degeneracy"] for l in doc["levels"]) == 16
    n2 = sorted(float(l["values"]["12"]) for l in doc["levels"]
                if l["quantum_numbers"]["N"] == 2)
    # dimer, N=2 at t=1, U=4: 2-2*sqrt(2), 0 (triplet), U, 2+2*sqrt(2) (from memory)
    assert n2[0] == pytest.approx(2 - 2 * 2 ** 0.5, abs=1e-10)
    assert n2[-1] == pytest.approx(2 + 2 * 2 ** 0.5, abs=1e-10)
    assert "-0.828427124746" in run.stdout
    bad = subprocess.run([sys.executable, "-m", "symcluster", "levels", "ring", "x"],
                         cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)
    assert bad.returncode == 2 and bad.stderr.count("\n") == 1


def test_analysis_subcommands_run_through_main(capsys):
    """ground-map and gaps are reachable from the main command (analysis layer wired in)."""
    from symcluster.cli import main
    code = main(["ground-map", "ring", "4", "--electrons", "3", "--sector", "3",
                 "--range", "0:100", "--fixed", "t=1"])
    out = capsys.readouterr().out
    assert code == 0
    # root of U^2 - 16 U - 48 (located independently in tests/external/test_hole_ferromagnetism.py)
    assert "18.583005244258" in out
    code = main(["gaps", "chain", "2", "--sector", "2", "--at", "t=1", "U=4"])
    out = capsys.readouterr().out
    assert code == 0 and "charge gap" in out


def test_analysis_subcommand_without_cluster_is_one_line_error(capsys):
    from symcluster.cli import main
    code = main(["gaps", "--sector", "2"])
    err = capsys.readouterr().err
    assert code == 2 and err.count("\n") == 1 and "no cluster given" in err


def test_unwritable_second_output_is_refused_before_the_solve(fake_solve, tmp_path, capsys):
    """/proc exists but no file can be created there: caught before solving, nothing written."""
    tex = tmp_path / "a.tex"
    rc = main(["levels", "chain", "2", "--latex", str(tex), "--json", "/proc/a.json"])
    assert rc == 2
    line = _one_error_line(capsys)
    assert "/proc/a.json" in line and "writable directory" in line
    assert fake_solve == []                  # refused before the (possibly long) solve
    assert os.listdir(tmp_path) == []        # in particular a.tex was not written
    assert not os.path.exists("/proc/a.json")
    assert capsys.readouterr().out == ""


def test_unwritable_single_latex_output_is_refused_before_the_solve(fake_solve, capsys):
    assert main(["levels", "chain", "2", "--latex", "/proc/a.tex"]) == 2
    assert "/proc/a.tex" in _one_error_line(capsys)
    assert fake_solve == []


def test_failure_while_writing_leaves_no_file_at_all(monkeypatch, tmp_path, capsys):
    """The JSON directory disappears during the solve: the LaTeX file must not appear either."""
    sub = tmp_path / "sub"
    sub.mkdir()
    tex, js = tmp_path / "a.tex", sub / "a.json"

    def solve(model, electrons=None, verify=True, **options):
        sub.rmdir()                           # the check before the solve has passed by now
        spec = two_site_spectrum()
        spec.model = model
        return spec

    monkeypatch.setattr(symcluster, "solve", solve, raising=False)
    rc = main(["levels", "chain", "2", "--latex", str(tex), "--json", str(js)])
    assert rc == 2
    assert str(js) in _one_error_line(capsys)
    assert os.listdir(tmp_path) == []         # neither a.tex nor a temporary file
    assert capsys.readouterr().out == ""      # no table either: exit 2 means no output


def test_analysis_latex_to_unwritable_place_is_refused_before_the_solve(monkeypatch, capsys):
    calls = []
    monkeypatch.setattr(symcluster, "solve",
                        lambda *a, **k: calls.append(a) or two_site_spectrum(), raising=False)
    rc = main(["gaps", "chain", "2", "--sector", "2", "--at", "t=1", "U=4",
               "--latex", "/proc/g.tex"])
    assert rc == 2
    assert "/proc/g.tex" in _one_error_line(capsys)
    assert calls == []


def test_cluster_file_docs_match_the_reader_on_version(fake_solve, tmp_path, capsys):
    """docs/cluster-files.md's example loads with and without its 'version' line, as documented."""
    root = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
    with open(os.path.join(root, "docs", "cluster-files.md"), encoding="utf-8") as fh:
        doc = fh.read()
    example = doc.split("```toml\n", 1)[1].split("```", 1)[0]
    version_line = [l for l in example.splitlines() if l.startswith("version")][0]
    assert "required" not in version_line and "optional" in version_line
    for text in (example, example.replace(version_line + "\n", "")):
        f = tmp_path / "dimer.toml"
        f.write_text(text)
        assert main(["levels", "--cluster-file", str(f)]) == 0, capsys.readouterr().err
    assert fake_solve[-1][0].cluster.n_sites == 3
    f.write_text(example.replace(version_line, "version = 2"))
    assert main(["levels", "--cluster-file", str(f)]) == 2
    assert "version 2 is not supported" in _one_error_line(capsys)


@pytest.mark.parametrize("digits", [3, 40])
def test_thermo_prints_the_digits_asked_for(capsys, digits):
    # dimer, N = 2, t = 1, U = 4, T = 1: levels 0 (x3), U, U/2 -+ sqrt(U^2/4 + 4t^2)
    # (references.md, two-site cluster), so <E> = sum E e^-E / sum e^-E, computed here
    import mpmath
    with mpmath.workdps(60):
        r = mpmath.sqrt(8)
        levels = [0, 0, 0, 4, 2 - r, 2 + r]
        z = sum(mpmath.exp(-e) for e in levels)
        ref = sum(e * mpmath.exp(-e) for e in levels) / z
        want = mpmath.nstr(ref, digits)
    code = main(["thermo", "chain", "2", "--sector", "2", "--at", "t=1", "U=4",
                 "--temperatures", "1", "--digits", str(digits)])
    out = capsys.readouterr().out.splitlines()
    assert code == 0
    header = out[0].split("\t")
    row = out[1].split("\t")
    assert row[header.index("energy")] == want


def test_a_range_that_starts_with_a_minus_sign_is_a_value_not_an_option(capsys):
    # ring(4), all electron numbers, U in (-10, 10): at U = 0 the ground state changes its
    # electron number (tight binding, orbitals -2t, 0, 0, 2t: N = 2 to 6 all have -4t there),
    # an exact integer transition point
    from symcluster.cli import main
    for argv in (["--range", "-10:10"], ["--range=-10:10"]):
        code = main(["ground-map", "ring", "4", "--coupling", "U", "--digits", "15"] + argv)
        out = capsys.readouterr().out
        assert code == 0
        lines = [ln for ln in out.splitlines() if ln.startswith("U = ")]
        assert any(ln.startswith("U = 0:  ground state") for ln in lines)   # no "~ 0.0"
        assert not any("{" in ln for ln in lines)          # readable: no raw dict reprs


def test_a_list_option_keeps_all_its_values_when_the_first_is_negative(capsys):
    # --mu takes a list: "-1 0 1" are three chemical potentials (a review found that an
    # earlier rewrite of negative values kept only the first and refused the rest)
    from symcluster.cli import _attach_negative_values, main
    code = main(["thermo", "chain", "2", "--mu", "-1", "0", "1", "--temperatures", "1"])
    out = capsys.readouterr().out
    assert code == 0
    rows = [ln.split("\t") for ln in out.splitlines() if ln.startswith("1\t")]
    assert [r[1] for r in rows] == ["-1", "0", "1"]
    # only one-value options are joined, and nothing after "--"
    single = {"--range"}
    assert _attach_negative_values(["--range", "-1:2", "--mu", "-1", "-2"], single) == \
        ["--range=-1:2", "--mu", "-1", "-2"]
    assert _attach_negative_values(["x", "--", "--range", "-3"], single) == \
        ["x", "--", "--range", "-3"]


def test_a_huge_cluster_file_is_refused_without_reading_it_all(tmp_path, capsys):
    # issue "Reliability", finding 5: --cluster-file /dev/zero read until memory ran out;
    # now at most 1 MB is read (a valid file padded with a comment is refused too)
    f = tmp_path / "big.toml"
    f.write_text('format = "symcluster-cluster"\nsites = 2\nbonds = [[0, 1]]\n#'
                 + "x" * 1_100_000 + "\n")
    assert main(["levels", "--cluster-file", str(f)]) == 2
    assert "larger than 1,000,000 bytes" in _one_error_line(capsys)


def test_too_many_automorphisms_gives_advice_the_command_line_can_follow(capsys):
    # 'complete 8' has 8! = 40320 automorphisms, over the detection's limit; the advice
    # used to be "raise max_order", which no option offers
    assert main(["levels", "complete", "8", "--electrons", "1"]) == 2
    line = _one_error_line(capsys)
    assert "max_order" not in line and "--no-lattice" in line
    assert main(["levels", "complete", "8", "--electrons", "1", "--no-lattice",
                 "--at", "t=1,U=4"]) == 0
    rows = [r.split() for r in capsys.readouterr().out.splitlines() if r.startswith("1 ")]
    # one electron on the complete graph K8: -(8-1)t once and +t seven times, with two
    # spin states each (adjacency spectrum of K_n: n-1 and -1 (n-1 times); common practice)
    assert sorted((r[-1], int(r[-3])) for r in rows) == [("-7*t", 2), ("t", 14)]
