"""Worked example: solve a model file and write a LaTeX table.

Scenario: a frustrated spin ring.  worked/heisenberg_j1j2.toml describes the spin-1/2 ring of
six sites with nearest-neighbour exchange J1 and next-nearest-neighbour exchange J2.  We want
every level as a formula in J1 and J2, the values at the Majumdar-Ghosh point J2 = J1/2,
where two dimer-singlet coverings are exact ground states with E = -3 J1 L / 8 = -9/4
(C. K. Majumdar, D. K. Ghosh, J. Math. Phys. 10, 1388 (1969), from memory), and a LaTeX table.

Run:  python worked/model_file_table.py      (writes worked/out/j1j2.tex; about a second)
"""

import os

import symcluster as sc
from symcluster.export import format_table, latex_table
from symcluster.export.jsonio import write_text_atomic

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "out")
POINT = {"J1": 1, "J2": "1/2"}


def main():
    model, fixed = sc.load_model_file(os.path.join(HERE, "heisenberg_j1j2.toml"))
    print(model.describe())
    spec = sc.solve(model)
    print(format_table(spec, point=POINT, digits=12))

    values = [(lev.numeric(POINT, digits=30), lev) for lev in spec.levels]
    e0 = min(v for v, _ in values)
    ground = [lev for v, lev in values if abs(v - e0) < 1e-25]
    # at J2 = J1/2 two levels of different momentum meet: the two dimer coverings
    print(f"ground energy {e0} ({sum(lev.degeneracy for lev in ground)} states):")
    for lev in ground:
        print("  ", lev.quantum_numbers, "E =", lev.energy)

    os.makedirs(OUT, exist_ok=True)
    path = os.path.join(OUT, "j1j2.tex")
    write_text_atomic(path, latex_table(spec, point=POINT, digits=12, standalone=True))
    print("wrote", path)


if __name__ == "__main__":
    main()
