"""Rich display of results in notebooks: compact reprs, LaTeX and HTML tables.

Used by the ``__repr__``, ``_repr_latex_`` and ``_repr_html_`` methods of
:class:`~symcluster.spectrum.Level`, :class:`~symcluster.spectrum.Spectrum` and the
analysis results.  Only sympy's printers are used; an implicit root is shown through its
sympy form (:class:`~symcluster.numeric.rootexpr.LevelRoot`: "root k of P(epsilon) = 0",
k counted from 0, the lowest).  Tables show at most :data:`MAX_ROWS` rows.
"""

from __future__ import annotations

import html

import sympy

__all__ = ["MAX_ROWS", "energy_expr", "tex", "qn_text", "qn_latex", "level_repr", "level_latex",
           "html_table", "short"]

#: Most rows of a displayed table (the rest is summarised in a last line).
MAX_ROWS = 60
#: Longest text of one energy in a repr before it is cut.
MAX_CHARS = 70


def energy_expr(energy):
    """The energy as a sympy expression (an implicit root as a LevelRoot)."""
    if hasattr(energy, "as_expr") and not isinstance(energy, sympy.Basic):
        return energy.as_expr()
    return energy


def tex(expr):
    """LaTeX of an expression, inverse trigonometric functions as arccos etc.

    Examples
    --------
    >>> "arccos" in tex(sympy.acos(sympy.Symbol("x")))
    True
    """
    return sympy.latex(energy_expr(expr), inv_trig_style="full")


def short(text, limit=MAX_CHARS):
    """``text`` cut to ``limit`` characters with an ellipsis.

    Examples
    --------
    >>> short("abcdef", 4)
    'abc…'
    """
    return text if len(text) <= limit else text[:limit - 1] + "…"


def _q(v):
    if isinstance(v, tuple):
        return "{" + ", ".join(map(str, v)) + "}"
    return str(v)


def qn_text(qn):
    """Quantum numbers as ``N=2, S=0, k=pi`` (no irrep dimension, no empty values)."""
    return ", ".join(f"{k}={_q(v)}" for k, v in qn.items()
                     if v is not None and k != "irrep_dim")


_QN_TEX = {"N": "N", "S": "S", "Sz": "S_z", "eta": r"\eta", "k": "k", "irrep": r"\Gamma"}


def qn_latex(qn):
    """Quantum numbers in LaTeX (math mode), e.g. ``N = 2,\\ S = 0``."""
    parts = []
    for key, v in qn.items():
        if v is None or key == "irrep_dim":
            continue
        name = _QN_TEX.get(key, r"\mathrm{" + key.replace("_", r"\_") + "}")
        if key == "irrep":
            val = r"\mathrm{" + str(v).replace("π", r"\pi ").replace("±", r"\pm ")\
                .replace("−", "-").replace(",", "{,}") + "}"
        elif isinstance(v, tuple):
            val = r"\{" + ", ".join(sympy.latex(x) for x in v) + r"\}"
        else:
            val = sympy.latex(v) if isinstance(v, sympy.Basic) else str(v)
        parts.append(f"{name} = {val}")
    return r",\ ".join(parts)


def level_repr(level):
    """One line: ``Level(E = ..., g = 2; N=1, S=1/2)``."""
    e = short(sympy.sstr(energy_expr(level.energy)))
    return f"Level(E = {e}, g = {level.degeneracy}; {qn_text(level.quantum_numbers)})"


def level_latex(level):
    """``$E = ...\\quad (g = 2;\\ N = 1,\\ S = 1/2)$``."""
    return (f"$E = {tex(level.energy)}\\quad "
            f"(g = {level.degeneracy};\\ {qn_latex(level.quantum_numbers)})$")


def html_table(header, rows, caption=None, total=None):
    """An HTML table; cells are escaped text except those given as ``("math", latex)``
    (shown as ``$...$`` for the notebook's MathJax).  ``total`` rows in all: a last line
    says how many were left out."""
    def cell(c):
        if isinstance(c, tuple) and c and c[0] == "math":
            return "$" + html.escape(c[1], quote=False) + "$"
        return html.escape(str(c), quote=False)
    out = ["<table>"]
    if caption:
        out.append(f"<caption>{html.escape(caption, quote=False)}</caption>")
    out.append("<tr>" + "".join(f"<th>{cell(h)}</th>" for h in header) + "</tr>")
    for r in rows[:MAX_ROWS]:
        out.append("<tr>" + "".join(f"<td>{cell(c)}</td>" for c in r) + "</tr>")
    total = len(rows) if total is None else total
    if total > min(len(rows), MAX_ROWS):
        out.append(f'<tr><td colspan="{len(header)}">… {total - min(len(rows), MAX_ROWS)} '
                   f"more rows</td></tr>")
    out.append("</table>")
    return "\n".join(out)
