"""Partition functions and thermodynamic tables (symcluster.analysis.thermo)."""

import mpmath
import pytest
import sympy

from symcluster.analysis import high_temperature_series, partition_function, thermo_table
from symcluster.analysis.analysis_latex import latex_thermo_table
from symcluster.errors import ModelError
from helpers_two_site import U, fock_hamiltonian, t, two_site_spectrum

beta, mu, h = sympy.symbols("beta mu h", real=True)


def _shiba_pincus():
    # H. Shiba, P. A. Pincus, Phys. Rev. B 5, 1966 (1972): two-site grand partition function
    D = sympy.sqrt(U ** 2 / 4 + 4 * t ** 2)
    b = beta
    return (1 + 4 * sympy.exp(b * mu) * sympy.cosh(b * t)
            + sympy.exp(2 * b * mu) * (3 + sympy.exp(-b * U) + 2 * sympy.exp(-b * U / 2)
                                       * sympy.cosh(b * D))
            + 4 * sympy.exp(b * (3 * mu - U)) * sympy.cosh(b * t) + sympy.exp(b * (4 * mu - 2 * U)))


def test_grand_partition_function_equals_closed_form():
    Z, names = partition_function(two_site_spectrum(), beta=beta, mu=mu, h=0)
    assert names == {}
    ref = _shiba_pincus()
    for pt in ({beta: 1, mu: 0, t: 1, U: 4}, {beta: sympy.Rational(3, 7), mu: 2, t: -1, U: 1},
               {beta: 2, mu: sympy.Rational(-1, 3), t: sympy.Rational(1, 2), U: -3}):
        assert abs(sympy.N((Z - ref).subs(pt), 40)) < 1e-35


def test_half_filling_at_mu_u_over_2_and_high_t_entropy():
    # particle-hole symmetry: <N> = 2 at mu = U/2 for every T (common practice, no source);
    # entropy -> ln 16 as T -> oo.
    rows = thermo_table(two_site_spectrum(), {"t": 1, "U": 4}, [sympy.Rational(1, 5), 1, 7],
                        mus=[2], digits=30)
    for r in rows:
        assert abs(r["density"] - 2) < mpmath.mpf(10) ** -28
    hot = thermo_table(two_site_spectrum(), {"t": 1, "U": 4}, [10 ** 8], mus=[2])[0]
    assert abs(hot["entropy"] - mpmath.log(16)) < 1e-12


def _numeric_fock_rows(T, mu_val, h_val, u_val, digits):
    """Independent: mpmath diagonalisation of every (N↑, N↓) block of the two-site H."""
    with mpmath.workdps(digits + 15):
        b = 1 / mpmath.mpf(T)
        terms = []
        for nu in range(3):
            for nd in range(3):
                _, H = fock_hamiltonian(2, [(0, 1)], mpmath.mpf(1), mpmath.mpf(u_val), nu, nd)
                _, V = fock_hamiltonian(2, [(0, 1)], mpmath.mpf(0), mpmath.mpf(1), nu, nd)
                ev, Q = mpmath.eigsy(mpmath.matrix(H))
                Vm = mpmath.matrix(V)
                for k in range(len(H)):
                    vec = Q[:, k]
                    docc = (vec.T * Vm * vec)[0]
                    terms.append((ev[k], nu + nd, nu - nd, docc))
        ks = [e - mu_val * n - h_val * m for e, n, m, _ in terms]
        ws = [mpmath.exp(-b * k) for k in ks]
        Z = mpmath.fsum(ws)
        avg = lambda f: mpmath.fsum(w * f(i) for i, w in enumerate(ws)) / Z  # noqa: E731
        kav = avg(lambda i: ks[i])
        mag = avg(lambda i: terms[i][2])
        return {"energy": avg(lambda i: terms[i][0]), "entropy": mpmath.log(Z) + b * kav,
                "specific_heat": b ** 2 * (avg(lambda i: ks[i] ** 2) - kav ** 2),
                "double_occupancy": avg(lambda i: terms[i][3]), "density": avg(lambda i: terms[i][1]),
                "magnetization": mag, "susceptibility": b * (avg(lambda i: terms[i][2] ** 2) - mag ** 2)}


@pytest.mark.parametrize("T,mu_val,h_val", [(sympy.Rational(1, 2), 1, sympy.Rational(1, 3)),
                                            (3, sympy.Rational(-1, 2), 0)])
def test_table_against_independent_numeric_sum(T, mu_val, h_val):
    rows = thermo_table(two_site_spectrum(), {"t": 1, "U": 3}, [T], mus=[mu_val], h=h_val,
                        digits=30)
    ref = _numeric_fock_rows(T, mu_val, h_val, 3, 30)
    with mpmath.workdps(30):
        for key, val in ref.items():
            assert abs(rows[0][key] - val) < mpmath.mpf(10) ** -25 * (1 + abs(val)), key


