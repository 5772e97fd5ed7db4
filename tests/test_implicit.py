"""Tests for symcluster.numeric.implicit: closed forms or implicit roots, their values, verify_roots."""

import random

import mpmath
import numpy as np
import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

from symcluster.algebra.block import ENERGY
from symcluster.numeric.implicit import ImplicitRoot, roots_of, roots_of_irreducible, verify_roots
from symcluster.numeric.isolate import real_roots_at
from symcluster.errors import ModelError, VerificationError

E = ENERGY
t, U = sympy.symbols("t U", real=True)


@pytest.fixture(autouse=True)
def _restore_mpmath_precision():
    dps = mpmath.mp.dps
    yield
    mpmath.mp.dps = dps


def rand_point(rng, syms=(t, U), span=9):
    """Random nonzero rational point, both signs."""
    pt = {}
    for s in syms:
        num = 0
        while num == 0:
            num = rng.randint(-span * 7, span * 7)
        pt[s] = sympy.Rational(num, rng.randint(1, 7))
    return pt


def numeric_values(exprs, point, dps=40):
    """Evaluate closed forms at an exact point; returns sorted real mpf (imag must vanish)."""
    out = []
    with mpmath.workdps(dps):
        for x in exprs:
            # twice the digits: acos/sqrt at the edge of their domain (merging roots)
            # keep only about half of the working precision
            v = sympy.sympify(x).xreplace(point).evalf(2 * dps + 20)
            re, im = v.as_real_imag()
            assert abs(im) < sympy.Float(10) ** (-(dps - 5))
            out.append(mpmath.mpf(sympy.Float(re, 2 * dps + 20)._mpf_))
    return sorted(out)


def eigenvalues_mp(M, point, dps=50):
    """Independent reference: mpmath symmetric eigensolver on the numeric matrix."""
    with mpmath.workdps(dps):
        A = mpmath.matrix([[mpmath.mpf(sympy.Rational(x.xreplace(point)).p) / sympy.Rational(x.xreplace(point)).q
                            for x in row] for row in M.tolist()])
        return sorted(mpmath.eigsy(A, eigvals_only=True))


def assert_close(a, b, digits=30):
    assert len(a) == len(b)
    scale = max([abs(x) for x in b] + [1])
    for x, y in zip(a, b):
        assert abs(x - y) <= scale * mpmath.mpf(10) ** (-digits)


def charpoly_of(M):
    return sympy.Poly((E * sympy.eye(M.rows) - M).det(method="berkowitz"), E, t, U)


# --------------------------------------------------------------------------- degree 1-2


def test_two_site_singlet_quadratic():
    # Two-site Hubbard singlet levels U/2 -+ sqrt(U^2/4 + 4 t^2).
    # Source: Carrascal, Ferrer, Smith, Burke, J. Phys.: Condens. Matter 27, 393001 (2015).
    r = roots_of(sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U))
    assert r == [U / 2 - sympy.sqrt(U**2 + 16 * t**2) / 2, U / 2 + sympy.sqrt(U**2 + 16 * t**2) / 2]
    delta = sympy.sqrt(U**2 / 4 + 4 * t**2)
    for pt in [{t: 1, U: 4}, {t: -3, U: -2}]:
        assert sympy.simplify(r[0].subs(pt) - (U / 2 - delta).subs(pt)) == 0


def test_linear_and_multiplicity():
    P = sympy.Poly((E - t) ** 2 * (2 * E + U) * (E**2 - U * E - 4 * t**2), E, t, U)
    r = roots_of(P)
    assert len(r) == 5
    assert r.count(t) == 2 and -U / 2 in r


def test_square_factor_pulled_out_is_valid_for_negative_coupling():
    # sqrt(t^2 (U^2 + 1)) -> t sqrt(U^2 + 1): fine as a multiset for t < 0 as well.
    P = sympy.Poly(E**2 - t**2 * (U**2 + 1), E, t, U)
    r = roots_of(P)
    assert not any(x.has(sympy.Abs) for x in r)
    rng = random.Random(1)
    for _ in range(4):
        pt = rand_point(rng)
        pt[t] = -abs(pt[t])
        verify_roots(P, r, [pt])


