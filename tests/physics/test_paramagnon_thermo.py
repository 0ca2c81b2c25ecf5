"""Heat capacity and entropy of the paramagnon's overdamped modes (paramagnon_thermo)."""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, optimize, special

from evidence1d.families.paramagnon import IncommensurateParamagnonFamily, ParamagnonFamily
from evidence1d.physics import paramagnon as pm
from evidence1d.physics import paramagnon_thermo as pt
from evidence1d.physics import paramagnon_zone as pz
from evidence1d.units import K_B_MEV, R_GAS

LATTICE = (3.0, 7.0, 7.5)


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def _rho(w, gam):
    # phase-shift density of states of a relaxational mode, (1/π) Γ/(ω² + Γ²)
    # (G. W. Ford, J. T. Lewis & R. F. O'Connell, Ann. Phys. 185, 270 (1988), from memory)
    return gam / (math.pi * (w * w + gam * gam))


def _quad(f, kT, gam):
    # ∫₀^∞ in pieces (log singularity at 0, scales Γ and k_BT)
    pts = sorted({0.0, min(gam, kT), max(gam, kT), 40.0 * max(gam, kT)})
    total = 0.0
    for a, b in zip(pts[:-1], pts[1:]):
        total += integrate.quad(f, a, b, limit=400, epsabs=0, epsrel=1e-11)[0]
    return total + integrate.quad(f, pts[-1], np.inf, limit=400, epsabs=0, epsrel=1e-11)[0]


@pytest.mark.filterwarnings("ignore::scipy.integrate.IntegrationWarning")
@pytest.mark.parametrize("gam,kT", [(1.0, 0.05), (1.0, 1.0), (0.3, 2.0), (2.0, 0.37),
                                    (0.01, 5.0)])
def test_closed_form_free_energy_entropy_heat_capacity_vs_quadrature(gam, kT):
    # F = ∫ρ k_BT ln(1 − e^{−ω/k_BT}) dω, S = ∫ρ s_B dω, C = ∫ρ c_B dω with the oscillator
    # entropy s_B(x) = x/(eˣ − 1) − ln(1 − e⁻ˣ) and heat capacity c_B = x² eˣ/(eˣ − 1)²
    # (bosonic oscillator, any statistical-mechanics text), by scipy quad, against the
    # Binet closed forms −k_BT μ(u), μ − uμ', u²μ'' (Abramowitz & Stegun 1964, 6.1.50).
    F = _quad(lambda w: _rho(w, gam) * kT * np.log(-np.expm1(-w / kT)), kT, gam)
    S = _quad(lambda w: _rho(w, gam) * ((w / kT) * np.exp(-w / kT) / -np.expm1(-w / kT)
                                         - np.log(-np.expm1(-w / kT))), kT, gam)
    C = _quad(lambda w: _rho(w, gam) * (w / kT) ** 2 * np.exp(-w / kT)
              / np.expm1(-w / kT) ** 2, kT, gam)
    mf = pt.mode_functions(np.array([gam / (2 * math.pi * kT)]))
    np.testing.assert_allclose(-kT * mf["f"][0], F, rtol=1e-9)
    np.testing.assert_allclose(mf["s"][0], S, rtol=1e-9)
    np.testing.assert_allclose(mf["c"][0], C, rtol=1e-9)


