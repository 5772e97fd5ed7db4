"""Checks of the verification's own pieces (symcluster/verify.py) against independent algebra."""

import random
from fractions import Fraction

import mpmath
import pytest
import sympy

import symcluster as sc
from symcluster.errors import VerificationError
from symcluster.verify.core import _power_sums, verify_spectrum

E, t, U, x = sympy.symbols("E t U x")


def _as_expr(labels_poly, gens):
    """{sorted label tuple: Fraction} -> sympy expression in the generators named by the labels."""
    by_name = {g.name: g for g in gens}
    return sum((sympy.Rational(v.numerator, v.denominator) * sympy.Mul(*[by_name[n] for n in k])
                for k, v in labels_poly.items()), sympy.Integer(0))


@pytest.mark.parametrize("seed", range(40))
def test_power_sums_match_vieta(seed):
    # Vieta's formulas (any algebra text): for P = c_d E^d + c_{d-1} E^{d-1} + c_{d-2} E^{d-2}
    # + ..., the roots satisfy sum r = -c_{d-1}/c_d and sum r^2 = (sum r)^2 - 2 c_{d-2}/c_d.
    # The reference reads the coefficients with sympy's Expr.coeff, not the Poly's storage.
    rng = random.Random(seed)
    gens = rng.choice([(E,), (E, U), (E, t, U), (E, x, t, U)])
    d = rng.randint(1, 7)
    expr = rng.choice([1, 2, sympy.Rational(3, 2)]) * E**d
    for k in range(d):
        for _ in range(3):
            mon = sympy.Mul(*[g ** rng.randint(0, 2) for g in gens[1:]])
            expr += sympy.Rational(rng.randint(-9, 9), rng.randint(1, 4)) * E**k * mon
    P = sympy.Poly(expr, *gens, domain=sympy.QQ)
    if all(c.is_integer for c in P.coeffs()) and seed % 2:
        P = P.set_domain(sympy.ZZ)
    c = [sympy.expand(expr).coeff(E, d - j) for j in range(3)]
    e1 = sympy.expand(-c[1] / c[0])
    p2 = sympy.expand(e1**2 - 2 * c[2] / c[0])
    got1, got2 = _power_sums(P)
    assert sympy.expand(_as_expr(got1, gens) - e1) == 0
    assert sympy.expand(_as_expr(got2, gens) - p2) == 0


def test_power_sums_refuse_a_coupling_dependent_leading_coefficient():
    with pytest.raises(VerificationError, match="leading coefficient"):
        _power_sums(sympy.Poly(U * E**2 + E + 1, E, U))


def test_sum_rule_catches_a_shifted_level_polynomial():
    # Tr H over each N = 1 sector of the dimer is 0 (no on-site terms; common practice, no
    # source). Replacing the level polynomial E - t by E - t - U (and its closed form by
    # t + U, so that it is still a root of its polynomial) moves sum deg*E by U: the sum
    # rule, which runs before the eigenvalue comparison, must reject it.
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=1)
    tv, uv = (next(s for s in spec.symbols if s.name == n) for n in ("t", "U"))
    lev = next(l for l in spec.levels if l.energy == tv)
    gens = lev.polynomial.gens
    lev.polynomial = sympy.Poly(lev.polynomial.as_expr() - uv, *gens)
    lev.energy = tv + uv
    with pytest.raises(VerificationError, match="sum rule"):
        verify_spectrum(spec, electrons=[1], seed=5)


# ---------------------------------------------------------------- the pieces of the checks

def _reference_sector(cluster, n_up, n_dn):
    """Integer matrices per coupling of one sector of the Jordan-Wigner reference, in the
    order of symcluster's sector basis (mapped through the reference's state index)."""
    from symcluster.hilbert.fock import sector_states
    from reference_fock import FockReference
    labels = {i: lab for i, lab in enumerate(cluster.site_labels) if lab}
    ref = FockReference(cluster.n_sites, list(cluster.bonds), labels)
    states = sector_states(cluster.n_sites, n_up, n_dn)
    idx = [FockReference.state_index(u, d, cluster.n_sites) for u, d in states]
    return states, {k: v[idx][:, idx].toarray() for k, v in ref.terms.items()}


_CLUSTERS = {"ring4": lambda: sc.ring(4),
             "labels": lambda: sc.cluster(4, [(0, 1), (1, 2, "tp"), (2, 3)],
                                          site_labels={1: "e", 3: "e"})}


