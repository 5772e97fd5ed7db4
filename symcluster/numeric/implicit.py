"""Implicit roots: the k-th real root of an irreducible polynomial, evaluated with a certificate.

:class:`ImplicitRoot` is the energy of a level without a closed form.  :func:`roots_of`
returns, for a polynomial ``P(E, couplings)`` with integer (or rational) coefficients,
exactly ``deg_E P`` energies: the closed forms of :mod:`symcluster.algebra.closed` for
irreducible factors of degree <= 4 whose leading coefficient in ``E`` is a constant,
:class:`ImplicitRoot` objects otherwise (see that module for where the closed forms are
valid).  :func:`verify_roots` checks a list of roots against the certified roots of the
polynomial at exact points.

The values come from :func:`symcluster.numeric.isolate.isolate` on the integer polynomial
obtained by substituting an exact rational point.
"""

from __future__ import annotations

import collections
import contextlib
from math import lcm

import mpmath
import sympy
from sympy.polys.domains import ZZ

from symcluster.algebra.closed import closed_forms
from symcluster.algebra.factor import content_and_factors, to_integer_dict
from symcluster.errors import ModelError, VerificationError
from symcluster.numeric.rootexpr import level_root
from symcluster.numeric.isolate import (homogeneous_ints, point_values, real_roots_at,
                                        roots_from_coeffs, univariate_ints)

__all__ = ["ImplicitRoot", "roots_of", "roots_of_irreducible", "verify_roots", "remember_terms"]


_PREPARED = {}


class _Terms(tuple):
    """A tuple of terms that hashes once: cache keys of high-degree factors (tens of
    thousands of terms) would otherwise be re-hashed on every evaluation."""

    def __new__(cls, items):
        self = super().__new__(cls, items)
        self._hash = tuple.__hash__(self)
        return self

    def __hash__(self):
        return self._hash


def _prepared_terms(poly):
    """Sorted integer terms of a Poly, shared by all roots of polynomial objects with the
    same representation (copies of a factor share it)."""
    rep = poly.rep
    hit = _PREPARED.get(id(rep))
    if hit is not None and hit[0] is rep:
        return hit[1]
    terms = _Terms(sorted((m, int(c)) for m, c in poly.as_dict(native=True).items()))
    _keep(rep, terms)
    return terms


def _keep(rep, terms):
    if len(_PREPARED) > 4096:
        _PREPARED.clear()
    _PREPARED[id(rep)] = (rep, terms)


def remember_terms(poly, rep):
    """Tell the implicit roots the integer terms of ``poly`` that the caller already has.

    ``rep`` is ``{exponents: int}``, the dict ``poly`` was built from (e.g. by
    :func:`~symcluster.algebra.polydict.poly_from_dict`); the roots of ``poly`` then need no
    conversion of its representation back to terms, which costs seconds for factors of
    degree ~300 with tens of thousands of terms.  Returns ``poly``.

    Examples
    --------
    >>> E, U = sympy.symbols("E U", real=True)
    >>> p = remember_terms(sympy.Poly(E**2 - U**2, E, U), {(2, 0): 1, (0, 2): -1})
    >>> ImplicitRoot(p, 1).numeric({U: 3}, digits=10)
    mpf('3.0')
    """
    # exponents as Python ints (python-flint's monomials may hold fmpz)
    _keep(poly.rep, _Terms(sorted((tuple(map(int, m)), int(c)) for m, c in rep.items() if c)))
    return poly



#: The root lists of the most recently evaluated polynomials (least recently used dropped);
#: mpf values are immutable, so the cached tuples are shared safely.
_ALL_ROOTS = collections.OrderedDict()
_ALL_ROOTS_MAX = 64


