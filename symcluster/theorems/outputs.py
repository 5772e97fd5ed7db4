"""Outputs of the tower and theorem reports: LaTeX (booktabs), JSON and a plot.

* :func:`towers_latex`, :func:`theorems_latex`: complete documents (article, amsmath,
  booktabs) that compile with pdflatex;
* :func:`towers_json`, :func:`theorems_json`: JSON text (format names
  ``symcluster-towers`` / ``symcluster-theorems``, version 1; exact numbers as strings);
* :func:`plot_towers`: E_min(S) - E_0 for every S against the coupling, crossings marked,
  on a given matplotlib Axes or a new Figure (no pyplot, no backend switch).

Files are written by the command line through
:func:`symcluster.export.files.write_texts_atomic` (all or nothing).
"""

import json

import mpmath
import sympy

from symcluster.errors import ModelError
from symcluster.export.latex import tex_escape

__all__ = ["towers_latex", "theorems_latex", "towers_json", "theorems_json", "plot_towers"]

_HEAD = ("\\documentclass{article}\n\\usepackage{amsmath}\n\\usepackage{booktabs}\n"
         "\\usepackage[margin=2cm]{geometry}\n\\begin{document}\n")


def _m(expr):
    return "$" + sympy.latex(expr) + "$"


def _iv_tex(iv):
    if iv.is_point:
        return "$\\{" + sympy.latex(iv.lower) + "\\}$"
    return ("$" + ("[" if iv.lower_closed else "(") + sympy.latex(iv.lower) + ",\\ "
            + sympy.latex(iv.upper) + ("]" if iv.upper_closed else ")") + "$")


def towers_latex(report):
    """A complete LaTeX document with the verdicts and crossings of a TowerReport.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.ring(4)), fixed={"t": 1})
    >>> tex = towers_latex(sc.towers(spec, 3, "U", (0, 100), {"t": 1}))
    >>> "\\\\toprule" in tex and "\\\\sqrt{7}" in tex
    True
    """
    q = "S" if report.kind == "spin" else "\\eta"
    lines = [_HEAD, "% certified: every verdict holds at every point of its interval\n",
             f"\\section*{{{'Spin' if report.kind == 'spin' else 'Pseudospin'} tower, "
             f"$N = {report.n_electrons}$}}\n",
             f"Swept ${sympy.latex(report.coupling)}$ on {_iv_tex(report.interval)}; fixed: "
             + (", ".join(f"${k} = {sympy.latex(v)}$" for k, v in report.fixed.items())
                or "none") + ". Overall: " + ("holds" if report.holds else "fails") + ".\n\n",
             "\\begin{tabular}{llll}\n\\toprule\n"
             f"${q}$ & ${q}+1$ & interval & verdict \\\\\n\\midrule\n"]
    for v in report.verdicts:
        lines.append(f"{_m(v.value)} & {_m(v.next_value)} & {_iv_tex(v.interval)} & "
                     f"{tex_escape(v.verdict)} \\\\\n")
    lines.append("\\bottomrule\n\\end{tabular}\n\n")
    if report.crossings:
        lines.append("\\begin{tabular}{lll}\n\\toprule\n"
                     f"${q}$ & ${q}+1$ & crossing point \\\\\n\\midrule\n")
        for c in report.crossings:
            lines.append(f"{_m(c['value'])} & {_m(c['next_value'])} & {_m(c['at'])} "
                         f"$\\approx {mpmath.nstr(c['numeric'], 12)}$ \\\\\n")
        lines.append("\\bottomrule\n\\end{tabular}\n")
    lines.append("\\end{document}\n")
    return "".join(lines)


