"""Build sympy Polys from plain ``{exponent tuple: coefficient}`` dictionaries, fast.

``sympy.Poly.from_dict`` converts every coefficient through the domain's generic
conversion and builds the dense recursive representation one innermost list at a
time.  Level polynomials of 8-site clusters are homogeneous of degree ~300 in
(E, t, U): every innermost list then holds a single non-zero entry, and that
construction dominated the unpacking of block results (about 0.57 s per degree-336
factor).  Here the innermost lists are made by one list multiplication each; the
result is the same canonical representation (leading entries non-zero at every
level, the zero polynomial as nested empty lists), tested against ``from_dict``.
"""

from __future__ import annotations

from fractions import Fraction

import sympy
from sympy.polys.densebasic import dmp_zero
from sympy.polys.polyclasses import DMP

__all__ = ["poly_from_dict"]


def _first(item):
    return item[0]


def _element(domain, c):
    if isinstance(c, int) and domain.is_ZZ:
        return domain(c)
    if isinstance(c, Fraction):
        c = sympy.Rational(c.numerator, c.denominator)
    return domain.convert(c)


def _dense(items, lev, zero):
    """Dense recursive list (highest power first) of non-empty ``[(monomial, element)]``
    sorted in descending order of the monomials."""
    d = items[0][0][0]
    if lev == 0:
        out = [zero] * (d + 1)
        for m, c in items:
            out[d - m[0]] = c
        return out
    out = [None] * (d + 1)
    start, n = 0, len(items)
    while start < n:
        e = items[start][0][0]
        end = start + 1
        while end < n and items[end][0][0] == e:
            end += 1
        out[d - e] = _dense([(m[1:], c) for m, c in items[start:end]], lev - 1, zero)
        start = end
    return [dmp_zero(lev - 1) if v is None else v for v in out]


def poly_from_dict(rep, gens, domain):
    """``sympy.Poly.from_dict(rep, gens, domain=domain)``, built directly.

    Parameters
    ----------
    rep : dict[tuple[int, ...], int or Fraction or sympy.Rational]
        Exponent tuples of length ``len(gens)``; zero coefficients are dropped.
    gens : sequence of sympy.Symbol
    domain : sympy domain
        ``ZZ`` or ``QQ``.

    Returns
    -------
    sympy.Poly
    """
    gens = tuple(gens)
    lev = len(gens) - 1
    items = []
    for m, c in rep.items():
        if c:
            m = tuple(int(e) for e in m)
            if len(m) != len(gens) or min(m, default=0) < 0:
                raise ValueError(f"exponent tuple {m} does not fit the generators {gens}")
            items.append((m, _element(domain, c)))
    items.sort(key=_first, reverse=True)
    dense = _dense(items, lev, domain.zero) if items else dmp_zero(lev)
    return sympy.Poly.new(DMP.new(dense, domain, lev), *gens)
