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

__all__ = ["poly_from_dict", "dense_terms", "integer_dict"]


def _element(domain, c):
    if isinstance(c, int) and domain.is_ZZ:
        return domain(c)
    if isinstance(c, Fraction):
        c = sympy.Rational(c.numerator, c.denominator)
    return domain.convert(c)


def _leaf(node, zero):
    """The dense list (highest power first) of ``{exponent: element}``, non-empty."""
    d = max(node)
    out = [zero] * (d + 1)
    for e, c in node.items():
        out[d - e] = c
    return out


def _dense(node, lev, zero):
    """Dense recursive list (highest power first) of a non-empty tree of nested dicts
    ``{exponent: subtree}`` whose leaves (at ``lev`` = 0) map exponents to elements.
    A missing exponent is ``dmp_zero(lev - 1)``, the nested empty lists written out."""
    if lev == 0:
        return _leaf(node, zero)
    d = max(node)
    get = node.get
    out = []
    if lev == 1:
        for e in range(d, -1, -1):
            sub = get(e)
            out.append(_leaf(sub, zero) if sub is not None else [])
        return out
    for e in range(d, -1, -1):
        sub = get(e)
        out.append(_dense(sub, lev - 1, zero) if sub is not None else dmp_zero(lev - 1))
    return out


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
    root = {}
    make = domain.dtype if domain.is_ZZ else None       # ZZ(c) for an int c, directly
    n = len(gens)
    for m, c in rep.items():
        if c:
            m = tuple(map(int, m))
            if len(m) != n or min(m, default=0) < 0:
                raise ValueError(f"exponent tuple {m} does not fit the generators {gens}")
            node = root
            for e in m[:-1]:
                sub = node.get(e)
                if sub is None:
                    sub = node[e] = {}
                node = sub
            node[m[-1]] = make(c) if make is not None and type(c) is int else _element(domain, c)
    dense = _dense(root, lev, domain.zero) if root else dmp_zero(lev)
    return sympy.Poly.new(DMP.new(dense, domain, lev), *gens)


def dense_terms(rep, nvars, prefix=(), out=None):
    """``[(exponents, coefficient)]`` of the non-zero entries of a dense recursive list.

    ``rep`` is a polynomial in ``nvars`` generators as sympy's dense representation
    (``Poly.rep.to_list()``; highest power first at every level); ``prefix`` is put in
    front of every exponent tuple, and the pairs are appended to ``out`` (a new list
    by default), which is returned.
    """
    if out is None:
        out = []
    top = len(rep) - 1
    if nvars == 1:
        for i, c in enumerate(rep):
            if c:
                out.append((prefix + (top - i,), c))
    else:
        for i, sub in enumerate(rep):
            if sub:
                dense_terms(sub, nvars - 1, prefix + (top - i,), out)
    return out


def integer_dict(poly):
    """``{exponents: int}`` of a Poly over ``ZZ`` (as ``poly.rep.to_dict()``, with ints)."""
    return {m: int(c) for m, c in dense_terms(poly.rep.to_list(), len(poly.gens))}
