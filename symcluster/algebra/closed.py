"""Real closed forms of the roots of irreducible factors of degree 1 to 4.

The coefficient algebra (depressing the polynomial, discriminants, resolvents, square
parts) runs on python-flint ``fmpq_mpoly`` polynomials in the couplings; sympy is used
only to write the finished forms.  sympy's own ``Poly`` arithmetic with rational
scalars converts through expressions and dominated the solve of small clusters.

Forms (``E`` is the energy, the factor is monic after division by its constant
leading coefficient):

* degree 1 and 2: ``-c0/c1``; ``(-b -+ sqrt(b^2 - 4ac)) / 2a`` with square factors of the
  discriminant pulled out of the root;
* degree 3: the trigonometric form of a real-rooted cubic,
  ``w_k = 2 rho cos(acos(-q / 2 rho^3) / 3 - 2 pi k / 3)``, ``rho = sqrt(-p/3)``
  (never Cardano's form with complex intermediates);
* degree 4: biquadratic and ``y^4 + p y^2 + s^2`` structure first, otherwise the
  resolvent cubic (trigonometric form, kept ascending) and its three square roots.

Validity: every closed form uses only real intermediate quantities (square roots of
non-negative numbers, ``acos`` of numbers in [-1, 1]) for every real coupling point at
which the polynomial is real-rooted, and the forms of a factor equal its roots *as a
multiset* at every such point where they are defined.  They are undefined (0/0) only on
a lower-dimensional set where several roots coincide, for homogeneous polynomials in two
couplings typically only at the origin.  Individual forms are not tied to a fixed rank:
where a square root was pulled out of a polynomial factor ``f``
(``sqrt(f**2 g) -> f sqrt(g)``) the ``+-`` branches swap where ``f < 0``; the list is
ascending wherever those factors are positive.  :func:`closed_forms` decides which
factors get closed forms; the others become implicit roots
(:mod:`symcluster.numeric.implicit`).
"""

from __future__ import annotations

import flint
import sympy
from sympy.core.basic import _args_sortkey as _SORT_KEY      # sympy's own argument order

__all__ = ["closed_form_roots", "closed_forms", "add_shift"]

_ONE = ("_one",)        # generator name of the coefficient ring when there are no couplings


def _rational(q):
    """sympy Rational of a python-flint fmpq (or int)."""
    if isinstance(q, int):
        return sympy.Integer(q)
    return sympy.Rational(int(q.p), int(q.q))


# ----------------------------------------------------------------- canonical builders
#
# sympy's evaluating constructors spend most of their time on assumption queries and
# rewrites that never apply to these forms.  The builders below return the tree those
# constructors return (sympy's canonical form, so that rebuilding it changes nothing)
# by sorting arguments the way sympy does, and fall back to the evaluating constructor
# whenever a rewrite could apply (like terms or bases, a rational times a sum, numbers
# under roots).  tests/test_closed.py builds every form both ways and compares trees.

#: Set by the tests to build every form with sympy's evaluating constructors.
EVALUATE = False

_MINUS = sympy.S.NegativeOne
_TWO = sympy.Integer(2)
_THIRD = sympy.Rational(1, 3)
_PI_6 = sympy.pi / 6          # sympy's Mul(1/6, pi); evaluating it costs ~0.2 ms per call
_PI_3 = sympy.pi / 3

#: Largest radicand p*q of sqrt(p/q) taken apart here: below 2**30, sympy's trial division
#: (to 2**15) factors it completely, so both ways give the same square part.
_SQRT_DIRECT_MAX = 2 ** 30


