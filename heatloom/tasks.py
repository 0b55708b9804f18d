"""Running independent tasks: serially, on a local process pool, or on a Dask distributed cluster.

The sweep (:mod:`heatloom.studies.sweep`) and scenario studies (:mod:`heatloom.studies.scenarios`) are many
independent evaluations.  :class:`TaskRunner` maps a module-level function over argument lists with

* a local :class:`concurrent.futures.ProcessPoolExecutor` (the default; workers start from a fork server,
  see :func:`pool_context`),
* plain calls in this process (``workers=1``), or
* a Dask distributed cluster (``cluster``: a scheduler address or a ``dask.distributed.Client``; the
  optional extra ``heatloom[dask]``).

No scheduling of our own: the pool or Dask decides where each task runs; results come back in order, so
results never depend on what ran them.
"""

from __future__ import annotations

import os
import re
from collections.abc import Callable
from concurrent.futures import ProcessPoolExecutor, as_completed

from .errors import InputError

__all__ = ["Progress", "PRELOAD", "TaskRunner", "describe_executor", "pool_context", "local_pool", "one_numeric_thread",
           "numeric_threads"]

Progress = Callable[[str, int, int], None]
"""``progress(phase, done, total)``, called while tasks complete (for progress bars)."""

PRELOAD = ("heatloom.studies.sweep", "heatloom.studies.scenarios", "heatloom.network")
"""Modules the fork server imports once, so that pool workers start with them loaded."""


def pool_context():
    """Start method of the process pool: forkserver (spawn where there is none), never plain fork.

    A forked worker inherits the parent's memory but not its threads; solver libraries (HiGHS) keep
    thread pools that then hang in the child.  The fork server is a fresh process that has imported only
    this module, so its workers start quickly and clean.
    """
    import multiprocessing

    if "forkserver" in multiprocessing.get_all_start_methods():
        ctx = multiprocessing.get_context("forkserver")
        ctx.set_forkserver_preload(list(PRELOAD))
        return ctx
    return multiprocessing.get_context("spawn")


def local_pool(workers: int) -> ProcessPoolExecutor:
    """A local process pool of ``workers`` processes as every pool of heatloom starts one: from the fork server
    (:func:`pool_context`), each worker with one BLAS thread (:func:`one_numeric_thread`)."""
    return ProcessPoolExecutor(max_workers=workers, mp_context=pool_context(), initializer=one_numeric_thread)


def one_numeric_thread() -> None:
    """Process-pool initializer: the native thread pools of this worker (numpy's BLAS, OpenMP) run one
    thread each.

    The pool's workers already keep every core busy; BLAS threads on top of them wait for each other
    (OpenBLAS's threads spin): on a 2-core machine two workers with two BLAS threads each refined 54
    layouts each in 20 s where one worker alone refined 461 (the layout search of ``design --mode tac
    --restructure``; 414 and 466 with one BLAS thread per worker).
    """
    numeric_threads(1)   # not used as a context: the limit holds for the worker's life


def numeric_threads(limit: int = 1):
    """Context manager: the native thread pools of this process (numpy's BLAS, OpenMP) run at most ``limit``
    threads inside the block, as in a worker started with :func:`one_numeric_thread`.  A search that runs
    either in a pool worker or in this process (``workers=1``) takes its steps inside it, so that both do the
    same arithmetic (a BLAS sum split over two threads rounds differently) and give the same result."""
    from threadpoolctl import threadpool_limits

    return threadpool_limits(limits=limit)


