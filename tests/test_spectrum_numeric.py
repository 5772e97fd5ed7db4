"""Values of levels at points where roots of their polynomials nearly coincide.

At t = 10^-150 against U of order 1 the levels of a Hubbard cluster crowd around the
atomic-limit values 0, U, 2U, ... and split only by powers of t (10^-150, 10^-300, ...),
so roots of one polynomial agree to hundreds of digits while every returned digit must
still be right.

The reference shares no code with symcluster: the exact characteristic polynomial of
every (N_up, N_dn) sector of the Jordan-Wigner Fock-space Hamiltonian of
tests/reference_fock.py at the exact rational point (python-flint over Q), factored
exactly (python-flint), each factor's real roots isolated exactly by sympy
(``Poly.intervals``) and then narrowed by exact bisection on the sign of the factor to a
relative width of 10^-(digits + 10).  An irreducible factor has only simple roots and
changes sign at each, so every bisection step keeps the root (intermediate value theorem).
"""

import functools
from math import comb

import flint
import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.numeric.evaluate import Evaluation, closed_values
from symcluster.numeric.isolate import RootCounter
from symcluster.spectrum import energy_numeric
from reference_fock import FockReference

R = sympy.Rational
_X = sympy.Symbol("x")

TWO_HOPPINGS = [(0, 1, "t"), (0, 2, "tp"), (1, 3, "tp"), (2, 3, "t")]


# ---------------------------------------------------------------- independent reference

def _sign(f, x):
    v = f(x)
    return (v > 0) - (v < 0)


def _exponent(q):
    """e with 2^(e-1) < |q| < 2^(e+1), for a nonzero fmpq q."""
    q = abs(q)
    return int(q.p).bit_length() - int(q.q).bit_length()


def _split(s, t):
    """A point strictly inside (s, t): a power of two between the ends while they have one
    sign and differ by more than a factor 4 (so a root of size 10^-300 costs a few dozen
    steps to reach, not a thousand), else the mean; 0 if the ends have opposite signs."""
    if s < 0 < t:
        return flint.fmpq(0)
    if t <= 0:
        return -_split(-t, -s)
    if t > 4 * s:
        e = _exponent(t) - 64 if s == 0 else (_exponent(s) + _exponent(t)) // 2
        m = flint.fmpq(2) ** e
        if s < m < t:
            return m
    return (s + t) / 2


def _bisect(f, s, t, rel):
    """The root of the irreducible fmpq_poly f isolated in [s, t], to relative width rel."""
    if s == t:
        return s
    fs, ft = _sign(f, s), _sign(f, t)
    if fs == 0 or ft == 0:
        return s if fs == 0 else t
    assert fs != ft, "an isolating interval of a simple root must show a sign change"
    while not ((s > 0 or t < 0) and t - s <= min(abs(s), abs(t)) * rel):
        m = _split(s, t)
        fm = _sign(f, m)
        if fm == 0:
            return m
        if fm == fs:
            s = m
        else:
            t = m
    return (s + t) / 2


@functools.lru_cache(maxsize=None)
def _factor_roots(coeffs, digits):
    """Real roots (ascending, fmpq) of the irreducible rational polynomial `coeffs`."""
    f = flint.fmpq_poly([flint.fmpq(p, q) for p, q in coeffs])
    sp = sympy.Poly([R(p, q) for p, q in reversed(coeffs)], _X)
    rel = flint.fmpq(1, 10 ** (digits + 10))
    out = []
    for (s, t), _mult in sp.intervals():
        out.append(_bisect(f, flint.fmpq(int(s.p), int(s.q)), flint.fmpq(int(t.p), int(t.q)), rel))
    return out


