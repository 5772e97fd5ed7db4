"""Tests of symcluster.export.text (terminal tables).

The two-site (dimer) Hubbard levels used as data are the textbook closed forms
for H = -t sum_s (c+_1s c_2s + h.c.) + U sum_i n_i,up n_i,dn — from memory:
N=1: -t, +t (doublets); N=2: 0 (triplet), U, (U -/+ sqrt(U^2 + 16 t^2))/2;
N=3: U - t, U + t; N=4: 2U.  The builders below are shared with the other
export/CLI test modules.
"""

import mpmath
import sympy

from symcluster.lattice.clusters import chain
from symcluster.export.text import energy_text, format_symmetries, format_table
from symcluster.models import hubbard
from symcluster.spectrum import Level, Spectrum, VerificationReport

t, U = sympy.symbols("t U", real=True)
E = sympy.Symbol("E", real=True)
DELTA = sympy.sqrt(U**2 + 16 * t**2)
R = sympy.Rational


class StandInRoot:
    """Minimal object following the ImplicitRoot protocol (for tests only)."""

    def __init__(self, poly, index):
        self.poly, self.index = poly, index
        self.symbols = tuple(poly.gens[1:])
        self.free_symbols = set(self.symbols)

    def __eq__(self, other):
        return isinstance(other, StandInRoot) and (self.poly, self.index) == (other.poly, other.index)

    def __hash__(self):
        return hash((self.poly, self.index))

    def numeric(self, point, digits=30):
        p = sympy.Poly(self.poly.as_expr().subs(point), self.poly.gens[0])
        with mpmath.workdps(digits + 10):
            roots = sorted(mpmath.re(r) for r in mpmath.polyroots(
                [mpmath.mpf(sympy.Rational(c).p) / sympy.Rational(c).q for c in p.all_coeffs()],
                maxsteps=200, extraprec=200))
            return roots[self.index]

    def latex(self, var="E"):
        return sympy.latex(self.poly.as_expr())


def _lev(energy, deg, n, s, irrep=None, eta=None, poly=None):
    qn = {"N": n, "S": R(s)}
    if irrep is not None:
        qn["irrep"] = irrep
    if eta is not None:
        qn["eta"] = R(eta)
    return Level(energy, deg, qn, poly)


def two_site_spectrum(with_root=False, with_eta=True):
    """The dimer spectrum (16 states), optionally plus one implicit-root level."""
    p2 = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    eta = (lambda x: x) if with_eta else (lambda x: None)
    levels = [
        _lev(sympy.Integer(0), 1, 0, 0, "A", eta(1)),
        _lev(t, 2, 1, R(1, 2), "B", eta(R(1, 2))),
        _lev(-t, 2, 1, R(1, 2), "A", eta(R(1, 2))),
        _lev(U / 2 + DELTA / 2, 1, 2, 0, "A", eta(0), p2),
        _lev(sympy.Integer(0), 3, 2, 1, "B", eta(0)),
        _lev(U / 2 - DELTA / 2, 1, 2, 0, "A", eta(0), p2),
        _lev(U, 1, 2, 0, "B", eta(1)),
        _lev(U - t, 2, 3, R(1, 2), "B", eta(R(1, 2))),
        _lev(U + t, 2, 3, R(1, 2), "A", eta(R(1, 2))),
        _lev(2 * U, 1, 4, 0, "A", eta(1)),
    ]
    if with_root:
        p5 = sympy.Poly(E**5 - t**4 * E - U**5, E, t, U)
        levels.append(Level(StandInRoot(p5, 0), 1, {"N": 5, "Sz": R(1, 2)}, p5))
    rep = VerificationReport(digits=30)
    rep.add("eigenvalues", "all blocks", points=[{"t": R(3, 7), "U": R(5, 2)}], worst=1e-40)
    syms = [{"symmetries": ["spin", "lattice"]},
            {"sector": (1, 1), "sector_dim": 4, "steps": [("lattice", 2), ("spin", 2)],
             "largest_block": 2}]
    return Spectrum(hubbard(chain(2)), levels, syms, rep, {})


def _rows(text):
    return [l for l in text.splitlines() if l and not l.startswith("#") and not l.startswith("-")]


def test_header_names_model_and_verification():
    text = format_table(two_site_spectrum())
    assert "chain(2)" in text
    assert "verified: 1x eigenvalues" in text
    assert "16 states" in text


def test_sorted_by_n_then_value_at_point():
    text = format_table(two_site_spectrum(), point={"t": 1, "U": 4}, digits=12)
    rows = _rows(text)[1:]
    ns = [int(r.split()[0]) for r in rows]
    assert ns == sorted(ns)
    n2 = [r for r in rows if r.split()[0] == "2"]
    # dimer at t=1, U=4 (formula from memory): 2 - 2*sqrt(2) < 0 < 4 < 2 + 2*sqrt(2)
    assert "-0.828427124746" in n2[0]
    assert n2[1].split()[2] == "3"          # triplet multiplicity 2S+1
    assert "4.82842712475" in n2[3]