def test_mode_functions_against_scipy_gamma_functions():
    # μ(u) = ln Γ(u) − (u − ½) ln u + u − ½ ln 2π, μ' = ψ − ln u + 1/2u, μ'' = ψ' − 1/u − 1/2u²
    # (Abramowitz & Stegun 6.1.50, 6.3, 6.4) with scipy's gammaln/psi/polygamma, where
    # their cancellation is harmless (u ≤ 30).
    u = np.geomspace(1e-8, 30.0, 400)
    mf = pt.mode_functions(u)
    mu = special.gammaln(u) - (u - 0.5) * np.log(u) + u - 0.5 * math.log(2 * math.pi)
    m1 = special.psi(u) - np.log(u) + 0.5 / u
    m2 = special.polygamma(1, u) - 1 / u - 0.5 / u ** 2
    m3 = special.polygamma(2, u) + 1 / u ** 2 + 1 / u ** 3
    np.testing.assert_allclose(mf["f"], mu, rtol=1e-10)
    np.testing.assert_allclose(mf["s"], mu - u * m1, rtol=1e-10)
    np.testing.assert_allclose(mf["c"], u * u * m2, rtol=1e-9)
    np.testing.assert_allclose(mf["dc_du"], 2 * u * m2 + u * u * m3, rtol=1e-6, atol=1e-9)


def test_limits_low_and_high_temperature():
    # k_BT ≪ Γ: C = S = k_B/(6u) = (π/3) k_B (k_BT/Γ), γ = (π/3) k_B²/Γ per mode (Stirling
    # series, A&S 6.1.41; T. Moriya, Spin Fluctuations in Itinerant Electron Magnetism,
    # 1985, Ch. 3).  k_BT ≫ Γ: C → k_B/2, S → (k_B/2)[ln(k_BT/Γ) + 1] (μ ≈ −½ ln 2πu).
    u = np.array([1e3, 1e5, 1e9])
    mf = pt.mode_functions(u)
    np.testing.assert_allclose(mf["c"] * 6 * u, 1 - 1 / (5 * u * u), rtol=1e-12)
    np.testing.assert_allclose(mf["s"] * 6 * u, 1 - 1 / (15 * u * u), rtol=1e-12)
    u = np.array([1e-6, 1e-9, 1e-12])
    mf = pt.mode_functions(u)
    np.testing.assert_allclose(mf["c"], 0.5 - u, rtol=1e-9)
    np.testing.assert_allclose(mf["s"], 0.5 * (np.log(1 / (2 * math.pi * u)) + 1), rtol=1e-6)
    # at k_BT = Γ the linear law overestimates C by a factor 2.8
    c1 = pt.mode_functions(np.array([1 / (2 * math.pi)]))["c"][0]
    assert (math.pi / 3) / c1 == pytest.approx(2.796, abs=2e-3)


def test_interpolation_table_matches_closed_form():
    u = np.exp(np.random.default_rng(0).uniform(-32.0, 32.0, 20000))
    ex = pt.mode_functions(u)
    it = pt._interpolated(u, ("f", "s", "c", "dc"))
    for q in ("f", "s", "c"):
        np.testing.assert_allclose(it[q], ex[q], rtol=2e-9)
    np.testing.assert_allclose(it["dc"], u * ex["dc_du"], rtol=1e-2, atol=1e-6)


def _brute(center, xp, xt, g0, q0=None, n=48):
    # midpoint rule over the full zone [0, 2π)³ (no symmetry used)
    g = (np.arange(n) + 0.5) / n * 2 * math.pi
    qq = np.meshgrid(g, g, g, indexing="ij")
    k = pm.oz_denominator(*qq, xp, xt, *LATTICE, center, q0)
    ell = pm.lattice_momentum(*qq, *LATTICE) if pm.DYNAMICS[center] == 3 else None
    return pm.relaxation_rate(k, g0, ell).ravel()


@pytest.mark.parametrize("center,xp,xt,q0", [("zone_boundary", 6.0, 1.5, None),
                                             ("zone_centre", 6.0, 1.5, None),
                                             ("incommensurate", 6.0, 1.5, 0.37),
                                             ("zone_boundary", 0.0, 0.0, None)])
