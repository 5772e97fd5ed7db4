"""Command-line subcommands for the analysis layer.

``add_commands(subparsers, parents, build_spectrum)`` adds the subcommands
``ground-map``, ``gaps``, ``series``, ``thermo``, ``plot`` and ``derivative``;
each sets ``func`` to a callable(args) -> int that builds the spectrum with
``build_spectrum(args)`` (supplied by the main command line, which also owns
the model options, passed in through ``parents``) and calls
:func:`run_analysis`.

Coupling values use a small grammar, never evaluated as code:
``name=value`` with value an integer, decimal or fraction (``t=1``,
``U=-2.5``, ``U=7/2``); ranges are ``lo:hi`` with the same numbers.

Every option is checked against the model before the solve
(:func:`check_request`): electron numbers in range, the sectors the command
needs among those solved, couplings that exist, limits on every size
(``--order``, number of temperatures and chemical potentials), output paths.
Notes (``symcluster: wrote FILE``) go to standard error.
"""

import argparse
import re
import sys

import mpmath
import sympy

from symcluster.errors import InputError, ModelError
from symcluster.parsing import NUMBER, parse_number
from symcluster.analysis.sectors import format_numbers
from symcluster.analysis.series import MAX_ORDER
from symcluster.analysis.thermo import MAX_ROWS
from symcluster.display import qn_text
from symcluster.export.text import energy_text

__all__ = ["add_commands", "run_analysis", "parse_assignment", "parse_range", "check_request",
           "MAX_VALUES"]

#: Most values one list option (--temperatures, --mu) takes.
MAX_VALUES = 1000
#: Quantum-number keys a level can carry (docs/outputs.md), for --color-by.
QUANTUM_KEYS = ("N", "S", "Sz", "eta", "irrep", "irrep_dim", "k")

_NUM = NUMBER          # the grammar of symcluster/parsing.py, shared with the levels command
_ASSIGN = re.compile(rf"^\s*([A-Za-z_][A-Za-z0-9_]*)\s*=\s*({_NUM})\s*$")
_RANGE = re.compile(rf"^\s*({_NUM})\s*:\s*({_NUM})\s*$")


def digits_argument(text):
    """argparse type of --digits: a whole number from 1 to 1000 (all subcommands)."""
    if not re.match(r"^[0-9]{1,4}$", text.strip()) or not 1 <= int(text) <= 1000:
        raise argparse.ArgumentTypeError(f"{text!r} is not a whole number from 1 to 1000")
    return int(text)


_number = parse_number


def _whole_number(lo, hi):
    """argparse type: a whole number from lo to hi (one message for every bounded option)."""
    def parse(text):
        t = text.strip()
        if not re.match(r"^[+-]?[0-9]{1,9}$", t) or not lo <= int(t) <= hi:
            raise argparse.ArgumentTypeError(f"{text!r} is not a whole number from {lo} to {hi}")
        return int(t)
    return parse


_SECTOR = _whole_number(-10 ** 6, 10 ** 6)    # checked against the cluster by check_request


def parse_assignment(items):
    """['t=1', 'U=7/2'] -> {'t': Rational(1), 'U': Rational(7, 2)} (exact)."""
    out = {}
    for item in items or ():
        for part in item.split(","):
            if not part.strip():
                continue
            m = _ASSIGN.match(part)
            if not m:
                raise InputError(f"coupling value {part!r} is not of the form name=number; "
                                 "write e.g. t=1 or U=7/2")
            out[m.group(1)] = _number(m.group(2), f"value of {m.group(1)}")
    return out


_SWEEP = re.compile(rf"^\s*({_NUM})\s*:\s*({_NUM})\s*:\s*([0-9]{{1,7}})\s*$")


