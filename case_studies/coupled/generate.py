"""Regenerate the coupled-chains case study's data (deterministic; seed below).

Scenario (invented): the insulator CuGeTi2O7, Cu²⁺ chains (J = 1.0 meV) coupled to 4
neighbouring chains (J_⊥ = 0.16 meV) that order near 4 K, measured below T_N (1.5 K: a map
along the chains and a cut across them) and above it (8 K: a second map) at the fictional
Halvorsen Spallation Laboratory, with χ(T) and C(T).

The data are SIMULATED by the out-of-family generators of the misspecification suite
(``tests/misspecification``, via ``case_studies/simulated_design.py``), not by evidence1d's
families.  Below T_N: a sharp transverse magnon ω² = ((π/2) J sin q)² + Δ_T² + πJJ_⊥(1 + cos
q_a) with Δ_T = 0.8 meV (near the sine-Gordon soliton mass of these couplings, from memory)
carrying 40 % of the two-spinon weight, and the exact two-spinon continuum (60 %) pushed above
2Δ_T.  Above T_N: the exact two-spinon χ'' with a thermal Lorentzian damping and an
interchain factor of random-phase form that suppresses the low-energy intensity near q = π.
χ(T) of a 12-site ring dressed by interchain mean field above T_N with ordered-state forms
below; C(T) of the ring above T_N with a mean-field jump and a T³ tail below.  Counting
noise, backgrounds, impurities, χ₀ and lattice heat capacity.

    python case_studies/coupled/generate.py
"""
from pathlib import Path
import sys

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import design, generators, scenarios  # noqa: E402

SEED = 31
J, J_PERP, GAP, FRAC = 1.0, 0.16, 0.8, 0.4       # meV, meV, meV, 1
T_LOW, T_HIGH = 1.5, 8.0                         # K
FILES = {"map": "data/map_1p5K.csv", "cut": "data/cut_1p5K.csv", "map_hot": "data/map_8K.csv",
         "chi": "data/chi.csv", "heat": "data/heat_capacity.csv"}

if __name__ == "__main__":
    D = design()
    T_N = scenarios.schulz_neel_temperature(J, J_PERP, 4)
    assert T_LOW < T_N < T_HIGH, T_N
    spectra = scenarios.mode_and_continuum_spectra(D, J, J_PERP, GAP, FRAC, T_LOW)
    hot, _, _ = scenarios.chain_above_neel({"map": D["map"], "cut": D["cut"],
                                            "T_chi": D["T_chi"], "T_c": D["T_c"]},
                                           J, J_PERP, T_HIGH)
    spectra["map_hot"] = hot["map"]
    D["map_hot"] = D["map"]
    chi, heat = scenarios._ordered_thermo(J, J_PERP, 4, T_N, 0.6, D)
    generators.write_data(HERE, FILES, D, spectra, chi, heat, np.random.default_rng(SEED),
                          "coupled-chains case study, invented insulator CuGeTi2O7",
                          exposure=5.0)
    print(f"coupled-chains data regenerated in {HERE / 'data'} (T_N = {T_N:.2f} K)")