def test_zone_rule_against_brute_force_midpoint(center, xp, xt, q0):
    G, W = pz.zone_rates(col(xp), col(xt), col(1.3), *LATTICE, center,
                         None if q0 is None else col(q0))
    Gb = _brute(center, xp, xt, 1.3, q0)
    for T in (0.5, 5.0, 60.0):
        kT = K_B_MEV * T
        for q in ("c", "s"):
            rule = np.sum(W * pt.mode_functions(G / (2 * math.pi * kT))[q])
            brute = np.mean(pt.mode_functions(Gb / (2 * math.pi * kT))[q])
            assert rule == pytest.approx(brute, rel=1e-3), (T, q)


def test_zone_rule_low_temperature_against_bessel_average():
    # ⟨1/(1 + κ)⟩ over the zone from the Bessel representation (Abramowitz & Stegun 1964,
    # 9.6.19) and, for a chain, the elementary ⟨1/(1 + b sin²(q/2))⟩ = 1/√(1 + b)
    xp, xt, g0 = col(0.0, 6.0, 50.0, 20.0), col(0.0, 1.5, 20.0, 0.0), col(1.0, 2.0, 0.5, 3.0)
    G, W = pz.zone_rates(xp, xt, g0, *LATTICE)
    inv = np.sum(W / G, axis=1, keepdims=True)
    np.testing.assert_allclose(inv, pz.zone_average_inverse_rate(g0, xp, xt, *LATTICE),
                               rtol=2e-5)
    b = (2 * 20.0 / 3.0) ** 2
    assert inv[3, 0] * 3.0 == pytest.approx(1 / math.sqrt(1 + b), rel=1e-5)
    # and the Bessel form itself against a brute-force midpoint average
    n = 64
    g = (np.arange(n) + 0.5) / n * 2 * np.pi
    qq = np.meshgrid(g, g, g, indexing="ij")
    k = pm.oz_denominator(*qq, 6.0, 1.5, *LATTICE)
    assert pz.zone_average_inverse_rate(1.0, 6.0, 1.5, *LATTICE) \
        == pytest.approx(np.mean(1 / (1 + k)), rel=1e-4)


@pytest.mark.parametrize("center", ["zone_boundary", "zone_centre", "incommensurate"])
def test_refined_rule_and_compression_converge(center):
    # the default rule against a much finer one, and the 2 × 32-node compression against
    # the full rule, over the prior ranges (ξ_∥ ≤ 50 Å, ξ_⊥ ≤ 20 Å, Γ_0 0.05-50 meV)
    rng = np.random.default_rng(5)
    k = 5
    xp, xt = col(50.0, *rng.uniform(0, 50, k - 1)), col(20.0, *rng.uniform(0, 20, k - 1))
    g0, q0 = col(*np.exp(rng.uniform(np.log(0.05), np.log(50), k))), col(*rng.uniform(0, 1, k))
    q0 = q0 if center == "incommensurate" else None
    T = np.geomspace(0.3, 300, 5)
    fine = pz.zone_rates(xp, xt, g0, *LATTICE, center, q0, panels=((9, 5), (7, 4)))
    G, W = pz.zone_rates(xp, xt, g0, *LATTICE, center, q0)
    lg, w = pz.compress_rates(G, W)
    for q in ("c", "s"):
        full = [pt.gas_thermodynamics(T, np.log(a), b, (q,))[q] for a, b in (fine, (G, W))]
        comp = pt.gas_thermodynamics(T, lg, w, (q,))[q]
        np.testing.assert_allclose(full[1], full[0], rtol=5e-4)
        np.testing.assert_allclose(comp, full[1], rtol=1e-4)