@pytest.mark.parametrize("name", sorted(_CLUSTERS))
@pytest.mark.parametrize("sector", [(1, 0), (1, 1), (2, 1), (2, 2), (3, 1)])
def test_sector_matrix_and_traces_match_the_fock_reference(name, sector):
    # Tr H = sum_l u_l tr A_l and Tr H^2 = sum_l1,l2 u_l1 u_l2 sum_ij A_l1[i,j] A_l2[i,j]
    # with A_l the reference's integer matrices (numpy), keys sorted label tuples
    # the verification's plain sector matrices (symcluster.verify.plain), in the order of the
    # package's sector basis
    from symcluster.verify.plain import sector_matrix
    from symcluster.verify.core import _sector_traces
    cluster = _CLUSTERS[name]()
    model = sc.hubbard(cluster)
    states, ref = _reference_sector(cluster, *sector)
    terms = sector_matrix(model, *sector).as_dicts()
    tr1, tr2 = _sector_traces(terms, len(states))
    for lab, mat in ref.items():
        got = terms.get(lab, {})
        want = {(i, j): int(mat[i, j]) for i in range(len(states)) for j in range(len(states))
                if mat[i, j]}
        assert got == want, lab
    want1 = {(l,): int(m.trace()) for l, m in ref.items() if m.trace()}
    want2 = {}
    for l1, m1 in ref.items():
        for l2, m2 in ref.items():
            key = tuple(sorted((l1, l2)))
            want2[key] = want2.get(key, 0) + int((m1 * m2).sum())
    assert tr1 == want1
    assert tr2 == {k: v for k, v in want2.items() if v}


def test_sector_charpoly_modulo_a_prime_matches_sympy():
    # det(x - H) of the reference's (2, 1) sector at a rational point, by sympy over Q,
    # then reduced modulo the prime coefficient by coefficient
    from symcluster.verify.plain import sector_matrix
    from symcluster.verify.core import _charpoly_mod, _label_matrices
    cluster = _CLUSTERS["labels"]()
    model = sc.hubbard(cluster)
    states, ref = _reference_sector(cluster, 2, 1)
    point = {"t": sympy.Rational(-7, 13), "tp": sympy.Rational(5, 3), "U": sympy.Rational(9, 2),
             "e": sympy.Rational(-1, 6)}
    prime = 2305843009213693951                       # 2^61 - 1, a Mersenne prime
    H = sum((sympy.Matrix(m.tolist()) * point[l] for l, m in ref.items()),
            sympy.zeros(len(states)))
    want = [c % prime if c.q == 1 else c.p * pow(c.q, -1, prime) % prime
            for c in reversed(H.charpoly(x).all_coeffs())]
    terms = sector_matrix(model, 2, 1).as_dicts()
    got = _charpoly_mod(_label_matrices(terms, len(states)), len(states), point, prime)
    assert [int(c) for c in got.coeffs()] == want


def test_polynomials_modulo_a_prime_are_monic_reductions():
    # P(E; point) reduced modulo p and made monic, against sympy substitution; equal
    # polynomials in separate objects share one form (and one reduction)
    from symcluster.verify.core import FormCache, _poly_mod
    prime = 2305843009213693951
    P = sympy.Poly(3 * E**2 - sympy.Rational(5, 2) * E * t + U**2 - 7, E, t, U, domain=sympy.QQ)
    Q = sympy.Poly(3 * E**2 - sympy.Rational(5, 2) * E * t + U**2 - 7, E, t, U, domain=sympy.QQ)
    point = {t: sympy.Rational(4, 9), U: sympy.Rational(-2, 3)}
    forms, cache = FormCache(), {}
    assert forms(P) is forms(Q)
    got = _poly_mod(forms(P), point, prime, cache)
    cs = sympy.Poly(P.as_expr().subs(point), E).all_coeffs()[::-1]
    lead = cs[-1].p * pow(cs[-1].q, -1, prime) % prime
    want = [c.p * pow(c.q, -1, prime) * pow(lead, -1, prime) % prime for c in cs]
    assert [int(c) for c in got.coeffs()] == want
    assert _poly_mod(forms(Q), point, prime, cache) is got


def test_polys_sharing_a_representation_share_a_form_only_with_equal_generators():
    # Poly.new(rep, *gens) copies (the eta members of one factor) are read once; the
    # same representation under other generators is another polynomial, with its own
    # terms (checked against sympy's as_dict)
    from symcluster.verify.core import FormCache
    P = sympy.Poly(E**2 - 2 * E * t + U**2 - 7, E, t, U, domain=sympy.ZZ)
    copy = sympy.Poly.new(P.rep, *P.gens)
    swapped = sympy.Poly.new(P.rep, E, U, t)
    forms = FormCache()
    assert forms(copy) is forms(P)
    other = forms(swapped)
    assert other is not forms(P)
    assert other.poly.gens == (E, U, t)
    want = sorted((m, int(c)) for m, c in swapped.as_dict().items())
    assert sorted(((k,) + exps, c) for k, exps, c, _ in other.terms) == want


