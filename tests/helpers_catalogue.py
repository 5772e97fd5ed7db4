"""Shared helpers of the catalogue tests (test modules import from here, never from each
other): spec files, a read of the database written here with sqlite3 alone, and an
independent count of connected graphs."""

import itertools
import os
import sqlite3


def write_spec(folder, text, name="spec.toml"):
    """Write a catalogue spec; its path."""
    path = os.path.join(str(folder), name)
    with open(path, "w", encoding="utf-8") as fh:
        fh.write('format = "symcluster-catalogue"\n' + text)
    return path


def table(db, sql, args=()):
    """Rows of ``sql`` on the database at ``db`` (read-only), as dicts."""
    conn = sqlite3.connect(f"file:{os.path.realpath(str(db))}?mode=ro", uri=True, timeout=30)
    try:
        cur = conn.execute(sql, args)
        names = [d[0] for d in cur.description]
        return [dict(zip(names, r)) for r in cur.fetchall()]
    finally:
        conn.close()


def connected_graph_counts(max_nodes):
    """{n: number of connected graphs on n unlabelled nodes}, by brute force: every edge
    set on n labelled nodes, reduced to its smallest relabelling (written here, sharing
    nothing with networkx or symcluster)."""
    out = {}
    for n in range(1, max_nodes + 1):
        pairs = list(itertools.combinations(range(n), 2))
        perms = list(itertools.permutations(range(n)))
        seen = set()
        for mask in range(1 << len(pairs)):
            edges = [pairs[k] for k in range(len(pairs)) if mask >> k & 1]
            if not _connected(n, edges):
                continue
            canon = min(tuple(sorted(tuple(sorted((p[a], p[b]))) for a, b in edges))
                        for p in perms)
            seen.add(canon)
        out[n] = len(seen)
    return out


def _connected(n, edges):
    reach, todo = {0}, [0]
    while todo:
        i = todo.pop()
        for a, b in edges:
            for x, y in ((a, b), (b, a)):
                if x == i and y not in reach:
                    reach.add(y)
                    todo.append(y)
    return len(reach) == n
