"""Stopping a run cleanly: pool processes that never outlive it, and SIGINT/SIGTERM.

Three pieces, used by :mod:`symcluster.pipeline.solve`, :mod:`symcluster.export` and the
command line:

* :func:`process_pool` makes the process pool of a solve.  Its processes ignore
  SIGINT (Ctrl-C reaches the whole process group; the run that started them
  decides), die at once on SIGTERM, and on Linux are killed by the kernel as soon
  as the process that started them ends, however it ends (``PR_SET_PDEATHSIG``).
  :func:`stop_pool` kills them at once and shuts the pool down without waiting for
  the tasks they were running (``shutdown`` alone waits for those, which took
  minutes on an 8-site cluster).
* :func:`signals_held` keeps SIGINT and SIGTERM pending while output files are put
  in place, so that a stop leaves every output complete or none of them, and no
  temporary file behind.
* :func:`stop_on_signals` (the command line) makes SIGINT and SIGTERM end the run
  within a moment: every child process is killed, one note goes to stderr and the
  process exits with 128 + the signal number (130, 143) without writing anything.

This module imports nothing from symcluster (it is below every other module).
"""

import contextlib
import functools
import gc
import os
import signal
import sys
import time

__all__ = ["STOP_SIGNALS", "process_pool", "stop_pool", "child_pids", "kill_processes",
           "signals_held", "outputs_commit", "stop_on_signals"]

#: the signals that stop a run
STOP_SIGNALS = (signal.SIGINT, signal.SIGTERM)

_PR_SET_PDEATHSIG = 1           # <linux/prctl.h>


def _die_with_parent(parent):
    """In a new pool process: be killed when ``parent`` ends (Linux), and handle signals
    as a worker should.  Exits at once if ``parent`` has already ended."""
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    signal.signal(signal.SIGTERM, signal.SIG_DFL)
    if sys.platform.startswith("linux"):
        try:
            import ctypes
            libc = ctypes.CDLL(None, use_errno=True)
            libc.prctl(_PR_SET_PDEATHSIG, int(signal.SIGKILL), 0, 0, 0)
        except (OSError, AttributeError):      # no prctl: stop_pool / kill_processes remain
            pass
    if os.getppid() != parent:                  # the parent ended before prctl took effect
        os._exit(1)


def process_pool(workers):
    """A ``ProcessPoolExecutor`` of ``workers`` processes that never outlive this process.

    Parameters
    ----------
    workers : int
        Number of processes (>= 1).

    Returns
    -------
    concurrent.futures.ProcessPoolExecutor

    Examples
    --------
    >>> pool = process_pool(1)
    >>> pool.submit(abs, -3).result()
    3
    >>> stop_pool(pool)
    """
    import concurrent.futures
    pool = concurrent.futures.ProcessPoolExecutor(
        max_workers=workers, initializer=_die_with_parent, initargs=(os.getpid(),))
    # the workers are forked by the first submit; a SIGINT that lands inside the fork's
    # after-fork hooks would raise KeyboardInterrupt there, where Python prints and drops
    # it, and the run would go on.  So they are forked here with the stop signals recorded
    # and delivered right after, when an interrupt is raised where it can be caught (and
    # then the new pool is stopped before it propagates).
    try:
        with _held():
            pool.submit(int)
    except BaseException:
        stop_pool(pool)
        raise
    return pool


def stop_pool(pool):
    """Kill the processes of ``pool`` now and shut it down without waiting for their tasks.

    Parameters
    ----------
    pool : concurrent.futures.ProcessPoolExecutor

    Examples
    --------
    >>> pool = process_pool(1)
    >>> _ = pool.submit(abs, 1).result()
    >>> stop_pool(pool)
    >>> pool.submit(abs, 1)
    Traceback (most recent call last):
    ...
    RuntimeError: cannot schedule new futures after shutdown
    """
    # the executor keeps its processes in ``_processes`` (pid -> Process); killing them
    # first makes the shutdown below return at once (it would wait for running tasks)
    # The teardown runs finalizers (weakref callbacks of queues and processes); a
    # KeyboardInterrupt raised inside one is printed and dropped by Python, so the stop
    # signals are held meanwhile and raised on leaving, after the garbage is collected.
    with _held():
        processes = list((getattr(pool, "_processes", None) or {}).values())
        for proc in processes:
            with contextlib.suppress(OSError, ValueError, AttributeError):
                proc.kill()
        pool.shutdown(wait=True, cancel_futures=True)
        for proc in processes:
            with contextlib.suppress(OSError, ValueError, AttributeError, AssertionError):
                proc.join(1.0)
        processes = proc = None          # released here, under the held signals
        gc.collect()


def child_pids():
    """Process ids of this process's children (Linux: read from /proc; elsewhere the
    processes that multiprocessing started).

    Examples
    --------
    >>> import subprocess, sys
    >>> child = subprocess.Popen([sys.executable, "-c", "import time; time.sleep(60)"])
    >>> child.pid in child_pids()
    True
    >>> kill_processes([child.pid]) == [child.pid]
    True
    >>> child.pid in child_pids()       # killed and reaped
    False
    >>> _ = child.wait()
    """
    me = os.getpid()
    out = []
    try:
        names = os.listdir("/proc")
    except OSError:
        names = []
    for name in names:
        if not name.isdigit():
            continue
        try:
            with open(f"/proc/{name}/stat", "rb") as fh:
                stat = fh.read()
        except OSError:
            continue
        fields = stat[stat.rindex(b")") + 2:].split()
        if len(fields) > 1 and int(fields[1]) == me:
            out.append(int(name))
    if not names:
        import multiprocessing
        with contextlib.suppress(Exception):
            out = [p.pid for p in multiprocessing.active_children() if p.pid]
    return out


