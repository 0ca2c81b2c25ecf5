"""Cost of a dense single-crystal map: a 20 000-point map plus χ(T) and C(T).

Run by hand from the repository root (nothing else running; every number is a wall time)::

    python benchmarks/bench_large_map.py [--points-l 200] [--points-e 100] [--full]
        [--json benchmarks/large_map_results.json]

The benchmark case is our own: the flagship's invented chain cuprate (weakly coupled
Heisenberg chains, J = 1.05 meV, J_⊥ = 0.042 meV, 1.5 K) measured as one dense map along the
chain (L from 0.05 to 1.95 r.l.u. × E from 0.25 to 3.6 meV, default 200 × 100 = 20 000
points) with χ(T) and C(T).  The data are SIMULATED by the out-of-family generators of the
misspecification suite (``tests/misspecification``: exact two-spinon line shape with a
thermal damping, 12-site ring thermodynamics, counting noise), written to a temporary folder;
nothing is committed but the results.

Measured, for every family of the flagship:

1. the likelihood cost per parameter set and per map point (``JointProblem.log_likelihood``
   of the map alone, nuisances integrated out, batch of 32 prior draws from the central 90 %
   of every prior, best of 3);
2. ``evidence1d run CASE --quick`` in a fresh process (default workers, report and figures
   written): wall time and the verdict;
3. with ``--full``, the full run the same way.

Targets (the speed issue): ``--quick`` ≤ 90 s, full run ≤ 10 min on 2 cores.  Not a test.
"""
from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests" / "misspecification"))

J, J_PERP, T = 1.05, 0.042, 1.5            # meV, meV, K (the flagship's scenario)
SEED = 20261203

CASE = """# Benchmark case: a dense map of the invented chain cuprate CuTe3Q2 (SIMULATED data,
# out-of-family generators of tests/misspecification; not measurements).
title: "Benchmark: a {n}-point map of the invented CuTe3Q2 (simulated data)"
sample:
  name: CuTe3Q2 (invented compound)
  ion: Cu
  charge: 2
  spin: 0.5
  g: {{kind: normal, mean: 2.1, sd: 0.05}}
  spin_spacing: 3.1
  lattice: {{a: 7.4, b: 7.9, c: 6.2}}
  formula_units_per_ion: 1
datasets:
  - {{name: map, kind: crystal_spectrum, file: data/map.csv, temperature: 1.5,
     units: {{energy: meV, wavevector: rlu, intensity: arb}},
     resolution: {{fwhm: [0.08, 0.02]}}, background: linear}}
  - {{name: chi, kind: susceptibility, file: data/chi.csv,
     units: {{temperature: K, chi: emu/mol}}, field: powder}}
  - {{name: heat, kind: heat_capacity, file: data/heat.csv,
     units: {{temperature: K, heat_capacity: J/mol/K}}}}
models:
  - spinon_continuum
  - gapped_spin_wave
  - paramagnon
sampler: {{steps: 1000, walkers: 32, particles: 64, islands: 8}}
seed: 20261201
"""


def write_case(folder: Path, n_l: int, n_e: int) -> Path:
    """Simulate the benchmark data into ``folder`` and return the case file."""
    import generators as G
    import scenarios as S
    L = np.linspace(0.05, 1.95, n_l)
    E = np.linspace(0.25, 3.6, n_e)
    LL, EE = np.meshgrid(L, E, indexing="ij")
    D = {"map": (LL.ravel(), np.zeros(LL.size), EE.ravel()),
         "cut": (np.ones(2), np.zeros(2), np.array([1.0, 2.0])),     # not written
         "T_chi": np.geomspace(2.0, 300.0, 50), "T_c": np.geomspace(1.5, 30.0, 40)}
    spectra, chi, heat = S.chain_above_neel(D, J, J_PERP, T)
    files = {"map": "data/map.csv", "chi": "data/chi.csv", "heat": "data/heat.csv"}
    G.write_data(folder, files, D, {"map": spectra["map"]}, chi, heat,
                 np.random.default_rng(SEED),
                 "benchmark: dense map of the invented CuTe3Q2", exposure=5.0)
    path = folder / "case.yaml"
    path.write_text(CASE.format(n=LL.size))
    return path


