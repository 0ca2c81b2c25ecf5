"""Our evidence against general-purpose samplers, side by side, from repeated runs.

Run by hand from the repository root (not a test; the peers are benchmark-time references
only and are not dependencies of the package)::

    python -m pip install dynesty nautilus-sampler ultranest
    python benchmarks/bench_peers.py [--families F ...] [--repeats R] [--peers P ...]

For each family of the flagship case the same public problem, ``Case.log_likelihood`` and
``Case.prior_transform`` (linear nuisances integrated out), goes to

* evidence1d's tempered SMC with the case's settings (``tempered_evidence``; the case's
  particles and islands);
* nautilus (neural-network-boosted importance nested sampling; Lange 2023) with its
  defaults, vectorised likelihood;
* UltraNest's reactive nested sampler (MLFriends; Buchner 2021) with its defaults,
  vectorised likelihood;
* dynesty's static nested sampler (Speagle 2020) with its defaults, one point per call.

Run one process per core with one BLAS thread each (``OMP_NUM_THREADS=1``, e.g. one
process per family) so that every sampler sees one core.  Each sampler runs ``R`` times
with different seeds, in turn (ours, then each peer, then
ours again ...), so that machine load hits all alike.  Reported per sampler: mean wall time,
mean likelihood evaluations (parameter sets passed to the likelihood), the mean ln Z, its
spread over the repeats (standard deviation, the honest error) and the mean of the
sampler's own error estimate, and the efficiency 1/(time × spread²); then our efficiency as
a ratio to each peer's.  With R repeats the spread is itself uncertain by about
1/√(2(R − 1)) (33 % at R = 5), which the ratios inherit twice.  The JSON record goes to
``benchmarks/peer_results.json`` (``peer_results_<family>.json`` for one family) with the
machine and its load.

References
----------
.. [1] J. U. Lange, "nautilus: boosting Bayesian importance nested sampling with deep
   learning", MNRAS 525, 3181 (2023).
.. [2] J. Buchner, "UltraNest - a robust, general purpose Bayesian inference engine",
   J. Open Source Softw. 6, 3001 (2021).
.. [3] J. S. Speagle, MNRAS 493, 3132 (2020) (dynesty).
.. [4] P. Del Moral, A. Doucet and A. Jasra, J. R. Stat. Soc. B 68, 411 (2006).
"""
from __future__ import annotations

import argparse
import json
import os
import sys
import tempfile
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "benchmarks"))

import evidence1d  # noqa: E402
from evidence1d.inference.evidence import tempered_evidence  # noqa: E402
from evidence1d.runner import effective_settings  # noqa: E402

from run import FLAGSHIP, machine_info  # noqa: E402

PEERS = ("nautilus", "ultranest", "dynesty")


class Counted:
    """A vectorised log-likelihood that counts the parameter sets it is given."""

    def __init__(self, case, family):
        self.case, self.family, self.n = case, family, 0

    def __call__(self, theta):
        theta = np.atleast_2d(theta)
        self.n += theta.shape[0]
        return np.asarray(self.case.log_likelihood(self.family, theta), dtype=float)


def ours(case, family, settings, seed):
    """One tempered-SMC evidence with the case's settings."""
    problem = case.problem(family)
    t0 = time.perf_counter()
    ev = tempered_evidence(problem.log_likelihood, problem.prior,
                           rng=np.random.default_rng(seed), n_particles=settings["particles"],
                           n_islands=settings["islands"], target_cess=settings["ess_fraction"],
                           progress=False)
    return {"log_z": ev.log_z, "own_err": ev.log_z_err, "n_evaluations": int(ev.n_evaluations),
            "wall_time": time.perf_counter() - t0}


def nautilus_run(case, family, seed):
    """One nautilus run with its defaults (vectorised likelihood, unit-cube prior)."""
    import nautilus
    like = Counted(case, family)
    m = len(case.parameter_names(family))
    t0 = time.perf_counter()
    sampler = nautilus.Sampler(lambda u: case.prior_transform(family, u), like, n_dim=m,
                               vectorized=True, pass_dict=False, seed=int(seed))
    sampler.run(verbose=False)
    wall = time.perf_counter() - t0
    n_eff = float(sampler.n_eff)
    return {"log_z": float(sampler.log_z), "own_err": 1.0 / np.sqrt(max(n_eff, 1.0)),
            "n_evaluations": like.n, "wall_time": wall}


