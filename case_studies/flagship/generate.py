"""Regenerate the flagship case study's data (deterministic; seed below).

Scenario (invented): single crystals of the chain metal CuTe3Q2, measured at the fictional
Ostrander Neutron Centre. The truth is the spinon continuum of an S = 1/2 XXZ chain. Every
data file is written by evidence1d's own simulator; nothing here is a measurement.

    python case_studies/flagship/generate.py
"""
from pathlib import Path

import numpy as np

from evidence1d.simulate import NoiseModel, regenerate

HERE = Path(__file__).resolve().parent
SEED = 11
TRUTH = {
    "J": 1.05, "delta": 0.85, "g": 2.12,            # meV, 1, 1
    "chi0": 2.0e-4, "c_imp": 4.0e-3,                 # emu/mol, emu K/mol
    "gamma_e": 5.0e-3, "beta_lattice": 2.0e-4,       # J/(mol K^2), J/(mol K^4)
    "map:scale": 40.0, "map:background": 0.5, "map:slope": 0.05,
    "cut:scale": 40.0, "cut:background": 0.4,
}


def grids():
    L = np.linspace(0.05, 1.95, 30)
    E = np.linspace(0.25, 3.6, 24)
    LL, EE = np.meshgrid(L, E, indexing="ij")
    H = np.linspace(0.0, 1.0, 12)
    E2 = np.linspace(0.25, 3.0, 16)
    HH, EE2 = np.meshgrid(H, E2, indexing="ij")
    T_chi = np.geomspace(2.0, 300.0, 50)
    T_c = np.geomspace(1.5, 30.0, 40)
    return {
        "data/map_along_chain.csv": {"q_par": LL, "q_perp": np.zeros_like(LL), "energy": EE},
        "data/cut_across_chain.csv": {"q_par": np.ones_like(HH), "q_perp": HH, "energy": EE2},
        "data/chi.csv": {"T": T_chi},
        "data/heat_capacity.csv": {"T": T_c},
    }


if __name__ == "__main__":
    regenerate(HERE / "case.yaml", "spinon_continuum", TRUTH, grids(), seed=SEED,
               noise=NoiseModel(exposure=30.0, relative=0.01),
               scenario="flagship case study, invented chain metal CuTe3Q2")
    print("flagship data regenerated in", HERE / "data")
