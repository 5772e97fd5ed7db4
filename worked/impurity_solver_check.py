"""Validating an impurity solver's output against a certified reference.

Scenario (made up for this example): a group has written a continuous-time impurity
solver and runs it on a two-bath Anderson impurity (eps_d = -1, U = 2, bath levels
eps_1 = -1/2, eps_2 = 1/2, hybridizations V_1 = V_2 = 1/2) at mu = 0 and T = 1/4.  Its
output is the impurity Green's function on the first 32 Matsubara frequencies with
statistical error bars.  Here the "solver output" is simulated: the exact values plus
Gaussian noise of the stated size, and once more with a small systematic error (a wrong
sign convention for the hybridization would show up much more strongly; here a 2 %
underestimate of U is mimicked by a bias in the first frequencies).

Writes worked/out/impurity_ref.json and its CSV tables, worked/out/solver_ok.csv and
worked/out/solver_biased.csv, the comparison plots, and A(omega) of the impurity.

Run:  python worked/impurity_solver_check.py        (about half a minute on 2 cores)
"""

import csv
import io
import os
import random

import symcluster as sc
from symcluster.export import write_texts_atomic
from symcluster.response.compare import compare, comparison_figure
from symcluster.response.plots import plot_spectral
from symcluster.response.reference import build_reference, reference_texts

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "out")
os.makedirs(OUT, exist_ok=True)

FIXED = {"eps_1": "-1/2", "eps_2": "1/2", "V_1": "1/2", "V_2": "1/2"}
POINT = {"eps_d": -1, "U": 2}
spec = sc.solve(sc.anderson(2), fixed=FIXED)
ref = build_reference(spec, POINT, mu=0, temperature="1/4", n_matsubara=32, n_tau=17,
                      temperatures=["1/8", "1/4", "1/2", "1", "2"], digits=15)
write_texts_atomic(reference_texts(ref, os.path.join(OUT, "impurity_ref")))
print("reference written; certificate:", ref["certificate"]["weight_error"],
      "(bound on the spectral weights)")

rng = random.Random(7)


def solver_output(bias=0.0, sigma=2e-4):
    """Simulated solver: reference + Gaussian noise of width sigma (+ a bias at low n)."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["n", "re_G", "re_G_err", "im_G", "im_G_err"])
    for n, _, re_g, im_g in ref["tables"]["matsubara"]["rows"]:
        shift = bias / (1 + int(n))
        w.writerow([n, float(re_g) + rng.gauss(0, sigma) + shift, sigma,
                    float(im_g) + rng.gauss(0, sigma), sigma])
    return buf.getvalue()


for name, text in (("solver_ok", solver_output()), ("solver_biased", solver_output(bias=5e-3))):
    result = compare(ref, text, tolerance=1e-10, sigmas=4)
    print(f"\n{name}:")
    print(result.report(), end="")
    fig = comparison_figure(result)
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100)
    write_texts_atomic([(os.path.join(OUT, name + ".csv"), text)])
    from symcluster.export.files import write_files_atomic
    write_files_atomic([(os.path.join(OUT, name + "_compare.png"), buf.getvalue())])

g = sc.greens_function(spec, POINT, i=0, j=0, mu=0, temperature="1/4", digits=20)
fig = plot_spectral(g, broadening="1/20")
buf = io.BytesIO()
fig.savefig(buf, format="png", dpi=100)
from symcluster.export.files import write_files_atomic  # noqa: E402
write_files_atomic([(os.path.join(OUT, "impurity_spectral.png"), buf.getvalue())])
print("\nimpurity poles (omega, weight):")
for om, wt in g.poles:
    print(f"  {float(om):+.10f}  {float(wt):.10f}")
print("wrote", OUT)
