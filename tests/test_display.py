"""Rich display: compact reprs, LaTeX and HTML of spectra, levels and analysis results.

Expected facts are structural (sizes, the absence of raw reprs and of sympy's operator
names); the one number checked is the dimer's charge gap at U = 3, t = 1, which is
sqrt(U^2 + 16 t^2) - 2t = 3 (two-site formulas, from memory).
"""

import html.parser

import sympy

import symcluster as sc
from symcluster.analysis import charge_gap, energy_derivative, ground_states
from symcluster.numeric.implicit import ImplicitRoot


class _Cells(html.parser.HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)


def _spec():
    return sc.solve(sc.hubbard(sc.ring(4)))


def test_spectrum_repr_is_compact():
    spec = _spec()
    text = repr(spec)
    # the issue measured about 29 kB for ring(4); one line now
    assert len(text) < 300 and "\n" not in text
    assert "ring(4)" in text and "256 states" in text and "couplings t, U" in text


def test_level_repr_is_one_line_with_quantum_numbers():
    lev = _spec().levels[-1]
    text = repr(lev)
    assert len(text) < 250 and text.startswith("Level(E = ")
    assert "N=" in text and "g = " in text


def test_latex_of_spectrum_and_level_is_math_without_operator_names():
    spec = _spec()
    tex = spec._repr_latex_()
    assert tex.startswith("$") and tex.endswith("$") and r"\begin{array}" in tex
    assert r"\operatorname" not in tex and "acos" not in tex
    lev = spec.levels[-1]
    assert lev._repr_latex_().startswith("$E = ")


def test_html_table_has_one_row_per_level_up_to_the_limit():
    from symcluster.display import MAX_ROWS
    spec = _spec()
    page = spec._repr_html_()
    parser = _Cells()
    parser.feed(page)
    rows = parser.tags.count("tr")
    # header + MAX_ROWS levels + one line saying how many more
    assert rows == 1 + min(len(spec.levels), MAX_ROWS) + (len(spec.levels) > MAX_ROWS)
    assert "more rows" in page


def test_implicit_root_levels_display_in_words():
    E, U = sympy.symbols("E U", real=True)
    lev = sc.Level(ImplicitRoot(sympy.Poly(E**5 - 5 * E**3 + 4 * E - U, E, U), 2), 1, {"N": 3})
    spec = sc.Spectrum(sc.hubbard(sc.chain(2)), [lev])
    assert r"\text{root } 2 \text{ of }" in spec._repr_latex_()
    assert "ImplicitRoot" not in lev._repr_latex_() and r"\mathtt" not in lev._repr_latex_()


def test_analysis_results_display_compactly():
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    gap = charge_gap(spec, 2, {"t": 1, "U": 3})
    assert abs(float(gap.value) - 3) < 1e-12
    text = repr(gap)
    assert len(text) < 250 and "Level(" not in text and "charge gap" in text
    assert gap._repr_latex_().startswith(r"$\text{charge gap}")
    assert "<table>" in gap._repr_html_()
    piece = ground_states(spec, 2, "U", (0, 10), {"t": 1})[0]
    assert "Level(" not in repr(piece) and "N=2" in repr(piece)
    d = energy_derivative(spec.levels[0], "U")
    assert repr(d).startswith("LevelDerivative(dE/dU = ")
    assert d._repr_latex_().startswith(r"$\frac{\partial E}{\partial U}")
