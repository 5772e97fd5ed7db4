"""LaTeX tables of a spectrum (booktabs rules, longtable so that ~100 rows break across pages).

Layout (documented in docs/outputs.md):

* columns ``N``, ``S``, ``eta`` (only if some level has an η-pseudospin), a term symbol
  ``{}^{2S+1}Γ`` (multiplicity as a superscript on the lattice irrep Γ, a Mulliken symbol
  where the lattice group is a known point group; a plain ``2S+1`` column when no irrep
  is known), the momentum ``k`` beside Mulliken symbols, degeneracy ``g``, exact energy
  ``E`` and, with a point, the value of ``E`` there in two columns aligned on the decimal
  point (:mod:`symcluster.export.texnum`);
* square roots (and ``arccos``/``arctan`` arguments) that occur in two or more levels
  are named ``w`` (or ``w_1, w_2, ...``) and defined under the table;
* implicit roots read "root k of P_j": the k-th real root, ascending, of ``P_j(E) = 0``,
  with every polynomial printed once under the table;
* the verification report and symmetry record are included as ``%`` comment lines.

A fragment needs ``\\usepackage{amsmath,booktabs,longtable,array}``;
``standalone=True`` gives a complete document for pdflatex.
"""

import re

import mpmath
import sympy

from symcluster.export.exprtree import int_to_decimal, is_implicit_root
from symcluster.version import __version__
from symcluster.export.text import exact_latex, level_sort_key, numeric_values, poly_text
from symcluster.export.texnum import (TABLE_PACKAGES, number_columns, momentum_tex, mulliken_tex,
                                      number_cell, number_width_em)

__all__ = ["latex_table", "energy_latex", "tex_escape", "name_subexpressions", "wrap_tex_lines",
           "MAX_LINE", "LONG_POLY_CHARS"]

#: longest source line latex_table emits: TeX reads a whole line into a fixed buffer
#: (pdflatex: 200000 characters), and short lines keep the file readable and diffable
MAX_LINE = 100
#: a polynomial whose one-line LaTeX is longer than this is typeset coefficient by
#: coefficient (powers of E), each coefficient a formula that breaks across lines
LONG_POLY_CHARS = 800

_SPECIAL = {"\\": r"\textbackslash{}", "{": r"\{", "}": r"\}", "$": r"\$", "&": r"\&",
            "#": r"\#", "^": r"\^{}", "_": r"\_", "%": r"\%", "~": r"\textasciitilde{}",
            "<": r"\textless{}", ">": r"\textgreater{}", "|": r"\textbar{}"}
_MATH_CHARS = {"η": r"\eta", "Γ": r"\Gamma", "σ": r"\sigma", "↑": r"\uparrow",
               "↓": r"\downarrow", "π": r"\pi", "Δ": r"\Delta", "±": r"\pm", "∓": r"\mp",
               "−": "-", "θ": r"\theta", "φ": r"\phi", "×": r"\times"}
_GREEK = {k: f"${v}$" for k, v in _MATH_CHARS.items()}
#: names of shared subexpressions: w (then q, z, ...) when no coupling name starts with it;
#: a neutral letter, since Delta reads as a gap in this field
_NAME_BASES = ("w", "q", "z", "Lambda", "Xi", "Omega", "Theta")
_PACKAGES = TABLE_PACKAGES


def tex_escape(text):
    """Escape arbitrary text for LaTeX text mode (non-ASCII outside a few symbols -> '?').

    Examples
    --------
    >>> tex_escape("a_b & 50%")
    'a\\\\_b \\\\& 50\\\\%'
    """
    out = []
    for ch in str(text):
        if ch in _SPECIAL:
            out.append(_SPECIAL[ch])
        elif ch in _GREEK:
            out.append(_GREEK[ch])
        elif ch == "\n" or ch == "\r" or ch == "\t":
            out.append(" ")
        elif ord(ch) < 32 or ord(ch) > 126:
            out.append("?")
        else:
            out.append(ch)
    return "".join(out)