def expand_values(items, option):
    """Values of a list option; an item ``lo:hi:count`` stands for ``count`` evenly spaced
    exact values from lo to hi (both included).

    Examples
    --------
    >>> [str(x) for x in expand_values(["0.1", "1:2:3"], "--temperatures")]
    ['1/10', '1', '3/2', '2']
    """
    out = []
    for item in items or ():
        for part in (p for p in str(item).split(",") if p.strip()):
            m = _SWEEP.match(part)
            if m:
                lo, hi = _number(m.group(1), option), _number(m.group(2), option)
                count = int(m.group(3))
                if count < 2 or count > MAX_VALUES:
                    raise InputError(f"{option} {part}: count {count} is not from 2 to "
                                     f"{MAX_VALUES}; write e.g. {option} 0.1:10:200")
                out += [lo + (hi - lo) * k / (count - 1) for k in range(count)]
            else:
                out.append(_number(part, option))
        if len(out) > MAX_VALUES:
            raise InputError(f"{option} has more than {MAX_VALUES} values; give fewer")
    return out


def parse_over(text, option="--over"):
    """``NAME:LO:HI`` or ``NAME:LO:HI:COUNT`` -> (name, (lo, hi), count or None).

    Examples
    --------
    >>> parse_over("U:0:20:41")
    ('U', (0, 20), 41)
    """
    parts = (text or "").split(":")
    if len(parts) not in (3, 4) or not re.match(r"^[A-Za-z][A-Za-z0-9_]*$", parts[0].strip()):
        raise InputError(f"{option} {text!r} is not of the form NAME:LO:HI[:COUNT]; write e.g. "
                         f"{option} U:0:20:41")
    lo, hi = parse_range(":".join(parts[1:3]))
    count = None
    if len(parts) == 4:
        if not re.match(r"^[0-9]{1,5}$", parts[3].strip()) or not 2 <= int(parts[3]) <= \
                MAX_VALUES:
            raise InputError(f"{option} {text!r}: COUNT must be a whole number from 2 to "
                             f"{MAX_VALUES}")
        count = int(parts[3])
    return parts[0].strip(), (lo, hi), count


def parse_range(text):
    """'lo:hi' -> (Rational, Rational)."""
    m = _RANGE.match(text or "")
    if not m:
        raise InputError(f"range {text!r} is not of the form lo:hi; write e.g. 0:100 or -20:40")
    return _number(m.group(1), "lower end"), _number(m.group(2), "upper end")


def _common(p, sweep=False, point=False, sector=True, latex=True):
    if sector:
        p.add_argument("--sector", type=_SECTOR, default=None, metavar="N",
                       help="electron number (default: all levels; needs every electron "
                            "number solved)")
    if sweep:
        p.add_argument("--coupling", default="U", help="swept coupling (default U)")
        p.add_argument("--range", default="0:10",
                       help="lo:hi of the swept coupling (default 0:10)")
        p.add_argument("--over", default=None, metavar="NAME:LO:HI[:COUNT]",
                       help="the sweep in one option, e.g. U:0:20:41 (sets --coupling and "
                            "--range; COUNT points for plot; default: from those options)")
        p.add_argument("--at", "--fixed", dest="fixed", nargs="*", default=["t=1"],
                       metavar="NAME=VALUE",
                       help="values of the other couplings, e.g. --at t=1 (default t=1; "
                            "--fixed is the same option)")
    if point:
        p.add_argument("--at", nargs="*", default=["t=1", "U=4"], metavar="NAME=VALUE",
                       help="values of every coupling, e.g. --at t=1 U=4 or t=1,U=4 "
                            "(default t=1 U=4)")
    p.add_argument("--digits", type=digits_argument, default=30, metavar="D",
                   help="significant digits of numerical values, 1 to 1000 (default 30)")
    if latex:
        p.add_argument("--latex", default=None, metavar="FILE",
                       help="also write a LaTeX document")


def _add_ground_map(p):
    _common(p, sweep=True)


def _add_gaps(p):
    _common(p, point=True, sector=False)
    p.add_argument("--sector", type=_SECTOR, default=None, metavar="N",
                   help="electron number N of the gaps (required; --electrons N says the "
                        "same)")
    p.add_argument("--over", default=None, metavar="NAME:LO:HI[:COUNT]",
                   help="certify the expressions over a coupling range, e.g. U:0:20; with "
                        "COUNT, also print the gaps at COUNT points, e.g. U:0:20:41 "
                        "(default: at the --at point only)")


