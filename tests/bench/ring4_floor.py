#!/usr/bin/env python
"""How much of the 200x ring(4) target is left once the result itself is built: floors, measured.

Usage::

    python tests/bench/ring4_floor.py [--repeat N]

Each line below is measured in a fresh Python subprocess, after imports, so every
figure includes sympy's first-use costs exactly as the headline "cold" figure of
run_bench.py does:

* ``naive``     -- the naive baseline of naive.py: ``Matrix.eigenvals()`` on all 25
  (N_up, N_dn) sectors of ring(4) in the symbols t, U;
* ``symcluster`` -- ``sc.solve(sc.hubbard(sc.ring(4)))``, verification on;
* ``build``     -- rebuilding only the returned energies (sympy expressions) from a
  pickle written by another process: unpickling calls the same sympy constructors
  that any code producing these expressions must call, and nothing else;
* ``evaluate``  -- evaluating those energies once, at one rational point, with
  mpmath at 30 digits (the verification does this at two points).

The budget line is naive / 200.  If ``build`` alone exceeds it, the target cannot be
met by any code that returns the same sympy expressions cold.  Nothing is asserted.
"""

import argparse
import os
import pickle
import statistics
import subprocess
import sys
import tempfile
import time

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
RING4_BONDS = [(i, (i + 1) % 4, "t") for i in range(4)]


def _worker(kind, path):
    """Run one measurement in this (fresh) process and print its seconds."""
    if kind == "naive":
        sys.path.insert(0, HERE)
        import naive
        t0 = time.perf_counter()
        naive.naive_sympy_eigenvals(4, RING4_BONDS, naive.all_sectors(4))
        print(time.perf_counter() - t0)
        return
    import symcluster as sc
    if kind in ("symcluster", "dump"):
        model = sc.hubbard(sc.ring(4))
        t0 = time.perf_counter()
        spec = sc.solve(model)
        dt = time.perf_counter() - t0
        if kind == "dump":
            with open(path, "wb") as fh:
                pickle.dump([lev.energy for lev in spec.levels], fh)
        print(dt)
        return
    with open(path, "rb") as fh:
        raw = fh.read()
    t0 = time.perf_counter()
    energies = pickle.loads(raw)
    dt = time.perf_counter() - t0
    if kind == "build":
        print(dt)
        return
    from symcluster.spectrum import _closed_numeric
    import sympy
    point = {sympy.Symbol("t", real=True): sympy.Rational(3, 7),
             sympy.Symbol("U", real=True): sympy.Rational(11, 5)}
    t0 = time.perf_counter()
    for e in energies:
        _closed_numeric(e, {s: point[s] for s in e.free_symbols}, 30)
    print(time.perf_counter() - t0)


def _measure(kind, path, repeat):
    out = []
    for _ in range(repeat):
        res = subprocess.run([sys.executable, os.path.abspath(__file__), "--worker", kind, path],
                             capture_output=True, text=True, cwd=ROOT, check=True)
        out.append(float(res.stdout.strip().splitlines()[-1]))
    return out


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--repeat", type=int, default=3, help="fresh processes per line (default 3)")
    ap.add_argument("--worker", nargs=2, help=argparse.SUPPRESS)
    args = ap.parse_args()
    if args.worker:
        _worker(*args.worker)
        return
    fd, path = tempfile.mkstemp(suffix=".pkl")
    os.close(fd)
    try:
        _measure("dump", path, 1)
        rows = {k: _measure(k, path, args.repeat)
                for k in ("naive", "symcluster", "build", "evaluate")}
    finally:
        os.unlink(path)
    naive = statistics.median(rows["naive"])
    print(f"ring(4), {args.repeat} fresh processes per line, median (min-max) seconds; "
          f"load {os.getloadavg()[0]:.2f}")
    print("| measured | seconds | share of the 200x budget |")
    print("| --- | --- | --- |")
    budget = naive / 200
    for k, label in (("naive", "naive sympy eigenvals, 25 sectors"),
                     ("symcluster", "symcluster full verified spectrum"),
                     ("build", "rebuilding the 96 returned sympy energies only"),
                     ("evaluate", "one 30-digit evaluation of the 96 energies only")):
        v = rows[k]
        share = "—" if k == "naive" else f"{statistics.median(v) / budget:.1f}×"
        print(f"| {label} | {statistics.median(v):.4f} ({min(v):.4f}-{max(v):.4f}) | {share} |")
    print(f"| budget for 200×: naive / 200 | {budget:.4f} | 1.0× |")
    print(f"ratio naive/symcluster = {naive / statistics.median(rows['symcluster']):.1f}×")


if __name__ == "__main__":
    main()
