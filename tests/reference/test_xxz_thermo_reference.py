"""XXZ-chain thermodynamics checked against published values and exact results."""
from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest
from scipy import integrate, optimize

from evidence1d.physics.chain_thermo import xxz_thermodynamics
from xxz_reference import activation_energy_fit, half_gap

ROOT = Path(__file__).resolve().parents[2]


def _table_rtol(t, delta):
    """Stated accuracy of the interpolated table against the exact chain (chain_thermo)."""
    if delta <= 0.95 or t >= 0.1:
        return 1e-3
    if delta < 1.05:
        return 5e-3
    return 2e-2 if t >= 0.01 else 0.15


def _maximum(key, delta, lo, hi):
    f = lambda lt: -xxz_thermodynamics(np.exp([lt]), delta)[key][0]  # noqa: E731
    res = optimize.minimize_scalar(f, bounds=(np.log(lo), np.log(hi)), method="bounded",
                                   options={"xatol": 1e-7})
    return np.exp(res.x), -res.fun


def test_heisenberg_susceptibility_maximum():
    # χ*_max = 0.146926 at t = 0.640851 (Eggert, Affleck & Takahashi, PRL 73, 332 (1994);
    # Johnston et al., PRB 61, 9558 (2000)); value within 0.1 %, position within 0.5 %.
    t_max, chi_max = _maximum("chi_star", 1.0, 0.4, 1.0)
    assert chi_max == pytest.approx(0.146926, rel=1e-3)
    assert t_max == pytest.approx(0.640851, rel=5e-3)


def test_heisenberg_heat_capacity_maximum():
    # C_max ≈ 0.3497 R at t ≈ 0.4803 (Klümper & Johnston, PRL 84, 4701 (2000)).
    t_max, c_max = _maximum("c_over_r", 1.0, 0.3, 0.8)
    assert c_max == pytest.approx(0.3497, rel=2e-3)
    assert t_max == pytest.approx(0.4803, rel=1e-2)


def test_heisenberg_low_temperature_heat_capacity_is_conformal():
    # C = (π/3) k_B T / u with u = πJ/2, i.e. (2/3) R t (conformal field theory, Blöte, Cardy
    # & Nightingale, PRL 56, 742 (1986); Affleck, PRL 56, 746 (1986)); the leading correction
    # is of order 1/ln³(t0/t) (Lukyanov, Nucl. Phys. B 522, 533 (1998), from memory), a few
    # per mille at t ≤ 0.02.
    t = np.array([1e-4, 1e-3, 0.005, 0.02])
    c = xxz_thermodynamics(t, 1.0)["c_over_r"]
    np.testing.assert_allclose(c / (2 * t / 3), 1.0, rtol=1e-2)


def test_heisenberg_susceptibility_tends_to_one_over_pi_squared():
    # χ*(T → 0) = 1/π², approached from above with 1/(2 ln(t0/t)) corrections, t0 ≈ 7.7
    # (Eggert, Affleck & Takahashi, PRL 73, 332 (1994)).
    t = np.array([1e-6, 1e-4, 0.01, 0.05])
    chi = xxz_thermodynamics(t, 1.0)["chi_star"] * np.pi ** 2
    expected = 1 + 1 / (2 * np.log(7.7 / t))
    assert np.all(chi > 1.0)
    np.testing.assert_allclose(chi, expected, rtol=2e-2)


@pytest.mark.parametrize("delta", [0.0, 0.5, 1.0, 1.7, 3.0])
def test_entropy_is_integral_of_c_over_t_and_tends_to_ln2(delta):
    # Third law and S(T) = ∫_0^T C/T' dT' (thermodynamic identity); S(∞) = R ln 2 for S = 1/2.
    log_t = np.linspace(np.log(1e-4), np.log(5e4), 4001)
    t = np.exp(log_t)
    out = xxz_thermodynamics(t, delta)
    s_int = out["c_over_r"][0] + integrate.cumulative_trapezoid(out["c_over_r"], log_t,
                                                                 initial=0.0)
    check = (t > 0.02) & (t < 50)
    np.testing.assert_allclose(s_int[check], out["s_over_r"][check], rtol=1e-2,
                               atol=2e-4)
    assert s_int[-1] == pytest.approx(np.log(2.0), rel=5e-3)
    assert out["s_over_r"][-1] == pytest.approx(np.log(2.0), rel=1e-6)


