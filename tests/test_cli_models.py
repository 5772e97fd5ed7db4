"""The command line with other models (symcluster.cli: --model, --family, --field): the
Hamiltonian in the text header and the LaTeX table, levels against textbook values, and
bad model input refused with one line, exit code 2 and nothing written.  In-process
through symcluster.cli.main(argv), plus one real subprocess."""

import os
import subprocess
import sys

import pytest

import symcluster
from symcluster.cli import main
from helpers_cli import error_line

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(HERE)
WORKED = os.path.join(ROOT, "worked")
HEAD = 'format = "symcluster-model"\nversion = 1\n'


def _one_error_line(capsys):
    return error_line(capsys, quiet_stdout=False)


def _rows(out):
    """Table rows as {column: cell}, cut at the columns of the dashed rule under the header."""
    import re
    lines = out.splitlines()
    k = next(i for i, l in enumerate(lines) if l.startswith("-") and set(l) <= {"-", " "})
    head = lines[k - 1]
    spans = [m.span() for m in re.finditer(r"-+", lines[k])]
    spans[-1] = (spans[-1][0], None)
    names = [head[a:b].strip() for a, b in spans]
    return [{n: l[a:b].strip() for n, (a, b) in zip(names, spans)}
            for l in lines[k + 1:] if l.strip() and not l.startswith("#")]