class TaskRunner:
    """Runs lists of independent tasks serially, on a process pool or on a Dask cluster; keeps order.

    Parameters
    ----------
    workers : int, optional
        Processes of the local pool; None for one per core; 1 runs serially in this process.
    cluster : str or dask.distributed.Client, optional
        Run on this Dask cluster instead (a scheduler address, or a client the caller keeps).
    progress : callable, optional
        Called as ``progress(phase, done, total)`` while tasks complete.

    Tasks must be module-level functions whose arguments pickle.  :meth:`map` returns results in the
    order of its argument lists, whatever ran them; :meth:`close` shuts the pool (and a client this
    object opened).

    Examples
    --------
    >>> r = TaskRunner(1, None, None)
    >>> r.name, r.map(divmod, [(7, 2), (9, 4)], "demo")
    ('serial', [(3, 1), (2, 1)])
    >>> r.close()
    """

    def __init__(self, workers: int | None, cluster, progress: Progress | None) -> None:
        self.progress = progress
        self._pool = None
        self._client = None
        self._own_client = False
        if cluster is not None:
            try:
                from dask.distributed import Client
            except ImportError:
                raise InputError("a Dask cluster was asked for but dask.distributed is not installed: "
                                 "pip install 'heatloom[dask]' (or \"dask[distributed]\")") from None
            if isinstance(cluster, str):
                self._client = _connect(Client, cluster)
                self._own_client = True
            elif hasattr(cluster, "submit") and hasattr(cluster, "gather"):
                self._client = cluster
            else:
                raise InputError(f"cluster must be a scheduler address or a dask.distributed Client, got "
                                 f"{type(cluster).__name__}")
            self.name = describe_executor(workers, cluster)
        else:
            if workers is not None and (isinstance(workers, bool) or not isinstance(workers, int) or workers < 1):
                raise InputError(f"workers must be a whole number >= 1, got {workers!r}")
            self._workers = workers
            self.name = describe_executor(workers, None)

    def map(self, fn, arglists: list[tuple], phase: str) -> list:
        n = len(arglists)
        if self.progress:
            self.progress(phase, 0, n)
        if n == 0:
            return []
        out = [None] * n
        if self._client is not None:
            from dask.distributed import as_completed as dask_completed

            futures = [self._client.submit(fn, *args, pure=False) for args in arglists]
            index = {f.key: i for i, f in enumerate(futures)}
            for done, f in enumerate(dask_completed(futures), start=1):
                out[index[f.key]] = f.result()
                if self.progress:
                    self.progress(phase, done, n)
            return out
        if self.name == "serial":
            for i, args in enumerate(arglists):
                out[i] = fn(*args)
                if self.progress:
                    self.progress(phase, i + 1, n)
            return out
        if self._pool is None:
            self._pool = local_pool(self._workers)
        futures = {self._pool.submit(fn, *args): i for i, args in enumerate(arglists)}
        for done, f in enumerate(as_completed(futures), start=1):
            out[futures[f]] = f.result()
            if self.progress:
                self.progress(phase, done, n)
        return out

    def close(self) -> None:
        if self._pool is not None:
            self._pool.shutdown(cancel_futures=True)
            self._pool = None
        if self._client is not None and self._own_client:
            self._client.close()
            self._client = None


SCHEDULER_ADDRESS = re.compile(r"^(inproc://\S+|((tcp|tls|ucx)://)?\[?[\w.:-]+\]?:\d{1,5})$")
"""A Dask scheduler address: ``tcp://HOST:PORT`` (``tls://``, ``ucx://`` or no scheme also)."""


def _connect(client_type, address: str):
    """A client of the Dask scheduler at ``address``, or an InputError saying what is expected."""
    expected = "give the scheduler's address, e.g. tcp://HOST:8786"
    text = address.strip()
    if text.lower().startswith(("http://", "https://")):
        raise InputError(f"--cluster {address!r} is a web address (the Dask dashboard, not the scheduler); "
                         f"{expected}")
    if not SCHEDULER_ADDRESS.match(text):
        raise InputError(f"--cluster {address!r} is not a scheduler address; {expected}")
    try:
        return client_type(text, timeout=15)
    except Exception as e:  # noqa: BLE001 - whatever the connection fails with, the user gets one clear line
        raise InputError(f"cannot use a Dask scheduler at {address!r} ({type(e).__name__}: {e}); is a Dask "
                         f"scheduler running there? {expected}") from None


def describe_executor(workers: int | None = None, cluster=None) -> str:
    """What runs the tasks of a sweep with these settings, in words.

    Examples
    --------
    >>> describe_executor(1), describe_executor(2)
    ('serial', 'process pool (2 workers)')
    """
    if cluster is not None:
        return f"Dask cluster {cluster}" if isinstance(cluster, str) else "Dask cluster"
    if workers == 1:
        return "serial"
    return f"process pool ({workers or os.cpu_count() or 1} workers)"