def _bonner_fisher_fit(t):
    """Estes et al., Inorg. Chem. 17, 1415 (1978), rational fit to Bonner & Fisher, Phys. Rev.
    135, A640 (1964): χ* t = (0.25 + 0.074975x + 0.075235x²)/(1 + 0.9931x + 0.172135x² +
    0.757825x³), x = J/k_BT = 1/t."""
    x = 1.0 / t
    return (0.25 + 0.074975 * x + 0.075235 * x ** 2) / (
        1 + 0.9931 * x + 0.172135 * x ** 2 + 0.757825 * x ** 3) / t


def test_bonner_fisher_rational_fit():
    # Within 1 % for 0.3 ≤ t ≤ 2 (the range the fit was made for).
    t = np.geomspace(0.3, 2.0, 80)
    chi = xxz_thermodynamics(t, 1.0)["chi_star"]
    np.testing.assert_allclose(chi, _bonner_fisher_fit(t), rtol=1e-2)


def test_bonner_fisher_fit_itself_misses_the_high_temperature_series():
    # Above t ≈ 2 the fit, not the table, is off: its expansion χ* t = 1/4 (1 + c₁/t + …) has
    # c₁ = 0.074975/0.25 − 0.9931 = −0.693, whereas the exact series of the Heisenberg chain
    # has c₁ = −zJS(S+1)/3 / J = −1/2 (Curie–Weiss θ = −J/2; e.g. Johnston et al., PRB 61,
    # 9558 (2000)). So the fit falls up to ~2 % below the exact χ for 2 < t < 50, while the
    # table follows the exact infinite-chain NLIE there (see test_xxz_nlie.py).
    assert 0.074975 / 0.25 - 0.9931 == pytest.approx(-0.693, abs=1e-3)
    t = np.array([400.0])
    chi_t = xxz_thermodynamics(t, 1.0)["chi_star"][0] * t[0]
    assert chi_t == pytest.approx(0.25 * (1 - 0.5 / t[0]), rel=2e-5)
    assert _bonner_fisher_fit(t)[0] * t[0] < 0.25 * (1 - 0.6 / t[0])
    t = np.geomspace(2.5, 40.0, 30)
    gap = _bonner_fisher_fit(t) / xxz_thermodynamics(t, 1.0)["chi_star"] - 1.0
    assert gap.min() < -0.012       # the fit's own error, beyond the 1 % of its stated range


def _xx_exact(t):
    """Free-fermion XX chain (Lieb, Schultz & Mattis, Ann. Phys. 16, 407 (1961)):
    ε_k = J cos k; χ_zz = ∫ dk/2π (1/4t) sech²(ε/2t), C/R = ∫ dk/2π (ε/2t)² sech²(ε/2t)."""
    chi = integrate.quad(lambda k: 0.25 / t / np.cosh(np.cos(k) / (2 * t)) ** 2,
                         0, np.pi, limit=200)[0] / np.pi
    c = integrate.quad(lambda k: (np.cos(k) / (2 * t)) ** 2 / np.cosh(np.cos(k) / (2 * t)) ** 2,
                       0, np.pi, limit=200)[0] / np.pi
    return chi, c