def _add_series(p):
    _common(p, point=True)
    p.add_argument("--level", type=_whole_number(0, 10 ** 6), default=0,
                   help="index of the level in the sector, ascending at --at (default 0)")
    p.add_argument("--coupling", default="U",
                   help="the coupling of the expansion (default U)")
    p.add_argument("--order", type=_whole_number(0, MAX_ORDER), default=5,
                   help=f"order of the series, 0 to {MAX_ORDER} (default 5)")
    p.add_argument("--about", default="oo",
                   help="oo (strong coupling) or a number (default oo)")


def _add_thermo(p):
    _common(p, point=True)
    p.add_argument("--temperatures", "-T", nargs="+", default=["1/10", "1/2", "1", "2", "10"],
                   metavar="T",
                   help=f"temperatures T > 0, values or ranges LO:HI:COUNT (e.g. 0.1:10:200), "
                        f"at most {MAX_VALUES} (default 1/10 1/2 1 2 10)")
    p.add_argument("--mu", nargs="+", default=["0"], metavar="MU",
                   help=f"chemical potentials (grand ensemble), values or LO:HI:COUNT, at "
                        f"most {MAX_VALUES} (default 0)")
    p.add_argument("--field", default="0",
                   help="Zeeman field h, H_Z = -h (N_up - N_dn) (default 0)")
    p.add_argument("--over", default=None, metavar="NAME:LO:HI:COUNT",
                   help="repeat the table at COUNT evenly spaced values of one coupling, "
                        "e.g. U:0:8:5 (a first column holds the value; the other couplings "
                        "come from --at; default: the --at point only)")


def _add_plot(p):
    _common(p, sweep=True, latex=False)
    p.add_argument("--color-by", default="S", choices=QUANTUM_KEYS,
                   help="quantum number for the colours (default S)")
    p.add_argument("--output", default="levels",
                   help="output stem: writes STEM.png and STEM.pdf (default levels)")


def _add_derivative(p):
    _common(p, point=True)
    p.add_argument("--level", type=_whole_number(0, 10 ** 6), default=0,
                   help="index of the level in the sector, ascending at --at (default 0)")
    p.add_argument("--coupling", default="U",
                   help="the coupling to differentiate by (default U)")


_COMMANDS = {
    "ground-map": ("ground state versus one coupling, exact transition points", _add_ground_map),
    "gaps": ("charge gap, spin gap and pair-binding energy", _add_gaps),
    "series": ("strong- or weak-coupling series of a level", _add_series),
    "thermo": ("thermodynamic table versus T (and mu)", _add_thermo),
    "plot": ("levels versus a coupling, PNG and PDF", _add_plot),
    "derivative": ("Hellmann-Feynman dE/d(coupling) of a level", _add_derivative),
}


def add_commands(subparsers, parents=(), build_spectrum=None):
    """Add the analysis subcommands to an argparse subparsers object.

    Parameters
    ----------
    subparsers : argparse._SubParsersAction
    parents : sequence of argparse.ArgumentParser
        Parsers holding the model options of the main command line.
    build_spectrum : callable(args) -> Spectrum
    """
    for name, (helptext, adder) in _COMMANDS.items():
        p = subparsers.add_parser(name, help=helptext, description=helptext,
                                  parents=list(parents))
        adder(p)
        p.set_defaults(func=_runner(build_spectrum), analysis=name)


def _runner(build_spectrum):
    def run(args):
        if build_spectrum is None:
            raise InputError("no model given to the analysis command; the main command line "
                             "must pass build_spectrum to add_commands")
        _check_output_paths(args)        # before the (possibly long) solve
        return run_analysis(build_spectrum(args), args)
    return run


def _output_paths(args):
    paths = []
    if getattr(args, "latex", None):
        paths.append(args.latex)
    if getattr(args, "analysis", None) == "plot":
        import pathlib
        stem = str(pathlib.Path(args.output).with_suffix(""))   # as plots.plot_levels does
        paths += [stem + ".png", stem + ".pdf"]
    return paths


def _check_output_paths(args):
    """Refuse output paths that cannot or must not be written, before anything is computed."""
    from symcluster.export.files import check_outputs
    check_outputs(_output_paths(args), inputs=[getattr(args, "cluster_file", None)])


