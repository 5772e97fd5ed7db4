"""Running a catalogue: tasks out to an executor, each result into the database as it ends.

:func:`run_catalogue` expands the spec into tasks, adds the new ones to the database,
and sends those still pending to an executor (the local process pool by default; any
``concurrent.futures``-style executor, such as a Dask client's, see
:mod:`symcluster.catalogue.engines`).  Each worker runs :func:`run_task`: the verified
solve of one task, its JSON and its reports, returned as strings.  The run writes each
result in a transaction of its own the moment it arrives, so a stop loses no finished
result, and a later run with the same spec and database does only what is left.

SIGINT and SIGTERM (in the main thread) stop the run cleanly: no new task is sent, the
results that have arrived are written, the workers of a pool the run made are killed,
the run's record says how it ended, and :class:`Stopped` is raised.  A second signal of
the same kind ends the process at once (the database stays consistent: SQLite's
transactions).
"""

import concurrent.futures
import contextlib
import json
import os
import signal
import socket
import threading
import time
from collections import deque
from dataclasses import dataclass

from symcluster.catalogue.reports import REPORTS, Report
from symcluster.catalogue.spec import build_task_model, load_spec, task_key
from symcluster.catalogue.store import (add_tasks, check_database_path, counts, finish_run,
                                        open_database, pending_keys, record_result, start_run)
from symcluster.errors import InputError, SymclusterError
from symcluster.export.jsonio import spectrum_to_dict
from symcluster.interrupts import STOP_SIGNALS, child_pids, kill_processes, process_pool, stop_pool
from symcluster.pipeline.resources import Progress
from symcluster.pipeline.solve import solve
from symcluster.workers import submit

__all__ = ["run_catalogue", "run_task", "CatalogueRun", "Stopped"]


class Stopped(KeyboardInterrupt):
    """The run was stopped by a signal (``signum``); its finished results are saved."""

    def __init__(self, signum):
        super().__init__(signal.Signals(signum).name)
        self.signum = int(signum)
        self.run = None             # the CatalogueRun of what was saved


@dataclass
class CatalogueRun:
    """What a run did: the database, its run id, the spec's tasks by status, and how many
    of them this run finished (``ran``)."""

    database: str
    run_id: int
    tasks: int
    done: int
    failed: int
    pending: int
    ran: int

    def summary(self):
        """One line: the counts and the database.

        Examples
        --------
        >>> CatalogueRun("c.db", 1, 3, 2, 0, 1, 2).summary()
        '3 tasks: 2 done, 0 failed, 1 pending (2 run now); database c.db'
        """
        return (f"{self.tasks} tasks: {self.done} done, {self.failed} failed, "
                f"{self.pending} pending ({self.ran} run now); database {self.database}")


# one task at a time per process: python-flint's and mpmath's precision is process-wide,
# and an executor may run several tasks of one process in threads (a Dask worker)
_ONE_AT_A_TIME = threading.Lock()


def _one_line(exc):
    return " ".join(str(exc).split())


def run_task(task, reports=None):
    """Solve one task and compute its reports; a dict of plain strings and numbers.

    Runs in a worker.  The solve is verified as always and seeded from the task's key,
    so that the same task gives the same text on every worker.  A
    :class:`~symcluster.errors.SymclusterError` (too large, a failed check) makes a
    ``failed`` outcome with its one-line message; so does any other exception, named.

    Parameters
    ----------
    task : dict
        One task of :func:`symcluster.catalogue.catalogue_tasks`.
    reports : dict, optional
        ``{name: Report}`` beyond :data:`~symcluster.catalogue.reports.REPORTS`.

    Returns
    -------
    dict
        ``status`` ("done" or "failed"), ``result`` (JSON text of the spectrum, without
        timings), ``reports`` (JSON text), ``verification`` (summary line),
        ``worst_deviation``, ``error``, ``seconds``, ``worker`` (host:pid).

    Examples
    --------
    >>> from symcluster.catalogue import catalogue_tasks
    >>> task = catalogue_tasks({"format": "symcluster-catalogue",
    ...                         "clusters": {"list": [["chain", 2]]}, "fillings": [2],
    ...                         "reports": ["ground"], "point": {"t": 1, "U": 4}})[0]
    >>> out = run_task(task)
    >>> out["status"], json.loads(out["reports"])["ground"]["energy"]
    ('done', '-0.828427124746190')
    """
    with _ONE_AT_A_TIME:
        return _run_task(task, dict(reports or {}))