def _comment(text):
    """Comment lines for arbitrary text (one ``%`` per line, control characters removed)."""
    lines = str(text).splitlines() or [""]
    return ["% " + "".join(c if 32 <= ord(c) or c == "\t" else " " for c in line)
            for line in lines]


def _tex(expr):
    return exact_latex(expr, inv_trig_style="full")


def _poly_tex(poly):
    return poly_text(poly, latex=True)


def energy_latex(energy):
    """LaTeX of one energy on its own (no shared names), as stored in JSON files."""
    if is_implicit_root(energy):
        var = _tex(energy.poly.gens[0])
        return (rf"\text{{root {int(energy.index) + 1} (ascending) of }} "
                rf"{_poly_tex(energy.poly)} = 0 \text{{ in }} {var}")
    return _tex(energy)


# ----------------------------------------------------------------------------- shared names

def _sqrt_bases(expr, found):
    if isinstance(expr, sympy.Pow) and isinstance(expr.exp, sympy.Rational) \
            and expr.exp.q == 2 and expr.base.free_symbols:
        found.add(expr.base)
    for a in expr.args:
        _sqrt_bases(a, found)


_ARG_FUNCS = (sympy.acos, sympy.asin, sympy.atan)


def _func_args(expr, found, names):
    if isinstance(expr, _ARG_FUNCS):
        a = expr.args[0]
        if a.free_symbols - names and not a.is_Symbol and not a.is_Number:
            found.add(a)
    if isinstance(expr, sympy.atan2):
        for a in expr.args:
            if a.free_symbols - names and not a.is_Symbol and not a.is_Number:
                found.add(a)
    for a in expr.args:
        _func_args(a, found, names)


def _rewrite(expr, sqrt_map, arg_map):
    if isinstance(expr, sympy.Pow) and expr.base in sqrt_map and \
            isinstance(expr.exp, sympy.Rational) and expr.exp.q == 2:
        return sqrt_map[expr.base] ** expr.exp.p
    if expr in arg_map:
        return arg_map[expr]
    if not expr.args:
        return expr
    return expr.func(*[_rewrite(a, sqrt_map, arg_map) for a in expr.args])


def _repeated(exprs, collect, min_count=2):
    """Subterms found by ``collect`` in >= min_count of ``exprs``, in order of first appearance."""
    count, order = {}, []
    for e in exprs:
        found = set()
        collect(e, found)
        for f in sorted(found, key=sympy.default_sort_key):
            if f not in count:
                order.append(f)
            count[f] = count.get(f, 0) + 1
    return [f for f in order if count[f] >= min_count]


def name_subexpressions(exprs, taken=(), min_count=2):
    """Name square roots and inverse-trig arguments shared by two or more expressions.

    Parameters
    ----------
    exprs : list of sympy.Expr
    taken : iterable of str
        Symbol names already in use (the couplings); the name base avoids them.
    min_count : int
        Name a subexpression found in at least this many expressions (1: every one,
        so that no unbreakable root or fraction stays inside a narrow table cell).

    Returns
    -------
    (list of sympy.Expr, list of (Symbol, sympy.Expr))
        The rewritten expressions and the definitions, in order.

    Examples
    --------
    >>> import sympy
    >>> U, t = sympy.symbols("U t", real=True)
    >>> d = sympy.sqrt(U**2 + 16*t**2)
    >>> new, defs = name_subexpressions([U/2 - d/2, U/2 + d/2])
    >>> new, defs
    ([U/2 - w/2, U/2 + w/2], [(w, sqrt(U**2 + 16*t**2))])
    """
    taken = set(taken)
    base = next((b for b in _NAME_BASES if not any(n.startswith(b) for n in taken)), "w_x")
    # nested square roots: inner (smaller) ones first, so definitions can use their names
    bases = sorted(_repeated(exprs, _sqrt_bases, min_count), key=sympy.count_ops)
    sq_map = {b: sympy.Dummy(f"sq{k}") for k, b in enumerate(bases)}
    exprs1 = [_rewrite(e, sq_map, {}) for e in exprs]
    dummies = set(sq_map.values())
    args = _repeated(exprs1, lambda e, f: _func_args(e, f, dummies), min_count)
    arg_map = {a: sympy.Dummy(f"ar{k}") for k, a in enumerate(args)}
    exprs2 = [_rewrite(e, {}, arg_map) for e in exprs1]
    defs = []
    for b in bases:
        others = {k: v for k, v in sq_map.items() if k != b}
        defs.append((sq_map[b], sympy.sqrt(_rewrite(b, others, {}))))
    defs += [(d, a) for a, d in arg_map.items()]
    total = len(defs)
    final = {d: (sympy.Symbol(base) if total == 1 else sympy.Symbol(f"{base}_{k + 1}"))
             for k, (d, _) in enumerate(defs)}
    new = [e.xreplace(final) for e in exprs2]
    return new, [(final[d], v.xreplace(final)) for d, v in defs]


