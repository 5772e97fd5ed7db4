"""Conversions between python-flint balls and mpmath numbers, and the working precision
of python-flint, shared by the response modules."""

from contextlib import contextmanager
from fractions import Fraction
import gc

import flint
import mpmath
from mpmath.libmp import from_man_exp

__all__ = ["arb_precision", "paused_gc", "to_arb", "to_mpf", "to_mpf_list", "to_mpc_list",
           "upper"]


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


@contextmanager
def paused_gc():
    """Python's cyclic garbage collector paused for a block, restored after.

    Ball arithmetic on numpy object arrays allocates tens of thousands of short-lived
    objects without reference cycles; each of them would otherwise trigger collections
    that rescan every live object (sympy's expressions of a solved spectrum among them).
    Reference counting still frees everything at once; cycles made meanwhile are
    collected after.

    Examples
    --------
    >>> with paused_gc():
    ...     gc.isenabled()
    False
    >>> gc.isenabled()
    True
    """
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


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


def _raw_mids(balls):
    """mpmath's raw form of the midpoints of balls (exact)."""
    out = []
    for x in balls:
        m, e = x.mid().man_exp()
        out.append(from_man_exp(int(m), int(e)))
    return out


def to_mpf_list(balls):
    """The midpoints of many balls as mpmath numbers, exactly.

    Examples
    --------
    >>> to_mpf_list([flint.arb(1) / 4, flint.arb(-3)])
    [mpf('0.25'), mpf('-3.0')]
    """
    make = mpmath.mp.make_mpf
    return [make(r) for r in _raw_mids(balls)]


def to_mpc_list(re, im):
    """The midpoints of two equally long lists of balls as complex mpmath numbers, exactly.

    Examples
    --------
    >>> to_mpc_list([flint.arb(1) / 4], [flint.arb(-3)])
    [mpc(real='0.25', imag='-3.0')]
    """
    make = mpmath.mp.make_mpc
    return [make(z) for z in zip(_raw_mids(re), _raw_mids(im))]