def test_mp_coefficients_are_correctly_rounded_quotients():
    # each coefficient acc[i] / full is the nearest number of the working precision to the
    # exact quotient (checked in exact rational arithmetic: within half an ulp), also where
    # the numerator has more bits than the working precision
    from symcluster.numeric.residuals import mp_coefficients
    full = 3 ** 5 * 2 ** 7 * 101
    acc = [full, -6 * 101, 7, 0, 5 ** 300 * 3, -(2 ** 400) * 101 + 1]
    with mpmath.workdps(40):
        prec = mpmath.mp.prec
        for a, r in zip(acc, mp_coefficients(acc, full)):
            want = Fraction(a, full)
            man, exp = r.man_exp
            got = Fraction(-man if r < 0 else man) * Fraction(2) ** exp
            if want == 0:
                assert got == 0
                continue
            ulp = Fraction(2) ** (mpmath.mag(r) - prec)      # an upper bound of r's ulp
            assert abs(got - want) <= ulp / 2, a
            assert man.bit_length() <= prec, a


@pytest.mark.parametrize("seed", range(20))
def test_root_deviation_is_mpmath_polyval_bit_for_bit(seed):
    # |P(x)| / sum |c_k| r^k, r = max(|x|, scale 10^-digits), with mpmath.polyval (mpmath)
    from symcluster.numeric.residuals import root_deviation
    rng = random.Random(seed)
    with mpmath.workdps(40):
        cs = [mpmath.mpf(rng.randint(-999, 999)) / rng.randint(1, 99)
              for _ in range(rng.randint(1, 5))]
        cs[0] = cs[0] or mpmath.mpf(1)
        with mpmath.workdps(80):
            x = mpmath.mpf(rng.randint(-999, 999)) / rng.choice([7, 101, 3 ** 40])
            if seed % 5 == 0:
                x = mpmath.mpf(0)
        scale = mpmath.mpf(rng.randint(1, 900)) / 107
        val = mpmath.polyval(cs, x)
        r = max(abs(x), scale * mpmath.mpf(10) ** -30)
        size = mpmath.polyval([abs(c) for c in cs], r)
        want = abs(val) / size if size else abs(val)
        assert root_deviation(cs, x, scale, 30) == want


@pytest.mark.parametrize("seed", range(8))
def test_exact_deviation_is_the_backward_error_rounded_once(seed):
    # exact_backward_error (the verification's root check for real values) evaluates |P(x)|
    # and sum |c_k| r^k exactly at the dyadic x; the reference is the same quotient summed
    # term by term by mpmath at 3000 digits (an independent evaluation): they agree to
    # one rounding at the working precision (133 bits)
    from symcluster.numeric.residuals import exact_backward_error
    rng = random.Random(seed)
    for trial in range(200):
        d = rng.randint(1, 6)
        acc = tuple(rng.randint(-10 ** rng.randint(1, 40), 10 ** rng.randint(1, 40))
                    for _ in range(d + 1))
        full = rng.randint(1, 10 ** rng.randint(1, 30))
        with mpmath.workdps(rng.choice([20, 40, 80])):
            x = (mpmath.mpf(rng.uniform(-50, 50)) * mpmath.mpf(2) ** rng.randint(-200, 200)
                 if trial % 7 else mpmath.mpf(0))
            floor = mpmath.mpf(10) ** -rng.randint(5, 60)
        with mpmath.workdps(40):
            got = exact_backward_error(acc, x, floor)
        with mpmath.workdps(3000):
            r = max(abs(x), floor)
            val = abs(mpmath.fsum(mpmath.mpf(a) / full * x ** (d - i) for i, a in enumerate(acc)))
            size = mpmath.fsum(abs(mpmath.mpf(a)) / full * r ** (d - i)
                               for i, a in enumerate(acc))
            want = val / size if size else val
            assert abs(got - want) <= mpmath.mpf(2) ** -130 * want, (trial, acc, x)
        # and it is the correctly rounded quotient of the two exact sums: in exact rational
        # arithmetic (Fractions of the dyadic values), within half an ulp at 133 bits
        def exact(v):
            man, exp = v.man_exp
            return Fraction(-man if v < 0 else man) * Fraction(2) ** exp
        xq, rq = exact(x), max(abs(exact(x)), exact(floor))
        num = abs(sum(Fraction(a) * xq ** (d - i) for i, a in enumerate(acc)))
        den = sum(abs(Fraction(a)) * rq ** (d - i) for i, a in enumerate(acc))
        q = num / den if den else num
        if q:
            with mpmath.workdps(40):
                ulp = Fraction(2) ** (mpmath.mag(got) - mpmath.mp.prec)
            assert abs(exact(got) - q) <= ulp / 2, (trial, acc, x)
        else:
            assert got == 0


