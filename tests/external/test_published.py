"""Checks against published results (source named beside each)."""

import functools

import mpmath
import pytest
import sympy

import symcluster as sc
from reference_fock import FockReference


@functools.lru_cache(maxsize=None)
def ring4_half():
    return sc.solve(sc.hubbard(sc.ring(4)), electrons=4)


def _mpq(x):
    x = sympy.Rational(x)
    return mpmath.mpf(int(x.p)) / int(x.q)


# ---------------------------------------------------------------- Heisenberg limit
def test_ring4_heisenberg_ground_state():
    # large U: H_eff = J sum (S_i.S_j - 1/4), J = 4t^2/U (P. W. Anderson, Phys. Rev. 115, 2
    # (1959), from memory; /work/shared/references.md); 4-site ring ground state -> -3J,
    # corrections O(t^4/U^3)
    spec = ring4_half()
    coeff = []
    for uv in (1000, 2000):
        p = spec.point({"t": 1, "U": uv})
        lv = sorted(((l.numeric(p), l) for l in spec.levels), key=lambda x: x[0])
        e0, g = lv[0]
        J = mpmath.mpf(4) / uv
        assert g.quantum_numbers["S"] == 0 and g.degeneracy == 1
        assert abs(e0 + 3 * J) < 1000 / mpmath.mpf(uv) ** 3, f"E0 = {e0}, -3J = {-3 * J}"
        coeff.append((e0 + 3 * J) * uv**3)
    # the remainder is O(t^4/U^3): its coefficient is the same at U = 1000 and 2000 (to 1%)
    assert abs(coeff[0] / coeff[1] - 1) < 0.01, coeff


def test_ring4_heisenberg_low_multiplets():
    # H = J sum S_i.S_{i+1} on a 4-site ring: S=0 at -2J, 0; S=1 at -J, 0, 0; S=2 at +J
    # (textbook exercise, common practice; references.md). With the -J/4 per bond shift
    # (4 bonds: -J): -3J (S=0), -2J (S=1), -J (S=0 and two S=1), 0 (S=2): 16 states.
    spec = ring4_half()
    uv = 1000
    p = spec.point({"t": 1, "U": uv})
    J = mpmath.mpf(4) / uv
    low = sorted(((l.numeric(p), l) for l in spec.levels), key=lambda x: x[0])
    states = []
    for e, l in low:
        if e > J:     # the next states are at energy ~U
            break
        states += [(round(float(e / J)), l.quantum_numbers["S"])] * l.degeneracy
    expected = ([(-3, 0)] + [(-2, 1)] * 3 + [(-1, 0)] + [(-1, 1)] * 6 + [(0, 2)] * 5)
    assert sorted(states) == sorted(expected)


def test_dimer_large_u_expansion():
    # two-site ground state -4t^2/U + 16t^4/U^3 - 128t^6/U^5 + ... (Carrascal, Ferrer, Smith,
    # Burke, J. Phys.: Condens. Matter 27, 393001 (2015); references.md)
    spec = sc.solve(sc.hubbard(sc.chain(2)), electrons=2)
    with mpmath.workdps(40):
        uv = mpmath.mpf(100)
        e0 = spec.numeric({"t": 1, "U": 100}, digits=40)[0][0]
        series = -4 / uv + 16 / uv**3 - 128 / uv**5
        assert abs(e0 - series) < 2000 / uv**7


# ---------------------------------------------------------------- Bethe ansatz
def _lieb_wu(L, N, M, I, J, u, guess):
    """Solve the Lieb-Wu equations (E. H. Lieb, F. Y. Wu, PRL 20, 1445 (1968), from memory):
    L k_j = 2 pi I_j - sum_b 2 atan((sin k_j - lam_b)/u),
    sum_j 2 atan((lam_a - sin k_j)/u) = 2 pi J_a + sum_b 2 atan((lam_a - lam_b)/(2u)).
    Returns (k, lam, max residual)."""
    def eqs(*x):
        k, lam = x[:N], x[N:]
        out = [L * k[j] - 2 * mpmath.pi * I[j]
               + sum(2 * mpmath.atan((mpmath.sin(k[j]) - lb) / u) for lb in lam) for j in range(N)]
        out += [sum(2 * mpmath.atan((lam[a] - mpmath.sin(kj)) / u) for kj in k)
                - 2 * mpmath.pi * J[a]
                - sum(2 * mpmath.atan((lam[a] - lam[b]) / (2 * u)) for b in range(M))
                for a in range(M)]
        return out
    x = mpmath.findroot(eqs, guess)
    x = [x[i] for i in range(N + M)]
    res = max(abs(r) for r in eqs(*x))
    return x[:N], x[N:], res