class ImplicitRoot:
    """The ``index``-th real root (0-based, ascending) of an irreducible polynomial.

    Parameters
    ----------
    poly : sympy.Poly
        Irreducible over Q, integer coefficients, generators ``(E, *couplings)``.
    index : int
        ``0 <= index < degree``: rank of the root among the real roots in ascending
        order at the evaluation point.

    Attributes
    ----------
    poly, index : as given
    symbols : tuple of sympy.Symbol
        The coupling generators ``poly.gens[1:]``.
    free_symbols : set of sympy.Symbol
        Couplings that actually occur in `poly`.
    degree : int
        Degree of `poly` in ``E``.

    Examples
    --------
    >>> E, U = sympy.symbols("E U", real=True)
    >>> r = ImplicitRoot(sympy.Poly(E**5 - 5*E**3 + 4*E - U, E, U), 4)
    >>> r.numeric({U: sympy.Integer(0)}, digits=15)
    mpf('2.0')
    >>> print(r.latex())
    \\text{root } 4 \\text{ of } \\epsilon^{5} - 5 \\epsilon^{3} + 4 \\epsilon - U = 0
    >>> r.subs({"U": 0}).evalf(15)
    2.00000000000000
    """

    __slots__ = ("poly", "index", "_terms", "_key")

    def __init__(self, poly, index):
        if not isinstance(poly, sympy.Poly):
            raise ModelError(f"ImplicitRoot needs a sympy.Poly, got {type(poly).__name__}; wrap it in Poly(expr, E, ...)")
        if not poly.domain.is_ZZ:
            scale, rep = to_integer_dict(poly)
            poly = sympy.Poly.from_dict({k: ZZ(v) for k, v in rep.items()}, poly.gens, domain=ZZ)
        deg = poly.degree(poly.gens[0])
        if not (isinstance(index, int) and 0 <= index < deg):
            raise ModelError(f"root index {index!r} is outside 0..{deg - 1} for a polynomial of degree {deg} in {poly.gens[0]}")
        self.poly = poly
        self.index = index
        self._terms = _prepared_terms(poly)
        self._key = (self._terms, poly.gens, index)

    @property
    def symbols(self):
        return tuple(self.poly.gens[1:])

    @property
    def free_symbols(self):
        return set(self.poly.free_symbols) - {self.poly.gens[0]}

    @property
    def degree(self):
        return self.poly.degree(self.poly.gens[0])

    def numeric(self, point, digits=30, isolations=None):
        """Value at an exact rational point, correct to `digits` significant digits.

        Parameters
        ----------
        point : dict[sympy.Symbol, sympy.Rational]
            A value for every coupling in :attr:`symbols` (extra keys are ignored).
        digits : int
        isolations : dict, optional
            Results of :func:`~symcluster.numeric.isolate.isolate` computed ahead (for
            instance on a process pool), keyed by :meth:`isolation_key`; used instead of
            isolating again.  The value does not depend on it.

        Returns
        -------
        mpmath.mpf

        Raises
        ------
        VerificationError
            If the polynomial is not real-rooted at the point or drops degree there.
        """
        return self._all_roots_at(point, int(digits), isolations)[self.index]

    def isolation_key(self, point, digits=30):
        """The arguments of the isolation that ``self.numeric(point, digits)`` performs.

        ``isolate(*key)`` (:func:`~symcluster.numeric.isolate.isolate`) is a pure
        function of plain integers, so it can run in another process; its result, stored
        under ``key`` in a dict passed as ``isolations``, is then used as it is.

        Examples
        --------
        >>> E, U = sympy.symbols("E U", real=True)       # homogeneous: 2 guard digits
        >>> ImplicitRoot(sympy.Poly(E**2 - U**2, E, U), 0).isolation_key({U: 3}, 20)
        ((-9, 0, 1), 22)
        """
        coeffs, den = self._integer_poly_at(point)
        return coeffs, int(digits + 2 if den is not None else digits)

    def _all_roots_at(self, point, digits, isolations=None):
        """Every root of the polynomial at `point` (ascending, mpf at `digits` digits).

        Shared by the other roots of the same polynomial: a spectrum holds all
        ``degree`` roots of each factor, and evaluating it level by level would
        otherwise evaluate the polynomial and convert its roots ``degree`` times.
        """
        vals = tuple(point_values(self.poly.gens[1:], point))
        key = (self._terms, self.poly.gens, vals, digits)
        hit = _ALL_ROOTS.get(key)
        if hit is not None:
            with contextlib.suppress(KeyError):     # another thread may have dropped it
                _ALL_ROOTS.move_to_end(key)
            return hit
        coeffs, den = self._integer_poly_at(point)
        if den is not None:
            # roots of P(x, nums) are den * E
            roots = roots_from_coeffs(coeffs, self.degree, digits + 2, self.poly, point,
                                      isolations)
            with mpmath.workdps(digits):
                roots = [+(r / den) for r in roots]
        else:
            roots = roots_from_coeffs(coeffs, self.degree, digits, self.poly, point, isolations)
        _ALL_ROOTS[key] = roots = tuple(roots)
        while len(_ALL_ROOTS) > _ALL_ROOTS_MAX:
            with contextlib.suppress(KeyError):
                _ALL_ROOTS.popitem(last=False)
        return roots

    def _integer_poly_at(self, point):
        """(integer coefficients, den) of the polynomial at `point`, roots scaled by den.

        Homogeneous polynomials give den = lcm of the point's denominators (the roots of the
        integer polynomial are den * E); otherwise den is None and the roots are E itself.
        """
        vals = point_values(self.poly.gens[1:], point)
        den = 1
        for v in vals:
            den = lcm(den, v.denominator)
        nums = tuple(int(v * den) for v in vals)
        coeffs = homogeneous_ints(self._terms, self.degree, nums, den)
        if coeffs is not None:
            return coeffs, den
        return univariate_ints(self._terms, self.degree, tuple(vals)), None

    def latex(self):
        r"""LaTeX in symcluster's words: ``\text{root } k \text{ of } P(\epsilon) = 0``.

        ``k = index``, counted from 0 (lowest root) as everywhere in symcluster; the
        energy variable is printed as epsilon (E would read as Euler's number).
        """
        return sympy.latex(self.as_expr())

    def as_expr(self):
        """This root as a sympy expression (:class:`~symcluster.numeric.rootexpr.LevelRoot`):
        it substitutes, evaluates (``evalf``), lambdifies and prints in LaTeX."""
        return level_root(self.poly, self.index)

    def _sympy_(self):
        return self.as_expr()

    def _latex(self, printer):
        return printer._print(self.as_expr())

    def subs(self, *args, **kwargs):
        """``as_expr().subs(...)``; a dict may name couplings by string (``{"U": 4}``)."""
        if len(args) == 1 and isinstance(args[0], dict):
            by_name = {s.name: s for s in self.symbols}
            args = ({by_name.get(k, k) if isinstance(k, str) else k: v
                     for k, v in args[0].items()},)
        return self.as_expr().subs(*args, **kwargs)

    def evalf(self, n=15, subs=None, **kwargs):
        """``as_expr().evalf(...)`` (needs every coupling substituted first)."""
        return self.as_expr().evalf(n, subs=subs, **kwargs)

    def __eq__(self, other):
        return isinstance(other, ImplicitRoot) and self._key == other._key

    def __hash__(self):
        return hash(("ImplicitRoot",) + self._key)

    def __repr__(self):
        return f"ImplicitRoot({self.poly.as_expr()}, index={self.index})"