def test_sector_shares_split_multiplets_over_sz_sectors():
    # S = 1 with degeneracy 6 (two copies of a triplet) on 4 sites, N = 4: Sz = -1, 0, 1 hold
    # 2 states each; S = 1/2 with degeneracy 4, N = 3: Sz = +-1/2 hold 2 each; Sz labels only
    # put everything in their own sector
    from symcluster.spectrum import Level
    from symcluster.verify.core import _sector_shares
    half = sympy.Rational(1, 2)
    assert _sector_shares(Level(U, 6, {"N": 4, "S": sympy.Integer(1)}), 4) == \
        [((1, 3), 2), ((2, 2), 2), ((3, 1), 2)]
    assert _sector_shares(Level(U, 4, {"N": 3, "S": half}), 4) == [((1, 2), 2), ((2, 1), 2)]
    assert _sector_shares(Level(U, 1, {"N": 3, "Sz": -half}), 4) == [((1, 2), 1)]
    assert _sector_shares(Level(U, 1, {"N": 0, "S": sympy.Integer(0)}), 4) == [((0, 0), 1)]
    with pytest.raises(VerificationError):
        _sector_shares(Level(U, 1, {"N": 2}), 4)


def _summed_mp_matrix(terms, point, dim):
    a = mpmath.matrix(dim, dim)
    for lab, mat in terms.items():
        v = mpmath.mpf(point[lab].p) / point[lab].q
        for (i, j), c in mat.items():
            a[i, j] += c * v
    return a


_SECTOR_TERMS = {"t": {(0, 1): -1, (1, 0): -1, (1, 2): -1, (2, 1): -1, (0, 2): 1, (2, 0): 1},
                 "U": {(0, 0): 1, (2, 2): 2}}
_SECTOR_POINT = {"t": sympy.Rational(265, 107), "U": sympy.Rational(-835, 107)}


def test_small_sector_eigenvalues_enclose_mpmath_eigsy():
    # The enclosures (python-flint: exact charpoly, certified roots) against mpmath.eigsy
    # of the matrix summed at 40 digits (mpmath, an independent library): within the
    # bound, bounds tiny; an equal matrix of another sector gives the same list
    from symcluster.verify.core import _sector_eigenvalues
    spectra = {}
    with mpmath.workdps(40):
        got = _sector_eigenvalues(_SECTOR_TERMS, 3, _SECTOR_POINT, spectra)
        want = sorted(mpmath.eigsy(_summed_mp_matrix(_SECTOR_TERMS, _SECTOR_POINT, 3),
                                   eigvals_only=True))
        assert len(got) == 3
        for (x, bound), y in zip(got, want):
            assert bound < mpmath.mpf(10) ** -38
            assert abs(x - y) <= bound + mpmath.mpf(10) ** -38
        assert _sector_eigenvalues(dict(_SECTOR_TERMS), 3, dict(_SECTOR_POINT), spectra) is got


def _exact(v):
    """The exact rational value of an mpmath mpf."""
    sign, man, exp, _ = v._mpf_
    return (-1) ** sign * Fraction(int(man)) * Fraction(2) ** int(exp)


@pytest.mark.parametrize("x", [Fraction(0), Fraction(1, 3), Fraction(-22, 7), Fraction(5),
                               Fraction(10**40 + 1, 3)])
def test_one_state_sector_eigenvalue_encloses_the_entry(x):
    # a 1 x 1 sector: its entry is the eigenvalue; the enclosure must hold it exactly
    # (checked in rationals), with a bound of about one ulp
    from symcluster.verify.core import _sector_eigenvalues
    with mpmath.workdps(40):
        (value, bound), = _sector_eigenvalues({"U": {(0, 0): 1}}, 1, {"U": sympy.Rational(
            x.numerator, x.denominator)}, {})
        v, b = _exact(value), _exact(bound)
        assert abs(v - x) <= b
        assert b <= abs(x) * Fraction(2) ** (2 - mpmath.mp.prec)


def test_small_sector_eigenvalues_keep_multiplicities():
    # 4-site ring, one electron, t = 3/7: -2t cos k for k = 0, +-pi/2, pi (tight binding,
    # e.g. Ashcroft & Mermin ch. 10): -6/7, 0 (twice), 6/7; the double eigenvalue is kept twice
    from symcluster.verify.core import _sector_eigenvalues
    hop = {}
    for i in range(4):
        hop[(i, (i + 1) % 4)] = hop[((i + 1) % 4, i)] = -1
    with mpmath.workdps(40):
        got = _sector_eigenvalues({"t": hop}, 4, {"t": sympy.Rational(3, 7)}, {})
    want = [Fraction(-6, 7), 0, 0, Fraction(6, 7)]
    assert all(abs(_exact(x) - y) <= _exact(b) for (x, b), y in zip(got, want))   # in rationals
    assert all(b < mpmath.mpf(10) ** -38 for _, b in got)


