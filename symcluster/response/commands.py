"""The command-line subcommands ``reference`` and ``compare`` (added by symcluster.cli).

``symcluster reference ring 4 --at t=1,U=4 --n 4 --output ring4`` writes ``ring4.json``
(schema: symcluster/response/reference.schema.json) and ``ring4_<table>.csv``.
``symcluster compare ring4.json theirs.csv`` compares a numerical code's results with it:
exit status 0 when every quantity passes, 1 when one fails, 2 on bad input.
"""

import io
import pathlib

from symcluster.errors import InputError

__all__ = ["add_commands", "REFERENCE_HELP", "COMPARE_HELP"]

REFERENCE_HELP = """\
Write certified reference values of a model at one exact point: a JSON file (model,
conventions, certificate, poles and tables; its JSON Schema is
symcluster/response/reference.schema.json) and CSV tables STEM_thermo.csv (T, energy,
specific_heat, susceptibility, double_occupancy), STEM_matsubara.csv (n, omega_n, re_G,
im_G) and STEM_tau.csv (tau, G) for G_ij of one spin.

The ensemble: --n N alone is the ground state of N electrons (T = 0); add --temperature
for the canonical ensemble; --mu alone is grand canonical (with --temperature, or its
T = 0 limit).  At T = 0 the Matsubara and imaginary-time grids use --beta (default 10).
Excitation energies are measured from mu (default for a fixed N: the midpoint of the
addition and removal energies).  All values carry --digits certified digits.

examples:
  symcluster reference chain 2 --at t=1,U=4 --n 2 --temperatures 0.1:2:20 --output dimer
  symcluster reference --family anderson 2 --at eps_d=-1,U=2,eps_1=0,V_1=1,eps_2=1,V_2=1 \\
      --mu 0 --temperature 1/4 --output impurity
"""

COMPARE_HELP = """\
Compare a numerical code's CSV with a reference written by 'symcluster reference'.  The
CSV header names a key column (T, n or tau) and value columns of that reference table
(e.g. n,re_G,im_G), each optionally with an error bar column NAME_err.  A quantity
passes when every row has |theirs - reference| <= --tolerance, or <= --sigmas error
bars.  Prints a table, writes a plot of theirs against the reference with residuals
(--plot, default THEIRS_compare.png), and exits with 0 (pass), 1 (a quantity failed) or
2 (bad input: unreadable files, missing or unknown columns, keys not in the reference).

example:
  symcluster compare dimer.json my_solver.csv --tolerance 1e-6
"""


def _parse_grid(text):
    """'0.1:2:20' (start:stop:count, equally spaced, exact) or '0.1,0.5,1' -> list of str."""
    from fractions import Fraction
    from symcluster.parsing import parse_number
    text = text.strip()
    if ":" in text:
        parts = text.split(":")
        if len(parts) != 3:
            raise InputError(f"--temperatures {text}: write start:stop:count, e.g. 0.1:2:20")
        a, b = (Fraction(parse_number(p, "--temperatures")) for p in parts[:2])
        try:
            n = int(parts[2])
        except ValueError:
            raise InputError(f"--temperatures {text}: count {parts[2]!r} is not an integer") from None
        if not 2 <= n <= 10000:
            raise InputError(f"--temperatures {text}: count must be 2..10000")
        return [a + (b - a) * k / (n - 1) for k in range(n)]
    return [Fraction(parse_number(p, "--temperatures")) for p in text.split(",") if p.strip()]


