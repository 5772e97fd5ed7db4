"""Plain-text tables of a spectrum for the terminal.

Rows are sorted by electron number N, then by the value at the evaluation
point (when one is given), otherwise in the order the solver returned them.
Energies are printed in sympy's one-line syntax; an implicit root reads
``root k of P(epsilon) = 0``: real root number k of the polynomial, counted from 0 (the
lowest) in ascending order, as everywhere in symcluster (Python, JSON, LaTeX).  The
energy variable of polynomials is printed as ``epsilon``: ``E`` would re-parse as
Euler's number in sympy.
"""

import re

import mpmath
import sympy

from symcluster.spectrum import energy_numeric
from sympy.printing.latex import LatexPrinter
from sympy.printing.str import StrPrinter

from symcluster.export.exprtree import int_to_decimal, is_implicit_root
from symcluster.version import __version__

_EPS = re.compile(r"^eps(?=[_0-9]|$)")

__all__ = ["format_table", "format_sweep", "format_symmetries", "energy_text", "poly_text",
           "spin_text", "numeric_values", "level_sort_key"]


class _ExactStrPrinter(StrPrinter):
    """sympy's one-line printer, with integers of any length (no 4300-digit limit)."""

    def _print_Integer(self, expr):
        return int_to_decimal(expr.p)

    def _print_int(self, expr):
        return int_to_decimal(expr)

    def _print_Rational(self, expr):
        if expr.q == 1:
            return int_to_decimal(expr.p)
        return f"{int_to_decimal(expr.p)}/{int_to_decimal(expr.q)}"


class _ExactLatexPrinter(LatexPrinter):
    """sympy's LaTeX printer, with integers of any length (no 4300-digit limit).

    A coupling named ``eps`` or ``eps_...`` (an on-site energy, e.g. the Anderson
    model's ``eps_d``) is written as ``\\varepsilon``, as sympy writes a symbol named
    ``varepsilon``.
    """

    def _print_Symbol(self, expr, style="plain"):
        name = expr.name
        if _EPS.match(name) and expr not in self._settings["symbol_names"]:
            expr = sympy.Symbol("varepsilon" + name[3:], **expr.assumptions0)
        return super()._print_Symbol(expr, style=style)

    def _print_int(self, expr):
        return int_to_decimal(expr)

    def _print_Rational(self, expr):
        if expr.q == 1:
            return int_to_decimal(expr.p)
        sign = "- " if expr.p < 0 else ""
        p, q = int_to_decimal(abs(expr.p)), int_to_decimal(expr.q)
        if self._settings["fold_short_frac"]:
            return f"{sign}{p} / {q}"
        return rf"{sign}\frac{{{p}}}{{{q}}}"


def exact_sstr(expr):
    """``sympy.sstr(expr)`` for exact expressions with integers of any size."""
    return _ExactStrPrinter().doprint(expr)


def exact_latex(expr, **settings):
    """``sympy.latex(expr, **settings)`` for exact expressions with integers of any size."""
    return _ExactLatexPrinter(settings).doprint(expr)


def energy_text(energy):
    """One-line text of an exact energy.

    Examples
    --------
    >>> import sympy
    >>> U, t = sympy.symbols("U t", real=True)
    >>> energy_text(U/2 - sympy.sqrt(U**2 + 16*t**2)/2)
    'U/2 - sqrt(U**2 + 16*t**2)/2'
    """
    if is_implicit_root(energy):
        return f"root {int(energy.index)} of {poly_text(energy.poly)} = 0"
    return exact_sstr(energy)


#: How the energy variable (the first generator, ``E`` inside symcluster) is printed.
ENERGY_NAME = "epsilon"


def display_energy(poly):
    """The symbol the first generator of ``poly`` is printed as (``epsilon`` for ``E``)."""
    g = poly.gens[0]
    if g.name != "E" or any(x.name == ENERGY_NAME for x in poly.gens[1:]):
        return g
    return sympy.Symbol(ENERGY_NAME, **g.assumptions0)


#: Polynomials with more terms than this are printed term by term from their coefficient
#: dictionary; sympy's printers need seconds for the thousands of terms of a degree-88 factor.
FAST_PRINT_TERMS = 50