def _bethe_ground_state(L, uv):
    """Lieb-Wu ground state of the half-filled L-ring: (energy, total momentum / pi).

    Quantum numbers (references.md; E. H. Lieb, F. Y. Wu, PRL 20, 1445 (1968), from memory):
    N = L, M = L/2 down spins; I_j integer if M is even, half-odd if M is odd, the L values
    nearest 0 with the extra one on the positive side; J_a integer if N - M is odd, half-odd
    if N - M is even, the M values nearest 0.  For L = 4 and 6 these are the sets listed in
    references.md.  Summing the first equation over j and using the second (the
    atan((lam_a - lam_b)/2u) terms cancel in pairs) gives the total momentum
    P = sum_j k_j = 2 pi (sum I + sum J) / L (derived here, not quoted).
    """
    M = L // 2
    half_i = M % 2 == 1
    half_j = (L - M) % 2 == 0
    i0 = sympy.Rational(1, 2) if half_i else 0
    I = sorted(sorted((i0 + n for n in range(-L, L + 1)), key=lambda x: (abs(x), -x))[:L])
    j0 = sympy.Rational(1, 2) if half_j else 0
    J = sorted(sorted((j0 + n for n in range(-M, M + 1)), key=lambda x: (abs(x), -x))[:M])
    momentum = (sum(I) + sum(J)) * sympy.Rational(2, L)         # exact, in units of pi
    I, J = [_mpq(i) for i in I], [_mpq(j) for j in J]
    guess = [2 * mpmath.pi * i / L for i in I] + J
    k, lam, res = _lieb_wu(L, L, M, I, J, mpmath.mpf(uv) / 4, guess)
    assert res < mpmath.mpf(10) ** -35, f"Bethe equations not solved: residual {res}"
    return -2 * sum(mpmath.cos(kj) for kj in k), momentum


def _lowest_level(spec, values, digits=30):
    pt = spec.point(values)
    return min(((l.numeric(pt, digits=digits), l) for l in spec.levels), key=lambda x: x[0])


def _same_momentum(k_label, momentum_over_pi):
    """k (a sympy multiple of pi in (-pi, pi]) equals momentum_over_pi * pi modulo 2 pi."""
    return (sympy.nsimplify(k_label / sympy.pi) - momentum_over_pi) % 2 == 0


@pytest.mark.parametrize("L, uv", [(4, 4), (4, 2), (4, 8),
                                   (6, 4), (6, 1),
                                   pytest.param(8, 4, marks=pytest.mark.slow)])
def test_bethe_ansatz_ring_half_filling(L, uv):
    # half-filled L-ring: the Lieb-Wu ground state energy E = -2t sum cos k_j equals the
    # solver's lowest level at 20 digits (for L = 6 and 8 an implicit root of a
    # high-degree factor), that level is a non-degenerate singlet (Lieb 1989, theorem (b),
    # S = 0 on a bipartite ring), and its momentum label is the Bethe state's total momentum
    with mpmath.workdps(40):
        e_ba, momentum = _bethe_ground_state(L, uv)
        spec = ring4_half() if L == 4 else sc.solve(sc.hubbard(sc.ring(L)), electrons=L)
        e0, level = _lowest_level(spec, {"t": 1, "U": uv})
        assert abs(e0 - e_ba) < mpmath.mpf(10) ** -20, f"solver {e0}, Bethe ansatz {e_ba}"
        assert level.quantum_numbers["S"] == 0 and level.degeneracy == 1
        assert _same_momentum(level.quantum_numbers["k"], momentum), (level.quantum_numbers, momentum)
        if L == 4:
            # the Bethe state is the ground state of the independent reference too
            ref = FockReference(4, list(sc.ring(4).bonds))
            assert abs(ref.eigenvalues_mp({"t": 1, "U": uv}, 2, 2, digits=30)[0] - e_ba) < 1e-20


