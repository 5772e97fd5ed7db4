"""The catalogue database: one SQLite file, one row per task (schema in docs/catalogues.md).

Tables:

``meta``
    ``(name TEXT PRIMARY KEY, value TEXT)``: ``format`` = ``symcluster-catalogue-db``
    and ``version`` = ``1``.
``runs``
    One row per run: ``run_id``, ``started``, ``finished`` (UTC, ISO 8601), ``pid``,
    ``host``, ``executor`` (a description), ``spec`` (the spec's name), ``outcome``
    (``running``, ``complete``, ``stopped by SIGTERM``, ``stopped by SIGINT``,
    ``error: ...``), ``tasks_run`` (tasks this run finished).
``tasks``
    One row per task: ``task_id`` (order of first insertion), ``key`` (UNIQUE, the
    SHA-256 of the task's canonical JSON), ``task`` (that JSON), the readable columns
    ``cluster``, ``n_sites``, ``n_bonds``, ``model``, ``electrons``; the outcome
    ``status`` (``pending``, ``done``, ``failed``), ``result`` (the spectrum as a
    ``symcluster-spectrum`` JSON document without timings), ``reports`` (JSON
    ``{name: dict}``), ``verification`` (the report's one-line summary),
    ``worst_deviation``, ``error`` (one line, failed tasks); and the bookkeeping
    ``run_id``, ``finished``, ``seconds``, ``worker``.

Every finished task is written in a transaction of its own, so a stop at any moment
leaves each row either pending or complete.
"""

import datetime
import json
import os
import socket
import sqlite3

from symcluster.errors import InputError

__all__ = ["DB_FORMAT", "DB_VERSION", "CONTENT_COLUMNS", "open_database", "check_database_path",
           "add_tasks", "pending_keys", "record_result", "start_run", "finish_run", "rows",
           "counts"]

DB_FORMAT = "symcluster-catalogue-db"
DB_VERSION = 1
#: The columns that a task's outcome determines (equal on every executor); the others
#: are bookkeeping (which run, when, how long, where).
CONTENT_COLUMNS = ("key", "task", "cluster", "n_sites", "n_bonds", "model", "electrons",
                   "status", "result", "reports", "verification", "worst_deviation", "error")
_ALL_COLUMNS = ("task_id",) + CONTENT_COLUMNS + ("run_id", "finished", "seconds", "worker")

_SCHEMA = """
CREATE TABLE IF NOT EXISTS meta (name TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS runs (
    run_id INTEGER PRIMARY KEY, started TEXT NOT NULL, finished TEXT, pid INTEGER NOT NULL,
    host TEXT NOT NULL, executor TEXT NOT NULL, spec TEXT NOT NULL,
    outcome TEXT NOT NULL, tasks_run INTEGER NOT NULL DEFAULT 0);
CREATE TABLE IF NOT EXISTS tasks (
    task_id INTEGER PRIMARY KEY, key TEXT NOT NULL UNIQUE, task TEXT NOT NULL,
    cluster TEXT, n_sites INTEGER, n_bonds INTEGER, model TEXT NOT NULL, electrons INTEGER,
    status TEXT NOT NULL CHECK (status IN ('pending', 'done', 'failed')),
    result TEXT, reports TEXT, verification TEXT, worst_deviation REAL, error TEXT,
    run_id INTEGER REFERENCES runs(run_id), finished TEXT, seconds REAL, worker TEXT);
CREATE INDEX IF NOT EXISTS tasks_status ON tasks(status);
"""


def _now():
    return datetime.datetime.now(datetime.timezone.utc).isoformat(timespec="seconds")


def check_database_path(path, inputs=()):
    """Refuse a database path that cannot be one, before anything is written.

    A new path in an existing folder, or an existing catalogue database; never a folder,
    another kind of file, or an input of the run.

    Examples
    --------
    >>> check_database_path("/")
    Traceback (most recent call last):
    ...
    symcluster.errors.InputError: database '/' is a folder; give a file name such as catalogue.db
    """
    path = os.fspath(path)
    real = os.path.realpath(path)
    for other in inputs:
        if other is not None and os.path.realpath(os.fspath(other)) == real:
            raise InputError(f"database {path!r} is an input of the run; give another file "
                             "name such as catalogue.db")
    if os.path.isdir(path):
        raise InputError(f"database {path!r} is a folder; give a file name such as catalogue.db")
    folder = os.path.dirname(os.path.abspath(path))
    if not os.path.isdir(folder):
        raise InputError(f"database {path!r}: folder {folder!r} does not exist; create it "
                         "or give another path")
    if not os.path.exists(path):
        if not os.access(folder, os.W_OK):
            raise InputError(f"database {path!r}: folder {folder!r} is not writable; give "
                             "another path")
        return
    try:
        with open(path, "rb") as fh:
            head = fh.read(16)
    except OSError as exc:
        raise InputError(f"cannot read database {path!r}: {exc.strerror}; check the path") from None
    if head and head != b"SQLite format 3\x00":
        raise InputError(f"{path!r} exists and is not a catalogue database; give a new file "
                         "name or remove it")
    if head:
        conn = sqlite3.connect(f"file:{real}?mode=ro", uri=True)
        try:
            _check_meta(conn, path)
        finally:
            conn.close()


