"""Serial catalogue of attractive-U spin towers over small connected graphs (not collected by
pytest; a simple stand-in until the generic catalogue runner takes ``tower_rows``).

For every connected graph of networkx's graph atlas with at most ``--max-sites`` sites
(R. C. Read, R. J. Wilson, An Atlas of Graphs (1998), the order networkx uses), the Hubbard
model is solved with t = 1 and ``symcluster.tower_rows`` decides the spin tower at every
electron number on U in [-20, 0).  One JSON line per (graph, N) goes to the output file;
graphs already in the file are skipped, so an interrupted run resumes.

    python tests/bench/towers_atlas.py --max-sites 5 --out towers_atlas.jsonl
"""

import argparse
import json
import os
import time

import networkx

import symcluster as sc


def graphs(max_sites):
    for k, g in enumerate(networkx.graph_atlas_g()):
        n = g.number_of_nodes()
        if 2 <= n <= max_sites and networkx.is_connected(g):   # one site: no hopping
            yield k, g


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--max-sites", type=int, default=5)
    p.add_argument("--out", default="towers_atlas.jsonl")
    args = p.parse_args()
    done = set()
    if os.path.exists(args.out):
        with open(args.out) as fh:
            done = {json.loads(line)["atlas"] for line in fh if line.strip()}
    start = time.time()
    for k, g in graphs(args.max_sites):
        if k in done:
            continue
        t0 = time.time()
        bonds = [(int(a), int(b)) for a, b in g.edges()]
        cluster = sc.cluster(g.number_of_nodes(), bonds, name=f"atlas{k}")
        spec = sc.solve(sc.hubbard(cluster), fixed={"t": 1})
        rows = sc.tower_rows(spec, "U", (-20, 0), {"t": 1}, kinds=("spin",),
                             closed=(True, False), label=f"atlas{k}")
        lines = []
        for r in rows:
            r.update(atlas=k, sites=g.number_of_nodes(), bonds=bonds,
                     seconds=round(time.time() - t0, 2))
            lines.append(json.dumps(r) + "\n")
        with open(args.out, "a") as fh:       # one graph at a time: resumable
            fh.writelines(lines)
        print(f"atlas {k}: {g.number_of_nodes()} sites, "
              f"{sum(1 for r in rows if r.get('holds'))}/{len(rows)} hold, "
              f"{time.time() - t0:.1f} s", flush=True)
    print(f"total {time.time() - start:.1f} s")


if __name__ == "__main__":
    main()
