"""symcluster.theorems.separate: the level-line test that replaces most resultants.

Each check is against an independent computation: sympy's exact real-root counting
(Sturm sequences, sympy.Poly.count_roots), sympy substitution, or numpy eigenvalues of
explicit matrices; none of them shares code with the module under test.
"""

import functools
import random
from fractions import Fraction

import flint
import numpy as np
import pytest
import sympy

import symcluster as sc
from symcluster.theorems.envelope import Curves
from symcluster.theorems.separate import (free_of_roots, line_values, meeting_windows,
                                         sector_below_open)

x, E = sympy.symbols("x E")


def _sympy(p):
    return sympy.Poly([int(c) for c in reversed(p.coeffs())] or [0], x)


@pytest.mark.parametrize("seed", range(40))
def test_free_of_roots_is_never_wrong_when_it_says_true(seed):
    # soundness: "free" must mean no real root in the closed interval, exactly (Sturm
    # sequences in sympy); and an interval around a known root is never called free
    rng = random.Random(seed)
    roots = [Fraction(rng.randint(-40, 40), rng.randint(1, 6)) for _ in range(rng.randint(1, 5))]
    p = sympy.Poly(sympy.prod([x - sympy.Rational(r.numerator, r.denominator) for r in roots])
                   * (x ** 2 + rng.randint(1, 9)), x)
    p = p * p.LC().q if hasattr(p.LC(), "q") else p
    coeffs = [int(c * sympy.ilcm(*[sympy.Rational(a).q for a in p.all_coeffs()]))
              for c in p.all_coeffs()]
    f = flint.fmpz_poly(list(reversed(coeffs)))
    for _ in range(20):
        a = Fraction(rng.randint(-60, 60), rng.randint(1, 8))
        b = a + Fraction(rng.randint(1, 80), rng.randint(1, 8))
        exact = sympy.Poly(list(reversed([int(c) for c in f.coeffs()])), x).count_roots(
            sympy.Rational(a.numerator, a.denominator), sympy.Rational(b.numerator, b.denominator))
        if free_of_roots(f, a, b):
            assert exact == 0, (roots, a, b)
        if any(a <= r <= b for r in roots):
            assert not free_of_roots(f, a, b)


def test_free_of_roots_proves_a_root_free_interval_and_constants():
    f = flint.fmpz_poly([-2, 0, 1])                       # roots ±sqrt(2)
    assert free_of_roots(f, Fraction(-1), Fraction(1))
    assert not free_of_roots(f, Fraction(1), Fraction(2))
    assert free_of_roots(flint.fmpz_poly([3]), Fraction(0), Fraction(1))
    assert not free_of_roots(flint.fmpz_poly([0]), Fraction(0), Fraction(1))
    assert not free_of_roots(flint.fmpz_poly([-1, 1]), Fraction(1), Fraction(2))   # root at an end


@pytest.mark.parametrize("seed", range(10))
def test_line_values_is_the_polynomial_on_the_line_up_to_a_positive_factor(seed):
    rng = random.Random(seed)
    d = {(i, j): rng.randint(-9, 9) for i in range(4) for j in range(3)}
    d[(4, 0)] = 1
    cols = [flint.fmpz_poly([d.get((i, j), 0) for j in range(3)]) for i in range(5)]
    u, v = Fraction(rng.randint(-9, 0)), Fraction(rng.randint(1, 9))
    lu, lv = Fraction(rng.randint(-20, 20), 3), Fraction(rng.randint(-20, 20), 7)
    line = sympy.Rational(lu.numerator, lu.denominator) + \
        (sympy.Rational(lv - lu) / sympy.Rational(v - u)) * (x - sympy.Rational(u.numerator, u.denominator))
    expected = sympy.Poly(sympy.expand(sum(c * line ** i * x ** j for (i, j), c in d.items())), x)
    got = _sympy(line_values(cols, u, lu, v, lv))
    ratio = sympy.simplify(got.as_expr() / expected.as_expr())
    assert ratio.is_Rational and ratio > 0


def _curves(polys, lo, hi):
    return Curves([{(i, j): c for (i, j), c in sympy.Poly(p, E, x).as_dict().items()}
                   for p in polys], Fraction(lo), Fraction(hi))