_ALL_SECTORS = {
    "ground-map": "without --sector, ground-map compares the levels of every electron number",
    "plot": "without --sector, plot draws every electron number and marks the ground-state "
            "changes between them",
    "thermo": "without --sector, thermo is grand canonical and sums over every electron number",
    "series": "without --sector, --level counts the levels of every electron number",
    "derivative": "without --sector, --level counts the levels of every electron number",
}


def check_request(args, model, electrons):
    """Check an analysis command's options against the model, before the solve.

    Parameters
    ----------
    args : argparse.Namespace
    model : Model
    electrons : list of int or None
        The electron numbers that will be solved (None: all).

    Raises
    ------
    InputError
        An electron number impossible on the cluster, a sector the command needs
        that ``--electrons`` leaves out (the grand-canonical thermo and the ground
        state over all N need every N; the gaps at N need N-2 .. N+1), an unknown
        coupling, a malformed value or range, or a size over its limit.
    """
    normalise(args)
    kind = args.analysis
    L = model.cluster.n_sites
    top = model.space.max_particles
    couplings = [s.name for s in model.symbols]
    n = getattr(args, "sector", None)
    if n is not None and not 0 <= n <= top:
        raise InputError(f"--sector {n} is impossible on {L} site{'s' if L != 1 else ''}; "
                         f"choose an electron number from 0 to {top}")
    if kind == "gaps" and n is None:
        raise InputError("gaps needs an electron number; add --electrons N (or --sector N), "
                         "e.g. --electrons 4")
    if kind == "gaps":
        needed = [m for m in range(n - 2, n + 2) if 0 <= m <= top]
        what = (f"the gaps at N={n} need N={format_numbers(needed)} (charge gap N-1 and N+1, "
                f"pair binding N-1 and N-2)")
        fix = (f"give --electrons {min(needed)}-{max(needed)} or leave out --electrons")
    elif n is None:
        needed = list(range(top + 1))
        what = _ALL_SECTORS[kind]
        fix = "add --sector N for one electron number, or leave out --electrons"
    else:
        needed = [n]
        what = f"--sector {n} needs N={n}"
        fix = f"add {n} to --electrons or leave out --electrons"
    if electrons is not None:
        missing = sorted(set(needed) - set(electrons))
        if missing:
            raise InputError(f"{what}, but --electrons {args.electrons} leaves out "
                             f"N={format_numbers(missing)}; {fix}")

    def known(name, option):
        if name not in couplings:
            raise InputError(f"{option}: unknown coupling {name!r}; this model's couplings are "
                             + ", ".join(couplings))

    if kind in ("ground-map", "plot"):
        lo, hi = parse_range(args.range)
        if not lo < hi:
            raise InputError(f"--range {args.range} is empty; give lo:hi with lo < hi, e.g. "
                             f"0:10")
        known(args.coupling, "--coupling")
        for name in parse_assignment(args.fixed):
            known(name, "--fixed")
            if name == args.coupling:
                raise InputError(f"--fixed gives a value for {name}, the swept coupling; drop "
                                 f"it from --fixed")
    else:
        for name in parse_assignment(args.at):
            known(name, "--at")
    if kind in ("series", "derivative"):
        known(args.coupling, "--coupling")
    if kind == "series" and args.about not in ("oo", "inf"):
        _number(args.about, "--about")
    if kind == "gaps" and args.over:
        name, rng, _count = parse_over(args.over)
        known(name, "--over")
        if not rng[0] < rng[1]:
            raise InputError(f"--over {args.over}: the range is empty; give NAME:LO:HI with "
                             f"LO < HI, e.g. U:0:20")
    if kind == "thermo":
        temps = expand_values(args.temperatures, "--temperatures")
        mus = expand_values(args.mu, "--mu")
        n_over = 1
        if args.over:
            name, rng, n_over = parse_over(args.over)
            known(name, "--over")
            if n_over is None:
                raise InputError(f"--over {args.over}: give the number of values too, "
                                 f"NAME:LO:HI:COUNT, e.g. --over {name}:{rng[0]}:{rng[1]}:5")
            if not rng[0] < rng[1]:
                raise InputError(f"--over {args.over}: the range is empty; give LO < HI, e.g. "
                                 f"--over {name}:0:8:5")
        if len(temps) * len(mus) * n_over > MAX_ROWS:
            raise InputError(f"{len(temps)} temperatures x {len(mus)} values of --mu"
                             + (f" x {n_over} values of --over" if n_over > 1 else "")
                             + f" make more than {MAX_ROWS} rows; give fewer values")
        for x in temps:
            if not x > 0:
                raise InputError(f"temperature {x} is not positive; give temperatures T > 0 "
                                 f"(the ground state is the limit T -> 0: see 'levels')")
        _number(args.field, "field")


