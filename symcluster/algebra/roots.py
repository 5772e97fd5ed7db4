"""Roots of characteristic-polynomial factors: real closed forms or exact implicit roots.

:func:`roots_of` returns, for a polynomial ``P(E, couplings)`` with integer (or rational)
coefficients, exactly ``deg_E P`` energies: sympy expressions for irreducible factors of
degree ≤ 4 whose leading coefficient in ``E`` is a constant, :class:`ImplicitRoot`
objects otherwise.  Every closed form uses only real intermediate quantities (square
roots of non-negative numbers, ``acos`` of numbers in [−1, 1]) for every real coupling
point at which the polynomial is real-rooted, and the returned list equals the roots
*as a multiset* at every such point where the expression is defined.  Expressions are
undefined (0/0) only on a lower-dimensional set where several roots coincide, for
homogeneous polynomials in two couplings typically only at the origin.  Individual
entries are not tied to a fixed rank: where a square root was pulled out of a
polynomial factor ``f`` (``sqrt(f**2 g) -> f sqrt(g)``) the ``±`` branches swap where
``f < 0``; the list is ascending wherever those factors are positive.

The numerical side (:meth:`ImplicitRoot.numeric`, :func:`verify_roots`) isolates real
roots with python-flint's certified complex root finder (ball arithmetic) on the
integer polynomial obtained by substituting an exact rational point.
"""

from __future__ import annotations

import collections
import concurrent.futures
import contextlib
import functools
from fractions import Fraction
from math import lcm

import mpmath
import sympy
from sympy.polys.domains import ZZ

from symcluster.algebra.closed import closed_form_roots
from symcluster.algebra.factor import content_and_factors, to_integer_dict
from symcluster.errors import ModelError, VerificationError
from symcluster.resources import submit

try:
    import flint
except ImportError:  # pragma: no cover
    flint = None

__all__ = ["ImplicitRoot", "closed_forms", "roots_of", "roots_of_irreducible", "verify_roots", "real_roots_at"]



# --------------------------------------------------------------------------- numerics


def _point_values(gens, point):
    """Exact Fractions for each generator in `gens` from a point dict (Symbol or name keys)."""
    vals = []
    for s in gens:
        if s in point:
            v = point[s]
        elif s.name in point:
            v = point[s.name]
        else:
            raise ModelError(
                f"point {point!r} gives no value for coupling {s.name!r}; add {s.name!r} to it"
            )
        if isinstance(v, bool):
            v = None
        if isinstance(v, (int, Fraction)):
            vals.append(Fraction(v))
        elif isinstance(v, sympy.Rational):
            vals.append(Fraction(int(v.p), int(v.q)))
        else:
            raise ModelError(
                f"value {v!r} for coupling {s.name!r} is not an exact rational; "
                "use sympy.Rational, int or fractions.Fraction"
            )
    return vals


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
    """Sorted integer terms of a Poly, shared by all roots of the same polynomial object."""
    hit = _PREPARED.get(id(poly))
    if hit is not None and hit[0] is poly:
        return hit[1]
    terms = _Terms(sorted((m, int(c)) for m, c in poly.as_dict(native=True).items()))
    if len(_PREPARED) > 4096:
        _PREPARED.clear()
    _PREPARED[id(poly)] = (poly, terms)
    return terms


@functools.lru_cache(maxsize=8192)
def _univariate_ints(terms, deg, vals):
    """Integer coefficients (ascending) of ``P(E, vals)`` up to a positive factor.

    Homogeneous polynomials (every characteristic-polynomial factor is) are
    handled in pure integers: with vals = a_i / D, P(E, a/D) is proportional
    to P(D E, a), whose coefficients C_k = D^k sum c prod a_i^e_i are integers.
    The roots are then divided by D (see :func:`_scaled`).
    """
    coeffs = [Fraction(0)] * (deg + 1)
    for mon, c in terms:
        x = Fraction(c)
        for v, e in zip(vals, mon[1:]):
            if e:
                x *= v**e
        coeffs[mon[0]] += x
    den = 1
    for c in coeffs:
        den = lcm(den, c.denominator)
    return tuple(int(c * den) for c in coeffs)