def _check_meta(conn, path):
    try:
        meta = dict(conn.execute("SELECT name, value FROM meta").fetchall())
    except sqlite3.DatabaseError:
        meta = {}
    if meta.get("format") != DB_FORMAT:
        raise InputError(f"{path!r} is an SQLite file but not a catalogue database; give a "
                         "new file name")
    if meta.get("version") != str(DB_VERSION):
        raise InputError(f"{path!r} is a catalogue database of version {meta.get('version')}; "
                         f"this symcluster reads version {DB_VERSION}; give a new file name")


def open_database(path):
    """Open (creating if needed) a catalogue database; returns a ``sqlite3.Connection``.

    Examples
    --------
    >>> import os, tempfile
    >>> conn = open_database(os.path.join(tempfile.mkdtemp(), "c.db"))
    >>> counts(conn)
    {'pending': 0, 'done': 0, 'failed': 0}
    >>> conn.close()
    """
    path = os.fspath(path)
    check_database_path(path)
    conn = sqlite3.connect(path, timeout=60, isolation_level=None)   # explicit transactions
    # the default rollback journal (not WAL): it works on network file systems too, and
    # leaves no side files once a transaction is over
    conn.execute("PRAGMA synchronous=FULL")
    conn.executescript(_SCHEMA)         # each statement atomic; IF NOT EXISTS: idempotent
    conn.execute("BEGIN IMMEDIATE")
    try:
        conn.execute("INSERT OR IGNORE INTO meta VALUES ('format', ?)", (DB_FORMAT,))
        conn.execute("INSERT OR IGNORE INTO meta VALUES ('version', ?)", (str(DB_VERSION),))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    return conn


def _model_text(task):
    m = task["model"]
    if "file" in m:
        name = f"file {m['file']}"
    else:
        name = m["family"] + (f" {m['size']}" if m.get("size") else "")
    if m.get("field"):
        name += f" + field {m['field']}"
    if m.get("hold"):
        name += " (" + ", ".join(f"{k}={v}" for k, v in m["hold"].items()) + ")"
    return name


def add_tasks(conn, tasks, keys):
    """Insert the tasks not in the database yet (one transaction); returns how many were new.

    Examples
    --------
    The life of a row, with the other functions of this module:

    >>> import os, tempfile
    >>> from symcluster.catalogue.spec import catalogue_tasks, task_key
    >>> tasks = catalogue_tasks({"format": "symcluster-catalogue",
    ...                          "clusters": {"list": [["chain", 2]]}, "fillings": [0, 1]})
    >>> keys = [task_key(t) for t in tasks]
    >>> conn = open_database(os.path.join(tempfile.mkdtemp(), "c.db"))
    >>> add_tasks(conn, tasks, keys), add_tasks(conn, tasks, keys)     # no duplicates
    (2, 0)
    >>> run = start_run(conn, "by hand", "example")
    >>> outcome = {"status": "failed", "result": None, "reports": None, "verification": None,
    ...            "worst_deviation": None, "error": "example", "seconds": 0.0, "worker": "-"}
    >>> record_result(conn, keys[0], outcome, run)
    >>> finish_run(conn, run, "complete")
    >>> counts(conn), pending_keys(conn, keys) == keys[1:]
    ({'pending': 1, 'done': 0, 'failed': 1}, True)
    >>> conn.close()
    """
    before = conn.total_changes
    conn.execute("BEGIN IMMEDIATE")
    try:
        for task, key in zip(tasks, keys):
            c = task["cluster"]
            conn.execute(
                "INSERT OR IGNORE INTO tasks (key, task, cluster, n_sites, n_bonds, model, "
                "electrons, status) VALUES (?, ?, ?, ?, ?, ?, ?, 'pending')",
                (key, json.dumps(task, sort_keys=True, separators=(",", ":")),
                 None if c is None else c["name"], None if c is None else c["n_sites"],
                 None if c is None else len(c["bonds"]), _model_text(task),
                 task["electrons"]))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    return conn.total_changes - before


