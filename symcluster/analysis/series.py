"""Exact strong- and weak-coupling series of a level from its polynomial.

A level E is a root of an irreducible polynomial P(E, λ, ...).  Around
λ → ∞ write s = 1/λ and w = s·E, around λ = c write s = λ − c and w = E; in
both cases w(s) is a root of a polynomial Q(w, s).  Because every block is a
real symmetric (or symmetrisable) pencil in s, each eigenvalue branch is
analytic in s (Rellich's theorem; T. Kato, Perturbation Theory for Linear
Operators, ch. II §6 [mem]), so w(s) = Σ_k a_k s^k with integer powers.

The coefficients are found one at a time (Newton-polygon steps of slope one):

* a_0 is a root of Q(w, 0).  At λ → ∞ many levels share a_0 (the atomic
  limit is massively degenerate), so the root is chosen by comparing with the
  level's own value at s = 10⁻¹² computed to a few hundred digits, with the
  other couplings at the point ``at``.
* While the chosen root is a multiple root, substitute w = a_0 + s·v, divide
  by the largest power of s, and repeat for v (degenerate perturbation
  theory, done on the polynomial).
* Once the root is simple, the remaining coefficients follow from the linear
  recursion of the implicit-function theorem, exactly.

The result is checked against the level's numeric value before it is returned.
"""

from collections.abc import Mapping

import mpmath
import sympy

from symcluster.errors import ModelError, VerificationError
from symcluster.spectrum import Level, to_rational
from symcluster.analysis.observables import find_symbol, level_polynomial, level_symbols, level_value

__all__ = ["series", "series_coefficients", "MAX_ORDER"]

#: Highest order :func:`series` computes (each order adds one exact coefficient and six
#: digits to the self-check).
MAX_ORDER = 50

_S_EXP = 12       # numeric probe at s = 10**-_S_EXP
_v = sympy.Symbol("v")
_s = sympy.Symbol("s")


def _prepare(level, coupling, about, fixed):
    P = level_polynomial(level)
    syms = level_symbols(level)
    x = find_symbol(syms, coupling)
    Es = P.gens[0]
    fixed_pt = {find_symbol(syms, k): to_rational(str(k), v) for k, v in (fixed or {}).items()}
    expr = P.as_expr().subs(fixed_pt)
    if about is sympy.oo:
        pe = sympy.Poly(expr, Es, x)
        D = max(i + j for (i, j) in pe.monoms())
        q = sum(c * _v ** i * _s ** (D - i - j) for (i, j), c in pe.terms())
    else:
        q = expr.subs(x, about + _s).subs(Es, _v)
    return x, syms, fixed_pt, sympy.Poly(sympy.expand(q), _v, _s)


def _roots_in_v(q0, others):
    """Exact roots of q0(v) (coefficients polynomial in the other couplings)."""
    out = []
    for fac, _m in sympy.factor_list(q0.as_expr(), _v)[1]:
        f = sympy.Poly(fac, _v)
        d = f.degree()
        if d == 0:
            continue
        c = f.all_coeffs()
        if d == 1:
            out.append(sympy.cancel(-c[1] / c[0]))
        elif d == 2:
            a, b, cc = c
            disc = sympy.factor(b ** 2 - 4 * a * cc)
            for sgn in (-1, 1):
                out.append(sympy.radsimp((-b + sgn * sympy.sqrt(disc)) / (2 * a)))
        elif not (f.free_symbols - {_v}):
            out.extend(sympy.Poly(f.as_expr(), _v).real_roots())
        else:
            raise ModelError(
                f"a series coefficient is a root of the degree-{d} polynomial {fac} in the "
                "other couplings; fix them with fixed={...} to get exact numbers")
    return out


def _num(expr, pt, digits):
    val = sympy.N(sympy.sympify(expr).subs(pt), digits)
    return mpmath.mpf(sympy.Float(sympy.re(val), digits)._mpf_)


