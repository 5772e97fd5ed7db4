"""One command-line grammar: the point, electron numbers, sweeps, help texts, 'did you mean'.

Numbers checked are the dimer's (two-site formulas, from memory): at t = 1, U = 4 the
N = 2 ground state is (U - sqrt(U^2 + 16 t^2))/2 = 2 - 2 sqrt(2)."""

import argparse
import math

import pytest

from symcluster.cli import _make_parser, main


def _run(argv, capsys):
    code = main(argv)
    cap = capsys.readouterr()
    return code, cap.out, cap.err


def test_a_mistyped_subcommand_gets_a_suggestion(capsys):
    code, out, err = _run(["gap", "ring", "4"], capsys)
    assert code == 2 and out == ""
    assert "did you mean 'gaps'" in err and err.count("\n") == 1
    code, _, err = _run(["rign", "4"], capsys)
    assert code == 2 and "did you mean 'ring'" in err


def test_levels_accepts_the_point_with_spaces_and_commas(capsys):
    want = f"{2 - 2 * math.sqrt(2):.10f}"[:10]
    for at in (["--at", "t=1", "U=4"], ["--at", "t=1,U=4"], ["--at=t=1,U=4"]):
        code, out, _ = _run(["levels", "chain", "2", "--electrons", "2", *at], capsys)
        assert code == 0 and want in out


def test_the_verification_line_is_short_with_details_on_request(capsys):
    _, out, _ = _run(["levels", "chain", "2"], capsys)
    line = next(l for l in out.splitlines() if l.startswith("# verified"))
    assert len(line) < 100
    _, out, _ = _run(["levels", "chain", "2", "--verification"], capsys)
    line = next(l for l in out.splitlines() if l.startswith("# verified"))
    assert "state count" in line


def test_sweep_commands_take_the_point_as_at_and_the_sweep_as_over(capsys):
    code, out, _ = _run(["ground-map", "ring", "4", "--at", "t=1", "--over", "U:-10:10"],
                        capsys)
    assert code == 0 and "U = 0:  ground state" in out
    code, out2, _ = _run(["ground-map", "ring", "4", "--fixed", "t=1", "--range", "-10:10"],
                         capsys)
    assert out2 == out


def test_electrons_names_the_sector_of_an_analysis(capsys):
    code, out, _ = _run(["thermo", "chain", "2", "--electrons", "2", "--at", "t=1", "U=4",
                         "--temperatures", "0.5:1.5:3"], capsys)
    assert code == 0
    rows = [l.split("\t") for l in out.strip().splitlines()[1:]]
    assert [r[0] for r in rows] == ["1/2", "1", "3/2"]


def test_gaps_over_a_sweep_print_a_table_and_define_every_symbol(capsys):
    code, out, _ = _run(["gaps", "chain", "2", "--electrons", "2", "--at", "t=1", "U=4",
                         "--over", "U:0:4:3"], capsys)
    assert code == 0
    table = out.split("\n\n")[-1].strip().splitlines()
    assert table[0].split("\t")[0] == "U" and len(table) == 4
    # charge gap of the dimer at U: sqrt(U^2 + 16) - 2 (from memory); at U = 4: 4 sqrt 2 - 2
    assert abs(float(table[3].split("\t")[1]) - (4 * math.sqrt(2) - 2)) < 1e-12
    assert "{" not in out


def test_gaps_with_implicit_levels_define_their_symbols(capsys):
    code, out, _ = _run(["gaps", "chain", "5", "--electrons", "5", "--at", "t=1", "U=4"],
                        capsys)
    assert code == 0
    import re
    used = set(re.findall(r"E_[0-9]+\(N=[0-9]+\)", out.split("\n")[0] + out))
    for sym in used:
        assert f"where {sym} = " in out


def _actions(parser):
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for name, sub in action.choices.items():
                yield from ((name + " " + n, a) for n, a in _actions(sub))
        elif action.option_strings and action.dest not in ("help", "version"):
            yield action.option_strings[0], action