def test_windows_hold_every_crossing_and_the_order_is_fixed_outside():
    # eigenvalues of [[x, 1], [1, -x]] (lowest -sqrt(x^2 + 1)) and of diag(x/2 - 1/2, ...):
    # lowest roots -sqrt(x^2+1) and x/2 - 1 meet where x/2 - 1 = -sqrt(x^2 + 1): never for
    # real x? (x/2 - 1)^2 = x^2 + 1  <=>  3x^2/4 + x = 0  <=> x = 0 or -4/3; at both points
    # x/2 - 1 < 0, so both are real meetings (checked by numpy below)
    g = E ** 2 - x ** 2 - 1
    h = 2 * E - x + 2
    c = _curves([g, h], -3, 3)
    wins = meeting_windows(c, 0, 1, Fraction(-3), Fraction(3))
    for point in (Fraction(0), Fraction(-4, 3)):
        assert any(a < point < b for a, b in wins), (point, wins)
    # outside the windows the order of the two lowest roots is constant on each stretch
    # (numpy eigenvalues of the explicit 2x2 matrix)
    rng = random.Random(5)
    for _ in range(200):
        t = Fraction(rng.randint(-3000, 3000), 1000)
        if any(a <= t <= b for a, b in wins):
            continue
        lam_g = np.linalg.eigvalsh(np.array([[float(t), 1.0], [1.0, -float(t)]]))[0]
        lam_h = float(t) / 2 - 1
        inside = -4 / 3 < float(t) < 0
        assert (lam_h > lam_g) == (not inside) or abs(lam_h - lam_g) < 1e-12
    # the meetings the envelope route reports are exactly those two points
    assert sorted(float(r.numeric(15)) for r in c.meetings(0, 1)) == \
        pytest.approx([-4 / 3, 0], abs=1e-12)


def test_well_separated_pairs_need_no_window():
    c = _curves([E - x, E - x - 1], -20, 0)             # parallel lines one apart
    assert meeting_windows(c, 0, 1, Fraction(-20), Fraction(0)) == []
    assert c.meetings(0, 1) == [] and c.stats["resultants"] == 0


def test_nearly_parallel_close_branches_separate_on_long_pieces():
    # two branches with slope 2 and a gap of 1/1000 everywhere: a horizontal level would
    # need pieces narrower than 1/2000; the level line needs very few
    c = _curves([E - 2 * x, 1000 * E - 2000 * x - 1], -20, 0)
    assert meeting_windows(c, 0, 1, Fraction(-20), Fraction(0)) == []


@pytest.mark.parametrize("n", [5, pytest.param(6, marks=pytest.mark.slow),
                               pytest.param(7, marks=pytest.mark.slow)])
def test_ladder_sectors_against_the_reference_at_sample_points(n):
    # the 2x3 ladder at five to seven electrons on U in [-20, 0): the sectors the
    # exact-resultant route could not finish; the level lines decide them (no resultant,
    # no envelope), and the verdict is checked against the plain Fock reference
    # (tests/reference_fock.py, independent) at sample points, including both ends
    import helpers_towers
    cluster = sc.grid(2, 3)
    spec = _ladder()
    rep = sc.towers(spec, n, "U", (-20, 0), {"t": 1}, closed=(True, False))
    assert rep.holds
    ref = helpers_towers.reference(cluster)
    for u in (-20, -14.3, -5.25, -0.5, -1e-6):
        assert helpers_towers.tower_holds_at(ref, n, {"t": 1, "U": u}) is True
    # the report's levels on the holding run are the sector minima of the reference at its
    # midpoint U = -10 (the Sz = S sector minimum is E_min(S) when the tower holds)
    m = helpers_towers.sz_minima(ref, n, {"t": 1, "U": -10})
    for v in rep.verdicts:
        lower = float(v.lower_level.numeric({"U": -10}))
        assert lower == pytest.approx(m[int(2 * v.value)], abs=1e-9)


@functools.lru_cache(maxsize=None)
def _ladder():
    return sc.solve(sc.hubbard(sc.grid(2, 3)), fixed={"t": 1})


def _ring4_with_polarised_level_at(value):
    """The 4-ring spectrum with its N = 3, S = 3/2 level at -2 (three spinless fermions in
    the orbitals -2, 0, 0: exact for every U) moved to the constant ``value`` (exact)."""
    import dataclasses
    spec = sc.solve(sc.hubbard(sc.ring(4)), fixed={"t": 1})
    levels = []
    for l in spec.levels:
        q = l.quantum_numbers
        if q["N"] == 3 and q["S"] == sympy.Rational(3, 2) and l.energy == -2:
            gens = l.polynomial.gens
            l = dataclasses.replace(l, energy=value,
                                    polynomial=sympy.Poly(gens[0] - value, *gens))
        levels.append(l)
    return dataclasses.replace(spec, levels=levels)


