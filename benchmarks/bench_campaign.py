"""Campaign speed: replicates per hour on the flagship design, scaling with workers on a Dask
LocalCluster, memory per worker; and whether the fast replicate settings give the same
decisions as the full settings on the flagship data.

Run by hand from the repository root on a quiet machine (not a test)::

    python benchmarks/bench_campaign.py                      # 1 and 2 workers, 2 per family
    python benchmarks/bench_campaign.py --workers 1,2,4 --replicates 3
    python benchmarks/bench_campaign.py --quick --json benchmarks/campaign_results.json
    python benchmarks/bench_campaign.py --decisions          # fast vs full settings
    python benchmarks/bench_campaign.py --json results.json  # also write the numbers

Throughput is measured on one and the same set of replicates (same seed) for every worker
count, from the first task sent to the last result kept, without the cluster's start-up
(timed apart).  Scaling model: replicates are independent tasks of minutes each, so the
rate is r(n) = n · r(1) · e, with e the efficiency measured at the largest worker count
here (scheduler overhead is milliseconds per task; e < 1 comes from cores shared with other
work and from uneven task lengths at the end of a campaign).  Memory per worker: its
resident set after the campaign and its peak (``ru_maxrss``).  Machine load: the load
average at the start and the end of each worker count and its 1-minute value sampled every
5 s during the campaign (mean and maximum), since on a shared machine the other work takes
cores from the workers.  ``--quick`` fits with the smoke settings of ``calibrate --quick``:
shorter tasks, the same scaling; its rates are not the rates of a real campaign.
``benchmarks/campaign_results.json`` is the committed record (``benchmarks/results.json``
belongs to ``run.py``, which rewrites it whole).

References
----------
.. [1] G. M. Amdahl, AFIPS Conf. Proc. 30, 483 (1967): the serial fraction bounds the
   speed-up; here it is the tail of the last, uneven tasks.
.. [2] Dask development team, *Dask.distributed* documentation (``LocalCluster``).
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def _rss_mb():
    import psutil
    return psutil.Process().memory_info().rss / 2 ** 20


def _peak_rss_mb():
    import resource
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0   # KiB on Linux


class _LoadSampler:
    """The 1-minute load average every ``every`` seconds, in a thread, while a block runs."""

    def __init__(self, every: float = 5.0):
        import threading
        self.every, self.samples = every, []
        self._stop = threading.Event()
        self._thread = threading.Thread(target=self._run, daemon=True)

    def _run(self):
        while not self._stop.is_set():
            self.samples.append(os.getloadavg()[0])
            self._stop.wait(self.every)

    def __enter__(self):
        self.start = list(os.getloadavg())
        self._thread.start()
        return self

    def __exit__(self, *exc):
        self._stop.set()
        self._thread.join()
        self.end = list(os.getloadavg())

    def summary(self) -> dict:
        return {"start": self.start, "end": self.end,
                "during_mean": sum(self.samples) / max(len(self.samples), 1),
                "during_max": max(self.samples, default=None), "samples": len(self.samples)}


def machine() -> dict:
    """Date, platform, cores, Python and package versions, load average now."""
    import platform
    from importlib.metadata import version
    return {"date": time.strftime("%Y-%m-%dT%H:%M:%S%z"), "platform": platform.platform(),
            "cores": os.cpu_count(), "python": platform.python_version(),
            "versions": {p: version(p) for p in ("evidence1d", "numpy", "scipy", "emcee",
                                                  "dask", "distributed")},
            "load_average": list(os.getloadavg()), **_commit()}


def _commit() -> dict:
    """The commit measured and whether the tree had changes not committed."""
    import subprocess
    try:
        head = subprocess.run(["git", "rev-parse", "HEAD"], cwd=ROOT, capture_output=True,
                              text=True, check=True).stdout.strip()
        dirty = subprocess.run(["git", "status", "--porcelain", "--untracked-files=no"],
                               cwd=ROOT, capture_output=True, text=True,
                               check=True).stdout.strip()
    except (OSError, subprocess.CalledProcessError):
        return {"commit": None, "tree_dirty": None}
    return {"commit": head, "tree_dirty": bool(dirty)}


def throughput(case, workers: int, replicates: int, seed: int, quick: bool = False) -> dict:
    """Replicates per hour of a calibration of ``case`` on ``workers`` local Dask workers."""
    import distributed

    from evidence1d.campaign import calibrate
    t0 = time.perf_counter()
    cluster = distributed.LocalCluster(n_workers=workers, threads_per_worker=1,
                                       processes=True, dashboard_address=":0")
    client = distributed.Client(cluster)
    start_up = time.perf_counter() - t0
    try:
        with tempfile.TemporaryDirectory() as tmp:
            with _LoadSampler() as load:
                t1 = time.perf_counter()
                doc = calibrate(case, out=Path(tmp) / "c", replicates=replicates, seed=seed,
                                executor=client, progress=True, figures=False, quick=quick)
                wall = time.perf_counter() - t1
            mem = client.run(_rss_mb)
            peak = client.run(_peak_rss_mb)
            from evidence1d.results import load_record
            recs = [load_record(f)[0] for f in (Path(tmp) / "c" / "replicates").glob("*.npz")]
            task_s = sorted(r["run_time"] for r in recs)
            ok_s = sorted(r["run_time"] for r in recs if not r.get("failed"))
            failures = {r["id"]: r["failed"] for r in recs if r.get("failed")}
    finally:
        client.close()
        cluster.close()
    n = doc["replicates"]["total"]
    return {"workers": workers, "replicates": n, "failed": doc["replicates"]["failed"],
            "wall_s": wall, "start_up_s": start_up, "per_hour": 3600.0 * n / wall,
            "worker_rss_mb": sorted(mem.values()), "worker_peak_rss_mb": sorted(peak.values()),
            "task_s": task_s, "task_s_finished": ok_s, "failures": failures, "load_average": load.summary(),
            "quick": quick}


def scaling(rows: list) -> dict:
    """The two rates of every row and the extrapolation models.

    ``per_hour`` is what this short campaign reached; it is bounded by its longest task
    (a campaign of few tasks waits for the last one).  ``per_hour_many`` = n · 3600 s / t̄
    (t̄ the mean task time of the row, failed tasks left out) is the rate a campaign of
    many more tasks than workers approaches at the same load.  Models: r(n) = n · r(1) · e
    with e the efficiency of the largest worker count (as measured, tail included), and
    r(n) = n · 3600 / t̄ (many tasks; t̄ of the largest worker count, so the slow-down of
    tasks sharing the cores is kept).
    """
    for r in rows:
        ok = r["task_s_finished"] or r["task_s"]
        r["mean_task_s"] = sum(ok) / len(ok)
        r["longest_task_s"] = max(r["task_s"])
        r["per_hour_many"] = r["workers"] * 3600.0 / r["mean_task_s"]
    base = rows[0]["per_hour"] / rows[0]["workers"]
    for r in rows:
        r["efficiency"] = r["per_hour"] / (r["workers"] * base)
    e = rows[-1]["efficiency"]
    t_bar = rows[-1]["mean_task_s"]
    ns = (4, 8, 16, 32, 64)
    return {"per_worker_per_hour": base, "efficiency": e,
            "model": "r(n) = n * r(1) * e, e measured at the largest worker count",
            "model_per_hour": {n: n * base * e for n in ns},
            "model_many": "r(n) = n * 3600 s / t_bar, t_bar the mean task time at the "
                          "largest worker count (campaigns of many more tasks than workers)",
            "model_many_per_hour": {n: n * 3600.0 / t_bar for n in ns}}


def replicate_case(case, seed: int, family: str, index: int):
    """The simulated data of calibration replicate ``family-index`` of ``seed`` as a case
    variant, and the replicate's fit seed (what ``evidence1d calibrate`` fitted)."""
    from evidence1d.campaign.calibration import calibration_tasks
    from evidence1d.campaign.replicate import simulate_data, task_streams
    task = calibration_tasks(case, index + 1, seed, families=[family])[index]
    _, noise, fit_seed = task_streams(seed, task["key"])
    return case.replace(data=simulate_data(case, family, task["truth"], noise)), fit_seed


