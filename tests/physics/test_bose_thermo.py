"""Tests of the magnon-gas thermodynamics of coupled chains (table and zone quadrature)."""
from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate

from evidence1d.errors import InputError
from evidence1d.physics import bose_thermo as bt, magnon
from evidence1d.physics import spin_wave_table as swt
from evidence1d.units import K_B_MEV


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


def test_planar_geometry_T2_law():
    # Chains in planes (z_perp = 2): two linear Goldstone modes in two dimensions give
    # C/R = 6 ζ(3) (k_BT)² / (π c_∥ c_a) (2D Debye-like law: ∫ u³ eᵘ/(eᵘ−1)² du = 6 ζ(3),
    # Gradshteyn & Ryzhik 3.411), and S = C/2 for a T² gas (thermodynamic identity).
    from scipy.special import zeta
    J, Jp, S = col(5.0), col(0.5), 0.5
    cp, ca, cb = magnon.spin_wave_velocities(J, Jp, S, z_perp=2)
    assert cb[0, 0] == 0.0
    T = np.array([3e-4, 1e-3]) * S * (2 * 5.0 + 2 * 0.5) / K_B_MEV
    gas = bt.magnon_gas(T, J, Jp, col(1.0), S, z_perp=2)
    law = 6 * zeta(3) * (K_B_MEV * T) ** 2 / (np.pi * cp * ca)
    np.testing.assert_allclose(gas["c_over_r"], law, rtol=5e-3)
    np.testing.assert_allclose(gas["s_over_r"], law / 2, rtol=5e-3)
    # the direct product rule agrees where it is converged (higher temperature)
    T = np.array([5.0, 20.0, 80.0])
    np.testing.assert_allclose(bt.magnon_gas(T, J, Jp, col(1.1), S, z_perp=2)["c_over_r"],
                               bt.magnon_gas(T, J, Jp, col(1.1), S, z_perp=2,
                                             method="direct")["c_over_r"], rtol=1e-3)


def test_entropy_is_integral_of_C_over_T():
    # S(T) = ∫₀ᵀ C/T' dT' (third law, thermodynamic identity), checked with scipy quad.
    J, Jp, D, S = col(3.0), col(0.3), col(1.05), 0.5
    for z in (4, 2):
        f = lambda t: bt.magnon_gas(np.array([t]), J, Jp, D, S, z_perp=z)["c_over_r"][0, 0] / t
        for T in (2.0, 30.0):
            val, _ = integrate.quad(f, 1e-6, T, limit=200)
            s = bt.magnon_gas(np.array([T]), J, Jp, D, S, z_perp=z)["s_over_r"][0, 0]
            np.testing.assert_allclose(s, val, rtol=2e-3)


def test_logarithms_and_selected_columns():
    # The table path returns only the averages asked for, and logarithms that stay finite
    # where an activated value underflows (Δ = 3 far below the gap).
    J, Jp, D = col(2.0), col(0.1), col(3.0)
    T = np.array([0.05, 1.0, 50.0])
    g = bt.magnon_gas(T, J, Jp, D, 0.5, funcs=(2,))
    assert g["c_over_r"] is None and g["log_c"] is None
    full = bt.magnon_gas(T, J, Jp, D, 0.5)
    np.testing.assert_array_equal(g["log_nn1"], full["log_nn1"])
    assert np.all(np.isfinite(full["log_c"])) and full["c_over_r"][0, 0] == 0.0
    np.testing.assert_allclose(np.exp(full["log_c"][0, 1:]), full["c_over_r"][0, 1:],
                               rtol=1e-14)


def test_bad_inputs():
    with pytest.raises(InputError):
        bt.magnon_gas(np.array([-1.0]), col(1.0), col(0.1), col(1.0), 0.5)
    with pytest.raises(InputError, match="frustrated"):
        bt.magnon_gas(np.array([1.0]), col(1.0), col(0.1), col(1.0), 0.5, z_perp=6)
    with pytest.raises(InputError):
        bt.zone_nodes(8, z_perp=3)


# ---------------------------------------------------------------- table path vs direct path
from hypothesis import given, settings, strategies as st  # noqa: E402


