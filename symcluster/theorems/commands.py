"""The ``symcluster towers`` and ``symcluster theorems`` subcommands (docs/towers.md).

Both take the model options of the main command line (cluster words, --family, --hold,
...), solve the model, run the report and print it; ``--latex`` and ``--json`` write files
atomically (all or nothing), ``--plot FILE.png`` (towers) a figure.
"""

import argparse
import sys

from symcluster.errors import InputError

__all__ = ["add_commands", "COMMANDS"]

_TOWERS_HELP = """\
Certify the spin (or eta) tower E_min(S) < E_min(S+1) for one electron number at every
value of one coupling in an interval: exact crossing points, a verdict per piece.

examples:
  symcluster towers ring 4 --sector 3 --range 0:100 --fixed t=1
  symcluster towers ring 4 --sector 3 --range 0:oo --kind eta --json towers.json
  symcluster towers chain 5 --sector 4 --range -20:0 --open-upper --latex t.tex
"""

_THEOREMS_HELP = """\
Check the rigorous theorems of the Hubbard model (Lieb, Lieb-Mattis, Nagaoka,
Mielke-Tasaki, Yang, particle-hole) on the solved spectrum: hypotheses, then conclusion.

examples:
  symcluster theorems star 3 --range 0:50 --fixed t=1
  symcluster theorems ring 4 --range -20:50 --json theorems.json
"""

#: subcommand names this module adds
COMMANDS = ("towers", "theorems")


def _range(text):
    parts = (text or "").split(":")
    if len(parts) != 2:
        raise InputError(f"range {text!r} is not of the form lo:hi; write e.g. 0:100, -20:0 "
                         "or 0:oo")
    from symcluster.analysis.commands import _number
    out = []
    for p, name in zip(parts, ("lower end", "upper end")):
        p = p.strip()
        out.append(p if p in ("oo", "-oo") else _number(p, name))
    return tuple(out)


def add_commands(subparsers, parents=(), build_spectrum=None):
    """Add ``towers`` and ``theorems`` to an argparse subparsers object.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
    parents : sequence of argparse.ArgumentParser
        Parsers holding the model options of the main command line.
    build_spectrum : callable(args) -> Spectrum

    Examples
    --------
    >>> import argparse
    >>> p = argparse.ArgumentParser()
    >>> add_commands(p.add_subparsers(dest="command"))
    >>> p.parse_args(["towers", "--sector", "3"]).kind
    'spin'
    """
    from symcluster.analysis.commands import digits_argument
    for name, helptext, desc in (("towers", "certified spin / eta towers along a coupling",
                                  _TOWERS_HELP),
                                 ("theorems", "check the rigorous Hubbard-model theorems",
                                  _THEOREMS_HELP)):
        p = subparsers.add_parser(name, help=helptext, description=desc,
                                  parents=list(parents),
                                  formatter_class=argparse.RawDescriptionHelpFormatter)
        p.add_argument("--coupling", default="U", help="swept coupling (default U)")
        p.add_argument("--range", default="0:10",
                       help="lo:hi of the swept coupling (oo / -oo for unbounded; default 0:10)")
        p.add_argument("--fixed", nargs="*", default=["t=1"],
                       help="values of the other couplings, name=number (default t=1)")
        p.add_argument("--digits", type=digits_argument, default=15, metavar="D",
                       help="digits of the numerical values printed (default 15)")
        p.add_argument("--latex", metavar="FILE.tex", help="also write a LaTeX document")
        p.add_argument("--json", metavar="FILE.json", help="also write the report as JSON")
        if name == "towers":
            p.add_argument("--sector", type=int, required=True, metavar="N",
                           help="electron number")
            p.add_argument("--kind", choices=("spin", "eta"), default="spin",
                           help="spin towers (default) or eta-pseudospin towers")
            p.add_argument("--irrep", default=None, help="only the levels of this irrep label")
            p.add_argument("--start", default=None,
                           help="check the ordering from this spin on (default: the smallest)")
            p.add_argument("--open-lower", action="store_true",
                           help="leave the lower end out of the interval")
            p.add_argument("--open-upper", action="store_true",
                           help="leave the upper end out of the interval")
            p.add_argument("--plot", metavar="FILE.png",
                           help="also draw E_min(S) - E_0 against the coupling")
        else:
            p.add_argument("--only", nargs="*", default=None, metavar="NAME",
                           help="check only these theorems (lieb-spin, lieb-attractive, "
                                "lieb-mattis, nagaoka, flat-band, yang-eta, particle-hole)")
        p.set_defaults(func=_runner(build_spectrum, name), analysis=name)


def _runner(build_spectrum, name):
    def run(args):
        from symcluster.analysis.commands import parse_assignment
        from symcluster.export.files import check_outputs
        rng, fixed = _range(args.range), parse_assignment(args.fixed)
        paths = [args.latex, args.json] + ([args.plot] if name == "towers" else [])
        check_outputs(paths)                 # before the (possibly long) solve
        spec = build_spectrum(args)
        if name == "towers":
            return _towers(spec, args, rng, fixed)
        return _theorems(spec, args, rng, fixed)
    return run


def _towers(spec, args, rng, fixed, out=None, err=None):
    import mpmath

    from symcluster.theorems.outputs import plot_towers, towers_json, towers_latex
    from symcluster.theorems.towers import towers
    out, err = out or sys.stdout, err or sys.stderr
    rep = towers(spec, args.sector, args.coupling, rng, fixed, args.kind, args.irrep,
                 args.start, (not args.open_lower, not args.open_upper))
    q = "S" if args.kind == "spin" else "eta"
    out.write(f"{q} tower, N = {rep.n_electrons}, {rep.coupling} in {rep.interval}: "
              f"{'holds' if rep.holds else 'fails'}\n")
    for v in rep.verdicts:
        out.write(f"  {q} = {v.value} vs {v.next_value} on {v.interval}: {v.verdict}"
                  + (f" ({v.reason})" if v.reason else "") + "\n")
    for c in rep.crossings:
        out.write(f"  crossing {q} = {c['value']}, {c['next_value']} at {rep.coupling} = "
                  f"{c['at']} ~ {mpmath.nstr(c['numeric'], args.digits)}\n")
    files = {}
    if args.latex:
        files[args.latex] = towers_latex(rep)
    if args.json:
        files[args.json] = towers_json(rep)
    _write(files, err)
    if args.plot:
        import io
        from symcluster.export.files import write_files_atomic
        buf = io.BytesIO()
        plot_towers(rep).savefig(buf, format="png")
        write_files_atomic([(args.plot, buf.getvalue())])
        err.write(f"symcluster: wrote {args.plot}\n")
    return 0


def _theorems(spec, args, rng, fixed, out=None, err=None):
    from symcluster.theorems.checks import theorem_report
    from symcluster.theorems.outputs import theorems_json, theorems_latex
    out, err = out or sys.stdout, err or sys.stderr
    res = theorem_report(spec, args.coupling, rng, fixed, args.only)
    for r in res:
        out.write(f"{r.name}: {r.conclusion}\n")
        for t, met, ev in r.hypotheses:
            out.write(f"  [{'met' if met else 'NOT met'}] {t} ({ev})\n")
        for e in r.evidence:
            out.write(f"  evidence: {e}\n")
    files = {}
    if args.latex:
        files[args.latex] = theorems_latex(res)
    if args.json:
        files[args.json] = theorems_json(res)
    _write(files, err)
    return 0


def _write(files, err):
    if files:
        from symcluster.export.files import write_texts_atomic
        write_texts_atomic(list(files.items()))
        for p in files:
            err.write(f"symcluster: wrote {p}\n")