def poly_text(poly, latex=False):
    """One-line text (sympy syntax) or LaTeX of a Poly with rational coefficients.

    Terms are in decreasing powers of the first generator (the energy, printed as
    ``epsilon``: ``E`` would re-parse as Euler's number), then lexicographically.
    """
    var = display_energy(poly)
    names = [exact_latex(g) if latex else g.name for g in (var,) + tuple(poly.gens[1:])]
    out = []
    for monom, coeff in sorted(poly.terms(), key=lambda mc: mc[0], reverse=True):
        c = sympy.Rational(coeff)
        sign = "-" if c < 0 else "+"
        c = abs(c)
        factors = []
        for name, e in zip(names, monom):
            if e == 1:
                factors.append(name)
            elif e:
                factors.append(f"{name}^{{{e}}}" if latex else f"{name}**{e}")
        if c.q != 1:
            p, q = int_to_decimal(c.p), int_to_decimal(c.q)
            num = rf"\frac{{{p}}}{{{q}}}" if latex else f"{p}/{q}"
        else:
            num = int_to_decimal(c.p)
        if not factors:
            body = num
        elif c == 1:
            body = (" " if latex else "*").join(factors)
        else:
            body = (" " if latex else "*").join([num] + factors)
        out.append((sign, body))
    first_sign, first = out[0]
    text = ("-" if first_sign == "-" else "") + first
    for sign, body in out[1:]:
        text += f" {sign} {body}"
    return text


def _rat(x):
    x = sympy.Rational(x)
    p = int_to_decimal(x.p)
    return p if x.q == 1 else f"{p}/{int_to_decimal(x.q)}"


def spin_text(qn):
    """``(S column, 2S+1 column)`` strings for a level's quantum numbers."""
    if qn.get("S") is not None:
        s = sympy.Rational(qn["S"])
        if qn.get("Sz") is not None:        # one member of a multiplet split by a field
            return f"{_rat(s)} (Sz={_rat(qn['Sz'])})", "1"
        return _rat(s), str(int(2 * s + 1))
    if qn.get("Sz") is not None:
        return "Sz=" + _rat(qn["Sz"]), "-"
    return "-", "-"


def numeric_values(spectrum, point, digits):
    """Values of all levels at an exact point (dict Symbol -> Rational), as mpf."""
    with mpmath.workdps(digits + 5):
        return [+energy_numeric(lev.energy, point, digits + 5, lev.polynomial)
                for lev in spectrum.levels]


def level_sort_key(level, values, index):
    """Sort key: N, then value at the point if known, then original position."""
    n = level.quantum_numbers.get("N")
    n = n if n is not None else 10 ** 9
    if values is None:
        return (n, 0, index)
    return (n, values[index], index)


def _label_cells(qn, show_n, show_eta, show_irrep):
    """The quantum-number cells of a level's row: N, S, 2S+1, eta and irrep as shown."""
    s, mult = spin_text(qn)
    cells = ([str(qn.get("N", "-"))] if show_n else []) + [s, mult]
    if show_eta:
        cells.append(_rat(qn["eta"]) if qn.get("eta") is not None else "-")
    if show_irrep:
        cells.append(str(qn.get("irrep") or "-"))
    return cells


def _columns(levels):
    has = lambda key: any(l.quantum_numbers.get(key) is not None for l in levels)
    return has("eta"), has("irrep")