def _run_task(task, extra):
    t0 = time.perf_counter()
    out = {"status": "failed", "result": None, "reports": None, "verification": None,
           "worst_deviation": None, "error": None,
           "worker": f"{socket.gethostname()}:{os.getpid()}"}
    try:
        model, fixed = build_task_model(task)
        seed = int(task_key(task)[:8], 16)
        spec = solve(model, electrons=task["electrons"], executor="serial", seed=seed,
                     fixed=fixed or None, progress=False)
        result = None
        if task.get("results", True):
            doc = spectrum_to_dict(spec, point=task["point"], digits=task["digits"],
                                   eigenvectors=task["eigenvectors"])
            doc.pop("timings", None)            # differs from run to run: not a result
            result = json.dumps(doc, sort_keys=True, separators=(",", ":"), allow_nan=False)
        table = {**REPORTS, **extra}
        reports = {name: table[name].fn(spec, task) for name in task["reports"]}
        out.update(status="done", result=result,
                   reports=json.dumps(reports, sort_keys=True, separators=(",", ":"),
                                      allow_nan=False),
                   verification=spec.verification.summary(),
                   worst_deviation=float(spec.verification.worst))
    except SymclusterError as exc:
        out["error"] = _one_line(exc)
    except Exception as exc:                # noqa: BLE001 -- recorded, never silent
        out["error"] = f"{type(exc).__name__}: {_one_line(exc)}"
    out["seconds"] = round(time.perf_counter() - t0, 3)
    return out


class _Signals:
    """While active (main thread only): SIGINT/SIGTERM set ``signum``; a second signal of
    the same kind kills the children and ends the process at once."""

    def __init__(self):
        self.signum = None
        self._old = {}

    def _handle(self, signum, frame):
        if self.signum == signum:
            kill_processes(child_pids())
            os._exit(128 + int(signum))
        self.signum = signum

    def __enter__(self):
        if threading.current_thread() is threading.main_thread():
            for s in STOP_SIGNALS:
                self._old[s] = signal.signal(s, self._handle)
        return self

    def __exit__(self, *exc):
        for s, h in self._old.items():
            signal.signal(s, h if h is not None else signal.SIG_DFL)
        return False


def _default_database(spec):
    if isinstance(spec, dict):
        raise InputError("a spec given as a dict needs db=PATH (the database file)")
    stem, _ = os.path.splitext(os.fspath(spec))
    return stem + ".db"


def _describe(executor, own_workers):
    if own_workers:
        return f"local process pool ({own_workers} workers)"
    return type(executor).__module__ + "." + type(executor).__name__