def _prior_draw(n, seed):
    # the ranges the ordered family feeds the gas with (renormalised exchanges of the
    # default priors: J 0.05–30 meV, J_perp/J up to ~40, Δ 1–3); a few sets pinned to the
    # edges J_perp = 0, Δ = 1
    rng = np.random.default_rng(seed)
    J = np.exp(rng.uniform(np.log(0.1), np.log(30.0), (n, 1)))
    Jp, D = rng.uniform(0.0, 2.0, (n, 1)), rng.uniform(1.0, 3.0, (n, 1))
    Jp[:2], D[2:4] = 0.0, 1.0
    return J, Jp, D


@pytest.mark.parametrize("z_perp", [4, 2])
def test_table_equals_direct_quadrature_over_prior_support(z_perp):
    # Reference: the direct zone quadrature of this module (n_grid = 24, the default), used
    # wherever it is itself converged (it agrees with n_grid = 40 to 2e-4); the table must
    # then agree to 1e-3 relative for C, S and ⟨n(n+1)⟩ (accuracy target of the table)
    # inside its range τ = k_BT/(S J_0) ≤ 50 (the ordered family needs it only below T_N).
    J, Jp, D = _prior_draw(12, seed=11)
    T = np.geomspace(0.05, 400.0, 40)
    inside = K_B_MEV * T / (0.5 * (2 * J + z_perp * Jp)) <= 50.0
    tab = bt.magnon_gas(T, J, Jp, D, 0.5, z_perp=z_perp)
    d24 = bt.magnon_gas(T, J, Jp, D, 0.5, method="direct", z_perp=z_perp)
    d40 = bt.magnon_gas(T, J, Jp, D, 0.5, n_grid=40, method="direct", z_perp=z_perp)
    for k in ("c_over_r", "s_over_r", "log_nn1"):
        a, b, c = (np.exp(x[k]) if k == "log_nn1" else x[k] for x in (tab, d24, d40))
        ok = (np.abs(b - c) <= 2e-4 * c) & (c > 1e-6) & inside
        assert ok.mean() > 0.3                         # much of the support is compared
        np.testing.assert_allclose(a[ok], b[ok], rtol=1e-3)


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
    # J_perp → 0 must approach the J_perp = 0 value smoothly: differences shrink with
    # J_perp and are tiny at 1e-12 meV.
    T = np.geomspace(0.05, 400.0, 25)
    Jp = col(0.0, 1e-12, 1e-9, 1e-6, 1e-3)
    J, D = np.full((5, 1), 7.0), np.full((5, 1), 1.1)
    for z in (4, 2):
        g = bt.magnon_gas(T, J, Jp, D, 0.5, z_perp=z)
        for out in (g["log_c"], g["log_s"], g["log_nn1"]):      # relative, via logarithms
            dev = np.max(np.abs(out[1:] - out[0]), axis=1)
            assert dev[0] < 1e-7 and dev[1] < 1e-5
            assert np.all(np.diff(dev) >= 0)


def test_table_outside_its_domain_falls_back_to_direct():
    # Δ = 3.5 and J_perp/J = 200 lie outside the table: those rows equal the direct path.
    T = np.array([1.0, 10.0, 100.0])
    J, Jp, D = col(1.0, 0.01, 2.0), col(0.1, 2.0, 0.2), col(3.5, 1.2, 1.2)
    tab = bt.magnon_gas(T, J, Jp, D, 0.5)["c_over_r"]
    ref = bt.magnon_gas(T, J, Jp, D, 0.5, method="direct")["c_over_r"]
    np.testing.assert_allclose(tab[:2], ref[:2], rtol=1e-12)
    np.testing.assert_allclose(tab[2], ref[2], rtol=1e-3)
    with pytest.raises(InputError):
        bt.magnon_gas(T, J, Jp, D, 0.5, method="fast")


