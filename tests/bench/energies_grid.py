"""Spectrum.energies over a grid of U against float64 numpy diagonalisation (ring(6)).

Run: ``python tests/bench/energies_grid.py [--points 1000]``.  The reference builds the
49 (N_up, N_down) sectors of the 6-site Hubbard ring from bit strings (Jordan-Wigner
signs, written here and sharing no code with symcluster), keeps one hopping matrix and
one diagonal of double occupancies per sector, and diagonalises t*T + U*D with
numpy.linalg.eigvalsh at every point.  Both run in the same process, one after the other;
the script prints both times, their ratio and the largest deviation.
"""

import argparse
import itertools
import os
import time

# one BLAS thread: on a shared machine threaded LAPACK calls on matrices of a few hundred
# rows are far slower than one thread (measured 1.6 s against 0.1 s per point), which
# would flatter the comparison
os.environ.setdefault("OPENBLAS_NUM_THREADS", "1")
os.environ.setdefault("OMP_NUM_THREADS", "1")

import numpy as np  # noqa: E402

import symcluster as sc  # noqa: E402


def _sector_matrices(L):
    """{(n_up, n_dn): (T, D)}: hopping matrix (t = 1) and double-occupancy diagonal."""
    bonds = [(i, (i + 1) % L) for i in range(L)]
    out = {}
    for nu in range(L + 1):
        for nd in range(L + 1):
            ups = [sum(1 << i for i in c) for c in itertools.combinations(range(L), nu)]
            dns = [sum(1 << i for i in c) for c in itertools.combinations(range(L), nd)]
            states = [(u, d) for u in ups for d in dns]
            index = {s: k for k, s in enumerate(states)}
            T = np.zeros((len(states), len(states)))
            D = np.zeros(len(states))
            for k, (u, d) in enumerate(states):
                D[k] = bin(u & d).count("1")
                for spin in (0, 1):
                    occ = (u, d)[spin]
                    # modes ordered all up, then all down: a down-spin hop passes no up
                    # operator (both are moved together), so only the string between i, j counts
                    for i, j in bonds:
                        for a, b in ((i, j), (j, i)):          # c+_a c_b
                            if occ >> b & 1 and not occ >> a & 1:
                                lo, hi = min(a, b), max(a, b)
                                between = bin(occ & ((1 << hi) - 1) & ~((1 << (lo + 1)) - 1))
                                sign = -1 if between.count("1") % 2 else 1
                                new = occ ^ (1 << a) ^ (1 << b)
                                target = (new, d) if spin == 0 else (u, new)
                                T[index[target], k] += -sign
            out[(nu, nd)] = (T, D)
    return out


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points", type=int, default=1000, help="number of U values (default 1000)")
    ap.add_argument("--umax", type=float, default=20.0, help="U from 0 to this (default 20)")
    args = ap.parse_args(argv)
    us = np.linspace(0.0, args.umax, args.points)
    spec = sc.solve(sc.hubbard(sc.ring(6)))
    spec.energies({"t": 1, "U": us[:2]})          # compile once (not timed)
    t0 = time.perf_counter()
    ours = spec.energies({"t": 1, "U": us})
    t_ours = time.perf_counter() - t0
    mats = _sector_matrices(6)
    t0 = time.perf_counter()
    ref = np.empty((len(us), 4 ** 6))
    for i, u in enumerate(us):
        vals = [np.linalg.eigvalsh(T + u * np.diag(D)) for T, D in mats.values()]
        ref[i] = np.sort(np.concatenate(vals))
    t_ref = time.perf_counter() - t0
    dev = float(np.max(np.abs(ours - ref)))
    print(f"ring(6), {len(us)} values of U in [0, {args.umax}], {len(mats)} sectors")
    print(f"Spectrum.energies: {t_ours:.2f} s; numpy eigvalsh of the sectors: {t_ref:.2f} s; "
          f"ratio {t_ref / t_ours:.1f}x; largest deviation {dev:.1e}")
    return 0 if dev < 1e-10 else 1


if __name__ == "__main__":
    raise SystemExit(main())
