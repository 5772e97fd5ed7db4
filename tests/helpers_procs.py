"""Process-table helpers for the tests that stop real runs (Linux /proc; written here,
independently of symcluster.interrupts)."""

import os
import signal
import subprocess
import sys
import time

HAVE_PROC = sys.platform.startswith("linux") and os.path.isdir("/proc/self")


def _stat(pid):
    """(state letter, parent pid) of a process, or None if it is gone."""
    try:
        with open(f"/proc/{pid}/stat", "rb") as fh:
            raw = fh.read()
    except OSError:
        return None
    fields = raw[raw.rindex(b")") + 2:].split()
    return fields[0].decode(), int(fields[1])


def alive(pid):
    """True while the process exists and is not a zombie."""
    st = _stat(pid)
    return st is not None and st[0] not in ("Z", "X")


def descendants(pid):
    """Process ids of every descendant of ``pid`` (children, their children, ...)."""
    parents = {}
    for name in os.listdir("/proc"):
        if name.isdigit():
            st = _stat(int(name))
            if st is not None:
                parents.setdefault(st[1], []).append(int(name))
    out, todo = [], [pid]
    while todo:
        for child in parents.get(todo.pop(), []):
            out.append(child)
            todo.append(child)
    return out


def wait_for(predicate, timeout, step=0.05):
    """Poll ``predicate`` until it is true or ``timeout`` seconds passed; its last value."""
    end = time.monotonic() + timeout
    while True:
        value = predicate()
        if value or time.monotonic() > end:
            return value
        time.sleep(step)


def survivors(pids, timeout=3.0):
    """Those of ``pids`` still alive after waiting up to ``timeout`` seconds for them to end
    (a killed process may need a moment to be reaped by its new parent)."""
    wait_for(lambda: not any(alive(p) for p in pids), timeout)
    return [p for p in pids if alive(p)]


def kill_all(pids):
    """Clean-up of a failed test: SIGKILL whatever of ``pids`` is still alive."""
    for p in pids:
        if alive(p):
            try:
                os.kill(p, signal.SIGKILL)
            except OSError:
                pass


def start_cli(args, cwd, **kwargs):
    """``python -m symcluster ARGS`` in its own session, outputs to files in ``cwd``'s parent
    (pipes would be held open by surviving workers).  Returns (Popen, stdout path, stderr path)."""
    out = os.path.join(os.path.dirname(cwd), os.path.basename(cwd) + ".stdout")
    err = os.path.join(os.path.dirname(cwd), os.path.basename(cwd) + ".stderr")
    with open(out, "wb") as fo, open(err, "wb") as fe:
        proc = subprocess.Popen([sys.executable, "-m", "symcluster", *args], cwd=cwd, stdout=fo,
                                stderr=fe, stdin=subprocess.DEVNULL, start_new_session=True,
                                **kwargs)
    return proc, out, err
