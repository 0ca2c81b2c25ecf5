"""A worker that dies in the middle of a campaign: its replicates are run again elsewhere,
every finished replicate is kept, and the campaign completes."""
from __future__ import annotations

import os
import signal
import threading
import time

from evidence1d.campaign.engine import run_tasks
from evidence1d.campaign.store import CampaignStore


def _slow_task(task):
    time.sleep(1.0)
    return {"id": task["id"], "pid": os.getpid(), "failed": None}


def test_lost_worker_tasks_are_rescheduled(dask_client, tmp_path):
    killed = []
    pids = dask_client.run(os.getpid)          # worker address -> process id

    def kill_a_busy_worker():
        deadline = time.time() + 20
        while time.time() < deadline and not killed:
            busy = [w for w, keys in dask_client.processing().items() if keys and w in pids]
            if busy:
                killed.append(busy[0])
                os.kill(pids[busy[0]], signal.SIGKILL)      # dies mid-task, no goodbye
            time.sleep(0.05)

    tasks = [{"id": f"t-{i:02d}"} for i in range(8)]
    store = CampaignStore(tmp_path / "c", {"command": "lost-worker test"})
    timer = threading.Timer(1.5, kill_a_busy_worker)
    timer.start()
    try:
        records = run_tasks(_slow_task, (), tasks, store, executor=dask_client,
                            progress=False)
    finally:
        timer.join()
    assert killed, "no worker was busy to be killed"
    assert [r["id"] for r in records] == [t["id"] for t in tasks]
    assert all(store.done(t["id"]) for t in tasks)
    # the cluster replaced the dead worker (its nanny restarts it) for the tests after this
    dask_client.wait_for_workers(2, timeout=60)
    assert killed[0] not in dask_client.scheduler_info()["workers"]