# ----------------------------------------------------------------------------- long polynomials

def _poly_item(j, poly):
    """The ``\\item`` lines of P_j: one formula, or coefficient by coefficient if long.

    A long polynomial (one-line LaTeX over LONG_POLY_CHARS characters) is written as
    ``P_j(E) = sum_n p_n E^n`` followed by a list with one entry ``p_n = ...`` per
    nonzero coefficient, highest power first.  Each coefficient is an inline formula,
    which TeX breaks between terms (after + and -) across lines and pages, and the
    list gives continuation lines a hanging indent.
    """
    var = _tex(poly.gens[0])
    plain = _poly_tex(poly)
    if len(plain) <= LONG_POLY_CHARS:
        return [rf"\item $P_{{{j}}}({var}) = {plain}$"]
    rest = poly.gens[1:]
    by_power = {}
    for monom, coeff in poly.terms():
        by_power.setdefault(monom[0], {})[tuple(monom[1:])] = coeff
    deg = max(by_power)
    lines = [rf"\item $P_{{{j}}}({var}) = \sum_{{n=0}}^{{{deg}}} p_{{n}}\, {var}^{{n}}$ "
             rf"(degree {deg} in ${var}$, {len(poly.terms())} terms), with",
             r"\begin{list}{}{\setlength{\leftmargin}{3em}\setlength{\itemindent}{-2em}",
             r"  \setlength{\itemsep}{1pt}\setlength{\parsep}{0pt}\setlength{\topsep}{2pt}}",
             r"\raggedright"]
    for n in sorted(by_power, reverse=True):
        terms = by_power[n]
        if rest:
            coeff = _poly_tex(sympy.Poly.from_dict(terms, *rest, domain=poly.get_domain()))
        else:
            coeff = _tex(sympy.Rational(terms[()]))
        lines.append(rf"\item[] $p_{{{n}}} = {coeff}$" + ("," if n != min(by_power) else "."))
    zero = deg + 1 - len(by_power)
    if zero:
        lines.append(rf"\item[] (the other {zero} coefficients are zero)")
    lines.append(r"\end{list}")
    return lines


# ----------------------------------------------------------------------------- source lines

def wrap_tex_lines(text, width=MAX_LINE):
    """Break every line of LaTeX source longer than ``width`` into shorter lines.

    Lines are broken at a space, preferably one before a ``+`` or ``-`` (between two
    terms of a formula); a newline is a space to TeX, and spaces are ignored in math
    mode, so the typeset result is unchanged.  Comment lines continue as comment
    lines.  A run longer than ``width`` without any space (e.g. a huge integer) is cut
    with a ``%`` at the end of the line, which joins it to the next (never inside a
    control word).  No empty line (paragraph break) is ever created.
    """
    out = []
    for line in text.split("\n"):
        out.extend(_wrap_line(line, width))
    return "\n".join(out)


