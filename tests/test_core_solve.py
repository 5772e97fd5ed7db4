"""Independent checks of sc.solve: closed forms, limits, sum rules, and a Fock-space reference.

The reference (tests/reference_fock.py) builds the full 4^L Hamiltonian from
Jordan-Wigner Kronecker products and shares no code with symcluster.
"""

import functools
import importlib
from math import comb

import mpmath
import pytest
import sympy

import symcluster as sc
from reference_fock import FockReference, expand, free_levels, max_deviation

SHAPES = {
    "chain(2)": lambda: sc.chain(2),
    "chain(3)": lambda: sc.chain(3),
    "chain(4)": lambda: sc.chain(4),
    "chain(5)": lambda: sc.chain(5),
    "ring(3)": lambda: sc.ring(3),
    "ring(4)": lambda: sc.ring(4),
    "ring(5)": lambda: sc.ring(5),
    "ring(6)": lambda: sc.ring(6),
    "star(4)": lambda: sc.star(4),
    "tetrahedron": lambda: sc.tetrahedron(),
}


@functools.lru_cache(maxsize=None)
def solved(name, lattice=True):
    return sc.solve(sc.hubbard(SHAPES[name]()), lattice=lattice)


@functools.lru_cache(maxsize=None)
def reference(name):
    c = SHAPES[name]()
    return FockReference(c.n_sites, list(c.bonds))


def by_n(spec, values, digits=30):
    """{N: sorted mpf energies, each repeated by its degeneracy}."""
    pt = spec.point(values)
    out = {}
    for lev in spec.levels:
        out.setdefault(lev.quantum_numbers["N"], []).extend(
            [lev.numeric(pt, digits=digits)] * lev.degeneracy)
    return {n: sorted(v) for n, v in out.items()}


t, U = sympy.symbols("t U", real=True)

# ---------------------------------------------------------------- 1. the two-site cluster
# Closed forms: D. J. Carrascal, J. Ferrer, J. C. Smith, K. Burke, J. Phys.: Condens. Matter 27,
# 393001 (2015) (table in /work/shared/references.md): (energy, degeneracy, S)
DIMER = {
    0: [(sympy.Integer(0), 1, 0)],
    1: [(-t, 2, sympy.Rational(1, 2)), (t, 2, sympy.Rational(1, 2))],
    2: [(sympy.Integer(0), 3, 1), (U, 1, 0),
        (U / 2 - sympy.sqrt(U**2 / 4 + 4 * t**2), 1, 0),
        (U / 2 + sympy.sqrt(U**2 / 4 + 4 * t**2), 1, 0)],
    3: [(U - t, 2, sympy.Rational(1, 2)), (U + t, 2, sympy.Rational(1, 2))],
    4: [(2 * U, 1, 0)],
}


def test_dimer_levels_symbolic():
    spec = solved("chain(2)")
    assert spec.n_states == 16
    for n, expected in DIMER.items():
        got = [l for l in spec.levels if l.quantum_numbers["N"] == n]
        assert all(l.is_closed_form for l in got), f"N={n}: a degree<=2 level is not closed form"
        found = [0] * len(expected)
        for lev in got:
            hits = [k for k, (e, d, s) in enumerate(expected)
                    if sympy.simplify(lev.energy - e) == 0 and lev.quantum_numbers["S"] == s]
            assert len(hits) == 1, f"N={n}: level {lev.energy} (S={lev.quantum_numbers['S']}) " \
                                   f"matches {len(hits)} closed forms"
            found[hits[0]] += lev.degeneracy
        assert found == [d for _, d, _ in expected], f"N={n}: degeneracies {found}"


@pytest.mark.parametrize("tv, uv", [(1, 4), (1, -4), (sympy.Rational(3, 7), sympy.Rational(11, 3)),
                                    (-2, 5), (1, 0), (sympy.Rational(-1, 3), sympy.Rational(-9, 2))])
def test_dimer_levels_numeric_30_digits(tv, uv):
    # same closed forms (Carrascal et al. 2015), evaluated with mpmath at 30 digits
    got = by_n(solved("chain(2)"), {"t": tv, "U": uv}, digits=30)
    with mpmath.workdps(40):
        for n, expected in DIMER.items():
            exp = sorted(sum(([mpmath.mpf(sympy.N(e.subs({t: tv, U: uv}), 45))] * d
                              for e, d, _ in expected), []))
            dev = max(abs(a - b) for a, b in zip(got[n], exp))
            assert len(got[n]) == len(exp) and dev < mpmath.mpf(10) ** -28, (n, dev)


def test_one_site_atom():
    # Hubbard atom: 0 (N=0), 0 twice (N=1), U (N=2) (common practice, no source)
    spec = sc.solve(sc.hubbard(sc.cluster(1, [])))
    got = sorted((l.quantum_numbers["N"], str(l.energy), l.degeneracy) for l in spec.levels)
    assert got == [(0, "0", 1), (1, "0", 2), (2, "U", 1)]