@functools.lru_cache(maxsize=8192)
def _homogeneous_ints(terms, deg, nums, den):
    """Coefficients (ascending) of P(x, nums) for homogeneous P, x = den * E; None if not homogeneous."""
    total = None
    coeffs = [0] * (deg + 1)
    powers = [dict() for _ in nums]
    for mon, c in terms:
        d = sum(mon)
        if total is None:
            total = d
        elif d != total:
            return None
        x = c
        for k, (a, e) in enumerate(zip(nums, mon[1:])):
            if e:
                pw = powers[k].get(e)
                if pw is None:
                    pw = powers[k][e] = a ** e
                x *= pw
        coeffs[mon[0]] += x
    return tuple(coeffs)


def _exact_mid(ball):
    man, exp = ball.mid().man_exp()
    man, exp = int(man), int(exp)
    return Fraction(man * 2**exp) if exp >= 0 else Fraction(man, 2**-exp)


#: Irreducible factors of at least this degree are isolated by descending Laguerre
#: iteration with an exact sign-change certificate (below) before the general complex
#: root finder is tried.  Measured on 2 cores for real-rooted integer polynomials:
#: ``complex_roots`` needs minutes at degree 336, the iteration about a second.
LAGUERRE_MIN_DEGREE = 24


def _short(x, nbits):
    """The midpoint of `x` rounded down to `nbits` mantissa bits, as an exact arb."""
    man, exp = x.mid().man_exp()
    man, exp = int(man), int(exp)
    drop = man.bit_length() - nbits
    if drop > 0:
        man, exp = man >> drop, exp + drop
    return flint.arb(flint.arf((man, exp)))


def _sign_at(poly, cs, x, prec):
    """Exact sign (−1, 0, 1) of the integer polynomial `cs` (arb_poly `poly`) at the dyadic `x`."""
    for _ in range(3):
        with flint.ctx.workprec(prec):
            v = poly(x)
        if not v.contains(0):
            return 1 if v > 0 else -1
        prec *= 2
    exact = _exact_mid(x)            # exact: den^d f(num/den) in integers
    num, den = exact.numerator, exact.denominator
    d = len(cs) - 1
    val = sum(c * num**j * den ** (d - j) for j, c in enumerate(cs))
    return (val > 0) - (val < 0)


