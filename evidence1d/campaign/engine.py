"""Running a campaign's replicates: one job each, on any executor, results kept as they
arrive.

Replicates already in the store are not computed again.  The others are sent as one job
each to the executor (a ``dask.distributed.Client``, any ``concurrent.futures`` executor or
``multiprocessing`` pool; without one, a process pool of this machine); each result is
written to its own file here, in this process, the moment it arrives, so the workers need
no shared folder and nothing finished is lost when the campaign is interrupted.  On Dask, a
job that raised is retried once, and a job whose worker died is rescheduled by the
scheduler on another worker.

References
----------
.. [1] Dask development team, *Dask.distributed* documentation: ``Client.submit``
   (``retries``), ``as_completed``, and the scheduler's handling of lost workers
   (``distributed.scheduler.allowed-failures``).
"""
from __future__ import annotations

import time

__all__ = ["run_tasks"]


def run_tasks(fn, args: tuple, tasks: list, store, *, executor=None, workers=None,
              progress: bool = True, label: str = "replicates") -> list:
    """Every task's record: from the store if finished, else ``fn(*args, task)``.

    Parameters
    ----------
    fn : callable
        A module-level function returning a record dict with the task's ``id``
        (:func:`evidence1d.campaign.replicate.run_replicate`).
    args : tuple
        Its leading arguments, the same for every task (the case, the settings).
    tasks : list of dict
        Each with a unique ``id``.
    store : CampaignStore
    executor : object, optional
        Follows the contract of :mod:`evidence1d.parallel`; None: a process pool of
        ``workers`` processes.
    workers : int, optional
        Processes of the local pool (default: ``EVIDENCE1D_WORKERS`` or the cores).
    progress : bool
        A progress bar on standard error.
    label : str
        The bar's name.

    Returns
    -------
    list of dict
        The records, in task order.
    """
    from ..inference.progress import stage_bar
    from ..parallel import map_jobs, run_in_pool, worker_count

    records = {t["id"]: store.load(t["id"]) for t in tasks}
    todo = [t for t in tasks if records[t["id"]] is None]
    where = (type(executor).__name__ if executor is not None
             else f"{worker_count(workers, len(todo))} local process(es)")
    store.log(f"{len(tasks) - len(todo)} of {len(tasks)} {label} already finished; "
              f"{len(todo)} to run on {where}")
    if todo:
        bar = stage_bar(len(todo), progress, label, unit="replicate")
        t0 = time.time()

        def keep(rec):
            store.save(rec)
            records[rec["id"]] = rec
            bar.update(1)
            if rec.get("failed"):
                store.log(f"{rec['id']}: failed: {rec['failed']}")

        jobs = [(*args, t) for t in todo]
        try:
            if executor is not None:
                map_jobs(executor, fn, jobs, on_result=keep, retries=1)
            else:
                run_in_pool(fn, jobs, worker_count(workers, len(jobs)),
                            on_result=keep)
        finally:
            bar.close()
            n_new = sum(records[t["id"]] is not None for t in todo)
            store.log(f"{n_new} {label} computed in {time.time() - t0:.1f} s")
    return [records[t["id"]] for t in tasks]
