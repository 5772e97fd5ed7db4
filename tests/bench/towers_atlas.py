"""Resumable catalogue of attractive-U spin towers over small connected graphs, one
(graph, N) at a time with a time limit each (not collected by pytest).

For every connected graph of networkx's graph atlas with ``--min-sites`` to ``--max-sites``
sites (R. C. Read, R. J. Wilson, An Atlas of Graphs (1998), the order networkx uses) and
every electron number N, the N sector of the Hubbard model is solved with t = 1 and
``symcluster.tower_rows`` decides the spin tower on U in [-20, 0).  Each (graph, N) runs in
a child process (forked); one that takes longer than ``--timeout`` seconds is stopped and
recorded as undecided ("time limit"), never as a verdict.  One JSON line per (graph, N)
goes to the output file; pairs already there (or done in the catalogue database given by
``--skip-db``) are skipped, so an interrupted run resumes.  ``--retry-undecided`` runs
instead only the pairs whose every line in the output file is a time limit (typically with
a longer ``--timeout``) and appends their new lines; the summary script takes a decided
line over a time limit.

    nice -n 10 python tests/bench/towers_atlas.py --max-sites 6 --timeout 60 --out towers_atlas.jsonl
"""

import argparse
import json
import multiprocessing
import os
import time

import networkx

import symcluster as sc


def graphs(min_sites, max_sites):
    for k, g in enumerate(networkx.graph_atlas_g()):
        n = g.number_of_nodes()
        if max(2, min_sites) <= n <= max_sites and networkx.is_connected(g):
            yield k, g


def _one(k, bonds, n_sites, n, conn):
    cluster = sc.cluster(n_sites, bonds, name=f"atlas{k}")
    spec = sc.solve(sc.hubbard(cluster), fixed={"t": 1}, sectors=[{"N": n}])
    rows = sc.tower_rows(spec, "U", (-20, 0), {"t": 1}, kinds=("spin",),
                         closed=(True, False), label=f"atlas G{k}", n_electrons=[n])
    conn.send(rows)


def _skip_from_db(path):
    """(pairs done, pairs of those whose tower row is a time limit) in a catalogue DB."""
    from symcluster.catalogue import rows
    out, limited = set(), set()
    for r in rows(path, columns=("cluster", "electrons", "status", "reports")):
        if r["status"] == "done":
            key = (int(r["cluster"].split("G")[1]), int(r["electrons"]))
            out.add(key)
            towers = json.loads(r["reports"] or "{}").get("towers", {}).get("rows", [])
            if any("time limit" in row.get("error", "") for row in towers):
                limited.add(key)
    return out, limited


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--min-sites", type=int, default=2)
    p.add_argument("--max-sites", type=int, default=5)
    p.add_argument("--timeout", type=float, default=120)
    p.add_argument("--out", default="towers_atlas.jsonl")
    p.add_argument("--skip-db", default=None)
    p.add_argument("--retry-undecided", action="store_true",
                   help="run only the pairs recorded as time limits in --out")
    p.add_argument("--only", default=None,
                   help="K/M: run only graphs whose atlas index is K modulo M (two runs "
                        "with 0/2 and 1/2 share a machine's two cores)")
    args = p.parse_args()
    decided, undecided = set(), set()
    if os.path.exists(args.out):
        with open(args.out) as fh:
            for r in map(json.loads, fh):
                key = (r["atlas"], r["n_electrons"])
                limited = "time limit" in r.get("error", "")
                (undecided if limited else decided).add(key)
    if args.skip_db:
        in_db, limited = _skip_from_db(args.skip_db)
        decided |= in_db - limited
        undecided |= limited
    undecided -= decided
    done = decided | undecided
    only = tuple(int(x) for x in args.only.split("/")) if args.only else None
    ctx = multiprocessing.get_context("fork")
    start = time.time()
    for k, g in graphs(args.min_sites, args.max_sites):
        bonds = [(int(a), int(b)) for a, b in g.edges()]
        L = g.number_of_nodes()
        if only and k % only[1] != only[0]:
            continue
        for n in range(2 * L + 1):
            if ((k, n) not in undecided) if args.retry_undecided else ((k, n) in done):
                continue
            t0 = time.time()
            recv, send = ctx.Pipe(duplex=False)
            proc = ctx.Process(target=_one, args=(k, bonds, L, n, send))
            proc.start()
            rows = None
            if recv.poll(args.timeout):
                rows = recv.recv()
            proc.join(1)
            if proc.is_alive():
                proc.terminate()
                proc.join()
            if rows is None:
                rows = [{"label": f"atlas G{k}", "n_electrons": n, "kind": "spin",
                         "error": f"time limit: not decided in {args.timeout:g} s"}]
            with open(args.out, "a") as fh:       # one (graph, N) at a time: resumable
                for r in rows:
                    r.update(atlas=k, sites=L, bonds=bonds, seconds=round(time.time() - t0, 2))
                    fh.write(json.dumps(r) + "\n")
            print(f"atlas {k} N={n}: {'hold' if rows[0].get('holds') else rows[0].get('error', 'FAIL')[:40]} "
                  f"{time.time() - t0:.1f} s", flush=True)
    print(f"total {time.time() - start:.1f} s")


if __name__ == "__main__":
    main()
