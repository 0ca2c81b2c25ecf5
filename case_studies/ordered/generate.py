"""Regenerate the ordered case study's data (deterministic; seed below).

Scenario (invented): the insulator CuSe2Zr, weakly coupled Cu2+ chains that order below
T_N ~ 2 K, measured at 1.5 K at the fictional Ostrander Neutron Centre. The truth is the
gapped spin wave of coupled chains. Every data file is written by evidence1d's own
simulator; nothing here is a measurement.

    python case_studies/ordered/generate.py
"""
from pathlib import Path
import sys

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "flagship"))
from generate import grids  # noqa: E402  (the same measurement plan as the flagship)

from evidence1d.simulate import NoiseModel, regenerate  # noqa: E402

SEED = 12
TRUTH = {
    "J": 1.2, "J_perp": 0.08, "delta": 1.05, "damping": 0.0, "g": 2.1,   # meV, meV, 1, 1, 1
    "chi0": 1.0e-4, "c_imp": 3.0e-3, "gamma_e": 0.0, "beta_lattice": 2.0e-4,
    "map:scale": 40.0, "map:background": 0.5, "map:slope": 0.05,
    "cut:scale": 40.0, "cut:background": 0.4,
}

if __name__ == "__main__":
    regenerate(HERE / "case.yaml", "gapped_spin_wave", TRUTH, grids(), seed=SEED,
               noise=NoiseModel(exposure=30.0, relative=0.01),
               scenario="ordered case study, invented insulator CuSe2Zr")
    print("ordered data regenerated in", HERE / "data")