def reference_levels(n_sites, bonds, values, digits, sectors=None):
    """{N: ascending exact eigenvalues (fmpq, with multiplicity)} of the Fock reference,
    for every N or those in `sectors`."""
    ref = FockReference(n_sites, bonds)
    point = {k: flint.fmpq(int(R(v).p), int(R(v).q)) for k, v in values.items()}
    out = {}
    for n_up, n_dn in ref.sectors():
        if sectors is not None and n_up + n_dn not in sectors:
            continue
        idx = ref.sector_indices(n_up, n_dn)
        d = len(idx)
        m = flint.fmpq_mat(d, d)
        for name, block in ref.integer_block(idx).items():
            for r in range(d):
                for c in range(d):
                    if block[r, c]:
                        m[r, c] += int(block[r, c]) * point[name]
        _, factors = m.charpoly().factor()
        roots = out.setdefault(n_up + n_dn, [])
        for f, mult in factors:
            key = tuple((int(c.p), int(c.q)) for c in f.coeffs())
            found = _factor_roots(key, digits)
            assert len(found) == f.degree(), "a Hermitian sector has only real eigenvalues"
            roots.extend(found * mult)
    return {n: sorted(v) for n, v in out.items()}


def by_n(spec, values, digits):
    """{N: ascending values, each repeated by its degeneracy}, via Level.numeric."""
    pt = spec.point(values)
    out = {}
    with mpmath.workdps(digits):
        for lev in spec.levels:
            v = +mpmath.mpf(lev.numeric(pt, digits=digits))
            out.setdefault(lev.quantum_numbers["N"], []).extend([v] * lev.degeneracy)
    return {n: sorted(v) for n, v in out.items()}


def assert_all_digits(got, want, digits, n_sites, sectors=None):
    """Every N sector (or those in `sectors`) has C(2L, N) states and every value is right
    to `digits` significant digits (exact zeros exactly)."""
    sectors = list(range(2 * n_sites + 1)) if sectors is None else sorted(sectors)
    assert sorted(got) == sectors
    for n in sectors:
        assert len(got[n]) == len(want[n]) == comb(2 * n_sites, n), n
        with mpmath.workdps(digits + 20):
            for a, b in zip(got[n], want[n]):
                exact = mpmath.mpf(int(b.p)) / int(b.q)
                if b == 0:
                    assert a == 0, (n, a)
                else:
                    # relative error below one unit in the last requested digit
                    assert abs(a - exact) <= abs(exact) * mpmath.mpf(10) ** (1 - digits), (n, a, b)


# ---------------------------------------------------------------- the reference itself

def test_reference_bisection_against_known_roots():
    # roots of (x - 10^-300)(x + 7/3)(x^2 - 2) are known in closed form
    f = flint.fmpq_poly([flint.fmpq(-1, 10**300), 1]) * flint.fmpq_poly([flint.fmpq(7, 3), 1]) \
        * flint.fmpq_poly([-2, 0, 1])
    found = []
    for p, _ in f.factor()[1]:
        found += _factor_roots(tuple((int(c.p), int(c.q)) for c in p.coeffs()), 40)
    with mpmath.workdps(400):
        got = sorted(mpmath.mpf(int(r.p)) / int(r.q) for r in found)
        want = sorted([mpmath.mpf(10) ** -300, mpmath.mpf(-7) / 3, mpmath.sqrt(2), -mpmath.sqrt(2)])
        assert len(got) == len(want)
        for x, w in zip(got, want):
            assert abs(x - w) <= abs(w) * mpmath.mpf(10) ** -49


# ---------------------------------------------------------------- nearly coinciding roots

RING4 = [(i, (i + 1) % 4, "t") for i in range(4)]


@functools.lru_cache(maxsize=None)
def ring4():
    return sc.solve(sc.hubbard(sc.ring(4)))


@pytest.mark.parametrize("values, digits", [
    ({"t": R(1, 10**150), "U": R(-5, 3)}, 30),   # a reviewer's case
    ({"t": R(1, 10**300), "U": 1}, 30),
    ({"t": R(-2, 10**300), "U": R(5, 3)}, 60),
])
def test_ring4_where_levels_split_by_powers_of_a_tiny_hopping(values, digits):
    got = by_n(ring4(), values, digits)
    want = reference_levels(4, RING4, values, digits)
    assert_all_digits(got, want, digits, 4)


