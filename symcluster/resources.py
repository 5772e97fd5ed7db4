"""Cost estimates, the memory guard and terminal progress for long runs."""

import concurrent.futures
import sys
import threading
import time
from math import comb

from .errors import TooLargeError

__all__ = ["available_memory", "estimate_cost", "check_size", "Progress"]


def available_memory():
    """Bytes of memory available to this process (MemAvailable), or None if unknown."""
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return None


def estimate_cost(n_sites, sectors, group_order=1, spin=False):
    """Rough peak memory (bytes) of a solve over ``sectors`` [(N_up, N_dn), ...].

    Model (measured on ring(6), cube and ring(8), see docs/performance.md):
    ~600 bytes per Fock state held as sparse integer vectors while the blocks
    are built, the dense float64 matrix of the largest verified sector, and
    the interpolation tables of the largest block (dim^2 integers per
    evaluation point, dim points).
    """
    dims = [comb(n_sites, u) * comb(n_sites, d) for u, d in sectors]
    if not dims:
        return 0
    largest = max(dims)
    from .verify import FLOAT_DIM
    dense = 8 * min(largest, FLOAT_DIM) ** 2 * 2
    reduce_by = max(1, group_order) * (2 if spin else 1)
    block = max(1, largest // reduce_by)
    interp = 16 * block ** 2 + 64 * block ** 2
    return 600 * largest * 4 + dense + interp


def check_size(n_sites, sectors, group_order=1, spin=False, force=False):
    """Raise TooLargeError if a run would clearly exceed the available memory."""
    need = estimate_cost(n_sites, sectors, group_order, spin)
    have = available_memory()
    if have is not None and need > 0.8 * have and not force:
        raise TooLargeError(
            f"this run needs an estimated {need / 2 ** 30:.1f} GiB but only "
            f"{have / 2 ** 30:.1f} GiB is available; solve fewer electron numbers "
            f"(electrons=...) or pass force=True (command line: --force) to try anyway")
    return need


class Progress:
    """One-line progress on a terminal (stderr) for runs longer than ``after`` seconds.

    Quiet when stderr is not a terminal or ``enabled`` is False.
    """

    def __init__(self, total, label, enabled=None, after=3.0, stream=None):
        self.stream = stream or sys.stderr
        self.enabled = (self.stream.isatty() if enabled is None else enabled)
        self.total, self.label, self.after = total, label, after
        self.start = time.perf_counter()
        self.done = 0
        self.shown = False

    def step(self, n=1):
        self.done += n
        if not self.enabled:
            return
        elapsed = time.perf_counter() - self.start
        if elapsed >= self.after:
            self.shown = True
            self.stream.write(f"\r{self.label}: {self.done}/{self.total} ({elapsed:.0f} s)")
            self.stream.flush()

    def close(self):
        if self.enabled and self.shown:
            self.stream.write("\n")
            self.stream.flush()


# ----------------------------------------------------------------------------
# executors
# ----------------------------------------------------------------------------

_ONE_AT_A_TIME = threading.Lock()


def _one_at_a_time(fn, *args):
    with _ONE_AT_A_TIME:
        return fn(*args)


def submit(executor, fn, *args):
    """``executor.submit(fn, *args)``, made safe for thread pools.

    python-flint's and mpmath's working precisions are process-wide settings, changed
    and restored around every high-precision step; two threads interleaving those steps
    would compute at each other's precision (seen: a non-finite Laguerre step).  Tasks
    on a ``ThreadPoolExecutor`` therefore run one at a time (same results, no speed-up);
    process pools and other executors that run tasks in separate processes are used as
    they are.
    """
    if isinstance(executor, concurrent.futures.ThreadPoolExecutor):
        return executor.submit(_one_at_a_time, fn, *args)
    return executor.submit(fn, *args)