def test_entropy_is_minus_dF_dT_and_integral_of_c_over_t():
    # S = −∂F/∂T (central differences) for the gas, and S(T) = ∫₀^T C/T' dT' (scipy quad)
    # for the family's C and S, across the saturation temperature
    fam = ParamagnonFamily(lattice=LATTICE, center="zone_centre")
    p = {"chi_uniform": col(1e-3), "theta_sf": col(30.0), "xi_par": col(8.0),
         "xi_perp": col(2.0), "gamma0": col(1.2), "g": col(2.1)}
    lg, w = fam.zone_rates(p)
    T = np.array([0.7, 3.0, 12.0])
    h = 1e-4 * T
    F = lambda t: pt.gas_thermodynamics(t, lg, w, ("f",))["f"][0]    # noqa: E731
    S = pt.gas_thermodynamics(T, lg, w, ("s",))["s"][0]
    np.testing.assert_allclose(-(F(T + h) - F(T - h)) / (2 * h), S, rtol=1e-6)
    tx = float(fam.saturation_temperature(p)[0, 0])
    # ∫ C d(ln T) by Gauss–Legendre on [ln(1e-5 T_x), ln T_x] and [ln T_x, ln T] (C is
    # smooth on each piece), plus S(1e-5 T_x) ≈ C(1e-5 T_x) (C = S = γT at low T)
    x, wg = np.polynomial.legendre.leggauss(120)
    t0 = 1e-5 * tx

    def integral(t):
        total = fam.heat_capacity(p, np.array([t0]))[0, 0]
        for a, b in ((t0, min(t, tx)), (tx, t)):
            if b <= a:
                continue
            la, lb = math.log(a), math.log(b)
            nodes = np.exp(0.5 * (la + lb) + 0.5 * (lb - la) * x)
            total += 0.5 * (lb - la) * np.sum(wg * fam.heat_capacity(p, nodes)[0])
        return total

    Ts = np.array([0.5 * tx, 2.0 * tx, 10.0 * tx])
    np.testing.assert_allclose(fam.entropy(p, Ts)[0], [integral(t) for t in Ts], rtol=1e-7)


@pytest.mark.parametrize("spin", [0.5, 1.0, 2.5])
def test_entropy_ceiling_uniform_rate(spin):
    # ξ = 0: one rate Γ_0 for the whole zone, S_gas = 3R s(u).  The crossing of
    # S_gas + C_gas/2 with R ln(2S + 1) found independently with scipy's gamma functions and
    # brentq; C continuous at T_x; S(T → ∞) = R ln(2S + 1).
    fam = ParamagnonFamily(spin=spin, lattice=LATTICE)
    g0 = 0.8
    p = {"chi_uniform": col(1e-3), "theta_sf": col(30.0), "xi_par": col(0.0),
         "xi_perp": col(0.0), "gamma0": col(g0), "g": col(2.1)}

    def gas(kT):
        u = g0 / (2 * math.pi * kT)
        m1 = special.psi(u) - math.log(u) + 0.5 / u
        mu = special.gammaln(u) - (u - 0.5) * math.log(u) + u - 0.5 * math.log(2 * math.pi)
        return 3 * R_GAS * (mu - u * m1), 3 * R_GAS * (u * u * special.polygamma(1, u) - u - 0.5)

    smax = R_GAS * math.log(2 * spin + 1)
    kTx = optimize.brentq(lambda kT: gas(kT)[0] + 0.5 * gas(kT)[1] - smax, 1e-3, 10.0,
                          xtol=1e-14)
    tx = float(fam.saturation_temperature(p)[0, 0])
    assert K_B_MEV * tx == pytest.approx(kTx, rel=1e-8)
    T = np.array([tx * (1 - 1e-9), tx * (1 + 1e-9), 1e7])
    C, S = fam.heat_capacity(p, T)[0], fam.entropy(p, T)[0]
    assert C[0] == pytest.approx(C[1], rel=1e-6) and C[0] == pytest.approx(gas(kTx)[1], rel=1e-6)
    assert S[2] == pytest.approx(smax, rel=1e-9)
    if spin == 0.5:
        # the documented numbers: k_BT_x = 0.159 Γ_0; the unbounded gas passes R ln 2 at
        # k_BT = 0.244 Γ_0
        assert kTx / g0 == pytest.approx(0.1594, abs=2e-4)
        cross = optimize.brentq(lambda kT: gas(kT)[0] - smax, 1e-3, 10.0)
        assert cross / g0 == pytest.approx(0.2437, abs=2e-4)