# N = 4 of this cluster has an implicit (degree-6) level, whose value comes from the
# general root isolation of symcluster.numeric.isolate rather than from a closed form
# (about 20 s at these points, 2-core Xeon); the sectors below have closed forms only.
@pytest.mark.parametrize("values", [
    # two Hubbard dimers (bonds tp = 1) coupled by t = 10^-300: every level sits within
    # about t of a level of the two separate dimers
    {"t": R(1, 10**300), "tp": 1, "U": R(-5, 3)},
    # both hoppings tiny: levels crowd around 0, U, 2U
    {"t": R(1, 10**150), "tp": R(3, 7 * 10**150), "U": R(-5, 3)},
])
def test_two_hoppings_where_levels_nearly_coincide(values):
    spec = sc.solve(sc.hubbard(sc.cluster(4, TWO_HOPPINGS)), electrons=[2, 3])
    got = by_n(spec, values, 30)
    want = reference_levels(4, TWO_HOPPINGS, values, 30, sectors=[2, 3])
    assert_all_digits(got, want, 30, 4, sectors=[2, 3])


# ---------------------------------------------------------------- the certificate's parts

def test_root_counter_counts_distinct_real_roots_in_closed_intervals():
    # (x - 1)(x - 2)^2(x - 3)(x^2 + 1): distinct real roots 1, 2, 3 (by construction)
    F = flint.fmpq
    p = flint.fmpq_poly([-1, 1]) * flint.fmpq_poly([-2, 1]) ** 2 * flint.fmpq_poly([-3, 1]) \
        * flint.fmpq_poly([1, 0, 1])
    counter = RootCounter(p.coeffs())
    assert (counter.n_real, counter.n_distinct) == (3, 5)
    cases = [((0, 10), 3), ((1, 2), 2), ((F(3, 2), F(5, 2)), 1), ((2, 2), 1),
             ((F(5, 2), 3), 1), ((-5, F(1, 2)), 0), ((F(21, 10), F(29, 10)), 0), ((3, 3), 1)]
    for (lo, hi), n in cases:
        assert counter.count(F(lo), F(hi)) == n, (lo, hi)


def test_a_polynomial_with_non_real_roots_is_rejected():
    # E^2 + t^2 has the roots +-i t: not the levels of a Hermitian block
    E, t = sympy.symbols("E t", real=True)
    poly = sympy.Poly(E**2 + t**2, E, t)
    with pytest.raises(sc.VerificationError):
        energy_numeric(t, {t: R(1, 3)}, 30, poly)


def test_a_closed_form_that_is_not_a_root_is_not_snapped_to_one():
    # t + 10^-6 is no root of E^2 - t^2 (roots +-t) anywhere: its enclosure never holds a
    # root, so no value may be returned, also not the nearby root t
    E, t = sympy.symbols("E t", real=True)
    poly = sympy.Poly(E**2 - t**2, E, t)
    with pytest.raises(sc.ModelError):
        energy_numeric(t + R(1, 10**6), {t: R(1, 3)}, 30, poly)


def test_merged_roots_are_exact():
    # (E - t)^2 (E + t) at t = 0: every root is 0; at t = 2/7 the double root is 2/7
    E, t = sympy.symbols("E t", real=True)
    poly = sympy.Poly((E - t) ** 2 * (E + t), E, t)
    assert energy_numeric(t, {t: 0}, 40, poly) == 0
    with mpmath.workdps(40):
        assert energy_numeric(t, {t: R(2, 7)}, 40, poly) == mpmath.mpf(2) / 7
        assert energy_numeric(-t, {t: R(2, 7)}, 40, poly) == -mpmath.mpf(2) / 7


