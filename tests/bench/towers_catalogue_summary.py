"""Summary of an attractive-U tower catalogue (not collected by pytest).

Reads the rows written by ``symcluster catalogue worked/catalogues/attractive_towers.toml``
(a database) and, optionally, the JSON lines of ``tests/bench/towers_atlas.py``, and prints, by number of sites, how many (graph, N) pairs hold the spin tower, fail it, or
could not be decided, the failures with their crossing points, and the summed task time.

    python tests/bench/towers_catalogue_summary.py worked/catalogues/attractive_towers.db [atlas.jsonl]
    python tests/bench/towers_catalogue_summary.py atlas_0.jsonl atlas_1.jsonl   # lines only
"""

import json
import sys
from collections import Counter

from symcluster.catalogue import rows


def _jsonl(path):
    """One row per (graph, N): the first decided line, else the first line (a time limit;
    ``towers_atlas.py --retry-undecided`` appends later attempts)."""
    best = {}
    with open(path) as fh:
        for line in fh:
            r = json.loads(line)
            key = (r["atlas"], r["n_electrons"])
            old = best.get(key)
            if old is None or ("error" in old and "error" not in r):
                best[key] = r
    for r in best.values():
        yield {"cluster": f"atlas G{r['atlas']}", "n_sites": r["sites"],
               "electrons": r["n_electrons"], "status": "done", "error": None,
               "seconds": r["seconds"], "reports": json.dumps({"towers": {"rows": [r]}})}


def main(path, *more):
    counts, seconds, failures, errors = Counter(), Counter(), [], []
    status = Counter()
    if path.endswith(".jsonl"):                 # JSON lines only, one or more files
        source = [r for p in (path,) + more for r in _jsonl(p)]
        extra = None
    else:
        source = list(rows(path, columns=("cluster", "n_sites", "electrons", "status",
                                          "reports", "error", "seconds")))
        extra = more[0] if more else None
    if extra:
        done = {(r["cluster"], r["electrons"]) for r in source if r["status"] == "done"}
        source = [r for r in source if r["status"] == "done"] + \
            [r for r in _jsonl(extra) if (r["cluster"], r["electrons"]) not in done]
    for r in source:
        status[r["status"]] += 1
        if r["status"] != "done":
            if r["status"] == "failed":
                errors.append((r["cluster"], r["electrons"], (r["error"] or "")[:120]))
            continue
        seconds[r["n_sites"]] += r["seconds"] or 0
        for row in json.loads(r["reports"])["towers"]["rows"]:
            if "error" in row:
                counts[(r["n_sites"], "undecided")] += 1
                errors.append((r["cluster"], r["electrons"], row["error"][:120]))
            elif row["holds"]:
                counts[(r["n_sites"], "hold")] += 1
            else:
                counts[(r["n_sites"], "fail")] += 1
                failures.append((r["cluster"], r["electrons"], row["crossings"],
                                 [(v["value"], v["next_value"], v["verdict"],
                                   v["interval"]["lower"], v["interval"]["upper"])
                                  for v in row["violations"]]))
    print("tasks:", dict(status))
    for n in sorted({k[0] for k in counts}):
        print(f"{n} sites: hold {counts[(n, 'hold')]}, fail {counts[(n, 'fail')]}, "
              f"undecided {counts[(n, 'undecided')]}; task time {seconds[n]:.0f} s")
    print("total: hold", sum(v for k, v in counts.items() if k[1] == "hold"),
          "fail", sum(v for k, v in counts.items() if k[1] == "fail"),
          "undecided", sum(v for k, v in counts.items() if k[1] == "undecided"))
    for f in failures:
        print("FAIL", *f)
    for e in errors:
        print("ERROR", *e)


if __name__ == "__main__":
    main(*sys.argv[1:])