def decisions(case, seed=None) -> dict:
    """The comparison of ``case`` with its full settings and with the fast settings."""
    import numpy as np

    from evidence1d.campaign.replicate import one_dimensional_log_k, replicate_settings
    from evidence1d.runner import run
    out = {}
    for label, c in (("full", case), ("fast", case.replace(sampler=replicate_settings(case)))):
        t0 = time.perf_counter()
        res = run(c, seed=seed, progress=False, figures=False, budget=False)
        cmp_ = res.comparison
        lz = {n: float(cmp_.log_z[n]) for n in cmp_.names}
        order = sorted(lz, key=lz.get, reverse=True)
        out[label] = {"settings": dict(c.sampler), "wall_s": time.perf_counter() - t0,
                      "log_z": lz, "log_z_err": {n: float(cmp_.log_z_err[n]) for n in lz},
                      "winner": cmp_.best, "p_1d": float(cmp_.p_one_dimensional),
                      "ln_k_top_two": lz[order[0]] - lz[order[1]],
                      "ln_k_1d": one_dimensional_log_k(
                          lz, {n: float(cmp_.prior_probability[n]) for n in lz},
                          {n: bool(cmp_.one_dimensional[n]) for n in lz}),
                      "reliable": bool(res.reliable), "verdict": cmp_.verdict}
        print(f"{label}: {json.dumps(out[label], default=float)}", flush=True)
    f, q = out["full"], out["fast"]
    out["same_decisions"] = bool(f["winner"] == q["winner"]
                                 and (f["ln_k_1d"] > 3.0) == (q["ln_k_1d"] > 3.0)
                                 and (f["ln_k_1d"] < -3.0) == (q["ln_k_1d"] < -3.0)
                                 and np.sign(f["ln_k_top_two"]) == np.sign(q["ln_k_top_two"]))
    return out


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    ap.add_argument("--case", default=str(ROOT / "case_studies" / "flagship" / "case.yaml"))
    ap.add_argument("--workers", default="1,2", help="worker counts, e.g. 1,2")
    ap.add_argument("--replicates", type=int, default=2, help="replicates per true family")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--quick", action="store_true",
                    help="throughput with the smoke settings of calibrate --quick")
    ap.add_argument("--decisions", action="store_true",
                    help="compare fast and full settings on the case's own data instead")
    ap.add_argument("--replicate", metavar="FAMILY-INDEX",
                    help="with --decisions: compare on this calibration replicate of --seed "
                         "(e.g. spinon_continuum-0) instead of the case's own data")
    ap.add_argument("--json", help="also write the numbers to this file")
    args = ap.parse_args(argv)
    os.environ.setdefault("MPLBACKEND", "Agg")
    import evidence1d
    case = evidence1d.load_case(args.case)
    if args.decisions:
        if args.replicate:
            family, index = args.replicate.rsplit("-", 1)
            variant, fit_seed = replicate_case(case, args.seed, family, int(index))
            result = {"replicate": args.replicate, "seed": args.seed,
                      "decisions": decisions(variant, fit_seed)}
        else:
            result = {"decisions": decisions(case)}
    else:
        info = machine()
        rows = [throughput(case, int(w), args.replicates, args.seed, args.quick)
                for w in args.workers.split(",")]
        models = scaling(rows)
        for r in rows:
            print(f"{r['workers']} worker(s): {r['replicates']} replicates in "
                  f"{r['wall_s']:.0f} s = {r['per_hour']:.1f} per hour (efficiency "
                  f"{r['efficiency']:.2f}); cluster start {r['start_up_s']:.1f} s; worker "
                  f"memory {', '.join(f'{m:.0f}' for m in r['worker_rss_mb'])} MB (peak "
                  f"{', '.join(f'{m:.0f}' for m in r['worker_peak_rss_mb'])}); task times "
                  f"{', '.join(f'{t:.0f}' for t in r['task_s'])} s; load "
                  f"{r['load_average']['during_mean']:.2f} (max "
                  f"{r['load_average']['during_max']:.2f}) on {os.cpu_count()} cores; "
                  f"mean task {r['mean_task_s']:.0f} s: {r['per_hour_many']:.1f} per hour "
                  f"with many tasks; failed: {r['failures'] or 'none'}", flush=True)
        print("model r(n) = n · r(1) · e, e = %.2f: " % models["efficiency"]
              + ", ".join(f"{n} workers {v:.0f}/h" for n, v in models["model_per_hour"].items()))
        print("model r(n) = n · 3600 s / t̄ (many tasks): "
              + ", ".join(f"{n} workers {v:.0f}/h"
                          for n, v in models["model_many_per_hour"].items()))
        result = {"what": "calibration replicates per hour on a Dask LocalCluster",
                  "case": str(Path(args.case).resolve().relative_to(ROOT))
                  if Path(args.case).resolve().is_relative_to(ROOT) else args.case,
                  "replicates_per_family": args.replicates, "seed": args.seed,
                  "quick": args.quick, "machine": info, "throughput": rows, **models}
    if args.json:
        Path(args.json).write_text(json.dumps(result, indent=2, default=float) + "\n")
    return 0


if __name__ == "__main__":
    sys.exit(main())