def _laguerre_real_roots(f, bits):
    """Certified real roots of a squarefree integer polynomial with only real roots.

    Laguerre's method with implicit deflation over the roots already found
    (``G = f'/f − Σ 1/(x − r_j)``, ``H = (f'/f)² − f''/f − Σ 1/(x − r_j)²``), started
    above a root bound and then just below each root found, finds the roots in
    descending order: for a real-rooted polynomial the iterates from above its largest
    root decrease monotonically to it, with cubic convergence near a simple root
    (Wilkinson, The Algebraic Eigenvalue Problem, 1965, ch. 7; Stoer & Bulirsch,
    Introduction to Numerical Analysis, section 5.5).  Nothing is trusted from the
    iteration itself: the result is accepted only if ``f`` changes sign, evaluated
    exactly, across each ``[r − ε, r + ε]`` with ``ε = |r|·2**−bits``, and these d
    intervals are disjoint; d disjoint sign changes of a degree-d polynomial enclose
    exactly one root each.

    Returns ascending arb balls ``r ± ε`` (exact midpoints), or None when no certificate
    was obtained (non-real roots, stagnation); the caller then uses the general method.
    """
    d = f.degree()
    cs = [int(c) for c in f.coeffs()]
    if cs[-1] < 0:
        cs = [-c for c in cs]
    lead = cs[-1]
    if cs[0] == 0:
        return None  # zero root: relative accuracy needs the general method
    # Fujiwara's bound: every root satisfies |x| <= 2 max_j |c_j / c_d|^(1/(d-j))
    lb = max(((abs(c).bit_length() - lead.bit_length() + 1) / (d - j)
              for j, c in enumerate(cs[:-1]) if c), default=0.0)
    top_exp = int(lb) + 2
    cbits = max(abs(c).bit_length() for c in cs)
    # |c_j x^j| <= 2^guard on the root region: evaluations lose at most guard bits
    guard = cbits + d * max(top_exp, 0)
    prec = guard + 2 * bits + 64
    found = []
    Q = dQ = ddQ = None               # deflation polynomial prod (x - r_j) over found roots
    with flint.ctx.workprec(prec):
        P = flint.arb_poly(cs)       # exact: the coefficients fit in prec bits
        dP = P.derivative()
        ddP = dP.derivative()
        tol = flint.arb(2) ** (-bits - 6)
        x = flint.arb(2) ** top_exp
        for k in range(d):
            n = d - k
            if found:
                # restart just below the last root, at a relative gap delta = 2**(-bits/4):
                # the deflation term 1/(x - r)**2 then differs from f's own by about
                # 2*err(r)/delta**3 = 2**(-bits/4 - 63), with err(r) = 2**(-bits-64) below
                r = found[-1]
                x = _short(r - abs(r) * flint.arb(2) ** (-(bits // 4)), bits + 64)
            for _it in range(200):
                fx = P(x)
                if fx.contains(0):
                    break
                g1 = dP(x) / fx
                G = g1
                H = g1 * g1 - ddP(x) / fx
                if Q is not None:   # deflation: sum 1/(x - r_j) = Q'/Q
                    qx = Q(x)
                    q1 = dQ(x) / qx
                    G -= q1
                    H -= q1 * q1 - ddQ(x) / qx
                disc = (n - 1) * (n * H - G * G)
                disc = disc.mid()
                root = flint.arb(disc).sqrt() if disc > 0 else flint.arb(0)
                den = (G + root if G.mid() >= 0 else G - root).mid()
                if den == 0:
                    return None
                step = (n / flint.arb(den)).mid()
                if step < 0:
                    break          # at the noise level: x is as good as this precision allows
                x = _short(flint.arb(x.mid() - step), bits + 64)
                if abs(step) <= abs(x.mid()) * tol:
                    break
            else:
                return None
            found.append(flint.arb(x.mid()))
            lin = flint.arb_poly([-found[-1], 1])
            Q = lin if Q is None else Q * lin
            dQ = Q.derivative()
            ddQ = dQ.derivative()
    # certificate: exact signs at r -+ eps, intervals disjoint
    found.sort(key=_exact_mid)
    balls = []
    prev_hi = None
    for r in found:
        for polish in range(4):
            with flint.ctx.workprec(prec):
                if polish:      # Newton on f itself, at full precision
                    r = r - P(r) / dP(r)
                    if not r.is_finite():
                        return None  # f'(r) ~ 0: leave it to the general method
                    r = flint.arb(r.mid())
                eps = abs(r) * flint.arb(2) ** (-bits)
                lo = flint.arb((r - eps).mid())
                hi = flint.arb((r + eps).mid())
                ball = flint.arb(r.mid(), (eps * 1.001).mid())
            if eps == 0:
                return None
            s_lo = _sign_at(P, cs, lo, prec)
            s_hi = _sign_at(P, cs, hi, prec)
            if s_lo * s_hi < 0:
                break
        else:
            return None
        if prev_hi is not None and not (_exact_mid(prev_hi) < _exact_mid(lo)):
            return None
        balls.append(ball)
        prev_hi = hi
    return balls


#: Isolations computed elsewhere (e.g. on a process pool, see :func:`prefetch_isolations`),
#: keyed like :func:`_isolate`; consulted first.
_SEEDED = {}


def _isolate(coeffs, digits):
    hit = _SEEDED.get((coeffs, digits))
    return hit if hit is not None else _isolate_compute(coeffs, digits)


def isolation_key(root, point, digits):
    """The arguments of the isolation that ``root.numeric(point, digits)`` performs."""
    coeffs, den = root._integer_poly_at(point)
    return coeffs, int(digits + 2 if den is not None else digits)


def prefetch_isolations(keys, executor, progress=None):
    """Run the isolations ``keys`` (from :func:`isolation_key`) through ``executor``
    (None: here, one after the other).

    The results are only a cache: :func:`_isolate` returns them instead of recomputing.
    Call :func:`clear_prefetched` when done.  ``progress`` (optional, a
    :class:`~symcluster.resources.Progress`) counts the isolations done.
    """
    keys = [k for k in dict.fromkeys(keys) if k not in _SEEDED]
    if progress is not None:
        progress.phase("verification, isolation of roots", len(keys), "polynomials")
    if executor is None:
        for k in keys:
            _SEEDED[k] = _isolate_compute(*k)
            if progress is not None:
                progress.step()
        return
    futures = {submit(executor, _isolate_compute, *k): k for k in keys}
    pending = set(futures)
    while pending:
        done, pending = concurrent.futures.wait(pending, timeout=1.0,
                                                return_when=concurrent.futures.FIRST_COMPLETED)
        for fut in done:
            _SEEDED[futures[fut]] = fut.result()
            if progress is not None:
                progress.step()
        if progress is not None:
            progress.tick()


def clear_prefetched():
    _SEEDED.clear()


@functools.lru_cache(maxsize=4096)
def _isolate_compute(coeffs, digits):
    """Certified real roots (ascending, with multiplicity) of an integer polynomial.

    The polynomial is first factored exactly (python-flint), so roots that
    coincide at this point are found exactly with their multiplicity; the
    distinct roots of each irreducible factor are then enclosed with ball
    arithmetic, raising the precision until every real root is isolated from
    the others and accurate to ``digits``.

    Returns a tuple of ``(mantissa, exponent)`` pairs and the number of non-real roots.
    """
    fp = flint.fmpz_poly(list(coeffs))
    _, factors = fp.factor()
    bits = int(digits * 3.33) + 24
    prec = bits + 32
    for _ in range(12):
        with flint.ctx.workprec(prec):
            real, nonreal = [], 0
            for f, mult in factors:
                if f.degree() >= LAGUERRE_MIN_DEGREE:
                    balls = _laguerre_real_roots(f, prec - 16)
                    if balls is not None:
                        real.extend((b, mult) for b in balls)
                        continue
                for c, m in f.complex_roots():
                    if c.imag.is_zero():
                        real.append((c.real, m * mult))
                    else:
                        nonreal += m * mult
        real.sort(key=lambda rm: _exact_mid(rm[0]))
        ok = True
        with flint.ctx.workprec(prec):   # at the default 53 bits upper()/lower() round
            for r, _m in real:
                if r.rad() != 0 and not (r.rad() * 2**bits <= abs(r.mid())):
                    ok = False
            for (r1, _), (r2, _) in zip(real, real[1:]):
                if not (r1.upper() < r2.lower()):
                    ok = False
        if ok:
            out = []
            for r, m in real:
                man, exp = r.mid().man_exp()
                out.extend([(int(man), int(exp))] * m)
            return tuple(out), nonreal
        prec *= 2
    raise VerificationError(  # pragma: no cover - needs pathological input
        f"could not isolate the real roots of {coeffs!r} to {digits} digits; lower digits"
    )


def real_roots_at(poly, point, digits=30):
    """Certified real roots of ``poly(E, point)``, ascending, with multiplicity.

    Parameters
    ----------
    poly : sympy.Poly
        In generators ``(E, *couplings)``, rational coefficients.
    point : dict
        Exact rational value for each coupling (keys: Symbols or their names).
    digits : int
        Requested correct significant digits.

    Returns
    -------
    list of mpmath.mpf
        Rounded to `digits` digits.

    Raises
    ------
    VerificationError
        If the degree in E drops at the point or some root is not real.
    """
    deg = poly.degree(poly.gens[0])
    _, rep = to_integer_dict(poly)
    vals = _point_values(poly.gens[1:], point)
    coeffs = _univariate_ints(tuple(rep.items()), deg, tuple(vals))
    return _roots_from_coeffs(coeffs, deg, digits, poly, point)


def _roots_from_coeffs(coeffs, deg, digits, poly, point):
    if deg < 0 or coeffs[-1] == 0:
        raise VerificationError(
            f"leading coefficient of {poly.as_expr()} in {poly.gens[0]} vanishes at {point}; "
            "choose another parameter point"
        )
    found, nonreal = _isolate(coeffs, int(digits))
    if nonreal:
        raise VerificationError(
            f"{poly.as_expr()} has {nonreal} non-real root(s) at {point}, but levels of a "
            "Hermitian block must be real; check the block or the factor"
        )
    with mpmath.workdps(digits):
        return [+mpmath.mpf(me) for me in found]


# --------------------------------------------------------------------------- implicit roots


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
    \\operatorname{root}_{5}\\left[E^{5} - 5 E^{3} + 4 E - U\\right]
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

    def numeric(self, point, digits=30):
        """Value at an exact rational point, correct to `digits` significant digits.

        Parameters
        ----------
        point : dict[sympy.Symbol, sympy.Rational]
            A value for every coupling in :attr:`symbols` (extra keys are ignored).
        digits : int

        Returns
        -------
        mpmath.mpf

        Raises
        ------
        VerificationError
            If the polynomial is not real-rooted at the point or drops degree there.
        """
        return self._all_roots_at(point, int(digits))[self.index]

    def _all_roots_at(self, point, digits):
        """Every root of the polynomial at `point` (ascending, mpf at `digits` digits).

        Shared by the other roots of the same polynomial: a spectrum holds all
        ``degree`` roots of each factor, and evaluating it level by level would
        otherwise evaluate the polynomial and convert its roots ``degree`` times.
        """
        vals = tuple(_point_values(self.poly.gens[1:], point))
        key = (self._terms, self.poly.gens, vals, digits)
        hit = _ALL_ROOTS.get(key)
        if hit is not None:
            with contextlib.suppress(KeyError):     # another thread may have dropped it
                _ALL_ROOTS.move_to_end(key)
            return hit
        coeffs, den = self._integer_poly_at(point)
        if den is not None:
            # roots of P(x, nums) are den * E
            roots = _roots_from_coeffs(coeffs, self.degree, digits + 2, self.poly, point)
            with mpmath.workdps(digits):
                roots = [+(r / den) for r in roots]
        else:
            roots = _roots_from_coeffs(coeffs, self.degree, digits, self.poly, point)
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
        vals = _point_values(self.poly.gens[1:], point)
        den = 1
        for v in vals:
            den = lcm(den, v.denominator)
        nums = tuple(int(v * den) for v in vals)
        coeffs = _homogeneous_ints(self._terms, self.degree, nums, den)
        if coeffs is not None:
            return coeffs, den
        return _univariate_ints(self._terms, self.degree, tuple(vals)), None

    def latex(self, var="E"):
        r"""LaTeX ``\operatorname{root}_{k}\left[P(E)\right]``: the k-th smallest real root of P(E) = 0.

        ``k = index + 1`` is 1-based in the printed form.
        """
        return rf"\operatorname{{root}}_{{{self.index + 1}}}\left[{_latex_in_E(self.poly, var)}\right]"

    def __eq__(self, other):
        return isinstance(other, ImplicitRoot) and self._key == other._key

    def __hash__(self):
        return hash(("ImplicitRoot",) + self._key)

    def __repr__(self):
        return f"ImplicitRoot({self.poly.as_expr()}, index={self.index})"


def _latex_in_E(poly, var):
    """Polynomial in descending powers of E, coefficients in the couplings."""
    v = sympy.Symbol(var)
    groups = {}
    for mon, c in poly.as_dict().items():
        groups.setdefault(mon[0], {})[mon[1:]] = c
    parts = []
    for k in sorted(groups, reverse=True):
        if len(poly.gens) > 1:
            coeff = sympy.Poly.from_dict(groups[k], poly.gens[1:], domain=poly.domain).as_expr()
        else:
            coeff = sympy.sympify(groups[k][()])
        power = "" if k == 0 else (sympy.latex(v) if k == 1 else f"{sympy.latex(v)}^{{{k}}}")
        if coeff.is_Add:
            body = rf"\left({sympy.latex(coeff)}\right) {power}".rstrip()
            sign = "+"
        else:
            neg = coeff.could_extract_minus_sign()
            c = -coeff if neg else coeff
            sign = "-" if neg else "+"
            if c == 1 and power:
                body = power
            else:
                body = f"{sympy.latex(c)} {power}".rstrip()
        parts.append((sign, body))
    out = ("- " if parts[0][0] == "-" else "") + parts[0][1]
    for sign, body in parts[1:]:
        out += f" {sign} {body}"
    return out


# --------------------------------------------------------------------------- closed forms


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
        :func:`~symcluster.algebra.closed.closed_form_roots`).

    Returns
    -------
    list of sympy.Expr or None
        The ``deg_E`` closed forms; None where the roots are implicit (degree above
        `max_closed_degree` and at least 3, or a non-constant leading coefficient in
        ``E`` at degree 3 or 4).
    """
    deg = max(m[0] for m in rep)
    if deg <= 2:
        return closed_form_roots(rep, gens, rings)
    if deg <= max_closed_degree and all(not any(m[1:]) for m in rep if m[0] == deg):
        return closed_form_roots(rep, gens, rings)
    return None


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
        vals = _point_values((s,), point)
        subs[s] = sympy.Rational(vals[0].numerator, vals[0].denominator)
    # Twice the digits: near coinciding roots acos/sqrt of an argument at the edge of
    # its domain keep only about half of the working digits.
    n = 2 * digits + 20
    re, im = root.xreplace(subs).evalf(n).as_real_imag()
    with mpmath.workdps(n):
        return mpmath.mpc(sympy.Float(re, n)._mpf_, sympy.Float(im, n)._mpf_)


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