def test_small_sector_eigenvalues_of_a_rank_one_matrix():
    # (2/3) J_4 (J the all-ones matrix) has the eigenvalue 8/3 once and 0 three times
    # (rank one, trace 8/3; common practice, no source): the enclosures list each
    # eigenvalue as often as it occurs, and 0 exactly
    from symcluster.verify.core import _sector_eigenvalues
    ones = {(i, j): 1 for i in range(4) for j in range(4)}
    with mpmath.workdps(40):
        got = _sector_eigenvalues({"t": ones}, 4, {"t": sympy.Rational(2, 3)}, {})
        assert [b for _, b in got[:3]] == [0, 0, 0] and [x for x, _ in got[:3]] == [0, 0, 0]
        x, b = got[3]
    assert b < mpmath.mpf(10) ** -38
    assert abs(_exact(x) - Fraction(8, 3)) <= _exact(b)         # in rationals


def test_a_non_real_sector_eigenvalue_is_refused():
    # a real symmetric matrix has real eigenvalues; the rotation [[0, -1], [1, 0]] (not
    # symmetric, eigenvalues +-i) stands in for a broken sector matrix
    from symcluster.errors import VerificationError
    from symcluster.verify.core import _sector_eigenvalues
    with mpmath.workdps(40), pytest.raises(VerificationError, match="non-real eigenvalue"):
        _sector_eigenvalues({"t": {(0, 1): -1, (1, 0): 1}}, 2, {"t": sympy.Integer(1)}, {})


def test_swapped_lattice_labels_are_rejected():
    # The labels are checked against an independent projection: for ring(4) the one-electron
    # levels are -2t cos k (tight binding), k = 0 and k = pi have different energies; swapping
    # their labels must fail (a review found that no check looked at the labels).
    import symcluster as sc
    from symcluster.blocks.build import plan_symmetries
    from symcluster.errors import VerificationError
    from symcluster.verify.core import verify_spectrum
    model = sc.hubbard(sc.ring(4))
    spec = sc.solve(model)
    assert any("lattice labels" in c["check"] for c in spec.verification.checks)
    plan = plan_symmetries(model)
    one = [lev for lev in spec.levels if lev.quantum_numbers["N"] == 1]
    k0 = next(lev for lev in one if lev.quantum_numbers["irrep"].startswith("k=0"))
    kpi = next(lev for lev in one if lev.quantum_numbers["irrep"].startswith("k=π"))
    assert k0.degeneracy == kpi.degeneracy
    verify_spectrum(spec, seed=3, lattice=plan.lattice)        # as solved: accepted
    k0.quantum_numbers["irrep"], kpi.quantum_numbers["irrep"] = (
        kpi.quantum_numbers["irrep"], k0.quantum_numbers["irrep"])
    with pytest.raises(VerificationError, match="labelled"):
        verify_spectrum(spec, seed=3, lattice=plan.lattice)


def test_lattice_label_images_match_the_permuted_states():
    # the block tables give, for every sector state and group element, the index and the
    # fermion sign of the permuted state: those of permute_state on the basis itself
    from symcluster.blocks.build import plan_symmetries
    from symcluster.hilbert.fock import sector_states
    from symcluster.symmetry.lattice import permute_state
    from symcluster.verify.core import _BlockImages
    model = sc.hubbard(sc.cluster(5, [(0, 1), (1, 2), (2, 3), (3, 0), (0, 4, "tp")]))
    lattice = plan_symmetries(model).lattice
    images = _BlockImages(lattice, 5)
    for n_up, n_dn in [(0, 0), (1, 0), (2, 1), (1, 3), (3, 2), (5, 4)]:
        states = sector_states(5, n_up, n_dn)
        idx = {s: k for k, s in enumerate(states)}
        pos_up, sign_up = images(n_up)
        pos_dn, sign_dn = images(n_dn)
        for g, perm in enumerate(lattice.group.elements):
            for k, (u, d) in enumerate(states):
                a, b = divmod(k, pos_dn.shape[1])
                sign, u2, d2 = permute_state(perm, u, d)
                assert idx[u2, d2] == pos_up[g, a] * pos_dn.shape[1] + pos_dn[g, b]
                assert sign == sign_up[g, a] * sign_dn[g, b]


