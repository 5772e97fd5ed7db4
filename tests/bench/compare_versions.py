"""Two versions of symcluster side by side: the same solves, interleaved, in fresh processes.

Usage::

    git worktree add /tmp/sc-old <commit>          # the version to compare against
    python tests/bench/compare_versions.py --old /tmp/sc-old --cases ring6,cube --pairs 3

Each pair runs one case once with the old tree first on ``PYTHONPATH``, then once with this
checkout's, each in a new interpreter (``sc.solve(model)`` with every tier of verification, the
default executor), and records wall and CPU seconds of the solve alone.  The table gives the
median of each side and the ratio new / old; interleaving puts both sides through the same
phases of a shared machine.
"""

import argparse
import json
import os
import statistics
import subprocess
import sys

CASES = {
    "ring6": "sc.hubbard(sc.ring(6))",
    "grid23": "sc.hubbard(sc.grid(2, 3))",
    "cube": "sc.hubbard(sc.cube())",
    "ring8": "sc.hubbard(sc.ring(8))",
    "ladder4": "sc.hubbard(sc.ladder(4))",
}

_CHILD = """
import json, time, resource, symcluster as sc
model = {model}
w0, c0 = time.perf_counter(), time.process_time()
spec = sc.solve(model)
w1, c1 = time.perf_counter(), time.process_time()
children = resource.getrusage(resource.RUSAGE_CHILDREN)
print(json.dumps({{"wall": w1 - w0, "cpu": c1 - c0 + children.ru_utime + children.ru_stime,
                  "levels": len(spec.levels), "states": spec.n_states}}))
"""


def _run(tree, case):
    env = dict(os.environ, PYTHONPATH=tree)
    out = subprocess.run([sys.executable, "-c", _CHILD.format(model=CASES[case])],
                         env=env, capture_output=True, text=True, check=True, cwd=tree)
    return json.loads(out.stdout.strip().splitlines()[-1])


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--old", required=True, help="source tree of the version to compare against")
    ap.add_argument("--cases", default="ring6,cube", help="comma-separated: " + ",".join(CASES))
    ap.add_argument("--pairs", type=int, default=3, help="interleaved (old, new) pairs per case")
    args = ap.parse_args(argv)
    new = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
    rows = []
    for case in args.cases.split(","):
        old_runs, new_runs = [], []
        for _ in range(args.pairs):
            old_runs.append(_run(os.path.abspath(args.old), case))
            new_runs.append(_run(new, case))
        if {r["states"] for r in old_runs} != {r["states"] for r in new_runs}:
            raise SystemExit(f"{case}: the two versions account for different numbers of states")
        mo = statistics.median(r["wall"] for r in old_runs)
        mn = statistics.median(r["wall"] for r in new_runs)
        co = statistics.median(r["cpu"] for r in old_runs)
        cn = statistics.median(r["cpu"] for r in new_runs)
        rows.append((case, mo, mn, mn / mo, co, cn, cn / co))
        print(f"{case}: old {[round(r['wall'], 2) for r in old_runs]} new "
              f"{[round(r['wall'], 2) for r in new_runs]}", flush=True)
    print("| case | old wall (s) | new wall (s) | new/old | old CPU (s) | new CPU (s) | new/old |")
    print("| --- | --- | --- | --- | --- | --- | --- |")
    for case, mo, mn, r, co, cn, rc in rows:
        print(f"| {case} | {mo:.2f} | {mn:.2f} | {r:.2f} | {co:.2f} | {cn:.2f} | {rc:.2f} |")


if __name__ == "__main__":
    main()
