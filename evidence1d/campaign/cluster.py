"""Where a campaign runs: a Dask cluster (local by default, or an existing one), or a
process pool of this machine when Dask is not installed.

Dask is an optional extra (``pip install "evidence1d[cluster]"``): a run of one case needs
nothing but a process pool, and a campaign on one machine still works without it.

References
----------
.. [1] Dask development team, *Dask.distributed* documentation: ``LocalCluster``,
   ``Client``, ``dask scheduler`` / ``dask worker``.
"""
from __future__ import annotations

import os
import sys
from contextlib import contextmanager

from ..errors import InputError

__all__ = ["campaign_executor"]


def _distributed():
    try:
        import distributed
    except ImportError:
        return None
    return distributed


@contextmanager
def campaign_executor(scheduler: str | None = None, workers: int | None = None,
                      local: str = "dask", say=None):
    """The executor of a campaign, closed when the block ends.

    Parameters
    ----------
    scheduler : str, optional
        Address of a running Dask scheduler (``tcp://host:8786``); its workers run the
        replicates.
    workers : int, optional
        Workers of a local cluster or pool (default: ``EVIDENCE1D_WORKERS`` or the cores).
    local : {"dask", "processes"}
        Without a scheduler: a Dask ``LocalCluster`` (one single-threaded worker process
        per core), or None (the caller's process pool).  Without Dask installed, the
        process pool.
    say : callable, optional
        Receives one line saying where the campaign runs (default: standard error).

    Yields
    ------
    object or None
        A ``dask.distributed.Client``, or None for the local process pool.

    Raises
    ------
    InputError
        A scheduler address without Dask installed, or a scheduler that cannot be reached.
    """
    say = say or (lambda line: print(line, file=sys.stderr))
    distributed = _distributed()
    if scheduler:
        if distributed is None:
            raise InputError("--scheduler needs Dask: pip install \"evidence1d[cluster]\"")
        try:
            client = distributed.Client(scheduler, timeout="20s")
        except (OSError, TimeoutError) as exc:
            raise InputError(f"cannot reach the Dask scheduler at {scheduler} ({exc}); "
                             "start it with 'dask scheduler' and its workers with "
                             f"'dask worker {scheduler}'") from None
        n = len(client.scheduler_info().get("workers", {}))
        say(f"campaign on the Dask cluster at {scheduler} ({n} worker(s) now)")
        try:
            yield client
        finally:
            client.close()
        return
    n = workers or int(os.environ.get("EVIDENCE1D_WORKERS", "0")) or (os.cpu_count() or 1)
    if local != "dask" or distributed is None:
        if local == "dask":
            say("Dask is not installed (pip install \"evidence1d[cluster]\"): campaign on "
                f"a process pool of {n} worker(s)")
        yield None
        return
    cluster = distributed.LocalCluster(n_workers=int(n), threads_per_worker=1,
                                       processes=True, dashboard_address=":0")
    client = distributed.Client(cluster)
    say(f"campaign on a local Dask cluster of {n} worker process(es)")
    try:
        yield client
    finally:
        client.close()
        cluster.close()