def _sqrt_rational(c):
    """``sympy.sqrt(c)`` of a positive sympy Rational, built directly.

    ``sqrt(p/q) = (s/q) sqrt(r)`` with ``p q = s**2 r``, ``r`` squarefree: sympy writes it as
    ``Mul(s/q, Pow(r, 1/2))`` (``s/q`` left out when it is 1, ``Pow`` when ``r`` is 1).
    Evaluating ``sympy.sqrt`` of a number costs 0.2-0.4 ms (assumption queries).
    """
    p, q = int(c.p), int(c.q)
    n = p * q
    if EVALUATE or p <= 0 or n > _SQRT_DIRECT_MAX:
        return sympy.sqrt(c)
    s = r = 1
    for prime, e in flint.fmpz(n).factor():
        prime = int(prime)
        s *= prime ** (e // 2)
        r *= prime ** (e % 2)
    coeff = sympy.Rational(s, q)
    if r == 1:
        return coeff
    root = sympy.Pow(sympy.Integer(r), sympy.S.Half, evaluate=False)
    if coeff is sympy.S.One:
        return root
    return sympy.Mul._from_args((coeff, root))


def _mul(*factors, commutative=None):
    """``sympy.Mul(*factors)``.

    ``commutative=True`` tells that every factor is commutative (a caller that knows it
    spares sympy asking each new factor; the product's ``is_commutative`` is the same).
    """
    if EVALUATE:
        return sympy.Mul(*factors)
    coeff = sympy.S.One
    rest = []
    for f in factors:
        if f.is_Mul:
            for a in f.args:
                if a.is_Rational:
                    coeff = coeff * a
                else:
                    rest.append(a)
        elif f.is_Rational:
            coeff = coeff * f
        else:
            rest.append(f)
    if coeff.p == 0:
        return sympy.S.Zero
    bases = set()
    numeric = 0
    for f in rest:
        b = f.base if f.is_Pow else f
        if b in bases or not (f.is_Pow or f.is_Symbol or f.is_Add or f.is_Function):
            return sympy.Mul(*factors)
        bases.add(b)
        numeric += b.is_Number
    if len(rest) == 1 and rest[0].is_Add and coeff is not sympy.S.One:
        if len(factors) == 2 and ((factors[0].is_Rational and factors[1].is_Add)
                                  or (factors[1].is_Rational and factors[0].is_Add)):
            # sympy distributes a rational over a sum when the two are all there is (a
            # rational times a product holding a sum is another case: left to sympy)
            return _add(*[_mul(coeff, a, commutative=commutative) for a in rest[0].args],
                        commutative=commutative)
        return sympy.Mul(*factors)
    if numeric > 1:
        return sympy.Mul(*factors)
    if not rest:
        return coeff
    if len(rest) == 1 and coeff is sympy.S.One:
        return rest[0]
    rest.sort(key=_SORT_KEY)
    if coeff is not sympy.S.One:
        rest.insert(0, coeff)
    return sympy.Mul._from_args(rest, commutative)


def _add(*terms, commutative=None):
    """``sympy.Add(*terms)``; ``commutative`` as for :func:`_mul`."""
    if EVALUATE:
        return sympy.Add(*terms)
    coeff = sympy.S.Zero
    rest = []
    for t in terms:
        for a in (t.args if t.is_Add else (t,)):
            if a.is_Rational:
                coeff = coeff + a
            elif a.is_Number:
                return sympy.Add(*terms)
            else:
                rest.append(a)
    # like terms c1 m + c2 m -> (c1 + c2) m, rebuilt as Add.flatten rebuilds them (only for
    # a symbol or a product m: there Mul(c, m) rewrites nothing)
    collected = {}
    merged = False
    for a in rest:
        c, m = a.as_coeff_Mul()
        if (m.is_Add and c is not sympy.S.One) or not c.is_Rational:
            return sympy.Add(*terms)
        hit = collected.get(m)
        if hit is None:
            collected[m] = [c, a]
        elif m.is_Symbol or m.is_Mul:
            hit[0] = hit[0] + c
            hit[1] = None
            merged = True
        else:
            return sympy.Add(*terms)
    if merged:
        rest = []
        for m, (c, a) in collected.items():
            if a is not None:
                rest.append(a)
            elif c.p == 0:
                continue
            elif c is sympy.S.One:
                rest.append(m)
            elif m.is_Mul:
                rest.append(m._new_rawargs(c, *m.args))
            else:
                rest.append(sympy.Mul._from_args((c, m), commutative))
    if not rest:
        return coeff
    if len(rest) == 1 and coeff.p == 0:
        return rest[0]
    rest.sort(key=_SORT_KEY)
    if coeff.p != 0:
        rest.insert(0, coeff)
    return sympy.Add._from_args(rest, commutative)


#: ``nargs`` of a one-argument function such as cos (sympy sets it on every new instance).
_ONE_ARG = sympy.FiniteSet(1)


def _unevaluated(func, arg):
    """``func(arg, evaluate=False)`` for a one-argument sympy function (cos, sin, acos).

    The constructor stores the argument and ``nargs = {1}`` and nothing else when it does
    not evaluate; its checks and its cache cost ~85 us per call, more than the rest of a
    trigonometric form's assembly.
    """
    if EVALUATE:
        return func(arg, evaluate=False)
    obj = sympy.Basic.__new__(func, arg)
    obj.nargs = _ONE_ARG
    return obj


def _sqrt(x):
    """``sympy.sqrt(x)``; only a sum with rational coefficients is built directly."""
    if EVALUATE or not x.is_Add or not all(a.as_coeff_Mul()[0].is_Rational for a in x.args):
        return sympy.sqrt(x)
    if x.is_number:
        return sympy.sqrt(x)
    return sympy.Pow(x, sympy.S.Half, evaluate=False)


class _Ring:
    """Polynomials in the couplings: python-flint arithmetic, sympy only for output.

    Parameters
    ----------
    gens : tuple of sympy.Symbol
        The couplings, in the order of the factor's generators after ``E``; may be empty.
    """

    def __init__(self, gens):
        self.gens = tuple(gens)
        self.ctx = flint.fmpq_mpoly_ctx.get(tuple(g.name for g in gens) or _ONE, "lex")
        self.zero = self.ctx.from_dict({})
        self.one = self.ctx.constant(1)
        self._exprs = {}
        self._splits = {}
        # products of rationals and powers of commutative symbols are commutative
        self._commutative = True if all(g.is_commutative for g in self.gens) else None

    def coefficients(self, rep):
        """Coefficients of ``E^k``, ascending, of ``{(a, e_1, ...): int}`` in ``(E, *gens)``."""
        deg = max(m[0] for m in rep)
        groups = [dict() for _ in range(deg + 1)]
        for mon, c in rep.items():
            groups[mon[0]][mon[1:] if self.gens else (0,)] = c
        return [self.ctx.from_dict(g) for g in groups]

    def expr(self, p):
        """The polynomial `p` as a sympy expression (memoised per ring: forms share parts)."""
        key = str(p)
        hit = self._exprs.get(key)
        if hit is not None:
            return hit
        terms = []
        for mon, c in zip(p.monoms(), p.coeffs()):
            parts = [_rational(c)]
            for g, e in zip(self.gens, mon):
                if e:
                    parts.append(g if e == 1 else sympy.Pow(g, e))
            terms.append(self.mul(*parts))
        out = self.add(*terms)
        self._exprs[key] = out
        return out

    def mul(self, *factors):
        """:func:`_mul` of expressions in these couplings (commutative where they are)."""
        return _mul(*factors, commutative=self._commutative)

    def add(self, *terms):
        """:func:`_add` of expressions in these couplings (commutative where they are)."""
        return _add(*terms, commutative=self._commutative)

    def sqrt_split(self, p):
        """``(c, f, g)`` with ``p = c f**2 g``: c > 0 an fmpq, f and g integer polynomials
        (memoised per ring, like :meth:`expr`)."""
        if p.is_zero():
            return flint.fmpq(0), self.one, self.one
        key = str(p)
        hit = self._splits.get(key)
        if hit is not None:
            return hit
        const, facs = p.factor()
        f, g = self.one, self.one
        for h, m in facs:
            f = f * h ** (m // 2)
            g = g * h ** (m % 2)
        if const < 0:
            const, g = -const, -g
        out = self._splits[key] = (flint.fmpq(const), f, g)
        return out

    def sqrt_expr(self, p):
        """An expression ``S`` with ``S**2 == p`` (up to the sign of pulled-out factors)."""
        c, f, g = self.sqrt_split(p)
        return self.mul(_sqrt_rational(_rational(c)), self.expr(f), _sqrt(self.expr(g)))


def _primitive(p):
    """``(r, P)`` with ``p = r P``, ``P`` primitive with integer coefficients and a
    positive lex-leading coefficient (``P = 1`` for a constant)."""
    coeffs = p.coeffs()
    num = 0
    den = 1
    for c in coeffs:
        num = flint.fmpz(num).gcd(c.p)
        den = den * c.q // flint.fmpz(den).gcd(c.q)
    r = flint.fmpq(num, den)
    if coeffs[0] < 0:
        r = -r
    return r, p / r


def _trig_cubic(R, P, Q, ordered):
    """Roots of ``w**3 + P w + Q`` (coefficient polynomials) in the real-rooted case.

    ``w_k = 2 rho cos(acos(-Q / (2 rho**3)) / 3 - 2 pi k / 3)`` with ``rho = sqrt(-P/3)``,
    listed for k = 2, 1, 0 (ascending when ``rho >= 0``).  A square factor ``f**2`` of
    ``-P/3`` is pulled out of the root, and ``f**3`` is cancelled against ``Q`` when it
    divides it, so the form stays defined where the roots merge along ``f = 0``.

    With ``ordered=False`` the factor is used as ``f``: the multiset of the three values
    is still right for ``f < 0`` (replacing rho by -rho and Q by -Q negates every root
    and the negated cubic's roots are the negated roots), and the form is shorter.
    With ``ordered=True`` it is used as ``|f|`` (and ``Q / |f|**3 = sign(f) Q / f**3``),
    which keeps the list ascending everywhere.
    """
    c, f, g = R.sqrt_split(-P / 3)
    fe = R.expr(f)
    ge = R.expr(g)
    sg = _sqrt(ge)
    use_abs = ordered and not f.is_constant()
    rho = R.mul(_sqrt_rational(_rational(c)), sympy.Abs(fe) if use_abs else fe, sg)
    quo, rem = divmod(Q, f ** 3)
    if rem.is_zero():
        # -quo / (2 c^(3/2) g^(3/2)), with the rational content of quo in front
        r, prim = _primitive(quo) if not quo.is_zero() else (flint.fmpq(0), R.one)
        scale = -r / (2 * c)
        if scale < 0 and len(prim.coeffs()) > 1:
            scale, prim = -scale, -prim
        g_pow = (sympy.Pow(ge, sympy.Rational(-3, 2), evaluate=False) if sg is not ge and sg.is_Pow
                 and sg.base == ge and ge.is_Add else sg ** -3)
        # one product: a rational factor is distributed over a sum only when the sum is
        # all there is (as sympy does it)
        arg = R.mul(R.expr(prim), g_pow, _sqrt_rational(_rational(1 / c)), _rational(scale))
        if use_abs:
            arg = sympy.sign(fe) * arg
        # read off the polynomials what arg.free_symbols and arg.has(I) would find: a
        # symbol wherever a non-zero arg holds a non-constant polynomial, I only from the
        # square root of a negative constant g
        symbolic = (not quo.is_zero() and not EVALUATE
                    and not (prim.is_constant() and g.is_constant() and not use_abs)
                    and not (g.is_constant() and g.leading_coefficient() < 0))
    else:
        arg = -R.expr(Q) / (2 * rho ** 3)
        symbolic = None
    if symbolic is None:
        symbolic = bool(arg.free_symbols) and not arg.has(sympy.I)
    if symbolic:
        # acos.eval leaves such an argument (a ratio of real polynomials and roots) as
        # it is, after a costly search for an imaginary-unit coefficient: skip it
        theta = _unevaluated(sympy.acos, arg)
    else:
        theta = sympy.acos(arg)
    if not symbolic and not theta.free_symbols:
        return [2 * rho * sympy.cos(theta / 3 - 2 * sympy.pi * k / 3) for k in (2, 1, 0)]
    # sympy's own normal forms of cos(a - 4pi/3), cos(a - 2pi/3), cos(a) for a symbolic
    # a = theta/3, built directly: evaluating cos() there costs ~40 ms per cubic cold
    third = R.mul(_THIRD, theta)
    return [R.mul(-_TWO, rho, _unevaluated(sympy.sin, R.add(third, _PI_6))),
            R.mul(-_TWO, rho, _unevaluated(sympy.cos, R.add(third, _PI_3))),
            R.mul(_TWO, rho, _unevaluated(sympy.cos, third))]


def _roots_linear(R, cf):
    c0, c1 = cf
    if c1.is_constant():
        return [R.expr(-c0 / c1.leading_coefficient())]
    return [-R.expr(c0) / R.expr(c1)]


def _roots_quadratic(R, cf):
    c, b, a = cf
    S = R.sqrt_expr(b ** 2 - 4 * a * c)
    if a.is_constant():
        lc = a.leading_coefficient()
        mid = R.expr(-b / (2 * lc))
        half = _rational(1 / (2 * lc))
        return [R.add(mid, R.mul(-half, S)), R.add(mid, R.mul(half, S))]
    a2 = 2 * R.expr(a)
    mid = -R.expr(b) / a2
    half = S / a2
    return [mid - half, mid + half]


def _roots_cubic(R, cf):
    lc = cf[3].leading_coefficient()
    d, c, b = [x / lc for x in cf[:3]]
    p = c - b ** 2 / 3
    q = 2 * b ** 3 / 27 - b * c / 3 + d
    shift = R.expr(-b / 3)
    return [R.add(shift, w) for w in _trig_cubic(R, p, q, ordered=False)]


def _roots_quartic(R, cf):
    lc = cf[4].leading_coefficient()
    e, d, c, b = [x / lc for x in cf[:4]]
    p = c - 3 * b ** 2 / 8
    q = b ** 3 / 8 - b * c / 2 + d
    r = e - 3 * b ** 4 / 256 + b ** 2 * c / 16 - b * d / 4
    shift = R.expr(-b / 4)
    half = sympy.Rational(1, 2)
    if q.is_zero():
        cr, fr, gr = R.sqrt_split(r)
        root_cr = _sqrt_rational(_rational(cr))
        if r.is_zero() or (gr == R.one and root_cr.is_Rational):
            # y^4 + p y^2 + s^2: roots (±sqrt(2s - p) ± sqrt(-2s - p)) / 2
            s = fr * flint.fmpq(int(root_cr.p), int(root_cr.q)) if not r.is_zero() else R.zero
            A = R.mul(half, R.sqrt_expr(2 * s - p))
            B = R.mul(half, R.sqrt_expr(-2 * s - p))
            ys = [R.add(R.mul(_MINUS, A), R.mul(_MINUS, B)), R.add(R.mul(_MINUS, A), B),
                  R.add(A, R.mul(_MINUS, B)), R.add(A, B)]
        else:
            S = R.sqrt_expr(p ** 2 - 4 * r)
            pe = R.expr(p)
            wm = R.mul(half, R.add(R.mul(_MINUS, pe), R.mul(_MINUS, S)))
            wp = R.mul(half, R.add(R.mul(_MINUS, pe), S))
            ys = [R.mul(_MINUS, _sqrt(wp)), R.mul(_MINUS, _sqrt(wm)), _sqrt(wm), _sqrt(wp)]
        return [R.add(shift, y) for y in ys]
    # resolvent z^3 + 2p z^2 + (p^2 - 4r) z - q^2, roots (a1+a2)^2, ... >= 0
    P = -(p ** 2) / 3 - 4 * r
    Q = -2 * p ** 3 / 27 + 8 * p * r / 3 - q ** 2
    zshift = R.expr(-2 * p / 3)
    z2, z1, z0 = [R.add(zshift, w) for w in _trig_cubic(R, P, Q, ordered=True)]  # z2 smallest
    s0, s1, s2 = [R.mul(half, _sqrt(z)) for z in (z0, z1, z2)]
    sig = -sympy.sign(R.expr(q))
    t2 = R.mul(sig, s2)
    ys = [
        R.add(R.mul(_MINUS, s0), R.mul(_MINUS, s1), t2),
        R.add(R.mul(_MINUS, s0), s1, R.mul(_MINUS, t2)),
        R.add(s0, R.mul(_MINUS, s1), R.mul(_MINUS, t2)),
        R.add(s0, s1, t2),
    ]
    return [R.add(shift, y) for y in ys]


def closed_form_roots(rep, gens, rings=None):
    """Closed forms of the roots in ``E`` of an irreducible factor of degree 1 to 4.

    Parameters
    ----------
    rep : dict[tuple[int, ...], int]
        The factor: irreducible over Q, integer coefficients, exponent tuples in
        ``gens``; for degree 3 and 4 the leading coefficient in ``E`` must be a constant.
    gens : tuple of sympy.Symbol
        ``(E, *couplings)``.
    rings : dict, optional
        One caller's polynomial rings by couplings: the factors written with it share
        the expressions of equal polynomials in the couplings (a discriminant met in
        several factors is written once).  The forms are the same with or without it.

    Returns
    -------
    list of sympy.Expr
        ``deg_E`` expressions (see the module docstring).
    """
    couplings = tuple(gens[1:])
    if rings is None:
        R = _Ring(couplings)
    else:
        R = rings.get(couplings)
        if R is None:
            R = rings[couplings] = _Ring(couplings)
    cf = R.coefficients(rep)
    deg = len(cf) - 1
    if deg == 1:
        return _roots_linear(R, cf)
    if deg == 2:
        return _roots_quadratic(R, cf)
    if deg == 3:
        return _roots_cubic(R, cf)
    if deg == 4:
        return _roots_quartic(R, cf)
    raise ValueError(f"closed forms are written for degrees 1 to 4, not {deg}")


def add_shift(r, k, shift):
    """``r + k*shift`` (a closed form moved by k eta pairs), as sympy's ``Add`` builds it."""
    commutative = True if r.is_commutative and shift.is_commutative else None
    return _add(r, _mul(sympy.Integer(k), shift, commutative=commutative),
                commutative=commutative)


def closed_forms(rep, gens, max_closed_degree=4, rings=None):
    """Closed forms of an irreducible factor given as plain data, or None.

    Parameters
    ----------
    rep : dict[tuple[int, ...], int]
        Irreducible over Q, integer coefficients, exponent tuples in ``gens``.
    gens : tuple of sympy.Symbol
        ``(E, *couplings)``.
    max_closed_degree : int, optional
    rings : dict, optional
        Shared between the factors of one caller (see
        :func:`closed_form_roots`).

    Returns
    -------
    list of sympy.Expr or None
        The ``deg_E`` closed forms; None where the roots are implicit (degree above
        `max_closed_degree` and at least 3, or a non-constant leading coefficient in
        ``E`` at degree 3 or 4).

    Examples
    --------
    >>> E, t = sympy.symbols("E t", real=True)
    >>> closed_forms({(2, 0): 1, (0, 2): -4}, (E, t))
    [-2*t, 2*t]
    >>> closed_forms({(5, 0): 1, (0, 5): -1}, (E, t)) is None
    True
    """
    deg = max(m[0] for m in rep)
    if deg <= 2:
        return closed_form_roots(rep, gens, rings)
    if deg <= max_closed_degree and all(not any(m[1:]) for m in rep if m[0] == deg):
        return closed_form_roots(rep, gens, rings)
    return None