def test_canonical_sector():
    row = thermo_table(two_site_spectrum(), {"t": 1, "U": 4}, [1], n_electrons=2)[0]
    assert abs(row["density"] - 2) < 1e-25
    Z, _ = partition_function(two_site_spectrum(), 2, beta=beta, h=0)
    D = sympy.sqrt(U ** 2 / 4 + 4 * t ** 2)
    ref = 3 + sympy.exp(-beta * U) + 2 * sympy.exp(-beta * U / 2) * sympy.cosh(beta * D)
    assert abs(sympy.N((Z - ref).subs({beta: 1, t: 1, U: 2}), 30)) < 1e-25


def test_high_temperature_series_against_traces():
    # ln Ξ = ln 16 - β<K> + β²/2 (<K²> - <K>²) - ...: moments as traces of the independent
    # Fock matrix, K = H - μN - h(N↑ - N↓), computed here with sympy.
    logD, c = high_temperature_series(two_site_spectrum(), order=3, mu=mu, h=h)
    assert logD == sympy.log(16)
    diag = []
    for nu in range(3):
        for nd in range(3):
            _, H = fock_hamiltonian(2, [(0, 1)], t, U, nu, nd)
            M = sympy.Matrix(H) - (mu * (nu + nd) + h * (nu - nd)) * sympy.eye(len(H))
            diag.append(M)
    tr = [sympy.expand(sum((M ** k).trace() for M in diag)) / 16 for k in range(4)]
    k1, k2 = tr[1], tr[2] - tr[1] ** 2
    k3 = tr[3] - 3 * tr[2] * tr[1] + 2 * tr[1] ** 3
    assert sympy.expand(c[0] + k1) == 0
    assert sympy.expand(c[1] - k2 / 2) == 0
    assert sympy.expand(c[2] + k3 / 6) == 0


def test_zeeman_needs_spin_labels_and_latex():
    spec = two_site_spectrum()
    spec.levels[0].quantum_numbers.pop("S")
    with pytest.raises(ModelError, match="Zeeman"):
        thermo_table(spec, {"t": 1, "U": 4}, [1], h=1)
    rows = thermo_table(two_site_spectrum(), {"t": 1, "U": 4}, [1, 2], mus=[0, 2])
    tex = latex_thermo_table(rows)
    body = tex.split(r"\endlastfoot", 1)[1]
    assert body.count(r"\\") == 4 and r"\bottomrule" in tex


def test_four_site_ring_half_filling_against_independent_sum():
    # The solver's 4-site ring at N = 4 versus mpmath diagonalisation of every (N↑, N↓)
    # block of an independently built Fock Hamiltonian, to 25 digits.
    import symcluster as sc
    spec = sc.solve(sc.hubbard(sc.ring(4)))
    bonds = [(0, 1), (1, 2), (2, 3), (3, 0)]
    u_val, T, h_val = 4, sympy.Rational(1, 2), sympy.Rational(1, 5)
    rows = thermo_table(spec, {"t": 1, "U": u_val}, [T], n_electrons=4, h=h_val, digits=30)
    with mpmath.workdps(45):
        b, hh = 1 / mpmath.mpf(T), mpmath.mpf(1) / 5
        terms = []
        for nu in range(5):
            nd = 4 - nu
            _, H = fock_hamiltonian(4, bonds, mpmath.mpf(1), mpmath.mpf(u_val), nu, nd)
            _, V = fock_hamiltonian(4, bonds, mpmath.mpf(0), mpmath.mpf(1), nu, nd)
            ev, Q = mpmath.eigsy(mpmath.matrix(H))
            Vm = mpmath.matrix(V)
            for k in range(len(H)):
                terms.append((ev[k], nu - nd, (Q[:, k].T * Vm * Q[:, k])[0]))
        ks = [e - hh * m for e, m, _ in terms]
        ws = [mpmath.exp(-b * k) for k in ks]
        Z = mpmath.fsum(ws)
        avg = lambda f: mpmath.fsum(w * f(i) for i, w in enumerate(ws)) / Z  # noqa: E731
        kav, mag = avg(lambda i: ks[i]), avg(lambda i: terms[i][1])
        ref = {"energy": avg(lambda i: terms[i][0]), "entropy": mpmath.log(Z) + b * kav,
               "specific_heat": b ** 2 * (avg(lambda i: ks[i] ** 2) - kav ** 2),
               "double_occupancy": avg(lambda i: terms[i][2]),
               "susceptibility": b * (avg(lambda i: terms[i][1] ** 2) - mag ** 2)}
        for key, val in ref.items():
            assert abs(rows[0][key] - val) < mpmath.mpf(10) ** -25 * (1 + abs(val)), key


def test_numpy_temperatures_mean_their_decimal():
    # numpy numbers (e.g. from numpy.linspace) are read like Python ones: T = 0.5 is 1/2
    import numpy as np
    spec = two_site_spectrum()
    ref = thermo_table(spec, {"t": 1, "U": 4}, [sympy.Rational(1, 2)], n_electrons=2)[0]
    for T in (np.float64(0.5), np.float32(0.5), 0.5):
        row = thermo_table(spec, {"t": np.int64(1), "U": 4}, [T], n_electrons=2)[0]
        assert row["energy"] == ref["energy"] and row["entropy"] == ref["entropy"]
