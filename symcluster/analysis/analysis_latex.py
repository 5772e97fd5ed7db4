"""LaTeX for analysis results: booktabs tables that compile with pdflatex and fit the page.

Every function returns a LaTeX fragment; :func:`latex_document` wraps fragments into a
complete document.  Numbers are printed as in the levels table
(:mod:`symcluster.export.texnum`): aligned on the decimal point, digits grouped in threes,
a mathematical minus, long fractions continued on the next line of their cell.
Expressions use ``\\arccos``-style inverse functions.  The packages a fragment needs are
those of :data:`symcluster.export.texnum.TABLE_PACKAGES`.
"""

import sympy

from symcluster.export.latex import name_subexpressions
from symcluster.export.texnum import (TABLE_PACKAGES, number_cell, number_columns,
                                      mulliken_tex)
from symcluster.version import __version__

__all__ = ["latex_transitions", "latex_series", "latex_gaps", "latex_thermo_table",
           "latex_document"]


_TEXT_MAP = {"π": r"$\pi$", "±": r"$\pm$", "−": r"$-$", "_": r"\_", "&": r"\&", "%": r"\%",
             "#": r"\#", "$": r"\$", "{": r"\{", "}": r"\}", "^": r"\^{}", "~": r"\~{}",
             "\\": r"\textbackslash{}"}
_SHOWN = ("N", "S", "Sz", "eta", "irrep")
#: text width of the documents in em of the table font (\small, 9 pt, on 2 cm margins)
_WIDTH_EM = 52


def _tex(expr):
    """LaTeX of an exact expression, inverse functions written arccos, arcsin, arctan."""
    return sympy.latex(expr, inv_trig_style="full")


def _tex_breakable(expr):
    """LaTeX that TeX can break across lines: long fractions as ``\\frac{4}{3} X``."""
    return sympy.latex(expr, inv_trig_style="full", long_frac_ratio=2)


def _text(value):
    """A label as LaTeX text mode, with the symbols the irrep labels use made safe."""
    return r"\text{" + "".join(_TEXT_MAP.get(ch, ch) if ord(ch) < 128 or ch in _TEXT_MAP
                               else "?" for ch in str(value)) + "}"


def _qn(level):
    parts = []
    qn = level.quantum_numbers
    for k in _SHOWN:
        if k not in qn:
            continue
        v = qn[k]
        name = {"S": "S", "N": "N", "eta": r"\eta", "Sz": "S_z"}.get(k)
        if name:
            parts.append(f"{name}={_tex(sympy.Rational(v))}")
        elif qn.get("mulliken"):
            parts.append(mulliken_tex(qn["mulliken"]))
        else:
            parts.append(r"\text{irrep}=" + _text(v))
    return "$" + ",\\ ".join(parts) + "$"


def _label_set(levels):
    return "; ".join(sorted({_qn(l) for l in levels}))


def _digits_per_line(n_numbers, other_em, digits):
    """Fraction digits per line so that ``n_numbers`` numeric columns fit the width."""
    free = (_WIDTH_EM - other_em) / max(n_numbers, 1) - 3.5
    return max(3, min(int(digits), int(free / 0.56)))


def _table(cols, head, rows, caption, long=False, after=""):
    """A booktabs table; ``long``: a longtable whose header repeats on every page."""
    body = "\n".join(rows)
    if long:
        return ("\\begingroup\\small\n\\begin{longtable}{" + cols + "}\n"
                f"\\caption{{{caption}}}\\\\\n\\toprule\n{head} \\\\\n\\midrule\n\\endfirsthead\n"
                f"\\toprule\n{head} \\\\\n\\midrule\n\\endhead\n\\bottomrule\n\\endlastfoot\n"
                + body + "\n\\end{longtable}\n\\endgroup\n")
    return ("\\begin{table}[ht]\n\\centering\n\\small\n"
            f"\\begin{{tabular}}{{{cols}}}\n\\toprule\n{head} \\\\\n\\midrule\n"
            + body + "\n\\bottomrule\n\\end{tabular}\n" + after +
            f"\\caption{{{caption}}}\n\\end{{table}}\n")


def latex_transitions(points, digits=30, caption=None):
    """Table of transition points: exact value, ``digits`` digits, ground labels on each side.

    Examples
    --------
    >>> latex_transitions([]).count("no transition")
    1
    """
    cap = caption or "Ground-state transitions"
    per_line = _digits_per_line(1, 30, digits)
    rows = []
    for tr in points:
        exact = _tex(tr.value)
        if tr.polynomial is not None and tr.polynomial.degree() > 2:
            k = getattr(tr.value, "index", None)
            which = f"real root no.~{k + 1} (ascending) of " if k is not None else "root of "
            exact = r"\text{" + which + "} " + _tex(tr.polynomial.as_expr()) + " = 0"
        rows.append(f"${exact}$ & {number_cell(tr.numeric(digits), digits)} & "
                    f"{_label_set(tr.below_set)} & {_label_set(tr.above_set)} \\\\")
    var = _tex(points[0].coupling) if points else "x"
    if not rows:
        rows = [r"\multicolumn{5}{c}{no transition} \\"]
    cols = (r">{\raggedright\arraybackslash}p{12em}" + number_columns(per_line)
            + r">{\raggedright\arraybackslash}p{9em}>{\raggedright\arraybackslash}p{9em}")
    head = (f"${var}$ (exact) & \\multicolumn{{2}}{{c}}{{${var}$ ({digits} digits)}} & "
            "ground below & ground above")
    return _table(cols, head, rows, cap)


