"""Tests of symcluster.export.latex (booktabs/longtable tables, shared names, compilation)."""

import shutil
import subprocess

import pytest
import sympy

from symcluster.lattice.clusters import chain
from symcluster.export.latex import latex_table, name_subexpressions, tex_escape
from symcluster.models import hubbard
from symcluster.spectrum import Level, Spectrum, VerificationReport

from helpers_export import DELTA, E, R, U, t, two_site_spectrum


def _table_rows(tex):
    body = tex.split(r"\endlastfoot", 1)[1].split(r"\end{longtable}", 1)[0]
    return [l for l in body.splitlines() if l.endswith(r"\\")]


def test_booktabs_rules_and_columns():
    tex = latex_table(two_site_spectrum(), point={"t": 1, "U": 4})
    for rule in (r"\toprule", r"\midrule", r"\bottomrule"):
        assert rule in tex
    assert r"$\eta$" in tex and r"${}^{2S+1}\Gamma$" in tex
    rows = _table_rows(tex)
    assert len(rows) == 10
    # the triplet: S = 1 and multiplicity 3 as a superscript on its irrep
    triplet = [r for r in rows if r.startswith("$2$ & $1$")][0]
    assert r"${}^{3}\mathrm{B}$" in triplet and "& $3$ &" in triplet


def test_shared_square_root_is_named_once_and_defined():
    tex = latex_table(two_site_spectrum())
    rows = _table_rows(tex)
    assert not any(r"\sqrt" in r for r in rows)
    assert sum(r"\frac{w}{2}" in r for r in rows) == 2
    assert r"where $w = \sqrt{U^{2} + 16 t^{2}}$" in tex
    assert r"\Delta" not in tex       # Delta reads as a gap: shared names use w


def test_two_names_are_numbered_and_nested_definitions_use_them():
    a = sympy.sqrt(U**2 + 16 * t**2)
    b = sympy.sqrt(U**2 + 4 * t**2 + a)
    new, defs = name_subexpressions([a + b, a - b, 2 * b])
    names = [d[0].name for d in defs]
    assert names == ["w_1", "w_2"]
    d1, d2 = (d[0] for d in defs)
    assert defs[0][1] == a
    assert defs[1][1] == sympy.sqrt(U**2 + 4 * t**2 + d1)
    assert new == [d1 + d2, d1 - d2, 2 * d2]


def test_repeated_acos_argument_is_named():
    arg = (U**3 - 9 * U * t**2) / (U**2 + 3 * t**2) ** R(3, 2)
    exprs = [U / 3 + sympy.cos(sympy.acos(arg) / 3 + 2 * sympy.pi * k / 3) for k in range(3)]
    new, defs = name_subexpressions(exprs)
    assert any(v == sympy.sqrt(U**2 + 3 * t**2) for _, v in defs)
    assert all(not e.has(sympy.sqrt(U**2 + 3 * t**2)) for e in new)
    assert len(defs) == 2 and all(len(e.atoms(sympy.acos)) == 1 for e in new)
    acos_args = {next(iter(e.atoms(sympy.acos))).args[0] for e in new}
    assert acos_args == {defs[1][0]}


def test_equal_levels_print_identically_whatever_their_form():
    p2 = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    form1 = U / 2 - DELTA / 2
    form2 = sympy.Mul(R(1, 2), U - DELTA, evaluate=False)   # same number, other tree
    assert form1 != form2 and sympy.simplify(form1 - form2) == 0
    levels = [Level(form1, 1, {"N": 2, "S": R(0)}, p2), Level(form2, 1, {"N": 2, "S": R(1)}, p2)]
    spec = Spectrum(hubbard(chain(2)), levels, [], VerificationReport(), {})
    rows = _table_rows(latex_table(spec))
    assert rows[0].split("&")[4] == rows[1].split("&")[4]


def test_implicit_roots_reference_a_numbered_polynomial_list():
    tex = latex_table(two_site_spectrum(with_root=True))
    assert r"root 1 of $P_{1}$" in tex
    assert tex.count(r"\item $P_{1}(E) =") == 1
    assert "ascending order" in tex


def test_verification_and_symmetries_are_comments():
    tex = latex_table(two_site_spectrum())
    comment_lines = [l for l in tex.splitlines() if l.startswith("%")]
    assert any("verified: 1x eigenvalues" in l for l in comment_lines)
    assert any("sector_dim=4" in l for l in comment_lines)
    assert not any("verified:" in l for l in tex.splitlines() if not l.startswith("%"))


def test_escaping_of_text():
    assert tex_escape("a_b & 50% #1 {x} ~ ^ \\") == \
        r"a\_b \& 50\% \#1 \{x\} \textasciitilde{} \^{} \textbackslash{}"
    assert tex_escape("line\nbreak") == "line break"


def test_irrep_labels_in_math_mode():
    from symcluster.export.latex import _irrep_tex
    assert _irrep_tex("A1g") == r"\mathrm{A}_{1g}"
    assert _irrep_tex("k=±π/2") == r"k= \pm  \pi /2"
    assert _irrep_tex("k=π,−") == r"k= \pi {,} -"
    assert _irrep_tex("E_u & x") == r"\text{E\_u \& x}"