def test_a_level_that_is_exactly_zero_is_returned_as_zero():
    # Hubbard dimer singlet pair E = U/2 -+ sqrt(U^2/4 + 4 t^2), roots of E^2 - U E - 4 t^2
    # (a 2x2 diagonalization by hand). At t = 0 they are exactly 0 and U. The ball of the
    # closed form straddles 0 (sqrt(4/9) is not a dyadic number) and never gets narrow
    # relative to its midpoint; the value must still be exactly 0, and the other exactly U.
    E, t, U = sympy.symbols("E t U", real=True)
    poly = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    root = sympy.sqrt(U**2 / 4 + 4 * t**2)
    point = {t: 0, U: R(4, 3)}
    assert energy_numeric(U / 2 - root, point, 30, poly) == 0
    with mpmath.workdps(30):
        assert energy_numeric(U / 2 + root, point, 30, poly) == mpmath.mpf(4) / 3


# ---------------------------------------------------------------- closed forms without a polynomial
# energy_numeric(form, point, digits) evaluates a closed form at 2 digits + 10 working
# digits (mpmath's arithmetic; elementary functions and pi in python-flint ball arithmetic,
# rounded to the working precision); inside shared_evaluation() forms share the values of
# common subexpressions, and a value must not depend on that (equal bit for bit).  The
# references below are a plain recursive mpmath walk written here (one mpmath operation
# per node: fsum for sums, products from 1 left to right, ** for integer powers,
# mpmath.sqrt/cos/... for the rest) and sympy's own evalf at 150 digits.

_T, _U = sympy.symbols("t U", real=True)


def _walk(expr, env):
    if expr.is_Symbol:
        return env[expr]
    if expr.is_Rational:
        return mpmath.mpf(int(expr.p)) / int(expr.q)
    if expr is sympy.pi:
        return +mpmath.pi
    if expr.is_Add:
        return mpmath.fsum([_walk(a, env) for a in expr.args])
    if expr.is_Mul:
        out = mpmath.mpf(1)
        for a in expr.args:
            out = out * _walk(a, env)
        return out
    if expr.is_Pow:
        base = _walk(expr.base, env)
        if expr.exp.is_Integer:
            return base ** int(expr.exp)
        if expr.exp == sympy.S.Half:
            return mpmath.sqrt(base)
        return mpmath.power(base, _walk(expr.exp, env))
    fn = {sympy.cos: mpmath.cos, sympy.sin: mpmath.sin, sympy.tan: mpmath.tan,
          sympy.acos: mpmath.acos, sympy.asin: mpmath.asin, sympy.atan: mpmath.atan,
          sympy.exp: mpmath.exp, sympy.log: mpmath.log, sympy.Abs: abs}[expr.func]
    return fn(*[_walk(a, env) for a in expr.args])


def _plain_value(expr, point, digits):
    with mpmath.workdps(2 * digits + 10):
        env = {s: mpmath.mpf(int(v.p)) / int(v.q) for s, v in point.items()}
        val = _walk(expr, env)
        return +(val.real if isinstance(val, mpmath.mpc) else val)


_FORMS = [
    _U / 2 + sympy.sqrt(_U**2 + 16 * _T**2) / 2,
    _U / 2 - sympy.sqrt(_U**2 + 16 * _T**2) / 2,
    _U / 3 + 2 * sympy.sqrt(_U**2 + 48 * _T**2) / 3 * sympy.cos(
        sympy.acos((2 * _U**3 - 72 * _U * _T**2) / (2 * (_U**2 + 48 * _T**2) ** R(3, 2))) / 3),
    _U - sympy.sqrt(_U**2 / 4 + 8 * _T**2 - _T * sympy.sqrt(3 * _U**2 + 64 * _T**2)),
    sympy.sin(sympy.pi / 7 + _T) * sympy.Abs(_U) + sympy.atan(_T / _U) - sympy.tan(_T) ** 2,
    sympy.exp(_T / 10) - sympy.log(_U**2 + 1) + sympy.asin(_T / (2 * sympy.Abs(_T) + 1)),
    (_U**2 + _T**2) ** R(3, 2) / (_U**2 + 1) ** R(5, 3),
    -sympy.sqrt(-(_U**2) - _T**2) ** 2,             # a complex intermediate, a real value
    R(-7, 3),
]


