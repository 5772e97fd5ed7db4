"""sc.theorem_report against the theorems themselves and the independent Fock reference."""

import dataclasses
import functools

import pytest
import sympy

import symcluster as sc
from helpers_towers import reference, sz_minima


@functools.lru_cache(maxsize=None)
def solved(name):
    shapes = {"star(3)": sc.star(3), "star(4)": sc.star(4), "chain(3)": sc.chain(3),
              "ring(4)": sc.ring(4), "ring(5)": sc.ring(5)}
    return shapes[name], sc.solve(sc.hubbard(shapes[name]), fixed={"t": 1})


def _by_name(report):
    return {r.name.split(":")[0] + (":" + r.name.split(":")[1] if ":" in r.name else ""): r
            for r in report}


def _ground_spin_ref(cluster, n, u):
    # the ground-state spin from the reference: the largest S whose Sz = S sector still
    # holds the overall minimum (Sz sectors hold every S >= Sz; common practice)
    m = sz_minima(reference(cluster), n, {"t": 1, "U": u})
    e0 = min(m.values())
    return sympy.Rational(max(k for k, v in m.items() if v - e0 < 1e-9), 2)


# Lieb 1989 (E. H. Lieb, Phys. Rev. Lett. 62, 1201): bipartite, connected, U > 0, N = L:
# the ground state is one multiplet with S = ||A| - |B||/2.  Three clusters with unequal
# sublattices.
@pytest.mark.parametrize("name, S", [("star(3)", 1), ("star(4)", sympy.Rational(3, 2)),
                                     ("chain(3)", sympy.Rational(1, 2))])
def test_lieb_ground_state_spin_on_unequal_sublattices(name, S):
    cluster, spec = solved(name)
    a, b = cluster.sublattices()
    assert abs(len(a) - len(b)) == 2 * S
    (res,) = sc.theorem_report(spec, "U", (0, 50), {"t": 1}, theorems=["lieb-spin"])
    assert res.hypotheses_met and res.conclusion == "verified", res.evidence
    assert f"S = ||A| - |B||/2 = {S}" in res.evidence[0]
    for u in (sympy.Rational(1, 3), 7, 49):
        assert _ground_spin_ref(cluster, cluster.n_sites, float(u)) == S


def test_lieb_attractive_unique_singlet_every_even_filling():
    cluster, spec = solved("ring(4)")
    (res,) = sc.theorem_report(spec, "U", (-20, 0), {"t": 1}, theorems=["lieb-attractive"])
    assert res.conclusion == "verified" and len(res.evidence) == 3     # N = 2, 4, 6
    assert _ground_spin_ref(cluster, 4, -5.0) == 0


def test_a_lowered_level_makes_lieb_fail():
    # the same star(4) spectrum with one S = 1/2 level at N = 5 lowered far below: the
    # conclusion must come out violated (the check can fail)
    _c, spec = solved("star(4)")
    E, U = sympy.symbols("E U", real=True)
    lv = next(l for l in spec.select(N=5) if l.quantum_numbers["S"] == sympy.Rational(1, 2))
    low = dataclasses.replace(lv, energy=U - 100, polynomial=sympy.Poly(E - U + 100, E, U))
    bad = dataclasses.replace(spec, levels=spec.levels + [low])
    (res,) = sc.theorem_report(bad, "U", (0, 50), {"t": 1}, theorems=["lieb-spin"])
    assert res.conclusion == "violated"


def test_hypotheses_that_fail_are_named():
    _c, spec = solved("ring(5)")
    rep = {r.name: r for r in sc.theorem_report(spec, "U", (0, 50), {"t": 1})}
    lieb = rep["Lieb: ground-state spin at half filling"]
    assert lieb.conclusion == "not applicable"
    assert lieb.failed_hypotheses == ["bipartite graph, hopping only between the sublattices"]
    nag = rep["Nagaoka: one hole at U -> oo is fully polarised"]
    assert "not a single ring with more than four sites" in nag.failed_hypotheses


def test_nagaoka_on_the_four_ring_from_the_tower_crossing():
    # Nagaoka (Y. Nagaoka, Phys. Rev. 147, 392 (1966)): one hole on the 4-ring at U -> oo is
    # fully polarised; the report gives the exact onset 8 + 4 sqrt 7 (see test_towers_published)
    cluster, spec = solved("ring(4)")
    (res,) = sc.theorem_report(spec, "U", (0, 50), {"t": 1}, theorems=["nagaoka"])
    assert res.conclusion == "verified"
    assert "8 + 4*sqrt(7)" in res.evidence[0]
    assert _ground_spin_ref(cluster, 3, 40.0) == sympy.Rational(3, 2)


# Mielke 1991 / Tasaki (flat-band ferromagnetism; details from memory): the octahedron is the
# line graph of the tetrahedron; with t = -1 (h = +A) its lowest one-electron level -2 is
# doubly degenerate, its projector irreducible; two electrons: S = 1 for every U > 0.
def test_flat_band_ferromagnet_on_the_octahedron():
    octa = sc.octahedron()
    spec = sc.solve(sc.hubbard(octa), fixed={"t": -1}, electrons=2)
    (res,) = sc.theorem_report(spec, "U", (0, 100), {"t": -1}, theorems=["flat-band"])
    assert res.hypotheses_met and res.conclusion == "verified", res.evidence
    fb = sc.flat_band(octa, t=-1)
    assert (fb["energy"], fb["degeneracy"]) == (-2, 2)
    ref = reference(octa)
    m = sz_minima(ref, 2, {"t": -1, "U": 3.0})
    assert abs(m[2] - m[0]) < 1e-9          # the S = 1 multiplet holds the ground state


def test_yang_and_particle_hole_exact_on_the_ring():
    _c, spec = solved("ring(4)")
    rep = sc.theorem_report(spec, "U", (0, 5), {"t": 1}, theorems=["yang-eta", "particle-hole"])
    assert [r.conclusion for r in rep] == ["verified", "verified"]
    _c, tri = solved("ring(5)")
    rep = sc.theorem_report(tri, "U", (0, 5), {"t": 1}, theorems=["yang-eta"])
    assert rep[0].conclusion == "not applicable"


def test_unknown_theorem_is_an_error():
    _c, spec = solved("chain(3)")
    with pytest.raises(sc.ModelError, match="unknown theorem 'lieb'"):
        sc.theorem_report(spec, theorems=["lieb"])
