"""Tests for symcluster.algebra.charpoly (both backends run the same suite)."""

import random
from fractions import Fraction

import pytest
import sympy
from hypothesis import given, settings
from hypothesis import strategies as st

import symcluster.algebra.charpoly as cp_mod
from symcluster.algebra.block import ENERGY, LinearBlock, to_sympy_matrix
from symcluster.algebra.charpoly import _choose_backend, charpoly
from symcluster.errors import ModelError

E = ENERGY
t, U, V = sympy.symbols("t U V", real=True)
BACKENDS = ["flint", "mpoly", "sympy"]


def reference_charpoly(block, gens):
    """Independent reference: sympy Matrix.charpoly of the explicit matrix."""
    M = to_sympy_matrix(block)
    ref = M.charpoly(E)  # sympy drops assumptions on the variable: map it back
    return sympy.Poly(ref.as_expr().subs(ref.gens[0], E), E, *gens)


def random_block(rng, n, names, density=0.5, rational=False, span=3):
    terms = {}
    for nm in names:
        m = {}
        for i in range(n):
            for j in range(n):
                if rng.random() < density:
                    v = rng.randint(-span, span)
                    if rational:
                        v = Fraction(v, rng.randint(1, 4))
                    if v:
                        m[(i, j)] = v
        terms[nm] = m
    return LinearBlock(n, terms)


@pytest.mark.parametrize("backend", BACKENDS)
def test_two_site_singlet(backend):
    # Two-site Hubbard model, N = 2, S = 0, even under site exchange, in the
    # unnormalised basis {|20>+|02>, sqrt(2)*singlet}: E^2 - U E - 4 t^2.
    # Source: Carrascal, Ferrer, Smith, Burke, J. Phys.: Condens. Matter 27, 393001 (2015).
    b = LinearBlock(2, {"t": {(0, 1): -2, (1, 0): -2}, "U": {(0, 0): 1}})
    P = charpoly(b, ("t", "U"), backend=backend)
    assert P == sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    assert P.domain == sympy.ZZ


@pytest.mark.parametrize("backend", BACKENDS)
def test_two_site_singlet_nonsymmetric_block(backend):
    # Same sector without the exchange symmetry, non-orthonormal basis
    # {|20>, |02>, |ud> + |du>}: a non-symmetric integer matrix whose levels are
    # U and U/2 +- sqrt(U^2/4 + 4t^2) (Carrascal et al. 2015, as above).
    b = LinearBlock(3, {"U": {(0, 0): 1, (1, 1): 1},
                        "t": {(0, 2): -2, (1, 2): -2, (2, 0): -1, (2, 1): -1}})
    P = charpoly(b, ("t", "U"), backend=backend)
    assert P == sympy.Poly((E - U) * (E**2 - U * E - 4 * t**2), E, t, U)


@pytest.mark.parametrize("backend", BACKENDS)
@pytest.mark.parametrize("names", [("t",), ("t", "U"), ("t", "U", "V")])
@pytest.mark.parametrize("rational", [False, True])
def test_random_blocks_match_sympy_matrix(backend, names, rational):
    rng = random.Random(hash((names, rational)) & 0xFFFF)
    gens = tuple(sympy.Symbol(n, real=True) for n in names)
    for n in (1, 2, 3, 5, 6):
        b = random_block(rng, n, names, rational=rational)
        P = charpoly(b, names, backend=backend)
        assert P.gens == (E,) + gens
        assert P == reference_charpoly(b, gens)
        assert P.LC() == 1  # monic in E


@settings(max_examples=25, deadline=None)
@given(st.integers(1, 7), st.integers(0, 2**32), st.sampled_from([("t", "U"), ("U", "t", "V")]))
def test_backends_agree(n, seed, names):
    rng = random.Random(seed)
    b = random_block(rng, n, names, density=0.4, rational=bool(seed % 2))
    ref = charpoly(b, names, backend="sympy")
    assert charpoly(b, names, backend="flint") == ref
    assert charpoly(b, names, backend="mpoly") == ref


