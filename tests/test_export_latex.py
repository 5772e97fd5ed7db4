"""Tests of symcluster.export.latex (booktabs/longtable tables, shared names, compilation)."""

import shutil
import subprocess

import pytest
import sympy

from symcluster.clusters import chain
from symcluster.export.latex import latex_table, name_subexpressions, tex_escape
from symcluster.models import hubbard
from symcluster.spectrum import Level, Spectrum, VerificationReport

from test_export_text import DELTA, E, R, U, t, two_site_spectrum


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
    assert sum(r"\Delta" in r for r in rows) == 2
    assert r"where $\Delta = \sqrt{U^{2} + 16 t^{2}}$" in tex


def test_two_names_are_numbered_and_nested_definitions_use_them():
    a = sympy.sqrt(U**2 + 16 * t**2)
    b = sympy.sqrt(U**2 + 4 * t**2 + a)
    new, defs = name_subexpressions([a + b, a - b, 2 * b])
    names = [d[0].name for d in defs]
    assert names == ["Delta_1", "Delta_2"]
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
    assert r"$3.0\times 10^{-8}$" in row


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
