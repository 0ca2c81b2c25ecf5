"""The infinite-chain NLIE (evidence1d.physics.xxz_nlie) against exact and published results.

H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0, t = k_B T / J, χ* = χ J / (N g² μ_B²).
"""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, optimize

from evidence1d.physics.xxz_nlie import NlieGrid, nlie_thermodynamics

from xxz_reference import activation_energy_fit, half_gap


def _free_fermions(t):
    """XX chain = free fermions with ε_k = J cos k (Jordan–Wigner; Lieb, Schultz & Mattis,
    Ann. Phys. 16, 407 (1961)): per site f = −t ∫dk/2π ln(2 cosh(ε/2t)), χ_zz = ∫dk/2π
    (1/4t) sech²(ε/2t), C/R = ∫dk/2π (ε/2t)² sech²(ε/2t), S = (E − f)/t."""
    def avg(g):
        return integrate.quad(g, 0.0, np.pi, limit=400, epsabs=1e-14, epsrel=1e-12)[0] / np.pi
    x = lambda k: np.cos(k) / (2 * t)  # noqa: E731
    f = -t * avg(lambda k: np.log(2 * np.cosh(x(k))))
    e = avg(lambda k: -0.5 * np.cos(k) * np.tanh(x(k)))
    chi = avg(lambda k: 0.25 / t / np.cosh(x(k)) ** 2)
    c = avg(lambda k: x(k) ** 2 / np.cosh(x(k)) ** 2)
    return {"f_over_j": f, "chi_star": chi, "c_over_r": c, "s_over_r": (e - f) / t}


@pytest.fixture(scope="module")
def heisenberg_grid():
    return NlieGrid(1.0)


def test_xx_chain_equals_free_fermions():
    # At Δ = 0 the kernel vanishes and the equation must reproduce the free fermions exactly
    # (Lieb, Schultz & Mattis 1961), at every temperature, including t = 0.1 where rings of
    # up to 24 sites are still 10 % off in C.
    t = np.array([3.0, 0.5, 0.1, 0.03, 0.005])
    out = nlie_thermodynamics(t, 0.0)
    for i, tt in enumerate(t):
        exact = _free_fermions(tt)
        for key in ("f_over_j", "chi_star", "c_over_r", "s_over_r"):
            assert out[key][i] == pytest.approx(exact[key], rel=1e-7, abs=1e-12), (key, tt)
    assert out["imag"] < 1e-9


def test_heisenberg_ground_state_energy_is_hulthen(heisenberg_grid):
    # E_0/NJ = 1/4 − ln 2 (Hulthén, Ark. Mat. Astron. Fys. 26A, No. 11 (1938)); at low t the
    # conformal correction is f = E_0 − π t²/(6u) with u = π/2 (Blöte, Cardy & Nightingale,
    # PRL 56, 742 (1986); Affleck, PRL 56, 746 (1986)), log corrections of order t²/ln³.
    t = np.array([0.004])
    f = nlie_thermodynamics(t, 1.0, heisenberg_grid)["f_over_j"][0]
    assert f + t[0] ** 2 / 3 == pytest.approx(0.25 - np.log(2.0), abs=2e-7)


def _maximum(key, lo, hi, grid):
    res = optimize.minimize_scalar(
        lambda lt: -nlie_thermodynamics(np.exp([lt]), 1.0, grid)[key][0],
        bounds=(np.log(lo), np.log(hi)), method="bounded", options={"xatol": 1e-6})
    return np.exp(res.x), -res.fun


def test_heisenberg_susceptibility_maximum(heisenberg_grid):
    # χ*_max = 0.146926 at t = 0.640851 (Eggert, Affleck & Takahashi, PRL 73, 332 (1994);
    # Johnston et al., PRB 61, 9558 (2000)); the equation is exact, so to the digits quoted.
    t_max, chi_max = _maximum("chi_star", 0.55, 0.75, heisenberg_grid)
    assert chi_max == pytest.approx(0.146926, abs=2e-6)
    assert t_max == pytest.approx(0.640851, rel=2e-4)


