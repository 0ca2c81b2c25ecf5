"""Where the jobs of a run go: process pools, or any executor the caller hands in.

Used by :func:`evidence1d.runner.run` (one job per evidence island, then one per model
family), by :func:`evidence1d.report.figures.write_figures` (one job per figure) and by the
campaigns of :mod:`evidence1d.campaign` (one job per replicate).  Without an executor, jobs
run in a process pool of our own with the ``fork`` start method where the platform has it
(``spawn`` on Windows), results come back in job order, and an exception in the parent (a
Ctrl-C included) stops every worker at once.

The executor contract: anything with ``submit(fn, *args)`` returning a future with
``result()`` (a :class:`concurrent.futures.Executor`, a ``dask.distributed.Client``), or a
:class:`multiprocessing.pool.Pool` (``apply_async``), or, failing both, anything with
``map(fn, *iterables)``.  Every job runs with one BLAS thread whatever the executor, so the
numbers do not depend on where it ran.

References
----------
.. [1] Python standard library, ``concurrent.futures`` (PEP 3148): ``submit``, ``map`` and
   ``as_completed``.
.. [2] Dask development team, *Dask.distributed* documentation: ``Client.submit``,
   ``distributed.as_completed``.
"""
from __future__ import annotations

import os

__all__ = ["worker_count", "run_in_pool", "map_jobs", "OneBlasThread"]


def worker_count(workers: int | None, n_jobs: int) -> int:
    """Processes to use for ``n_jobs`` independent jobs.

    Parameters
    ----------
    workers : int or None
        Requested number; None: the environment variable ``EVIDENCE1D_WORKERS`` if set,
        else the number of CPU cores.
    n_jobs : int
        Jobs to share out; never more workers than jobs.

    Returns
    -------
    int
        At least 1.
    """
    if workers is None:
        workers = int(os.environ.get("EVIDENCE1D_WORKERS", "0")) or (os.cpu_count() or 1)
    return max(1, min(int(workers), int(n_jobs)))


def _worker_init() -> None:
    """Worker initialiser.

    * Ctrl-C reaches the whole process group; only the parent acts on it (it stops the
      workers), so the workers print no tracebacks of their own.
    * One BLAS thread per worker: the workers already fill the cores, and threaded BLAS on
      the small products of a likelihood call only adds contention (on the flagship case,
      two workers with default BLAS threads spent 30 % more CPU time for the same work).
      Jobs run in the calling process get one BLAS thread too (see :func:`run_in_pool`).
    """
    import signal

    from threadpoolctl import threadpool_limits
    signal.signal(signal.SIGINT, signal.SIG_IGN)
    threadpool_limits(limits=1, user_api="blas")


def run_in_pool(fn, jobs: list, workers: int, on_result=None, executor=None) -> list:
    """``fn(*job)`` for every job, over ``workers`` processes (in this process if 1), or
    over an ``executor``.

    Parameters
    ----------
    fn : callable
        A module-level function (it is pickled by reference).
    jobs : list of tuple
        Positional arguments of each call.
    workers : int
        Processes; 1 (or a single job) runs the calls here, in order.  Ignored when an
        ``executor`` is given.
    on_result : callable, optional
        Called in this process with each result as it arrives (e.g. to advance a
        progress bar); any order.
    executor : object, optional
        Anything following the executor contract of this module (see :func:`map_jobs`);
        the caller owns it (it is not shut down here).

    Returns
    -------
    list
        The results, in job order.
    """
    if executor is not None:
        return map_jobs(executor, fn, jobs, on_result=on_result)
    if workers <= 1 or len(jobs) <= 1:
        from threadpoolctl import threadpool_limits
        results = []
        # one BLAS thread here too, as in the workers: threaded BLAS sums in another order,
        # and the numbers must not depend on the number of processes (a last-bit difference
        # of unknown cause remains; tests/reliability/test_interrupt.py compares to rounding)
        with threadpool_limits(limits=1, user_api="blas"):
            for job in jobs:
                results.append(fn(*job))
                if on_result is not None:
                    on_result(results[-1])
        return results
    import multiprocessing as mp
    ctx = mp.get_context("spawn" if os.name == "nt" else "fork")
    pool = ctx.Pool(min(workers, len(jobs)), initializer=_worker_init)
    try:
        pending = [pool.apply_async(fn, job, callback=on_result) for job in jobs]
        results = [p.get() for p in pending]
        pool.close()
    except BaseException:
        pool.terminate()
        raise
    finally:
        pool.join()
    return results


