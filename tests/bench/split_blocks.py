"""Galois splitting of merged momentum blocks: split against unsplit, in one run.

Usage::

    python tests/bench/split_blocks.py --ring 8 --electrons 8 --blocks 3

Builds the blocks of a Hubbard ring (t and U symbolic) for the given electron numbers, takes
the largest blocks that carry a splitting operator (docs/performance.md, "Galois
splitting"), and times the exact characteristic polynomial of each twice in this process:
once as built (split into its conjugate parts) and once with the operator removed.  Prints
the two times, their ratio and whether the polynomials agree (they must).
"""

import argparse
import time

import symcluster as sc
from symcluster.algebra.block import LinearBlock
from symcluster.algebra.charpoly import charpoly_dict
from symcluster.blocks.build import build_blocks, plan_symmetries


def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--ring", type=int, default=8, help="ring size (default 8)")
    ap.add_argument("--electrons", type=int, nargs="+", default=[8],
                    help="electron numbers whose blocks are built (default 8)")
    ap.add_argument("--blocks", type=int, default=3, help="how many of the largest (default 3)")
    args = ap.parse_args()
    model = sc.hubbard(sc.ring(args.ring))
    plan = plan_symmetries(model)
    blocks = [b for b in build_blocks(model, plan, electrons=args.electrons)
              if b.block.centre is not None]
    blocks.sort(key=lambda b: -b.block.dim)
    print("| block | dim | degree of f | split (s) | unsplit (s) | unsplit / split | equal |")
    print("| --- | --- | --- | --- | --- | --- | --- |")
    for b in blocks[:args.blocks]:
        names = b.block.names()
        t0 = time.perf_counter()
        split = charpoly_dict(b.block, names)
        t1 = time.perf_counter()
        plain = charpoly_dict(LinearBlock(b.block.dim, b.block.terms, b.block.integral), names)
        t2 = time.perf_counter()
        print(f"| {b.sector} {b.labels.get('irrep')} | {b.block.dim} | {len(b.block.centre[0]) - 1} "
              f"| {t1 - t0:.2f} | {t2 - t1:.2f} | {(t2 - t1) / (t1 - t0):.2f} | {split == plain} |")


if __name__ == "__main__":
    main()
