"""Ground-state maps and exact transition points (symcluster.analysis.transitions).

Also holds the hand-built test spectra shared by the other analysis tests:
the two-site Hubbard cluster from its textbook closed forms (D. J. Carrascal,
J. Ferrer, J. C. Smith, K. Burke, J. Phys.: Condens. Matter 27, 393001 (2015);
journal details from memory), a stand-in implicit root, and a small
independent Fock-space Hamiltonian builder.
"""

import shutil
import subprocess
import types

import mpmath
import pytest
import sympy

from symcluster.analysis import crossings, ground_states, transitions
from symcluster.analysis.analysis_latex import latex_document, latex_transitions
from symcluster.errors import ModelError
from symcluster.spectrum import Level, Spectrum

t, U = sympy.symbols("t U", real=True)
E = sympy.Symbol("E")
HALF = sympy.Rational(1, 2)


def _P(expr, *gens):
    return sympy.Poly(expr, E, *(gens or (t, U)))


def two_site_levels():
    """The 16 states of the two-site cluster, H = -t Σσ(c+_0σ c_1σ + h.c.) + U Σ n↑n↓."""
    D = sympy.sqrt(U ** 2 / 4 + 4 * t ** 2)
    S0, S1 = sympy.Integer(0), sympy.Integer(1)
    return [
        Level(sympy.Integer(0), 1, {"N": 0, "S": S0}, _P(E)),
        Level(-t, 2, {"N": 1, "S": HALF, "irrep": "A"}, _P(E + t)),
        Level(t, 2, {"N": 1, "S": HALF, "irrep": "B"}, _P(E - t)),
        Level(sympy.Integer(0), 3, {"N": 2, "S": S1, "irrep": "B"}, _P(E)),
        Level(U, 1, {"N": 2, "S": S0, "irrep": "B"}, _P(E - U)),
        Level(U / 2 - D, 1, {"N": 2, "S": S0, "irrep": "A"}, _P(E ** 2 - U * E - 4 * t ** 2)),
        Level(U / 2 + D, 1, {"N": 2, "S": S0, "irrep": "A"}, _P(E ** 2 - U * E - 4 * t ** 2)),
        Level(U - t, 2, {"N": 3, "S": HALF, "irrep": "B"}, _P(E - U + t)),
        Level(U + t, 2, {"N": 3, "S": HALF, "irrep": "A"}, _P(E - U - t)),
        Level(2 * U, 1, {"N": 4, "S": S0}, _P(E - 2 * U)),
    ]


def spectrum_of(levels, symbols=(t, U)):
    return Spectrum(types.SimpleNamespace(symbols=tuple(symbols)), list(levels))


def two_site_spectrum():
    return spectrum_of(two_site_levels())


class StandInRoot:
    """Minimal implicit root for tests: index-th real root (ascending) of poly(E, *symbols)."""

    def __init__(self, poly, index):
        self.poly, self.index = poly, index
        self.symbols = tuple(poly.gens[1:])
        self.free_symbols = set(self.symbols)

    def numeric(self, point, digits=30):
        uni = sympy.Poly(self.poly.as_expr().subs({s: point[s] for s in self.symbols}),
                         self.poly.gens[0])
        with mpmath.workdps(digits + 20):
            coeffs = [mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q
                      for c in uni.all_coeffs()]
            roots = mpmath.polyroots(coeffs, maxsteps=400, extraprec=4 * digits + 100)
            real = sorted(mpmath.re(r) for r in roots
                          if abs(mpmath.im(r)) < mpmath.mpf(10) ** (-digits))
            return real[self.index]


def fock_hamiltonian(n_sites, bonds, hop, u, n_up, n_dn):
    """Dense H of one (N↑, N↓) sector as lists, in the ordering ↑ orbitals then ↓ orbitals.

    Independent of symcluster: H = -hop Σ_bonds Σσ (c+_i c_j + h.c.) + u Σ n↑n↓.
    Returns (states, matrix) with entries of whatever type hop and u have.
    """
    def combos(n):
        return [b for b in range(1 << n_sites) if bin(b).count("1") == n]

    states = [(a, b) for a in combos(n_up) for b in combos(n_dn)]
    index = {s: k for k, s in enumerate(states)}
    H = [[0 * hop for _ in states] for _ in states]
    for k, (a, b) in enumerate(states):
        H[k][k] += u * bin(a & b).count("1")
        for spin in (0, 1):
            bits = (a, b)[spin]
            for i, j in bonds:
                for src, dst in ((j, i), (i, j)):
                    if bits >> src & 1 and not bits >> dst & 1:
                        lo, hi = min(src, dst), max(src, dst)
                        between = bin(bits & (((1 << hi) - 1) ^ ((1 << (lo + 1)) - 1))).count("1")
                        new = bits ^ (1 << src) ^ (1 << dst)
                        other = (new, b) if spin == 0 else (a, new)
                        H[index[other]][k] += -hop * (-1) ** between
    return states, H


# --- tests -------------------------------------------------------------------

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
    assert "1.41421356237309504880168872421" in doc and r"\toprule" in doc
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