@pytest.mark.parametrize("backend", BACKENDS)
def test_absent_names_and_order(backend):
    b = LinearBlock(2, {"U": {(0, 0): 1}, "t": {}})
    P = charpoly(b, ("t", "V", "U"), backend=backend)
    assert P.gens == (E, t, V, U)
    assert P == sympy.Poly(E * (E - U), E, t, V, U)


@pytest.mark.parametrize("backend", BACKENDS)
def test_degenerate_blocks(backend):
    assert charpoly(LinearBlock(3, {}), ("t",), backend=backend) == sympy.Poly(E**3, E, t)
    assert charpoly(LinearBlock(0, {}), ("t",), backend=backend).as_expr() == 1
    one = LinearBlock(1, {"U": {(0, 0): Fraction(3, 2)}})
    assert charpoly(one, ("U",), backend=backend) == sympy.Poly(E - sympy.Rational(3, 2) * U, E, U)


@pytest.mark.parametrize("backend", BACKENDS)
def test_trace_and_homogeneity(backend):
    # Coefficient of E^(n-1) is -tr(H); every term has total degree n (common practice, no source).
    rng = random.Random(7)
    b = random_block(rng, 6, ("t", "U"))
    P = charpoly(b, ("t", "U"), backend=backend)
    tr = sum(v * t for (i, j), v in b.terms["t"].items() if i == j)
    tr += sum(v * U for (i, j), v in b.terms["U"].items() if i == j)
    assert sympy.expand(P.as_expr().coeff(E, 5) + tr) == 0
    assert all(sum(m) == 6 for m in P.monoms())


def hubbard_sector_from_bonds(L, bonds, n_up, n_dn):
    """Independent builder of one (N_up, N_dn) Hubbard sector from (i, j, label) bonds."""
    import itertools

    ups = [sum(1 << i for i in c) for c in itertools.combinations(range(L), n_up)]
    dns = [sum(1 << i for i in c) for c in itertools.combinations(range(L), n_dn)]
    states = [(u, d) for u in ups for d in dns]
    idx = {s: k for k, s in enumerate(states)}
    hops, dbl = {}, {}
    for k, (u, d) in enumerate(states):
        if u & d:
            dbl[(k, k)] = bin(u & d).count("1")
        for spin in (0, 1):
            occ = (u, d)[spin]
            for i, j, label in bonds:
                hop = hops.setdefault(label, {})
                for a, b in ((i, j), (j, i)):
                    if occ >> b & 1 and not occ >> a & 1:
                        lo, hi = min(a, b), max(a, b)
                        between = occ & ((1 << hi) - 1) & ~((1 << (lo + 1)) - 1)
                        sign = -1 if bin(between).count("1") % 2 else 1
                        new = occ ^ (1 << a) ^ (1 << b)
                        key = (idx[(new, d) if spin == 0 else (u, new)], k)
                        hop[key] = hop.get(key, 0) - sign
    return LinearBlock(len(states), {**hops, "U": dbl})


def hubbard_ring_sector(L, n_up, n_dn):
    """Independent builder of one (N_up, N_dn) sector of the Hubbard ring (test helper)."""
    return hubbard_sector_from_bonds(L, [(i, (i + 1) % L, "t") for i in range(L)], n_up, n_dn)


def test_flint_medium_block_pointwise():
    # 36x36 sector; check the symbolic result against the exact characteristic
    # polynomial of the numeric matrix at rational points (sympy, independent).
    b = hubbard_ring_sector(4, 2, 2)
    P = charpoly(b, ("t", "U"), backend="flint")
    assert P.degree(E) == 36
    for tv, uv in [(1, 3), (sympy.Rational(-2, 3), sympy.Rational(5, 7))]:
        M = to_sympy_matrix(b, {"t": tv, "U": uv})
        x = sympy.Symbol("x")
        want = M.charpoly(x).all_coeffs()
        got = sympy.Poly(P.as_expr().subs({t: tv, U: uv}), E).all_coeffs()
        assert got == want