def _parse_over(text):
    name, rng, _count = parse_over(text)
    return name, rng


def _short_energy(lev):
    """The energy text, or for a long implicit root its index and degree only."""
    text = energy_text(lev.energy)
    if len(text) <= 160 or not hasattr(lev.energy, "degree"):
        return text
    return (f"root {int(lev.energy.index)} (counted from 0, the lowest) of a polynomial of "
            f"degree {lev.energy.degree} in the energy (written out by 'levels' and --latex)")


def normalise(args):
    """One grammar: ``--electrons N`` (a single number) is the sector of an analysis,
    ``--over NAME:LO:HI[:COUNT]`` sets the sweep of ground-map and plot.  Idempotent."""
    if getattr(args, "sector", None) is None and re.match(r"^\s*[0-9]+\s*$",
                                                          str(getattr(args, "electrons", ""))):
        args.sector = int(args.electrons)
        if args.analysis == "gaps":
            args.electrons = f"{max(args.sector - 2, 0)}-{args.sector + 1}"
    if args.analysis in ("ground-map", "plot") and getattr(args, "over", None):
        name, (lo, hi), count = parse_over(args.over)
        args.coupling, args.range = name, f"{lo}:{hi}"
        if count is not None:
            args.n_points = count
        args.over = None
    return args


def _level_at(spec, args, pt):
    levels = spec.levels if args.sector is None else spec.select(N=args.sector)
    with mpmath.workdps(args.digits):
        ordered = sorted(levels, key=lambda l: l.numeric(pt, digits=args.digits))
    if not 0 <= args.level < len(ordered):
        raise InputError(f"--level {args.level} is out of range; this sector has "
                         f"{len(ordered)} levels (0..{len(ordered) - 1})")
    return ordered[args.level]


