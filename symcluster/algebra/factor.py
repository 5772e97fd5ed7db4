"""Exact factorization of characteristic polynomials over the rationals.

python-flint's ``fmpz_mpoly`` factorization does the work; sympy's ``factor_list`` is
the fallback when python-flint is missing.  Conversions go through plain
``{monomial: int}`` dictionaries.
"""

from __future__ import annotations

import math
from fractions import Fraction

import sympy
from sympy.polys.domains import ZZ

from symcluster.algebra.polydict import poly_from_dict
from symcluster.errors import ModelError
from symcluster.linalg import integer_multiple

try:
    import flint

    HAVE_FLINT = True
except ImportError:  # pragma: no cover
    flint = None
    HAVE_FLINT = False

__all__ = ["factor_charpoly", "content_and_factors", "factor_integer_dict", "to_integer_dict",
           "proven_irreducible"]


def to_integer_dict(poly):
    """Clear denominators of a sympy Poly.

    Parameters
    ----------
    poly : sympy.Poly
        Over ``ZZ`` or ``QQ``.

    Returns
    -------
    scale : fractions.Fraction
        Positive rational with ``poly == scale * sum(c * monomial)``.
    rep : dict[tuple[int, ...], int]
        Integer coefficients of the primitive integer multiple of `poly`.

    Raises
    ------
    ModelError
        If the coefficient domain is not ``ZZ`` or ``QQ``.
    """
    if not (poly.domain.is_ZZ or poly.domain.is_QQ):
        raise ModelError(
            f"polynomial domain {poly.domain} is not ZZ or QQ; build the polynomial with "
            "rational coefficients"
        )
    raw = {m: Fraction(int(c.numerator), int(c.denominator)) if poly.domain.is_QQ else Fraction(int(c))
           for m, c in poly.as_dict(native=True).items()}
    if not raw:
        return Fraction(0), {}
    return integer_multiple(raw)


def _normalize(rep):
    """Make the lex-leading coefficient (E first) positive; return (sign, rep)."""
    lead = max(rep)
    if rep[lead] < 0:
        return -1, {m: -c for m, c in rep.items()}
    return 1, rep


def content_and_factors(poly):
    """Factor `poly` over Q into a rational constant and integer irreducible factors.

    Parameters
    ----------
    poly : sympy.Poly
        Nonzero polynomial over ``ZZ`` or ``QQ`` in generators ``(E, *couplings)``.

    Returns
    -------
    constant : sympy.Rational
        With ``poly == constant * prod(f**m for f, m in factors)`` exactly.
    factors : list of (sympy.Poly, int)
        Distinct irreducible non-constant factors over ``ZZ`` (primitive, lex-leading
        coefficient positive, same generators as `poly`), with multiplicities, sorted
        by (degree in E, lex representation).

    Raises
    ------
    ModelError
        For the zero polynomial or a non-rational domain.
    """
    if poly.is_zero:
        raise ModelError("cannot factor the zero polynomial; check the block it came from")
    scale, rep = to_integer_dict(poly)
    gens = poly.gens
    const, facs = factor_integer_dict(rep, gens)
    c = scale * const
    return (sympy.Rational(c.numerator, c.denominator),
            [(poly_from_dict(frep, gens, ZZ), m) for frep, m in facs])


