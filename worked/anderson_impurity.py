"""An Anderson impurity with two bath sites, its bath held at exact values.

Scenario (a demo of our own): a theorist studying the local moment of a small impurity
model wants the levels as exact functions of the impurity level eps_d and the repulsion U
only, with the bath fixed at eps_1 = -1/2, eps_2 = 1/2, V_1 = V_2 = 1/2.  Holding those six
couplings fixed keeps the exact algebra in two variables (all eight symbolic would be far
slower).  Writes worked/out/anderson_impurity.tex; prints the ground level at half filling, at
particle-hole symmetry (eps_d = -U/2) for a few U.

Run:  python worked/anderson_impurity.py       (a few seconds on 2 cores)
"""

import os

import symcluster as sc
from symcluster.export import latex_table, write_text_atomic

HERE = os.path.dirname(os.path.abspath(__file__))
FIXED = {"eps_1": "-1/2", "eps_2": "1/2", "V_1": "1/2", "V_2": "1/2"}

spec = sc.solve(sc.anderson(2), fixed=FIXED)
print("free couplings:", ", ".join(s.name for s in spec.symbols))
print("fixed:", ", ".join(f"{k} = {v}" for k, v in spec.fixed.items()))
print(spec.verification.summary())

half = spec.select(N=3)
for U in ("1", "2", "4", "8"):
    point = {"eps_d": f"-{U}/2", "U": U}
    values = sorted((lev.numeric(point, digits=20), lev) for lev in half)
    e0, ground = values[0]
    print(f"U = {U}: E0(N=3) = {e0}  (S = {ground.quantum_numbers['S']}, degeneracy "
          f"{ground.degeneracy})")

os.makedirs(os.path.join(HERE, "out"), exist_ok=True)
path = os.path.join(HERE, "out", "anderson_impurity.tex")
write_text_atomic(path, latex_table(spec, point={"eps_d": -1, "U": 2}, digits=10,
                                    standalone=True))
print("wrote", path)