def kernel_costs(case_path: Path, sets: int = 32, repeat: int = 3) -> dict:
    """Seconds per parameter set, and per set and map point, of every family's map."""
    import evidence1d
    from evidence1d.campaign.replicate import without_datasets
    sub = without_datasets(evidence1d.load_case(case_path), ["chi", "heat"])
    n = next(ds.n for ds in sub.datasets if ds.name == "map")
    rng = np.random.default_rng(1)
    out = {}
    for name in sub.models:
        prob = sub.problem(name)
        theta = prob.prior_transform(rng.uniform(0.05, 0.95, (sets, len(prob.names))))
        prob.log_likelihood(theta[:2])
        best = np.inf
        for _ in range(repeat):
            t0 = time.perf_counter()
            prob.log_likelihood(theta)
            best = min(best, time.perf_counter() - t0)
        out[name] = {"ms_per_set": 1e3 * best / sets,
                     "ns_per_set_and_point": 1e9 * best / sets / n, "points": n}
    return out


def timed_run(case_path: Path, quick: bool) -> dict:
    """``evidence1d run`` in a fresh process: wall time and the verdict."""
    out = case_path.parent / ("results_quick" if quick else "results_full")
    cmd = [sys.executable, "-m", "evidence1d.cli", "run", str(case_path), "--out", str(out),
           "--overwrite"] + (["--quick"] if quick else [])
    env = dict(os.environ, MPLBACKEND="Agg")
    t0 = time.perf_counter()
    proc = subprocess.run(cmd, env=env, capture_output=True, text=True)
    wall = time.perf_counter() - t0
    rec = {"wall_s": wall, "exit_code": proc.returncode}
    summary = out / "summary.json"
    if summary.is_file():
        doc = json.loads(summary.read_text())
        comp = doc.get("comparison", {})
        rec["winner"] = comp.get("best")
        rec["p_one_dimensional"] = comp.get("p_one_dimensional")
        rec["log_z"] = {n: m.get("log_evidence") for n, m in doc.get("models", {}).items()}
        rec["bad_fit"] = {n: sorted(d for d, g in m.get("goodness_of_fit", {}).items()
                                    if g.get("bad_fit"))
                          for n, m in doc.get("models", {}).items()}
        rec["quick_subset"] = [line.strip() for line in
                               (out / "run.log").read_text().splitlines()
                               if "quick look:" in line]
    else:
        rec["stderr_tail"] = proc.stderr[-2000:]
    return rec


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--points-l", type=int, default=200)
    ap.add_argument("--points-e", type=int, default=100)
    ap.add_argument("--full", action="store_true", help="also time the full run")
    ap.add_argument("--json", default=None, help="write the results to this file")
    args = ap.parse_args(argv)
    rec = {"date": time.strftime("%Y-%m-%d %H:%M UTC", time.gmtime()),
           "machine": {"cpu": platform.processor() or platform.machine(),
                       "cores": os.cpu_count(), "load_start": os.getloadavg()}}
    with tempfile.TemporaryDirectory() as tmp:
        case_path = write_case(Path(tmp), args.points_l, args.points_e)
        rec["points"] = {"map": args.points_l * args.points_e, "chi": 50, "heat": 40}
        rec["kernel"] = kernel_costs(case_path)
        for name, k in rec["kernel"].items():
            print(f"{name:20s} {k['ms_per_set']:8.2f} ms per set, "
                  f"{k['ns_per_set_and_point']:6.1f} ns per set and point")
        rec["quick_run"] = timed_run(case_path, quick=True)
        print(f"--quick: {rec['quick_run']['wall_s']:.0f} s (target 90 s), winner "
              f"{rec['quick_run'].get('winner')}")
        if args.full:
            rec["full_run"] = timed_run(case_path, quick=False)
            print(f"full: {rec['full_run']['wall_s']:.0f} s (target 600 s)")
    rec["machine"]["load_end"] = os.getloadavg()
    if args.json:
        Path(args.json).write_text(json.dumps(rec, indent=1) + "\n")


if __name__ == "__main__":
    main()
