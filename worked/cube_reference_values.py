"""Worked example: certified reference energies of the half-filled Hubbard cube.

Scenario: a group testing a new auxiliary-field Monte Carlo code wants numbers it can trust
for the 8-site cube (bipartite, 65536 states) at half filling, N = 8, with t = 1 and
U = 4 and U = 8.  The script

1. solves N = 7, 8, 9 exactly (all blocks, verified; about a minute on 2 cores).
   N = 9 comes from N = 7 through the eta-pseudospin shift;
2. prints, for each U, the half-filled ground level with its quantum numbers, the degree of
   the irreducible polynomial it is a root of, and its value to 40 digits, together with the
   charge gap E0(9) + E0(7) - 2 E0(8);
3. checks one consequence of Shiba's particle-hole transformation on a bipartite cluster
   (H. Shiba, Prog. Theor. Phys. 48, 2171 (1972)): E0(N=9) = E0(N=7) + U at half filling
   shifted by one electron (E_{2L-N} = E_N + U (L - N));
4. writes all levels (N = 7, 8, 9) with their 40-digit values at t = 1, U = 4 to
   cube_n7_n8_n9.json (format in docs/outputs.md).

Run:  python worked/cube_reference_values.py [output-directory]
"""

import pathlib
import sys
import time

import mpmath

import symcluster as sc
from symcluster.analysis import charge_gap, lowest_level
from symcluster.export.jsonio import write_json

DIGITS = 40


def main(outdir):
    outdir = pathlib.Path(outdir)
    outdir.mkdir(parents=True, exist_ok=True)
    model = sc.hubbard(sc.cube())
    start = time.perf_counter()
    spec = sc.solve(model, electrons=[7, 8, 9], digits=DIGITS)
    print(f"solved N = 7, 8, 9 of the cube in {time.perf_counter() - start:.0f} s: "
          f"{len(spec.levels)} levels")
    print(spec.verification.summary())
    for u in (4, 8):
        at = {"t": 1, "U": u}
        ground, e0 = lowest_level(spec, at, digits=DIGITS, N=8)
        lev = ground[0]
        qn = lev.quantum_numbers
        degree = lev.polynomial.degree(lev.polynomial.gens[0])
        print(f"\nU = {u}: half-filled ground level S = {qn['S']}, eta = {qn.get('eta')}, "
              f"irrep {qn.get('irrep')}, degeneracy {sum(l.degeneracy for l in ground)}")
        print(f"  root of an irreducible polynomial of degree {degree} in E")
        print(f"  E0(N=8) = {mpmath.nstr(e0, DIGITS)}")
        gap = charge_gap(spec, 8, at, digits=DIGITS)
        print(f"  charge gap = {mpmath.nstr(gap.value, DIGITS)}")
        _, e7 = lowest_level(spec, at, digits=DIGITS, N=7)
        _, e9 = lowest_level(spec, at, digits=DIGITS, N=9)
        with mpmath.workdps(DIGITS):
            shiba = abs(e9 - (e7 + u))
        print(f"  |E0(9) - E0(7) - U| = {mpmath.nstr(shiba, 3)} (Shiba: exactly 0)")
        if shiba > mpmath.mpf(10) ** (5 - DIGITS):
            raise SystemExit("particle-hole check failed")
    path = outdir / "cube_n7_n8_n9.json"
    write_json(spec, path, point={"t": 1, "U": 4}, digits=DIGITS)
    print(f"\nwrote {path}")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "worked/out")
