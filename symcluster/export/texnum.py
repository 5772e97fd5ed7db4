"""Numbers and labels for LaTeX tables: decimal-aligned columns, math minus, momenta.

Every table of symcluster (the levels table of :mod:`symcluster.export.latex` and the
analysis tables) prints numbers through this module, so that they look alike:

* a number takes two columns (:func:`number_columns`): the integer part, right-aligned,
  then the decimal point and the fraction, left-aligned, so that the points of a column
  line up (the split-column way of aligning numbers, which needs only the ``array``
  package: common practice, no source);
* both parts are typeset in math mode, so a minus sign is the mathematical minus, never
  a text hyphen;
* digits are grouped in threes on both sides of the point with thin spaces
  (``3.141\\,592\\,653``) and a power of ten reads ``\\times 10^{k}``;
* the fraction column has a fixed width of at most :data:`DIGITS_PER_LINE` digits: a
  longer fraction (30 significant digits) continues on the next line of the cell, under
  its own first digit, so that the table keeps to the width of the page;
* a number outside a table column is a math formula (:func:`number_math`).

``siunitx`` would do the same but is not part of a basic TeX installation (Debian:
texlive-science, about 82 MB to download with its dependencies); this needs nothing
beyond ``array``.
"""

import mpmath
import sympy

__all__ = ["number_columns", "TABLE_PACKAGES", "DIGITS_PER_LINE", "number_cell",
           "number_math", "decimal_text", "momentum_tex", "mulliken_tex", "number_width_em"]

#: packages every fragment needs
TABLE_PACKAGES = r"\usepackage{amsmath,booktabs,longtable,array}"
#: fraction digits on one line of a numeric cell; more continue on the next line
DIGITS_PER_LINE = 15


def _fraction_em(digits):
    n = min(int(digits), DIGITS_PER_LINE)
    return 0.5 * n + (n // 3) / 6 + 0.6


def number_columns(digits):
    """The two column specifications of one numeric column (integer part . fraction).

    Examples
    --------
    >>> number_columns(6)
    '>{$}r<{$}@{.}>{\\\\raggedright\\\\arraybackslash$}p{3.9em}<{$}'
    """
    return (r">{$}r<{$}@{.}>{\raggedright\arraybackslash$}p{"
            + f"{_fraction_em(digits):.1f}" + "em}<{$}")


def decimal_text(value, digits):
    """``value`` (an mpmath or Python number) to ``digits`` significant digits.

    Examples
    --------
    >>> decimal_text(-2, 5)
    '-2.0'
    """
    with mpmath.workdps(int(digits) + 5):
        return mpmath.nstr(mpmath.mpf(value) if not isinstance(value, mpmath.mpc) else value,
                           int(digits))


def _group(digits_text, from_left):
    if len(digits_text) <= 4:
        return digits_text
    if from_left:
        parts = [digits_text[i:i + 3] for i in range(0, len(digits_text), 3)]
    else:
        head = len(digits_text) % 3
        parts = ([digits_text[:head]] if head else []) + \
            [digits_text[i:i + 3] for i in range(head, len(digits_text), 3)]
    return r"\,".join(parts)


def _parts(text):
    """(integer part, fraction part) of a decimal text such as ``-1.2345e-7``, in math."""
    mant, _, exp = text.partition("e")
    sign = ""
    if mant[:1] in "+-":
        sign, mant = ("-" if mant[0] == "-" else ""), mant[1:]
    whole, _, frac = mant.partition(".")
    frac = frac or "0"
    groups = [frac[i:i + 3] for i in range(0, len(frac), 3)]
    # a thin space between groups, and a permitted line break (only used past the width)
    frac_tex = r"\,\allowbreak ".join(groups) if len(frac) > 4 else frac
    if exp:
        frac_tex += rf"\times 10^{{{int(exp)}}}"
    return sign + _group(whole, False), frac_tex


def number_cell(value, digits):
    """The two cells ``integer & fraction`` of a numeric column (:func:`number_columns`).

    Parameters
    ----------
    value : number
        A real number (mpmath, int, Fraction, float).
    digits : int
        Significant digits.

    Returns
    -------
    str

    Examples
    --------
    >>> number_cell(-3.25, 3)
    '-3 & 25'
    >>> number_cell(mpmath.mpf("-0.000012345678"), 8)
    '-1 & 234\\\\,\\\\allowbreak 567\\\\,\\\\allowbreak 8\\\\times 10^{-5}'
    """
    whole, frac = _parts(decimal_text(value, digits))
    return whole + " & " + frac


def number_math(value, digits):
    """The number as an inline formula ``$...$`` (for text outside a numeric column).

    Examples
    --------
    >>> number_math(-1.5, 2)
    '$-1.5$'
    """
    whole, frac = _parts(decimal_text(value, digits))
    return "$" + whole + "." + frac.replace(r"\allowbreak ", "") + "$"


def number_width_em(digits):
    """Width in em of a numeric column of ``digits`` significant digits (both parts).

    A digit is 0.5 em in Computer Modern and Latin Modern, a thin space 1/6 em; sign,
    integer digits and the column gap add about 3 em.

    Examples
    --------
    >>> number_width_em(30) < 15
    True
    """
    return _fraction_em(digits) + 3.5


def _pi_multiple_tex(r):
    r = sympy.nsimplify(r / sympy.pi)
    if r == 0:
        return "0"
    sign = "-" if r < 0 else ""
    r = abs(sympy.Rational(r))
    num = r"\pi" if r.p == 1 else rf"{r.p}\pi"
    return sign + (num if r.q == 1 else rf"{num}/{r.q}")


def momentum_tex(k):
    """A momentum (a multiple of π, or a tuple of them for an orbit) in math mode.

    A pair ``-k, k`` is written ``\\pm k``.

    Examples
    --------
    >>> momentum_tex((-sympy.pi / 2, sympy.pi / 2))
    '\\\\pm\\\\pi/2'
    >>> momentum_tex(sympy.pi)
    '\\\\pi'
    """
    ks = list(k) if isinstance(k, (tuple, list)) else [k]
    rs = sorted({sympy.nsimplify(x / sympy.pi) for x in ks})
    parts, done = [], set()
    for r in sorted(rs, key=lambda x: (abs(x), x)):
        if r in done:
            continue
        if r != 0 and -r in rs and abs(r) != 1:
            parts.append(r"\pm" + _pi_multiple_tex(abs(r) * sympy.pi))
            done.update({r, -r})
        else:
            parts.append(_pi_multiple_tex(r * sympy.pi))
            done.add(r)
    return ",\\,".join(parts)


def mulliken_tex(label):
    """A Mulliken symbol such as ``A1g``, ``T2u``, ``E1/E2`` in math mode.

    The letter is upright, the index and g/u go into the subscript.

    Examples
    --------
    >>> mulliken_tex("A1g")
    '\\\\mathrm{A}_{1g}'
    >>> mulliken_tex("E1/E2")
    '\\\\mathrm{E}_{1}/\\\\mathrm{E}_{2}'
    """
    out = []
    for part in str(label).split("/"):
        head, sub = part[:1], part[1:]
        out.append(r"\mathrm{" + head + "}" + ("_{" + sub + "}" if sub else ""))
    return "/".join(out)