def roots_of_irreducible(f, max_closed_degree=4):
    """Roots in ``E`` of a polynomial already known to be irreducible over Q.

    The same forms as :func:`roots_of`, without factoring again: for the factors
    that :func:`~symcluster.algebra.factor.factor_charpoly` returns.

    Parameters
    ----------
    f : sympy.Poly
        Irreducible over Q, integer coefficients, generators ``(E, *couplings)``.
    max_closed_degree : int, optional

    Returns
    -------
    list of (sympy.Expr or ImplicitRoot)
        ``deg_E(f)`` entries.
    """
    deg = f.degree(f.gens[0])
    if deg == 0:
        return []
    closed = closed_forms({m: int(c) for m, c in f.as_dict(native=True).items()}, f.gens,
                          max_closed_degree)
    return closed if closed is not None else [ImplicitRoot(f, k) for k in range(deg)]


def roots_of(poly, max_closed_degree=4):
    """All roots in ``E`` of a polynomial, as closed forms or implicit roots.

    Parameters
    ----------
    poly : sympy.Poly
        Over ``ZZ`` or ``QQ`` in generators ``(E, *couplings)``; real-rooted at every
        real coupling point (true for characteristic polynomials of blocks with real
        spectrum).
    max_closed_degree : int, optional
        Irreducible factors of higher degree (at most 4 is used) give
        :class:`ImplicitRoot` entries; lower it to 2 or 3 for shorter expressions.

    Returns
    -------
    list of (sympy.Expr or ImplicitRoot)
        Exactly ``deg_E(poly)`` entries; each irreducible factor of multiplicity ``m``
        contributes its roots ``m`` times.  See the module docstring for the validity
        of the closed forms.

    Examples
    --------
    >>> E, t, U = sympy.symbols("E t U", real=True)
    >>> roots_of(sympy.Poly(E**2 - U*E - 4*t**2, E, t, U))
    [U/2 - sqrt(U**2 + 16*t**2)/2, U/2 + sqrt(U**2 + 16*t**2)/2]
    """
    if not isinstance(poly, sympy.Poly):
        raise ModelError(f"roots_of needs a sympy.Poly, got {type(poly).__name__}; wrap it in Poly(expr, E, ...)")
    E = poly.gens[0]
    if poly.degree(E) <= 0:
        return []
    _, facs = content_and_factors(poly)
    out = []
    for f, m in facs:
        out.extend(roots_of_irreducible(f, max_closed_degree) * m)
    return out