def format_table(spectrum, point=None, digits=12, verification="full"):
    """A readable table of all levels.

    Parameters
    ----------
    spectrum : Spectrum
    point : dict, optional
        ``{name: number}`` for every coupling; adds a column with each level's
        value there (``digits`` significant digits) and sorts by it within each N.
    digits : int
    verification : {"full", "short"}
        The verification header: every kind of check (full) or one short line.

    Returns
    -------
    str
        Header lines (model, verification summary, point) and one row per level:
        N, S, 2S+1, eta (if any level has it), irrep (if any), degeneracy,
        value (with a point), exact energy.
    """
    pt = spectrum.point(point) if point is not None else None
    values = numeric_values(spectrum, pt, digits) if pt is not None else None
    order = sorted(range(len(spectrum.levels)),
                   key=lambda i: level_sort_key(spectrum.levels[i], values, i))
    show_eta, show_irrep = _columns(spectrum.levels)
    # a spin model's levels carry no N: no column for it
    show_n = any("N" in lev.quantum_numbers for lev in spectrum.levels)
    head = (["N"] if show_n else []) + ["S", "2S+1"] + (["eta"] if show_eta else []) + (
        ["irrep"] if show_irrep else [])
    head += ["deg"] + (["value"] if values is not None else []) + ["energy"]
    rows = []
    poly_names = {}
    for i in order:
        lev = spectrum.levels[i]
        row = _label_cells(lev.quantum_numbers, show_n, show_eta, show_irrep)
        row.append(str(lev.degeneracy))
        if values is not None:
            with mpmath.workdps(digits):
                row.append(mpmath.nstr(values[i], digits))
        if is_implicit_root(lev.energy):
            # the polynomial once, below the table: high-degree factors are shared by
            # hundreds of levels and run to thousands of terms
            j = poly_names.setdefault(lev.energy.poly, len(poly_names) + 1)
            row.append(f"root {int(lev.energy.index)} of P{j}")
        else:
            row.append(energy_text(lev.energy))
        rows.append(row)
    widths = [max([len(h)] + [len(r[k]) for r in rows]) for k, h in enumerate(head)]
    numeric = {"N", "2S+1", "deg", "value"}

    def fmt(cells):
        out = []
        for k, (cell, h) in enumerate(zip(cells, head)):
            if k == len(head) - 1:
                out.append(cell)
            elif h in numeric:
                out.append(cell.rjust(widths[k]))
            else:
                out.append(cell.ljust(widths[k]))
        return "  ".join(out).rstrip()

    lines = [f"# {spectrum.model.describe()}"]
    fixed = getattr(spectrum, "fixed", None)
    if fixed:
        lines.append("# fixed couplings: " + ", ".join(f"{k}={_rat(v)}" for k, v in fixed.items()))
    if getattr(spectrum, "sectors", None) is not None:
        from symcluster.blocks.selection import describe_selection
        lines.append("# selected sectors only: " + describe_selection(spectrum.sectors))
    report = spectrum.verification
    lines += [f"# {report.summary() if verification == 'full' else report.short()}",
             f"# {len(spectrum.levels)} levels, {spectrum.n_states} states; "
             f"symcluster {__version__}"]
    if pt is not None:
        lines.append("# values at " + ", ".join(f"{s.name}={_rat(v)}" for s, v in pt.items()))
    lines.append(fmt(head))
    lines.append("  ".join("-" * w for w in widths[:-1]) + "  " + "-" * max(6, widths[-1] // 2))
    last_n = None
    for i, row in zip(order, rows):
        n = row[0] if show_n else None
        if last_n is not None and n != last_n:
            lines.append("")
        last_n = n
        lines.append(fmt(row))
    if poly_names:
        lines += ["", "# root k of Pj: real root k of Pj(epsilon) = 0, counted from 0 (the lowest) "
                  "upwards; epsilon is the energy"]
        lines += [f"P{j}: {poly_text(p)} = 0" for p, j in poly_names.items()]
    return "\n".join(lines) + "\n"


def format_sweep(spectrum, name, values, point=None, digits=12):
    """Every level's value along a sweep of one coupling: a tab-separated table.

    Parameters
    ----------
    spectrum : Spectrum
    name : str
        The swept coupling.
    values : sequence of numbers
        Its values (exact: integers, fractions, decimal strings or sympy Rationals).
    point : dict, optional
        ``{name: number}`` for every other coupling.
    digits : int
        Significant digits of each value (each certified, as in :func:`format_table`).

    Returns
    -------
    str
        Two ``#`` lines, a header, then one row per (value, level) in long form:
        the swept value, ``level`` (the level's position in ``spectrum.levels`` and in
        the JSON output, counted from 0), N, S, 2S+1, eta and irrep where the spectrum
        has them, the degeneracy and the value.  Reads into pandas with
        ``pandas.read_csv(path, sep="\\t", comment="#")``.

    Examples
    --------
    >>> import symcluster as sc
    >>> spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=[2])
    >>> text = format_sweep(spec, "U", [0, 4], {"t": 1}, digits=6)
    >>> text.splitlines()[2].split()
    ['U', 'level', 'N', 'S', '2S+1', 'eta', 'irrep', 'deg', 'value']
    >>> min(float(r.split()[-1]) for r in text.splitlines()[3:] if r.split()[0] == "4")
    -0.828427
    """
    base = dict(point or {})
    show_eta, show_irrep = _columns(spectrum.levels)
    show_n = any("N" in lev.quantum_numbers for lev in spectrum.levels)
    head = [name, "level"] + (["N"] if show_n else []) + ["S", "2S+1"] + (
        ["eta"] if show_eta else []) + (["irrep"] if show_irrep else []) + ["deg", "value"]
    values = list(values)
    if not values:
        raise ValueError("format_sweep needs at least one value of the swept coupling")
    first = spectrum.point({**base, name: values[0]})
    others = ", ".join(f"{s.name}={_rat(v)}" for s, v in first.items()
                       if s.name != name) or "no other coupling"
    lines = [f"# {spectrum.model.describe()}",
             f"# every level versus {name} at {others}; values to {digits} significant "
             f"digits, each certified; 'level' counts spectrum.levels from 0",
             "\t".join(head)]
    order = sorted(range(len(spectrum.levels)),
                   key=lambda i: level_sort_key(spectrum.levels[i], None, i))
    for x in values:
        pt = spectrum.point({**base, name: x})
        vals = numeric_values(spectrum, pt, digits)
        shown = _rat(pt[spectrum.symbol(name)])
        for i in order:
            lev = spectrum.levels[i]
            row = [shown, str(i)] + _label_cells(lev.quantum_numbers, show_n, show_eta,
                                                 show_irrep)
            with mpmath.workdps(digits):
                row += [str(lev.degeneracy), mpmath.nstr(vals[i], digits)]
            lines.append("\t".join(row))
    return "\n".join(lines) + "\n"


def _steps_text(rec):
    steps = rec.get("steps")
    if steps:
        parts = []
        for st in steps:
            if isinstance(st, (list, tuple)) and len(st) == 2:
                parts.append(f"{st[0]} -> {st[1]}")
            else:
                parts.append(str(st))
        return ", ".join(parts)
    syms = rec.get("symmetries") or []
    return ", ".join(str(s) for s in syms) if syms else "(none)"


def format_symmetries(spectrum):
    """Per sector: the symmetries used and the block sizes before and after reduction.

    Records with a ``"sector"`` key become table rows (sector, its dimension, the
    largest block left, and the reduction steps ``name -> largest block after it``
    or the list of symmetry names); records without one (global information such
    as the symmetries detected) are printed as header lines.
    """
    recs = list(spectrum.symmetries or [])
    if not recs:
        return "# no symmetry information recorded\n"
    lines = ["# symmetry reduction per sector"]
    rows = [("sector", "dimension", "largest block", "reduction")]
    for r in recs:
        if "sector" not in r:
            lines.append("# " + "; ".join(
                f"{k}: {', '.join(map(str, v)) if isinstance(v, (list, tuple)) else v}"
                for k, v in r.items()))
            continue
        sector = r["sector"]
        if isinstance(sector, (list, tuple)) and len(sector) == 2:
            sector = f"Nup={sector[0]} Ndn={sector[1]}"
        rows.append((str(sector), str(r.get("sector_dim", "-")),
                     str(r.get("largest_block", "-")), _steps_text(r)))
    w = [max(len(r[k]) for r in rows) for k in range(3)]
    for k, r in enumerate(rows):
        lines.append(f"{r[0].ljust(w[0])}  {r[1].rjust(w[1])}  {r[2].rjust(w[2])}  {r[3]}".rstrip())
        if k == 0:
            lines.append("  ".join("-" * x for x in w) + "  " + "-" * 10)
    return "\n".join(lines) + "\n"