@pytest.mark.parametrize("sector", [(0, 0), (1, 0), (2, 1), (1, 3), (3, 2), (5, 4)])
def test_isotypic_traces_match_dense_projectors(sector):
    # Tr P_j H^m (m = 0, 1, 2) against the dense projector P_j = (d/|G|) sum_g psi_j(g) U(g)
    # built from the bubble-sort permutation of tests/test_lattice.py and the Jordan-Wigner
    # sector matrices of tests/reference_fock.py, multiplied out with numpy
    import numpy as np
    from helpers_lattice import ref_permute
    from symcluster.blocks.build import plan_symmetries
    from symcluster.verify.plain import sector_matrix
    from symcluster.verify.core import _BlockImages, _isotypic_traces
    cluster = sc.cluster(5, [(0, 1), (1, 2), (2, 3), (3, 0), (0, 4, "tp")])
    model = sc.hubbard(cluster)
    lattice = plan_symmetries(model).lattice
    assert lattice.group.order > 1
    states, ref = _reference_sector(cluster, *sector)
    point = {"t": sympy.Rational(-7, 13), "tp": sympy.Rational(5, 3), "U": sympy.Rational(9, 7)}
    h = sum(float(point[lab]) * mat for lab, mat in ref.items())
    idx = {s: k for k, s in enumerate(states)}
    dim = len(states)
    want = [[0.0] * len(lattice.irreps) for _ in range(3)]
    for j, irrep in enumerate(lattice.irreps):
        proj = np.zeros((dim, dim))
        for g, chi in zip(lattice.group.elements, irrep.character):
            for k, (u, d) in enumerate(states):
                sign, u2, d2 = ref_permute(g, u, d, 5)
                proj[idx[u2, d2], k] += float(chi) * sign
        proj *= irrep.dim / lattice.group.order
        for m in range(3):
            want[m][j] = float(np.trace(proj @ np.linalg.matrix_power(h, m)))
    got = _isotypic_traces(sector_matrix(model, *sector).as_dicts(), dim, point, sector,
                           _BlockImages(lattice, 5))
    assert np.allclose(got, want, rtol=1e-12, atol=1e-12)
    assert abs(sum(got[0]) - dim) < 1e-9          # the projectors add up to the identity


def test_numeric_matrix_is_the_entrywise_sum():
    # bit for bit the loop m[i, j] += a * float(u_l), label after label
    import numpy as np
    from symcluster.hilbert.fock import sector_states
    from symcluster.verify.plain import sector_matrix
    from symcluster.verify.core import _numeric_matrix
    model = sc.hubbard(sc.cluster(4, [(0, 1), (1, 2, "tp"), (2, 3)], site_labels={1: "e", 3: "e"}))
    states = sector_states(4, 2, 1)
    terms = sector_matrix(model, 2, 1).as_dicts()
    point = {"t": sympy.Rational(-7, 13), "tp": sympy.Rational(5, 3), "U": sympy.Rational(9, 7),
             "e": sympy.Rational(-1, 6)}
    want = np.zeros((len(states), len(states)))
    for lab, mat in terms.items():
        v = float(point[lab])
        for (i, j), a in mat.items():
            want[i, j] += a * v
    assert np.array_equal(_numeric_matrix(terms, len(states), point), want)


def test_spin_flip_images_share_the_lattice_label_check():
    # with spin SU(2) proven, a sector N_up < N_dn holding the levels of (N_dn, N_up) is
    # covered by that sector's check (same levels, same traces); the report says so, the
    # count of sectors adds up, and a swapped label is still caught
    from symcluster.blocks.build import plan_symmetries
    model = sc.hubbard(sc.ring(4))
    spec = sc.solve(model, seed=2)
    plan = plan_symmetries(model)
    entry = next(c for c in spec.verification.checks if "lattice labels" in c["check"])
    assert entry["spin_flip_images"] == 10          # (0,1),(0,2),(1,2),...: 10 of 25 sectors
    assert entry["sectors"] == 15
    assert "spin-flip image" in entry["scope"]
    # the sum rules of those sectors are their images' too
    sums = next(c for c in spec.verification.checks if c["check"].startswith("sum rules"))
    assert sums["spin_flip_images"] == 10 and "spin-flip image" in sums["scope"]
    spec.verification.checks.clear()
    verify_spectrum(spec, seed=2, lattice=plan.lattice)     # nothing proven: every sector
    alone = next(c for c in spec.verification.checks if "lattice labels" in c["check"])
    assert alone["sectors"] == 25 and "spin_flip_images" not in alone
    assert alone["scope"] == "sectors with dim <= 500"
    sums = next(c for c in spec.verification.checks if c["check"].startswith("sum rules"))
    assert "spin_flip_images" not in sums and sums["scope"] == "every sector"
    two = [lev for lev in spec.levels if lev.quantum_numbers["N"] == 2]
    a = next(lev for lev in two if lev.quantum_numbers["irrep"].startswith("k=0"))
    b = next(lev for lev in two if lev.quantum_numbers["irrep"] != a.quantum_numbers["irrep"]
             and lev.quantum_numbers["S"] == a.quantum_numbers["S"]
             and lev.degeneracy == a.degeneracy)
    a.quantum_numbers["irrep"], b.quantum_numbers["irrep"] = (
        b.quantum_numbers["irrep"], a.quantum_numbers["irrep"])
    with pytest.raises(VerificationError, match="labelled"):
        verify_spectrum(spec, seed=2, proven=("spin", "eta"), lattice=plan.lattice)


