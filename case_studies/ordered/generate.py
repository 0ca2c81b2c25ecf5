"""Regenerate the ordered case study's data (deterministic; seed below).

Scenario (invented): the insulator CuSe2Zr, Cu²⁺ chains (J = 1.2 meV) coupled to 4
neighbouring chains (J_⊥ = 0.25 meV) that order at T_N ≈ 6 K (Schulz's relation), with a
weak easy-axis anisotropy (Δ = 1.05), measured at 1.5 K at the fictional Ostrander Neutron
Centre.

The data are SIMULATED by the out-of-family generators of the misspecification suite
(``tests/misspecification``, via ``case_studies/simulated_design.py``): sharp linear spin
waves with the chain's quantum factor π/2 on every exchange (HWHM 0.03 meV), χ(T) of a
12-site ring dressed by interchain mean field above T_N with ordered-state forms below, C(T)
of the ring above T_N with a mean-field jump and a T³ magnon tail below, counting noise,
backgrounds, impurities, χ₀ and lattice heat capacity.  None of evidence1d's model families
generated them.

    python case_studies/ordered/generate.py
"""
from pathlib import Path
import sys

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import FILES, design, generators, scenarios  # noqa: E402

SEED = 12
J, J_PERP, DELTA, T = 1.2, 0.25, 1.05, 1.5      # meV, meV, 1, K

if __name__ == "__main__":
    D = design()
    spectra = scenarios.magnon_lswt(D, J, J_PERP, 4, DELTA, T)
    T_N = scenarios.schulz_neel_temperature(J, J_PERP, 4)
    chi, heat = scenarios._ordered_thermo(J, J_PERP, 4, T_N, 0.8, D)
    generators.write_data(HERE, FILES, D, spectra, chi, heat, np.random.default_rng(SEED),
                          "ordered case study, invented insulator CuSe2Zr", exposure=5.0)
    print(f"ordered data regenerated in {HERE / 'data'} (T_N = {T_N:.2f} K)")
