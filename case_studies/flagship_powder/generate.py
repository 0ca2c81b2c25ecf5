"""Regenerate the flagship powder case study's data (deterministic; seed below).

Scenario (invented): a powder of the flagship chain metal CuTe3Q2, measured at the fictional
Ostrander Neutron Centre. The truth is the flagship's spinon continuum. Every data file is
written by evidence1d's own simulator; nothing here is a measurement.

    python case_studies/flagship_powder/generate.py
"""
from pathlib import Path

import numpy as np

from evidence1d.simulate import NoiseModel, regenerate

HERE = Path(__file__).resolve().parent
SEED = 14
TRUTH = {
    "J": 1.05, "delta": 0.85, "thermal_damping": 0.0, "g": 2.12,
    "chi0": 2.0e-4, "c_imp": 4.0e-3, "gamma_e": 5.0e-3, "beta_lattice": 2.0e-4,
    "powder:scale": 40.0, "powder:background": 0.5, "powder:slope": 0.05,
}


def grids():
    Q = np.linspace(0.3, 3.0, 15)
    E = np.linspace(0.25, 3.6, 12)
    QQ, EE = np.meshgrid(Q, E, indexing="ij")
    return {"data/powder.csv": {"Q": QQ, "energy": EE},
            "data/chi.csv": {"T": np.geomspace(2.0, 300.0, 50)},
            "data/heat_capacity.csv": {"T": np.geomspace(1.5, 30.0, 40)}}


if __name__ == "__main__":
    regenerate(HERE / "case.yaml", "spinon_continuum", TRUTH, grids(), seed=SEED,
               noise=NoiseModel(exposure=60.0, relative=0.01),
               scenario="flagship powder case study, invented chain metal CuTe3Q2")
    print("flagship powder data regenerated in", HERE / "data")