def test_a_tiny_exact_shift_decides_the_open_end_and_the_crossing():
    # 4-ring, N = 3, attractive U: E_min(1/2) = -4 at U = 0 (orbitals -2, 0, 0 filled by
    # 2 + 1 electrons; textbook tight binding) and increases with U (Hellmann-Feynman: its
    # slope is the double occupancy, > 0), so E_min(1/2) < -4 for U < 0.  A constant
    # S = 3/2 level put at exactly -4 touches it only at the excluded end U = 0: the tower
    # holds on [-20, 0) (the open-end route) and fails at the point U = 0 on [-20, 0].
    # Put at -4 - eps it crosses at an exact point just left of 0 and fails from there on.
    eps = sympy.Rational(1, 10 ** 6)
    at = sc.towers(_ring4_with_polarised_level_at(-4), 3, "U", (-20, 0), {"t": 1},
                   closed=(True, False))
    assert at.holds
    closed = sc.towers(_ring4_with_polarised_level_at(-4), 3, "U", (-20, 0), {"t": 1},
                       closed=(True, True))
    assert not closed.holds
    (v,) = closed.violations
    assert v.interval.is_point and v.interval.lower == 0
    below = sc.towers(_ring4_with_polarised_level_at(-4 - eps), 3, "U", (-20, 0), {"t": 1},
                      closed=(True, False))
    assert not below.holds
    (c,) = below.crossings
    # the crossing is where E_min(1/2)(U) = -4 - eps: check with the Fock reference's
    # S = 1/2 minimum (the Sz = 1/2 sector's lowest level below -2) on both sides of it
    import helpers_towers
    ref = helpers_towers.reference(sc.ring(4))
    x = float(c["numeric"])
    assert -1e-4 < x < 0
    for u, sign in ((x - 1e-9, -1), (x + 1e-9, 1)):
        m = helpers_towers.sz_minima(ref, 3, {"t": 1, "U": u})[1]
        assert (m - (-4 - 1e-6)) * sign > 0
    above = sc.towers(_ring4_with_polarised_level_at(-4 + eps), 3, "U", (-20, 0), {"t": 1},
                      closed=(True, True))
    assert above.holds


def test_a_tree_with_a_degenerate_free_level_against_the_reference():
    # atlas graph G78 (a tree: the star of site 1 with a tail): at U = 0 its half-filled
    # ground level is degenerate between S = 0 and S = 1 (a zero mode), the case of the
    # open-end route; the verdict is compared with the Fock reference close to U = 0
    import helpers_towers
    cluster = sc.cluster(6, [(0, 1), (1, 2), (1, 4), (1, 5), (2, 3)], name="G78")
    spec = sc.solve(sc.hubbard(cluster), fixed={"t": 1}, sectors=[{"N": 6}])
    rep = sc.towers(spec, 6, "U", (-20, 0), {"t": 1}, closed=(True, False))
    ref = helpers_towers.reference(cluster)
    m0 = helpers_towers.sz_minima(ref, 6, {"t": 1, "U": 0})
    assert m0[0] == pytest.approx(m0[2], abs=1e-9)          # degenerate at U = 0
    assert rep.holds
    for u in (-20, -3.5, -0.01, -1e-4):
        assert helpers_towers.tower_holds_at(ref, 6, {"t": 1, "U": u}, tol=1e-12) is True


def test_an_open_end_where_a_factor_has_a_double_root_is_decided_by_its_branches():
    # f = E^2 - 3x^2 and h = E^2 - 2x^2 (irreducible over Q) each have a double root E = 0
    # at the open end x = 0: their branches are +-sqrt3 x and +-sqrt2 x (closed forms), the
    # eigenvalues of [[0, a x], [a x, 0]].  For x in [-1, 0) the lowest branch of f,
    # -sqrt3 |x|, is below that of h, -sqrt2 |x|; they are equal only at the excluded end.
    f = {(2, 0): 1, (0, 2): -3}
    h = {(2, 0): 1, (0, 2): -2}
    c = Curves([f, h], Fraction(-1), Fraction(0))
    assert sector_below_open(c, [0], [1], Fraction(-1), Fraction(0), (True, False))
    # the other order is false on the whole interval, and the closed end is a tie
    c2 = Curves([f, h], Fraction(-1), Fraction(0))
    assert not sector_below_open(c2, [1], [0], Fraction(-1), Fraction(0), (True, False))
    c3 = Curves([f, h], Fraction(-1), Fraction(0))
    assert not sector_below_open(c3, [0], [1], Fraction(-1), Fraction(0), (True, True))


def test_a_graph_whose_degenerate_level_is_a_multiple_root_against_the_reference():
    # atlas graph G102 (R. C. Read, R. J. Wilson, An Atlas of Graphs, networkx's order),
    # N = 8, attractive U: at U = 0 the lowest S = 0 and S = 1 levels meet inside one
    # irreducible factor (a double root), the case the branch test above decides without
    # resultants; the verdict is compared with the Fock reference close to U = 0
    import networkx
    import helpers_towers
    g = networkx.graph_atlas(102)
    cluster = sc.cluster(6, [(int(a), int(b)) for a, b in g.edges()], name="G102")
    spec = sc.solve(sc.hubbard(cluster), fixed={"t": 1}, sectors=[{"N": 8}])
    rep = sc.towers(spec, 8, "U", (-20, 0), {"t": 1}, closed=(True, False))
    assert rep.holds
    ref = helpers_towers.reference(cluster)
    m0 = helpers_towers.sz_minima(ref, 8, {"t": 1, "U": 0})
    assert m0[0] == pytest.approx(m0[2], abs=1e-9)          # degenerate at U = 0
    for u in (-20, -2, -0.01, -1e-4):
        assert helpers_towers.tower_holds_at(ref, 8, {"t": 1, "U": u}, tol=1e-12) is True