# --------------------------------------------------------------------------- verification


def _eval_root(root, point, digits):
    if isinstance(root, ImplicitRoot):
        return mpmath.mpc(root.numeric(point, digits + 5))
    subs = {}
    for s in root.free_symbols:
        vals = point_values((s,), point)
        subs[s] = sympy.Rational(vals[0].numerator, vals[0].denominator)
    # Twice the digits: near coinciding roots acos/sqrt of an argument at the edge of
    # its domain keep only about half of the working digits.
    n = 2 * digits + 20
    re, im = root.xreplace(subs).evalf(n).as_real_imag()
    with mpmath.workdps(n):
        return mpmath.mpc(mpmath.mpf(sympy.Float(re, n)), mpmath.mpf(sympy.Float(im, n)))


def verify_roots(poly, roots, points, digits=30):
    """Check that `roots` are the roots of `poly` (as a multiset) at exact points.

    Parameters
    ----------
    poly : sympy.Poly
        In ``(E, *couplings)``.
    roots : sequence of (sympy.Expr or ImplicitRoot)
        Claimed roots, ``deg_E(poly)`` of them.
    points : iterable of dict
        Exact rational coupling values.
    digits : int
        Precision of the comparison: each root must agree with the certified root of
        ``poly`` at the point to ``10**-(digits - 5)`` relative to the largest root in
        magnitude (absolute when all roots vanish); imaginary parts likewise.

    Returns
    -------
    float
        The worst relative deviation seen.

    Raises
    ------
    VerificationError
        On a count mismatch or a deviation above tolerance (the message names the
        point and the root).
    """
    roots = list(roots)
    deg = poly.degree(poly.gens[0])
    if len(roots) != deg:
        raise VerificationError(f"{len(roots)} roots given for a polynomial of degree {deg}; expected one per root")
    worst = 0.0
    with mpmath.workdps(digits + 10):
        tol = mpmath.mpf(10) ** (-(digits - 5))
        for point in points:
            ref = real_roots_at(poly, point, digits + 5) if deg else []
            got = [_eval_root(r, point, digits) for r in roots]
            scale = max([abs(x) for x in ref] + [mpmath.mpf(0)])
            scale = scale if scale > 0 else mpmath.mpf(1)
            got_sorted = sorted(got, key=lambda z: z.real)
            for k, (g, want) in enumerate(zip(got_sorted, ref)):
                dev = abs(g - want) / scale
                worst = max(worst, float(dev))
                if dev > tol:
                    raise VerificationError(
                        f"root #{k} (ascending) of {poly.as_expr()} at {point}: expected "
                        f"{mpmath.nstr(want, 20)}, the closed form gives {mpmath.nstr(g, 20)}; "
                        "the root list is wrong for this polynomial"
                    )
    return worst