def _wrap_line(line, width):
    if len(line) <= width:
        return [line]
    if line.startswith("%"):
        return ["% " + c for c in _comment_chunks(line.lstrip("%").strip(), width - 2)]
    chunks, rest = [], line
    while len(rest) > width:
        cut = _space_cut(rest, width)
        if cut is not None:
            chunks.append(rest[:cut].rstrip(" "))
            rest = rest[cut:].lstrip(" ")
            continue
        cut = _hard_cut(rest, width - 1)
        if cut is None:
            break
        chunks.append(rest[:cut] + "%")
        rest = rest[cut:]
    if rest.strip():
        chunks.append(rest)
    return chunks


def _space_cut(line, width):
    """Position of a space to break at (the best one within ``width``), or None."""
    best = None
    for i in range(min(width, len(line) - 1), 0, -1):
        if line[i] != " " or line[i - 1] == "\\" or not line[:i].strip():
            continue
        if best is None:
            best = i
        if line[i + 1:i + 3] in ("+ ", "- "):
            return i if i >= width // 2 else best
    return best


def _hard_cut(line, width):
    """A position <= width that is not inside a control word or right after a backslash."""
    for i in range(width, 1, -1):
        if line[i - 1] == "\\":
            continue
        k = i
        while k > 0 and line[k - 1].isalpha():
            k -= 1
        if line[i].isalpha() and k > 0 and line[k - 1] == "\\":
            continue      # would split a control word such as \frac
        return i
    return None


def _comment_chunks(text, width):
    chunks = []
    while len(text) > width:
        cut = text.rfind(" ", 1, width + 1)
        cut = cut if cut > 0 else width
        chunks.append(text[:cut].rstrip())
        text = text[cut:].lstrip()
    return chunks + [text]


# ----------------------------------------------------------------------------- table

def _canonical(levels, symbols):
    """One expression object per distinct level value, so equal levels print identically.

    Closed forms that are roots of the same irreducible polynomial and agree at two
    generic rational points to 25 digits are the same root: the first form is reused.
    """
    pts = []
    for k in range(2):
        pts.append({s: sympy.Rational(7 + 3 * j + 5 * k, 5 + 2 * j + k) * (-1) ** (j * k)
                    for j, s in enumerate(symbols)})
    seen, out = {}, []
    for lev in levels:
        e = lev.energy
        if is_implicit_root(e) or lev.polynomial is None:
            out.append(e)
            continue
        try:
            key = (lev.polynomial,) + tuple(
                sympy.N(e.subs(p), 30).round(25) for p in pts)
        except (TypeError, ValueError, ArithmeticError):
            out.append(e)
            continue
        out.append(seen.setdefault(key, e))
    return out


def _rat(x):
    x = sympy.Rational(x)
    p = int_to_decimal(x.p)
    return p if x.q == 1 else f"{p}/{int_to_decimal(x.q)}"


_IRREP = re.compile(r"^([A-Z])([0-9]*)([gu]?)('*)$")


def _irrep_tex(label):
    m = _IRREP.match(label)
    if m:
        sub = m.group(2) + m.group(3)
        return r"\mathrm{" + m.group(1) + "}" + ("_{" + sub + "}" if sub else "") + \
            "'" * len(m.group(4))
    if re.match(r"^[A-Za-z0-9=,+\-/()." + "".join(_MATH_CHARS) + r"]+$", label):
        return "".join(" " + _MATH_CHARS[c] + " " if c in _MATH_CHARS else
                       r"{,}" if c == "," else c for c in label).strip()
    return r"\text{" + tex_escape(label) + "}"


_GAMMA = re.compile(r"^Γ([0-9]+) \(([0-9]+)\)$")


def _label_tex(q):
    """The irrep in the term symbol: Mulliken symbol, else the momentum label, else Γ_n."""
    if q.get("mulliken"):
        return mulliken_tex(q["mulliken"])
    label = str(q["irrep"])
    m = _GAMMA.match(label)
    if m:
        return r"\Gamma_{" + m.group(1) + "}"
    if label.startswith("k=") and q.get("k") is not None:
        rest = label[2:].split(",")
        parity = [r for r in rest if r in ("+", "−")]
        extra = [r for r in rest if r and r[0] not in "0123456789-±π+−"]
        inner = "k = " + momentum_tex(q["k"])
        if parity:
            inner += r",\, " + ("+" if parity[0] == "+" else "-")
        if extra:
            inner += r",\, " + _irrep_tex(",".join(extra))
        return r"\left(" + inner + r"\right)"
    return _irrep_tex(label)


