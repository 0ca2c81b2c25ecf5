"""Regenerate the flagship case study's data (deterministic; seed below).

Scenario (invented): single crystals of the chain cuprate CuTe3Q2, Cu²⁺ (S = 1/2) Heisenberg
chains (J = 1.05 meV) coupled weakly to 4 neighbouring chains (J_⊥ = 0.042 meV, so
T_N ≈ 1.25 K by Schulz's relation), measured at 1.5 K, just above T_N, at the fictional
Ostrander Neutron Centre.

The data are SIMULATED by the out-of-family generators of the misspecification suite
(``tests/misspecification``, via ``case_studies/simulated_design.py``): the exact two-spinon
line shape with a thermal damping and a random-phase-like interchain factor, χ(T) of a
12-site ring dressed by interchain mean field, C(T) of the ring, counting noise, sloping
backgrounds, free-spin impurities, χ₀ and lattice heat capacity.  None of evidence1d's
model families generated them.  The thermodynamic data start where the ring is within ~1 %
of the infinite chain (χ from 4.0 K, C from 4.9 K).

    python case_studies/flagship/generate.py
"""
from pathlib import Path
import sys

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import FILES, design, generators, scenarios  # noqa: E402

SEED = 11
J, J_PERP, T = 1.05, 0.042, 1.5            # meV, meV, K

if __name__ == "__main__":
    D = design()
    spectra, chi, heat = scenarios.chain_above_neel(D, J, J_PERP, T)
    generators.write_data(HERE, FILES, D, spectra, chi, heat, np.random.default_rng(SEED),
                          "flagship case study, weakly coupled chains of the invented "
                          "CuTe3Q2 above T_N", exposure=5.0)
    print("flagship data regenerated in", HERE / "data")