def test_heisenberg_heat_capacity_maximum(heisenberg_grid):
    # C_max ≈ 0.3497 R at t ≈ 0.4803 (Klümper & Johnston, PRL 84, 4701 (2000)).
    t_max, c_max = _maximum("c_over_r", 0.4, 0.56, heisenberg_grid)
    assert c_max == pytest.approx(0.3497, abs=1e-4)
    assert t_max == pytest.approx(0.4803, abs=1e-3)


@pytest.mark.parametrize("delta", [0.0, 0.5, 1.0, 2.0])
def test_high_temperature_series(delta):
    # Leading terms of the expansion in 1/t of Tr e^{−H/t} for S = 1/2 (e.g. Johnston et al.,
    # PRB 61, 9558 (2000)): χ* = (1/4t)(1 − Δ/2t + …), C/R = (2 + Δ²)/(16t²)(1 + O(1/t)),
    # S/R = ln 2 − (2 + Δ²)/(32 t²) + O(1/t³).
    t = np.array([400.0])
    out = nlie_thermodynamics(t, delta)
    assert out["chi_star"][0] * 4 * t[0] == pytest.approx(1 - delta / (2 * t[0]), abs=2e-5)
    assert out["c_over_r"][0] == pytest.approx((2 + delta**2) / (16 * t[0] ** 2), rel=5e-3)
    assert out["s_over_r"][0] == pytest.approx(np.log(2) - (2 + delta**2) / (32 * t[0] ** 2),
                                               abs=1e-8)


def test_luttinger_liquid_limits():
    # 0 ≤ Δ = cos γ < 1: χ*(0) = K/(π u), K = π/(2(π − γ)), u = π sin γ/(2γ) and
    # C/R → π t/(3u) (Luther & Peschel, PRB 12, 3908 (1975); des Cloizeaux & Pearson, Phys.
    # Rev. 128, 2131 (1962); Blöte, Cardy & Nightingale 1986).
    delta = 0.5
    gamma = np.arccos(delta)
    u = np.pi * np.sin(gamma) / (2 * gamma)
    k = np.pi / (2 * (np.pi - gamma))
    out = nlie_thermodynamics(np.array([1e-3]), delta)
    assert out["chi_star"][0] == pytest.approx(k / (np.pi * u), rel=1e-3)
    assert out["c_over_r"][0] == pytest.approx(np.pi * 1e-3 / (3 * u), rel=1e-3)


@pytest.mark.parametrize("delta", [2.0, 3.0])
def test_gapped_chain_is_activated_with_des_cloizeaux_gaudin_gap(delta):
    # Δ = cosh φ > 1: each thermal spinon costs ε_s = E_g/2 with E_g = J sinh φ Σ_n (−1)^n /
    # cosh(nφ) (des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966)); dilute-gas forms
    # χ ∝ t^{-1/2} e^{−ε_s/t}, C ∝ t^{-3/2} e^{−ε_s/t} (common practice).
    eps = half_gap(delta)
    t = np.linspace(eps / 14, eps / 9, 8)
    out = nlie_thermodynamics(t, delta)
    slope_chi = activation_energy_fit(t, out["chi_star"], 0.5)
    slope_c = activation_energy_fit(t, out["c_over_r"], 1.5)
    assert slope_chi == pytest.approx(eps, rel=0.02)
    assert slope_c == pytest.approx(eps, rel=0.02)


def test_discretisation_is_converged():
    # A finer grid changes nothing at the 1e-7 level (numerical check of the defaults).
    t = np.array([0.7, 0.02, 0.002])
    for delta, fine in ((0.7, dict(spacing=0.01, half_length=25)),
                        (1.3, dict(spacing=0.002))):
        a = nlie_thermodynamics(t, delta)
        b = nlie_thermodynamics(t, delta, NlieGrid(delta, **fine))
        for key in ("chi_star", "c_over_r", "s_over_r"):
            np.testing.assert_allclose(a[key], b[key], rtol=1e-7)
