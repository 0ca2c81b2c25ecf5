"""Process pools of a run: how many workers, how they start, and how a Ctrl-C stops them.

Used by :func:`evidence1d.runner.run` (one job per evidence island, then one per model
family) and by
:func:`evidence1d.report.figures.write_figures` (one job per figure).  Jobs are run with the
``fork`` start method where the platform has it (``spawn`` on Windows), results come back in
job order, and an exception in the parent (a Ctrl-C included) stops every worker at once.
"""
from __future__ import annotations

import os

__all__ = ["worker_count", "run_in_pool"]


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


def run_in_pool(fn, jobs: list, workers: int, on_result=None) -> list:
    """``fn(*job)`` for every job, over ``workers`` processes (in this process if 1).

    Parameters
    ----------
    fn : callable
        A module-level function (it is pickled by reference).
    jobs : list of tuple
        Positional arguments of each call.
    workers : int
        Processes; 1 (or a single job) runs the calls here, in order.
    on_result : callable, optional
        Called in this process with each result as it arrives (e.g. to advance a
        progress bar); any order.

    Returns
    -------
    list
        The results, in job order.
    """
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
