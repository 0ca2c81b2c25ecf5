"""Likelihood cost per parameter set of every family on the same data, side by side.

Run by hand from the repository root::

    python benchmarks/bench_family_cost.py [--case PATH] [--sets N] [--repeat R]

For each model family of the case (default: the flagship), draws N parameter sets from the
central 90 % of every prior and times ``JointProblem.log_likelihood`` on that batch (the
exact function the samplers call, nuisances marginalised), best of R rounds, alternating the
families so machine load hits all of them alike.  Prints the cost per set and the ratio to
the spinon family.  Not a test.
"""
from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))


def main(argv=None):
    import evidence1d
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--case", default=str(ROOT / "case_studies" / "flagship" / "case.yaml"))
    ap.add_argument("--sets", type=int, default=32)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args(argv)
    case = evidence1d.load_case(args.case)
    rng = np.random.default_rng(1)
    batches = {}
    for name in case.models:
        prob = case.problem(name)
        u = rng.uniform(0.05, 0.95, size=(args.sets, len(prob.names)))
        batches[name] = (prob, prob.prior_transform(u))
        prob.log_likelihood(batches[name][1][:2])             # warm caches and tables
    best = {n: np.inf for n in batches}
    for _ in range(args.repeat):
        for name, (prob, theta) in batches.items():
            t0 = time.perf_counter()
            prob.log_likelihood(theta)
            best[name] = min(best[name], time.perf_counter() - t0)
    points = sum(ds.n for ds in case.datasets)
    ref = best.get("spinon_continuum")
    print(f"case {case.path.name}: {points} points, batch {args.sets}, best of {args.repeat}")
    for name, t in best.items():
        per = 1e3 * t / args.sets
        ratio = f"{t / ref:5.2f}x spinon" if ref else ""
        print(f"  {name:28s} {per:8.2f} ms per set  {ratio}")


if __name__ == "__main__":
    main()
