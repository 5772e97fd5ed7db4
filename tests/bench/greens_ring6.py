"""Measure once (not a unit test): ring(6) at half filling, every G_ij(i omega_n) of one
spin for 1,024 Matsubara frequencies at 30 digits, against a float64 numpy Lehmann
computation at the same point in the same run.

    python tests/bench/greens_ring6.py

The numpy side builds the sector matrices (N_up, N_dn) of H from bit masks (its own
Jordan-Wigner signs), diagonalises them with numpy.linalg.eigh, and sums the Lehmann
series in float64 (about 13 digits, uncertified).  Record the result in
docs/performance.md with the machine's load.
"""

import itertools
import os
import sys
import time

# one BLAS thread, so that both sides use one core and the CPU times compare
for _var in ("OPENBLAS_NUM_THREADS", "OMP_NUM_THREADS", "MKL_NUM_THREADS"):
    os.environ.setdefault(_var, "1")

import numpy as np  # noqa: E402

import symcluster as sc  # noqa: E402

L, N, T_U, BETA, N_FREQ = 6, 6, 4, 10, 1024


def numpy_lehmann():
    """Float64 G_ij(i w_n) of spin up at T = 0, N = 6, mu = midpoint (as symcluster)."""
    bonds = [(i, (i + 1) % L) for i in range(L)]

    def states(nu, nd):
        ups = [sum(1 << k for k in c) for c in itertools.combinations(range(L), nu)]
        dns = [sum(1 << k for k in c) for c in itertools.combinations(range(L), nd)]
        return [(u, d) for u in ups for d in dns]

    def sign(u, d, m, spin):
        below = (1 << m) - 1
        n = bin(u & below).count("1") if spin == 0 else bin(u).count("1") + bin(d & below).count("1")
        return -1.0 if n % 2 else 1.0

    def hamiltonian(sts):
        idx = {s: k for k, s in enumerate(sts)}
        h = np.zeros((len(sts), len(sts)))
        for k, (u, d) in enumerate(sts):
            h[k, k] += T_U * bin(u & d).count("1")
            for spin in (0, 1):
                for i, j in bonds:
                    for a, b in ((i, j), (j, i)):
                        w = u if spin == 0 else d
                        if w >> b & 1 and not w >> a & 1:
                            s1 = sign(u, d, b, spin)
                            w2 = w ^ (1 << b)
                            u2, d2 = (w2, d) if spin == 0 else (u, w2)
                            s2 = sign(u2, d2, a, spin)
                            w3 = w2 | (1 << a)
                            new = (w3, d) if spin == 0 else (u, w3)
                            h[idx[new], k] += -1.0 * s1 * s2
        return h, idx

    sec = {}
    for nu, nd in [(3, 3), (4, 3), (2, 3), (3, 4), (2, 4), (4, 2), (3, 2)]:
        sts = states(nu, nd)
        h, idx = hamiltonian(sts)
        e, v = np.linalg.eigh(h)
        sec[nu, nd] = (sts, idx, e, v)
    e0 = {n: min(sec[s][2][0] for s in sec if sum(s) == n) for n in (5, 6, 7)}
    mu = (e0[7] - e0[5]) / 2
    sts, idx, e, v = sec[3, 3]
    g = v[:, 0]          # the ground state is a unique singlet (Lieb's theorem)
    wn = (2 * np.arange(N_FREQ) + 1) * np.pi / BETA
    G = np.zeros((N_FREQ, L, L), dtype=complex)
    for target, dag in (((4, 3), True), ((2, 3), False)):
        tsts, tidx, te, tv = sec[target]
        amp = np.zeros((L, len(tsts)))
        for m in range(L):
            vec = np.zeros(len(tsts))
            for k, (u, d) in enumerate(sts):
                if bool(u >> m & 1) != dag:
                    vec[tidx[(u ^ (1 << m), d)]] += sign(u, d, m, 0) * g[k]
            amp[m] = tv.T @ vec
        om = (te - e[0] - mu) if dag else (e[0] - te - mu)
        K = 1.0 / (1j * wn[:, None] - om[None, :])
        G += np.einsum("np,ip,jp->nij", K, amp, amp)
    return G


def main():
    t0 = time.perf_counter()
    spec = sc.solve(sc.hubbard(sc.ring(L)), electrons=[5, 6, 7])
    t_solve = time.perf_counter() - t0
    t1, c1 = time.perf_counter(), time.process_time()
    gm = sc.greens_matrix(spec, {"t": 1, "U": T_U}, spin="up", N=N, digits=30)
    t_greens, c_greens = time.perf_counter() - t1, time.process_time() - c1
    t2, c2 = time.perf_counter(), time.process_time()
    vals = gm.matsubara(BETA, N_FREQ)
    t_eval, c_eval = time.perf_counter() - t2, time.process_time() - c2
    t3, c3 = time.perf_counter(), time.process_time()
    ref = numpy_lehmann()
    t_numpy, c_numpy = time.perf_counter() - t3, time.process_time() - c3
    dev = max(abs(complex(vals[n][i][j]) - ref[n, i, j])
              for n in range(N_FREQ) for i in range(L) for j in range(L))
    ours = t_greens + t_eval
    print(f"machine: {os.cpu_count()} cores, load {os.getloadavg()[0]:.2f}; python {sys.version.split()[0]}")
    print(f"solve ring(6), N=5..7 (exact levels; not counted): {t_solve:.2f} s")
    cpu = c_greens + c_eval
    print(f"symcluster 30 digits: poles+weights {t_greens:.2f} s ({c_greens:.2f} s CPU), "
          f"1024 x 36 values {t_eval:.2f} s ({c_eval:.2f} s CPU), total {ours:.2f} s "
          f"({cpu:.2f} s CPU); {len(gm.omegas)} poles")
    print(f"numpy float64 Lehmann (sector matrices + eigh + sums): {t_numpy:.2f} s "
          f"({c_numpy:.2f} s CPU)")
    print(f"ratio {ours / t_numpy:.1f}x wall, {cpu / c_numpy:.1f}x CPU; "
          f"max |symcluster - numpy| = {dev:.1e}")


if __name__ == "__main__":
    main()
