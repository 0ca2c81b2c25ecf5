"""Tests of the magnon-gas and Curie–Weiss thermodynamics of coupled chains."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from evidence1d.errors import InputError
from evidence1d.physics import bose_thermo as bt, magnon
from evidence1d.units import K_B_MEV, R_GAS, curie_constant


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def test_zone_weights_sum_to_one_and_average_cosines():
    # Exact zone averages: <cos q> = 0, <cos² q> = 1/2 (elementary integrals).
    u, v, w = bt.zone_nodes(16)
    assert abs(w.sum() - 1) < 1e-12
    # only functions even under (u, v) -> (-u, -v) are integrated correctly by construction
    np.testing.assert_allclose(np.sum(w * u * u), 0.5, rtol=1e-12)
    np.testing.assert_allclose(np.sum(w * v * v), 1.0, rtol=1e-12)
    np.testing.assert_allclose(np.sum(w * u * v), 0.0, atol=1e-12)
    with pytest.raises(InputError):
        bt.zone_nodes(1)


def test_debye_T3_law_of_gapless_3d_antiferromagnet():
    # Two linear Goldstone modes: C/R = (4π²/15) (k_BT)³ / (c_∥ c_⊥²) with the velocities
    # per radian (Debye-like law; C. Kittel, Introduction to Solid State Physics, 8th ed.,
    # 2005, Ch. 11 for the T³ magnon heat capacity of an antiferromagnet).
    J, Jp, S = col(5.0), col(0.5), 0.5
    cp, ca, _ = magnon.spin_wave_velocities(J, Jp, S)
    J0 = 2 * 5.0 + 4 * 0.5
    T = np.array([0.005, 0.01]) * S * J0 / K_B_MEV
    c = bt.magnon_gas(T, J, Jp, col(1.0), S)["c_over_r"]
    debye = (4 * np.pi ** 2 / 15) * (K_B_MEV * T) ** 3 / (cp * ca * ca)
    np.testing.assert_allclose(c, debye, rtol=0.02)
    # entropy of a T³ gas is C/3 (thermodynamic identity)
    s = bt.magnon_gas(T, J, Jp, col(1.0), S)["s_over_r"]
    np.testing.assert_allclose(s, c / 3.0, rtol=0.03)


def test_activated_heat_capacity_with_gap():
    # Gapped 3D magnons at k_BT ≪ Δ_gap: C/R ≈ 2 (Δ/k_BT)² e^{−Δ/k_BT} × (density of states
    # factor) — the exponential slope d ln(C T^{1/2}) / d(1/T) → −Δ/k_B (activated law,
    # common practice); check the slope of ln(C) against the closed-form gap.
    J, Jp, D, S = col(5.0), col(0.5), col(1.1), 0.5
    gap = magnon.spin_wave_gap(J, Jp, D, S)[0, 0]
    kT = np.array([0.04, 0.05]) * gap
    c = bt.magnon_gas(kT / K_B_MEV, J, Jp, D, S)["c_over_r"][0]
    # 3D quadratic minimum: C ∝ (Δ/T)² T^{3/2} e^{−Δ/T} → ln(C T^{1/2}) slope vs 1/kT is −Δ
    slope = np.diff(np.log(c * kT ** 0.5)) / np.diff(1.0 / kT)
    np.testing.assert_allclose(-slope[0], gap, rtol=0.05)


def test_high_temperature_series_and_continuity():
    # Leading high-T term (Rushbrooke & Wood, Mol. Phys. 1, 257 (1958)): infinite-T
    # variance of H; for the S = 1/2 Heisenberg chain C/R → (3/16)(J/k_BT)².
    T = np.array([1e3, 1e4])
    c = bt.high_temperature_heat_capacity(T, 1.0, 0.0, 1.0, 0.5)
    np.testing.assert_allclose(c, 3.0 / 16.0 / (K_B_MEV * T) ** 2, rtol=1e-14)
    J, Jp, D, S = col(2.0, 8.0), col(0.0, 0.8), col(1.0, 1.2), 0.5
    Tx = bt.crossover_temperature(J, Jp, D, S)
    eps = 1e-7
    Ts = np.concatenate([Tx[0] * (1 - eps), Tx[0] * (1 + eps)])
    C = bt.spin_wave_heat_capacity(Ts, J[:1], Jp[:1], D[:1], S)
    np.testing.assert_allclose(C[0, 0], C[0, 1], rtol=1e-5)    # continuous at the join
    Ts = np.concatenate([Tx[1] * (1 - eps), Tx[1] * (1 + eps)])
    C = bt.spin_wave_heat_capacity(Ts, J[1:], Jp[1:], D[1:], S)
    np.testing.assert_allclose(C[0, 0], C[0, 1], rtol=1e-5)


def test_entropy_is_integral_of_C_over_T():
    # S(T) = ∫₀ᵀ C/T' dT' (third law, thermodynamic identity), checked with scipy quad.
    J, Jp, D, S = col(3.0), col(0.3), col(1.05), 0.5
    Tx = bt.crossover_temperature(J, Jp, D, S)[0, 0]
    for T in (0.3 * Tx, 2.0 * Tx):
        f = lambda t: bt.spin_wave_heat_capacity(np.array([t]), J, Jp, D, S)[0, 0] / t
        pts = [Tx] if T > Tx else None
        val, _ = integrate.quad(f, 1e-6, T, points=pts, limit=200)
        s = bt.spin_wave_entropy(np.array([T]), J, Jp, D, S)[0, 0]
        np.testing.assert_allclose(s, val, rtol=2e-3)


def test_curie_constant_high_temperature_limit():
    # Curie constant N_A g² μ_B² S(S+1)/(3k_B) = 0.375148 emu K/mol for S = 1/2, g = 2
    # (CODATA constants via scipy.constants).
    T = np.array([1e7])
    for direction in ("powder", "z", "xy"):
        chi = bt.spin_wave_susceptibility(T, col(1.0), col(0.1), col(1.1), 0.5, col(2.0),
                                          direction)
        np.testing.assert_allclose(chi * T, 0.375148, rtol=1e-5)
    # Curie–Weiss: 1/χ is linear with intercept −θ, θ = S(S+1) Σ_j J_j / 3k_B (mean field,
    # R. M. White, Quantum Theory of Magnetism, 2007, Ch. 4)
    T = np.array([200.0, 400.0])
    inv = 1.0 / bt.spin_wave_susceptibility(T, col(2.0), col(0.2), col(1.0), 0.5, col(2.0),
                                            "xy")[0]
    theta = -(T[0] - inv[0] * (T[1] - T[0]) / (inv[1] - inv[0]))
    np.testing.assert_allclose(theta, 0.75 * (4.0 + 0.8) / 3 / K_B_MEV, rtol=1e-10)
    assert abs(curie_constant(2.0, 0.5) - 0.375148) < 2e-6


def test_ordered_state_susceptibility():
    # Collinear antiferromagnet below T_N: χ_⊥ constant, χ_∥ → 0, powder → (2/3)χ_⊥(T_N)
    # (molecular-field theory; White 2007, Ch. 4); continuous at T_N.
    J, Jp, D, S, g = col(5.0), col(0.5), col(1.02), 0.5, col(2.0)
    TN = magnon.neel_temperature(J, Jp)[0, 0]
    T = np.array([1e-3, 0.2 * TN, TN * (1 - 1e-9), TN * (1 + 1e-9)])
    z = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, "z")[0]
    xy = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, "xy")[0]
    pw = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, "powder")[0]
    assert z[0] < 1e-6 * z[2] and z[0] < z[1] < z[2]
    np.testing.assert_allclose(z[2], z[3], rtol=1e-6)
    np.testing.assert_allclose(xy[:3], xy[3], rtol=1e-6)
    np.testing.assert_allclose(pw[0], 2.0 / 3.0 * xy[3], rtol=1e-5)


def test_one_dimensional_limit_is_continuous():
    # J_perp -> 0: T_N -> 0 and every quantity tends to its J_perp = 0 value (no jump for
    # the Savage–Dickey ratio at J_perp = 0).
    T = np.array([0.5, 5.0, 50.0])
    J, D, S = col(4.0, 4.0), col(1.05, 1.05), 0.5
    Jp = col(0.0, 1e-9)
    for f in (bt.spin_wave_heat_capacity, bt.spin_wave_entropy):
        out = f(T, J, Jp, D, S)
        np.testing.assert_allclose(out[0], out[1], rtol=1e-5)
    chi = bt.spin_wave_susceptibility(T, J, Jp, D, S, col(2.0, 2.0))
    np.testing.assert_allclose(chi[0], chi[1], rtol=1e-6)


def test_bad_inputs():
    with pytest.raises(InputError):
        bt.spin_wave_susceptibility(np.array([1.0]), col(1.0), col(0.1), col(1.0), 0.5,
                                    col(2.0), "up")
    with pytest.raises(InputError):
        bt.magnon_gas(np.array([-1.0]), col(1.0), col(0.1), col(1.0), 0.5)


# ---------------------------------------------------------------- table path vs direct path
from hypothesis import given, settings, strategies as st  # noqa: E402


def _prior_draw(n, seed):
    # default priors of models/gapped_spin_wave.yaml: J log-uniform 0.1–20 meV, J_perp
    # uniform 0–2 meV, Δ uniform 1–1.5; a few sets pinned to the edges J_perp = 0, Δ = 1
    rng = np.random.default_rng(seed)
    J = np.exp(rng.uniform(np.log(0.1), np.log(20.0), (n, 1)))
    Jp, D = rng.uniform(0.0, 2.0, (n, 1)), rng.uniform(1.0, 1.5, (n, 1))
    Jp[:2], D[2:4] = 0.0, 1.0
    return J, Jp, D


def test_table_equals_direct_quadrature_over_prior_support():
    # Reference: the direct zone quadrature of this module (n_grid = 24, the default), used
    # wherever it is itself converged (it agrees with n_grid = 40 to 2e-4); the table must
    # then agree to 1e-3 relative for C, S and χ (accuracy target of the table).
    J, Jp, D = _prior_draw(12, seed=11)
    S, g = 0.5, np.full((12, 1), 2.0)
    T = np.geomspace(0.05, 400.0, 40)
    for f in (bt.spin_wave_heat_capacity, bt.spin_wave_entropy):
        tab = f(T, J, Jp, D, S)
        d24 = f(T, J, Jp, D, S, method="direct")
        d40 = f(T, J, Jp, D, S, n_grid=40, method="direct")
        ok = (np.abs(d24 - d40) <= 2e-4 * d40) & (d40 > 1e-6 * R_GAS)
        assert ok.mean() > 0.6                         # most of the support is compared
        np.testing.assert_allclose(tab[ok], d24[ok], rtol=1e-3)
    for direction in ("z", "powder"):
        tab = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, direction)
        d24 = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, direction, method="direct")
        d40 = bt.spin_wave_susceptibility(T, J, Jp, D, S, g, direction, n_grid=40,
                                          method="direct")
        # χ_z of a gapped magnet is activated below T_N; values under 1e-8 emu/mol (far below
        # any measurement) are compared in absolute terms only
        ok = (np.abs(d24 - d40) <= 2e-4 * d40) & (d40 > 1e-8)
        assert ok.mean() > 0.6
        np.testing.assert_allclose(tab, d24, rtol=0, atol=1e-8 + 1e-3 * np.max(d24))
        np.testing.assert_allclose(tab[ok], d24[ok], rtol=1e-3)
    # the crossover temperature of the table path equals the direct bisection root
    np.testing.assert_allclose(bt.crossover_temperature(J, Jp, D, S),
                               bt.crossover_temperature(J, Jp, D, S, n_grid=40,
                                                        method="direct"), rtol=1e-3)


def test_table_low_temperature_1d_linear_gas():
    # J_perp = 0, Δ = 1: ħω = 2JS|sin q| with velocity 2JS (Anderson, Phys. Rev. 86, 694
    # (1952)); a 1D Bose gas with a linear dispersion and two Goldstone points has
    # C/R = (2/π) τ ∫₀^∞ x² eˣ/(eˣ−1)² dx = (2π/3) τ, τ = k_B T/(2 J S), and S = C
    # (∫ x² eˣ/(eˣ − 1)² dx = π²/3, Gradshteyn & Ryzhik 3.411).  The direct rule at
    # n_grid = 24 is 15 % off at τ = 1e-3; the table must hold to 1e-3.
    tau = np.array([1e-4, 1e-3])
    J = col(3.0)
    T = tau * 2 * 3.0 * 0.5 / K_B_MEV
    gas = bt.magnon_gas(T, J, col(0.0), col(1.0), 0.5)
    np.testing.assert_allclose(gas["c_over_r"][0], 2 * np.pi / 3 * tau, rtol=1e-3)
    # S integrand ~ −ln x at small x: the energy floor magnon.OMEGA_FLOOR · S J_0 cuts it,
    # a 3e-3 effect at τ = 1e-4, so S is checked from τ = 1e-3 up
    tau, T = tau * 10, T * 10
    gas = bt.magnon_gas(T, J, col(0.0), col(1.0), 0.5)
    np.testing.assert_allclose(gas["s_over_r"][0], 2 * np.pi / 3 * tau, rtol=1e-3)


def test_table_debye_law_deep_in_the_ordered_phase():
    # As test_debye_T3_law_of_gapless_3d_antiferromagnet (Kittel 2005, Ch. 11) at a lower
    # temperature, where the T³ law is closer to exact and the table must hold to 5e-3.
    J, Jp, S = col(5.0), col(0.5), 0.5
    cp, ca, _ = magnon.spin_wave_velocities(J, Jp, S)
    T = np.array([3e-4, 1e-3]) * S * (2 * 5.0 + 4 * 0.5) / K_B_MEV
    c = bt.magnon_gas(T, J, Jp, col(1.0), S)["c_over_r"]
    np.testing.assert_allclose(c, (4 * np.pi ** 2 / 15) * (K_B_MEV * T) ** 3 / (cp * ca * ca),
                               rtol=5e-3)


def test_table_continuous_at_zero_interchain_coupling():
    # J_perp → 0 must approach the J_perp = 0 value smoothly (Savage–Dickey density at the
    # nested 1D point): differences shrink with J_perp and are tiny at 1e-9 meV.
    T = np.geomspace(0.05, 400.0, 25)
    Jp = col(0.0, 1e-12, 1e-9, 1e-6, 1e-3)
    J, D, g = np.full((5, 1), 7.0), np.full((5, 1), 1.1), np.full((5, 1), 2.0)
    for out in (bt.spin_wave_heat_capacity(T, J, Jp, D, 0.5),
                bt.spin_wave_entropy(T, J, Jp, D, 0.5),
                bt.spin_wave_susceptibility(T, J, Jp, D, 0.5, g, "powder")):
        dev = np.max(np.abs(out[1:] / out[0] - 1.0), axis=1)
        assert dev[0] < 1e-8 and dev[1] < 1e-6
        assert np.all(np.diff(dev) >= 0)


def test_table_outside_its_domain_falls_back_to_direct():
    # Δ = 3.5 and J_perp/J = 200 lie outside the table: those rows equal the direct path.
    T = np.array([1.0, 10.0, 100.0])
    J, Jp, D = col(1.0, 0.01, 2.0), col(0.1, 2.0, 0.2), col(3.5, 1.2, 1.2)
    tab = bt.spin_wave_heat_capacity(T, J, Jp, D, 0.5)
    ref = bt.spin_wave_heat_capacity(T, J, Jp, D, 0.5, method="direct")
    np.testing.assert_allclose(tab[:2], ref[:2], rtol=1e-12)
    np.testing.assert_allclose(tab[2], ref[2], rtol=1e-3)
    with pytest.raises(InputError):
        bt.spin_wave_entropy(T, J, Jp, D, 0.5, method="fast")


def test_not_a_knot_spline_reproduces_cubics():
    # A not-a-knot cubic spline interpolates any cubic polynomial exactly (C. de Boor, A
    # Practical Guide to Splines, 2001, Ch. IV); checked on the table's 1D building blocks.
    n, h = 9, 0.5
    xk = np.arange(n) * h
    p = lambda x: 1.0 - 2.0 * x + 0.3 * x ** 2 - 0.7 * x ** 3        # noqa: E731
    coef = bt._spline_matrix(n) @ p(xk)
    u = np.linspace(0.0, n - 1.0, 37)
    i, b, db = bt._basis(u, n)
    val = np.sum(coef[i[:, None] + np.arange(4)] * b, axis=1)
    der = np.sum(coef[i[:, None] + np.arange(4)] * db, axis=1) / h
    np.testing.assert_allclose(val, p(u * h), rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(der, -2.0 + 0.6 * u * h - 2.1 * (u * h) ** 2, rtol=1e-10,
                               atol=1e-10)


def test_shipped_table_size_and_provenance():
    # The package ships the table with its build record (grid, run time); keep it small.
    import json
    assert bt.TABLE_PATH.stat().st_size < 5e6
    meta = json.loads(bt.TABLE_PATH.with_suffix(".json").read_text())
    assert meta["run_time_s"] > 0 and "grid" in meta


@settings(max_examples=60, deadline=None)
@given(J=st.floats(0.1, 20.0), Jp=st.sampled_from([0.0, 1e-300, 1e-12]) | st.floats(0.0, 2.0),
       D=st.sampled_from([1.0, 1.0 + 1e-15]) | st.floats(1.0, 1.5),
       T=st.sampled_from([0.0, 1e-9, 0.05, 400.0]) | st.floats(0.05, 400.0))
def test_table_path_finite_in_prior_support(J, Jp, D, T):
    Ts = np.array([0.0, 1e-4, T, 1e4])
    args = (Ts, col(J), col(Jp), col(D), 0.5)
    outs = [bt.spin_wave_heat_capacity(*args), bt.spin_wave_entropy(*args)]
    outs += [bt.spin_wave_susceptibility(*args, col(2.0), d) for d in ("z", "xy", "powder")]
    for out in outs:
        assert np.all(np.isfinite(out)) and np.all(out >= 0)