def run_analysis(spec, args, out=None, err=None):
    """Run the subcommand ``args.analysis`` on a spectrum; print text, maybe LaTeX. Returns 0.

    Results go to ``out`` (default standard output), notes such as
    ``symcluster: wrote FILE`` to ``err`` (default standard error).
    """
    from symcluster.analysis import analysis_latex as lx
    from symcluster.analysis.gaps import charge_gap, pair_binding, spin_gap
    from symcluster.analysis.observables import energy_derivative
    from symcluster.analysis.series import series
    from symcluster.analysis.thermo import thermo_table
    from symcluster.analysis.transitions import transitions

    out = out or sys.stdout
    err = err or sys.stderr
    normalise(args)
    kind = args.analysis
    frags = []
    if kind in ("ground-map", "plot"):
        rng, fixed = parse_range(args.range), parse_assignment(args.fixed)
    else:
        at = parse_assignment(args.at)
        if kind == "thermo" and args.over:       # the swept coupling needs no --at value
            name, (lo, _hi), _count = parse_over(args.over)
            at[name] = lo
        pt = spec.point(at)
    if kind == "ground-map":
        pts = transitions(spec, args.sector, args.coupling, rng, fixed)
        for tr in pts:
            # an integer needs no decimal; any other value gets one at the digits asked for
            approx = ("" if getattr(tr.value, "is_Integer", False)
                      else f"  ~ {mpmath.nstr(tr.numeric(args.digits), args.digits)}")
            out.write(f"{args.coupling} = {tr.value}{approx}:  ground state "
                      f"{qn_text(tr.below.quantum_numbers)} -> "
                      f"{qn_text(tr.above.quantum_numbers)}\n")
        if not pts:
            out.write(f"no ground-state change for {args.coupling} in {rng[0]}..{rng[1]}\n")
        frags.append(lx.latex_transitions(pts, args.digits))
    elif kind == "gaps":
        over = _parse_over(args.over) if args.over else None
        res = []
        for fn in (charge_gap, spin_gap, pair_binding):
            try:
                res.append(fn(spec, args.sector, pt, over=over, digits=args.digits))
            except ModelError as exc:  # a gap that does not exist here (e.g. N-1 < 0)
                out.write(f"{fn.__name__.replace('_', ' ')}: not available ({exc})\n")
        for g in res:
            out.write(f"{g.name}: {g.expr} = {mpmath.nstr(g.value, args.digits)} ({g.valid})\n")
            for sym, lev in g.symbols_for.items():
                out.write(f"  where {sym} = {_short_energy(lev)}  "
                          f"(the level {qn_text(lev.quantum_numbers)})\n")
        count = parse_over(args.over)[2] if args.over else None
        if count and res:
            name, (lo, hi), _ = parse_over(args.over)
            out.write("\n" + "\t".join([name] + [g.name.replace(" ", "_") for g in res]) + "\n")
            for k in range(count):
                x = lo + (hi - lo) * sympy.Rational(k, count - 1)
                p2 = {s.name: (x if s.name == name else v) for s, v in pt.items()}
                out.write("\t".join([str(x)] + [mpmath.nstr(g.numeric(p2, args.digits),
                                                            args.digits) for g in res]) + "\n")
        frags.append(lx.latex_gaps(res, args.digits))
    elif kind == "series":
        lev = _level_at(spec, args, pt)
        about = "oo" if args.about in ("oo", "inf") else _number(args.about, "--about")
        others = {s.name: v for s, v in pt.items() if s.name != args.coupling}
        expr = series(lev, args.coupling, args.order, about=about, at=others)
        out.write(f"level {qn_text(lev.quantum_numbers)}: E = {expr} + ...\n")
        frags.append(lx.latex_series(expr))
    elif kind == "thermo":
        temps = expand_values(args.temperatures, "--temperatures")
        mus = expand_values(args.mu, "--mu")
        base = {s.name: v for s, v in pt.items()}
        cols = ["T", "mu", "energy", "entropy", "specific_heat", "double_occupancy",
                "density", "susceptibility"]
        sweep = [None]
        if args.over:
            name, (lo, hi), count = parse_over(args.over)
            sweep = [lo + (hi - lo) * sympy.Rational(k, count - 1) for k in range(count)]
            cols.insert(0, name)
        rows = []
        for x in sweep:
            at = base if x is None else {**base, name: x}
            part = thermo_table(spec, at, temps, args.sector, mus,
                                _number(args.field, "field"), args.digits)
            rows += part if x is None else [{name: x, **r} for r in part]
        out.write("\t".join(cols) + "\n")
        for r in rows:
            out.write("\t".join(mpmath.nstr(r[c], args.digits) if isinstance(r[c], mpmath.mpf)
                                else str(r[c]) for c in cols) + "\n")
        frags.append(lx.latex_thermo_table(rows, columns=tuple(cols), digits=args.digits))
    elif kind == "plot":
        from symcluster.analysis.plots import plot_levels, write_plot
        fig = plot_levels(spec, None, args.coupling, rng, fixed, args.sector, args.color_by,
                          n_points=getattr(args, "n_points", 121))
        files = write_plot(fig, args.output)
        for name in files:
            err.write(f"symcluster: wrote {name}\n")
    elif kind == "derivative":
        lev = _level_at(spec, args, pt)
        d = energy_derivative(lev, args.coupling)
        out.write(f"level {qn_text(lev.quantum_numbers)}: dE/d{args.coupling} = {d.expr}"
                  f"{' (at E = the level)' if d.implicit else ''} = "
                  f"{mpmath.nstr(d.numeric(pt, args.digits), args.digits)}\n")
        frags.append(f"\\[ \\frac{{\\partial E}}{{\\partial {args.coupling}}} = {d.latex()} \\]\n")
    else:
        raise InputError(f"unknown analysis {kind!r}; choose one of {', '.join(_COMMANDS)}")
    if getattr(args, "latex", None) and frags:
        from symcluster.export.files import write_text_atomic
        # whole file or none (temporary file beside it, then rename)
        write_text_atomic(args.latex, lx.latex_document(*frags, comment=f"symcluster {kind}"))
        err.write(f"symcluster: wrote {args.latex}\n")
    return 0
