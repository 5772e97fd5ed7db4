"""How far a value is from being a root of a polynomial: backward errors and Newton disks.

These are the numeric kernels of the verification's root checks (docs/verification.md),
on plain data: coefficient lists (highest power first) and mpmath or float64 values.
Everything uses mpmath's public arithmetic at the working precision (``mpmath.workdps``
or ``mpmath.workprec`` around the call) or exact integer arithmetic, so each bound can
be read off the code.
"""

import math

import mpmath

__all__ = ["backward_error", "exact_backward_error", "float_newton_radius", "horner_exact",
           "mp_coefficients", "newton_radius", "root_deviation"]


def mp_coefficients(acc, full):
    """The coefficients ``acc[i] / full`` (integers, ``full > 0``), each correctly rounded
    to the working precision.

    Examples
    --------
    >>> with mpmath.workdps(15):
    ...     mp_coefficients([3, -1, 0], 4)
    [mpf('0.75'), mpf('-0.25'), mpf('0.0')]
    """
    return [mpmath.fdiv(a, full) for a in acc]


def backward_error(coeffs, x, floor):
    """``|P(x)| / sum_k |c_k| r^k`` with ``r = max(|x|, floor)``, at the working precision.

    Horner's rule (``mpmath.polyval``) for both sums; ``coeffs`` highest power first,
    mpmath numbers or ints; `x` real or complex.  Where the size sum is 0 (every
    coefficient 0), ``|P(x)|`` itself.

    Examples
    --------
    >>> with mpmath.workdps(30):
    ...     backward_error([1, -2], mpmath.mpf(2), mpmath.mpf(0))          # x - 2 at 2
    mpf('0.0')
    """
    val = mpmath.polyval(coeffs, x)
    r = max(abs(x), floor)
    size = mpmath.polyval([abs(c) for c in coeffs], r)
    return abs(val) / size if size else abs(val)


def root_deviation(coeffs, x, scale, digits):
    """Backward error of ``x`` as a root of the polynomial with (mpmath) ``coeffs``.

    ``|P(x)| / sum_k |c_k| r^k`` with ``r = max(|x|, scale * 10**-digits)``: relative to
    the size of ``x`` itself, except for a level that is exactly zero at the point.  Its
    computed value is then a rounding residue (about 1e-71 at 30 digits), and the purely
    relative measure would be 1 for ``P = E``; the floor ``scale * 10**-digits``, with
    ``scale`` the energy scale of the point (its largest |coupling|), accepts the residue
    while a value wrong by more than ``10**-digits`` of the scale still fails.

    Examples
    --------
    >>> with mpmath.workdps(80):
    ...     float(root_deviation([1, 0], mpmath.mpf("1e-71"), 6, 30)) < 1e-40
    True
    """
    return backward_error(coeffs, x, scale * mpmath.mpf(10) ** (-digits))


def horner_exact(acc, man, exp):
    """``sum_i acc[i] x**(d - i)`` (``acc`` integers, highest power first) at the dyadic
    ``x = man * 2**exp``, exactly: ``(n, e)`` with the value ``n * 2**e``.

    For ``exp < 0`` the sum times ``2**(-exp d)`` is the integer
    ``sum_i acc[i] man**(d - i) 2**(-exp i)``, which Horner's rule builds as
    ``v = v man + acc[i] 2**(-exp i)``.

    Examples
    --------
    >>> horner_exact([1, 0, -2], 3, -1)         # x^2 - 2 at x = 3/2: 1/4
    (1, -2)
    """
    v = 0
    if exp >= 0:
        x = man << exp
        for a in acc:
            v = v * x + a
        return v, 0
    s = -exp
    for i, a in enumerate(acc):
        v = v * man + (a << (s * i))
    return v, exp * (len(acc) - 1)


def _dyadic(x):
    """The exact value of a finite mpf as ``(integer mantissa, exponent)``."""
    man, exp = x.man_exp                  # mpmath keeps the sign apart from the mantissa
    return (-man if x < 0 else man), exp