def test_flint_large_entries_need_several_primes():
    # Entries ~10^6 force coefficients far above one 62-bit prime.
    rng = random.Random(11)
    b = random_block(rng, 6, ("t", "U"), density=0.7, span=10**6)
    P = charpoly(b, ("t", "U"), backend="flint")
    assert max(abs(int(c)) for c in P.coeffs()).bit_length() > 64
    assert P == reference_charpoly(b, (t, U))


def test_flint_three_couplings_lower_set_grid():
    rng = random.Random(5)
    b = random_block(rng, 7, ("t", "U", "V"), density=0.3, rational=True)
    assert charpoly(b, ("t", "U", "V"), backend="flint") == reference_charpoly(b, (t, U, V))


@pytest.mark.parametrize("seed", range(4))
def test_flint_dense_blocks_where_the_total_degree_bound_binds(seed):
    # Dense blocks: every coupling matrix has full rank, so the grid is cut by the total
    # degree alone (every coefficient of det(x - B0 - sum u_i B_i) has total degree <= n
    # in the u_i, each entry being affine in them); the result must still be exact.
    rng = random.Random(100 + seed)
    names = ("t", "U", "V")[: 2 + seed % 2]
    b = random_block(rng, 6 + seed, names, density=0.9, span=4)
    gens = {"t": t, "U": U, "V": V}
    assert charpoly(b, names, backend="flint") == reference_charpoly(b, [gens[x] for x in names])


def test_lower_set_counts_and_closure():
    # Bounds (5, 5) and total 5: the monomials of total degree <= 5 in two variables,
    # C(7, 2) = 21 of them (against 36 on the tensor grid).  An even coupling counts
    # powers of its square with weight 2: 2a + b <= 6 with a <= 3, b <= 6 gives
    # 7 + 5 + 3 + 1 = 16 points.  Every set is downward closed.
    assert len(cp_mod.lower_set([5, 5], [False, False], 5)) == 21
    assert len(cp_mod.lower_set([3, 6], [True, False], 6)) == 16
    assert cp_mod.lower_set([4], [False], 9) == [(0,), (1,), (2,), (3,), (4,)]
    pts = set(cp_mod.lower_set([4, 3, 5], [False, True, False], 7))
    for q in pts:
        for i in range(3):
            if q[i]:
                assert q[:i] + (q[i] - 1,) + q[i + 1:] in pts


def test_even_coupling_with_a_second_hopping_on_the_weighted_grid():
    # Ring(6) with nearest (t) and second-neighbour (tp) hopping: the gauge
    # c_j -> (-1)^j c_j flips t (odd bonds) and keeps tp (even bonds), so the sector
    # polynomial is even in t but not in tp; the weighted lower set (2a + b <= n) is used.
    # A 36-state sector is too large for a symbolic reference: compare with the exact
    # characteristic polynomial of the numeric matrix at rational points (sympy).
    bonds = [(i, (i + 1) % 6, "t") for i in range(6)] + [(i, (i + 2) % 6, "tp") for i in range(6)]
    b = hubbard_sector_from_bonds(6, bonds, 1, 1)
    tp = sympy.Symbol("tp", real=True)
    P = charpoly(b, ("t", "tp", "U"), backend="flint")
    assert P.degree(E) == 36
    assert all(m[1] % 2 == 0 for m in P.monoms()) and any(m[2] % 2 for m in P.monoms())
    x = sympy.Symbol("x")
    for tv, tpv, uv in [(1, 2, 3), (sympy.Rational(-2, 3), sympy.Rational(5, 7), -4)]:
        want = to_sympy_matrix(b, {"t": tv, "tp": tpv, "U": uv}).charpoly(x).all_coeffs()
        got = sympy.Poly(P.as_expr().subs({t: tv, tp: tpv, U: uv}), E).all_coeffs()
        assert got == want


def test_choose_backend():
    assert _choose_backend(LinearBlock(2, {})) == ("mpoly" if cp_mod.HAVE_FLINT else "sympy")
    assert _choose_backend(LinearBlock(5, {})) == ("mpoly" if cp_mod.HAVE_FLINT else "sympy")
    assert _choose_backend(LinearBlock(6, {})) == ("flint" if cp_mod.HAVE_FLINT else "sympy")
    assert _choose_backend(LinearBlock(40, {})) == ("flint" if cp_mod.HAVE_FLINT else "sympy")


