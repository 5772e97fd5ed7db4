"""Tests of symcluster.export.text (terminal tables).

The two-site (dimer) Hubbard levels used as data are the textbook closed forms
for H = -t sum_s (c+_1s c_2s + h.c.) + U sum_i n_i,up n_i,dn — from memory:
N=1: -t, +t (doublets); N=2: 0 (triplet), U, (U -/+ sqrt(U^2 + 16 t^2))/2;
N=3: U - t, U + t; N=4: 2U.  The builders below are shared with the other
export/CLI test modules.
"""

import sympy

from symcluster.export.text import energy_text, format_symmetries, format_table

from helpers_export import DELTA, E, R, U, t, two_site_spectrum  # noqa: F401

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
    # roots are counted from 0 (the lowest), as the Python attribute and the JSON index
    text = energy_text(spec.levels[-1].energy)
    assert text == "root 0 of epsilon**5 - epsilon*t**4 - U**5 = 0"
    # the printed polynomial re-parses as the same polynomial: the energy is not "E"
    # (sympy reads E as Euler's number)
    eps = sympy.Symbol("epsilon", real=True)
    back = sympy.sympify(text.split(" of ")[1].split(" = ")[0],
                         locals={"epsilon": eps, "t": t, "U": U})
    assert sympy.expand(back - poly.as_expr().subs(E, eps)) == 0
    assert "E" not in text
    text = format_table(spec)
    assert "Sz=1/2" in text and "root 0 of P1" in text
    # the table lists the polynomial once, below the rows
    assert text.count("epsilon**5 - epsilon*t**4 - U**5") == 1
    assert "P1: epsilon**5 - epsilon*t**4 - U**5 = 0" in text
    assert "counted from 0 (the lowest)" in text


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
    names = {"epsilon": E, "t": t, "U": U}
    assert sympy.expand(sympy.parse_expr(poly_text(p), local_dict=names) - expr) == 0
    tex = poly_text(p, latex=True)
    py = re.sub(r"\\frac\{(\d+)\}\{(\d+)\}", r"(\1/\2)", tex)
    py = re.sub(r"\^\{(\d+)\}", r"**\1", py)
    py = re.sub(r"(?<=[\w)]) (?=[\w(\\])", "*", py).replace("\\epsilon", "epsilon")
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
