"""Regenerate the itinerant case study's data (deterministic; seed below).

Scenario (invented): the nearly antiferromagnetic metal CuRh3Q, measured at 1.5 K at the
fictional Ostrander Neutron Centre.

The data are SIMULATED by the out-of-family generators of the misspecification suite
(``tests/misspecification``, via ``case_studies/simulated_design.py``): an overdamped
paramagnon with Lorentzian Ornstein–Zernike χ_Q in its continuum form (not the lattice form
of evidence1d's paramagnon family), a temperature-dependent correlation length, Γ₀ = 1.2 meV;
χ(T) a Stoner-enhanced Pauli term with a T² decrease plus impurities; C/T = γ + β T² +
δ T² ln(T/20 K); counting noise and backgrounds.  None of evidence1d's model families
generated them.

    python case_studies/itinerant/generate.py
"""
from pathlib import Path
import sys

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import FILES, design, generators, scenarios  # noqa: E402

SEED = 13
T = 1.5                                      # K

if __name__ == "__main__":
    D = design()
    _, spectra, chi, heat, _ = scenarios.itinerant(D, T=T)
    generators.write_data(HERE, FILES, D, spectra, chi, heat, np.random.default_rng(SEED),
                          "itinerant case study, invented metal CuRh3Q", exposure=5.0)
    print("itinerant data regenerated in", HERE / "data")