def factor_integer_dict(rep, gens):
    """:func:`content_and_factors` on plain data: ``{exponent tuple: int}`` in, dicts out.

    Parameters
    ----------
    rep : dict[tuple[int, ...], int]
        A nonzero polynomial with integer coefficients; exponent tuples have one entry
        per generator, the first generator (``E``) first.
    gens : sequence
        The generators (only their number is used by python-flint; the sympy fallback
        needs the symbols).

    Returns
    -------
    constant : int
        With ``rep == constant * prod(f**m)``.
    factors : list of (dict, int)
        Irreducible non-constant integer factors (primitive, lex-leading coefficient
        positive) with multiplicities, sorted by (degree in the first generator,
        sorted terms).
    """
    one = (1,) + (0,) * (len(gens) - 1)
    if rep.get(one) == 1 and all(m[0] == 0 for m in rep if m != one):
        # E + c(couplings): monic of degree one in E, so primitive and irreducible
        return 1, [(rep, 1)]
    if len(gens) > 1 and HAVE_FLINT and proven_irreducible(rep):
        g = 0
        for v in rep.values():
            g = math.gcd(g, int(v))
        const, facs = g, [({k: int(v) // g for k, v in rep.items()}, 1)]
    elif len(gens) > 0 and HAVE_FLINT:
        const, facs = _factor_flint(rep, gens)
    else:  # pragma: no cover - only without python-flint
        const, facs = _factor_sympy(rep, gens)
    out = []
    sign = const
    for frep, m in facs:
        s, frep = _normalize(frep)
        sign *= s**m
        out.append((frep, m))
    out.sort(key=lambda fm: (max(k[0] for k in fm[0]), sorted(fm[0].items())))
    return sign, out


def factor_charpoly(poly):
    """Irreducible factors over Q of a characteristic polynomial, with multiplicities.

    Parameters
    ----------
    poly : sympy.Poly
        Over ``ZZ`` or ``QQ`` in generators ``(E, *couplings)``.

    Returns
    -------
    list of (sympy.Poly, int)
        Irreducible factors with integer coefficients, primitive, with positive
        lex-leading coefficient (``E`` is the first generator, so for a factor that
        contains ``E`` this is the leading coefficient in ``E``, or its own leading
        term).  Their product equals `poly` up to a rational constant, which is 1 when
        `poly` is monic in ``E`` with integer coefficients (every integer block's
        characteristic polynomial); use :func:`content_and_factors` to get it.

    Examples
    --------
    >>> E, t = sympy.symbols("E t", real=True)
    >>> factor_charpoly(sympy.Poly(E**4 - 5*t**2*E**2 + 4*t**4, E, t))
    [(Poly(E - 2*t, E, t, domain='ZZ'), 1), (Poly(E - t, E, t, domain='ZZ'), 1), (Poly(E + t, E, t, domain='ZZ'), 1), (Poly(E + 2*t, E, t, domain='ZZ'), 1)]
    """
    return content_and_factors(poly)[1]


#: integer values given to the couplings in :func:`proven_irreducible`, one tuple per try
_SPECIALISATIONS = (3, 7, 11)


def proven_irreducible(rep):
    """True when the integer polynomial ``rep`` ({exponents: coefficient}, E the first
    generator) is proven irreducible over Q up to its integer content; False means "not
    proven" (then the general factorisation decides).

    The proof: the leading coefficient in E is a nonzero integer (every block's
    characteristic polynomial is monic in E), and at some integer values of the other
    generators the polynomial in E keeps its degree and is irreducible (python-flint's
    univariate factorisation).  A factorisation f g with both factors of positive degree
    in E would specialise to one of that polynomial; a factor of degree 0 in E divides the
    constant leading coefficient, so it is an integer (Gauss's lemma).  This spares the
    multivariate factorisation, which on some irreducible polynomials of degree ~30 in E
    and U ran for minutes (six-site graphs at half filling).

    Examples
    --------
    >>> proven_irreducible({(2, 0): 1, (0, 2): -2, (0, 0): -1})     # E^2 - 2U^2 - 1
    True
    >>> proven_irreducible({(2, 0): 1, (0, 2): -1})                 # (E - U)(E + U)
    False
    """
    n = max(k[0] for k in rep)
    lead = [k for k in rep if k[0] == n]
    if n < 2 or len(lead) != 1 or any(lead[0][1:]):
        return False
    for c in _SPECIALISATIONS:
        coeffs = [0] * (n + 1)
        for k, v in rep.items():
            term = int(v)
            for j, e in enumerate(k[1:]):
                term *= (c + 2 * j) ** e          # distinct values per coupling
            coeffs[k[0]] += term
        q = flint.fmpz_poly(coeffs)
        if q.degree() != n:
            continue
        _c, facs = q.factor()
        if len(facs) == 1 and facs[0][1] == 1:
            return True
    return False


def _factor_flint(rep, gens):
    names = tuple(f"x{i}" for i in range(len(gens)))
    ctx = flint.fmpz_mpoly_ctx.get(names, "lex")
    p = ctx.from_dict(rep)
    const, facs = p.factor()
    out = []
    for f, m in facs:
        out.append(({tuple(map(int, k)): int(v) for k, v in zip(f.monoms(), f.coeffs())}, int(m)))
    return int(const), out


def _factor_sympy(rep, gens):  # pragma: no cover - only without python-flint
    expr_poly = sympy.Poly.from_dict({k: ZZ(v) for k, v in rep.items()}, gens, domain=ZZ)
    const, facs = expr_poly.factor_list()
    out = []
    for f, m in facs:
        out.append(({k: int(v) for k, v in f.as_dict().items()}, int(m)))
    return int(const), out
