"""Executors for catalogues beyond the local process pool: Dask's distributed scheduler.

Optional: ``pip install 'symcluster[distributed]'`` brings ``dask[distributed]``.
:func:`dask_executor` gives a ``concurrent.futures``-style executor either on a running
scheduler (``address``, a real cluster: docs/catalogues.md has the recipes) or on a
``LocalCluster`` it starts and stops itself.  Every worker must be able to import
symcluster (the same version as the run's).

Workers run one symcluster task per process at a time
(:func:`symcluster.catalogue.run_task` holds a lock: the working precision of
python-flint and mpmath is process-wide), so start them with one thread each
(``threads_per_worker=1``; on a cluster ``dask worker --nthreads 1``); more threads
would only wait.
"""

import contextlib

from symcluster.errors import InputError

__all__ = ["dask_executor"]


@contextlib.contextmanager
def dask_executor(address=None, n_workers=2, processes=True, timeout=30):
    """A Dask executor for :func:`~symcluster.catalogue.run_catalogue`, closed on leaving.

    Parameters
    ----------
    address : str, optional
        A running scheduler (``tcp://host:8786``).  None: start a LocalCluster of
        ``n_workers`` workers here, with one thread each, and stop it on leaving.
    n_workers : int
        Workers of the LocalCluster (ignored with ``address``).
    processes : bool
        LocalCluster workers as processes (default) or as threads of this process
        (fast to start; the tasks then run one at a time, see the module docstring).
    timeout : float
        Seconds to wait for the scheduler.

    Yields
    ------
    distributed.client.ClientExecutor

    Raises
    ------
    InputError
        dask's distributed package is not installed, or the scheduler cannot be reached.

    Examples
    --------
    >>> with dask_executor(n_workers=1, processes=False) as ex:
    ...     ex.submit(abs, -2).result()
    2
    """
    try:
        from distributed import Client, LocalCluster
    except ImportError:
        raise InputError("the Dask executor needs dask's distributed package; install it "
                         "with pip install 'symcluster[distributed]'") from None
    if isinstance(n_workers, bool) or not isinstance(n_workers, int) or n_workers < 1:
        raise InputError(f"n_workers={n_workers!r}; give a whole number >= 1")
    cluster = None
    try:
        if address is None:
            cluster = LocalCluster(n_workers=n_workers, threads_per_worker=1,
                                   processes=processes, dashboard_address=None)
            client = Client(cluster, timeout=timeout)
        else:
            try:
                client = Client(address, timeout=timeout)
            except (OSError, TimeoutError, ValueError) as exc:
                raise InputError(f"cannot reach the Dask scheduler at {address!r} "
                                 f"({' '.join(str(exc).split())}); check the address and "
                                 "that the scheduler runs") from None
        try:
            yield client.get_executor(pure=False)
        finally:
            client.close()
    finally:
        if cluster is not None:
            cluster.close()
