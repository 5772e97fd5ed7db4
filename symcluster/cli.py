"""The ``symcluster`` command: parse the command line, call the API, print, write files.

Thin by design: every computation is :func:`symcluster.pipeline.solve` and the
functions of :mod:`symcluster.export`.  Any :class:`SymclusterError` or usage
mistake becomes exactly one line ``symcluster: error: <problem>; <fix>`` on
stderr and exit code 2.  Output paths are checked before the solve
(:func:`symcluster.export.files.check_outputs`: a regular file or a new path, a
symbolic link written through, never an input of the run, never two outputs at
one file); after it, all outputs are produced in memory, written to temporary
files beside their targets and renamed into place only when every one
succeeded (all files or none).  Every note (``symcluster: wrote FILE``) goes to
standard error, so that standard output holds only the results.
"""

import argparse
import difflib
import re
import sys


from symcluster import __version__
from symcluster.errors import ClusterError, InputError, SymclusterError
from symcluster.parsing import parse_number

__all__ = ["main", "parse_point", "parse_electrons", "build_cluster", "build_model", "SHAPES",
           "FAMILIES"]

#: shape word -> (number of integer arguments, argument names, description)
SHAPES = {
    "chain": (1, ("N",), "open chain of N sites"),
    "ring": (1, ("N",), "periodic ring of N >= 3 sites"),
    "grid": (2, ("NX", "NY"), "open NX x NY rectangle"),
    "pgrid": (2, ("NX", "NY"), "NX x NY rectangle, periodic in both directions "
                               "(a direction of length <= 2 is not wrapped)"),
    "ladder": (1, ("N",), "2 x N ladder (open)"),
    "tetrahedron": (0, (), "4 sites, all 6 bonds"),
    "cube": (0, (), "8 corners of a cube, 12 bonds"),
    "star": (1, ("N",), "a centre bonded to N outer sites"),
    "complete": (1, ("N",), "N sites, every pair bonded"),
}

DEMO_STEM = "symcluster-demo"
DEMO_POINT = "t=1,U=4"

_DESCRIPTION = """\
Exact energy levels of the Hubbard model (and of other models: --family,
--model) on a small cluster, in closed form where one exists, each verified
numerically before it is printed.

The default model (sign convention used everywhere):

  H = - sum_{bonds <ij>} sum_{s=up,dn} t_ij (c+_is c_js + h.c.)
      + U sum_i n_i,up n_i,dn   [+ sum_i eps_i n_i for labelled sites]

t > 0 is the usual choice but nothing assumes it.  Energies are exact
expressions in the couplings (t, U, and any bond/site labels of a cluster
file); where no closed form exists a level is given as the k-th real root,
ascending, of an irreducible polynomial.  Verification cannot be switched off.

Other models: --family heisenberg | t_j | anderson N | kanamori N (--field h
adds a Zeeman field), or --model FILE.toml, a model file of your own
(docs/model-files.md, examples in worked/*.toml).  --at then takes that
model's couplings, e.g. --at J=1 for the Heisenberg model.

Run without arguments for a demo: the two-site cluster (chain 2), all
electron numbers, table at t=1, U=4, written to ./symcluster-demo.tex
(a standalone LaTeX document) and ./symcluster-demo.json.
"""

_EXAMPLES = """\
examples:
  symcluster                                   demo (two sites), see above
  symcluster levels chain 2 --at t=1,U=4
  symcluster levels ring 4 --electrons 4 --at t=1,U=8 --digits 20
  symcluster levels grid 2 2 --electrons 2,3 --latex grid.tex --standalone
  symcluster levels ring 6 --sectors 'N=6,S=0;N=5,S=1/2,k=0' --at t=1,U=4
  symcluster levels --cluster-file dimer.toml --json dimer.json
  symcluster levels ring 6 --family heisenberg --at J=1
  symcluster levels chain 2 --electrons 2 --at t=1 --over U:0:10:21
  symcluster levels --family anderson 1 --at eps_d=-2,U=4,eps_1=0,V_1=1
  symcluster levels --model worked/heisenberg_j1j2.toml --at J1=1,J2=1/2
  symcluster shapes                            list the built-in cluster shapes
"""