#: kind -> (sign, operator with %a, %b for the modes and %s, %t for spins; spin-summed?)
_TERM_TEX = {
    "hopping": (-1, r"\left(c^\dagger_{%a%s} c_{%b%s} + \mathrm{h.c.}\right)", True),
    "hybridization": (1, r"\left(c^\dagger_{%a%s} c_{%b%s} + \mathrm{h.c.}\right)", True),
    "onsite": (1, r"n_{%a}", False),
    "hubbard_u": (1, r"n_{%a\uparrow} n_{%a\downarrow}", False),
    "number_product": (1, r"n_{%a%s} n_{%b%t}", False),
    "density_density": (1, r"n_{%a} n_{%b}", False),
    "zeeman": (-1, r"2 S^z_{%a}", False),
    "chemical_potential": (-1, r"n_{%a}", False),
    "exchange": (1, r"\mathbf{S}_{%a} \cdot \mathbf{S}_{%b}", False),
    "exchange_z": (1, r"S^z_{%a} S^z_{%b}", False),
    "exchange_xy": (1, r"\tfrac{1}{2}\left(S^+_{%a} S^-_{%b} + \mathrm{h.c.}\right)", False),
    "pair_hopping": (1, r"\left(c^\dagger_{%a\uparrow} c^\dagger_{%a\downarrow} "
                        r"c_{%b\downarrow} c_{%b\uparrow} + \mathrm{h.c.}\right)", False),
    "spin_flip": (1, r"\left(S^+_{%a} S^-_{%b} + \mathrm{h.c.}\right)", False),
}
_SPIN_TEX = {"s": r"\sigma", "-s": r"\bar\sigma", "up": r"\uparrow", "dn": r"\downarrow"}


def _coefficient_tex(coeff, sign):
    """The coefficient of one sum: ``-t``, ``\\frac{J}{4}``, ``\\left(U - 2 J\\right)``."""
    parts = []
    for label, scale in coeff:
        f = sign * scale
        mag = _tex(sympy.Rational(abs(f.numerator), f.denominator) * sympy.Symbol(label))
        parts.append(("-" if f < 0 else "+", mag))
    text = ("- " if parts[0][0] == "-" else "") + parts[0][1]
    text += "".join(f" {sg} {body}" for sg, body in parts[1:])
    return r"\left(" + text + r"\right)" if len(parts) > 1 else text


def _hamiltonian_tex(model):
    """H sum by sum (:meth:`Model.sums`): one sum per kind, spin and coefficient."""
    from symcluster.models.model import spin_fill
    out = ""
    for kind, spin, coeff, modes in model.sums():
        sign, op, summed = _TERM_TEX.get(
            kind, (1, r"\mathrm{" + kind.replace("_", r"\_") + "}_{%a}", False))
        s, t, spin_sum = spin_fill(kind, spin, summed)
        op = op.replace("%s", _SPIN_TEX[s]).replace("%t", _SPIN_TEX[t])
        sigma = r"\sigma" if spin_sum else ""
        if len(modes) == 1:
            op = op.replace("%a", str(modes[0][0])).replace("%b", str(modes[0][-1]))
            where = r"\sum_{\sigma} " if spin_sum else ""
        else:
            op = op.replace("%a", "a").replace("%b", "b")
            if len(modes[0]) == 1:
                if sorted(m[0] for m in modes) == list(range(model.space.n_modes)):
                    where = r"\sum_{a" + ("," + sigma if sigma else "") + "} "
                else:
                    where = (r"\sum_{a \in \{" + ",".join(str(m[0]) for m in modes) + r"\}"
                             + ("," + sigma if sigma else "") + "} ")
            else:
                where = (r"\sum_{(a,b) \in \{" + ",".join(f"({m[0]},{m[1]})" for m in modes)
                         + r"\}" + ("," + sigma if sigma else "") + "} ")
        text = f"{_coefficient_tex(coeff, sign)} {where}{op}"
        if not out:
            out = text
        elif text.startswith("- "):
            out += " " + text
        else:
            out += " + " + text
    return "H = " + (out or "0")