def latex_series(expr, name="E", caption=None):
    """A displayed equation name = series (exact coefficients, no O() term)."""
    return f"\\begin{{equation}}\n{name} = {_tex(expr)} + \\dots\n\\end{{equation}}\n"


def latex_gaps(results, digits=30, caption=None):
    """Table of GapResult objects: name, exact expression, value, validity.

    Examples
    --------
    >>> "Gaps" in latex_gaps([])
    True
    """
    per_line = _digits_per_line(1, 38, digits)
    taken = {x.name for g in results for x in sympy.sympify(g.expr).free_symbols}
    exprs, defs = name_subexpressions([sympy.sympify(g.expr) for g in results], taken,
                                      min_count=1)
    rows = []
    for g, expr in zip(results, exprs):
        rows.append(f"{_text(g.name)} & ${_tex_breakable(expr)}$ & "
                    f"{number_cell(g.numeric(digits=digits), digits)} & {_text(g.valid)} \\\\")
    cap = caption or "Gaps and binding energies"
    cols = (r">{\raggedright\arraybackslash}p{7em}>{\raggedright\arraybackslash}p{20em}"
            + number_columns(per_line) + r">{\raggedright\arraybackslash}p{8em}")
    head = r"quantity & exact & \multicolumn{2}{c}{value} & valid for"
    where = ""
    if defs:
        where = ("\\par\\medskip{\\raggedright where "
                 + ", ".join(f"${_tex(n)} = {_tex_breakable(v)}$" for n, v in defs)
                 + ".\\par}\n")
    return _table(cols, head, rows, cap, after=where)


def _terminating(value):
    """``whole & fraction`` of an exact rational with a finite decimal expansion, else None."""
    if isinstance(value, (float, bool)) or hasattr(value, "_mpf_"):
        return None
    try:
        r = sympy.Rational(value)
    except (TypeError, ValueError):
        return None
    q, twos, fives = int(r.q), 0, 0
    while q % 2 == 0:
        q, twos = q // 2, twos + 1
    while q % 5 == 0:
        q, fives = q // 5, fives + 1
    if q != 1:
        return None
    places = max(twos, fives, 1)
    scaled = abs(int(r * 10 ** places))
    whole, frac = divmod(scaled, 10 ** places)
    return ("-" if r < 0 else "") + f"{whole} & {frac:0{places}d}"


_HEAD = {"T": "$T$", "mu": r"$\mu$", "lnZ": r"$\ln Z$", "energy": r"$\langle H\rangle$",
         "entropy": "$S$", "specific_heat": "$C$", "double_occupancy": "$D$",
         "density": r"$\langle N\rangle$", "magnetization": "$m$", "susceptibility": r"$\chi$"}


def latex_thermo_table(rows, columns=("T", "mu", "energy", "entropy", "specific_heat",
                                      "double_occupancy", "density", "susceptibility"),
                       digits=8, caption=None):
    """Booktabs longtable of thermo_table rows (numbers to ``digits`` digits).

    Examples
    --------
    >>> import mpmath
    >>> tex = latex_thermo_table([{"T": mpmath.mpf(1), "energy": mpmath.mpf(-2.5)}],
    ...                          columns=("T", "energy"), digits=3)
    >>> "-2 & 5 " in tex
    True
    """
    head = " & ".join(r"\multicolumn{2}{c}{" + _HEAD.get(c, _text(c)) + "}" for c in columns)
    per_line = _digits_per_line(len(columns), 0, digits)
    lines = []
    for r in rows:
        cells = []
        for c in columns:
            v = r[c]
            exact = _terminating(v)
            if exact is not None:
                cells.append(exact)
            elif isinstance(v, float) or hasattr(v, "_mpf_"):
                cells.append(number_cell(v, digits))
            else:
                cells.append(r"\multicolumn{2}{c}{$" + _tex(sympy.sympify(v)) + "$}")
        lines.append(" & ".join(cells) + r" \\")
    cap = caption or "Thermodynamics ($k_B = 1$)"
    return _table(number_columns(per_line) * len(columns), head, lines, cap, long=True)


def latex_document(*fragments, comment=None):
    """A complete pdflatex document containing the fragments.

    The first line records the symcluster version; ``comment`` follows as ``%`` lines.

    Examples
    --------
    >>> latex_document("x").splitlines()[0].startswith("% symcluster ")
    True
    """
    head = f"% symcluster {__version__}\n"
    head += "".join(f"% {line}\n" for line in (comment or "").splitlines())
    return (head + "\\documentclass{article}\n\\usepackage[T1]{fontenc}\n"
            "\\IfFileExists{lmodern.sty}{\\usepackage{lmodern}}{}\n" + TABLE_PACKAGES + "\n"
            "\\usepackage[margin=2cm]{geometry}\n\\begin{document}\n"
            + "\n".join(fragments) + "\n\\end{document}\n")
