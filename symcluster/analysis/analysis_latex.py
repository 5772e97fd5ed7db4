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


#: The number columns: aligned on the decimal point, in math mode (a true minus sign);
#: dcolumn is part of every LaTeX installation's required tools bundle.
NUMBER_COLUMN = r"D{.}{.}{-1}"
#: Most digits a number of an analysis table shows (the text output has them all).
TABLE_DIGITS = 12


def number_cell(value, digits):
    """A number for a D column: plain decimal, exponent as ``\\times 10^{k}``.

    Examples
    --------
    >>> print(number_cell(mpmath.mpf("-1.5e-7"), 5))
    -1.5\\times 10^{-7}
    """
    text = mpmath.nstr(value, min(digits, TABLE_DIGITS))
    mant, _, exp = text.partition("e")
    return mant + (rf"\times 10^{{{int(exp)}}}" if exp else "")


def _fit(tabular):
    """Scale a tabular down to the line width if it is wider (never up)."""
    return (r"\resizebox{\ifdim\width>\linewidth\linewidth\else\width\fi}{!}{%" + "\n"
            + tabular + "}\n")


def _tex(expr):
    return sympy.latex(expr, inv_trig_style="full")


def latex_transitions(points, digits=30, caption=None):
    """Table of transition points: exact value, ``digits`` digits, ground labels on each side."""
    cap = caption or "Ground-state transitions"
    rows = []
    for tr in points:
        exact = _tex(tr.value)
        if tr.polynomial is not None and tr.polynomial.degree() > 2:
            k = getattr(tr.value, "index", None)
            which = f"root {k} (counted from 0, the lowest) of " if k is not None else "root of "
            exact = r"\text{" + which + "} " + _tex(tr.polynomial.as_expr()) + " = 0"
        num = number_cell(tr.numeric(digits), digits)
        rows.append(f"${exact}$ & {num} & {_label_set(tr.below_set)} & "
                    f"{_label_set(tr.above_set)} \\\\")
    var = sympy.latex(points[0].coupling) if points else "x"
    body = "\n".join(rows) if rows else r"\multicolumn{4}{c}{no transition} \\"
    shown = min(digits, TABLE_DIGITS)
    tab = ("\\begin{tabular}{>{\\raggedright\\arraybackslash}p{0.38\\linewidth}"
           + NUMBER_COLUMN + "ll}\n\\toprule\n"
           f"${var}$ (exact) & \\multicolumn{{1}}{{c}}{{${var}$ ({shown} digits)}} & ground below"
           " & ground above \\\\\n\\midrule\n" + body + "\n\\bottomrule\n\\end{tabular}")
    return ("\\begin{table}[ht]\n\\centering\n\\small\n" + _fit(tab)
            + f"\\caption{{{cap}}}\n\\end{{table}}\n")


def latex_series(expr, name="E", caption=None):
    """A displayed equation name = series (exact coefficients, no O() term)."""
    return f"\\begin{{equation}}\n{name} = {_tex(expr)} + \\dots\n\\end{{equation}}\n"


def latex_gaps(results, digits=30, caption=None):
    """Table of GapResult objects: name, exact expression, value, validity."""
    rows = []
    for g in results:
        expr = _tex(g.expr)
        num = number_cell(g.numeric(digits=digits), digits)
        rows.append(f"{g.name} & ${expr}$ & {num} & {g.valid} \\\\")
    cap = caption or ("Charge gap $E_0(N+1) + E_0(N-1) - 2E_0(N)$, spin gap and "
                      "pair-binding energy")
    tab = ("\\begin{tabular}{l>{\\raggedright\\arraybackslash}p{0.45\\linewidth}"
           + NUMBER_COLUMN + ">{\\raggedright\\arraybackslash}p{0.15\\linewidth}}\n\\toprule\n"
           "quantity & exact & \\multicolumn{1}{c}{value} & valid for \\\\\n\\midrule\n"
           + "\n".join(rows) + "\n\\bottomrule\n\\end{tabular}")
    return ("\\begin{table}[ht]\n\\centering\n\\small\n" + _fit(tab)
            + f"\\caption{{{cap}}}\n\\end{{table}}\n")


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
            cells.append(number_cell(v, digits) if isinstance(v, mpmath.mpf)
                         else rf"\multicolumn{{1}}{{c}}{{${_tex(sympy.sympify(v))}$}}")
        lines.append(" & ".join(cells) + r" \\")
    cap = caption or "Thermodynamics ($k_B = 1$)"
    head = " & ".join(rf"\multicolumn{{1}}{{c}}{{{_HEAD.get(c, c)}}}" for c in columns)
    tab = (f"\\begin{{tabular}}{{{NUMBER_COLUMN * len(columns)}}}\n\\toprule\n{head} \\\\\n"
           "\\midrule\n" + "\n".join(lines) + "\n\\bottomrule\n\\end{tabular}")
    return ("\\begin{table}[ht]\n\\centering\n\\small\n" + _fit(tab)
            + f"\\caption{{{cap}}}\n\\end{{table}}\n")


def latex_document(*fragments, comment=None):
    """A complete pdflatex document containing the fragments."""
    from symcluster.version import version_line
    head = f"% written by {version_line()}\n"
    head += "".join(f"% {line}\n" for line in (comment or "").splitlines())
    return (head + "\\documentclass{article}\n\\usepackage{amsmath}\n\\usepackage{booktabs}\n"
            "\\usepackage{array,dcolumn,graphicx}\n"
            "\\usepackage[margin=2cm]{geometry}\n\\begin{document}\n"
            + "\n".join(fragments) + "\n\\end{document}\n")
