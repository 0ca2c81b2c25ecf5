"""Regenerate the ordered case study's data (deterministic; seed below).

Scenario (invented): the insulator CuSe2Zr, a three-dimensional S = 1/2 antiferromagnet with
anisotropic exchange: Cu²⁺ chains (J = 1.2 meV) each coupled to 4 neighbouring chains by
J_⊥ = 0.6 meV = J/2, a weak easy-axis anisotropy (Δ = 1.05), Néel order below T_N ≈ 12 K,
measured at 1.5 K at the fictional Ostrander Neutron Centre.

The data are SIMULATED by the out-of-family generators of the misspecification suite
(``tests/misspecification``, via ``case_studies/simulated_design.py``):
* spectra: sharp linear spin waves (HWHM 0.03 meV) with spin-wave intensities, every exchange
  multiplied by Z = 1.1, the first-order 1/S renormalisation of a three-dimensional S = 1/2
  antiferromagnet (Oguchi, Phys. Rev. 117, 117 (1960); value from memory);
* χ(T): a 12-site ring dressed by interchain mean field above T_N; below it χ_⊥ constant and
  χ_∥ falling as the magnon gas of the same spin waves;
* C(T): the ring above T_N, the magnon gas of the same spin waves below it, scaled to meet
  the ring at T_N (no anomaly at T_N);
* T_N from Schulz's coupled-chain relation (PRL 77, 2790 (1996)), used here beyond its
  weak-coupling range; the ordered family uses the same relation, so this case does not
  test T_N;
* counting noise, backgrounds, impurities, χ₀ and lattice heat capacity.
None of evidence1d's model families generated them.

    python case_studies/ordered/generate.py
"""
from pathlib import Path
import sys

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import FILES, design, generators, scenarios  # noqa: E402

SEED = 12
J, J_PERP, DELTA, T = 1.2, 0.6, 1.05, 1.5       # meV, meV, 1, K
Z_3D = 1.1              # spin-wave renormalisation on every exchange (Oguchi 1960)

if __name__ == "__main__":
    D = design()
    spectra = scenarios.magnon_lswt(D, J, J_PERP, 4, DELTA, T, renormalisation=Z_3D)
    T_N = scenarios.schulz_neel_temperature(J, J_PERP, 4)
    omega = scenarios.lswt_dispersion(J, J_PERP, 4, DELTA, Z_3D)
    chi, heat = scenarios._ordered_thermo(J, J_PERP, 4, T_N, 0.0, D, omega=omega)
    generators.write_data(HERE, FILES, D, spectra, chi, heat, np.random.default_rng(SEED),
                          "ordered case study, invented insulator CuSe2Zr", exposure=5.0)
    print(f"ordered data regenerated in {HERE / 'data'} (T_N = {T_N:.2f} K)")
