"""Certified spin towers against published results and the independent Fock reference.

Each report is also checked point by point against ``tests/reference_fock.py`` (shares no
code with symcluster) through ``helpers_towers.tower_holds_at``.
"""

import functools
import random

import mpmath
import pytest
import sympy

import symcluster as sc
from helpers_towers import reference, tower_holds_at

SQRT7 = sympy.sqrt(7)


@functools.lru_cache(maxsize=None)
def solved(name):
    shapes = {"ring(4)": lambda: sc.ring(4), "chain(5)": lambda: sc.chain(5),
              "ring(6)": lambda: sc.ring(6), "ladder(2x3)": lambda: sc.grid(2, 3)}
    cluster = shapes[name]()
    return cluster, sc.solve(sc.hubbard(cluster), fixed={"t": 1})


def _agrees(report, ref, n, points):
    """The report's verdict at each sample point equals the reference's."""
    for u in points:
        expected = tower_holds_at(ref, n, {"t": 1, "U": float(u)})
        inside = [v for v in report.violations
                  if _contains(v.interval, sympy.Rational(u))]
        assert (not inside) == expected, f"N={n}, U={u}: reference says {expected}"


def _contains(iv, u):
    lo, hi = iv.lower, iv.upper
    left = (u >= lo) if iv.lower_closed else (u > lo)
    right = (u <= hi) if iv.upper_closed else (u < hi)
    return bool(left and right)


# Three electrons on the 4-site ring.  The S = 3/2 state is three spinless fermions in the
# orbitals -2t cos k, k = 0, ±π/2 (textbook tight binding): E = -2t at every U.  The lowest
# S = 1/2 level reaches -2t at U = 8 + 4√7 ≈ 18.583 t (the value asked for in the tower
# issue; derived here only through the reference: the S = 1/2 minimum equals -2t there and
# the order flips across it), beyond which the fully polarised state is the ground state
# (Nagaoka's one-hole ferromagnetism on the 4-ring; Y. Nagaoka, Phys. Rev. 147, 392 (1966)).
def test_four_ring_three_electrons_fails_exactly_above_8_plus_4_sqrt7():
    cluster, spec = solved("ring(4)")
    rep = sc.towers(spec, n_electrons=3, coupling="U", interval=(0, 100), fixed={"t": 1},
                    kind="spin")
    assert rep.holds is False
    (v,) = rep.violations
    assert (v.value, v.next_value, v.verdict) == (sympy.Rational(1, 2), sympy.Rational(3, 2),
                                                  "fails")
    assert sympy.simplify(v.interval.lower - (8 + 4 * SQRT7)) == 0
    assert v.interval.lower_closed and v.interval.upper == 100 and v.interval.upper_closed
    assert v.upper_level.energy == -2
    assert [sympy.simplify(c["at"] - (8 + 4 * SQRT7)) for c in rep.crossings] == [0]
    ref = reference(cluster)
    c = float(8 + 4 * SQRT7)
    # the reference: at the exact point the S = 1/2 (Sz = 1/2 sector) minimum is -2t
    from helpers_towers import sz_minima
    m = sz_minima(ref, 3, {"t": 1, "U": c})
    assert abs(m[1] - (-2)) < 1e-9 and abs(m[3] - (-2)) < 1e-9
    assert tower_holds_at(ref, 3, {"t": 1, "U": c - 1e-3}) is True
    assert tower_holds_at(ref, 3, {"t": 1, "U": c + 1e-3}) is False
    _agrees(rep, ref, 3, [0, 1, 7, 18, 18.6, 19, 50, 100])
    # the unbounded interval: the same single violation, open to infinity
    rep_inf = sc.towers(spec, 3, "U", (0, "oo"), {"t": 1})
    (w,) = rep_inf.violations
    assert w.interval.upper == sympy.oo and not w.interval.upper_closed


def test_eta_towers_mirror_the_spin_towers_under_the_partial_particle_hole_map():
    # Shiba's partial particle-hole map (H. Shiba, Prog. Theor. Phys. 48, 2171 (1972), from
    # memory) exchanges spin and eta pseudospin and U <-> -U on a bipartite cluster: the
    # eta tower of N = 3 on the 4-ring at -U fails where the spin tower of N = 5 at +U does
    _cluster, spec = solved("ring(4)")
    spin = sc.towers(spec, 5, "U", (0, 100), {"t": 1}, kind="spin")
    eta = sc.towers(spec, 3, "U", (-100, 0), {"t": 1}, kind="eta")
    (s,) = spin.violations
    (e,) = eta.violations
    assert sympy.simplify(s.interval.lower + e.interval.upper) == 0
    assert sympy.simplify(s.interval.lower - (8 + 4 * SQRT7)) == 0


ATTRACTIVE = ["ring(4)", pytest.param("chain(5)", marks=pytest.mark.slow),
              pytest.param("ring(6)", marks=pytest.mark.slow),
              pytest.param("ladder(2x3)", marks=pytest.mark.slow)]


# Attractive U: the spin tower at every filling is conjectured, proven in part (the issue
# cites arXiv:1712.02694; Lieb 1989 gives the S = 0 ground state at even N).  Each verdict
# is compared with the reference at sample points; the sectors where it held are listed in
# docs/towers.md.
@pytest.mark.parametrize("name", ATTRACTIVE)
def test_attractive_spin_towers_every_filling(name):
    cluster, spec = solved(name)
    ref = reference(cluster)
    rng = random.Random(20)
    held = {}
    L = cluster.n_sites
    # every cluster here is bipartite: the particle-hole map (H. Shiba 1972, from memory)
    # shifts the whole sector 2L - N by U (L - N) with S kept, so its towers are those of N;
    # the map is checked exactly on the level polynomials first
    (ph,) = sc.theorem_report(spec, "U", (-20, 0), {"t": 1}, theorems=["particle-hole"])
    assert ph.conclusion == "verified", ph.evidence
    for n in range(L + 1):
        rep = sc.towers(spec, n, "U", (-20, 0), {"t": 1}, closed=(True, False))
        held[n] = held[2 * L - n] = rep.holds
        pts = [-20] + [sympy.Rational(rng.randint(-2000, -1), 100) for _ in range(3)]
        _agrees(rep, ref, n, pts)
        if n < L:
            _agrees(rep, ref, 2 * L - n, pts)       # the mirror sector, at the reference
    assert all(held.values()), f"{name}: the tower fails at N = " + \
        ", ".join(str(n) for n, h in held.items() if not h)


def test_strong_coupling_gaps_of_the_half_filled_ring_are_heisenberg():
    # half filling at large U: H_eff = J sum (S_i.S_j - 1/4), J = 4t^2/U (P. W. Anderson,
    # Phys. Rev. 115, 2 (1959), from memory); the 4-site Heisenberg ring J sum S_i.S_{i+1} has
    # E_min = -2J, -J, +J for S = 0, 1, 2 (textbook exercise, common practice), so
    # E_min(1) - E_min(0) -> J and E_min(2) - E_min(1) -> 2J at leading order in 1/U
    _cluster, spec = solved("ring(4)")
    rep = sc.towers(spec, 4, "U", (1, "oo"), {"t": 1})
    assert rep.holds
    U = sympy.Symbol("U", real=True)
    got = {(a["value"], a["next_value"]): a["difference"] for a in rep.asymptotics}
    assert sympy.simplify(got[(0, 1)] - 4 / U) == 0
    assert sympy.simplify(got[(1, 2)] - 8 / U) == 0