def test_errors_name_the_problem():
    b = LinearBlock(2, {"U": {(0, 0): 1}})
    with pytest.raises(ModelError, match="'U'"):
        charpoly(b, ("t",))
    with pytest.raises(ModelError, match="repeat"):
        charpoly(b, ("U", "U"))
    with pytest.raises(ModelError, match="backend"):
        charpoly(b, ("U",), backend="numpy")
    with pytest.raises(ModelError, match=r"\(2, 0\)"):
        LinearBlock(2, {"U": {(2, 0): 1}})
    with pytest.raises(ModelError, match="float"):
        LinearBlock(2, {"U": {(0, 0): 0.5}})


def test_flint_even_coupling_is_detected_and_interpolated_in_its_square():
    # The 4-site ring is bipartite: the sublattice gauge c_i -> (-1)^i c_i maps t -> -t
    # and leaves U alone, so every (N_up, N_dn) sector's characteristic polynomial is
    # even in t (theorem: a unitary similarity preserves the spectrum).  A chain of
    # 3 sites with an extra odd-cycle bond (triangle) has no such gauge: not even.
    rng = random.Random(3)
    ring = hubbard_ring_sector(4, 2, 1)
    mats = [cp_mod.flint.fmpz_mat(cp_mod._dense(ring.dim, ring.terms[k])) for k in ("t", "U")]
    assert cp_mod._parity_even(ring.dim, mats, 0, rng)
    assert not cp_mod._parity_even(ring.dim, mats, 1, rng)  # U shifts the spectrum
    tri = hubbard_ring_sector(3, 1, 1)
    mats = [cp_mod.flint.fmpz_mat(cp_mod._dense(tri.dim, tri.terms[k])) for k in ("t", "U")]
    assert not cp_mod._parity_even(tri.dim, mats, 0, rng)
    P = charpoly(ring, ("t", "U"), backend="flint")
    assert P == reference_charpoly(ring, (t, U))
    assert all(m[1] % 2 == 0 for m in P.monoms())


def test_integral_flag_lifts_the_block_itself():
    # The two-site singlet sector (Carrascal et al. 2015, as above) in a rescaled basis
    # {|20>+|02>, 16 x singlet}: one entry becomes a half, the characteristic polynomial
    # E^2 - U E - 4 t^2 stays integral.  With integral=True the fast path lifts it
    # directly; with the flag off it lifts 2H and divides; both must give the same result.
    want = sympy.Poly(E**2 - U * E - 4 * t**2, E, t, U)
    h = Fraction(1, 2)
    terms = {"t": {(0, 1): -h, (1, 0): -8}, "U": {(0, 0): 1}}
    for flag in (True, False):
        b = LinearBlock(2, terms, integral=flag)
        assert cp_mod._charpoly_flint(b, ("t", "U")) == {
            (2, 0, 0): 1, (1, 0, 1): -1, (0, 2, 0): -4}
        assert charpoly(b, ("t", "U"), backend="flint") == want


def test_flint_block_wrongly_flagged_integral_is_still_right():
    # integral=True is a promise of the caller (true for every block of build_blocks); a
    # block that breaks it has rational coefficients (here -5/6 E t^2): the lift cannot
    # settle, the final exact spot check fails, and the polynomial is recomputed without
    # the promise instead of returning garbage.
    h, third = Fraction(1, 2), Fraction(1, 3)
    terms = {"t": {(0, 1): h, (1, 0): 1, (1, 2): third, (2, 1): 1}, "U": {(0, 0): 1, (2, 2): 2}}
    b = LinearBlock(3, terms, integral=True)
    want = reference_charpoly(LinearBlock(3, terms), (t, U))
    assert charpoly(b, ("t", "U"), backend="flint") == want
    assert want.coeff_monomial(E * t**2) == Fraction(-5, 6)


