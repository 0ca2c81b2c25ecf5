"""The paramagnon thermodynamics against published low-temperature forms.

* Nearly ferromagnetic metal (conserved magnetisation, Γ_q ∝ q): C = γT + δ T³ ln T
  (S. Doniach & S. Engelsberg, Phys. Rev. Lett. 17, 750 (1966); W. F. Brinkman &
  S. Engelsberg, Phys. Rev. 169, 417 (1968); from memory).  With Γ_q = A q at small q
  (A = Γ_0 d/2 for the family's lattice form) and one mode per ion per component, the
  small-q expansion of the exact mode heat capacity, c(u) − 1/(6u) → −1/(30u³), gives
      δ = 3R · (V_cell/(2π)³) · 4π (2π k_B/A)³ / 30   (derived in the test's comment),
  the coefficient of ln T in (C − γT)/T³.  It exists only because Γ_q → 0 as q → 0.
* Nearly antiferromagnetic metal (non-conserved, Γ_Q ≥ Γ_0 > 0): no T³ ln T term;
  C/T − γ ∝ T² (Moriya, Spin Fluctuations in Itinerant Electron Magnetism, 1985, Ch. 3).
"""
from __future__ import annotations

import math

import numpy as np

from evidence1d.physics import paramagnon_thermo as pt
from evidence1d.physics import paramagnon_zone as pz
from evidence1d.units import K_B_MEV, R_GAS

D, A_PERP, B_PERP = 3.0, 4.0, 5.0


def _excess(center, gamma0, T, panels, inner):
    # (C − γT)/T³ per mol on a fine zone rule; γ from the same nodes so that the rule's
    # own error cancels in the difference
    G, W = pz.zone_rates(np.array([[0.0]]), np.array([[0.0]]), np.array([[gamma0]]), D,
                         A_PERP, B_PERP, center, panels=panels, inner=inner)
    out = []
    for t in T:
        u = G / (2 * math.pi * K_B_MEV * t)
        out.append(3 * R_GAS * np.sum(W * (pt.mode_functions(u)["c"] - 1 / (6 * u))) / t ** 3)
    return np.array(out)


def test_zone_centre_t3_log_t_coefficient():
    # Σ_q over one zone per ion = V_cell/(2π)³ ∫ d³Q, V_cell = d a b; ℓ ≈ d|Q|/2 so
    # Γ ≈ A|Q| with A = Γ_0 d/2; Q = (2π k_BT/A) u:
    # C − γT = 3R V/(2π)³ 4π (2πk_BT/A)³ ∫ u² [c(u) − 1/(6u)] du, and the integrand
    # → −1/(30u) up to u_max ∝ 1/T, hence d[(C − γT)/T³]/d ln T → 3R V/(2π)³ 4π (2πk_B/A)³/30.
    g0 = 2.0
    T = np.array([0.02, 0.04])
    ex = _excess("zone_centre", g0, T, ((14, 4), (14, 4)), 1e-6)
    slope = np.diff(ex)[0] / math.log(T[1] / T[0])
    A = g0 * D / 2
    delta = 3 * R_GAS * (D * A_PERP * B_PERP / (8 * math.pi ** 3)) * 4 * math.pi \
        * (2 * math.pi * K_B_MEV / A) ** 3 / 30
    assert abs(slope / delta - 1) < 3e-3


def test_zone_boundary_has_no_log_term():
    # Γ_Q ≥ Γ_0 > 0: c(u) − 1/(6u) = −1/(30u³) + 1/(42u⁵) − … for every mode (Stirling
    # series, Abramowitz & Stegun 6.1.41), so (C − γT)/T³ tends to a constant with no ln T;
    # at ξ = 0 (Γ_Q = Γ_0 everywhere) it is 3R[−x³/30 + x⁵/42 − …]/T³, x = 2πk_BT/Γ_0.
    g0 = 2.0
    T = np.array([0.02, 0.04, 0.08])
    ex = _excess("zone_boundary", g0, T, ((6, 4), (5, 3)), None)
    x = 2 * math.pi * K_B_MEV * T / g0
    np.testing.assert_allclose(ex, 3 * R_GAS * (-x ** 3 / 30 + x ** 5 / 42) / T ** 3,
                               rtol=1e-6)