_LEVELS_HELP = """\
Solve a model on a cluster (the Hubbard model unless --family or --model
says otherwise) and print its levels sorted by electron number N (and by
energy at the --at point, if given).

CLUSTER is a shape word followed by its sizes:
""" + "\n".join(f"  {w} {' '.join(a)}".ljust(22) + d for w, (_, a, d) in SHAPES.items()) + """

Every bond of a built-in shape has hopping t; sites are numbered from 0.
"""


class _UsageError(Exception):
    pass


class _Parser(argparse.ArgumentParser):
    def error(self, message):
        raise _UsageError(f"{message}; run '{self.prog} --help' for usage")


_NAME = re.compile(r"^[A-Za-z][A-Za-z0-9_]*$")
def parse_point(text, option="--at"):
    """Parse ``t=1,U=4`` (commas or spaces between items) into ``{name: Rational}``.

    ``option`` names the command-line option in messages.

    Examples
    --------
    >>> parse_point("t=1, U=3/2")
    {'t': 1, 'U': 3/2}
    """
    items = [p for p in re.split(r"[,\s]+", text.strip()) if p]
    if not items:
        raise InputError(f"{option} is empty; give values such as {option} t=1,U=4")
    out = {}
    for item in items:
        name, eq, value = item.partition("=")
        name = name.strip()
        if not eq or not name or not value.strip():
            raise InputError(f"{option} item {item!r} is not of the form name=value; "
                             f"write e.g. {option} t=1,U=4")
        if not _NAME.match(name):
            raise InputError(f"{option}: {name!r} is not a coupling name; use names such as t, "
                             "U, tp")
        if name in out:
            raise InputError(f"{option} gives {name} twice; give each coupling once")
        out[name] = parse_number(value, name)
    return out


def parse_electrons(text, n_sites, top=None):
    """Electron numbers from ``all``, ``2``, ``2,3`` or ``1-3`` (0 .. top, default 2*n_sites)."""
    text = text.strip()
    top = 2 * n_sites if top is None else top
    if text == "all":
        return None
    wanted = set()
    for part in [p.strip() for p in text.split(",")]:
        m = re.match(r"^([0-9]+)(?:-([0-9]+))?$", part)
        if not m:
            raise InputError(f"--electrons {text!r}: {part!r} is not a number or range; "
                             f"write e.g. 2, 2,3, 1-3 or all")
        lo = int(m.group(1))
        hi = int(m.group(2)) if m.group(2) else lo
        if hi < lo:
            raise InputError(f"--electrons range {part!r} runs backwards; write {hi}-{lo}")
        for n in (lo, hi):
            if n > top:
                raise InputError(f"--electrons {n} is impossible on {n_sites} sites; "
                                 f"choose numbers from 0 to {top}")
        wanted.update(range(lo, hi + 1))
    return sorted(wanted)