def test_values_use_latex_exponents():
    levels = [Level(t * R(1, 10**8), 1, {"N": 1, "S": R(1, 2)})]
    spec = Spectrum(hubbard(chain(2)), levels, [], VerificationReport(), {})
    row = _table_rows(latex_table(spec, point={"t": 3, "U": 1}, digits=5))[0]
    assert r"3 & 0\times 10^{-8}" in row


def _long_spectrum():
    base = two_site_spectrum(with_root=True)
    levels = []
    for k in range(12):
        for lev in base.levels:
            q = dict(lev.quantum_numbers, N=lev.quantum_numbers["N"] + 5 * k)
            q["irrep"] = ["A1g", "k=±π/2", "E_u & x", "k=π,−"][k % 4]
            e = lev.energy if not lev.is_closed_form else lev.energy + k * U
            levels.append(Level(e, lev.degeneracy, q, None))
    return Spectrum(base.model, levels, base.symmetries, base.verification, {})


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex not installed")
@pytest.mark.parametrize("standalone", [True, False])
def test_compiles_with_pdflatex(tmp_path, standalone):
    spec = _long_spectrum()
    assert len(spec.levels) > 100
    tex = latex_table(spec, point={"t": 1, "U": 4}, standalone=standalone)
    if not standalone:
        tex = ("\\documentclass{article}\n\\usepackage{amsmath,booktabs,longtable,array}\n"
               "\\begin{document}\n" + tex + "\\end{document}\n")
    (tmp_path / "t.tex").write_text(tex)
    run = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "t.tex"],
                         cwd=tmp_path, capture_output=True, text=True, timeout=120)
    assert run.returncode == 0, run.stdout[-3000:]
    assert (tmp_path / "t.pdf").stat().st_size > 1000


@pytest.fixture(scope="module")
def four_site_three_labels():
    """A 4-site ring with bonds a, b, b, c and site energies e on sites 0 and 2, N = 3.

    Its S = 1/2 levels are roots of one irreducible polynomial of degree 20 in E with
    about 12000 terms: written on one line, that is ~400,000 characters, twice the
    input buffer of pdflatex (200,000).
    """
    import symcluster as sc
    c = sc.cluster(4, bonds=[(0, 1, "a"), (1, 2, "b"), (2, 3, "b"), (3, 0, "c")],
                   site_labels={0: "e", 2: "e"})
    spec = sc.solve(sc.hubbard(c), electrons=[3])
    return latex_table(spec, point={"a": 1, "b": "-1/2", "c": "3/2", "e": "1/1000", "U": 4},
                       standalone=True)


def test_no_source_line_is_longer_than_100_characters(four_site_three_labels):
    lines = four_site_three_labels.splitlines()
    assert max(len(l) for l in lines) <= 100      # the bound documented in docs/outputs.md
    # the long polynomial is written coefficient by coefficient in powers of E; it is monic
    assert r"\item[] $p_{20} = 1$," in lines
    assert sum(l.startswith(r"\item[] $p_{") for l in lines) <= 21
    # wrapping never creates a paragraph break inside the table or a formula
    body = four_site_three_labels.split(r"\begin{longtable}", 1)[1].split(r"\end{longtable}")[0]
    assert "\n\n" not in body


@pytest.mark.skipif(shutil.which("pdflatex") is None, reason="pdflatex not installed")
def test_document_with_a_very_long_polynomial_compiles(tmp_path, four_site_three_labels):
    (tmp_path / "m.tex").write_text(four_site_three_labels)
    run = subprocess.run(["pdflatex", "-interaction=nonstopmode", "-halt-on-error", "m.tex"],
                         cwd=tmp_path, capture_output=True, text=True, timeout=300)
    assert run.returncode == 0, run.stdout[-3000:]
    assert (tmp_path / "m.pdf").stat().st_size > 1000
    log = (tmp_path / "m.log").read_text(errors="replace")
    assert "Overfull" not in log                   # the formulas broke into lines


def test_wrapping_keeps_comments_control_words_and_paragraphs():
    from symcluster.export.latex import wrap_tex_lines
    comment = "% " + " ".join(["word"] * 40)                 # 202 characters
    wrapped = wrap_tex_lines(comment, width=50).splitlines()
    assert len(wrapped) > 1 and all(l.startswith("% ") for l in wrapped)
    assert " ".join(l[2:] for l in wrapped) == comment[2:]
    formula = "$" + " + ".join(rf"\frac{{x_{{{k}}}}}{{2}}" for k in range(30)) + "$"
    lines = wrap_tex_lines(formula, width=60).splitlines()
    assert all(len(l) <= 60 for l in lines)
    assert all(l.startswith("+ ") for l in lines[1:])      # broken between terms
    assert " ".join(lines) == formula
    digits = "$" + "7" * 130 + "$"                          # no space at all
    lines = wrap_tex_lines(digits, width=50).splitlines()
    assert all(len(l) <= 50 for l in lines)
    assert "".join(l[:-1] if l.endswith("%") else l for l in lines) == digits
    word = "x " + "\\" + "a" * 80 + " y"                     # one long control word
    assert "\\" + "a" * 80 in wrap_tex_lines(word, width=40)
    assert "" not in wrap_tex_lines("a " * 100, width=30).splitlines()