# ---------------------------------------------------------------- 2. U = 0
# single-particle energies of tight binding (Ashcroft & Mermin ch. 10, from memory)
def _single_particle(kind, L, tv):
    if kind == "ring":
        return [-2 * tv * mpmath.cos(2 * mpmath.pi * m / L) for m in range(L)]
    return [-2 * tv * mpmath.cos(mpmath.pi * m / (L + 1)) for m in range(1, L + 1)]


@pytest.mark.parametrize("kind, L", [("chain", 2), ("chain", 3), ("chain", 4), ("chain", 5),
                                     ("ring", 3), ("ring", 4), ("ring", 6),
                                     pytest.param("ring", 5, marks=pytest.mark.slow)])
@pytest.mark.parametrize("tv", [1, sympy.Rational(-5, 3)])
def test_free_electrons(kind, L, tv):
    spec = solved(f"{kind}({L})")
    got = by_n(spec, {"t": tv, "U": 0}, digits=30)
    with mpmath.workdps(40):
        eps = _single_particle(kind, L, mpmath.mpf(sympy.Rational(tv).p) / sympy.Rational(tv).q)
        for n in range(2 * L + 1):
            exp = sorted(sum((free_levels(eps, a, n - a) for a in range(max(0, n - L), min(n, L) + 1)),
                             []))
            assert len(got[n]) == len(exp), f"N={n}: {len(got[n])} states, expected {len(exp)}"
            dev = max(abs(a - b) for a, b in zip(got[n], exp))
            assert dev < mpmath.mpf(10) ** -25, f"{kind}({L}) N={n} t={tv}: deviation {dev}"