def add_commands(subparsers, parents, build_model, solve, parse_point):
    """Add ``reference`` and ``compare`` to an argparse subparsers object.

    ``build_model(args) -> (model, fixed)``, ``solve(model, electrons, fixed=...)`` and
    ``parse_point(text, option)`` come from the main command line.
    """
    import argparse
    p = subparsers.add_parser("reference", help="write certified reference values (JSON + CSV)",
                              description=REFERENCE_HELP, parents=list(parents),
                              formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--at", required=True, metavar="NAME=VALUE,...",
                   help="the exact point, every free coupling (e.g. t=1,U=4)")
    p.add_argument("--n", type=int, metavar="N", dest="n_electrons",
                   help="electron number (T = 0 or canonical)")
    # one value, but nargs=1: the main parser joins '--x -1' into '--x=-1' only for the
    # one-value options of every subcommand, and thermo's --mu takes a list
    p.add_argument("--mu", metavar="MU", nargs=1,
                   help="chemical potential (grand canonical without --n); write a "
                        "negative fraction as --mu=-1/2")
    p.add_argument("--temperature", metavar="T", help="temperature of the Green's function")
    p.add_argument("--beta", metavar="BETA", help="beta of the grids at T = 0 (default 10)")
    p.add_argument("--temperatures", metavar="GRID", default="",
                   help="thermodynamic table: start:stop:count or a list a,b,c")
    p.add_argument("--element", metavar="I,J", default="0,0",
                   help="modes of G_ij (mode = site x orbitals + orbital; default 0,0)")
    p.add_argument("--spin", default="up", choices=["up", "down"],
                   help="spin of the Green's function element (default up)")
    p.add_argument("--matsubara", type=int, default=64, metavar="COUNT",
                   help="number of Matsubara frequencies (default 64)")
    p.add_argument("--tau", type=int, default=33, metavar="COUNT",
                   help="number of imaginary times in [0, beta] (default 33)")
    p.add_argument("--digits", type=int, default=15, metavar="D",
                   help="certified significant digits of every value (default 15)")
    p.add_argument("--output", required=True, metavar="STEM",
                   help="writes STEM.json and STEM_<table>.csv")
    p.set_defaults(func=lambda args: _run_reference(args, build_model, solve, parse_point))
    c = subparsers.add_parser("compare", help="compare a code's CSV with a reference",
                              description=COMPARE_HELP,
                              formatter_class=argparse.RawDescriptionHelpFormatter)
    c.add_argument("reference", metavar="REFERENCE.json")
    c.add_argument("theirs", metavar="THEIRS.csv")
    c.add_argument("--tolerance", type=float, default=1e-8,
                   help="absolute tolerance (default 1e-8)")
    c.add_argument("--sigmas", type=float, default=3.0,
                   help="error bars a deviation may reach (default 3)")
    c.add_argument("--plot", metavar="FILE.png", help="plot path (default THEIRS_compare.png)")
    c.add_argument("--no-plot", action="store_true", help="write no plot")
    c.set_defaults(func=_run_compare)


def _run_reference(args, build_model, solve, parse_point):
    import sys
    from symcluster.errors import SymclusterError
    from symcluster.export.files import check_outputs, write_texts_atomic
    from symcluster.response.reference import build_reference, reference_texts
    mu = args.mu[0] if args.mu else None
    model, fixed = build_model(args)
    if not model.space.has_charge:
        raise InputError("reference needs a model of electrons; a spin model has no Green's "
                         "function")
    point = parse_point(args.at, "--at")
    n, top = args.n_electrons, model.space.max_particles
    if n is None and mu is None:
        raise InputError("give --n N (T = 0 or canonical) or --mu MU (grand canonical)")
    if n is not None and not 0 <= n <= top:
        raise InputError(f"--n {n} is impossible for this model; choose 0..{top}")
    try:
        i, j = (int(x) for x in args.element.split(","))
    except ValueError:
        raise InputError(f"--element {args.element!r}: write two mode indices, e.g. 0,1") from None
    temps = _parse_grid(args.temperatures) if args.temperatures else []
    if any(t <= 0 for t in temps):
        raise InputError("--temperatures must all be > 0")
    stem = args.output[:-5] if args.output.endswith(".json") else args.output
    names = [stem + ".json"] + [f"{stem}_{t}.csv" for t in ("thermo", "matsubara", "tau")]
    inputs = [getattr(args, "cluster_file", None), getattr(args, "model", None)]
    check_outputs(names, inputs)
    electrons = None if n is None else [m for m in (n - 1, n, n + 1) if 0 <= m <= top]
    spec = solve(model, electrons, fixed=fixed, lattice=not getattr(args, "no_lattice", False))
    try:
        ref = build_reference(spec, point, N=n, mu=mu, temperature=args.temperature,
                              beta=args.beta, temperatures=temps, i=i, j=j, spin=args.spin,
                              n_matsubara=args.matsubara, n_tau=args.tau, digits=args.digits)
    except SymclusterError:
        raise
    files = reference_texts(ref, stem)
    write_texts_atomic(files)
    for path, _ in files:
        sys.stderr.write(f"symcluster: wrote {path}\n")
    return 0


def _run_compare(args):
    import sys
    from symcluster.export.files import check_outputs, write_files_atomic
    from symcluster.parsing import read_input_file
    from symcluster.response.compare import MAX_BYTES, compare, comparison_figure
    from symcluster.response.reference import load_reference
    ref = load_reference(args.reference)
    text = read_input_file(args.theirs, "results file", MAX_BYTES)
    path = pathlib.Path(args.theirs)
    plot = None
    if not args.no_plot:
        plot = args.plot or str(path.with_name(path.stem + "_compare.png"))
        check_outputs([plot], [args.reference, args.theirs])
    result = compare(ref, text, tolerance=args.tolerance, sigmas=args.sigmas,
                     source=args.theirs)
    if plot:
        fig = comparison_figure(result)
        buf = io.BytesIO()
        fig.savefig(buf, format="png", dpi=110)
        write_files_atomic([(plot, buf.getvalue())])
    sys.stdout.write(result.report())
    if plot:
        sys.stderr.write(f"symcluster: wrote {plot}\n")
    return 0 if result.passed else 1
