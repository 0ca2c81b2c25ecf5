"""Speed of the gapped-spin-wave thermodynamics: direct zone quadrature against the table.

Run by hand from the repository root: ``python benchmarks/bench_spin_wave_thermo.py``.
Times C(T) + χ(T) + S(T) for a batch of parameter sets drawn from the default priors of the
``gapped_spin_wave`` card (J log-uniform 0.1–20 meV, J_⊥ uniform 0–2 meV, Δ uniform
1–1.5, S = 1/2) and prints the time per parameter set and the ratio direct/table, measured
within one run.  Not a test.
"""
from __future__ import annotations

import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))

from evidence1d.physics import bose_thermo as bt  # noqa: E402


def _draw(n, rng):
    J = np.exp(rng.uniform(np.log(0.1), np.log(20.0), (n, 1)))
    return J, rng.uniform(0.0, 2.0, (n, 1)), rng.uniform(1.0, 1.5, (n, 1)), np.full((n, 1), 2.0)


def _run(method, T, J, Jp, D, g, entropy=True):
    bt._LAST[:] = [None, None]      # forget the C/S memo: each call sees new parameters
    bt.spin_wave_heat_capacity(T, J, Jp, D, 0.5, method=method)
    bt.spin_wave_susceptibility(T, J, Jp, D, 0.5, g, "powder", method=method)
    if entropy:
        bt.spin_wave_entropy(T, J, Jp, D, 0.5, method=method)


def _time(fn, repeat):
    fn()                                             # warm-up (table load, caches)
    best = np.inf
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        best = min(best, time.perf_counter() - t0)
    return best


def main(n_sets=32, seed=0):
    rng = np.random.default_rng(seed)
    J, Jp, D, g = _draw(n_sets, rng)
    print(f"batch of {n_sets} parameter sets; times are the best of several runs")
    print(f"{'temperatures':>12} {'quantities':>12} {'direct ms/set':>14} "
          f"{'table ms/set':>13} {'ratio':>8}")
    for n_T in (50, 100):
        T = np.geomspace(0.05, 400.0, n_T)
        for ent in (False, True):
            td = _time(lambda: _run("direct", T, J, Jp, D, g, ent), 3)
            tt = _time(lambda: _run("table", T, J, Jp, D, g, ent), 20)
            label = "C+chi+S" if ent else "C+chi"
            print(f"{n_T:>12} {label:>12} {1e3 * td / n_sets:>14.3f} "
                  f"{1e3 * tt / n_sets:>13.4f} {td / tt:>8.0f}")


if __name__ == "__main__":
    main()
