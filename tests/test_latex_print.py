"""Print quality of the LaTeX tables (levels table and analysis tables).

Sources: the layout rules are common practice, no source (numbers aligned on the decimal
point, a mathematical minus, tables within the text width, no over-full lines in the
pdflatex log).  The values are checked against the independent Jordan-Wigner reference
(tests/reference_fock.py).
"""

import re

import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.analysis.analysis_latex import (latex_document, latex_gaps, latex_thermo_table,
                                                latex_transitions)
from symcluster.analysis import charge_gap, pair_binding, thermo_table, transitions
from symcluster.export.latex import latex_table
from symcluster.spectrum import Level, Spectrum, VerificationReport

from helpers_latex_print import PDFLATEX, compile_log, number_from_cells, table_rows
from reference_fock import FockReference

POINT = {"t": 1, "U": 4}


@pytest.fixture(scope="module")
def ring4():
    return sc.solve(sc.hubbard(sc.ring(4)))


@pytest.fixture(scope="module")
def ring4_tex(ring4):
    return latex_table(ring4, point=POINT, digits=30, standalone=True)


def test_every_value_keeps_its_sign_against_the_reference(ring4_tex):
    # the planted bug printed a negative value without its minus: every printed value,
    # repeated by its degeneracy g, must equal the reference spectrum (256 eigenvalues)
    c = sc.ring(4)
    want = sorted(FockReference(4, list(c.bonds)).eigenvalues(POINT).tolist())
    got = []
    rows = table_rows(ring4_tex)
    assert len(rows) == 96
    for cells in rows:
        value = number_from_cells(cells[-2], cells[-1])
        g = int(cells[-4].strip("$"))
        got += [float(value)] * g
    got.sort()
    assert len(got) == len(want) == 256
    assert max(abs(a - b) for a, b in zip(got, want)) < 1e-9
    negative = sum(1 for v in want if v < -1e-9)
    assert negative >= 20 and sum(1 for v in got if v < -1e-9) == negative


def test_a_minus_is_never_text(ring4_tex):
    # every minus of a value is inside math: the integer part of the numeric column is
    # typeset in math (>{$}r<{$}); no text-mode hyphen before a digit in a table row
    assert r">{$}r<{$}@{.}" in ring4_tex
    for cells in table_rows(ring4_tex):
        assert not any(re.search(r"(^|[^$\\\w])-\d", c) for c in cells[:-2]), cells


def test_no_operatorname_acos_and_neutral_shared_names(ring4_tex):
    assert r"\operatorname{acos}" not in ring4_tex and r"\arccos" in ring4_tex
    assert r"\Delta" not in ring4_tex and "where $w_{1} = " in ring4_tex


def test_term_symbols_are_mulliken_with_momenta_in_their_own_column(ring4_tex):
    rows = table_rows(ring4_tex)
    head = ring4_tex.split(r"\endfirsthead")[0]
    assert r"$k$" in head
    terms = {r[3] for r in rows}
    assert all(re.fullmatch(r"\$\{\}\^\{\d\}\\mathrm\{[ABE]\}(_\{[12]\})?\$", t) for t in terms)
    assert {r[4] for r in rows} == {"$0$", r"$\pm\pi/2$", r"$\pi$"}
    assert "k=" not in ring4_tex.split(r"\endlastfoot")[1]


def test_a_momentum_label_without_mulliken_symbol_is_readable():
    # a hand-made level whose irrep is only known by momentum and mirror parity
    lev = Level(sympy.Symbol("t", real=True), 2,
                {"N": 1, "S": sympy.Rational(1, 2), "irrep": "k=π,−", "irrep_dim": 1,
                 "k": sympy.pi})
    spec = Spectrum(sc.hubbard(sc.chain(2)), [lev], [], VerificationReport(), {})
    tex = latex_table(spec)
    assert r"${}^{2}\left(k = \pi,\, -\right)$" in tex


@pytest.mark.skipif(PDFLATEX is None, reason="pdflatex not installed")
def test_levels_table_fits_the_page_at_30_digits(tmp_path, ring4_tex):
    code, log = compile_log(tmp_path, ring4_tex)
    assert code == 0, log[-2000:]
    assert "Overfull \\hbox" not in log


@pytest.mark.skipif(PDFLATEX is None, reason="pdflatex not installed")
@pytest.mark.parametrize("digits", [6, 12, 50])
def test_tetrahedron_table_fits_the_page(tmp_path, digits):
    spec = sc.solve(sc.hubbard(sc.tetrahedron()), electrons=[1, 2, 3])
    tex = latex_table(spec, point={"t": 1, "U": -4}, digits=digits, standalone=True)
    code, log = compile_log(tmp_path, tex)
    assert code == 0, log[-2000:]
    assert "Overfull \\hbox" not in log


@pytest.fixture(scope="module")
def analysis_doc(ring4):
    two = sc.solve(sc.hubbard(sc.chain(2)))
    rows = thermo_table(two, POINT, [sympy.Rational(1, 10), 1, 5], mus=[-3, 0, 2])
    gaps = [charge_gap(ring4, 4, POINT), pair_binding(ring4, 4, {"t": 1, "U": 8})]
    frags = [latex_transitions(transitions(two, None, "U", (-10, 10), {"t": 1}), 30),
             latex_gaps(gaps, 30), latex_thermo_table(rows, digits=12)]
    return latex_document(*frags, comment="test"), rows, gaps, frags


def test_analysis_tables_keep_every_minus(analysis_doc):
    doc, rows, gaps, frags = analysis_doc
    # gaps: the printed value is the gap's own value, sign included
    for cells, g in zip(table_rows(frags[1], r"\midrule", r"\bottomrule"), gaps):
        want = g.numeric(digits=30)
        got = number_from_cells(cells[2], cells[3])
        assert (got < 0) == (want < 0) and abs(float(got) - float(want)) < 1e-12
    printed = table_rows(doc)
    assert len(printed) == len(rows)
    columns = ("T", "mu", "energy", "entropy", "specific_heat", "double_occupancy",
               "density", "susceptibility")
    for cells, row in zip(printed, rows):
        assert len(cells) == 2 * len(columns)         # T = 1/10 and mu = -3 exact, as decimals
        for j, key in enumerate(columns):
            value = number_from_cells(cells[2 * j], cells[2 * j + 1])
            want = row[key]
            assert (value < 0) == (want < 0) and abs(float(value) - float(want)) \
                <= 1e-9 * max(1, abs(float(want)))
    assert any(number_from_cells(c[2], c[3]) < 0 for c in printed)      # mu = -3
    assert any(number_from_cells(c[4], c[5]) < 0 for c in printed)      # <H> < 0


def test_analysis_document_has_no_acos_operator_nor_file_paths(analysis_doc):
    doc = analysis_doc[0]
    assert r"\operatorname{acos}" not in doc and r"\operatorname{atan}" not in doc
    captions = re.findall(r"\\caption\{([^}]*)\}", doc)
    assert len(captions) == 3 and not any("docs/" in c or ".md" in c for c in captions)
    assert doc.startswith(f"% symcluster {sc.__version__}\n")


@pytest.mark.skipif(PDFLATEX is None, reason="pdflatex not installed")
def test_analysis_document_fits_the_page(tmp_path, analysis_doc):
    code, log = compile_log(tmp_path, analysis_doc[0])
    assert code == 0, log[-2000:]
    assert "Overfull \\hbox" not in log


def test_the_version_is_recorded_in_the_levels_table(ring4_tex):
    assert f"% symcluster {sc.__version__} energy table" in ring4_tex
    assert mpmath.mp.dps == 15      # untouched by printing