# ---------------------------------------------------------------- 3. atomic limit
@pytest.mark.parametrize("name", ["chain(2)", "ring(3)", "ring(4)", "tetrahedron"])
@pytest.mark.parametrize("uv", [4, sympy.Rational(-7, 3)])
def test_atomic_limit(name, uv):
    # t = 0: every Fock state has energy U x (doubly occupied sites) (common practice, no source).
    # States with N electrons and d double occupancies: C(L,d) C(L-d, N-2d) 2^(N-2d).
    spec = solved(name)
    L = spec.model.n_sites
    got = by_n(spec, {"t": 0, "U": uv}, digits=30)
    for n in range(2 * L + 1):
        exp = []
        for d in range(0, n // 2 + 1):
            if n - 2 * d <= L - d:
                exp += [uv * d] * (comb(L, d) * comb(L - d, n - 2 * d) * 2 ** (n - 2 * d))
        exp.sort()
        assert len(got[n]) == len(exp)
        assert max_deviation(got[n], exp) < 1e-25, f"{name} N={n}"


# ---------------------------------------------------------------- 4. trace sum rule
def _trace(spec):
    """Sum of deg * E over all levels, exactly (implicit roots: Vieta over complete root sets)."""
    total = sympy.Integer(0)
    implicit = {}
    for lev in spec.levels:
        if lev.is_closed_form:
            total += lev.degeneracy * lev.energy
        else:
            implicit.setdefault((lev.energy.poly, lev.degeneracy), []).append(lev.energy.index)
    for (poly, deg), idx in implicit.items():
        d = poly.degree(poly.gens[0])
        assert sorted(idx) == list(range(d)), f"roots {idx} of a degree-{d} factor"
        coeffs = sympy.Poly(poly.as_expr(), poly.gens[0]).all_coeffs()
        total += deg * (-coeffs[1] / coeffs[0])   # Vieta: sum of roots
    return total


@pytest.mark.parametrize("name", ["chain(2)", "ring(3)", "ring(4)", "tetrahedron", "chain(4)"])
def test_trace_sum_rule(name):
    # Tr H = U L 4^(L-1): Tr n_up n_dn = 4^L / 4 on each site, hopping is traceless (exact)
    spec = solved(name)
    L = spec.model.n_sites
    assert sympy.simplify(_trace(spec) - U * L * 4 ** (L - 1)) == 0


def test_trace_with_site_energy():
    # Tr(eps n_0) = eps 4^L (exact; n_0 = n_0up + n_0dn, each of trace 4^L / 2)
    c = sc.cluster(3, [(0, 1), (1, 2, "tp")], site_labels={0: "eps"})
    spec = sc.solve(sc.hubbard(c))
    eps = sympy.Symbol("eps", real=True)
    assert spec.n_states == 64
    assert sympy.simplify(_trace(spec) - U * 3 * 16 - eps * 64) == 0


# ---------------------------------------------------------------- 5. against the reference
POINTS = [{"t": 1, "U": 4}, {"t": 1, "U": -3}, {"t": sympy.Rational(2, 3), "U": sympy.Rational(7, 5)},
          {"t": -1, "U": sympy.Rational(1, 2)}]


@pytest.mark.parametrize("name", ["ring(4)", "chain(5)", "star(4)", "tetrahedron"])
def test_full_spectrum_against_reference(name):
    spec = solved(name)
    L = spec.model.n_sites
    assert spec.n_states == 4 ** L
    ref = reference(name)
    worst = 0.0
    for pt in POINTS:
        got = expand(spec.numeric(pt, digits=30))
        exp = ref.eigenvalues(pt)
        assert len(got) == len(exp)
        worst = max(worst, max_deviation(got, exp))
        # sector by sector as well (N is a good quantum number)
        got_n = by_n(spec, pt, digits=20)
        for n in range(2 * L + 1):
            worst = max(worst, max_deviation(got_n[n], ref.eigenvalues(pt, n=n)))
    assert worst < 1e-10, f"{name}: worst deviation from the Fock-space reference {worst:.2e}"


@pytest.mark.parametrize("name", ["chain(2)", "ring(3)", "ring(4)"])
def test_mpmath_reference_30_digits(name):
    # the reference's mpmath path at 30 digits, sector (N_up, N_dn) by sector
    spec = solved(name)
    L = spec.model.n_sites
    pt = {"t": sympy.Rational(3, 4), "U": sympy.Rational(-13, 5)}
    got = by_n(spec, pt, digits=35)
    ref = reference(name)
    for n in range(2 * L + 1):
        exp = sorted(sum((ref.eigenvalues_mp(pt, a, n - a, digits=35)
                          for a in range(max(0, n - L), min(n, L) + 1)), []))
        with mpmath.workdps(35):
            dev = max(abs(a - b) for a, b in zip(got[n], exp))
        assert len(got[n]) == len(exp) and dev < 1e-28, f"{name} N={n}: {dev}"


def test_spin_labels_against_reference():
    # a level of spin S and degeneracy g contributes g / (2S+1) states to every sector
    # with |S_z| <= S; the reference's (N_up, N_dn) sectors must be reproduced this way
    for name in ["ring(4)", "tetrahedron", "ring(3)"]:
        spec = solved(name)
        L = spec.model.n_sites
        pt = spec.point({"t": 1, "U": sympy.Rational(5, 2)})
        ref = reference(name)
        for a in range(L + 1):
            for b in range(L + 1):
                sz = sympy.Rational(a - b, 2)
                got = []
                for lev in spec.levels:
                    s = lev.quantum_numbers["S"]
                    if lev.quantum_numbers["N"] == a + b and s >= abs(sz):
                        assert lev.degeneracy % (2 * s + 1) == 0
                        got += [lev.numeric(pt, digits=20)] * (lev.degeneracy // int(2 * s + 1))
                exp = ref.eigenvalues({"t": 1, "U": 2.5}, n_up=a, n_dn=b)
                assert max_deviation(sorted(got), exp) < 1e-10, f"{name} sector ({a},{b})"


@pytest.mark.parametrize("name", ["ring(4)", "tetrahedron"])
def test_lattice_reduction_does_not_change_spectrum(name):
    pt = {"t": sympy.Rational(5, 4), "U": sympy.Rational(-9, 7)}
    a = expand(solved(name).numeric(pt))
    b = expand(solved(name, lattice=False).numeric(pt))
    assert max_deviation(a, b) < 1e-25


def test_electrons_subset_matches_full_solve():
    full = solved("ring(4)")
    part = sc.solve(sc.hubbard(sc.ring(4)), electrons=[1, 2])
    assert {l.quantum_numbers["N"] for l in part.levels} == {1, 2}
    pt = {"t": 1, "U": 3}
    sub = [l for l in full.levels if l.quantum_numbers["N"] in (1, 2)]
    exp = sorted(sum(([l.numeric(pt)] * l.degeneracy for l in sub), []))
    assert max_deviation(expand(part.numeric(pt)), exp) < 1e-25
    assert part.n_states == 8 + 28


def test_site_energy_against_reference():
    c = sc.cluster(3, [(0, 1), (1, 2, "tp"), (0, 2)], site_labels={1: "eps"})
    spec = sc.solve(sc.hubbard(c))
    ref = FockReference(3, list(c.bonds), {1: "eps"})
    for pt in [{"t": 1, "tp": sympy.Rational(1, 3), "eps": sympy.Rational(-1, 2), "U": 3},
               {"t": -2, "tp": 1, "eps": 2, "U": -1}]:
        dev = max_deviation(expand(spec.numeric(pt)), ref.eigenvalues(pt))
        assert dev < 1e-10, dev


def test_level_numeric_matches_spectrum_numeric():
    spec = solved("ring(4)")
    pt = {"t": 1, "U": 6}
    a = sorted((l.numeric(pt, digits=30), l.degeneracy) for l in spec.levels)
    b = spec.numeric(pt, digits=30)
    assert max_deviation(expand(a), expand(b)) < 1e-28


def test_verification_report_present():
    rep = solved("chain(2)").verification.as_dict()
    assert rep["checks"], "no verification checks recorded"
    assert rep["worst_deviation"] < 1e-20


def test_numeric_at_the_origin_where_closed_forms_are_zero_over_zero():
    # With every coupling zero, H = 0: all 4^L levels are exactly 0 (trivial theorem).
    # Closed forms such as trigonometric cubics divide by quantities that vanish there;
    # the evaluation falls back on the level's polynomial, whose roots all merge at 0.
    spec = sc.solve(sc.hubbard(sc.cluster(4, [(0, 1), (0, 2), (0, 3), (1, 2, "tp")])))
    vals = spec.numeric({"t": 0, "tp": 0, "U": 0})
    assert sum(d for _, d in vals) == 4**4
    assert all(v == 0 for v, _ in vals)


def test_numeric_in_the_atomic_limit_where_closed_forms_are_zero_over_zero():
    # Regression (found by hypothesis): with every hopping zero and U = 1, two electrons
    # on four sites have E = U on the 4 doubly occupied states and E = 0 on the other
    # C(8, 2) - 4 = 24 (atomic limit, counting). The cubic closed forms are 0/0 there
    # while their polynomials' roots do not all merge; the value is the limit along a ray.
    c = sc.cluster(4, [(0, 1, "t"), (0, 2, "tp"), (1, 3, "tp"), (2, 3, "t")])
    spec = sc.solve(sc.hubbard(c), electrons=2)
    vals = expand(spec.numeric({"t": 0, "tp": 0, "U": 1}))
    assert vals == [0] * 24 + [1] * 4
    # the same at every scale (homogeneity): E = 0 or U, for tiny U too
    for k in (12, 20, 40):
        u = sympy.Rational(1, 10**k)
        got = expand(spec.numeric({"t": 0, "tp": 0, "U": u}))
        with mpmath.workdps(60):
            want = [0] * 24 + [mpmath.mpf(1) / 10**k] * 4
            assert all(abs(a - b) <= mpmath.mpf(10) ** (-k - 28) for a, b in zip(got, want))
        assert len(got) == len(want)
    # four electrons: E = U x (number of doubly occupied sites); C(4,d) C(4-d,4-2d) 2^(4-2d)
    # states have d of them: 16, 48, 6 for d = 0, 1, 2 (counting)
    four = sc.solve(sc.hubbard(c), electrons=4)
    assert expand(four.numeric({"t": 0, "tp": 0, "U": 1})) == [0] * 16 + [1] * 48 + [2] * 6
    # where only one hopping vanishes the closed forms are defined and only choose their
    # roots; against the independent Fock-space reference
    pt = {"t": 0, "tp": sympy.Rational(-3, 2), "U": sympy.Rational(7, 3)}
    ref = FockReference(4, list(c.bonds)).eigenvalues(pt, n=2)
    assert max_deviation(expand(spec.numeric(pt)), ref) < 1e-9   # float64 reference


def test_numeric_keeps_all_digits_where_closed_forms_cancel():
    # At t = 0, U = 0 the cluster is two free dimers (bonds tp): every level is a sum of
    # single-particle energies +-tp, an integer for tp = 1 (free fermions, textbook).
    # Nested radicals lose digits to cancellation there; the returned value is the
    # certified root of the level's polynomial, right to all requested digits.
    c = sc.cluster(4, [(0, 1, "t"), (0, 2, "tp"), (1, 3, "tp"), (2, 3, "t")])
    spec = sc.solve(sc.hubbard(c))
    for e, _ in spec.numeric({"t": 0, "tp": 1, "U": 0}, digits=30):
        assert abs(e - mpmath.nint(e)) < mpmath.mpf(10) ** -30


@pytest.mark.parametrize("digits", [10, 30])
def test_numeric_at_extreme_coupling_ratios_is_right_level_by_level(digits):
    # Regression (a reviewer's case): at t = 0, tp = 1, U = 10^80 the closed forms lose all
    # their digits to cancellation, and three levels of one quartic returned the same root.
    # At t = 0 the cluster is two Hubbard dimers (bonds tp). Two electrons on one dimer:
    # U/2 -+ sqrt(U^2/4 + 4 tp^2), U, and the triplet 0 (x3) (the two-site Hubbard model,
    # a 4x4 diagonalization by hand); one on each dimer: sums of +-tp, 4 spin states each
    # (free fermions). Each dimer holds the pair once, so the pair levels come twice.
    c = sc.cluster(4, [(0, 1, "t"), (0, 2, "tp"), (1, 3, "tp"), (2, 3, "t")])
    spec = sc.solve(sc.hubbard(c), electrons=2)
    U = 10**80
    got = sorted(expand(spec.numeric({"t": 0, "tp": 1, "U": U}, digits=digits)))
    with mpmath.workdps(200):
        u = mpmath.mpf(U)
        root = mpmath.sqrt(u**2 / 4 + 4)
        pair = [u / 2 - root, u / 2 + root, u, 0, 0, 0]
        want = sorted(pair * 2 + [-2] * 4 + [0] * 8 + [2] * 4)
        assert len(got) == len(want) == comb(8, 2)
        for a, b in zip(got, want):
            assert abs(a - b) <= abs(b) * mpmath.mpf(10) ** (1 - digits)


def test_numeric_at_low_digits_where_roots_differ_in_the_last_digit():
    # Regression (a reviewer's case): at t = 3e-12, U = 1 and digits = 10 two roots of one
    # polynomial round to neighbouring 10-digit numbers; the choice of root must not fail.
    # Against the independent Fock-space reference (float64).
    pt = {"t": sympy.Rational(3, 10**12), "U": 1}
    spec = solved("ring(4)")
    ref = FockReference(4, [(i, (i + 1) % 4, "t") for i in range(4)]).eigenvalues(pt)
    assert max_deviation(expand(spec.numeric(pt, digits=10)), ref) < 1e-9


def test_numeric_at_thousands_of_digits_picks_the_same_root():
    # Regression (a reviewer's case): the precision cap of the root choice stopped any
    # request above ~2000 digits. The trigonometric (acos) levels of ring(4) at 2100 digits
    # must agree with their own closed forms evaluated directly by sympy at 50 digits.
    spec = solved("ring(4)")
    point = {sympy.Symbol("t", real=True): 1, sympy.Symbol("U", real=True): 4}
    trig = [lev for lev in spec.levels if isinstance(lev.energy, sympy.Expr)
            and lev.energy.has(sympy.acos)]
    assert trig
    for lev in trig:
        big = lev.numeric({"t": 1, "U": 4}, digits=2100)
        with mpmath.workdps(60):
            direct = mpmath.mpf(str(sympy.N(lev.energy.subs(point), 50)))
            assert abs(big - direct) < mpmath.mpf(10) ** -40


def test_a_wrong_closed_form_is_rejected(monkeypatch):
    # The verification must compare the closed forms themselves (not values re-derived
    # from their polynomials) with the blocks: a formula off by t/10^6 must be caught.
    solve_mod = importlib.import_module("symcluster.pipeline.derived")
    real = solve_mod.closed_forms
    t = sympy.Symbol("t", real=True)

    def off(rep, gens, **kwargs):
        out = real(rep, gens, **kwargs)
        return None if out is None else [r + t / 10**6 if r.has(t) else r for r in out]

    monkeypatch.setattr(solve_mod, "closed_forms", off)
    with pytest.raises(sc.VerificationError, match="is not a root of its polynomial"):
        sc.solve(sc.hubbard(sc.chain(2)), executor="serial")


def test_a_closed_form_that_is_not_real_at_a_point_is_rejected_not_redrawn(monkeypatch):
    # sqrt(t) - sqrt(t^3)/t is 0 for t > 0 and imaginary for t < 0: added to every closed
    # form, the levels are right on half of the parameter space only. A verification point
    # with t < 0 must reject them; redrawing it until t > 0 would accept a wrong formula.
    verify_mod = importlib.import_module("symcluster.verify.core")
    solve_mod = importlib.import_module("symcluster.pipeline.derived")
    real_roots, real_points = solve_mod.closed_forms, verify_mod.random_points
    t = sympy.Symbol("t", real=True)
    bad = sympy.sqrt(t) - sympy.sqrt(t**3) / t

    def partly_wrong(rep, gens, **kwargs):
        out = real_roots(rep, gens, **kwargs)
        return None if out is None else [r + bad if r.has(t) else r for r in out]

    def points(symbols, count, seed, fixed=None):
        pts = real_points(symbols, count, seed, fixed)
        if len(pts) > 1 and seed < 1000:          # the second first-draw point: t < 0;
            pts[1] = {s: (-abs(v) if s.name == "t" else v) for s, v in pts[1].items()}
        else:                                     # any redraw: t > 0
            pts = [{s: (abs(v) if s.name == "t" else v) for s, v in p.items()} for p in pts]
        return pts

    monkeypatch.setattr(solve_mod, "closed_forms", partly_wrong)
    monkeypatch.setattr(verify_mod, "random_points", points)
    with pytest.raises(sc.VerificationError, match="not real"):
        sc.solve(sc.hubbard(sc.ring(3)), executor="serial", seed=5)


def test_root_check_accepts_a_level_that_is_exactly_zero_at_the_point(monkeypatch):
    # Regression (seen in CI): on two disconnected dimers (t, tp) the level U - t + tp
    # is exactly 0 at t = 573/131, tp = 824/131, U = -251/131. Its 30-digit value is
    # a rounding residue (~1e-71), and a purely relative backward error |P(x)| / |x|
    # was 1 for P = E - (U - t + tp): a correct result was discarded. The check must
    # measure the residue against the energy scale of the point instead.
    import symcluster.verify.core as V

    original = V.random_points
    hit = {"t": sympy.Rational(573, 131), "tp": sympy.Rational(824, 131),
           "U": sympy.Rational(-251, 131)}

    def with_the_point(symbols, count, seed, fixed=None):
        pts = original(symbols, count, seed, fixed)
        pts[-1] = {s: hit[s.name] for s in symbols}
        return pts

    monkeypatch.setattr(V, "random_points", with_the_point)
    spec = sc.solve(sc.hubbard(sc.cluster(4, [(0, 1), (2, 3, "tp")])), electrons=[4])
    zero = [l for l in spec.levels if l.numeric(hit, digits=30) == 0]
    assert zero, "the point was meant to make some closed form vanish exactly"


def test_root_deviation_is_scale_aware_not_fooled_by_a_wrong_value():
    # P = E (root 0): a rounding residue passes, a value of order 1e-20 fails;
    # P = (E - 2)(E + 3): an exact root passes, a value off by 1e-6 fails.
    # P = E^2 - U E - 4 t^2 at t = 1/137, U = 900/137 (two-site singlet sector): its small
    # root -4t^2/U (1 + ...) ~ -3e-5 is far below the point's scale; a value wrong by a
    # relative 1e-25 must still fail at 30 digits (the floor is scale * 1e-30, not scale).
    from symcluster.numeric.residuals import root_deviation
    with mpmath.workdps(80):
        one = mpmath.mpf(1)
        six = mpmath.mpf(6)
        assert root_deviation([one, 0], mpmath.mpf("1e-71"), six, 30) < 1e-40
        assert root_deviation([one, 0], mpmath.mpf("1e-20"), six, 30) > 0.5
        assert root_deviation([one, 0], mpmath.mpf("0.5"), six, 30) > 0.5
        cs = [one, one, mpmath.mpf(-6)]
        assert root_deviation(cs, mpmath.mpf(2), one, 30) == 0
        assert root_deviation(cs, mpmath.mpf(2) + mpmath.mpf("1e-6"), one, 30) > 1e-8
        tv, uv = mpmath.mpf(1) / 137, mpmath.mpf(900) / 137
        cs = [one, -uv, -4 * tv**2]
        small = (uv - mpmath.sqrt(uv**2 + 16 * tv**2)) / 2
        assert root_deviation(cs, small, uv, 30) < 1e-60
        assert root_deviation(cs, small * (1 + mpmath.mpf("1e-25")), uv, 30) > 1e-30


def test_verification_redraws_a_point_where_a_closed_form_is_undefined(monkeypatch):
    # If a random point falls where some closed form is undefined (0/0 where only some
    # roots of its polynomial merge), the point proves nothing either way: verification
    # must draw another point for every check, not crash or refuse a correct result.
    import symcluster.verify.core as V

    original = V.energy_numeric
    bad = {}

    def undefined_at_first_point(energy, point, digits=30, polynomial=None, evaluation=None):
        key = tuple(sorted((s.name, str(v)) for s, v in point.items()))
        bad.setdefault("point", key)
        if key == bad["point"]:
            raise ZeroDivisionError("0/0 in a closed form")
        return original(energy, point, digits, polynomial=polynomial, evaluation=evaluation)

    monkeypatch.setattr(V, "energy_numeric", undefined_at_first_point)
    spec = sc.solve(sc.hubbard(sc.chain(4)), electrons=[3])
    assert spec.verification.worst < 1e-20
    used = [tuple(sorted((str(k), v) for k, v in pt.items()))
            for c in spec.verification.checks for pt in c.get("points", [])]
    assert used, "no check recorded its points"
    assert bad["point"] not in used, "the undefined point was used by a later check"


def test_coeffs_at_matches_sympy_substitution():
    # The verification's integer-arithmetic evaluation of P(E; point) against plain
    # sympy substitution, with rational coefficients and coupling values of
    # different denominators (and a zero value).
    from symcluster.verify.core import coeffs_at
    E, t, tp, U = sympy.symbols("E t tp U", real=True)
    expr = (E**3 - sympy.Rational(5, 6) * E**2 * t * U + 7 * E * tp**2
            - sympy.Rational(3, 4) * t**2 * tp * U**2 + U**5 - 2)
    P = sympy.Poly(expr, E, t, tp, U)
    for pt in ({t: sympy.Rational(3, 7), tp: sympy.Rational(-5, 11), U: sympy.Rational(9, 2)},
               {t: sympy.Integer(0), tp: sympy.Rational(1, 3), U: sympy.Integer(-4)}):
        want = sympy.Poly(expr.subs(pt), E).all_coeffs()
        got = coeffs_at(P, pt)
        assert [sympy.Rational(g.numerator, g.denominator) for g in got] == want


def test_a_redrawn_second_point_keeps_random_signs(monkeypatch):
    # Only the first verification point has every hopping positive; a replacement for a
    # later point must be drawn like that point (random signs), or a closed form wrong
    # only for negative hopping could pass every check with two positive points.
    import symcluster.verify.core as V

    original, original_all = V.energy_numeric, V.closed_values
    seen = []

    def meet(point):
        key = tuple(sorted((s.name, v) for s, v in point.items()))
        if key not in seen:
            seen.append(key)
        if len(seen) == 2 and key == seen[1]:
            raise ZeroDivisionError("0/0 in a closed form")

    def undefined_at_second_point(energy, point, digits=30, polynomial=None, evaluation=None):
        meet(point)
        return original(energy, point, digits, polynomial=polynomial, evaluation=evaluation)

    def all_undefined_at_second_point(energies, point, digits, evaluation=None):
        meet(point)
        return original_all(energies, point, digits, evaluation=evaluation)

    # closed forms are evaluated together (closed_values), implicit roots one by one
    monkeypatch.setattr(V, "energy_numeric", undefined_at_second_point)
    monkeypatch.setattr(V, "closed_values", all_undefined_at_second_point)
    replacements = []
    for seed in range(10):
        seen.clear()
        spec = sc.solve(sc.hubbard(sc.chain(3)), electrons=[2], seed=seed)
        assert spec.verification.worst < 1e-20
        assert len(seen) >= 3, "the second point was not redrawn"
        replacements.append(dict(seen[2]))
    # ten independent draws with all-positive hopping would have probability 2^-10
    assert any(pt["t"] < 0 for pt in replacements), replacements


def test_ball_evaluation_refuses_arguments_certainly_outside_the_domain():
    # sqrt of a negative number or acos of 2 is not a real closed form: the ball evaluation
    # must not clamp it to the domain edge (a wrong value); it declines instead.
    import flint
    from symcluster.numeric.evaluate import _arb_eval, _Undecided
    x = sympy.Symbol("x")
    env = {x: flint.arb(-2)}
    for expr in (sympy.sqrt(x), sympy.acos(x), sympy.asin(-x)):
        with pytest.raises(_Undecided):
            _arb_eval(expr, env)
    # inside the domain the enclosure contains the value (mpmath at 30 digits)
    env = {x: flint.arb(flint.fmpq(1, 3))}
    for expr, ref in ((sympy.sqrt(x), mpmath.sqrt), (sympy.acos(x), mpmath.acos),
                      (sympy.asin(x), mpmath.asin)):
        with mpmath.workdps(30):
            assert _arb_eval(expr, env).contains(flint.arb(str(ref(mpmath.mpf(1) / 3))))


# ---------------------------------------------------------------- inputs of solve and numeric
def test_float_values_mean_the_decimal_they_were_written_as():
    # 0.1 is the point U = 1/10, not the binary double 3602879701896397/2^55: the 30 digits
    # must be those of the independent Fock reference at U = 1/10
    spec = solved("ring(4)")
    got = sorted(x for x, d in spec.numeric({"t": 1.0, "U": 0.1}, digits=30) for _ in range(d))
    # numpy floats (e.g. from numpy.linspace) follow the same rule
    import numpy as np
    assert got == sorted(x for x, d in spec.numeric({"t": np.float64(1), "U": np.float64(0.1)},
                                                    digits=30) for _ in range(d))
    assert got == sorted(x for x, d in spec.numeric({"t": np.int64(1), "U": np.float32(0.1)},
                                                    digits=30) for _ in range(d))
    ref = FockReference(4, list(sc.ring(4).bonds))
    exp = sorted(v for nu in range(5) for nd in range(5)
                 for v in ref.eigenvalues_mp({"t": 1, "U": sympy.Rational(1, 10)}, nu, nd, digits=40))
    assert len(got) == len(exp) == 256
    with mpmath.workdps(40):
        assert max(abs(a - b) for a, b in zip(got, exp)) < mpmath.mpf(10) ** -28


@pytest.mark.parametrize("digits", [0, -5, 2.5, "x", True, 10**6])
def test_numeric_refuses_bad_digits(digits):
    spec = solved("chain(2)")
    with pytest.raises(sc.ModelError, match="digits"):
        spec.numeric({"t": 1, "U": 4}, digits=digits)
    with pytest.raises(sc.ModelError, match="digits"):
        spec.levels[0].numeric({"t": 1, "U": 4}, digits=digits)


@pytest.mark.parametrize("kwargs, match", [({"seed": "x"}, "seed"), ({"seed": 1.5}, "seed"),
                                           ({"electrons": "2"}, "text"),
                                           ({"digits": 10**6}, "digits"),
                                           ({"digits": 30.0}, "digits")])
def test_solve_refuses_bad_arguments_with_one_message(kwargs, match):
    with pytest.raises(sc.ModelError, match=match):
        sc.solve(sc.hubbard(sc.chain(2)), **kwargs)


def test_levels_do_not_share_their_quantum_number_dicts():
    # a block's levels used to hold one dict between them: relabelling one relabelled all
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    seen = {}
    for lev in spec.levels:
        assert id(lev.quantum_numbers) not in seen
        seen[id(lev.quantum_numbers)] = lev
    a, b = [lev for lev in spec.levels if lev.quantum_numbers["N"] == 2][:2]
    before = dict(b.quantum_numbers)
    a.quantum_numbers["S"] = 99
    assert b.quantum_numbers == before


def test_negated_couplings_give_the_substituted_factors_and_roots():
    # _negate_couplings derives a gauge twin's factors: P(E, t, U) -> P(E, -t, U), roots
    # the roots r(-t) as a set.  Checked against sympy's substitution; an even factor keeps its forms
    # but gets a Poly object of its own (the verification counts roots per object).
    from symcluster.numeric import ImplicitRoot
    from symcluster.pipeline.solve import _negate_couplings
    from symcluster.symbols import ENERGY
    t, U = sympy.symbols("t U", real=True)
    E = ENERGY
    odd_fac = sympy.Poly(E**2 - U * E - 4 * t**2 + 2 * t * U, E, t, U)
    even_fac = sympy.Poly(E**3 - U * E**2 - 16 * t**2 * E + 8 * U * t**2, E, t, U)
    odd_roots = sympy.solve(odd_fac.as_expr(), E)
    even_roots = [sympy.Symbol("r0"), sympy.Symbol("r1"), sympy.Symbol("r2")]   # kept as given
    quintic = sympy.Poly(E**5 - t * E - U, E, t, U)
    out = _negate_couplings([(odd_fac, 1, odd_roots), (even_fac, 2, even_roots),
                             (quintic, 1, [ImplicitRoot(quintic, 0)])], {"t"})
    (p1, m1, r1), (p2, m2, r2), (p3, m3, r3) = out
    assert p1 == sympy.Poly(odd_fac.as_expr().subs(t, -t), E, t, U) and m1 == 1
    pt = {t: sympy.Rational(3, 7), U: sympy.Rational(-2, 5)}
    assert sorted(sympy.N(a.subs(pt), 30) for a in r1) == \
        sorted(sympy.N(b.subs(t, -t).subs(pt), 30) for b in odd_roots)
    assert p2 == even_fac and p2 is not even_fac and m2 == 2 and r2 == even_roots
    assert p3 == sympy.Poly(E**5 + t * E - U, E, t, U)
    assert isinstance(r3[0], ImplicitRoot) and r3[0].poly is p3 and r3[0].index == 0


def test_negated_couplings_through_the_solves_written_forms(monkeypatch):
    # With the solve's Written, a substituted factor met before gets the forms written for
    # it (the same objects, no new writing); a new one is written once and stored, with
    # the forms written without it (compared as trees).
    import sys
    from symcluster.pipeline.solve import Written, _negate_couplings
    from symcluster.symbols import ENERGY
    solve_mod = sys.modules["symcluster.pipeline.derived"]
    t, U = sympy.symbols("t U", real=True)
    E = ENERGY
    fac = sympy.Poly(E**2 - U * E - 4 * t**2 + 2 * t * U, E, t, U)
    roots = sympy.solve(fac.as_expr(), E)
    alone = _negate_couplings([(fac, 1, roots)], {"t"})
    calls = []
    real = solve_mod.closed_forms

    def counting(rep, gens, **kwargs):
        calls.append(rep)
        return real(rep, gens, **kwargs)

    monkeypatch.setattr(solve_mod, "closed_forms", counting)
    written = Written()
    first = _negate_couplings([(fac, 1, roots)], {"t"}, written)
    assert len(calls) == 1 and len(written.by_factor) == 1
    assert [sympy.srepr(r) for r in first[0][2]] == [sympy.srepr(r) for r in alone[0][2]]
    again = _negate_couplings([(fac, 1, roots)], {"t"}, written)
    assert len(calls) == 1
    assert all(a is b for a, b in zip(again[0][2], first[0][2]))
    assert again[0][0] == first[0][0] and again[0][0] is not first[0][0]


@pytest.mark.parametrize("k", [1, 2, 3])
def test_eta_shifter_is_sympy_substitution(k):
    # P(E - k*shift) against sympy's own substitution and expansion (independent)
    from symcluster.pipeline.solve import _Shifter
    E, t, U, V = (sympy.Symbol(n, real=True) for n in "EtUV")
    shift = {"U": 1, "V": -2}
    expr = sympy.expand((E - U) ** 2 * (E + 3 * t) - 4 * t ** 2 * E + V * U)
    poly = sympy.Poly(expr, E, t, U, V)
    shifter = _Shifter(U - 2 * V, shift)
    got = shifter(poly, k)
    want = sympy.Poly(sympy.expand(expr.subs(E, E - k * (U - 2 * V))), E, t, U, V)
    assert got == want and got.gens == poly.gens and got.domain == sympy.ZZ
    again = shifter(sympy.Poly.new(poly.rep, *poly.gens), k)     # an equal factor of another block
    assert again == want and again is not got
    assert shifter(poly, 0) is poly
    with pytest.raises(sc.VerificationError, match="not integral"):
        _Shifter(U + t, {"W": 1})(poly, 1)


def test_block_check_covers_equal_blocks_and_catches_a_wrong_copy():
    # verify_blocks checks blocks equal entry for entry (with equal factors) once; a copy
    # whose factors differ from its twin's is checked on its own and fails
    from symcluster.blocks.build import build_blocks, plan_symmetries
    from symcluster.pipeline.solve import _copy_factors, equal_blocks, solve_block
    from symcluster.errors import VerificationError
    from symcluster.verify.core import verify_blocks
    model = sc.hubbard(sc.ring(4))
    blocks = build_blocks(model, plan_symmetries(model))
    copies = equal_blocks(blocks)
    assert copies
    results = [solve_block(b, model.labels) for b in blocks]
    assert verify_blocks(blocks, results, seed=3) == len(blocks)
    i, j = next(iter(copies.items()))
    other = next(k for k, b in enumerate(blocks)
                 if b.block.dim == blocks[i].block.dim and b.block != blocks[i].block)
    wrong = list(results)
    wrong[i] = _copy_factors(results[other])
    with pytest.raises(VerificationError, match="differs from the product"):
        verify_blocks(blocks, wrong, seed=3)