def series_coefficients(level, coupling="U", n_terms=8, about=sympy.oo, at=None, fixed=None):
    """Exact coefficients a_0..a_{n-1} of w(s) (see module docstring).

    Parameters
    ----------
    level : Level
    coupling : str
    n_terms : int
    about : sympy.oo or rational
    at : dict, optional
        Values of the other couplings used only to pick the branch
        (default: 1 for the first, 11/10, 12/10, ... for the next ones by name).
    fixed : dict, optional
        Exact values substituted for other couplings before expanding.

    Returns
    -------
    list of sympy.Expr
    """
    about = sympy.oo if about in ("oo", "inf", sympy.oo, float("inf")) else to_rational("about", about)
    x, syms, fixed_pt, Q = _prepare(level, coupling, about, fixed)
    others = [s for s in syms if s != x and s not in fixed_pt]
    at_pt = {s: sympy.Rational(10 + k, 10) for k, s in enumerate(others)}
    for k, v in (at or {}).items():
        at_pt[find_symbol(syms, k)] = to_rational(str(k), v)
    full = dict(fixed_pt)
    full.update(at_pt)
    deg = Q.degree(_v)
    digits = 40 + _S_EXP * (deg + 3)
    with mpmath.workdps(digits):
        s_num = sympy.Rational(1, 10 ** _S_EXP)
        pt = dict(full)
        if about is sympy.oo:
            pt[x] = 1 / s_num
            vn = level_value(level, pt, digits) * mpmath.mpf(s_num.p) / s_num.q
        else:
            pt[x] = about + s_num
            vn = level_value(level, pt, digits)
        sn = mpmath.mpf(1) / mpmath.mpf(10) ** _S_EXP
        coeffs = []
        while True:
            q0 = sympy.Poly(Q.as_expr().subs(_s, 0), _v)
            cands = _roots_in_v(q0, others)
            scored = sorted(((abs(_num(c, full, digits) - vn), c) for c in cands),
                            key=lambda p: p[0])
            if not scored or scored[0][0] > mpmath.mpf(10) ** (-_S_EXP // 2) * (1 + abs(vn)):
                raise ModelError(
                    f"the level is not analytic in {x} there (fractional powers would be "
                    "needed) or the branch could not be identified; try about=0 / about=oo "
                    "or other values in at=")
            r = scored[0][1]
            coeffs.append(r)
            dq = q0.diff(_v).as_expr().subs(_v, r)
            if abs(_num(dq, full, digits)) > mpmath.mpf(10) ** -20 or len(coeffs) >= n_terms:
                break
            # degenerate root: w = r + s v, divide out the common power of s
            Qe = sympy.expand(Q.as_expr().subs(_v, r + _s * _v))
            Qp = sympy.Poly(Qe, _v, _s)
            m = min(j for (_i, j) in Qp.monoms())
            Q = sympy.Poly(sympy.expand(Qe / _s ** m), _v, _s)
            vn = (vn - _num(r, full, digits)) / sn
    rest = _simple_root_series(Q, coeffs[-1], n_terms - len(coeffs))
    # the branch was identified at at_pt: resolve |λ| and sign(λ) of the other couplings there
    signs = {}
    for s_, v in at_pt.items():
        sg = 1 if v > 0 else -1
        signs[sympy.Abs(s_)] = sg * s_
        signs[sympy.sign(s_)] = sg
    return [sympy.simplify(sympy.expand(c.subs(signs))) if signs else c for c in coeffs + rest]


def _simple_root_series(Q, r, n):
    """Coefficients c_1..c_n of v(s) = r + Σ c_j s^j with Q(v(s), s) = 0, r simple."""
    if n <= 0:
        return []
    qs = [[sympy.Integer(0)] * (Q.degree(_s) + 1) for _ in range(Q.degree(_v) + 1)]
    for (i, j), c in Q.terms():
        qs[i][j] += c
    D = sympy.Poly(Q.as_expr().subs(_s, 0), _v).diff(_v).as_expr().subs(_v, r)
    D = sympy.radsimp(sympy.expand(D))
    v = [r]
    out = []
    for j in range(1, n + 1):
        v_try = v + [sympy.Integer(0)]
        coef = _series_eval(qs, v_try, j)
        c = sympy.radsimp(sympy.cancel(sympy.expand(-coef / D)))
        out.append(c)
        v.append(c)
    return out


def _series_eval(qs, v, j):
    """Coefficient of s^j in Σ_i q_i(s) v(s)^i, by Horner on truncated series."""
    n = j + 1

    def mul(a, b):
        return [sympy.expand(sum(a[k] * b[i - k] for k in range(i + 1))) for i in range(n)]

    def pad(a):
        return (list(a) + [sympy.Integer(0)] * n)[:n]

    vv = pad(v)
    acc = pad(qs[-1])
    for q in reversed(qs[:-1]):
        acc = mul(acc, vv)
        acc = [x + y for x, y in zip(acc, pad(q))]
    return acc[j]


def series(level: Level, coupling: str | sympy.Symbol = "U", order: int = 7,
           about: object = sympy.oo, at: Mapping[str, object] | None = None,
           fixed: Mapping[str, object] | None = None) -> sympy.Expr:
    """Exact series of a level in one coupling, without an O() term.

    Parameters
    ----------
    level : Level
    coupling : str
        The expansion variable λ, e.g. ``"U"``.
    order : int
        About λ → ∞: through the λ**-order term.  About a finite point c:
        through (λ − c)**order.
    about : sympy.oo (default), "oo", or a rational
    at : dict, optional
        Values of the other couplings used to identify the branch
        (default 1 for the first, 11/10, ... for the others).  The series
        describes the level that has this identity at those values, and
        |λ'| and sign(λ') of the other couplings are resolved with the signs
        they have there.
    fixed : dict, optional
        Exact values substituted for other couplings first.

    Returns
    -------
    sympy.Expr
        Polynomial in λ and 1/λ (or in λ − c) with coefficients that are exact
        expressions in the other couplings.

    Raises
    ------
    ModelError
        If fractional powers would be needed or a coefficient is a root of a
        polynomial of degree > 2 in symbolic couplings (then use fixed=).
    VerificationError
        If the series fails its numeric self-check.

    Examples
    --------
    >>> import sympy
    >>> from symcluster.spectrum import Level
    >>> t, U, E = sympy.symbols("t U E", real=True)
    >>> lev = Level(U/2 - sympy.sqrt(U**2/4 + 4*t**2), 1, {"N": 2},
    ...             sympy.Poly(E**2 - U*E - 4*t**2, E, t, U))
    >>> series(lev, "U", order=3)
    -4*t**2/U + 16*t**4/U**3
    """
    about = sympy.oo if about in ("oo", "inf", sympy.oo, float("inf")) else to_rational("about", about)
    if isinstance(order, bool) or not isinstance(order, int) or not 0 <= order <= MAX_ORDER:
        raise ModelError(f"order={order!r}; give a whole number from 0 to {MAX_ORDER}")
    x = find_symbol(level_symbols(level), coupling)
    n = order + 2 if about is sympy.oo else order + 1
    # two more coefficients than returned: they estimate the omitted rest for the self-check
    a = series_coefficients(level, coupling, n + 2, about, at, fixed)

    def terms(ks):
        if about is sympy.oo:
            return sum((a[k] * x ** (1 - k) for k in ks), sympy.Integer(0))
        return sum((a[k] * (x - about) ** k for k in ks), sympy.Integer(0))

    out = terms(range(n))
    _self_check(level, x, out, terms(range(n, n + 2)), about, at, fixed, order)
    return out


def _self_check(level, x, expr, rest, about, at, fixed, order):
    """Compare the series with the level's value at a point close to the expansion point.

    The difference must be the omitted terms: at most twice the next two terms
    (``rest``) plus a margin of 10**-(6 (order + 2)) relative.  A fixed margin
    alone fails where the coefficients grow (the two-site ground state's next
    coefficient at order 8 is -14336)."""
    syms = level_symbols(level)
    others = [s for s in syms if s != x]
    pt = {s: sympy.Rational(10 + k, 10) for k, s in enumerate(others)}
    for k, v in list((fixed or {}).items()) + list((at or {}).items()):
        pt[find_symbol(syms, k)] = to_rational(str(k), v)
    step = sympy.Rational(1, 10 ** 6)
    pt[x] = 1 / step if about is sympy.oo else about + step
    wd = 6 * (order + 3) + 30          # digits to spare beyond the omitted terms
    with mpmath.workdps(wd):
        exact = level_value(level, pt, wd)
        approx = _num(expr, pt, wd)
        bound = 2 * abs(_num(rest, pt, wd)) + \
            (1 + abs(exact)) * mpmath.mpf(10) ** (-6 * (order + 2))
        if abs(exact - approx) > bound:
            raise VerificationError(
                f"series of the level in {x} disagrees with its value at {x} = {pt[x]} "
                f"({mpmath.nstr(exact, 20)} vs {mpmath.nstr(approx, 20)}); report this level")