def _mirrored_block(rng, m, c):
    """A 2m x 2m block ``t A + U (c 1 + Q)`` with ``S A S = A`` and ``S Q S = -Q`` for the
    swap ``S`` of the two halves: ``t A - U Q`` is similar to ``t A + U Q`` (by S), so the
    spectrum at ``-U`` is that at ``U`` moved by ``-2 c U`` (a mirrored block), while a
    diagonal ``P`` in ``A`` keeps it from being even in ``t`` (linear algebra, no source)."""
    P = [[0] * m for _ in range(m)]
    X = [[0] * m for _ in range(m)]
    for i in range(m):
        for j in range(i, m):
            P[i][j] = P[j][i] = rng.randint(-3, 3)
            X[i][j] = X[j][i] = rng.randint(-3, 3)
    q = [rng.randint(-2, 2) for _ in range(m)]
    t_terms, u_terms = {}, {}
    for i in range(m):
        for j in range(m):
            for (a, b), v in (((i, j), P[i][j]), ((m + i, m + j), P[i][j]),
                              ((i, m + j), X[i][j]), ((m + i, j), X[i][j])):
                if v:
                    t_terms[(a, b)] = v
        for a, v in ((i, c + q[i]), (m + i, c - q[i])):
            if v:
                u_terms[(a, a)] = v
    return LinearBlock(2 * m, {"t": t_terms, "U": u_terms})


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_flint_mirrored_coupling_gives_the_reference_polynomial(seed):
    # A block whose spectrum at -U is the one at U moved by 2cU (c = tr(B_U)/n) is sampled
    # at U = 0, 1, -1, 2, -2, ...: one characteristic polynomial serves two nodes.  The
    # result must be the plain reference, and the mirror must really be there.
    rng = random.Random(seed)
    b = _mirrored_block(rng, 5, c=rng.randint(1, 3))
    n = b.dim
    mats = [cp_mod.flint.fmpz_mat(cp_mod._dense(n, b.terms[k])) for k in ("t", "U")]
    shift = cp_mod._mirror_shift(n, b.terms["U"])
    assert shift != 0
    assert cp_mod._parity_even(n, mats, 1, rng, shift)         # mirrored in U
    assert not cp_mod._parity_even(n, mats, 0, rng)            # not even in t
    assert not cp_mod._parity_even(n, mats, 1, rng)            # nor plainly even in U
    assert charpoly(b, ("t", "U"), backend="flint") == reference_charpoly(b, (t, U))


def test_flint_a_wrong_mirror_guess_is_recomputed(monkeypatch):
    # If the mirror test were fooled, the exact spot check off the grid must catch the
    # wrong interpolant and the polynomial be recomputed without the assumption.
    rng = random.Random(7)
    b = random_block(rng, 8, ("t", "U"), density=0.5)
    real = cp_mod._parity_even
    monkeypatch.setattr(cp_mod, "_parity_even",
                        lambda n, mats, idx, rng, shift=0: True if shift else real(
                            n, mats, idx, rng))
    monkeypatch.setattr(cp_mod, "_mirror_shift", lambda n, mat: Fraction(1, 1))
    assert charpoly(b, ("t", "U"), backend="flint") == reference_charpoly(b, (t, U))


def test_flint_a_right_grid_guess_is_accepted_at_once(monkeypatch):
    # an even (bipartite ring sector) and a mirrored block: the interpolant on the reduced
    # grid must pass the exact spot check the first time; a refusal would mean the grid
    # is sampled wrongly (the result would still be right, recomputed without the guess)
    results = []
    real = cp_mod._multimodular

    def recording(*args, **kwargs):
        out = real(*args, **kwargs)
        results.append(out is not None)
        return out

    monkeypatch.setattr(cp_mod, "_multimodular", recording)
    even = hubbard_ring_sector(4, 2, 2)         # U of rank 30: t (even) is the free axis
    mirrored = _mirrored_block(random.Random(5), 5, c=2)
    for b in (even, mirrored):
        results.clear()
        assert charpoly(b, ("t", "U"), backend="flint") == reference_charpoly(b, (t, U))
        assert results == [True]
