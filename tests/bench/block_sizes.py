"""Print the table of block sizes before and after each symmetry reduction (docs/symmetry.md).

Usage: python tests/bench/block_sizes.py [names...]   (default: all clusters below)

For each cluster: Fock-space size 4^L, the largest (N_up, N_dn) sector, the
largest block after the lattice projection, after the spin highest-weight
restriction, after the eta lowest-weight restriction (the final block), and
the largest multiplicity of an irreducible representation of the full group
spin x eta x lattice (counted from characters, not constructed), with the
time taken to build the blocks.
"""

import sys
import time

import symcluster as sc
from symcluster.blocks.build import build_blocks, plan_symmetries
from symcluster.hilbert.fock import sector_states
from symcluster.symmetry.lattice import multiplicity

CLUSTERS = {
    "ring4": lambda: sc.ring(4), "tetrahedron": sc.tetrahedron, "chain4": lambda: sc.chain(4),
    "ring6": lambda: sc.ring(6), "grid2x3": lambda: sc.grid(2, 3), "ring8": lambda: sc.ring(8),
    "cube": sc.cube, "ladder2x4": lambda: sc.ladder(4),
}


def largest_multiplicity(plan, L):
    """Largest m(S, eta, Gamma) over all families, from character counts only.

    For a Galois orbit of irreps (irrational characters, e.g. ring(8)) this is
    the multiplicity of ONE member; the solver's block holds the whole orbit.
    """
    cache = {}

    def n(irrep, nu, nd):
        if not (0 <= nu <= L and 0 <= nd <= L):
            return 0
        key = (irrep.label, nu, nd)
        if key not in cache:
            cache[key] = multiplicity(sector_states(L, nu, nd), plan.lattice.group, irrep)
        return cache[key]

    best = 0
    for irrep in plan.lattice.irreps:
        if plan.sublattice_char:
            tgt = [a * b for a, b in zip(irrep.character, plan.sublattice_char)]
            twisted = next(r for r in plan.lattice.irreps if list(r.character) == tgt)
        for nn in range(L + 1):
            for nu in range((nn + 1) // 2, min(nn, L) + 1):
                nd = nn - nu
                m = n(irrep, nu, nd) - n(irrep, nu + 1, nd - 1)
                if plan.sublattice_char:
                    m -= n(twisted, nu - 1, nd - 1) - n(twisted, nu, nd - 2)
                best = max(best, m)
    return best


def main(names):
    print("| cluster | 4^L | group order | largest sector | after lattice | after spin | after η "
          "(largest block) | largest irrep multiplicity (counted) | ratio | build time |")
    print("|---|---|---|---|---|---|---|---|---|---|")
    for name in names:
        c = CLUSTERS[name]()
        model = sc.hubbard(c)
        t0 = time.perf_counter()
        plan = plan_symmetries(model)
        report = []
        blocks = build_blocks(model, plan, report=report)
        dt = time.perf_counter() - t0
        L = c.n_sites
        step = {}
        for r in report:
            for k, v in r["steps"]:
                step[k] = max(step.get(k, 0), v)
        sector = max(r["sector_dim"] for r in report)
        largest = max(len(b.vectors) for b in blocks)
        mult = largest_multiplicity(plan, L)
        print(f"| {c.name} | {4 ** L} | {plan.lattice.group.order} | {sector} | "
              f"{step.get('lattice', '-')} | {step.get('spin', '-')} | {largest} | {mult} | "
              f"{largest / mult:.2f} | {dt:.1f} s |", flush=True)


if __name__ == "__main__":
    main(sys.argv[1:] or list(CLUSTERS))
