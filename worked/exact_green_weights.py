"""Closed-form Lehmann poles and weights of small clusters, for a paper's appendix.

Scenario (made up for this example): a group uses the half-filled four-site ring as the
cluster of a cluster-perturbation calculation and wants its momentum-resolved Green's
function at t = 1, U = 4 in closed form: every pole omega_p and weight w_p of
G(k) = sum_p w_p / (z - omega_p), k = 0 and k = pi, as exact numbers, plus a LaTeX table.
The half-filled dimer is printed first as a check a reader can do by hand
(weights (1 -+ 2t/D)/4, D = sqrt(U^2/4 + 4 t^2)).

Every number printed passed the certification of symcluster.greens_function and the
comparison of the exact route with the certified weights (docs/greens.md, "Exact
weights").

Run:  python worked/exact_green_weights.py        (a few seconds)
"""

import os

import sympy

import symcluster as sc
from symcluster.export import write_texts_atomic

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "out")
os.makedirs(OUT, exist_ok=True)

dimer = sc.solve(sc.hubbard(sc.chain(2)))
g = sc.greens_function(dimer, {"t": 1, "U": 4}, i=0, j=0, N=2, digits=30)
print("dimer, N = 2, G_11:")
for (om, w), (ex_om, ex_w) in zip(g.poles, g.exact_poles):
    print(f"  omega = {str(ex_om):>16}   weight = {str(ex_w):>16}   ({float(w):.12f})")

ring = sc.solve(sc.hubbard(sc.ring(4)))
gm = sc.greens_matrix(ring, {"t": 1, "U": 4}, N=4, digits=30)
rows = []
for m, label in ((0, "0"), (2, r"\pi")):
    gk = gm.momentum(m)
    print(f"\nring(4), N = 4, k = {label}: {len(gk.poles)} poles")
    for (om, w), (ex_om, ex_w) in zip(gk.poles, gk.exact_poles):
        print(f"  omega = {float(om):+.12f}   weight = {float(w):.12f}   exact: {ex_w}")
        rows.append(f"${label}$ & ${sympy.latex(ex_om)}$ & ${sympy.latex(ex_w)}$ \\\\")

table = "\n".join([r"\begin{tabular}{lll}", r"\toprule",
                   r"$k$ & $\omega_p$ & $w_p$ \\", r"\midrule", *rows,
                   r"\bottomrule", r"\end{tabular}", ""])
path = os.path.join(OUT, "ring4_green_weights.tex")
write_texts_atomic([(path, table)])
print("\nwrote", path)