def pending_keys(conn, keys, retry_failed=False):
    """Those of ``keys`` whose task still has to run, in the given order.

    See :func:`add_tasks` for an example.
    """
    wanted = ("pending", "failed") if retry_failed else ("pending",)
    status = dict(conn.execute("SELECT key, status FROM tasks").fetchall())
    return [k for k in keys if status.get(k) in wanted]


def record_result(conn, key, outcome, run_id):
    """Write one finished task (its own transaction).  ``outcome`` is the dict a worker
    returned (:func:`symcluster.catalogue.runner.run_task`).

    See :func:`add_tasks` for an example.
    """
    conn.execute("BEGIN IMMEDIATE")
    try:
        conn.execute(
            "UPDATE tasks SET status = ?, result = ?, reports = ?, verification = ?, "
            "worst_deviation = ?, error = ?, run_id = ?, finished = ?, seconds = ?, worker = ? "
            "WHERE key = ?",
            (outcome["status"], outcome["result"], outcome["reports"], outcome["verification"],
             outcome["worst_deviation"], outcome["error"], run_id, _now(), outcome["seconds"],
             outcome["worker"], key))
        conn.execute("UPDATE runs SET tasks_run = tasks_run + 1 WHERE run_id = ?", (run_id,))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise


def _alive(pid):
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:
        return True
    return True


def start_run(conn, executor, spec_name):
    """Record a new run and return its id; refuse while another live run writes here.

    A run still marked ``running`` whose process is gone (killed outright) is marked
    ``ended without a record`` first.

    See :func:`add_tasks` for an example.
    """
    host = socket.gethostname()
    conn.execute("BEGIN IMMEDIATE")
    try:
        for run_id, pid, run_host in conn.execute(
                "SELECT run_id, pid, host FROM runs WHERE outcome = 'running'").fetchall():
            if run_host == host and pid != os.getpid() and _alive(pid):
                raise InputError(f"run {run_id} (process {pid}) is still writing to this "
                                 "database; wait for it or stop it, then run again")
            if run_host == host or pid == os.getpid():
                conn.execute("UPDATE runs SET outcome = 'ended without a record' "
                             "WHERE run_id = ?", (run_id,))
        cur = conn.execute("INSERT INTO runs (started, pid, host, executor, spec, outcome) "
                           "VALUES (?, ?, ?, ?, ?, 'running')",
                           (_now(), os.getpid(), host, executor, spec_name))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise
    return cur.lastrowid


def finish_run(conn, run_id, outcome):
    """Close the run's record with ``outcome`` (one transaction).

    See :func:`add_tasks` for an example.
    """
    conn.execute("BEGIN IMMEDIATE")
    try:
        conn.execute("UPDATE runs SET finished = ?, outcome = ? WHERE run_id = ?",
                     (_now(), outcome, run_id))
        conn.execute("COMMIT")
    except BaseException:
        conn.execute("ROLLBACK")
        raise


def counts(conn, keys=None):
    """``{"pending": n, "done": n, "failed": n}`` over all tasks (or those of ``keys``).

    See :func:`add_tasks` for an example.
    """
    out = {"pending": 0, "done": 0, "failed": 0}
    if keys is None:
        for status, n in conn.execute("SELECT status, COUNT(*) FROM tasks GROUP BY status"):
            out[status] = n
        return out
    status = dict(conn.execute("SELECT key, status FROM tasks").fetchall())
    for k in keys:
        out[status[k]] += 1
    return out


def rows(path, columns=CONTENT_COLUMNS):
    """Every task row of the database at ``path`` as dicts (by ``task_id``), read-only.

    Examples
    --------
    >>> import os, tempfile
    >>> p = os.path.join(tempfile.mkdtemp(), "c.db")
    >>> open_database(p).close()
    >>> rows(p)
    []
    """
    path = os.fspath(path)
    unknown = [c for c in columns if c not in _ALL_COLUMNS]
    if unknown:
        raise InputError(f"column {unknown[0]!r} is not a column of the tasks table; choose "
                         "from " + ", ".join(_ALL_COLUMNS))
    if not os.path.exists(path):
        raise InputError(f"no catalogue database at {path!r}; run the catalogue first")
    conn = sqlite3.connect(f"file:{os.path.realpath(path)}?mode=ro", uri=True, timeout=60)
    try:
        _check_meta(conn, path)
        cols = ", ".join(columns)
        cur = conn.execute(f"SELECT {cols} FROM tasks ORDER BY task_id")
        return [dict(zip(columns, r)) for r in cur.fetchall()]
    finally:
        conn.close()
