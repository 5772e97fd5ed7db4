"""Conversions between python-flint balls and mpmath numbers, and the working precision
of python-flint, shared by the response modules."""

from contextlib import contextmanager
from fractions import Fraction

import flint
import mpmath

__all__ = ["arb_precision", "to_arb", "to_mpf", "to_mpf_list", "upper"]


@contextmanager
def arb_precision(digits):
    """python-flint's working precision set for ``digits`` decimal digits, restored after.

    python-flint's precision is process-wide: do not run this side by side in threads
    (DEVELOPERS.md).

    Examples
    --------
    >>> with arb_precision(30):
    ...     flint.ctx.prec
    115
    """
    old = flint.ctx.prec
    flint.ctx.prec = int(3.33 * digits) + 16
    try:
        yield
    finally:
        flint.ctx.prec = old


def to_arb(x):
    """An mpmath number (or int, Fraction) as an exact python-flint ball.

    Examples
    --------
    >>> to_arb(mpmath.mpf(3) / 4).is_exact(), to_arb(5).unique_fmpz()
    (True, 5)
    """
    if isinstance(x, Fraction):
        return flint.arb(flint.fmpq(x.numerator, x.denominator))
    if isinstance(x, int):
        return flint.arb(x)
    if not x:
        return flint.arb(0)
    m, e = mpmath.frexp(x)
    k = mpmath.mp.prec + 64
    return flint.arb((int(mpmath.ldexp(m, k)), int(e) - k))


def to_mpf(a):
    """The midpoint of a python-flint ball as an mpmath number (exact conversion, whatever
    mpmath's working precision).

    Examples
    --------
    >>> to_mpf(flint.arb(3) / 8)
    mpf('0.375')
    """
    man, exp = a.mid().man_exp()
    man = int(man)
    with mpmath.workprec(max(64, man.bit_length() + 8)):
        return mpmath.ldexp(mpmath.mpf(man), int(exp))


def upper(a):
    """A float upper bound of ``|a|`` for a ball ``a`` (rounded up; at least 1e-300).

    ``abs_upper`` is an exact upper bound; ``float`` rounds it to within one unit in
    the last place, which the factor covers (an underflow to 0 is covered by 1e-300).

    Examples
    --------
    >>> upper(flint.arb(-2)) >= 2, upper(flint.arb(0))
    (True, 1e-300)
    """
    hi = a.abs_upper()
    return (float(hi) + float(hi.rad())) * (1 + 1e-12) + 1e-300


def to_mpf_list(balls):
    """The midpoints of many balls as mpmath numbers, exactly (one precision switch).

    Examples
    --------
    >>> to_mpf_list([flint.arb(1) / 4, flint.arb(-3)])
    [mpf('0.25'), mpf('-3.0')]
    """
    pairs = [x.mid().man_exp() for x in balls]
    pairs = [(int(m), int(e)) for m, e in pairs]
    bits = max((m.bit_length() for m, _ in pairs), default=1)
    with mpmath.workprec(max(64, bits + 8)):
        return [mpmath.mpf(p) for p in pairs]
