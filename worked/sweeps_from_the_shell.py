"""Worked example: tables along a coupling sweep from the command line, read with pandas.

Scenario: for a figure of a two-site molecule (a Hubbard dimer, t = 1) we want every
level of the two-electron sector versus U from 0 to 10, and the specific heat of the
same sector at two temperatures along the same sweep.  The two commands are

    symcluster levels chain 2 --electrons 2 --at t=1 --over U:0:10:21
    symcluster thermo chain 2 --electrons 2 --at t=1 --over U:0:10:21 -T 1/4 1

This script runs them through ``symcluster.cli.main`` (the same as the shell), keeps the
tab-separated tables in an output directory, reads them with pandas, and checks them
against the dimer's closed forms (two-site Hubbard model, textbook result, derived here):
the N = 2 levels are 0 (the triplet), U, and (U +- sqrt(U^2 + 16 t^2))/2.

Run:  python worked/sweeps_from_the_shell.py [output-directory]
"""

import contextlib
import io
from fractions import Fraction
import math
import pathlib
import sys

import pandas

from symcluster.cli import main


def run(argv):
    """Standard output of one command line (exit code 0 required)."""
    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        code = main(argv)
    if code != 0:
        raise SystemExit(f"symcluster {' '.join(argv)} failed with exit code {code}")
    return buf.getvalue()


def main_example(outdir):
    outdir.mkdir(parents=True, exist_ok=True)
    text = run(["levels", "chain", "2", "--electrons", "2", "--at", "t=1",
                "--over", "U:0:10:21"])
    sweep = text[text.index("# every level versus U"):]
    (outdir / "dimer_levels_vs_U.tsv").write_text(sweep)
    levels = pandas.read_csv(outdir / "dimer_levels_vs_U.tsv", sep="\t", comment="#")
    # the swept values are printed exactly (1/2, not 0.5): make them floats for plotting
    levels["U"] = levels["U"].map(lambda s: float(Fraction(str(s))))
    curves = levels.pivot(index="U", columns="level", values="value")
    print(curves.head())
    for u, row in curves.iterrows():
        want = sorted([0.0, u, (u + math.sqrt(u * u + 16)) / 2, (u - math.sqrt(u * u + 16)) / 2])
        assert max(abs(a - b) for a, b in zip(sorted(row), want)) < 1e-10, u

    text = run(["thermo", "chain", "2", "--electrons", "2", "--at", "t=1",
                "--over", "U:0:10:21", "-T", "1/4", "1"])
    (outdir / "dimer_thermo_vs_U.tsv").write_text(text)
    thermo = pandas.read_csv(outdir / "dimer_thermo_vs_U.tsv", sep="\t")
    thermo["U"] = thermo["U"].map(lambda s: float(Fraction(str(s))))
    heat = thermo.pivot(index="U", columns="T", values="specific_heat")
    print(heat.head())
    # the singlet-triplet gap -E_0 = (sqrt(U^2 + 16 t^2) - U)/2 falls from 2t towards
    # 4t^2/U: at T = 1/4 the specific heat peaks where that gap is comparable to T
    peak = heat["1/4"].idxmax()
    gap = (math.sqrt(peak * peak + 16) - peak) / 2
    print(f"C(T = 1/4) is largest at U = {peak:g} of the sweep, where the gap is {gap:.3f}")
    print(f"wrote {outdir / 'dimer_levels_vs_U.tsv'} and {outdir / 'dimer_thermo_vs_U.tsv'}")


if __name__ == "__main__":
    main_example(pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else "worked/out"))
