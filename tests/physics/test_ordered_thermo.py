"""Thermodynamics of the ordered family: the exact chain with interchain mean field above
T_N, the ordered state below, joined at Schulz's T_N."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from evidence1d.errors import InputError
from evidence1d.families.spin_wave import SpinWaveFamily
from evidence1d.families.spinon import SpinonFamily
from evidence1d.physics import magnon, ordered_thermo as ot
from evidence1d.units import CURIE_PREFACTOR, K_B_MEV, R_GAS


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def _p(J, Jp, D, g=2.1, eta=0.0):
    n = max(np.size(a) for a in (J, Jp, D))
    c = lambda a: np.broadcast_to(np.asarray(a, float).reshape(-1, 1), (n, 1))  # noqa: E731
    return {"J": c(J), "J_perp": c(Jp), "delta": c(D), "damping": c(eta), "g": c(g)}


@pytest.mark.parametrize("delta", [1.0, 1.5])
@pytest.mark.parametrize("interchain", [4, 2])
def test_zero_interchain_coupling_is_the_spinon_family(delta, interchain):
    # J_perp = 0: no order (T_N = 0), no mean field: χ, C and S are the chain's, i.e. the
    # spinon family's numbers exactly.
    T = np.geomspace(0.05, 500.0, 40)
    p = _p([0.3, 4.0, 15.0], 0.0, delta, g=[2.0, 2.1, 2.25])
    fam, ref = SpinWaveFamily(interchain=interchain), SpinonFamily()
    for d in ("z", "xy", "powder"):
        np.testing.assert_allclose(fam.susceptibility(p, T, d), ref.susceptibility(p, T, d),
                                   rtol=1e-13)
    np.testing.assert_allclose(fam.heat_capacity(p, T), ref.heat_capacity(p, T), rtol=1e-13)
    np.testing.assert_allclose(fam.entropy(p, T), ref.entropy(p, T), rtol=1e-13)


def test_unordered_sets_in_a_batch_with_ordered_ones_are_the_chain():
    # A batch mixing sets that order (J_perp > 0) with sets that do not (J_perp = 0): the
    # unordered ones must still be the spinon family's chain numbers exactly, and the
    # ordered ones the same as when computed alone (the magnon gas is computed for the
    # ordered sets only).
    T = np.geomspace(0.05, 300.0, 30)
    p = _p([4.0, 4.0, 9.0, 9.0], [0.0, 0.3, 0.0, 0.6], 1.2, g=[2.1, 2.1, 2.0, 2.0])
    fam, ref = SpinWaveFamily(), SpinonFamily()
    free = [0, 2]
    sub = {k: v[free] for k, v in p.items()}
    np.testing.assert_allclose(fam.heat_capacity(p, T)[free], ref.heat_capacity(sub, T),
                               rtol=1e-13)
    np.testing.assert_allclose(fam.entropy(p, T)[free], ref.entropy(sub, T), rtol=1e-13)
    np.testing.assert_allclose(fam.susceptibility(p, T, "powder")[free],
                               ref.susceptibility(sub, T, "powder"), rtol=1e-13)
    for i in (1, 3):
        one = {k: v[i:i + 1] for k, v in p.items()}
        c_one = fam.heat_capacity(one, T)[0]
        # ordered: the magnon gas shapes C below T_N (not the chain's)
        assert not np.allclose(c_one, ref.heat_capacity(one, T)[0], rtol=1e-3)
        np.testing.assert_allclose(fam.heat_capacity(p, T)[i], c_one, rtol=1e-13)
        np.testing.assert_allclose(fam.entropy(p, T)[i], fam.entropy(one, T)[0], rtol=1e-13)
        np.testing.assert_allclose(fam.susceptibility(p, T, "powder")[i],
                                   fam.susceptibility(one, T, "powder")[0], rtol=1e-13)


def test_rpa_against_rational_fit_of_the_heisenberg_chain():
    # Independent chain χ: the Bonner–Fisher rational fit (Estes et al., Inorg. Chem. 17,
    # 1415 (1978); ~1 % for 0.3 ≤ t ≤ 2), dressed by hand with the mean field
    # χ = χ_1D / (1 + z_perp J_perp χ_1D / (N g² μ_B²)) (Scalapino, Imry & Pincus, PRB 11,
    # 2042 (1975)); above T_N the family must agree to the fit's accuracy.
    J, Jp, g = 5.0, 0.4, 2.0
    t = np.linspace(0.35, 2.0, 15)
    T = t * J / K_B_MEV
    x = 1.0 / t
    bf = (CURIE_PREFACTOR * g ** 2 / T) * (0.25 + 0.074975 * x + 0.075235 * x ** 2) / (
        1 + 0.9931 * x + 0.172135 * x ** 2 + 0.757825 * x ** 3)
    for z in (4, 2):
        lam = z * Jp / K_B_MEV / (CURIE_PREFACTOR * g ** 2)    # mean-field constant, mol/emu
        expect = bf / (1 + lam * bf)
        got = SpinWaveFamily(interchain=z).susceptibility(_p(J, Jp, 1.0, g), T, "powder")[0]
        assert magnon.neel_temperature(J, Jp, z) < T.min()
        np.testing.assert_allclose(got, expect, rtol=0.012)
        # and the dressing is visible: the chain alone differs by more than the tolerance
        chain = SpinonFamily().susceptibility(_p(J, 0.0, 1.0, g), T, "powder")[0]
        assert np.max(np.abs(chain / expect - 1)) > 0.03 * z / 4


def test_high_temperature_curie_weiss_theta():
    # Mean-field Weiss temperature θ = S(S+1) Σ_j J_j κ / 3k_B = (2J + z J_perp) κ / 4k_B,
    # κ = Δ along z and 1 in the plane (R. M. White, Quantum Theory of Magnetism, 2007,
    # Ch. 4), from the intercept of 1/χ at T ≫ J (k_BT > 10⁴ J, where the chain's
    # leading high-temperature series holds).
    J, Jp, D = 1.0, 0.2, 1.4
    T = np.array([2e5, 4e5])
    for z in (4, 2):
        for d, kappa in (("z", D), ("xy", 1.0)):
            inv = 1 / ot.ordered_susceptibility(T, col(J), col(Jp), col(D), col(2.0), d, z)[0]
            theta = inv[0] * (T[1] - T[0]) / (inv[1] - inv[0]) - T[0]
            np.testing.assert_allclose(theta, (2 * J + z * Jp) * kappa / 4 / K_B_MEV,
                                       rtol=1e-3)


@pytest.mark.parametrize("interchain", [4, 2])
def test_continuity_at_the_neel_temperature(interchain):
    # Every quantity is continuous at T_N, and T_N is Schulz's (magnon.neel_temperature):
    # χ_xy is constant below it and not above it.
    fam = SpinWaveFamily(interchain=interchain)
    p = _p([5.0, 1.0], [0.1, 0.08], [1.0, 1.3])
    TN = magnon.neel_temperature(p["J"], p["J_perp"], interchain)[:, 0]
    for i in range(2):
        pi = {k: v[i:i + 1] for k, v in p.items()}
        T = TN[i] * np.array([0.3, 0.6, 1 - 1e-9, 1 + 1e-9, 1.2])
        outs = [fam.susceptibility(pi, T, d)[0] for d in ("z", "xy", "powder")]
        outs += [fam.heat_capacity(pi, T)[0], fam.entropy(pi, T)[0]]
        for out in outs:
            np.testing.assert_allclose(out[2], out[3], rtol=1e-6)
        xy = outs[1]
        np.testing.assert_allclose(xy[:3], xy[3], rtol=1e-6)
        assert abs(xy[4] / xy[3] - 1) > 1e-4


def test_ordered_state_susceptibility():
    # Collinear antiferromagnet below T_N: χ_⊥ constant, χ_∥ → 0, powder → (2/3) χ_⊥(T_N)
    # (molecular-field theory; White 2007, Ch. 4).
    fam = SpinWaveFamily()
    p = _p(5.0, 0.5, 1.02)
    TN = fam.neel_temperature(p)[0, 0]
    T = np.array([1e-3, 0.2 * TN, 0.9 * TN])
    z, xy, pw = (fam.susceptibility(p, T, d)[0] for d in ("z", "xy", "powder"))
    assert z[0] < 1e-6 * z[2] and z[0] < z[1] < z[2]
    np.testing.assert_allclose(pw[0], 2 / 3 * xy[0], rtol=1e-5)


@pytest.mark.parametrize("delta", [1.0, 1.3])
def test_entropy_is_integral_of_C_over_T(delta):
    # S(T) = ∫₀ᵀ C/T' dT' = ∫ C d ln T' (third law; thermodynamic identity): composite
    # Simpson rule (scipy.integrate.simpson) on fine logarithmic grids split at T_N.
    fam = SpinWaveFamily()
    p = _p(3.0, 0.15, delta)
    TN = fam.neel_temperature(p)[0, 0]
    lo = np.geomspace(1e-4 * TN, TN, 4001)
    hi = np.geomspace(TN, 40 * TN, 4001)
    s_lo = integrate.simpson(fam.heat_capacity(p, lo)[0], x=np.log(lo))
    s_hi = integrate.cumulative_simpson(fam.heat_capacity(p, hi)[0], x=np.log(hi))
    np.testing.assert_allclose(fam.entropy(p, np.array([TN]))[0, 0], s_lo, rtol=2e-3)
    np.testing.assert_allclose(fam.entropy(p, hi[[400, 2000, 4000]])[0],
                               s_lo + s_hi[[399, 1999, 3999]], rtol=2e-3)


def test_entropy_below_T_N_is_small_and_deficit_stated():
    # The ordered-state entropy at T_N is of order (k_B T_N / J) R ln 2, and the high-T
    # entropy falls short of R ln 2 by S_1D(T_N) − S(T_N) (module notes of ordered_thermo).
    fam = SpinWaveFamily()
    p = _p(5.0, 0.1, 1.0)
    TN = fam.neel_temperature(p)[0, 0]
    tN = K_B_MEV * TN / 5.0
    s_N = fam.entropy(p, np.array([TN]))[0, 0]
    assert 0.1 * tN < s_N / (R_GAS * np.log(2)) < 2 * tN
    s_inf = fam.entropy(p, np.array([1e5]))[0, 0] / (R_GAS * np.log(2))
    s_1d = SpinonFamily().entropy(p, np.array([TN]))[0, 0]
    np.testing.assert_allclose(1 - s_inf, (s_1d - s_N) / (R_GAS * np.log(2)), atol=1e-4)
    assert 0.2 * tN < 1 - s_inf < tN


def test_small_interchain_coupling_is_continuous():
    # J_perp → 0 approaches the chain continuously (Savage–Dickey at the nested 1D point).
    T = np.geomspace(0.1, 100.0, 20)
    fam = SpinWaveFamily()
    p = _p(4.0, [0.0, 1e-9, 1e-6], 1.05)
    for out in (fam.susceptibility(p, T), fam.heat_capacity(p, T), fam.entropy(p, T)):
        dev = np.max(np.abs(out[1:] / out[0] - 1), axis=1)
        assert dev[0] < 1e-6 and dev[0] <= dev[1] < 1e-2


def test_table_and_direct_magnon_gas_agree_in_the_family():
    p = _p([2.0, 6.0], [0.3, 0.4], [1.05, 1.3])
    fast, ref = SpinWaveFamily(), SpinWaveFamily(thermo_method="direct")
    TN = fast.neel_temperature(p).max()
    T = np.linspace(0.3, 1.5, 6) * TN
    for name in ("heat_capacity", "entropy"):
        np.testing.assert_allclose(getattr(fast, name)(p, T), getattr(ref, name)(p, T),
                                   rtol=2e-3)
    np.testing.assert_allclose(fast.susceptibility(p, T, "z"), ref.susceptibility(p, T, "z"),
                               rtol=2e-3)


def test_bad_inputs():
    with pytest.raises(InputError):
        ot.ordered_susceptibility(np.array([1.0]), col(1.0), col(0.1), col(1.0), col(2.0),
                                  "up")
    with pytest.raises(InputError):
        ot.ordered_heat_capacity(np.array([-1.0]), col(1.0), col(0.1), col(1.0))
    with pytest.raises(InputError, match="frustrated"):
        ot.ordered_entropy(np.array([1.0]), col(1.0), col(0.1), col(1.0), z_perp=6)