def exact_backward_error(acc, x, floor):
    """:func:`backward_error` of the finite real mpf ``x`` for the polynomial with
    coefficients ``acc / full`` (integers, highest first; any ``full > 0`` cancels),
    evaluated exactly and rounded once.

    ``|P(x)|`` and ``sum_k |c_k| r**k``, ``r = max(|x|, floor)``, are integers times
    powers of two at the (dyadic) values ``x`` and ``r`` (:func:`horner_exact`); their
    quotient is rounded once to the working precision (``mpmath.fdiv``; scaling by a
    power of two with ``mpmath.ldexp`` is exact).

    Examples
    --------
    >>> with mpmath.workdps(30):                 # 0.25 / 4.25, rounded once
    ...     exact_backward_error([1, 0, -2], mpmath.mpf(1.5), mpmath.mpf(0)) == mpmath.fdiv(1, 17)
    True
    """
    n, e = horner_exact(acc, *_dyadic(x))
    r = max(abs(x), floor)
    size, se = horner_exact([abs(a) for a in acc], *_dyadic(r))
    n = abs(n)
    if not size or not n:
        return mpmath.ldexp(mpmath.mpf(n), e)
    return mpmath.ldexp(mpmath.fdiv(n, size), e - se)


def newton_radius(coeffs, x):
    """Radius of a disk about ``x`` that holds a root of the polynomial, or None.

    For a polynomial P of degree n, some root lies within ``n |P(x)| / |P'(x)|`` of any
    x (from P'/P = sum_i 1/(x - r_i); e.g. P. Henrici, Applied and Computational Complex
    Analysis, vol. 1, Wiley 1974, section 6.4 [from memory]).  The rounding of Horner's
    rule (``mpmath.polyval``) at working precision u = 2^-prec is bounded by
    ``2 n u sum |c_k| |x|^k`` for P and ``2 n u sum k |c_k| |x|^(k-1)`` for P' (N. J.
    Higham, Accuracy and Stability of Numerical Algorithms, 2nd ed., section 5.1 [from
    memory]); the bounds are taken four times over (``4 n eps`` with ``eps = 2u``), which
    also covers the rounding of the coefficients themselves, and the safe way round.
    None where the computed |P'(x)| does not exceed its rounding bound (x too close to a
    multiple root to separate anything).  ``coeffs`` highest power first (mpmath
    numbers); ``x`` real or complex.

    Examples
    --------
    >>> with mpmath.workdps(30):
    ...     r = newton_radius([1, 0, -4], mpmath.mpf(2) + mpmath.mpf(10) ** -10)
    >>> 1e-10 < r < 1e-9
    True
    """
    n = len(coeffs) - 1
    val, der = mpmath.polyval(coeffs, x, derivative=True)
    ax = abs(x)
    size = mpmath.polyval([abs(c) for c in coeffs], ax)
    size_d = mpmath.polyval([k * abs(c) for k, c in zip(range(n, 0, -1), coeffs[:-1])], ax)
    u = 4 * n * mpmath.eps
    lower = abs(der) - u * size_d
    if lower <= 0:
        return None
    return 2 * n * (abs(val) + u * size) / lower


def float_newton_radius(c, a, x):
    """:func:`newton_radius` in float64, about the float ``x``: coefficients ``c`` (the
    working-precision ones rounded to float64) and their absolute values ``a``.  The
    rounding bound covers Horner's rule and the rounding of the coefficients; None where
    it does not separate P'(x) from 0 or a value is not finite.

    Examples
    --------
    >>> 0 < float_newton_radius([1.0, 0.0, -4.0], [1.0, 0.0, 4.0], 2.0) < 1e-13
    True
    """
    n = len(c) - 1
    val, der, size, size_d, ax = c[0], 0.0, a[0], 0.0, abs(x)
    for ci, ai in zip(c[1:], a[1:]):
        der = val + x * der
        val = ci + x * val
        size_d = size + ax * size_d
        size = ai + ax * size
    u = 4 * (n + 1) * 2.0 ** -53
    lower = abs(der) - u * size_d
    if not (lower > 0 and math.isfinite(size) and math.isfinite(val)):
        return None
    return 2 * n * (abs(val) + u * size) / lower