# --------------------------------------------------------------------------- degree 3


@settings(max_examples=20, deadline=None)
@given(st.lists(st.integers(-12, 12), min_size=3, max_size=3, unique=True), st.integers(1, 5))
def test_trig_cubic_on_products_of_linear_factors(rts, lead):
    # The closed-form solver is called directly (roots_of would factor first) and
    # compared with mpmath.polyroots (independent, numeric).
    f = sympy.Poly(lead * sympy.Mul(*[(E - r) for r in rts]), E)
    r = roots_of_irreducible(f, 4)
    assert all(x.has(sympy.acos) or x.is_number for x in r)
    got = numeric_values(r, {})
    with mpmath.workdps(40):
        want = sorted(mpmath.re(z) for z in mpmath.polyroots([int(c) for c in f.all_coeffs()], maxsteps=200, extraprec=200))
    assert_close(got, want)


def test_trig_cubic_with_couplings_products_of_linear_factors():
    # Reference: the exact rational roots a t + b U of the linear factors (coinciding
    # roots do occur at some points, where a numeric root finder would lose digits).
    rng = random.Random(3)
    for _ in range(5):
        ab = [(rng.randint(-4, 4), rng.randint(-4, 4)) for _ in range(3)]
        f = sympy.Poly(sympy.Mul(*[E - a * t - b * U for a, b in ab]), E, t, U)
        r = roots_of_irreducible(f, 4)
        for _ in range(3):
            pt = rand_point(rng)
            with mpmath.workdps(40):
                want = sorted(mpmath.mpf(q.p) / q.q for q in (a * pt[t] + b * pt[U] for a, b in ab))
            assert_close(numeric_values(r, pt), want, digits=30)


def test_irreducible_cubic_random_symmetric_matrix():
    # Characteristic polynomial of A + U*D + t*B (random symmetric integer A, B, D diag);
    # the closed forms must equal mpmath eigenvalues at random points of both signs.
    rng = random.Random(5)
    for _ in range(3):
        A = sympy.Matrix(3, 3, lambda i, j: 0)
        for i in range(3):
            for j in range(i, 3):
                a = rng.randint(-3, 3)
                A[i, j] = A[j, i] = a + (rng.randint(-2, 2) * t if i != j else rng.randint(-2, 2) * U)
        P = charpoly_of(A)
        r = roots_of(P)
        assert len(r) == 3
        for _ in range(3):
            pt = rand_point(rng)
            assert_close(numeric_values(r, pt), eigenvalues_mp(A, pt))


def test_cubic_defined_where_roots_merge():
    # E^3 - 3 t^2 E + t^3 has a triple root at t = 0; the closed form must stay defined there.
    P = sympy.Poly(E**3 - 3 * t**2 * E + t**3, E, t)
    r = roots_of(P)
    assert [x.subs(t, 0) for x in r] == [0, 0, 0]
    verify_roots(P, r, [{t: sympy.Rational(-5, 3)}, {t: 7}])


# --------------------------------------------------------------------------- degree 4


def test_quartic_biquadratic_denested():
    # y^4 - 10 y^2 + 1 has roots +-sqrt(2) +- sqrt(3) (classical identity, common practice, no source).
    r = roots_of(sympy.Poly(E**4 - 10 * t**2 * E**2 + t**4, E, t))
    assert set(sympy.expand(x) for x in r) == {
        sympy.expand(s1 * sympy.sqrt(2) * t + s2 * sympy.sqrt(3) * t) for s1 in (1, -1) for s2 in (1, -1)
    }