def theorems_latex(results):
    """A complete LaTeX document with one row per theorem (hypotheses, conclusion).

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(3)), fixed={"t": 1})
    >>> "\\\\bottomrule" in theorems_latex(sc.theorem_report(spec, fixed={"t": 1},
    ...                                                       theorems=["lieb-spin"]))
    True
    """
    lines = [_HEAD, "\\section*{Theorem checks}\n",
             "\\begin{tabular}{p{5cm}p{5cm}l}\n\\toprule\n"
             "theorem & hypotheses not met & conclusion \\\\\n\\midrule\n"]
    for r in results:
        lines.append(f"{tex_escape(r.name)} & "
                     f"{tex_escape('; '.join(r.failed_hypotheses) or 'all met')} & "
                     f"{tex_escape(r.conclusion)} \\\\\n")
    lines.append("\\bottomrule\n\\end{tabular}\n\n\\begin{itemize}\n")
    for r in results:
        for e in r.evidence:
            lines.append(f"\\item {tex_escape(r.name)}: {tex_escape(e)}\n")
    lines.append("\\item (none)\n" if not any(r.evidence for r in results) else "")
    lines.append("\\end{itemize}\n\\end{document}\n")
    return "".join(lines)


def towers_json(report):
    """JSON text of a TowerReport (``TowerReport.as_dict``).

    Examples
    --------
    >>> import json, symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), fixed={"t": 1})
    >>> json.loads(towers_json(sc.towers(spec, 2, "U", (0, 1), {"t": 1})))["holds"]
    True
    """
    return json.dumps(report.as_dict(), indent=1, ensure_ascii=False) + "\n"


def theorems_json(results):
    """JSON text of a theorem report.

    Examples
    --------
    >>> import json, symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), fixed={"t": 1})
    >>> rep = sc.theorem_report(spec, fixed={"t": 1}, theorems=["yang-eta"])
    >>> json.loads(theorems_json(rep))["theorems"][0]["conclusion"]
    'verified'
    """
    return json.dumps({"format": "symcluster-theorems", "version": 1,
                       "theorems": [r.as_dict() for r in results]},
                      indent=1, ensure_ascii=False) + "\n"


def plot_towers(report, ax=None, n_points=101):
    """Plot E_min(value) - E_0 against the coupling for every value, crossings marked.

    Parameters
    ----------
    report : TowerReport
    ax : matplotlib Axes, optional
        Drawn into; default a new Figure (made without pyplot).
    n_points : int

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.ring(4)), fixed={"t": 1})
    >>> fig = plot_towers(sc.towers(spec, 3, "U", (0, 30), {"t": 1}))
    >>> len(fig.axes[0].lines) >= 2
    True
    """
    try:
        from matplotlib.figure import Figure
    except ImportError:
        raise ModelError("plotting needs matplotlib; install the extra: pip install "
                         "'symcluster[plot]'") from None
    lo, hi = report.interval.lower, report.interval.upper
    if lo in (sympy.oo, -sympy.oo) or hi in (sympy.oo, -sympy.oo):
        raise ModelError("the plot needs a bounded interval; make the report on (lo, hi)")
    if ax is None:
        fig = Figure(figsize=(6, 4))
        ax = fig.add_subplot()
    else:
        fig = ax.figure
    xs = [lo + (hi - lo) * sympy.Rational(k, n_points - 1) for k in range(n_points)]
    curves = {}
    for v in report.values:
        ys = []
        for x in xs:
            piece = _piece_at(report.envelope(v), x)
            pt = {report.coupling: x}
            pt.update({s: report.fixed[s.name] for s in piece.level.polynomial.gens[1:]
                       if s.name in report.fixed})
            ys.append(piece.level.numeric(pt, digits=15))
        curves[v] = ys
    e0 = [min(curves[v][k] for v in curves) for k in range(n_points)]
    fx = [float(x) for x in xs]
    q = "S" if report.kind == "spin" else "\\eta"
    for v, ys in curves.items():
        ax.plot(fx, [float(y - b) for y, b in zip(ys, e0)], label=f"${q} = {sympy.latex(v)}$")
    for c in report.crossings:
        ax.axvline(float(c["numeric"]), ls="--", lw=0.8, color="k")
    ax.set_xlabel(f"${sympy.latex(report.coupling)}$")
    ax.set_ylabel(f"$E_{{\\min}}({q}) - E_0$")
    ax.legend()
    return fig


def _piece_at(pieces, x):
    for p in pieces:
        if p.interval.lower <= x <= p.interval.upper:
            return p
    return pieces[-1]
