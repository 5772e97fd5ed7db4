"""LaTeX for analysis results: booktabs tables that compile with pdflatex.

Every function returns a LaTeX fragment; :func:`latex_document` wraps
fragments into a complete document (packages: amsmath, booktabs).
"""

import mpmath
import sympy

__all__ = ["latex_transitions", "latex_series", "latex_gaps", "latex_thermo_table",
           "latex_document"]


_TEXT_MAP = {"π": r"$\pi$", "±": r"$\pm$", "−": "-", "_": r"\_", "&": r"\&", "%": r"\%",
             "#": r"\#", "$": r"\$", "{": r"\{", "}": r"\}", "^": r"\^{}", "~": r"\~{}",
             "\\": r"\textbackslash{}"}
_SHOWN = ("N", "S", "Sz", "eta", "irrep")


def _text(value):
    """A label as LaTeX text mode, with the symbols the irrep labels use made safe."""
    return r"\text{" + "".join(_TEXT_MAP.get(ch, ch) if ord(ch) < 128 or ch in _TEXT_MAP
                               else "?" for ch in str(value)) + "}"


def _qn(level):
    parts = []
    for k in _SHOWN:
        if k not in level.quantum_numbers:
            continue
        v = level.quantum_numbers[k]
        name = {"S": "S", "N": "N", "eta": r"\eta", "Sz": "S_z"}.get(k)
        parts.append(f"{name}={sympy.latex(sympy.Rational(v))}" if name else
                     r"\text{irrep}=" + _text(v))
    return "$" + ",\\ ".join(parts) + "$"


def _label_set(levels):
    return "; ".join(sorted({_qn(l) for l in levels}))


def latex_transitions(points, digits=30, caption=None):
    """Table of transition points: exact value, ``digits`` digits, ground labels on each side."""
    cap = caption or "Ground-state transitions"
    rows = []
    for tr in points:
        exact = sympy.latex(tr.value)
        if tr.polynomial is not None and tr.polynomial.degree() > 2:
            k = getattr(tr.value, "index", None)
            which = f"real root no.~{k + 1} (ascending) of " if k is not None else "root of "
            exact = r"\text{" + which + "} " + sympy.latex(tr.polynomial.as_expr()) + " = 0"
        num = mpmath.nstr(tr.numeric(digits), digits)
        rows.append(f"${exact}$ & \\texttt{{{num}}} & {_label_set(tr.below_set)} & "
                    f"{_label_set(tr.above_set)} \\\\")
    var = sympy.latex(points[0].coupling) if points else "x"
    body = "\n".join(rows) if rows else r"\multicolumn{4}{c}{no transition} \\"
    return ("\\begin{table}[ht]\n\\centering\n\\small\n"
            "\\begin{tabular}{llll}\n\\toprule\n"
            f"${var}$ (exact) & ${var}$ ({digits} digits) & ground below & ground above \\\\\n"
            "\\midrule\n" + body + "\n\\bottomrule\n\\end{tabular}\n"
            f"\\caption{{{cap}}}\n\\end{{table}}\n")


def latex_series(expr, name="E", caption=None):
    """A displayed equation name = series (exact coefficients, no O() term)."""
    return f"\\begin{{equation}}\n{name} = {sympy.latex(expr)} + \\dots\n\\end{{equation}}\n"


def latex_gaps(results, digits=30, caption=None):
    """Table of GapResult objects: name, exact expression, value, validity."""
    rows = []
    for g in results:
        expr = sympy.latex(g.expr)
        num = mpmath.nstr(g.numeric(digits=digits), digits)
        rows.append(f"{g.name} & ${expr}$ & \\texttt{{{num}}} & {g.valid} \\\\")
    cap = caption or "Gaps (sign conventions in docs/analysis.md)"
    return ("\\begin{table}[ht]\n\\centering\n\\small\n\\begin{tabular}{llll}\n\\toprule\n"
            "quantity & exact & value & valid for \\\\\n\\midrule\n" + "\n".join(rows)
            + "\n\\bottomrule\n\\end{tabular}\n"
            f"\\caption{{{cap}}}\n\\end{{table}}\n")


_HEAD = {"T": "$T$", "mu": r"$\mu$", "lnZ": r"$\ln Z$", "energy": r"$\langle H\rangle$",
         "entropy": "$S$", "specific_heat": "$C$", "double_occupancy": "$D$",
         "density": r"$\langle N\rangle$", "magnetization": "$m$", "susceptibility": r"$\chi$"}


def latex_thermo_table(rows, columns=("T", "mu", "energy", "entropy", "specific_heat",
                                      "double_occupancy", "density", "susceptibility"),
                       digits=8, caption=None):
    """Booktabs table of thermo_table rows (numbers to ``digits`` digits)."""
    head = " & ".join(_HEAD.get(c, c) for c in columns)
    lines = []
    for r in rows:
        cells = []
        for c in columns:
            v = r[c]
            cells.append(mpmath.nstr(v, digits) if isinstance(v, mpmath.mpf)
                         else f"${sympy.latex(sympy.sympify(v))}$")
        lines.append(" & ".join(cells) + r" \\")
    cap = caption or "Thermodynamics ($k_B = 1$)"
    return ("\\begin{table}[ht]\n\\centering\n\\small\n"
            f"\\begin{{tabular}}{{{'r' * len(columns)}}}\n\\toprule\n{head} \\\\\n\\midrule\n"
            + "\n".join(lines) + "\n\\bottomrule\n\\end{tabular}\n"
            f"\\caption{{{cap}}}\n\\end{{table}}\n")


def latex_document(*fragments, comment=None):
    """A complete pdflatex document containing the fragments."""
    from symcluster.version import version_line
    head = f"% written by {version_line()}\n"
    head += "".join(f"% {line}\n" for line in (comment or "").splitlines())
    return (head + "\\documentclass{article}\n\\usepackage{amsmath}\n\\usepackage{booktabs}\n"
            "\\usepackage[margin=2cm]{geometry}\n\\begin{document}\n"
            + "\n".join(fragments) + "\n\\end{document}\n")