def run_catalogue(spec, db=None, executor=None, workers=None, retry_failed=False,
                  progress=None, reports=None):
    """Run a catalogue: every task of ``spec`` not finished yet, each result stored as it ends.

    Parameters
    ----------
    spec : str, os.PathLike or dict
        The catalogue spec: a TOML file (docs/catalogues.md) or the parsed document.
    db : str or os.PathLike, optional
        The SQLite database (created if new).  Default: the spec file with ``.db``.
    executor : concurrent.futures.Executor, optional
        Where tasks run (anything with ``submit`` returning futures, e.g.
        ``distributed.Client(...).get_executor()``; see
        :func:`symcluster.catalogue.engines.dask_executor`).  The caller keeps it open
        and shuts it down.  Default: a local process pool of ``workers`` processes,
        made and stopped by this run.
    workers : int, optional
        Size of the default pool (default: the number of cores).
    retry_failed : bool
        Run failed tasks again (default: only pending ones).
    progress : bool, optional
        Progress line on stderr: None (default) on a terminal after a few seconds,
        True always, False never.
    reports : dict, optional
        ``{name: Report}`` of reports beyond the built-in ones, usable by name in the spec
        given as a dict.

    Returns
    -------
    CatalogueRun

    Raises
    ------
    InputError
        A bad spec or database path (nothing is written then).
    Stopped
        SIGINT or SIGTERM arrived; every result that had arrived is saved.

    Examples
    --------
    >>> import os, tempfile, concurrent.futures
    >>> db = os.path.join(tempfile.mkdtemp(), "dimer.db")
    >>> spec = {"format": "symcluster-catalogue", "clusters": {"list": [["chain", 2]]},
    ...         "reports": ["levels", "ground"], "point": {"t": 1, "U": 4}}
    >>> with concurrent.futures.ProcessPoolExecutor(1) as pool:
    ...     run = run_catalogue(spec, db=db, executor=pool, progress=False)
    >>> run.summary().split(";")[0]
    '5 tasks: 5 done, 0 failed, 0 pending (5 run now)'
    >>> run_catalogue(spec, db=db, progress=False).ran   # nothing left to do
    0
    """
    extra = dict(reports or {})
    for name, rep in extra.items():
        if not isinstance(rep, Report):
            raise InputError(f"reports[{name!r}] is not a Report; wrap the function as "
                             "Report(fn, needs_point)")
    loaded = load_spec(spec, reports={**REPORTS, **extra})
    if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int)
                                or workers < 1):
        raise InputError(f"workers={workers!r}; give a whole number >= 1")
    db = _default_database(spec) if db is None else db
    check_database_path(db, inputs=[] if isinstance(spec, dict) else [spec])
    tasks = loaded["tasks"]
    keys = [task_key(t) for t in tasks]
    with _Signals() as stop:
        conn = open_database(db)
        try:
            add_tasks(conn, tasks, keys)
            todo = pending_keys(conn, keys, retry_failed)
            n = workers or os.cpu_count() or 1
            mine = executor is None and bool(todo)
            run_id = start_run(conn, _describe(executor, n if mine else 0), loaded["name"])
            ran = [0]
            outcome, stopped = "error", None
            own = process_pool(n) if mine else None     # the caller's executor stays open
            executor = own if own is not None else executor
            try:
                _loop(conn, run_id, dict(zip(keys, tasks)), todo, executor, extra, stop,
                      progress, len(keys), ran, _window(executor))
                outcome = "complete"
            except Stopped as exc:
                outcome = f"stopped by {signal.Signals(exc.signum).name}"
                stopped = exc
                raise
            except BaseException as exc:
                outcome = f"error: {type(exc).__name__}: {_one_line(exc)}"[:500]
                raise
            finally:
                if own is not None:
                    if outcome == "complete":
                        own.shutdown()
                    else:
                        stop_pool(own)
                finish_run(conn, run_id, outcome)
                c = counts(conn, keys)
                result = CatalogueRun(os.fspath(db), run_id, len(keys), c["done"],
                                      c["failed"], c["pending"], ran[0])
                if stopped is not None:
                    stopped.run = result
        finally:
            conn.close()
    return result


#: tasks in flight on an executor of unknown size (a Dask cluster): enough for a large
#: cluster, few enough that a stop cancels them at once
IN_FLIGHT = 1024


def _window(executor):
    """How many tasks to keep submitted: four per worker of a pool, else IN_FLIGHT."""
    size = getattr(executor, "_max_workers", None)      # concurrent.futures pools
    return 4 * size if isinstance(size, int) and size > 0 else IN_FLIGHT


def _loop(conn, run_id, by_key, todo, executor, extra, stop, progress, total, ran, window):
    prog = Progress(enabled=progress)
    prog.phase("catalogue", total, "tasks", done=total - len(todo))
    queue = deque(todo)
    inflight = {}
    try:
        while queue or inflight:
            while queue and len(inflight) < window and stop.signum is None:
                k = queue.popleft()
                inflight[submit(executor, run_task, by_key[k], extra)] = k
            done, _ = concurrent.futures.wait(list(inflight), timeout=0.2,
                                              return_when=concurrent.futures.FIRST_COMPLETED)
            for fut in done:
                key = inflight.pop(fut)
                if stop.signum is not None and not _arrived(fut):
                    continue        # a worker stopped by the same Ctrl-C: the task stays pending
                _store(conn, run_id, key, fut, ran)
                prog.step()
            if stop.signum is not None:
                for fut in list(inflight):           # arrived meanwhile: keep them
                    if _arrived(fut):
                        _store(conn, run_id, inflight.pop(fut), fut, ran)
                for fut in inflight:
                    fut.cancel()
                raise Stopped(stop.signum)
            prog.tick()
    finally:
        prog.close()


def _arrived(fut):
    """The future holds a worker's outcome (not cancelled, no exception of the executor)."""
    return fut.done() and not fut.cancelled() and fut.exception() is None


def _store(conn, run_id, key, fut, ran):
    if fut.cancelled():
        return
    try:
        outcome = fut.result()
    except Exception as exc:        # the executor lost the task (a worker died)
        raise SymclusterError(
            f"a worker ended before finishing its task ({type(exc).__name__}: "
            f"{_one_line(exc)}); the finished results are saved: run again to resume") from None
    record_result(conn, key, outcome, run_id)
    ran[0] += 1