def test_columns_depend_on_available_quantum_numbers():
    with_eta = _rows(format_table(two_site_spectrum()))[0].split()
    no_eta = _rows(format_table(two_site_spectrum(with_eta=False)))[0].split()
    assert "eta" in with_eta and "irrep" in with_eta
    assert "eta" not in no_eta and "irrep" in no_eta
    assert "value" not in with_eta


def test_no_point_keeps_solver_order_within_n():
    rows = _rows(format_table(two_site_spectrum()))[1:]
    n2 = [r for r in rows if r.split()[0] == "2"]
    assert n2[0].endswith("U/2 + sqrt(U**2 + 16*t**2)/2")
    assert n2[2].endswith("U/2 - sqrt(U**2 + 16*t**2)/2")


def test_implicit_root_is_named_with_its_polynomial():
    spec = two_site_spectrum(with_root=True)
    poly = spec.levels[-1].energy.poly
    assert energy_text(spec.levels[-1].energy) == \
        f"root 1 of {sympy.sstr(poly.as_expr())} = 0 (ascending in E)"
    assert "E**5" in energy_text(spec.levels[-1].energy)
    text = format_table(spec)
    assert "Sz=1/2" in text and "root 1 of P1 (ascending in E)" in text
    # the table lists the polynomial once, below the rows
    assert text.count(sympy.sstr(poly.as_expr())) == 1
    assert f"P1: {sympy.sstr(poly.as_expr())} = 0" in text


def test_point_missing_coupling_is_a_model_error():
    import pytest
    from symcluster.errors import ModelError
    with pytest.raises(ModelError, match="no value given for coupling"):
        format_table(two_site_spectrum(), point={"t": 1})


def test_symmetry_report_lists_sectors_and_steps():
    text = format_symmetries(two_site_spectrum())
    assert "symmetries: spin, lattice" in text
    row = [l for l in text.splitlines() if l.startswith("Nup=1 Ndn=1")][0]
    assert row.split()[2:5] == ["4", "2", "lattice"]
    assert "spin -> 2" in row


def test_large_polynomials_are_printed_term_by_term_and_exactly():
    # Above FAST_PRINT_TERMS terms the printers bypass sympy's; the text must still be the
    # same polynomial (re-parsed here by sympy, in the test only) and the LaTeX must carry
    # the same terms (converted back by a tiny independent rewriter).
    import random
    import re
    from symcluster.export.text import FAST_PRINT_TERMS, poly_text
    rng = random.Random(3)
    expr = sum(rng.choice([-3, -1, 1, 2, R(1, 3), R(-5, 7)]) * E**a * t**b * U**c
               for a in range(6) for b in range(4) for c in range(4))
    p = sympy.Poly(expr, E, t, U)
    assert len(p.as_dict()) > FAST_PRINT_TERMS
    names = {"E": E, "t": t, "U": U}
    assert sympy.expand(sympy.parse_expr(poly_text(p), local_dict=names) - expr) == 0
    tex = poly_text(p, latex=True)
    py = re.sub(r"\\frac\{(\d+)\}\{(\d+)\}", r"(\1/\2)", tex)
    py = re.sub(r"\^\{(\d+)\}", r"**\1", py)
    py = re.sub(r"(?<=[\w)]) (?=[\w(])", "*", py)
    assert sympy.expand(sympy.parse_expr(py, local_dict=names) - expr) == 0


def test_exact_printers_agree_with_sympy_and_handle_any_integer_length():
    """The export printers are sympy's printers except that integers may exceed 4300 digits."""
    from symcluster.export.text import exact_latex, exact_sstr
    samples = [U / 2 - DELTA / 2, R(-3, 7) * t**2 + U / 5, sympy.sqrt(R(1, 3) * U**2 + 2 * t**2),
               sympy.acos(U / (U**2 + 3 * t**2) ** R(3, 2)) / 3, -t - R(22, 7) * U, R(-5, 2)]
    for e in samples:
        assert exact_sstr(e) == sympy.sstr(e)
        assert exact_latex(e, inv_trig_style="full") == sympy.latex(e, inv_trig_style="full")
    big = sympy.Integer(10) ** 5000 - 1                      # 5000 nines
    assert exact_sstr(big * t) == "9" * 5000 + "*t"
    assert exact_latex(t / (big + 1)) == r"\frac{t}{1" + "0" * 5000 + "}"
    assert energy_text(-big / 3) == "-" + "3" * 5000        # 99...9 / 3 = 33...3