def test_shiba_pincus_dimer_grand_potential():
    # grand partition function of the dimer (H. Shiba, P. A. Pincus, Phys. Rev. B 5, 1966 (1972);
    # closed form from references.md):
    # Xi = 1 + 4 z cosh(bt) + z^2 [3 + e^{-bU} + 2 e^{-bU/2} cosh(b Delta)] + 4 z^3 e^{-bU} cosh(bt)
    #      + z^4 e^{-2bU},  Delta = sqrt(U^2/4 + 4t^2), z = e^{b mu}
    spec = sc.solve(sc.hubbard(sc.chain(2)))
    tv, uv, b, mu = 1, sympy.Rational(5, 2), sympy.Rational(7, 10), sympy.Rational(1, 3)
    pt = spec.point({"t": tv, "U": uv})
    with mpmath.workdps(40):
        B, MU, T, UU = _mpq(b), _mpq(mu), _mpq(tv), _mpq(uv)
        xi = mpmath.mpf(0)
        for l in spec.levels:
            xi += l.degeneracy * mpmath.exp(-B * (l.numeric(pt, digits=40) - MU * l.quantum_numbers["N"]))
        z = mpmath.exp(B * MU)
        D = mpmath.sqrt(UU**2 / 4 + 4 * T**2)
        exp = (1 + 4 * z * mpmath.cosh(B * T)
               + z**2 * (3 + mpmath.exp(-B * UU) + 2 * mpmath.exp(-B * UU / 2) * mpmath.cosh(B * D))
               + 4 * z**3 * mpmath.exp(-B * UU) * mpmath.cosh(B * T) + z**4 * mpmath.exp(-2 * B * UU))
        assert abs(xi - exp) < mpmath.mpf(10) ** -30 * exp


@pytest.mark.parametrize("L", [6, pytest.param(8, marks=pytest.mark.slow)])
def test_bethe_ansatz_ground_sector_by_selection_to_30_digits(L):
    # only the Bethe state's sector is solved: sectors=[{"N": L, "S": 0, "k": P/pi}] (the
    # singlet of Lieb 1989, theorem (b), at the total momentum P of the Lieb-Wu state); its
    # lowest level at t = 1, U = 4 equals E = -2t sum cos k_j (E. H. Lieb, F. Y. Wu, PRL 20,
    # 1445 (1968), from memory) to 30 digits
    with mpmath.workdps(50):
        e_ba, momentum = _bethe_ground_state(L, 4)
        k = sympy.Rational(momentum) % 2
        k = k - 2 if k > 1 else k
        spec = sc.solve(sc.hubbard(sc.ring(L)), sectors=[{"N": L, "S": 0, "k": k}], seed=1)
        assert spec.sectors is not None
        assert all(l.quantum_numbers["S"] == 0 for l in spec.levels)
        e0, level = _lowest_level(spec, {"t": 1, "U": 4}, digits=40)
        assert abs(e0 - e_ba) < mpmath.mpf(10) ** -30, f"solver {e0}, Bethe ansatz {e_ba}"
        ks = level.quantum_numbers["k"]
        assert any(_same_momentum(x, momentum) for x in (ks if isinstance(ks, tuple) else (ks,)))


@pytest.mark.slow
def test_projected_lanczos_on_the_10_ring_half_filled_sector_reaches_the_bethe_energy():
    # the verification tier of sector selections beyond dense reach (symcluster/verify/
    # selected.py): Lanczos on the plain (5, 5) sector of the 10-ring (63,504 states), every
    # vector projected on S = 0, k = 0; its lowest Ritz value is the Lieb-Wu ground state
    # energy (E. H. Lieb, F. Y. Wu, PRL 20, 1445 (1968), from memory) at t = 1, U = 4 to
    # float64 accuracy.  About 30 s.
    from symcluster.blocks.build import plan_symmetries
    from symcluster.blocks.selection import normalise_selection
    from symcluster.lattice.clusters import two_colouring
    from symcluster.verify.large import lowest_ritz_pairs
    from symcluster.verify.plain import sector_matrix
    from symcluster.verify.selected import sector_projector
    with mpmath.workdps(40):
        e_ba, momentum = _bethe_ground_state(10, 4)
    assert momentum % 2 == 0
    model = sc.hubbard(sc.ring(10))
    lattice = plan_symmetries(model).lattice
    cl = model.cluster
    proj = sector_projector(model.space, (5, 5), normalise_selection([{"N": 10, "S": 0, "k": 0}]),
                            lattice, two_colouring(cl.n_sites, cl.neighbours))
    matrix = sector_matrix(model, 5, 5)
    assert matrix.dim == 63504
    (theta, res), *_ = lowest_ritz_pairs(matrix, {"t": sympy.Integer(1), "U": sympy.Integer(4)},
                                         count=2, steps=300, seed=1, project=proj)
    assert res < 1e-8
    assert abs(theta - float(e_ba)) < 1e-10
