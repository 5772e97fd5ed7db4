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

The validity of these forms (real intermediates wherever the polynomial is
real-rooted; the multiset of values) is described in :mod:`symcluster.algebra.roots`.
"""

from __future__ import annotations

import flint
import sympy

__all__ = ["closed_form_roots"]

_ONE = ("_one",)        # generator name of the coefficient ring when there are no couplings


def _rational(q):
    """sympy Rational of a python-flint fmpq (or int)."""
    if isinstance(q, int):
        return sympy.Integer(q)
    return sympy.Rational(int(q.p), int(q.q))


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
            terms.append(sympy.Mul(*parts))
        out = sympy.Add(*terms)
        self._exprs[key] = out
        return out

    def sqrt_split(self, p):
        """``(c, f, g)`` with ``p = c f**2 g``: c > 0 an fmpq, f and g integer polynomials."""
        if p.is_zero():
            return flint.fmpq(0), self.one, self.one
        const, facs = p.factor()
        f, g = self.one, self.one
        for h, m in facs:
            f = f * h ** (m // 2)
            g = g * h ** (m % 2)
        if const < 0:
            const, g = -const, -g
        return flint.fmpq(const), f, g

    def sqrt_expr(self, p):
        """An expression ``S`` with ``S**2 == p`` (up to the sign of pulled-out factors)."""
        c, f, g = self.sqrt_split(p)
        return sympy.sqrt(_rational(c)) * self.expr(f) * sympy.sqrt(self.expr(g))


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
    sg = sympy.sqrt(ge)
    use_abs = ordered and not f.is_constant()
    rho = sympy.sqrt(_rational(c)) * (sympy.Abs(fe) if use_abs else fe) * sg
    quo, rem = divmod(Q, f ** 3)
    if rem.is_zero():
        # -quo / (2 c^(3/2) g^(3/2)), with the rational content of quo in front
        r, prim = _primitive(quo) if not quo.is_zero() else (flint.fmpq(0), R.one)
        scale = -r / (2 * c)
        if scale < 0 and len(prim.coeffs()) > 1:
            scale, prim = -scale, -prim
        # this order keeps a rational factor from being distributed over a sum
        arg = R.expr(prim) * sg ** -3 * sympy.sqrt(_rational(1 / c)) * _rational(scale)
        if use_abs:
            arg = sympy.sign(fe) * arg
    else:
        arg = -R.expr(Q) / (2 * rho ** 3)
    theta = sympy.acos(arg)
    if not theta.free_symbols:
        return [2 * rho * sympy.cos(theta / 3 - 2 * sympy.pi * k / 3) for k in (2, 1, 0)]
    # sympy's own normal forms of cos(a - 4pi/3), cos(a - 2pi/3), cos(a) for a symbolic
    # a = theta/3, built directly: evaluating cos() there costs ~40 ms per cubic cold
    third = theta / 3
    return [-2 * rho * sympy.sin(third + sympy.pi / 6, evaluate=False),
            -2 * rho * sympy.cos(third + sympy.pi / 3, evaluate=False),
            2 * rho * sympy.cos(third, evaluate=False)]


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
        half = _rational(1 / (2 * lc)) * S
    else:
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
    return [shift + w for w in _trig_cubic(R, p, q, ordered=False)]


def _roots_quartic(R, cf):
    lc = cf[4].leading_coefficient()
    e, d, c, b = [x / lc for x in cf[:4]]
    p = c - 3 * b ** 2 / 8
    q = b ** 3 / 8 - b * c / 2 + d
    r = e - 3 * b ** 4 / 256 + b ** 2 * c / 16 - b * d / 4
    shift = R.expr(-b / 4)
    if q.is_zero():
        cr, fr, gr = R.sqrt_split(r)
        root_cr = sympy.sqrt(_rational(cr))
        if r.is_zero() or (gr == R.one and root_cr.is_Rational):
            # y^4 + p y^2 + s^2: roots (±sqrt(2s - p) ± sqrt(-2s - p)) / 2
            s = fr * flint.fmpq(int(root_cr.p), int(root_cr.q)) if not r.is_zero() else R.zero
            A = R.sqrt_expr(2 * s - p)
            B = R.sqrt_expr(-2 * s - p)
            ys = [(-A - B) / 2, (-A + B) / 2, (A - B) / 2, (A + B) / 2]
        else:
            S = R.sqrt_expr(p ** 2 - 4 * r)
            pe = R.expr(p)
            wm = (-pe - S) / 2
            wp = (-pe + S) / 2
            ys = [-sympy.sqrt(wp), -sympy.sqrt(wm), sympy.sqrt(wm), sympy.sqrt(wp)]
        return [shift + y for y in ys]
    # resolvent z^3 + 2p z^2 + (p^2 - 4r) z - q^2, roots (a1+a2)^2, ... >= 0
    P = -(p ** 2) / 3 - 4 * r
    Q = -2 * p ** 3 / 27 + 8 * p * r / 3 - q ** 2
    zshift = R.expr(-2 * p / 3)
    z2, z1, z0 = [zshift + w for w in _trig_cubic(R, P, Q, ordered=True)]  # z2 smallest
    s0, s1, s2 = sympy.sqrt(z0), sympy.sqrt(z1), sympy.sqrt(z2)
    sig = -sympy.sign(R.expr(q))
    ys = [
        (-s0 - s1 + sig * s2) / 2,
        (-s0 + s1 - sig * s2) / 2,
        (s0 - s1 - sig * s2) / 2,
        (s0 + s1 + sig * s2) / 2,
    ]
    return [shift + y for y in ys]


def closed_form_roots(rep, gens):
    """Closed forms of the roots in ``E`` of an irreducible factor of degree 1 to 4.

    Parameters
    ----------
    rep : dict[tuple[int, ...], int]
        The factor: irreducible over Q, integer coefficients, exponent tuples in
        ``gens``; for degree 3 and 4 the leading coefficient in ``E`` must be a constant.
    gens : tuple of sympy.Symbol
        ``(E, *couplings)``.

    Returns
    -------
    list of sympy.Expr
        ``deg_E`` expressions (see the module docstring).
    """
    R = _Ring(tuple(gens[1:]))
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