@pytest.mark.parametrize("point", [{_T: R(265, 107), _U: R(835, 107)},
                                   {_T: R(-378, 103), _U: R(-659, 103)},
                                   {_T: R(1, 137), _U: R(900, 137)}])
def test_closed_forms_equal_a_plain_mpmath_walk_shared_or_not(point):
    alone = [energy_numeric(f, point, 30) for f in _FORMS]
    shared_by = Evaluation()
    shared = [energy_numeric(f, point, 30, evaluation=shared_by) for f in _FORMS + _FORMS[::-1]]
    together = closed_values(_FORMS[::-1], point, 30)[::-1]       # one sweep
    for f, a, s, s2, s3 in zip(_FORMS, alone, shared, shared[len(_FORMS):][::-1], together):
        want = _plain_value(f, point, 30)
        # shared, swept together or alone: the same value, bit for bit
        assert s == a and s2 == a and s3 == a, f
        with mpmath.workdps(150):
            # the plain walk's functions are mpmath's own: equal up to the last bits
            assert abs(a - want) <= mpmath.mpf(10) ** -60 * (1 + abs(want)), f
            exact = mpmath.mpf(str(sympy.re(f.subs(point).evalf(150))))
            assert abs(a - exact) <= mpmath.mpf(10) ** -60 * (1 + abs(exact)), f


def test_shared_evaluation_computes_a_common_square_root_once():
    from symcluster.numeric.compiled import _SQRT, Program
    prog = Program()
    point = {_T: R(2, 7), _U: R(3, 5)}
    with mpmath.workdps(70):
        prog.evaluate(_FORMS[0], point)
        prog.evaluate(_FORMS[1], point)
    # U/2 +- sqrt(U^2 + 16 t^2)/2 contain one square root between them
    assert sum(1 for op in prog._ops if op[2][0] == _SQRT) == 1


def test_one_sweep_computes_only_the_operations_its_forms_need():
    # evaluate_all on some forms leaves the operations of the others uncomputed; asked
    # for the others afterwards, it computes theirs and keeps what is known
    from symcluster.numeric.compiled import Program
    prog = Program()
    point = {_T: R(2, 7), _U: R(3, 5)}
    slots = [prog._compile(f) for f in _FORMS]
    with mpmath.workdps(70):
        first = prog.evaluate_all(_FORMS[2:4], point)
        (values,) = prog._values.values()
        reach = set()
        stack = list(slots[2:4])
        while stack:
            k = stack.pop()
            if k not in reach:
                reach.add(k)
                stack.extend(prog._ops[k][0])
        assert set(values) == reach
        known = dict(values)
        again = prog.evaluate_all(_FORMS, point)
        assert all(values[k] is v for k, v in known.items())
        assert again[2:4] == first


def test_sign_of_a_rational_argument_is_exact():
    # t sign(U - 3t) + U at U = 3t is exactly U (sympy, exact: sign(0) = 0), although
    # 3t rounded to binary is not 3 times t rounded; elsewhere U +- t
    form = _T * sympy.sign(_U - 3 * _T) + _U
    for point in ({_T: R(1, 101), _U: R(3, 101)}, {_T: R(5, 103), _U: R(15, 103)},
                  {_T: R(3, 101), _U: R(13, 101)}, {_T: R(-3, 101), _U: R(1, 101)}):
        want = form.subs(point)
        with mpmath.workdps(70):        # the working precision of 30 digits: 2 * 30 + 10
            got = energy_numeric(form, point, 30)
            assert abs(got - mpmath.mpf(int(want.p)) / int(want.q)) < mpmath.mpf(10) ** -65