def ultranest_run(case, family, seed):
    """One UltraNest reactive run with its defaults (vectorised likelihood, no files)."""
    import logging

    import ultranest
    logging.getLogger("ultranest").setLevel(logging.WARNING)
    like = Counted(case, family)
    names = list(case.parameter_names(family))
    np.random.seed(int(seed) % 2**32)             # UltraNest draws from numpy's global state
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp, warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sampler = ultranest.ReactiveNestedSampler(
            names, like, lambda u: case.prior_transform(family, u), vectorized=True,
            log_dir=os.path.join(tmp, "un"), resume="overwrite")
        res = sampler.run(show_status=False, viz_callback=False)
    wall = time.perf_counter() - t0
    return {"log_z": float(res["logz"]), "own_err": float(res["logzerr"]),
            "n_evaluations": like.n, "wall_time": wall}


def dynesty_run(case, family, seed):
    """One dynesty static run with its defaults (one point per call)."""
    import dynesty
    like = Counted(case, family)
    m = len(case.parameter_names(family))
    t0 = time.perf_counter()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        sampler = dynesty.NestedSampler(lambda x: float(like(x)[0]),
                                        lambda u: case.prior_transform(family, u), m,
                                        rstate=np.random.default_rng(seed))
        sampler.run_nested(print_progress=False)
    wall = time.perf_counter() - t0
    res = sampler.results
    return {"log_z": float(res.logz[-1]), "own_err": float(res.logzerr[-1]),
            "n_evaluations": like.n, "wall_time": wall}


RUNNERS = {"nautilus": nautilus_run, "ultranest": ultranest_run, "dynesty": dynesty_run}


def summarise(runs):
    """Mean time and evaluations, mean ln Z, spread over repeats, efficiency."""
    lz = np.array([r["log_z"] for r in runs])
    t = float(np.mean([r["wall_time"] for r in runs]))
    spread = float(np.std(lz, ddof=1)) if lz.size > 1 else float("nan")
    return {"repeats": len(runs), "wall_time": t,
            "n_evaluations": float(np.mean([r["n_evaluations"] for r in runs])),
            "log_z": float(np.mean(lz)), "spread": spread,
            "own_err": float(np.mean([r["own_err"] for r in runs])),
            "efficiency": 1.0 / (t * spread ** 2) if spread > 0 else float("nan"),
            "runs": runs}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--families", nargs="+", default=None)
    ap.add_argument("--peers", nargs="+", default=list(PEERS), choices=PEERS)
    ap.add_argument("--repeats", type=int, default=5)
    ap.add_argument("--out", default=None,
                    help="JSON record (default benchmarks/peer_results.json, or "
                         "peer_results_<family>.json for one family)")
    args = ap.parse_args(argv)
    case = evidence1d.load_case(FLAGSHIP)
    families = args.families or list(case.models)
    if args.out is None:
        tail = f"_{families[0]}" if len(families) == 1 else ""
        args.out = str(ROOT / "benchmarks" / f"peer_results{tail}.json")
    settings = effective_settings(case)
    record = {"machine": machine_info(), "case": "case_studies/flagship",
              "settings": {k: settings[k] for k in ("particles", "islands", "ess_fraction")},
              "repeats": args.repeats, "families": {}}
    t_start = time.perf_counter()
    for fam in families:
        runs = {"evidence1d": [], **{p: [] for p in args.peers}}
        for r in range(args.repeats):
            seed = 1000 * (r + 1) + families.index(fam)
            runs["evidence1d"].append(ours(case, fam, settings, seed))
            for p in args.peers:
                runs[p].append(RUNNERS[p](case, fam, seed))
            print(f"{fam}: repeat {r + 1}/{args.repeats} done "
                  f"({time.perf_counter() - t_start:.0f} s)", flush=True)
        summ = {k: summarise(v) for k, v in runs.items()}
        for p in args.peers:
            summ[p]["our_efficiency_ratio"] = (summ["evidence1d"]["efficiency"]
                                               / summ[p]["efficiency"])
        record["families"][fam] = summ
        print(f"\n{fam}")
        print(f"  {'sampler':12s} {'time s':>8s} {'evals':>9s} {'ln Z':>12s} {'spread':>8s} "
              f"{'own err':>8s} {'1/(t s^2)':>10s} {'ours/it':>8s}")
        for k, s in summ.items():
            ratio = s.get("our_efficiency_ratio")
            print(f"  {k:12s} {s['wall_time']:8.1f} {s['n_evaluations']:9.0f} "
                  f"{s['log_z']:12.3f} {s['spread']:8.3f} {s['own_err']:8.3f} "
                  f"{s['efficiency']:10.3g} {'' if ratio is None else f'{ratio:8.2f}'}",
                  flush=True)
    record["machine"]["load_average_end"] = (list(os.getloadavg())
                                             if hasattr(os, "getloadavg") else None)
    record["wall_time"] = time.perf_counter() - t_start
    Path(args.out).write_text(json.dumps(record, indent=2) + "\n")
    print(f"\nwritten {args.out} ({record['wall_time']:.0f} s)")
    return record


if __name__ == "__main__":
    main()