def test_a_root_listed_twice_is_rejected():
    # Without the lattice check (which compares values per irrep), nothing else compared the
    # closed forms of a factor with each other in sectors of dimension 5..500: two forms of a
    # cubic giving the same root, and a root missing, passed every check.  The Newton disks
    # of the values of one factor must be pairwise disjoint.
    spec = sc.solve(sc.hubbard(sc.ring(4)), lattice=False, seed=4)
    groups = {}
    for lev in spec.levels:
        p = lev.polynomial
        if p is not None and p.degree(p.gens[0]) == 3 and lev.quantum_numbers["N"] == 4:
            groups.setdefault(id(p), []).append(lev)
    levs = next(g for g in groups.values() if len(g) == 3)
    assert any("distinct roots" in c["check"] for c in spec.verification.checks)
    verify_spectrum(spec, seed=4)                              # as solved: accepted
    levs[1].energy = levs[0].energy
    with pytest.raises(VerificationError, match="not distinct roots"):
        verify_spectrum(spec, seed=4)


@pytest.mark.parametrize("seed", range(30))
def test_newton_radius_holds_a_root(seed):
    # the disk of radius _newton_radius about a perturbed root holds a root of P (reference:
    # mpmath.polyroots on the same coefficients), for perturbations from 1e-30 to 0.3
    from symcluster.numeric.residuals import newton_radius
    rng = random.Random(seed)
    n = rng.randint(2, 6)
    roots = [Fraction(rng.randint(-40, 40), rng.randint(1, 9)) for _ in range(n)]
    poly = sympy.Poly(sympy.Mul(*[x - sympy.Rational(r.numerator, r.denominator) for r in roots]), x)
    with mpmath.workdps(40):
        coeffs = [mpmath.mpf(int(c.p)) / int(c.q) for c in poly.all_coeffs()]
        ref = mpmath.polyroots(coeffs, maxsteps=200, extraprec=200)
        for r in roots:
            for eps in (mpmath.mpf(10) ** -30, mpmath.mpf(10) ** -5, mpmath.mpf("0.3")):
                xv = mpmath.mpf(r.numerator) / r.denominator + eps * rng.choice([-1, 1])
                rad = newton_radius(coeffs, xv)
                if rad is None:
                    continue
                assert min(abs(xv - z) for z in ref) <= rad


def test_float_disks_hold_a_root_and_close_roots_fall_back_to_working_precision():
    # _float_newton_radius: a root of P within the radius (reference: exact rational roots);
    # two distinct roots 1e-25 apart cannot be told apart in float64, so _separate_roots
    # must settle them at working precision (accepted), while a value listed twice fails
    from symcluster.numeric.residuals import float_newton_radius
    from symcluster.verify.core import _separate_roots
    rng = random.Random(11)
    for _ in range(40):
        roots = [Fraction(rng.randint(-50, 50), rng.randint(1, 7)) for _ in range(rng.randint(2, 4))]
        poly = sympy.Poly(sympy.Mul(*[x - sympy.Rational(r.numerator, r.denominator)
                                      for r in roots]), x)
        c = [float(v) for v in poly.all_coeffs()]
        a = [abs(v) for v in c]
        for r in roots:
            xf = float(r) * (1 + rng.choice([1e-12, -3e-9, 1e-3]))
            rad = float_newton_radius(c, a, xf)
            if rad is not None:
                assert min(abs(Fraction(xf) - s) for s in roots) <= Fraction(rad)
    a0 = sympy.Rational(1, 3)
    gap = sympy.Rational(1, 10**25)
    poly = sympy.Poly((x - a0) * (x - a0 - gap) * (x + 2), x)
    den = 3 * 10**25 * 3
    ints = [int(v * den) for v in poly.all_coeffs()]
    with mpmath.workdps(60):
        cs = (tuple(ints), den)         # the coefficients ints / den, as _Form.ints_at gives them

        class Lev:
            energy = "E"
            quantum_numbers = {"N": 2}
        vals = [mpmath.mpf(1) / 3, mpmath.mpf(1) / 3 + mpmath.mpf(10) ** -25, mpmath.mpf(-2)]
        _separate_roots([(Lev, v, cs) for v in vals], {}, {})
        with pytest.raises(VerificationError, match="not distinct roots"):
            _separate_roots([(Lev, v, cs) for v in (vals[0], vals[0], vals[2])], {}, {})


def test_complex_values_get_newton_disks_too():
    # a closed form evaluated with complex intermediates can come back as an mpc with a
    # tiny imaginary part: its disk must still hold the root, and two such values of one
    # root must still be rejected
    from symcluster.numeric.residuals import mp_coefficients, newton_radius
    from symcluster.verify.core import _separate_roots
    with mpmath.workdps(50):
        cs = mp_coefficients([1, -6, 11, -6], 1)            # (x - 1)(x - 2)(x - 3)
        z = mpmath.mpc(2, mpmath.mpf(10) ** -35)
        rad = newton_radius(cs, z)
        assert abs(z - 2) <= rad < mpmath.mpf("0.5")

        class Lev:
            energy = "E"
            quantum_numbers = {"N": 3}
        ints = ((1, -6, 11, -6), 1)
        ones = [mpmath.mpc(1, 1e-40), z, mpmath.mpf(3)]
        _separate_roots([(Lev, v, ints) for v in ones], {}, {})
        with pytest.raises(VerificationError, match="not distinct roots"):
            _separate_roots([(Lev, v, ints) for v in (z, z + mpmath.mpf(10) ** -40, mpmath.mpf(3))],
                            {}, {})