def test_xx_chain_free_fermions():
    # Δ = 0 maps to free fermions (Jordan–Wigner; Lieb, Schultz & Mattis 1961): χ_zz and C
    # within 0.5 % for t ≥ 0.1, and down to t = 0.003 as well.
    t = np.geomspace(0.003, 50.0, 60)
    out = xxz_thermodynamics(t, 0.0)
    exact = np.array([_xx_exact(tt) for tt in t])
    np.testing.assert_allclose(out["chi_star"], exact[:, 0], rtol=5e-3)
    np.testing.assert_allclose(out["c_over_r"], exact[:, 1], rtol=5e-3)


def test_xx_chain_zero_temperature_limits():
    # χ_zz(0) = 1/π (density of states at the Fermi points) and C = (π/3) t (u = J);
    # Lieb, Schultz & Mattis (1961).
    out = xxz_thermodynamics(np.array([1e-4]), 0.0)
    assert out["chi_star"][0] == pytest.approx(1 / np.pi, rel=1e-3)
    assert out["c_over_r"][0] == pytest.approx(np.pi / 3 * 1e-4, rel=1e-3)


@pytest.mark.parametrize("delta", [2.0, 3.0])
def test_gapped_chain_is_activated_with_des_cloizeaux_gaudin_gap(delta):
    # For Δ > 1 thermally excited spinons cost ε_s = E_g/2, E_g = J sinh φ Σ (−1)^n/cosh(nφ)
    # (des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966)); dilute spinon gas χ ∝
    # t^{-1/2} e^{-ε_s/t} (common practice). Fit ln(χ √t) against 1/t at low t.
    eps = half_gap(delta)
    t = np.linspace(eps / 20, eps / 8, 30)
    out = xxz_thermodynamics(t, delta)
    assert activation_energy_fit(t, out["chi_star"], 0.5) == pytest.approx(eps, rel=0.05)
    assert activation_energy_fit(t, out["c_over_r"], 1.5) == pytest.approx(eps, rel=0.05)
    # and the ring data above the join fall far below the gapless Δ = 1 values
    assert xxz_thermodynamics(np.array([0.1]), delta)["chi_star"][0] < 0.5 / np.pi ** 2


def test_ring_ground_state_energy_tends_to_hulthen():
    # E_0/NJ → 1/4 − ln 2 (Hulthén, Ark. Mat. Astron. Fys. 26A, No. 11 (1938)); finite-ring
    # correction −π v/(6N²) with v = π/2 (Blöte, Cardy & Nightingale 1986), so extrapolate
    # in 1/N² from the 10- and 12-site rings.
    spec = importlib.util.spec_from_file_location("build_xxz_table",
                                                  ROOT / "scripts" / "build_xxz_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    e10, e12 = mod.ground_state_energy(10), mod.ground_state_energy(12)
    extrap = (144 * e12 - 100 * e10) / 44
    hulthen = 0.25 - np.log(2.0)
    assert abs(extrap - hulthen) < 2e-4
    assert abs(e12 - hulthen) > abs(extrap - hulthen)
    assert e12 - hulthen == pytest.approx(-np.pi ** 2 / (12 * 144), rel=0.1)


@pytest.mark.parametrize("delta", [0.25, 0.65, 1.0, 1.35, 2.45])
def test_table_interpolates_the_exact_infinite_chain(delta):
    # The shipped table against the NLIE solved directly at off-grid (t, Δ) (the equation
    # itself is checked against free fermions, Hulthén and the published Δ = 1 maxima in
    # test_xxz_nlie.py): the interpolation error of the table, to the accuracy its docstring
    # states.
    from evidence1d.physics.xxz_nlie import nlie_thermodynamics
    t = np.array([0.0033, 0.021, 0.13, 0.71, 3.3])
    exact = nlie_thermodynamics(t, delta)
    table = xxz_thermodynamics(t, delta)
    for key in ("chi_star", "c_over_r", "s_over_r"):
        for i, tt in enumerate(t):
            if exact[key][i] > 1e-6:
                assert table[key][i] == pytest.approx(exact[key][i],
                                                      rel=_table_rtol(tt, delta)), (key, tt)
