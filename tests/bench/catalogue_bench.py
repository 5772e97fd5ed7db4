"""Catalogue of every connected graph with <= N sites x every filling (Hubbard, t and U
symbolic), on the local process pool and through a Dask LocalCluster; the rows compared.

Usage::

    python tests/bench/catalogue_bench.py                 # N = 6, 2 workers each way
    python tests/bench/catalogue_bench.py --max-sites 5 --workers 2 --no-dask

Prints a Markdown table (wall time, tasks, tasks per second, the slowest tasks, whether
the two databases hold identical rows) on standard output; the progress lines of each run
go to standard error.  The databases are written to a temporary folder (``--keep`` keeps
it).  Wall times on a shared machine move with its load: report the load beside them.
"""

import argparse
import os
import sys
import tempfile
import time

import symcluster as sc
from symcluster.catalogue import rows
from symcluster.catalogue.spec import catalogue_tasks


def spec(max_sites):
    return {"format": "symcluster-catalogue", "name": f"connected graphs <= {max_sites} sites",
            "clusters": {"atlas": max_sites}, "fillings": "all",
            "reports": ["levels", "ground", "gaps"], "point": {"t": 1, "U": 4}}


def _load():
    try:
        return " / ".join(f"{x:.2f}" for x in os.getloadavg())
    except OSError:
        return "?"


def _run(label, s, db, **kw):
    load0 = _load()
    t0 = time.perf_counter()
    run = sc.run_catalogue(s, db=db, progress=True, **kw)
    wall = time.perf_counter() - t0
    print(f"{label}: {run.summary()} in {wall:.1f} s", file=sys.stderr, flush=True)
    return run, wall, load0, _load()


def main(argv=None):
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--max-sites", type=int, default=6)
    p.add_argument("--workers", type=int, default=2)
    p.add_argument("--no-dask", action="store_true")
    p.add_argument("--keep", action="store_true")
    p.add_argument("--folder", help="use (and keep) the databases in this folder: a run "
                                    "stopped before resumes there")
    args = p.parse_args(argv)
    folder = args.folder or tempfile.mkdtemp(prefix="catalogue-bench-")
    args.keep = args.keep or bool(args.folder)
    s = spec(args.max_sites)
    tasks = catalogue_tasks(s)
    print(f"{len(tasks)} tasks; databases in {folder}", file=sys.stderr, flush=True)
    results = []
    local_db = os.path.join(folder, "local.db")
    results.append(("local process pool", *_run("local", s, local_db, workers=args.workers)))
    if not args.no_dask:
        from symcluster.catalogue.engines import dask_executor
        dask_db = os.path.join(folder, "dask.db")
        t0 = time.perf_counter()
        with dask_executor(n_workers=args.workers) as ex:
            up = time.perf_counter() - t0
            results.append((f"Dask LocalCluster (start {up:.1f} s)",
                            *_run("dask", s, dask_db, executor=ex)))
    print(f"| executor ({args.workers} workers) | tasks | run now | failed | wall s "
          f"| tasks/s | load before | load after |")
    print("| --- | --- | --- | --- | --- | --- | --- | --- |")
    for label, run, wall, l0, l1 in results:
        print(f"| {label} | {run.tasks} | {run.ran} | {run.failed} | {wall:.1f} "
              f"| {run.ran / wall:.2f} | {l0} | {l1} |")
    runs = __import__("sqlite3").connect(local_db).execute(
        "SELECT run_id, started, finished, outcome, tasks_run FROM runs").fetchall()
    print("\nruns of the local database: " + "; ".join(
        f"{r[0]}: {r[1]} to {r[2]}, {r[3]}, {r[4]} tasks" for r in runs))
    local = rows(local_db)
    if not args.no_dask:
        same = local == rows(dask_db)
        print(f"\nrows identical (local pool vs Dask): {same}")
    timed = rows(local_db, ("cluster", "electrons", "seconds", "n_sites"))
    by_size = {}
    for r in timed:
        by_size.setdefault(r["n_sites"], []).append(r["seconds"] or 0.0)
    print("\n| sites | tasks | sum of task seconds | slowest task s |")
    print("| --- | --- | --- | --- |")
    for n, secs in sorted(by_size.items()):
        print(f"| {n} | {len(secs)} | {sum(secs):.1f} | {max(secs):.2f} |")
    slow = sorted(timed, key=lambda r: -(r["seconds"] or 0))[:5]
    print("\nslowest tasks: " + "; ".join(f"{r['cluster']} N={r['electrons']} "
                                          f"{r['seconds']:.2f} s" for r in slow))
    if not args.keep:
        for name in os.listdir(folder):
            os.remove(os.path.join(folder, name))
        os.rmdir(folder)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
