"""Tests for symcluster.numeric.isolate: certified isolation of the real roots of integer
polynomials (the Laguerre path for high degrees and the general complex root finder)."""

import flint
import mpmath
import numpy as np
import pytest

from symcluster.numeric.isolate import LAGUERRE_MIN_DEGREE, _laguerre_real_roots, isolate


# ------------------------------------------------------------------ high-degree isolation


def _chebyshev_int(n):
    """Integer coefficients (low first) of T_n by the three-term recurrence."""
    a, b = [1], [0, 1]
    for _ in range(n - 1):
        nxt = [0] + [2 * c for c in b]
        for i, c in enumerate(a):
            nxt[i] -= c
        a, b = b, nxt
    return b


@pytest.mark.parametrize("n", [25, 40, 61])
def test_laguerre_isolation_chebyshev_roots(n):
    # The zeros of T_n are cos((2k-1) pi / (2n)), k = 1..n (Abramowitz & Stegun 22.16.4);
    # n odd has the zero 0, which the relative-accuracy path leaves to the general method.
    cs = _chebyshev_int(n)
    if n % 2:
        cs = cs[1:]                 # T_n / x for odd n: the nonzero zeros only
    got = _laguerre_real_roots(flint.fmpz_poly(cs), 130)
    assert got is not None and len(got) == len(cs) - 1
    with mpmath.workdps(45):
        want = sorted(mpmath.cos((2 * k - 1) * mpmath.pi / (2 * n)) for k in range(1, n + 1))
        if n % 2:
            want = [w for w in want if abs(w) > mpmath.mpf("1e-30")]
        for ball, w in zip(got, want):
            man, exp = ball.mid().man_exp()
            mid = mpmath.mpf(int(man)) * mpmath.mpf(2) ** int(exp)
            assert abs(mid - w) <= abs(w) * mpmath.mpf(2) ** -125


def test_isolate_high_degree_agrees_with_complex_root_finder():
    # Characteristic polynomial of a random 30x30 integer symmetric matrix at an exact
    # point: the fast path (isolate, degree >= LAGUERRE_MIN_DEGREE) against flint's
    # general certified complex root finder, and against numpy.linalg.eigvalsh.
    rng = np.random.default_rng(7)
    A = rng.integers(-5, 6, size=(30, 30))
    A = A + A.T
    cs = [int(c) for c in flint.fmpz_mat(A.tolist()).charpoly().coeffs()]
    (f, _), = flint.fmpz_poly(cs).factor()[1]   # irreducible for this seed (checked below)
    assert f.degree() == 30 >= LAGUERRE_MIN_DEGREE
    fast = _laguerre_real_roots(f, 130)
    with flint.ctx.workprec(300):
        ref = sorted((c.real for c, _ in f.complex_roots()), key=lambda b: float(b.mid()))
    assert len(fast) == 30
    for a, b in zip(fast, ref):
        assert a.overlaps(b)
    ev = np.linalg.eigvalsh(A.astype(float))
    assert np.allclose([float(b.mid()) for b in fast], ev, atol=1e-9)


def test_isolate_tight_cluster_and_nonreal_fall_back():
    # Roots 1 and 1 + 2**-100 are separable at 30 digits (2**-124 relative); the
    # separation test must run at the working precision, not at the default 53 bits.
    big = 2**100
    near = flint.fmpz_poly([-big, big]) * flint.fmpz_poly([-(big + 1), big])
    roots, nonreal = isolate(tuple(int(c) for c in near.coeffs()), 30)
    assert nonreal == 0 and roots == ((1, 0), (big + 1, -100))
    # The same cluster inside a degree-32 squarefree real-rooted polynomial: the Laguerre
    # path either certifies all 32 roots or declines (then the general method runs);
    # it must never return a wrong set.
    f = near * flint.fmpz_poly(_chebyshev_int(30))
    got = _laguerre_real_roots(f, 130)
    if got is not None:
        assert len(got) == 32
        assert got[-1].contains(flint.arb(1) + flint.arb(2) ** -100)
        assert got[-2].contains(1)
    # x^30 + 2 has no real root: the Laguerre path declines, the general one counts 30
    assert _laguerre_real_roots(flint.fmpz_poly([2] + [0] * 29 + [1]), 100) is None
    assert isolate(tuple([2] + [0] * 29 + [1]), 30) == ((), 30)


@pytest.mark.parametrize("prec", [40, 80, 160, 400])
def test_a_short_working_precision_gives_the_roots_or_nothing(prec):
    # isolate first runs the Laguerre iteration at a short working precision; whatever
    # that precision, the exact sign-change certificate must either hold for the true
    # zeros of T_40, cos((2k-1) pi / 80) (Abramowitz & Stegun 22.16.4), or give None
    f = flint.fmpz_poly(_chebyshev_int(40))
    got = _laguerre_real_roots(f, 100, prec=prec)
    if got is None:
        return
    assert len(got) == 40
    with mpmath.workdps(40):
        want = sorted(mpmath.cos((2 * k - 1) * mpmath.pi / 80) for k in range(1, 41))
        for ball, w in zip(got, want):
            man, exp = ball.mid().man_exp()
            mid = mpmath.mpf(int(man)) * mpmath.mpf(2) ** int(exp)
            assert abs(mid - w) <= abs(w) * mpmath.mpf(2) ** -95


def test_isolate_is_unchanged_by_the_short_first_attempt():
    # the roots of a degree-40 Chebyshev polynomial through isolate (short precision
    # first) equal the closed form to the digits asked for (Abramowitz & Stegun 22.16.4)
    roots, nonreal = isolate(tuple(_chebyshev_int(40)), 30)
    assert nonreal == 0 and len(roots) == 40
    with mpmath.workdps(40):
        want = sorted(mpmath.cos((2 * k - 1) * mpmath.pi / 80) for k in range(1, 41))
        for (man, exp), w in zip(roots, want):
            assert abs(mpmath.mpf(man) * mpmath.mpf(2) ** exp - w) <= abs(w) * mpmath.mpf(10) ** -30


@pytest.mark.parametrize("factor", [3, -3, -7, 1, -1])
def test_scaled_isolation_matches_the_roots_of_the_scaled_polynomial(factor):
    """Roots of sum_a c_a f^(n-a) x^a are f times those of sum_a c_a x^a; the scaled
    enclosures agree with mpmath's polyroots of the scaled polynomial (a general-purpose
    reference) to the digits asked for, in ascending order."""
    from symcluster.numeric.isolate import scaled_isolation
    base = (-6, 11, -6, 1)                      # (x - 1)(x - 2)(x - 3)
    coeffs = tuple(c * factor ** (3 - a) for a, c in enumerate(base))
    got = scaled_isolation(isolate(base, 30), base, factor, coeffs)
    with mpmath.workdps(40):
        want = sorted(mpmath.re(r) for r in mpmath.polyroots(list(reversed(coeffs)),
                                                              maxsteps=200, extraprec=200))
        vals = [mpmath.mpf(me) for me in got[0]]
        assert got[1] == 0
        assert all(abs(v - w) <= abs(w) * mpmath.mpf(10) ** -30 for v, w in zip(vals, want))
        assert vals == sorted(vals)


def test_scaled_isolation_refuses_coefficients_that_are_not_a_scaling():
    from symcluster.numeric.isolate import scaled_isolation
    with pytest.raises(ValueError):
        scaled_isolation(isolate((-2, 0, 1), 10), (-2, 0, 1), 3, (-17, 0, 1))
