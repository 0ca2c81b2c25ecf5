"""Regenerate the itinerant case study's data (deterministic; seed below).

Scenario (invented): the nearly antiferromagnetic metal CuRh3Q, measured at the fictional
Ostrander Neutron Centre. The truth is the quasi-elastic paramagnon. Every data file is
written by evidence1d's own simulator; nothing here is a measurement.

    python case_studies/itinerant/generate.py
"""
from pathlib import Path
import sys

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent / "flagship"))
from generate import grids  # noqa: E402  (the same measurement plan as the flagship)

from evidence1d.simulate import NoiseModel, regenerate  # noqa: E402

SEED = 13
TRUTH = {
    "chi_uniform": 4.0e-3, "theta_sf": 40.0, "xi_par": 8.0, "xi_perp": 2.0,
    "gamma0": 1.2, "g": 2.1,                              # emu/mol, K, Å, Å, meV, 1
    "chi0": 1.0e-4, "c_imp": 1.0e-3, "gamma_e": 1.0e-2, "beta_lattice": 2.0e-4,
    "map:scale": 40.0, "map:background": 0.5, "map:slope": 0.05,
    "cut:scale": 40.0, "cut:background": 0.4,
}

if __name__ == "__main__":
    regenerate(HERE / "case.yaml", "paramagnon", TRUTH, grids(), seed=SEED,
               noise=NoiseModel(exposure=30.0, relative=0.01),
               scenario="itinerant case study, invented metal CuRh3Q")
    print("itinerant data regenerated in", HERE / "data")
