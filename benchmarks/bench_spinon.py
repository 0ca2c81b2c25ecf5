"""Speed of the spinon-continuum predictions on the flagship case: before/after ratios.

Run by hand from the repository root::

    python benchmarks/bench_spinon.py [--before REV] [--sets N] [--repeat R]

Times one prediction of every dataset of ``case_studies/flagship`` (two spectra of 720 and
192 points, χ(T) at 50 and C(T) at 40 temperatures) by the spinon-continuum family, for a
batch of parameter sets drawn (a) from the card's default priors and (b) close to the
simulated truth (J = 1.05 meV, Δ = 0.85), where a converged evidence run spends its time.
The "before" kernels are ``evidence1d/physics/chain.py`` and ``chain_thermo.py`` read from
the git revision ``REV`` (read only, ``git show``) and loaded as throw-away modules; the
"after" kernels are the working tree.  Before and after are timed alternately, best of
``R`` rounds, and the ratio is printed together with the largest difference between the
two predictions relative to the largest prediction of each dataset.  Not a test.
"""
from __future__ import annotations

import argparse
import importlib.util
import subprocess
import sys
import time
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from evidence1d import units as U  # noqa: E402
from evidence1d.case import load_case  # noqa: E402
from evidence1d.physics import chain, chain_thermo  # noqa: E402

#: last revision before the speed work on the spinon kernels
DEFAULT_BEFORE = "9d6fef4"


def _module_at(rev, relpath, name, replace=()):
    """Load ``relpath`` as it was at git revision ``rev`` under the module name ``name``."""
    src = subprocess.run(["git", "show", f"{rev}:{relpath}"], cwd=ROOT, check=True,
                         capture_output=True, text=True).stdout
    for old, new in replace:
        src = src.replace(old, new)
    spec = importlib.util.spec_from_loader(name, loader=None, origin=str(ROOT / relpath))
    mod = importlib.util.module_from_spec(spec)
    mod.__file__ = str(ROOT / relpath)
    mod.__package__ = "evidence1d.physics"
    sys.modules[name] = mod
    exec(compile(src, str(ROOT / relpath), "exec"), mod.__dict__)
    return mod


def _kernels_before(rev):
    ch = _module_at(rev, "evidence1d/physics/chain.py", "evidence1d.physics._before_chain")
    th = _module_at(rev, "evidence1d/physics/chain_thermo.py",
                    "evidence1d.physics._before_chain_thermo",
                    replace=[("from evidence1d.physics.chain import",
                              "from evidence1d.physics._before_chain import")])
    return ch, th


def _workload():
    case = load_case(ROOT / "case_studies" / "flagship" / "case.yaml")
    work = []
    for pr in case.problem("spinon_continuum").predictors:
        ds = pr.dataset
        if ds.kind == "crystal_spectrum":
            pts = pr._pts
            work.append((ds.name, "spectrum", (pts.q_par, pts.energy, pts.sigma,
                                               pts.temperature)))
        else:
            work.append((ds.name, ds.kind, ds.x["T"]))
    return work


def _predict(ch, th, work, J, delta):
    """Model parts of every dataset (the family's formulas: χ* and C/R in reduced units)."""
    out = []
    for _, kind, x in work:
        if kind == "spectrum":
            out.append(ch.spinon_spectrum(*x, J, delta))
        else:
            r = th.xxz_thermodynamics(U.K_B_MEV * x[None, :] / J, delta)
            out.append(r["chi_star"] / 3.0 + 2.0 * r["chi_star_perp"] / 3.0
                       if kind == "susceptibility" else r["c_over_r"])
    return out


def _best(fn, repeat):
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def _batches(n, rng):
    J_prior = np.exp(rng.uniform(np.log(0.05), np.log(20.0), (n, 1)))
    d_prior = rng.uniform(0.0, 3.0, (n, 1))
    J_post = rng.normal(1.05, 0.02, (n, 1))
    d_post = np.clip(rng.normal(0.85, 0.03, (n, 1)), 0.0, 3.0)
    return {"prior draws": (J_prior, d_prior), "near the truth": (J_post, d_post)}


def main(argv=None):
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--before", default=DEFAULT_BEFORE, help="git revision of the old kernels")
    ap.add_argument("--sets", type=int, default=64, help="parameter sets per batch")
    ap.add_argument("--repeat", type=int, default=15, help="timing rounds (best is kept)")
    ap.add_argument("--seed", type=int, default=0)
    args = ap.parse_args(argv)
    ch0, th0 = _kernels_before(args.before)
    work = _workload()
    spec = [w for w in work if w[1] == "spectrum"]
    thermo = [w for w in work if w[1] != "spectrum"]
    print(f"flagship case, spinon continuum; batch of {args.sets} parameter sets; "
          f"before = {args.before}, after = working tree; best of {args.repeat}")
    print(f"{'batch':>15} {'part':>15} {'before ms':>10} {'after ms':>9} {'ratio':>6} "
          f"{'max rel. diff':>14}")
    for label, (J, d) in _batches(args.sets, np.random.default_rng(args.seed)).items():
        for part, sub in (("spectra", spec), ("thermodynamics", thermo), ("all", work)):
            old = _predict(ch0, th0, sub, J, d)          # warm-up and values
            new = _predict(chain, chain_thermo, sub, J, d)
            diff = max(float(np.max(np.abs(a - b)) / max(np.max(np.abs(a)), 1e-300))
                       for a, b in zip(old, new))
            t_old = t_new = np.inf
            for _ in range(args.repeat):                  # alternate to share the noise
                t_old = min(t_old, _best(lambda: _predict(ch0, th0, sub, J, d), 1))
                t_new = min(t_new, _best(lambda: _predict(chain, chain_thermo, sub, J, d), 1))
            print(f"{label:>15} {part:>15} {1e3 * t_old:>10.2f} {1e3 * t_new:>9.2f} "
                  f"{t_old / t_new:>6.2f} {diff:>14.1e}")


if __name__ == "__main__":
    main()
