"""The ``symcluster catalogue SPEC.toml`` subcommand (registered by :mod:`symcluster.cli`).

The spec and the database path are checked before anything is written: a bad spec is
one line on stderr and exit code 2, and no database is created.  The run then stores
each finished task at once; the last line on stdout sums up the database.  Exit codes:
0 every task of the spec done, 1 some task failed (its row holds the message), 2 bad
input, 130/143 stopped by SIGINT/SIGTERM (the finished tasks are saved: run the same
command again to resume).
"""

import argparse
import os
import re
import sys

__all__ = ["add_command", "run_command"]

_HELP = """\
Run a catalogue: many independent exact solves (clusters x models x fillings)
and their reports, each stored in an SQLite database the moment it finishes.

SPEC.toml lists the clusters (shapes with sizes, shapes x sizes, cluster files,
or every connected graph up to n sites), the models, the fillings, the reports
and the point where reports evaluate levels; docs/catalogues.md has the format
and worked/catalogues/small_graphs.toml an example.

Running the same command again resumes: finished tasks are not redone, and a
changed spec only adds its new tasks.  SIGINT or SIGTERM (Ctrl-C) stops the run
cleanly: results that arrived are saved, the workers are stopped.

Tasks run on a local process pool (--workers), or through Dask's distributed
scheduler (pip install 'symcluster[distributed]'): --scheduler ADDRESS for a
running cluster, --dask-local N for a LocalCluster of N workers on this machine.

exit codes: 0 all done, 1 some tasks failed (see their rows), 2 bad input,
130/143 stopped by SIGINT/SIGTERM (run again to resume)
"""

_EXAMPLES = """\
examples:
  symcluster catalogue worked/catalogues/small_graphs.toml
  symcluster catalogue graphs.toml --db graphs.db --workers 2
  symcluster catalogue graphs.toml --scheduler tcp://10.0.0.5:8786
  symcluster catalogue graphs.toml --status
"""


def _whole(lo, hi):
    def parse(text):
        t = text.strip()
        if not re.match(r"^[0-9]{1,6}$", t) or not lo <= int(t) <= hi:
            raise argparse.ArgumentTypeError(f"{text!r} is not a whole number from {lo} to {hi}")
        return int(t)
    return parse


def add_command(subparsers):
    """Add ``catalogue`` to the command line's subparsers (``func`` set to
    :func:`run_command`); returns its parser.

    Examples
    --------
    >>> parser = argparse.ArgumentParser(prog="symcluster")
    >>> add_command(parser.add_subparsers(dest="command"))    # doctest: +ELLIPSIS
    ArgumentParser(prog='symcluster catalogue', ...)
    >>> args = parser.parse_args(["catalogue", "graphs.toml", "--workers", "2"])
    >>> args.spec, args.workers, args.func is run_command
    ('graphs.toml', 2, True)
    """
    p = subparsers.add_parser("catalogue", help="run a catalogue of solves from a TOML spec",
                              description=_HELP, epilog=_EXAMPLES,
                              formatter_class=argparse.RawDescriptionHelpFormatter)
    p.add_argument("spec", metavar="SPEC.toml", help="the catalogue spec (docs/catalogues.md)")
    p.add_argument("--db", metavar="FILE.db",
                   help="the SQLite database (default: the spec's name with .db)")
    p.add_argument("--workers", type=_whole(1, 4096), metavar="N",
                   help="processes of the local pool (default: all cores)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run the tasks on a running Dask scheduler, e.g. tcp://host:8786")
    p.add_argument("--dask-local", type=_whole(1, 4096), metavar="N",
                   help="run the tasks on a Dask LocalCluster of N workers started here")
    p.add_argument("--retry-failed", action="store_true",
                   help="run the failed tasks again too")
    p.add_argument("--status", action="store_true",
                   help="only print how many of the spec's tasks are done, failed, pending")
    p.set_defaults(func=run_command)
    return p


def run_command(args, out=None, err=None):
    """Run the subcommand for parsed ``args``; the exit code.

    Examples
    --------
    >>> import argparse, os, tempfile
    >>> folder = tempfile.mkdtemp()
    >>> spec = os.path.join(folder, "dimer.toml")
    >>> _ = open(spec, "w").write('format = "symcluster-catalogue"\\n'
    ...                           'fillings = [2]\\n[clusters]\\nlist = [["chain", 2]]\\n')
    >>> args = argparse.Namespace(spec=spec, db=None, workers=1, scheduler=None,
    ...                           dask_local=None, retry_failed=False, status=False)
    >>> run_command(args)       # doctest: +ELLIPSIS
    catalogue dimer.toml: 1 tasks: 1 done, 0 failed, 0 pending (1 run now); database ...dimer.db
    0
    """
    from symcluster.catalogue.runner import Stopped, run_catalogue
    from symcluster.errors import InputError
    out = sys.stdout if out is None else out
    err = sys.stderr if err is None else err
    engines = [o for o, v in (("--workers", args.workers), ("--scheduler", args.scheduler),
                              ("--dask-local", args.dask_local)) if v is not None]
    if len(engines) > 1:
        raise InputError(f"give one of {' and '.join(engines)}: each chooses where tasks run")
    if args.status:
        return _status(args, out)
    try:
        if args.scheduler is not None or args.dask_local is not None:
            from symcluster.catalogue.engines import dask_executor
            from symcluster.catalogue.spec import load_spec
            from symcluster.catalogue.store import check_database_path
            load_spec(args.spec)            # a bad spec: one line before any cluster starts
            check_database_path(args.db or os.path.splitext(args.spec)[0] + ".db",
                                inputs=[args.spec])
            with dask_executor(address=args.scheduler, n_workers=args.dask_local or 2) as ex:
                run = run_catalogue(args.spec, db=args.db, executor=ex)
        else:
            run = run_catalogue(args.spec, db=args.db, workers=args.workers)
    except Stopped as exc:
        saved = exc.run.summary() if exc.run is not None else "the finished tasks are saved"
        err.write(f"symcluster: stopped by {exc}; {saved}; run the same command again to "
                  "resume\n")
        return 128 + exc.signum
    name = _name(args.spec)
    out.write(f"catalogue {name}: {run.summary()}\n")
    return 1 if run.failed else 0


def _name(path):
    return os.path.basename(os.fspath(path))


def _status(args, out):
    from symcluster.catalogue.spec import load_spec, task_key
    from symcluster.catalogue.store import rows
    tasks = load_spec(args.spec)["tasks"]
    db = args.db or os.path.splitext(args.spec)[0] + ".db"
    status = {r["key"]: r["status"] for r in rows(db, ("key", "status"))}
    c = {"done": 0, "failed": 0, "pending": 0}
    for t in tasks:
        c[status.get(task_key(t), "pending")] += 1
    out.write(f"catalogue {_name(args.spec)}: {len(tasks)} tasks: {c['done']} done, "
              f"{c['failed']} failed, {c['pending']} pending; database {db}\n")
    return 0