def test_not_a_knot_spline_reproduces_cubics():
    # A not-a-knot cubic spline interpolates any cubic polynomial exactly (C. de Boor, A
    # Practical Guide to Splines, 2001, Ch. IV); checked on the table's 1D building blocks.
    n, h = 9, 0.5
    xk = np.arange(n) * h
    p = lambda x: 1.0 - 2.0 * x + 0.3 * x ** 2 - 0.7 * x ** 3        # noqa: E731
    coef = swt._spline_matrix(n) @ p(xk)
    u = np.linspace(0.0, n - 1.0, 37)
    i, b, db = swt._basis(u, n)
    val = np.sum(coef[i[:, None] + np.arange(4)] * b, axis=1)
    der = np.sum(coef[i[:, None] + np.arange(4)] * db, axis=1) / h
    np.testing.assert_allclose(val, p(u * h), rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(der, -2.0 + 0.6 * u * h - 2.1 * (u * h) ** 2, rtol=1e-10,
                               atol=1e-10)


def test_shipped_table_size_and_provenance():
    # The package ships the table with its build record (grid, run time); keep it small.
    import json
    assert swt.TABLE_PATH.stat().st_size < 8e6           # two geometries
    meta = json.loads(swt.TABLE_PATH.with_suffix(".json").read_text())
    assert meta["run_time_s"] > 0 and meta["grid"]["z_perp"] == [2, 4]
    assert swt.spin_wave_table().z_perp == (2, 4)


@settings(max_examples=40, deadline=None)
@given(J=st.floats(0.05, 40.0), Jp=st.sampled_from([0.0, 1e-300, 1e-12]) | st.floats(0.0, 2.0),
       D=st.sampled_from([1.0, 1.0 + 1e-15]) | st.floats(1.0, 3.0),
       T=st.sampled_from([0.0, 1e-9, 0.05, 400.0]) | st.floats(0.05, 400.0),
       z=st.sampled_from([2, 4]))
def test_table_path_finite_in_prior_support(J, Jp, D, T, z):
    Ts = np.array([0.0, 1e-4, T, 1e4])
    g = bt.magnon_gas(Ts, col(J), col(Jp), col(D), 0.5, z_perp=z)
    for k in ("log_c", "log_s", "log_nn1"):
        assert np.all(np.isfinite(g[k]))
    for k in ("c_over_r", "s_over_r"):
        assert np.all(np.isfinite(g[k])) and np.all(g[k] >= 0)


@pytest.mark.parametrize("gap_kind", ["at_the_gap", "zero", "far_below"])
def test_zone_sums_against_textbook_bose_formulas(gap_kind, monkeypatch):
    # Per mode of energy ε at k_BT = τ, x = ε/τ, n = 1/(eˣ − 1) (R. M. White, Quantum Theory
    # of Magnetism (2007), Ch. 6): C/k_B = x² eˣ/(eˣ − 1)², S/k_B = x n − ln(1 − e⁻ˣ) and
    # n(n + 1) = eˣ/(eˣ − 1)², summed with weights in extended precision (numpy longdouble)
    # and shifted by gap/τ; 'far_below' puts the shift so far under the energies that the
    # direct sums underflow and the log-space path must take over.
    rng = np.random.default_rng(11)
    eps = np.sort(rng.uniform(0.5, 3.0, (3, 40)), axis=1)
    w = rng.uniform(0.1, 1.0, (3, 40))
    w /= w.sum(axis=1, keepdims=True)
    tau = np.broadcast_to(np.array([5e-4, 0.02, 0.3, 2.0, 40.0]), (3, 5))
    gap = {"at_the_gap": eps[:, :1], "zero": np.zeros((3, 1)),
           "far_below": eps[:, :1] * 1e-3}[gap_kind]
    calls = []
    monkeypatch.setattr(swt, "_log_space", lambda *a, f=swt._log_space: calls.append(1) or f(*a))
    got = swt.log_zone_averages(eps, w, tau, gap)
    # at τ = 5e-4 every e^{−(x − gap/τ)} underflows unless the shift is the gap itself
    assert bool(calls) == (gap_kind != "at_the_gap")
    for i in range(3):
        for k in range(5):
            x = eps[i].astype(np.longdouble) / np.longdouble(tau[i, k])
            em = np.expm1(-x)                              # e⁻ˣ − 1
            n = 1 / np.expm1(x)
            terms = {"c": x * x * np.exp(-x) / (em * em), "s": x * n - np.log1p(-np.exp(-x)),
                     "l": np.exp(-x) / (em * em)}
            for j, key in enumerate("csl"):
                total = np.sum(w[i] * terms[key])
                want = float(np.log(total) + np.longdouble(gap[i, 0] / tau[i, k]))
                if np.isfinite(want):
                    assert got[j][i, k] == pytest.approx(want, abs=1e-9), (key, i, k)