def latex_table(spectrum, point=None, digits=10, standalone=False):
    """The spectrum as a booktabs/longtable LaTeX table.

    Parameters
    ----------
    spectrum : Spectrum
    point : dict, optional
        ``{name: number}`` for every coupling: adds the value of each level there
        and sorts by it within each N.
    digits : int
        Significant digits of those values.
    standalone : bool
        Wrap in a complete ``article`` document (compiles with pdflatex).

    Returns
    -------
    str
    """
    pt = spectrum.point(point) if point is not None else None
    values = numeric_values(spectrum, pt, digits) if pt is not None else None
    order = sorted(range(len(spectrum.levels)),
                   key=lambda i: level_sort_key(spectrum.levels[i], values, i))
    levels = [spectrum.levels[i] for i in order]
    energies = _canonical(levels, spectrum.symbols)
    closed = [k for k, e in enumerate(energies) if not is_implicit_root(e)]
    renamed, defs = name_subexpressions([energies[k] for k in closed],
                                        taken=[s.name for s in spectrum.symbols])
    cell = {k: "$" + _tex(r) + "$" for k, r in zip(closed, renamed)}
    polys = []
    for k, e in enumerate(energies):
        if is_implicit_root(e):
            if e.poly not in polys:
                polys.append(e.poly)
            j = polys.index(e.poly) + 1
            cell[k] = rf"root {int(e.index) + 1} of $P_{{{j}}}$"

    qns = [l.quantum_numbers for l in levels]
    show_eta = any(q.get("eta") is not None for q in qns)
    show_irrep = any(q.get("irrep") is not None for q in qns)
    # momenta get a column of their own when the term symbol shows Mulliken symbols
    show_k = any(q.get("k") is not None and q.get("mulliken") for q in qns)
    cols, head, used_em = ["r", "c"], [r"$N$", r"$S$"], 4.5
    if show_eta:
        cols.append("c")
        head.append(r"$\eta$")
        used_em += 2.5
    cols.append("l")
    head.append(r"${}^{2S+1}\Gamma$" if show_irrep else r"$2S+1$")
    mulliken = all(q.get("mulliken") for q in qns if q.get("irrep") is not None)
    used_em += 4 if (mulliken or not show_irrep) else 9
    if show_k:
        cols.append("c")
        head.append(r"$k$")
        used_em += 4
    used_em += 2 + 1.2 * (len(cols) + 2)   # g, column gaps
    if values is not None:
        used_em += number_width_em(digits)
    e_width = (r"\dimexpr\linewidth-" + f"{used_em:.1f}" + r"em\relax"
               if used_em <= 30 else "12em")
    cols += ["r", r">{\raggedright\arraybackslash}p{" + e_width + "}"]
    head += [r"$g$", r"$E$"]
    if values is not None:
        cols.append(number_columns(digits))
        head.append(r"\multicolumn{2}{c}{value}")

    rows = []
    last_n = None
    for k, (i, lev, q) in enumerate(zip(order, levels, qns)):
        n = q.get("N")
        if last_n is not None and n != last_n:
            rows.append(r"\addlinespace")
        last_n = n
        if q.get("S") is not None:
            s = "$" + _rat(q["S"]) + "$"
            mult = str(int(2 * sympy.Rational(q["S"]) + 1))
        elif q.get("Sz") is not None:
            s, mult = "$S_z=" + _rat(q["Sz"]) + "$", None
        else:
            s, mult = "--", None
        row = ["$" + str(n) + "$" if n is not None else "--", s]
        if show_eta:
            row.append("$" + _rat(q["eta"]) + "$" if q.get("eta") is not None else "--")
        irrep = q.get("irrep")
        if show_irrep:
            gamma = _label_tex(q) if irrep is not None else r"\text{--}"
            row.append("${}^{" + mult + "}" + gamma + "$" if mult else "$" + gamma + "$")
        else:
            row.append(f"${mult}$" if mult else "--")
        if show_k:
            row.append("$" + momentum_tex(q["k"]) + "$" if q.get("k") is not None else "--")
        row += [f"${int(lev.degeneracy)}$", cell[k]]
        if values is not None:
            row.append(number_cell(values[i], digits))
        rows.append(" & ".join(row) + r" \\")

    out = []
    out.append(f"% symcluster {__version__} energy table; in a document of your own this needs")
    out.append("% " + _PACKAGES)
    out += _comment("model: " + spectrum.model.describe())
    if getattr(spectrum, "fixed", None):
        out += _comment("fixed couplings: " + ", ".join(f"{k}={v}" for k, v in spectrum.fixed.items()))
    if getattr(spectrum, "sectors", None) is not None:
        from symcluster.blocks.selection import describe_selection
        out += _comment("selected sectors only: " + describe_selection(spectrum.sectors))
    rep = spectrum.verification
    out += _comment(rep.summary())
    out += _comment(f"verification digits: {rep.as_dict().get('digits')}")
    for c in rep.as_dict().get("checks", []):
        out += _comment("check " + ", ".join(f"{k}={v}" for k, v in c.items()))
    for r in spectrum.symmetries or []:
        out += _comment("symmetry " + ", ".join(f"{k}={v}" for k, v in r.items()))
    out.append(r"\noindent " + tex_escape(spectrum.model.geometry_text()) + ";")
    out.append(r"{\raggedright $" + _hamiltonian_tex(spectrum.model) + r"$.\par}")
    out.append(f"{len(levels)} levels, {spectrum.n_states} states. "
               r"$g$: degeneracy (all states of the level).")
    if pt is not None:
        pt_tex = ", ".join(f"${_tex(s)} = {_rat(v)}$" for s, v in pt.items())
        out.append(f"Values at {pt_tex}, to {int(digits)} significant digits.")
    out.append("")
    out.append(r"\begingroup\renewcommand{\arraystretch}{1.35}")
    out.append(r"\begin{longtable}{" + "".join(cols) + "}")
    out.append(r"\toprule")
    out.append(" & ".join(head) + r" \\")
    out.append(r"\midrule")
    out.append(r"\endfirsthead")
    out.append(r"\toprule")
    out.append(" & ".join(head) + r" \\")
    out.append(r"\midrule")
    out.append(r"\endhead")
    out.append(r"\bottomrule")
    out.append(r"\endlastfoot")
    out += rows
    out.append(r"\end{longtable}")
    out.append(r"\endgroup")
    if defs:
        items = ", ".join(f"${_tex(s)} = {_tex(d)}$" for s, d in defs)
        out.append("")
        out.append(r"{\raggedright\noindent where " + items + r".\par}")
    if polys:
        out.append("")
        out.append(r"\noindent ``root $k$ of $P_j$'' is the $k$-th real root, counted "
                   r"in ascending order from the lowest, of $P_j(E) = 0$, where")
        out.append(r"\begin{itemize}")
        for j, p in enumerate(polys, 1):
            out += _poly_item(j, p)
        out.append(r"\end{itemize}")
    body = wrap_tex_lines("\n".join(out)) + "\n"
    if not standalone:
        return body
    pre = "\n".join([
        r"\documentclass[10pt]{article}",
        r"\usepackage[T1]{fontenc}",
        r"\IfFileExists{lmodern.sty}{\usepackage{lmodern}}{}",   # scalable fonts where installed
        r"\usepackage[margin=2cm]{geometry}",
        _PACKAGES,
        r"\begin{document}",
        "",
    ])
    return wrap_tex_lines(pre) + "\n" + body + "\n\\end{document}\n"