def test_batch_with_saturation_above_and_below_the_requested_temperatures():
    # ξ = 0 (one rate Γ_0 per set): T_x found independently by brentq on the closed-form
    # gas (scipy's gamma functions; Ford, Lewis & O'Connell, Ann. Phys. 185, 270 (1988)),
    # C(T) = C_gas(T) below T_x and C_gas(T_x)(T_x/T)² above it.  The batch mixes sets whose
    # T_x lies far above the highest T (no crossing is solved for them), inside the range
    # and below the lowest T, so each path of spin_fluctuation_thermo is used at once.
    fam = ParamagnonFamily(lattice=LATTICE)
    g0 = np.array([0.05, 0.4, 3.0, 25.0, 200.0])
    n = g0.size
    p = {"chi_uniform": col(*[1e-3] * n), "theta_sf": col(*[30.0] * n),
         "xi_par": col(*[0.0] * n), "xi_perp": col(*[0.0] * n), "gamma0": col(*g0),
         "g": col(*[2.1] * n)}
    T = np.array([0.5, 2.0, 7.0, 20.0, 45.0])
    smax = R_GAS * math.log(2.0)

    def gas(kT, g):
        u = g / (2 * math.pi * kT)
        m1 = special.psi(u) - math.log(u) + 0.5 / u
        mu = special.gammaln(u) - (u - 0.5) * math.log(u) + u - 0.5 * math.log(2 * math.pi)
        return 3 * R_GAS * (mu - u * m1), 3 * R_GAS * (u * u * special.polygamma(1, u) - u - 0.5)

    C = fam.heat_capacity(p, T)
    for i, g in enumerate(g0):
        kTx = optimize.brentq(lambda kT: gas(kT, g)[0] + 0.5 * gas(kT, g)[1] - smax,
                              1e-4 * g, 10.0 * g, xtol=1e-14)
        tx = kTx / K_B_MEV
        want = [gas(K_B_MEV * t, g)[1] if t <= tx else gas(kTx, g)[1] * (tx / t) ** 2
                for t in T]
        np.testing.assert_allclose(C[i], want, rtol=1e-6, err_msg=f"Γ_0 = {g} meV")
    # the three regimes are present: T_x above all T, inside the range, below all T
    tx_all = fam.saturation_temperature(p)[:, 0]
    assert tx_all[0] < T[0] and T[0] < tx_all[2] < T[-1] and tx_all[-1] > T[-1]


def test_low_temperature_gamma_for_every_centre():
    # C/T → γ_sf = π R k_B ⟨1/Γ_Q⟩ (three components, (π/3) k_B²/Γ each); for the zone
    # boundary ⟨1/Γ⟩ from the Bessel form (A&S 9.6.19)
    p = {"chi_uniform": col(1e-3, 2e-3), "theta_sf": col(30.0, 10.0), "xi_par": col(8.0, 30.0),
         "xi_perp": col(2.0, 0.0), "gamma0": col(1.2, 4.0), "g": col(2.1, 2.0),
         "q0": col(0.4, 0.9)}
    T = np.array([1e-3])
    for fam in (ParamagnonFamily(lattice=LATTICE), ParamagnonFamily(lattice=LATTICE,
                center="zone_centre"), IncommensurateParamagnonFamily(lattice=LATTICE)):
        np.testing.assert_allclose(fam.heat_capacity(p, T) / T, fam.low_temperature_gamma(p),
                                   rtol=2e-4)
    bessel = pz.spin_fluctuation_gamma(p["gamma0"], p["xi_par"], p["xi_perp"], *LATTICE)
    np.testing.assert_allclose(ParamagnonFamily(lattice=LATTICE).low_temperature_gamma(p),
                               bessel, rtol=2e-5)
