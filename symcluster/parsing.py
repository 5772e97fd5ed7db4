"""The number grammar of the command line, and bounded reading of input files.

Numbers become exact rationals from text, never evaluated.

A number is a decimal with an optional exponent of at most three digits (``4``,
``-2.5``, ``.5``, ``1e-3``) or a fraction of integers (``3/2``); ``2.5/3`` is neither.
Only ASCII digits are accepted.  Both the ``levels`` options and the analysis
subcommands read numbers here, so they accept and refuse the same texts with the same
messages.

Input files (cluster files, JSON spectra) are read through :func:`read_input_file`,
which stops at a size limit instead of reading ``/dev/zero`` until memory runs out.
"""

import os
import re
from fractions import Fraction

import sympy

from symcluster.errors import InputError

__all__ = ["NUMBER", "parse_number", "read_input_file", "parse_toml"]

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


def _size_text(n):
    return f"{n // 2 ** 20} MiB" if n % 2 ** 20 == 0 else f"{n:,} bytes"


def read_input_file(path, what, max_bytes):
    """The UTF-8 text of an input file, reading at most ``max_bytes`` bytes.

    Parameters
    ----------
    path : str or os.PathLike
    what : str
        Names the file in messages (``"cluster file"``).
    max_bytes : int
        Larger inputs are refused without reading further (a device such as
        /dev/zero never ends).

    Returns
    -------
    str

    Raises
    ------
    InputError
        The file cannot be opened, is larger than ``max_bytes``, or is not UTF-8.

    Examples
    --------
    >>> read_input_file("/dev/zero", "cluster file", 1024)  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: cluster file '/dev/zero' is larger than 1,024 bytes; ...
    """
    shown = os.fspath(path)
    try:
        with open(shown, "rb") as fh:
            data = fh.read(max_bytes + 1)
    except OSError as exc:
        raise InputError(f"cannot read {what} {shown!r}: {exc.strerror}; check the "
                         f"path") from None
    if len(data) > max_bytes:
        raise InputError(f"{what} {shown!r} is larger than {_size_text(max_bytes)}; give a "
                         f"real {what} (a device or a stream is not one)")
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"{what} {shown!r} is not UTF-8 text (byte {exc.start}); save it "
                         f"as UTF-8") from None


def parse_toml(text, source, doc):
    """The TOML document ``text`` as a dict; an InputError naming ``source`` and the page
    ``doc`` that describes the format otherwise (the one TOML reader of cluster and model
    files).

    Examples
    --------
    >>> parse_toml('format = "x"', "<string>", "docs/model-files.md")
    {'format': 'x'}
    """
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    try:
        return tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"{source}: not valid TOML ({exc}); see {doc}") from None
