"""Spread of ln Z over repeated evidence runs against the importance-stage draws per particle.

Run by hand from the repository root (not a test), one BLAS thread::

    OMP_NUM_THREADS=1 python benchmarks/bench_importance_draws.py FAMILY DRAWS ISLANDS REPEATS

Runs ``tempered_evidence`` on a flagship family REPEATS times (seeds 1000, 2000, ...), 64
particles per island, with DRAWS importance draws per particle; prints each run (ln Z, own
error, evaluations, seconds, importance ESS fraction per island) and the mean time, the
spread of ln Z over the repeats, the mean own error and the efficiency 1/(time × spread²).
The seeds are those of ``bench_peers.py``'s first family, so its "evidence1d" row is the
DRAWS = 6 point of the same comparison.
"""
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

import evidence1d  # noqa: E402
import evidence1d.inference.tempering as E  # noqa: E402
from evidence1d.inference.evidence import tempered_evidence  # noqa: E402

ROOT = Path(__file__).resolve().parents[1]
fam = sys.argv[1]; draws = int(sys.argv[2]); islands = int(sys.argv[3]); reps = int(sys.argv[4])
E.IMPORTANCE_DRAWS_PER_PARTICLE = draws
case = evidence1d.load_case(ROOT / "case_studies" / "flagship" / "case.yaml")
prob = case.problem(fam)
out = []
for r in range(reps):
    t = time.perf_counter()
    ev = tempered_evidence(prob.log_likelihood, prob.prior, rng=np.random.default_rng(1000*(r+1)),
                           n_particles=64, n_islands=islands, progress=False)
    out.append((ev.log_z, ev.log_z_err, ev.n_evaluations, time.perf_counter()-t,
                [round(isl.importance["ess"]/isl.importance["n_draws"],2) for isl in ev.islands]))
    print(out[-1], flush=True)
lz = np.array([o[0] for o in out]); t = np.mean([o[3] for o in out])
print(f"draws/particle {draws} islands {islands}: mean t {t:.1f} s, evals {np.mean([o[2] for o in out]):.0f}, spread {lz.std(ddof=1):.4f}, own {np.mean([o[1] for o in out]):.4f}, eff {1/(t*lz.std(ddof=1)**2):.1f}")