def test_a_form_that_is_not_real_raises():
    with pytest.raises(ArithmeticError):
        energy_numeric(sympy.sqrt(-(_U**2) - 1), {_U: R(1, 3)}, 30)
    with pytest.raises(ArithmeticError):
        energy_numeric(_T + sympy.sqrt(-(_U**2) - 1), {_T: R(1, 2), _U: R(1, 3)}, 30,
                       evaluation=Evaluation())


def test_a_node_without_an_mpmath_operation_uses_sympy():
    # floor is not a node of closed forms: sympy evaluates it (floor(7/3 * 3/2) = 3)
    form = sympy.floor(_T * _U) + _T
    with mpmath.workdps(70):
        got = energy_numeric(form, {_T: R(7, 3), _U: R(3, 2)}, 30)
        assert abs(got - (3 + mpmath.mpf(7) / 3)) < mpmath.mpf(10) ** -65


@pytest.mark.parametrize("digits", [30, 60])
def test_elementary_functions_and_powers_in_balls_are_within_an_ulp_of_mpmath(digits):
    # closed forms are evaluated in python-flint balls (working precision + 32 bits) and
    # the midpoint is rounded to the working precision; the reference is mpmath's own
    # function of the exact argument at twice the precision (an independent
    # implementation): they differ by at most about one unit in the last place
    x = sympy.Symbol("x", real=True)
    funcs = [sympy.cos, sympy.sin, sympy.tan, sympy.acos, sympy.asin, sympy.atan, sympy.exp,
             sympy.Abs, sympy.sqrt, lambda y: y ** 5, lambda y: y ** -3,
             lambda y: (y + 2) ** R(3, 2)]
    mp_funcs = [mpmath.cos, mpmath.sin, mpmath.tan, mpmath.acos, mpmath.asin, mpmath.atan,
                mpmath.exp, abs, mpmath.sqrt, lambda y: y ** 5, lambda y: y ** -3,
                lambda y: (y + 2) ** (mpmath.mpf(3) / 2)]
    for f, g in zip(funcs, mp_funcs):
        for v in (R(1, 3), R(-5, 7), R(99, 100), R(1), R(7, 10 ** 12), R(37, 2)):
            if f in (sympy.acos, sympy.asin) and abs(v) > 1 or f is sympy.sqrt and v < 0:
                continue
            form = f(x)
            if form.is_number:
                continue        # sympy evaluated it already (acos(1) = 0, ...)
            got = energy_numeric(form, {x: v}, digits)
            with mpmath.workdps(2 * (2 * digits + 10)):
                want = g(mpmath.mpf(int(v.p)) / int(v.q))
                ulp = mpmath.mpf(2) ** -int((2 * digits + 10) * 3.3219) * max(1, abs(want))
                assert abs(got - want) <= 2 * ulp, (f, v, digits)


def test_arc_cosine_beyond_one_takes_the_complex_path():
    # acos(x) with x > 1 is not real: the value comes from mpmath's complex function, so a
    # form like cos(acos(x)) is still evaluated (here to x itself)
    x = sympy.Symbol("x", real=True)
    form = sympy.cos(sympy.acos(x, evaluate=False), evaluate=False)
    val = energy_numeric(form, {x: R(3, 2)}, 30)
    assert abs(val - mpmath.mpf(3) / 2) < mpmath.mpf(10) ** -30


@pytest.mark.parametrize("v", [sympy.Rational(89, 101), sympy.Rational(-203, 127), sympy.Integer(5),
                               sympy.Integer(-3), sympy.Integer(0), sympy.Rational(10**30 + 1, 7),
                               sympy.sqrt(2)])
def test_report_points_print_as_sympy_does(v):
    # the report writes each coordinate as str() of the sympy number (the printer itself
    # is the reference)
    from symcluster.spectrum import VerificationReport
    rep = VerificationReport(digits=30)
    t = sympy.Symbol("t", real=True)
    rep.add("a check", "all", [{t: v}], 0.0)
    assert rep.checks[0]["points"] == [{t: str(v)}]
