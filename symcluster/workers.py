"""Running tasks on an executor: the one place that submits work to workers.

python-flint's and mpmath's working precisions are process-wide settings, changed and
restored around every high-precision step; two threads interleaving those steps would
compute at each other's precision.  :func:`submit` therefore runs the tasks of a
``ThreadPoolExecutor`` one at a time; process pools and other executors that run tasks in
separate processes are used as they are.
"""

import concurrent.futures
import threading

__all__ = ["submit"]

_ONE_AT_A_TIME = threading.Lock()


def _one_at_a_time(fn, *args):
    with _ONE_AT_A_TIME:
        return fn(*args)


def submit(executor, fn, *args):
    """``executor.submit(fn, *args)``, made safe for thread pools.

    Examples
    --------
    >>> import concurrent.futures
    >>> with concurrent.futures.ThreadPoolExecutor(2) as pool:
    ...     submit(pool, pow, 2, 10).result()
    1024
    """
    if isinstance(executor, concurrent.futures.ThreadPoolExecutor):
        return executor.submit(_one_at_a_time, fn, *args)
    return executor.submit(fn, *args)