def build_cluster(words):
    """Cluster from shape words such as ``["ring", "4"]``."""
    from symcluster.lattice import clusters
    if not words:
        raise InputError("no cluster given; name a shape such as 'chain 2' or 'ring 4', "
                         "or use --cluster-file FILE.toml")
    shape, sizes = words[0].lower(), words[1:]
    if shape not in SHAPES:
        raise InputError(f"unknown shape {words[0]!r}; choose one of " + ", ".join(SHAPES)
                         + " or use --cluster-file")
    n_args, names, _ = SHAPES[shape]
    if len(sizes) != n_args:
        usage = " ".join([shape, *names])
        raise InputError(f"shape {shape!r} takes {n_args} size(s), got {len(sizes)} "
                         f"({' '.join(sizes) or 'none'}); write '{usage}'")
    ints = []
    for name, s in zip(names, sizes):
        if not re.match(r"^[+-]?[0-9]{1,6}$", s):
            raise InputError(f"size {name} of {shape} is {s!r}, not a whole number; "
                             f"write e.g. '{shape} 4'")
        ints.append(int(s))
    for name, v in zip(names, ints):
        if v < 1:
            raise InputError(f"size {name} of {shape} is {v}; sizes must be positive")
    try:
        if shape == "pgrid":
            return clusters.grid(ints[0], ints[1], periodic=True)
        return getattr(clusters, shape)(*ints)
    except ClusterError as exc:
        hint = "; for two sites use 'chain 2'" if shape == "ring" else ""
        raise ClusterError(f"'{' '.join(words)}': {exc}{hint}; see 'symcluster shapes' for "
                           f"valid sizes") from None


#: --family word -> (number of integer arguments, argument name, description)
FAMILIES = {
    "hubbard": (0, "", "-t on every bond, U on every site (the default)"),
    "heisenberg": (0, "", "J S_i.S_j on every bond (bond label t becomes J); spin-1/2 sites"),
    "t_j": (0, "", "t-J model: -t P(c+c + h.c.)P + J (S_i.S_j - n_i n_j/4) on every bond"),
    "anderson": (1, "N", "impurity (eps_d, U) with N bath sites (eps_k, V_k); no cluster"),
    "kanamori": (1, "N", "one atom, N orbitals, Kanamori U and Hund's J; no cluster"),
}


def _family_words(args):
    """(family name, its integer arguments, cluster words) from --family and CLUSTER."""
    words = list(getattr(args, "family", None) or ["hubbard"])
    cluster_words = list(getattr(args, "cluster", None) or [])
    name = words[0].lower().replace("-", "_")
    if name not in FAMILIES:
        raise InputError(f"--family {words[0]!r} is not a model family; choose one of "
                         + ", ".join(FAMILIES) + " (or give a model file with --model)")
    n_args, arg_name, _ = FAMILIES[name]
    own, rest = words[1:1 + n_args], words[1 + n_args:]
    if len(own) < n_args or not all(re.match(r"^[0-9]{1,4}$", w) for w in own):
        raise InputError(f"--family {name} takes {n_args} whole number ({arg_name}), got "
                         f"{' '.join(words[1:]) or 'none'}; write e.g. --family {name} 2")
    if rest:                          # '--family heisenberg ring 4': the cluster came after
        if cluster_words:
            raise InputError(f"--family {name} got extra words {' '.join(rest)!r}; give the "
                             "cluster once, before --family")
        cluster_words = rest
    return name, [int(w) for w in own], cluster_words


def build_model(args):
    """(model, fixed values) named by the model options: --model, --family, --field,
    and the cluster (shape words or --cluster-file).

    Examples
    --------
    >>> import argparse
    >>> a = argparse.Namespace(cluster=["ring", "4"], cluster_file=None, model=None,
    ...                        family=["heisenberg"], field_label="h")
    >>> build_model(a)[0].labels
    ('J', 'h')
    """
    from symcluster import models
    from symcluster.lattice.clusters import load_cluster_file
    model_file = getattr(args, "model", None)
    field = getattr(args, "field_label", None)
    if model_file is not None:
        if getattr(args, "family", None):
            raise InputError("give either --model FILE or --family NAME, not both")
        if args.cluster or args.cluster_file:
            raise InputError("a model file defines its own sites; drop the cluster ("
                             + (" ".join(args.cluster) or args.cluster_file)
                             + ") or put it into the file's [cluster] table")
        model, fixed = models.load_model_file(model_file)
    else:
        name, ints, words = _family_words(args)
        if args.cluster_file and words:
            raise InputError("give either a shape (" + " ".join(words)
                             + ") or --cluster-file, not both")
        if name in ("anderson", "kanamori"):
            if words or args.cluster_file:
                raise InputError(f"--family {name} builds its own sites; drop the cluster ("
                                 + (" ".join(words) or args.cluster_file) + ")")
            model = getattr(models, name)(ints[0])
        else:
            if not words and not args.cluster_file:
                raise InputError("no cluster given; add a shape such as 'ring 4' or "
                                 "--cluster-file F.toml")
            cl = load_cluster_file(args.cluster_file) if args.cluster_file else build_cluster(words)
            model = getattr(models, name)(cl)
        fixed = {}
    if field is not None:
        model = models.with_field(model, field)
    hold = getattr(args, "hold", None)
    if hold is not None:
        for name, value in parse_point(hold, "--hold").items():
            if name not in model.labels:
                raise InputError(f"--hold: {name!r} is not a coupling of the model; its "
                                 "couplings are " + ", ".join(model.labels))
            if name in fixed:
                raise InputError(f"--hold: {name} is fixed to {fixed[name]} by the model file "
                                 "already; leave it out of --hold")
            fixed[name] = value
    return model, fixed


