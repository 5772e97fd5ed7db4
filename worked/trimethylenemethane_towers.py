"""Worked example: is the triplet of a trimethylenemethane-like π system protected?

Scenario: a four-site π system shaped like trimethylenemethane (a centre bonded to three
outer sites, `star(3)`), modelled as a Hubbard cluster with t = 1.  Hückel theory gives a
doubly degenerate zero-energy level; the chemist's question is whether the triplet ground
state (S = 1 at N = 4) survives every U > 0, and what happens under attraction.

1. Lieb's theorem (E. H. Lieb, Phys. Rev. Lett. 62, 1201 (1989)) predicts S = ||A|-|B||/2 = 1
   at half filling: the theorem report checks the hypotheses and certifies the conclusion on
   0 < U <= 50;
2. the spin tower at N = 4 on [0, oo): E_min(1) < E_min(0)? (no: the ordering from S = 0
   fails because S = 1 is below; from S = 1 on it holds), every crossing exact;
3. the attractive side: the spin tower at every filling on [-20, 0);
4. outputs: LaTeX and JSON reports and a plot of E_min(S) - E_0.

Run:  python worked/trimethylenemethane_towers.py [output-directory]
"""

import pathlib
import sys

import symcluster as sc
from symcluster.export.files import write_files_atomic, write_texts_atomic
from symcluster.theorems.outputs import plot_towers, theorems_json, towers_latex


def main(outdir="."):
    out = pathlib.Path(outdir)
    spec = sc.solve(sc.hubbard(sc.star(3)), fixed={"t": 1})
    print("sublattices:", spec.model.cluster.sublattices())
    print("single-particle levels:", sc.single_particle_levels(sc.star(3)))

    res = sc.theorem_report(spec, "U", (0, 50), {"t": 1}, theorems=["lieb-spin", "nagaoka"])
    for r in res:
        print(f"{r.name}: {r.conclusion}; hypotheses not met: {r.failed_hypotheses or 'none'}")
        for e in r.evidence:
            print("   ", e)

    from_zero = sc.towers(spec, 4, "U", (0, "oo"), {"t": 1})
    from_one = sc.towers(spec, 4, "U", (0, "oo"), {"t": 1}, start=1)
    print("N = 4 tower from S = 0:", from_zero.holds, [str(v.interval) for v in from_zero.violations])
    print("N = 4 tower from S = 1:", from_one.holds)

    rows = sc.tower_rows(spec, "U", (-20, 0), {"t": 1}, kinds=("spin",), closed=(True, False))
    print("attractive U, spin towers:", {r["n_electrons"]: r["holds"] for r in rows})

    rep = sc.towers(spec, 4, "U", (0, 20), {"t": 1})
    import io
    buf = io.BytesIO()
    plot_towers(rep).savefig(buf, format="png")
    write_texts_atomic([(str(out / "tmm_towers.tex"), towers_latex(rep)),
                        (str(out / "tmm_theorems.json"), theorems_json(res))])
    write_files_atomic([(str(out / "tmm_towers.png"), buf.getvalue())])
    print("wrote tmm_towers.tex, tmm_theorems.json, tmm_towers.png")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else ".")