@pytest.mark.parametrize("expr", [
    E**4 - (U**2 + 3 * t**2) * E**2 + t**4,                       # biquadratic, nested roots
    E**4 - (U**2 + 5 * t**2) * E**2 + 4 * t**4,                   # biquadratic, denests
    (E**2 + U * E) ** 2 - (U**2 + 5 * t**2) * (E**2 + U * E) + t**4,  # Q(R(E)), R quadratic
    (E - U) ** 4 - (U**2 + 3 * t**2) * (E - U) ** 2 + t**4,       # biquadratic after a shift
])
def test_structured_quartics(expr):
    P = sympy.Poly(expr, E, t, U)
    r = roots_of(P)
    assert len(r) == 4 and not any(x.has(sympy.acos) for x in r)
    rng = random.Random(str(expr))
    verify_roots(P, r, [rand_point(rng) for _ in range(4)])


def test_generic_quartic_random_symmetric_matrices():
    # Char poly of random symmetric integer 4x4 + U*diag (+ t off-diagonal);
    # compared with mpmath eigenvalues at random points, negative couplings included.
    rng = random.Random(8)
    seen_generic = 0
    for _ in range(3):
        A = sympy.zeros(4, 4)
        for i in range(4):
            for j in range(i, 4):
                A[i, j] = A[j, i] = rng.randint(-3, 3) + (rng.randint(-2, 2) * U if i == j else rng.randint(-1, 1) * t)
        P = charpoly_of(A)
        r = roots_of(P)
        seen_generic += any(x.has(sympy.acos) for x in r if not isinstance(x, ImplicitRoot))
        for _ in range(3):
            pt = rand_point(rng)
            assert_close(numeric_values(r, pt), eigenvalues_mp(A, pt), digits=28)
    assert seen_generic


def test_max_closed_degree_gives_implicit():
    P = sympy.Poly(E**3 - 3 * t**2 * E + t**2 * U, E, t, U)
    r = roots_of(P, max_closed_degree=2)
    assert all(isinstance(x, ImplicitRoot) for x in r)
    assert [x.index for x in r] == [0, 1, 2]


# --------------------------------------------------------------------------- implicit roots


def random_symmetric(rng, n):
    M = sympy.zeros(n, n)
    for i in range(n):
        for j in range(i, n):
            M[i, j] = M[j, i] = rng.randint(-4, 4) + (rng.randint(1, 3) * U if i == j and i % 2 else 0)
    return M


def test_implicit_root_matches_eigenvalues_30_digits():
    rng = random.Random(12)
    M = random_symmetric(rng, 6)
    P = charpoly_of(M)
    r = roots_of(P)
    implicit = [x for x in r if isinstance(x, ImplicitRoot)]
    assert implicit and all(x.degree >= 5 for x in implicit)
    for _ in range(2):
        pt = rand_point(rng, syms=(U,))
        pt[t] = 0
        got = sorted(x.numeric(pt, digits=30) if isinstance(x, ImplicitRoot) else numeric_values([x], pt)[0] for x in r)
        assert_close(got, eigenvalues_mp(M, pt), digits=29)
        # and a float check with numpy (independent, 1e-9)
        Mn = np.array(M.xreplace(pt).tolist(), dtype=float)
        assert np.allclose(sorted(float(x) for x in got), np.linalg.eigvalsh(Mn), atol=1e-9)


def test_implicit_root_protocol():
    P = sympy.Poly(E**5 - 5 * E**3 + 4 * E - U * t**4 + 0 * t, E, t, U)
    a, b = ImplicitRoot(P, 1), ImplicitRoot(sympy.Poly(P.as_expr(), E, t, U), 1)
    assert a == b and hash(a) == hash(b) and a != ImplicitRoot(P, 2)
    assert a.symbols == (t, U) and a.free_symbols == {t, U} and a.degree == 5
    assert "index=1" in repr(a)
    # E^5 - 5E^3 + 4E = E(E^2-1)(E^2-4): roots -2,-1,0,1,2 at U = 0 (exact, by hand)
    assert a.numeric({t: 1, U: 0}) == -1
    tex = a.latex()
    # words of our own, index counted from 0, energy printed as epsilon (not E)
    assert tex.startswith(r"\text{root } 1 \text{ of }") and r"\epsilon^{5}" in tex
    assert r"\operatorname" not in tex
    with pytest.raises(ModelError, match="index"):
        ImplicitRoot(P, 5)
    with pytest.raises(ModelError, match="'U'"):
        a.numeric({t: 1})
    with pytest.raises(ModelError, match="exact rational"):
        a.numeric({t: 1, U: 0.5})