def _electrons(text, model):
    """Electron numbers for the model's space; a spin model takes only 'all'."""
    if not model.space.has_charge:
        if text.strip() != "all":
            raise InputError(f"--electrons {text}: a spin model has no electron number; "
                             "leave --electrons out")
        return None
    return parse_electrons(text, model.n_sites, top=model.space.max_particles)


def _add_model_options(parser, field_options):
    parser.add_argument("--model", metavar="FILE.toml",
                        help="read the model (local space, sites, terms, fixed couplings) "
                             "from a TOML model file (docs/model-files.md; examples in "
                             "worked/*.toml) instead of a family and a cluster")
    parser.add_argument("--family", nargs="+", metavar=("NAME", "N"),
                        help="model family: hubbard (default), heisenberg, t_j, "
                             "'anderson N' (N bath sites) or 'kanamori N' (N orbitals); "
                             "anderson and kanamori need no cluster")
    parser.add_argument("--hold", metavar="NAME=VALUE,...",
                        help="hold these couplings at exact values in the solve (e.g. --hold "
                             "eps_1=-1/2,V_1=1): the energies stay exact in the other couplings, "
                             "and every coupling held saves a variable of the exact algebra")
    parser.add_argument(*field_options, dest="field_label", metavar="LABEL",
                        help="add a Zeeman field -LABEL sum_i 2 S^z_i (coupling LABEL, e.g. h) "
                             "to the model")


