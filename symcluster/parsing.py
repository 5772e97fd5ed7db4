"""The number grammar of the command line: exact rationals from text, never evaluated.

A number is a decimal with an optional exponent of at most three digits (``4``,
``-2.5``, ``.5``, ``1e-3``) or a fraction of integers (``3/2``); ``2.5/3`` is neither.
Only ASCII digits are accepted.  Both the ``levels`` options and the analysis
subcommands read numbers here, so they accept and refuse the same texts with the same
messages.
"""

import re
from fractions import Fraction

import sympy

from .errors import InputError

__all__ = ["NUMBER", "parse_number"]

#: The grammar as a regular expression (no anchors, for use inside larger patterns).
NUMBER = r"(?:[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,3})?|[+-]?[0-9]+/[0-9]+)"
_WHOLE = re.compile(rf"^{NUMBER}$")
#: Longest accepted number text.
MAX_CHARS = 1000


def parse_number(text, what):
    """Exact sympy Rational from ``4``, ``-2.5``, ``1e-3`` or ``3/2`` (no evaluation).

    Parameters
    ----------
    text : str
    what : str
        Names the value in error messages (``"U"``, ``"lower end"``).

    Returns
    -------
    sympy.Rational

    Raises
    ------
    InputError
        Not a number of the grammar, too long, or a zero denominator.

    Examples
    --------
    >>> parse_number("1e-3", "t")
    1/1000
    >>> parse_number("-7/2", "U")
    -7/2
    """
    text = text.strip()
    if len(text) > MAX_CHARS:
        raise InputError(f"{what} is a number of {len(text)} characters; give at most "
                         f"{MAX_CHARS} (e.g. a fraction 3/2 or a decimal 2.5)")
    if not _WHOLE.match(text):
        raise InputError(f"{what} = {text!r} is not a number; write e.g. 4, -2.5, 1e-3 or 3/2")
    try:
        f = Fraction(text)
    except ZeroDivisionError:
        raise InputError(f"{what} = {text!r} divides by zero; give a nonzero denominator") from None
    return sympy.Rational(f.numerator, f.denominator)