def kill_processes(pids, wait=1.0):
    """Kill the child processes ``pids`` (SIGKILL) and reap them.

    Waits at most ``wait`` seconds for them to end; returns the ids that were signalled.
    See :func:`child_pids` for an example.
    """
    pids = list(pids)
    for pid in pids:
        with contextlib.suppress(OSError):
            os.kill(pid, signal.SIGKILL)
    deadline = time.monotonic() + wait
    left = set(pids)
    while left and time.monotonic() < deadline:
        for pid in list(left):
            try:
                done, _ = os.waitpid(pid, os.WNOHANG)
            except OSError:                 # not ours, or reaped elsewhere (its Popen)
                done = pid
            if done:
                left.discard(pid)
        if left:
            time.sleep(0.01)
    return pids


@contextlib.contextmanager
def _held():
    """SIGINT and SIGTERM are recorded meanwhile and raised again on leaving.

    Not with ``pthread_sigmask``: a signal sent to the process is delivered to any thread
    that does not block it, and numerical libraries start threads of their own.  Python
    runs signal handlers in the main thread only, so the handlers are swapped there.
    """
    import threading
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    pending = []

    def record(signum, frame):
        pending.append(signum)

    old = {}
    try:
        for s in STOP_SIGNALS:
            old[s] = signal.signal(s, record)
        yield
    finally:
        for s, handler in old.items():
            signal.signal(s, signal.SIG_DFL if handler is None else handler)
        for s in dict.fromkeys(pending):
            signal.raise_signal(s)      # now handled as it would have been


def signals_held(fn):
    """Decorator: SIGINT and SIGTERM wait until ``fn`` has returned (or raised).

    A signal that arrives meanwhile is delivered right after, so a stop never falls
    between two steps that must happen together (writing and renaming several output
    files: all of them or none).  Only for short steps: the signals wait meanwhile.

    Examples
    --------
    >>> @signals_held
    ... def commit(x):
    ...     return x + 1
    >>> commit(1)
    2
    """
    @functools.wraps(fn)
    def held(*args, **kwargs):
        with _held():
            return fn(*args, **kwargs)
    return held


def outputs_commit(fn):
    """Decorator for the step that puts a run's outputs in place: like :func:`signals_held`,
    and once ``fn`` has returned, a stop signal comes too late to stop the command line
    (:func:`stop_on_signals`): the outputs are complete, so the run finishes as usual
    (it only prints what it wrote).

    Examples
    --------
    >>> @outputs_commit
    ... def put_in_place(paths):
    ...     return len(paths)
    >>> put_in_place(["a.json", "a.tex"])
    2
    """
    @functools.wraps(fn)
    def commit(*args, **kwargs):
        with _held():
            out = fn(*args, **kwargs)
            _STATE["committed"] = True      # still held: no stop signal runs before this
        return out
    return commit


def _stop(signum, frame):
    """Handler of SIGINT/SIGTERM in the command line: stop now, write nothing."""
    code = 128 + int(signum)
    if os.getpid() == _STATE["owner"] and _STATE["committed"]:
        return              # the outputs are in place: the run finishes (it only prints)
    if os.getpid() == _STATE["owner"]:
        kill_processes(child_pids())
        name = signal.Signals(signum).name
        with contextlib.suppress(OSError):
            # on a terminal the progress line (or the echoed ^C) is still open: end it
            start = "\n" if os.isatty(2) else ""
            os.write(2, f"{start}symcluster: stopped by {name}; nothing was written\n".encode())
    # no clean-up in Python: temporary output files exist only while the signals are
    # held (signals_held), and stdout's buffer holds nothing yet (the table is printed last)
    os._exit(code)


_STATE = {"owner": None, "committed": False}


@contextlib.contextmanager
def stop_on_signals():
    """While active, SIGINT and SIGTERM stop the process at once (exit 130 / 143).

    On either signal every child process (the pool's workers) is killed, a note goes
    to stderr, and the process ends with ``os._exit(128 + signal number)``: no file is
    written and no ``finally`` block runs.  Once the outputs are in place
    (:func:`outputs_commit`), the signals no longer stop the run, which then only
    prints what it wrote.  For the command line only; library code
    gets ``KeyboardInterrupt`` as usual.  Outside the main thread it does nothing.
    The previous handlers are restored on leaving, except after the outputs were put in
    place: then the signals are ignored until the process exits, so that a stop arriving
    while the interpreter shuts down cannot end with a signal status after a complete run.

    Examples
    --------
    >>> with stop_on_signals():
    ...     pass
    """
    import threading
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    _STATE.update(owner=os.getpid(), committed=False)
    old = {s: signal.getsignal(s) for s in STOP_SIGNALS}
    try:
        for s in STOP_SIGNALS:
            signal.signal(s, _stop)
        yield
    finally:
        for s, h in old.items():
            if _STATE["committed"]:
                signal.signal(s, signal.SIG_IGN)    # the run is complete: it only exits
            else:
                signal.signal(s, h if h is not None else signal.SIG_DFL)