def _make_parser():
    p = _Parser(prog="symcluster", description=_DESCRIPTION, epilog=_EXAMPLES,
                formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("--version", action="version", version=f"symcluster {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    lv = sub.add_parser("levels", help="solve a cluster and print/write its levels",
                        description=_LEVELS_HELP, epilog=_EXAMPLES,
                        formatter_class=argparse.RawDescriptionHelpFormatter)
    lv.add_argument("cluster", nargs="*", metavar="CLUSTER",
                    help="shape word and sizes, e.g. 'ring 4' or 'grid 2 3'")
    lv.add_argument("--cluster-file", metavar="FILE.toml",
                    help="read the cluster (sites, labelled bonds, site energies) from a "
                         "TOML cluster file instead (see docs/cluster-files.md)")
    _add_model_options(lv, ("--field", "--with-field"))
    lv.add_argument("--electrons", metavar="LIST", default="all",
                    help="electron numbers to solve: 'all' (default), '2', '2,3' or '1-3'")
    lv.add_argument("--sectors", metavar="SPEC",
                    help="solve only these sectors: groups of KEY=VALUE joined by ',', groups "
                         "joined by ';', keys N, S (Sz without spin symmetry), eta, k (a "
                         "multiple of pi), e.g. 'N=10,S=0;N=9,S=1/2,k=0' (docs/sectors.md); "
                         "not with --electrons")
    lv.add_argument("--at", nargs="+", metavar="NAME=VALUE",
                    help="evaluate every level at this point, e.g. --at t=1 U=4 or "
                         "--at t=1,U=4 (the model's own couplings, e.g. J=1 for --family "
                         "heisenberg; values: integers, decimals, 1e-3 or fractions 3/2; all "
                         "couplings needed; default: no values, exact forms only)")
    lv.add_argument("--over", metavar="NAME:LO:HI:COUNT",
                    help="also print every level at COUNT evenly spaced values of one "
                         "coupling, e.g. --over U:0:20:41, the others from --at (a "
                         "tab-separated table, one row per value and level; the exact table "
                         "and --latex/--json carry no values then; default: no sweep)")
    lv.add_argument("--digits", type=_digits, default=12, metavar="D",
                    help="significant digits of numerical values (default 12)")
    lv.add_argument("--verification", action="store_true",
                    help="print every kind of verification check in the header (default: "
                         "one short line)")
    lv.add_argument("--latex", metavar="FILE.tex", help="also write a LaTeX table")
    lv.add_argument("--standalone", action="store_true",
                    help="make the LaTeX file a complete document for pdflatex")
    lv.add_argument("--json", metavar="FILE.json",
                    help="also write all levels as JSON (exact expressions; docs/outputs.md)")
    lv.add_argument("--show-symmetry", action="store_true",
                    help="also print the symmetries used and block sizes per sector")
    lv.add_argument("--force", action="store_true",
                    help="run even if the estimated memory exceeds what is available")
    lv.add_argument("--serial", action="store_true",
                    help="solve the blocks in this process only (default: all cores for "
                         "large runs)")
    lv.add_argument("--no-lattice", action="store_true",
                    help="do not use the cluster's lattice symmetry (for clusters with too "
                         "many automorphisms, such as 'complete 8')")
    model_opts = argparse.ArgumentParser(add_help=False)
    model_opts.add_argument("cluster", nargs="*", metavar="CLUSTER",
                            help="shape word and sizes, e.g. 'ring 4' or 'grid 2 3'")
    model_opts.add_argument("--cluster-file", metavar="FILE.toml",
                            help="read the cluster from a TOML cluster file instead")
    model_opts.add_argument("--electrons", metavar="LIST", default="all",
                            help="electron numbers to solve first (default all)")
    # thermo's own --field is a number (the field of the thermodynamics), so the analysis
    # commands spell the model's field coupling --with-field
    _add_model_options(model_opts, ("--with-field",))
    model_opts.add_argument("--no-lattice", action="store_true",
                            help="do not use the cluster's lattice symmetry")
    from symcluster.analysis.commands import add_commands
    add_commands(sub, parents=[model_opts], build_spectrum=_analysis_spectrum)
    from symcluster.response.commands import add_commands as add_response_commands
    add_response_commands(sub, [model_opts], build_model, _solve, parse_point)
    from symcluster.catalogue.command import add_command as add_catalogue
    add_catalogue(sub)
    from symcluster.theorems.commands import add_commands as add_theorem_commands
    add_theorem_commands(sub, parents=[model_opts], build_spectrum=_theorem_spectrum)
    sub.add_parser("shapes", help="list the built-in cluster shapes",
                   description="List the built-in cluster shapes and their sizes.")
    sub.add_parser("demo", help="the demo run (same as no arguments)",
                   description=_DESCRIPTION)
    return p


def _digits(text):
    from symcluster.analysis.commands import digits_argument     # one rule for every subcommand
    return digits_argument(text)


def _check_outputs(paths, inputs=()):
    """Before the solve: every output writable, none an input, no two the same file."""
    from symcluster.export.files import check_outputs
    check_outputs(paths, inputs)


def _check_point(point, model, fixed=None):
    fixed = fixed or {}
    for name in point:
        if name in fixed:
            raise InputError(f"--at: {name} is held at {fixed[name]} (--hold or the model "
                             "file's [fixed]); leave it out of --at")
    known = [s.name for s in model.symbols if s.name not in fixed]
    for name in point:
        if name not in known:
            raise InputError(f"--at: unknown coupling {name!r}; this model's couplings are "
                             + ", ".join(known))
    missing = [n for n in known if n not in point]
    if missing:
        raise InputError("--at gives no value for " + ", ".join(missing)
                         + "; give every coupling, e.g. --at "
                         + ",".join(f"{n}=1" for n in known))


def _analysis_spectrum(args):
    """Solve the model named by the shared model options of the analysis commands.

    Every option is checked against the model before the solve starts
    (:func:`symcluster.analysis.commands.check_request`), the output paths
    included.
    """
    from symcluster.analysis.commands import check_request, normalise
    normalise(args)                     # --electrons N as the sector, --over as the sweep
    model, fixed = build_model(args)
    if not model.space.has_charge:
        kind = getattr(args, "analysis", None)
        if kind in ("thermo", "gaps"):
            raise InputError(f"{kind} works with electron numbers, which a spin model does not "
                             "have; use levels, ground-map, series, derivative or plot")
        if getattr(args, "sector", None) is not None:
            raise InputError("--sector: a spin model has no electron number; leave --sector out")
    electrons = _electrons(args.electrons, model)
    check_request(args, model, electrons)
    return _solve(model, electrons, fixed=fixed, lattice=not getattr(args, "no_lattice", False))


def _theorem_spectrum(args):
    """Solve the model of the towers / theorems subcommands (docs/towers.md)."""
    model, fixed = build_model(args)
    electrons = _electrons(args.electrons, model)
    return _solve(model, electrons, fixed=fixed, lattice=not getattr(args, "no_lattice", False))


def _solve(model, electrons, force=False, serial=False, fixed=None, lattice=True, progress=None,
           sectors=None):
    import symcluster
    solve = getattr(symcluster, "solve", None)
    if solve is None:
        raise SymclusterError("this installation has no solver (symcluster.pipeline.solve is missing); "
                              "reinstall symcluster")
    kwargs = {}
    if fixed:
        kwargs["fixed"] = fixed
    if progress is not None:
        kwargs["progress"] = progress
    if force:
        kwargs["force"] = True
    if serial:
        kwargs["executor"] = "serial"
    if not lattice:
        kwargs["lattice"] = False
    if sectors is not None:
        kwargs["sectors"] = sectors
    return solve(model, electrons=electrons, **kwargs)


def _run_levels(args, out, err):
    from symcluster.export import (dumps_spectrum, format_symmetries, format_table, latex_table,
                         write_texts_atomic)
    if args.standalone and not args.latex:
        raise InputError("--standalone needs --latex FILE.tex; add it or drop --standalone")
    model, fixed = build_model(args)
    electrons = _electrons(args.electrons, model)
    sectors = None
    if getattr(args, "sectors", None) is not None:
        from symcluster.blocks.selection import parse_sectors
        if args.electrons != "all":
            raise InputError("--sectors and --electrons together: name N inside --sectors "
                             "(e.g. --sectors 'N=4,S=0') and drop --electrons")
        sectors = parse_sectors(args.sectors)
    at = args.at
    if isinstance(at, (list, tuple)):
        at = " ".join(at)
    point = parse_point(at) if at is not None else None
    sweep = _levels_sweep(args, point, model, fixed)
    if sweep is not None:
        point = None                    # the sweep carries the values
    elif point is not None:
        _check_point(point, model, fixed)
    _check_outputs([args.latex, args.json],
                   inputs=[args.cluster_file, getattr(args, "model", None)])
    from symcluster.pipeline.resources import Progress
    progress = Progress()               # on a terminal, for runs longer than a few seconds
    try:
        spectrum = _solve(model, electrons, getattr(args, "force", False),
                          getattr(args, "serial", False), fixed,
                          not getattr(args, "no_lattice", False), progress, sectors)
        # everything is produced in memory first; files are written only if all succeeded
        n_out = 1 + bool(args.latex) + bool(args.json)
        progress.phase("output, table", n_out, "outputs")
        table = format_table(spectrum, point=point, digits=args.digits,
                             verification="full" if getattr(args, "verification", False)
                             else "short")
        sym = format_symmetries(spectrum) if args.show_symmetry else ""
        if sweep is not None:
            from symcluster.export import format_sweep
            name, values, others = sweep
            table += "\n" + format_sweep(spectrum, name, values, others, args.digits)
        tex = js = None
        if args.latex:
            progress.phase("output, LaTeX", n_out, "outputs", done=1)
            tex = latex_table(spectrum, point=point, digits=args.digits,
                              standalone=args.standalone)
        if args.json:
            progress.phase("output, JSON", n_out, "outputs", done=n_out - 1)
            js = dumps_spectrum(spectrum, point=point, digits=args.digits)
    finally:
        progress.close()
    files = [(path, text) for path, text in ((args.latex, tex), (args.json, js)) if path]
    # all files or none: temporaries first, renamed into place only if every one succeeded;
    # the table is printed only after that, so exit code 2 means no output at all
    write_texts_atomic(files)
    out.write(table)
    if sym:
        out.write("\n" + sym)
    for path, _ in files:
        err.write(f"symcluster: wrote {path}\n")
    return 0


def _levels_sweep(args, point, model, fixed):
    """``levels --over NAME:LO:HI:COUNT``: (name, exact values, other couplings) or None."""
    text = getattr(args, "over", None)
    if text is None:
        return None
    import sympy
    from symcluster.analysis.commands import parse_over
    name, (lo, hi), count = parse_over(text)
    if count is None:
        raise InputError(f"--over {text}: give the number of values too, NAME:LO:HI:COUNT, "
                         f"e.g. --over {name}:{lo}:{hi}:41")
    if not lo < hi:
        raise InputError(f"--over {text}: the range is empty; give LO < HI, e.g. "
                         f"--over {name}:0:20:41")
    free = [s.name for s in model.symbols if s.name not in (fixed or {})]
    if name not in free:
        why = "is held fixed" if name in (fixed or {}) else "is not a coupling of this model"
        raise InputError(f"--over: {name!r} {why}; sweep one of " + ", ".join(free))
    others = {k: v for k, v in (point or {}).items() if k != name}
    missing = [n for n in free if n != name and n not in others]
    if missing:
        raise InputError(f"--over {name} needs the other couplings at fixed values; add --at "
                         + ",".join(f"{n}=1" for n in missing) + " (with your values)")
    _check_point({**others, name: lo}, model, fixed)
    values = [lo + (hi - lo) * sympy.Rational(k, count - 1) for k in range(count)]
    return name, values, others


def _demo_args():
    return argparse.Namespace(cluster=["chain", "2"], cluster_file=None, electrons="all",
                              at=DEMO_POINT, digits=12, latex=DEMO_STEM + ".tex",
                              standalone=True, json=DEMO_STEM + ".json", show_symmetry=False,
                              no_lattice=False)


def _shapes_text():
    lines = ["built-in shapes (every bond has hopping t):"]
    for w, (_, a, d) in SHAPES.items():
        lines.append(f"  {(w + ' ' + ' '.join(a)).strip():<18}{d}")
    return "\n".join(lines) + "\n"


_NEGATIVE_VALUE = re.compile(r"^-\.?[0-9]")


def _single_value_options(parser):
    """Option strings (``--x``) that take exactly one value, in `parser` and its subparsers."""
    out = set()
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub in action.choices.values():
                out |= _single_value_options(sub)
        elif (isinstance(action, argparse._StoreAction) and action.nargs is None
              and action.option_strings):
            out.update(o for o in action.option_strings if o.startswith("--"))
    return out


def _attach_negative_values(argv, single):
    """``--range -10:10`` -> ``--range=-10:10`` for the options in `single` (those that
    take one value): argparse would read a value that starts with a minus sign and is not
    a plain number as an unknown option.  Options that take a list (``--mu -1 0 1``) are
    left alone (argparse reads plain negative numbers there), and so is everything after
    ``--``."""
    out = []
    i = 0
    while i < len(argv):
        tok = argv[i]
        if tok == "--":
            return out + argv[i:]
        if tok in single and i + 1 < len(argv) and _NEGATIVE_VALUE.match(argv[i + 1]):
            out.append(f"{tok}={argv[i + 1]}")
            i += 2
            continue
        out.append(tok)
        i += 1
    return out


def main(argv=None):
    """Run the command line; return the exit code (0 success, 2 bad input).

    Run as the program (``argv`` None, as the ``symcluster`` command and
    ``python -m symcluster`` do), SIGINT and SIGTERM stop the run at once: the
    worker processes are killed, nothing is written, and the process exits with
    130 or 143 (docs/cli.md).  Called with ``argv``, an interruption is a
    ``KeyboardInterrupt`` as usual (exit code 130 returned, nothing written).

    Parameters
    ----------
    argv : list of str, optional
        Arguments without the program name (default ``sys.argv[1:]``).

    Examples
    --------
    >>> main(["shapes"]) == 0 # doctest: +ELLIPSIS
    built-in shapes ...
    True
    """
    if argv is None:
        from symcluster.interrupts import stop_on_signals
        with stop_on_signals():
            return _main(list(sys.argv[1:]))
    return _main(list(argv))


def _command_names(parser):
    """The subcommands registered on the parser (other modules add their own)."""
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            return set(action.choices)
    return set()


def _suggest(word, commands):
    """'did you mean' for a first word that is neither a subcommand nor a shape."""
    if word.startswith("-") or word.lower() in SHAPES or re.match(r"^[0-9]", word):
        return None
    close = difflib.get_close_matches(word, sorted(commands), n=1, cutoff=0.6)
    if close:
        return (f"unknown command {word!r}; did you mean '{close[0]}'? (commands: "
                + ", ".join(sorted(commands)) + ")")
    close = difflib.get_close_matches(word.lower(), list(SHAPES), n=1, cutoff=0.6)
    if close:
        return f"unknown shape {word!r}; did you mean '{close[0]}'? (see 'symcluster shapes')"
    return None


def _main(argv):
    out, err = sys.stdout, sys.stderr
    try:
        if not argv:
            return _run_levels(_demo_args(), out, err)
        parser = _make_parser()
        commands = _command_names(parser)
        if argv[0] not in commands and argv[0] not in ("-h", "--help", "--version"):
            hint = _suggest(argv[0], commands)
            if hint:
                raise _UsageError(hint)
            argv.insert(0, "levels")
        args = parser.parse_args(_attach_negative_values(argv, _single_value_options(parser)))
        if args.command == "shapes":
            out.write(_shapes_text())
            return 0
        if args.command == "demo":
            return _run_levels(_demo_args(), out, err)
        if getattr(args, "func", None) is not None:
            return args.func(args)
        return _run_levels(args, out, err)
    except _UsageError as exc:
        err.write(f"symcluster: error: {_one_line(exc)}\n")
        return 2
    except SymclusterError as exc:
        msg = _one_line(exc)
        if ";" not in msg:
            msg += "; check the input and run 'symcluster --help'"
        err.write(f"symcluster: error: {msg}\n")
        return 2
    except SystemExit as exc:  # --help / --version
        return exc.code if isinstance(exc.code, int) else 0
    except KeyboardInterrupt:
        err.write("symcluster: error: interrupted; nothing was written\n")
        return 130


def _one_line(exc):
    return " ".join(str(exc).split())