class OneBlasThread:
    """``fn`` wrapped to run with one BLAS thread (picklable when ``fn`` is).

    The workers of an executor handed in by the caller are not started here, so the
    limit of :func:`_worker_init` is applied around each call instead.

    Parameters
    ----------
    fn : callable
        A module-level function.
    """

    def __init__(self, fn):
        self.fn = fn
        # dask names a task after its function; keep the wrapped one's name
        self.__name__ = getattr(fn, "__name__", "job")

    def __call__(self, *args):
        from threadpoolctl import threadpool_limits
        with threadpool_limits(limits=1, user_api="blas"):
            return self.fn(*args)


def _is_dask_client(executor) -> bool:
    return type(executor).__module__.split(".")[0] == "distributed"


def map_jobs(executor, fn, jobs: list, on_result=None, retries: int = 0) -> list:
    """``fn(*job)`` for every job on ``executor``; results in job order.

    Parameters
    ----------
    executor : object
        ``submit``-style (``concurrent.futures``, ``dask.distributed.Client``),
        ``apply_async``-style (``multiprocessing`` pools) or ``map``-style.
    fn : callable
        A module-level function.
    jobs : list of tuple
        Positional arguments of each call.
    on_result : callable, optional
        Called here with each result as it completes (``map``-style executors: in job
        order).
    retries : int
        A Dask client re-runs a job that raised up to this many times (a job lost with
        its worker is rescheduled by the scheduler itself).

    Returns
    -------
    list
        The results, in job order.

    Raises
    ------
    Exception
        The first job's exception, after the jobs not yet started are cancelled.
    """
    call = OneBlasThread(fn)
    jobs = [tuple(j) for j in jobs]
    if not jobs:
        return []
    if _is_dask_client(executor):
        from distributed import as_completed
        # pure=False: never merged with another job of equal arguments, never cached
        futures = [executor.submit(call, *job, pure=False, retries=retries) for job in jobs]
        order = {f.key: i for i, f in enumerate(futures)}
        return _collect(futures, as_completed(futures), order, on_result,
                        key=lambda f: f.key)
    if hasattr(executor, "submit"):
        import concurrent.futures as cf
        futures = [executor.submit(call, *job) for job in jobs]
        order = {id(f): i for i, f in enumerate(futures)}
        done = cf.as_completed(futures) if isinstance(futures[0], cf.Future) else futures
        return _collect(futures, done, order, on_result, key=id)
    if hasattr(executor, "apply_async"):
        pending = [executor.apply_async(call, job, callback=on_result) for job in jobs]
        return [p.get() for p in pending]
    if hasattr(executor, "map"):
        results = []
        for r in executor.map(call, *zip(*jobs)):
            results.append(r)
            if on_result is not None:
                on_result(r)
        return results
    raise TypeError(f"an executor needs submit(), apply_async() or map(); "
                    f"{type(executor).__name__} has none")


def _collect(futures, completed, order, on_result, key) -> list:
    """Results of ``futures`` as they complete, put back in job order; on an error the
    remaining futures are cancelled."""
    results = [None] * len(futures)
    try:
        for f in completed:
            results[order[key(f)]] = r = f.result()
            if on_result is not None:
                on_result(r)
    except BaseException:
        for f in futures:
            f.cancel()
        raise
    return results