def test_heisenberg_ring_header_and_textbook_multiplets(capsys):
    assert main(["levels", "ring", "4", "--family", "heisenberg", "--at", "J=1"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("# heisenberg model on ring(4): 4 sites, 4 bonds; spin-1/2 on each "
                          "site; H = J sum_<ab in {(0,1),(0,3),(1,2),(2,3)}> S_a.S_b\n")
    assert "hopping" not in out.splitlines()[0]
    # 4-ring: H = (J/2)(S^2 - S_A^2 - S_B^2), sublattices A = {0,2}, B = {1,3} (textbook,
    # from memory): E = -2J (S=0), -J (S=1), 0 (S=0), 0 (S=1, twice), J (S=2)
    got = sorted((float(r["value"]), r["S"], int(r["deg"])) for r in _rows(out))
    assert got == [(-2.0, "0", 1), (-1.0, "1", 3), (0.0, "0", 1), (0.0, "1", 6), (1.0, "2", 5)]


def test_family_words_may_come_before_the_cluster(capsys):
    assert main(["levels", "--family", "heisenberg", "ring", "4", "--at", "J=1"]) == 0
    assert "heisenberg model on ring(4)" in capsys.readouterr().out


def test_kanamori_atom_header_latex_and_multiplets(capsys, tmp_path):
    tex = tmp_path / "k.tex"
    assert main(["levels", "--family", "kanamori", "2", "--electrons", "2", "--at", "U=4,J=1",
                 "--latex", str(tex)]) == 0
    out = capsys.readouterr().out
    head = out.splitlines()[0]
    assert "H = U sum_a n_a,up n_a,dn + (U - 2*J) sum_s n_0,s n_1,-s + (U - 3*J) sum_s " \
           "n_0,s n_1,s - J (S+_0 S-_1 + h.c.) + J (c+_0,up c+_0,dn c_1,dn c_1,up + h.c.)" in head
    # two electrons in two orbitals, Kanamori with U' = U - 2J: triplet U - 3J, singlets
    # U - J (twice) and U + J (A. Georges, L. de' Medici, J. Mravlje, Annu. Rev. Condens.
    # Matter Phys. 4, 137 (2013))
    got = sorted((float(r["value"]), int(r["deg"])) for r in _rows(out))
    assert got == [(1.0, 3), (3.0, 1), (3.0, 1), (5.0, 1)]
    text = " ".join(tex.read_text().split())      # source lines are wrapped at 100 characters
    assert r"\left(U - 2 J\right) \sum_{\sigma} n_{0\sigma} n_{1\bar\sigma}" in text
    assert r"- J \left(S^+_{0} S^-_{1} + \mathrm{h.c.}\right)" in text
    assert "+ -" not in text and "+ - " not in head


def test_anderson_latex_names_the_levels_and_the_hamiltonian(capsys, tmp_path):
    tex = tmp_path / "a.tex"
    assert main(["levels", "--family", "anderson", "1", "--at", "eps_d=-2,U=4,eps_1=0,V_1=1",
                 "--latex", str(tex), "--standalone"]) == 0
    out = capsys.readouterr().out
    assert "H = eps_d n_0 + U n_0,up n_0,dn + eps_1 n_1 + V_1 sum_s (c+_0,s c_1,s + h.c.)" in out
    text = tex.read_text()
    assert (r"H = \varepsilon_{d} n_{0} + U n_{0\uparrow} n_{0\downarrow} + \varepsilon_{1} "
            r"n_{1}") in " ".join(text.split())
    assert "eps_{" not in text and "(hopping V" not in text
    # one electron: eps/2 +- sqrt((eps_d - eps_1)^2 + 4 V^2)/2 = -1 -+ sqrt(2) (2x2 matrix)
    assert "-2.41421356237" in out and "0.414213562373" in out


def test_model_file_and_field(capsys):
    path = os.path.join(WORKED, "heisenberg_j1j2.toml")
    assert main(["levels", "--model", path, "--field", "h", "--at", "J1=1,J2=1/2,h=0"]) == 0
    out = capsys.readouterr().out
    assert out.startswith("# J1-J2 Heisenberg+field model on ring(6)") or \
        out.startswith("# J1-J2 Heisenberg model on ring(6)")
    assert "+ J2 sum_<ab in {(0,2),(1,3),(2,4),(3,5),(4,0),(5,1)}> S_a.S_b - h sum_a 2 Sz_a" in out
    # at J2 = J1/2 (Majumdar-Ghosh point) the dimer singlets are exact ground states with
    # E = -3 J1 L / 8 = -9/4 on six sites (C. K. Majumdar, D. K. Ghosh, J. Math. Phys. 10,
    # 1388 (1969), from memory)
    rows = _rows(out)
    assert sum(int(r["deg"]) for r in rows) == 64
    assert min(float(r["value"]) for r in rows) == pytest.approx(-2.25, abs=1e-9)


def test_analysis_subcommands_take_a_model(capsys):
    assert main(["derivative", "ring", "4", "--family", "heisenberg", "--at", "J=1",
                 "--coupling", "J"]) == 0
    # ground singlet of the 4-ring: E = -2J, so dE/dJ = -2 (textbook, see above)
    assert "dE/dJ = -2" in capsys.readouterr().out
    assert main(["derivative", "chain", "2", "--with-field", "h", "--at", "t=1", "U=4",
                 "h=1/2", "--coupling", "h"]) == 0
    assert "dE/dh" in capsys.readouterr().out


@pytest.mark.parametrize("argv, words", [
    (["levels", "--family", "anderson", "1", "ring", "4"],
     "--family anderson builds its own sites; drop the cluster (ring 4)"),
    (["levels", "--family", "kanamori"], "--family kanamori takes 1 whole number (N)"),
    (["levels", "--family", "hubard", "ring", "4"], "--family 'hubard' is not a model family"),
    (["levels", "ring", "4", "--family", "heisenberg", "--electrons", "2"],
     "a spin model has no electron number; leave --electrons out"),
    (["levels", "ring", "4", "--family", "heisenberg", "--at", "t=1"],
     "--at: unknown coupling 't'; this model's couplings are J"),
    (["levels", "--model", os.path.join(WORKED, "lieb_fragment.toml"), "ring", "4"],
     "a model file defines its own sites; drop the cluster (ring 4)"),
    (["levels", "--model", os.path.join(WORKED, "lieb_fragment.toml"), "--family", "t_j"],
     "give either --model FILE or --family NAME, not both"),
    (["levels", "--model", "/dev/zero"], "is larger than 1,000,000 bytes"),
    (["levels", "chain", "2", "--field", "U"], "field label 'U' is already a coupling"),
    (["thermo", "ring", "4", "--family", "heisenberg", "--at", "J=1"],
     "thermo works with electron numbers, which a spin model does not have"),
    (["levels", "--family", "kanamori", "2", "--electrons", "5"],
     "--electrons 5 is impossible"),
])
def test_bad_model_options_one_line_exit_2(argv, words, capsys, tmp_path):
    out_files = [str(tmp_path / "t.tex"), str(tmp_path / "t.json")]
    argv = argv + (["--latex", out_files[0], "--json", out_files[1]]
                   if argv[0] == "levels" else [])
    assert main(argv) == 2
    assert words in _one_error_line(capsys)
    assert os.listdir(tmp_path) == []


def _write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return str(p)


def test_fixed_values_of_a_model_file_on_the_command_line(capsys, tmp_path):
    path = _write(tmp_path, "and.toml", HEAD + '[family]\nname = "anderson"\nn_bath = 1\n'
                  '[fixed]\nV_1 = 1\n')
    assert main(["levels", "--model", path, "--at", "eps_d=-1,U=2,eps_1=0,V_1=1"]) == 2
    assert "--at: V_1 is held at 1 (--hold or the model file's [fixed]); leave it out of " \
        "--at" in _one_error_line(capsys)
    code = main(["levels", "--model", path, "--at", "eps_d=-1,U=2,eps_1=0"])
    assert code == 0
    out = capsys.readouterr().out
    assert "# fixed couplings: V_1=1" in out


def test_help_names_the_model_options(capsys):
    assert main(["levels", "--help"]) == 0
    out = capsys.readouterr().out
    for words in ("--model FILE.toml", "--family NAME [N ...]", "--field LABEL",
                  "'anderson N' (N bath sites)", "from a TOML model file"):
        assert words in " ".join(out.split()), words
    assert main(["thermo", "--help"]) == 0
    out = capsys.readouterr().out
    assert "--with-field LABEL" in out and "--model FILE.toml" in out
    assert main(["--help"]) == 0
    assert "--family heisenberg" in " ".join(capsys.readouterr().out.split())


def test_a_bad_model_file_in_a_real_process(tmp_path):
    bad = _write(tmp_path, "bad.toml", HEAD + '[space]\nkind = "spins"\nsites = 2\n'
                 '[[term]]\nkind = "exchange_q"\ncoupling = "J"\nbonds = [[0, 1]]\n')
    env = dict(os.environ, PYTHONPATH=os.pathsep.join(
        [ROOT] + [p for p in os.environ.get("PYTHONPATH", "").split(os.pathsep) if p]))
    run = subprocess.run(
        [sys.executable, "-m", "symcluster", "levels", "--model", bad, "--latex", "out.tex",
         "--json", "out.json"],
        cwd=tmp_path, env=env, capture_output=True, text=True, timeout=120)
    assert run.returncode == 2
    assert run.stdout == ""
    lines = run.stderr.splitlines()
    assert len(lines) == 1 and "Traceback" not in run.stderr
    assert lines[0].startswith("symcluster: error: ") and \
        "term 1 (exchange_q): kind = 'exchange_q' is not a term kind; choose one of" in lines[0]
    assert sorted(os.listdir(tmp_path)) == ["bad.toml"]


def test_hold_keeps_couplings_at_exact_values(capsys):
    # two-site Anderson model, one electron: the 2x2 matrix [[eps_d, V], [V, eps_1]] (its
    # convention, +V hybridization) has eigenvalues (eps_d + eps_1)/2 -+ sqrt(((eps_d -
    # eps_1)/2)^2 + V^2); at eps_d = -1, eps_1 = 0, V = 1: (-1 -+ sqrt(5))/2
    assert main(["levels", "--family", "anderson", "1", "--hold", "eps_1=0,V_1=1",
                 "--at", "eps_d=-1,U=2", "--electrons", "1"]) == 0
    out = capsys.readouterr().out
    assert "# fixed couplings: eps_1=0, V_1=1" in out
    assert "-1.61803398" in out and "0.61803398" in out
    # --at takes only the couplings left free
    assert main(["levels", "--family", "anderson", "1", "--hold", "V_1=1",
                 "--at", "eps_d=-1,U=2,eps_1=0,V_1=1"]) == 2
    assert "--at: V_1 is held at 1 (--hold or the model file's [fixed])" in _one_error_line(capsys)


@pytest.mark.parametrize("argv, words", [
    (["levels", "--family", "anderson", "1", "--hold", "W=1"], "--hold: 'W' is not a coupling"),
    (["levels", "--family", "anderson", "1", "--hold", "V_1"], "--hold item 'V_1' is not of the form"),
    (["levels", "--family", "anderson", "1", "--hold", "V_1=0.1.2"], "is not a number"),
    (["levels", "--family", "anderson", "1", "--hold", "V_1=1,V_1=2"], "--hold gives V_1 twice"),
])
def test_bad_hold_values_are_one_line_errors(argv, words, capsys):
    assert main(argv) == 2
    assert words in _one_error_line(capsys)
