"""Ground-state maps and exact transition points (symcluster.analysis.transitions).

Also holds the hand-built test spectra shared by the other analysis tests:
the two-site Hubbard cluster from its textbook closed forms (D. J. Carrascal,
J. Ferrer, J. C. Smith, K. Burke, J. Phys.: Condens. Matter 27, 393001 (2015);
journal details from memory), a stand-in implicit root, and a small
independent Fock-space Hamiltonian builder.
"""

import shutil
import subprocess

import mpmath
import pytest
import sympy

from symcluster.analysis import crossings, ground_states, transitions
from symcluster.analysis.analysis_latex import latex_document, latex_transitions
from symcluster.errors import ModelError
from symcluster.spectrum import Level

from helpers_two_site import (E, HALF, U, StandInRoot, spectrum_of, two_site_levels,  # noqa: F401
                              two_site_spectrum, _P)

def test_all_sectors_exact_points():
    # E0(N=4) = 2U meets U/2 - sqrt(U²/4+4t²) where U² = 2t² (U<0), and the N=1 level -t
    # meets it where U = 3t (solve the closed forms by hand; common practice, no source).
    pts = transitions(two_site_spectrum(), None, "U", (-10, 10), {"t": 1})
    assert [p.value for p in pts] == [-sympy.sqrt(2), 3]
    assert [p.below.quantum_numbers["N"] for p in pts] == [4, 2]
    assert [p.above.quantum_numbers["N"] for p in pts] == [2, 1]
    with mpmath.workdps(40):
        assert abs(pts[0].numeric(35) + mpmath.sqrt(2)) < mpmath.mpf(10) ** -33
    assert pts[1].polynomial == sympy.Poly(U - 3, U)


def test_sign_change_of_t_swaps_bonding_level():
    pts = transitions(two_site_spectrum(), 1, "t", (-1, 1), {"U": 3})
    assert len(pts) == 1 and pts[0].value == 0
    assert pts[0].below.quantum_numbers["irrep"] == "B"
    assert pts[0].above.quantum_numbers["irrep"] == "A"
    assert pts[0].below.quantum_numbers["S"] == HALF


def test_half_filling_has_no_transition_and_one_piece():
    spec = two_site_spectrum()
    assert transitions(spec, 2, "U", (-10, 40), {"t": 1}) == []
    pieces = ground_states(spec, 2, "U", (-10, 40), {"t": 1})
    assert len(pieces) == 1 and pieces[0].levels[0].energy == spec.levels[5].energy


def test_crossing_of_any_two_levels():
    spec = two_site_spectrum()
    # U/2 - sqrt(U²/4+4) = U - 1  <=>  U = -3 (by hand)
    assert crossings(spec.levels[5], spec.levels[7], "U", (-10, 10), {"t": 1}) == [-3]
    assert crossings(spec.levels[1], spec.levels[1], "U", (0, 1), {"t": 1}) == []


def test_degenerate_ground_set_is_reported_whole():
    levels = two_site_levels()
    twin = Level(levels[9].energy, 1, {"N": 4, "S": 0, "irrep": "twin"}, levels[9].polynomial)
    pts = transitions(spectrum_of(levels + [twin]), None, "U", (-10, 10), {"t": 1})
    assert [p.value for p in pts] == [-sympy.sqrt(2), 3]
    assert len(pts[0].below_set) == 2 and len(pts[0].above_set) == 1


def test_cubic_transition_point_is_exact_root():
    # A: E = U - 2; B: the real root of E³ + E - U.  Equal where (U-2)³ = 2, U = 2 + 2^(1/3).
    a = Level(U - 2, 1, {"N": 1, "irrep": "A"}, _P(E - U + 2, U))
    b = Level(StandInRoot(_P(E ** 3 + E - U, U), 0), 1, {"N": 1, "irrep": "B"},
              _P(E ** 3 + E - U, U))
    pts = transitions(spectrum_of([a, b], (U,)), 1, "U", (0, 10), {})
    assert len(pts) == 1
    assert isinstance(pts[0].value, sympy.CRootOf)
    with mpmath.workdps(40):
        assert abs(pts[0].numeric(35) - (2 + mpmath.cbrt(2))) < mpmath.mpf(10) ** -33
    assert pts[0].below.quantum_numbers["irrep"] == "A"


def test_bad_arguments_raise_model_errors():
    spec = two_site_spectrum()
    with pytest.raises(ModelError, match="fixed"):
        transitions(spec, 2, "U", (0, 1), {})
    with pytest.raises(ModelError, match="empty"):
        transitions(spec, 2, "U", (1, 0), {"t": 1})
    with pytest.raises(ModelError, match="N=7"):
        transitions(spec, 7, "U", (0, 1), {"t": 1})


def test_latex_table_compiles(tmp_path):
    pts = transitions(two_site_spectrum(), None, "U", (-10, 10), {"t": 1})
    doc = latex_document(latex_transitions(pts, 30))
    # 30 digits, grouped in threes (integer part & fraction columns, aligned on the point)
    digits = doc.replace(r"\,\allowbreak ", "")
    assert "1 & 41421356237309504880168872421" in digits and r"\toprule" in doc
    if not shutil.which("pdflatex"):
        pytest.skip("pdflatex not installed")
    (tmp_path / "t.tex").write_text(doc)
    run = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "t.tex"],
                         cwd=tmp_path, capture_output=True, text=True, timeout=60)
    assert run.returncode == 0, run.stdout[-2000:]


def test_command_line_subcommands_in_process(tmp_path, capsys):
    import argparse

    from symcluster.analysis.commands import add_commands, parse_assignment, parse_range
    from symcluster.errors import InputError

    parser = argparse.ArgumentParser(prog="symcluster")
    add_commands(parser.add_subparsers(dest="command"), build_spectrum=lambda a: two_site_spectrum())
    tex = tmp_path / "map.tex"
    args = parser.parse_args(["ground-map", "--range=-10:10", "--fixed", "t=1",
                              "--latex", str(tex)])
    assert args.func(args) == 0
    out = capsys.readouterr().out
    assert "U = -sqrt(2)" in out and "U = 3" in out and tex.exists()
    args = parser.parse_args(["gaps", "--sector", "2", "--at", "t=1", "U=4"])
    assert args.func(args) == 0
    assert "charge gap: -2*t + sqrt(U**2 + 16*t**2)" in capsys.readouterr().out
    args = parser.parse_args(["series", "--sector", "2", "--order", "3"])
    assert args.func(args) == 0
    assert "16*t**4/U**3" in capsys.readouterr().out
    assert parse_assignment(["t=1", "U=-7/2"]) == {"t": 1, "U": sympy.Rational(-7, 2)}
    assert parse_range("0:1/2") == (0, sympy.Rational(1, 2))
    for bad in (["U=__import__('os')"], ["U"], ["U=1/0"]):
        with pytest.raises(InputError):
            parse_assignment(bad)


def test_float_couplings_mean_their_decimal():
    # as everywhere in symcluster (docs/quickstart.md), t = 0.1 is the point 1/10. The dimer's
    # transitions are at U = -sqrt(2) t and U = 3 t (worked out by hand in
    # test_all_sectors_exact_points), so at t = 0.1 exactly -sqrt(2)/10 and 3/10; the binary
    # double 0.1 would give other exact numbers
    pts = transitions(two_site_spectrum(), None, "U", (-10, 10), {"t": 0.1})
    assert [p.value for p in pts] == [-sympy.sqrt(2) / 10, sympy.Rational(3, 10)]
