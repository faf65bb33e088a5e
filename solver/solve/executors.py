"""Where the tasks of a study run: in this process, in forked processes on this machine, or on
a Dask distributed cluster.

Every executor has one method, ``map_unordered(fn, shared, items)``, which calls
``fn(shared, item)`` for each item and yields ``(index, value)`` as tasks finish. ``shared`` is
the large object every task reads (the assembled system of a case): the fork pool hands it to
its processes through the fork itself (a module global set before the pool starts, never
pickled, its pages shared copy-on-write), the Dask executor scatters it once to every worker
(broadcast) and passes the future to the tasks. ``fn`` must be a module-level function.

Dask is optional: :func:`open_executor` with a scheduler and no Dask installed raises an
:class:`~copperpath.geometry.errors.InputError` naming the extra to install.
"""
from __future__ import annotations

import contextlib
import multiprocessing
import os

from copperpath.geometry.errors import InputError

_SHARED = None
"""The shared object of the fork pool's tasks (set in the parent before the fork)."""


def _run_shared(job):
    """Pool task: ``(index, fn, item) -> (index, fn(_SHARED, item))``."""
    index, fn, item = job
    return index, fn(_SHARED, item)


class SerialExecutor:
    """Run every task in this process, in order."""

    kind = "serial"
    workers = 1

    def map_unordered(self, fn, shared, items):
        for k, item in enumerate(items):
            yield k, fn(shared, item)

    def describe(self):
        return "in this process"


class ForkPoolExecutor:
    """Run tasks in ``workers`` forked processes of this machine.

    Parameters
    ----------
    workers : int
        Processes (at least 2; one is :class:`SerialExecutor`).
    """

    kind = "processes"

    def __init__(self, workers):
        self.workers = int(workers)

    def map_unordered(self, fn, shared, items):
        global _SHARED
        items = list(items)
        if not items:
            return
        _SHARED = shared
        try:
            ctx = multiprocessing.get_context("fork")
            with ctx.Pool(min(self.workers, len(items))) as pool:
                jobs = [(k, fn, item) for k, item in enumerate(items)]
                yield from pool.imap_unordered(_run_shared, jobs)
        finally:
            _SHARED = None

    def describe(self):
        return f"on {self.workers} processes of this machine"


class DaskExecutor:
    """Run tasks on a Dask distributed cluster.

    Parameters
    ----------
    client : dask.distributed.Client
    cluster : dask.distributed.LocalCluster or None
        Closed with the client when this executor started it.
    address : str
        What was asked for (``"local"`` or the scheduler address), for messages.
    """

    kind = "dask"

    def __init__(self, client, cluster, address):
        self.client, self.cluster, self.address = client, cluster, address

    @property
    def workers(self):
        return max(len(self.client.scheduler_info().get("workers", {})), 1)

    def map_unordered(self, fn, shared, items):
        from dask.distributed import as_completed

        items = list(items)
        if not items:
            return
        # One copy per worker, sent once; hash=False: no token of a large object is computed.
        data = self.client.scatter(shared, broadcast=True, hash=False) if shared is not None \
            else None
        futures = [self.client.submit(fn, data, item, pure=False) for item in items]
        index = {f.key: k for k, f in enumerate(futures)}
        try:
            for future, value in as_completed(futures, with_results=True):
                yield index[future.key], value
        finally:
            self.client.cancel(futures)
            if data is not None:
                self.client.cancel([data])

    def describe(self):
        where = "a local Dask cluster" if self.cluster is not None else \
            f"the Dask scheduler {self.address}"
        return f"on {where} ({self.workers} workers)"

    def close(self):
        self.client.close()
        if self.cluster is not None:
            self.cluster.close()


def _dask_executor(address, workers):
    try:
        from dask.distributed import Client, LocalCluster
    except ImportError:
        raise InputError(f"--scheduler {address}: Dask is not installed; install it with "
                         f"`pip install \"copperpath[cluster]\"` (dask[distributed])") from None
    if address == "local":
        import dask

        # Dask's nanny pins BLAS to one thread in each worker; a different thread count changes
        # the last bits of the dense LU, so the workers keep this process's BLAS threads.
        threads = {k: os.environ.get(k, str(os.cpu_count() or 1))
                   for k in ("OMP_NUM_THREADS", "MKL_NUM_THREADS", "OPENBLAS_NUM_THREADS")}
        with dask.config.set({"distributed.nanny.pre-spawn-environ": threads}):
            cluster = LocalCluster(n_workers=int(workers or 2), threads_per_worker=1,
                                   processes=True, dashboard_address=":0")
        return DaskExecutor(Client(cluster), cluster, address)
    try:
        client = Client(address, timeout=20)
    except (OSError, TimeoutError, ValueError) as err:
        raise InputError(f"--scheduler {address}: no Dask scheduler answered there ({err}); "
                         f"give an address such as tcp://host:8786 or 'local'") from None
    return DaskExecutor(client, None, address)


@contextlib.contextmanager
def open_executor(workers=None, scheduler=None):
    """The executor for ``workers`` processes or a Dask ``scheduler``.

    Parameters
    ----------
    workers : int, optional
        Processes on this machine (``None`` or 1: this process); with ``scheduler="local"`` the
        number of Dask workers (default 2).
    scheduler : str, optional
        ``"local"`` (a :class:`dask.distributed.LocalCluster` of processes, one thread each) or
        the address of a running Dask scheduler.

    Yields
    ------
    SerialExecutor or ForkPoolExecutor or DaskExecutor

    Raises
    ------
    InputError
        ``workers`` below 1, Dask missing, or no scheduler at the address.
    """
    if workers is not None and int(workers) < 1:
        raise InputError(f"--workers must be at least 1, got {workers}")
    if scheduler is not None:
        executor = _dask_executor(str(scheduler), workers)
        try:
            yield executor
        finally:
            executor.close()
        return
    if workers is None or int(workers) == 1:
        yield SerialExecutor()
        return
    if "fork" not in multiprocessing.get_all_start_methods():
        raise InputError(f"--workers {workers}: this platform ({os.name}) cannot fork processes; "
                         f"use --scheduler local")
    yield ForkPoolExecutor(int(workers))