@pytest.mark.parametrize("ints", [((10 ** 400, -6 * 10 ** 400, 11 * 10 ** 400, -6 * 10 ** 400), 1),
                                  ((1, -6, 11, -6), 10 ** 400),
                                  ((1, -6, 11, -6), 10 ** 310)])
def test_coefficients_beyond_float64_are_separated_at_working_precision(ints):
    # (x - 1)(x - 2)(x - 3) scaled out of the float64 range (overflow, underflow to 0,
    # subnormal): no float64 disks; the working-precision ones accept the three roots and
    # reject a root listed twice
    from symcluster.verify.core import _separate_roots
    with mpmath.workdps(50):

        class Lev:
            energy = "E"
            quantum_numbers = {"N": 3}
        floats = {}
        _separate_roots([(Lev, mpmath.mpf(v), ints) for v in (1, 2, 3)], {}, floats)
        assert floats == {id(ints): None}
        with pytest.raises(VerificationError, match="not distinct roots"):
            _separate_roots([(Lev, mpmath.mpf(v), ints) for v in (1, 1, 3)], {}, {})


def test_roots_that_merge_at_a_point_leave_it_undecided_not_failed():
    # (x - 1)^2 (x - 3) at the point: two distinct closed forms may take the value 1 there
    # (their factor's roots merge on a hypersurface of the couplings); the exact gcd test
    # finds the multiple root and the check is undecided (False) instead of failing
    from symcluster.verify.core import _separate_roots
    with mpmath.workdps(50):

        class Lev:
            energy = "E"
            quantum_numbers = {"N": 3}
        ints = ((1, -5, 7, -3), 1)
        vals = [mpmath.mpf(1), mpmath.mpf(1), mpmath.mpf(3)]
        assert _separate_roots([(Lev, v, ints) for v in vals], {}, {}) is False
        ints = ((1, -6, 11, -6), 1)                 # (x - 1)(x - 2)(x - 3): no excuse
        with pytest.raises(VerificationError, match="not distinct roots"):
            _separate_roots([(Lev, v, ints) for v in vals], {}, {})
        assert _separate_roots([(Lev, mpmath.mpf(v), ints) for v in (1, 2, 3)], {}, {}) is True


def test_two_dimers_at_a_point_with_equal_hoppings_verify():
    # two dimers with hoppings t and t': the N = 4 factor has the roots U +- a(t) +- a(t'),
    # a(x) = sqrt(U^2 + 16 x^2)/2, which merge where t = +-t'.  Seed 859317502 draws the
    # first verification point with t = t' = 65/103: the distinct-roots check is decided
    # at the second point (this seed failed before that rule)
    c = sc.cluster(4, [(0, 1), (2, 3, "tp")])
    spec = sc.solve(sc.hubbard(c), lattice=False, seed=859317502)
    assert spec.n_states == 256
    check = [ch for ch in spec.verification.checks
             if ch["check"].startswith("closed forms of one")][0]
    first = {str(k): v for k, v in check["points"][0].items()}
    assert first["t"] == first["tp"]                # the merging point was used, not redrawn


def test_forms_separated_at_fresh_points_when_every_point_merges():
    # _separate_elsewhere draws further points for a factor whose roots merged at every
    # verification point: real distinct forms pass; a form listed twice fails
    from symcluster.verify.core import _separate_elsewhere
    c = sc.cluster(4, [(0, 1), (2, 3, "tp")])
    spec = sc.solve(sc.hubbard(c), lattice=False, seed=3)
    quartic = [lev for lev in spec.levels
               if lev.polynomial is not None and lev.polynomial.degree(lev.polynomial.gens[0]) == 4]
    poly = quartic[0].polynomial
    group = [(lev, None, None) for lev in quartic if lev.polynomial is poly]
    assert len(group) == 4
    symbols = spec.model.symbols
    with mpmath.workdps(40):
        _separate_elsewhere(group, symbols, 11, 30)
        twice = [group[0], group[0], group[2], group[3]]
        with pytest.raises(VerificationError, match="not distinct roots"):
            _separate_elsewhere(twice, symbols, 11, 30)


def test_next_prime_is_sympys():
    # against sympy.nextprime (an independent implementation), at the 62-bit size used
    from symcluster.verify.core import _next_prime
    rng = random.Random(11)
    for n in [rng.randrange(2 ** 61, 2 ** 62) for _ in range(40)] + [1, 2, 13, 2 ** 61 - 2]:
        assert _next_prime(n) == sympy.nextprime(n)