def test_every_option_has_help_and_shows_its_default():
    missing, hidden = [], []
    for name, action in _actions(_make_parser()):
        if not action.help:
            missing.append(name)
        elif action.default not in (None, False, [], "", argparse.SUPPRESS) and \
                "default" not in action.help:
            hidden.append(name)
    assert not missing, f"options without help: {missing}"
    assert not hidden, f"options whose default is not shown: {hidden}"


def test_levels_over_a_sweep_prints_every_level_at_every_value(capsys):
    # dimer, N = 2: the lowest level is (U - sqrt(U^2 + 16 t^2))/2 (module docstring)
    code, out, _ = _run(["levels", "chain", "2", "--electrons", "2", "--at", "t=1",
                         "--over", "U:0:8:5", "--digits", "12"], capsys)
    assert code == 0
    lines = out.splitlines()
    start = next(k for k, l in enumerate(lines) if l.startswith("U\tlevel\t"))
    head = lines[start].split("\t")
    rows = [dict(zip(head, l.split("\t"))) for l in lines[start + 1:]]
    us = sorted({r["U"] for r in rows}, key=float)
    assert us == ["0", "2", "4", "6", "8"]
    for u in us:
        mine = [r for r in rows if r["U"] == u]
        assert len({r["level"] for r in mine}) == len(mine) == 4      # 4 levels of N = 2
        assert sum(int(r["deg"]) for r in mine) == 6                   # C(4, 2) states
        lowest = min(float(r["value"]) for r in mine)
        x = float(u)
        assert abs(lowest - (x - math.sqrt(x * x + 16)) / 2) < 1e-10


@pytest.mark.parametrize("argv, words", [
    (["--over", "U:0:8", "--at", "t=1"], "number of values"),
    (["--over", "V:0:8:3", "--at", "t=1"], "not a coupling"),
    (["--over", "U:0:8:3"], "add --at t=1"),
    (["--over", "U:8:0:3", "--at", "t=1"], "range is empty"),
])
def test_levels_over_refuses_an_incomplete_sweep(argv, words, capsys):
    code, out, err = _run(["levels", "chain", "2", *argv], capsys)
    assert code == 2 and out == "" and words in err and err.count("\n") == 1


def test_thermo_over_a_sweep_repeats_the_table_per_value(capsys):
    # canonical N = 2 energy at T from the independent Fock reference (numpy eigenvalues of
    # the bit-string Hamiltonian, tests/reference_fock.py): E = sum E_i e^{-E_i/T} / Z
    from fractions import Fraction

    import numpy as np
    from reference_fock import FockReference
    code, out, _ = _run(["thermo", "chain", "2", "--electrons", "2", "--at", "t=1",
                         "--over", "U:0:6:3", "--temperatures", "1/2", "2", "--digits", "14"],
                        capsys)
    assert code == 0
    lines = out.strip().splitlines()
    head = lines[0].split("\t")
    assert head[:3] == ["U", "T", "mu"]
    rows = [dict(zip(head, l.split("\t"))) for l in lines[1:]]
    assert [(r["U"], r["T"]) for r in rows] == [(u, t) for u in ("0", "3", "6")
                                                for t in ("1/2", "2")]
    ref = FockReference(2, [(0, 1, "t")])
    for r in rows:
        e = ref.eigenvalues({"t": 1.0, "U": float(r["U"])}, n=2)
        w = np.exp(-(e - e.min()) / float(Fraction(r["T"])))
        assert abs(float(r["energy"]) - float(np.sum(e * w) / np.sum(w))) < 1e-10


def test_thermo_over_needs_a_count_and_a_known_coupling(capsys):
    for over, words in (("U:0:6", "number of values"), ("W:0:6:3", "unknown coupling")):
        code, out, err = _run(["thermo", "chain", "2", "--over", over], capsys)
        assert code == 2 and out == "" and words in err