def test_implicit_roots_share_root_lists_without_mixing_points_or_digits():
    # the roots of one polynomial are computed once per (point, digits) and shared by its
    # levels: interleaved points, digits and name/Symbol keys must each get their own
    # values. Reference: sympy's exact real roots (CRootOf) evaluated at 60 digits.
    P = sympy.Poly(E**5 - 5 * E**3 * t**2 + 4 * E * t**4 - U * t**4, E, t, U)
    rs = [ImplicitRoot(P, k) for k in range(5)]
    pts = [{t: 1, U: sympy.Rational(1, 3)}, {"t": 2, "U": -1}, {t: sympy.Rational(-3, 7), U: sympy.Rational(1, 10)}]
    for digits in (15, 40):
        for pt in pts + pts[::-1]:
            sub = {t: sympy.Rational(pt.get(t, pt.get("t"))), U: sympy.Rational(pt.get(U, pt.get("U")))}
            exact = sympy.Poly(P.as_expr().xreplace(sub), E).real_roots()
            assert len(exact) == 5
            for k, r in enumerate(rs):
                got = r.numeric(pt, digits=digits)
                with mpmath.workdps(60):
                    want = mpmath.mpf(str(exact[k].evalf(60)))
                    assert abs(got - want) <= abs(want) * mpmath.mpf(10) ** (1 - digits), (pt, k, digits)


def test_implicit_root_not_real_rooted_raises():
    r = ImplicitRoot(sympy.Poly(E**2 + U**2 + 1, E, U), 0)
    with pytest.raises(VerificationError, match="non-real"):
        r.numeric({U: 0})


def test_real_roots_at_handles_multiplicity():
    P = sympy.Poly((E - 1) ** 2 * (E + t) * (E**2 - 2), E, t)
    got = real_roots_at(P, {t: sympy.Rational(1, 3)}, digits=30)
    with mpmath.workdps(30):
        want = sorted([mpmath.mpf(1), mpmath.mpf(1), -mpmath.mpf(1) / 3, mpmath.sqrt(2), -mpmath.sqrt(2)])
    assert_close(got, want, digits=29)


# --------------------------------------------------------------------------- verification


def test_verify_roots_detects_errors():
    P = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    good = roots_of(P)
    pts = [{t: 1, U: sympy.Rational(-3, 2)}, {t: sympy.Rational(-2, 5), U: 3}]
    assert verify_roots(P, good, pts) < 1e-25
    with pytest.raises(VerificationError, match="root #"):
        verify_roots(P, [good[0], good[1] + sympy.Rational(1, 10**20)], pts)
    with pytest.raises(VerificationError, match="2 roots given"):
        verify_roots(sympy.Poly(E**3 - t * E, E, t), good, pts)


@settings(max_examples=8, deadline=None)
@given(st.integers(0, 2**32), st.sampled_from([2, 3, 4]))
def test_roots_of_random_hermitian_charpolys(seed, n):
    # Any symmetric matrix linear in (t, U) has a real-rooted characteristic polynomial.
    rng = random.Random(seed)
    M = sympy.zeros(n, n)
    for i in range(n):
        for j in range(i, n):
            M[i, j] = M[j, i] = rng.randint(-2, 2) + rng.randint(-2, 2) * t + (rng.randint(-2, 2) * U if i == j else 0)
    P = charpoly_of(M)
    r = roots_of(P)
    assert len(r) == n
    verify_roots(P, r, [rand_point(rng) for _ in range(2)])
