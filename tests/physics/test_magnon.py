"""Tests of the coupled-chain spin-wave kernels and the gapped spin-wave family."""
from __future__ import annotations

import pickle

import numpy as np
import pytest
import scipy.linalg
from hypothesis import given, settings, strategies as st

from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.families.spin_wave import SpinWaveFamily
from evidence1d.physics import magnon, neutron
from evidence1d.units import K_B_MEV


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def test_one_dimensional_limit_is_2JS_sin_q():
    # Analytic: linear spin-wave theory of the Heisenberg chain gives ω = 2JS|sin q|
    # (P. W. Anderson, Phys. Rev. 86, 694 (1952)).
    q = np.linspace(-4.0, 4.0, 81)
    z = np.zeros_like(q)
    for S in (0.5, 1.0, 2.5):
        w = magnon.dispersion(q, z, z, col(3.0), col(0.0), col(1.0), S)
        expect = np.maximum(2 * 3.0 * S * np.abs(np.sin(q)), magnon.OMEGA_FLOOR * 6.0 * S)
        np.testing.assert_allclose(w[0], expect, rtol=1e-12, atol=1e-12)


def test_gap_at_ordering_vector_and_zone_centre():
    # Closed form S J_0 sqrt(Δ² − 1) (R. M. White, Quantum Theory of Magnetism, 2007, Ch. 6).
    J, Jp, D, S = col(4.0, 1.0), col(0.3, 0.05), col(1.1, 1.3), 0.5
    gap = magnon.spin_wave_gap(J, Jp, D, S)
    expect = S * (2 * J + 4 * Jp) * np.sqrt(D ** 2 - 1)
    np.testing.assert_allclose(gap, expect, rtol=1e-14)
    for q in (0.0, np.pi):
        w = magnon.dispersion(np.array([q]), np.array([q]), np.array([q]), J, Jp, D, S)
        np.testing.assert_allclose(w, expect, rtol=1e-12)
    # and it is the minimum over a grid of the zone
    g = np.linspace(0, 2 * np.pi, 17)
    qq = np.stack(np.meshgrid(g, g, g), -1).reshape(-1, 3).T
    w = magnon.dispersion(*qq, J, Jp, D, S)
    assert np.all(w.min(axis=1, keepdims=True) >= expect * (1 - 1e-12))


def test_spin_wave_velocity_matches_dispersion_slope():
    # Long-wavelength expansion of ω near the ordering vector (White 2007, Ch. 6):
    # ω ≈ S sqrt(2 J J_0) |δq| along the chain, S sqrt(2 J_perp J_0) |δq_a| across.
    J, Jp, S = col(5.0), col(0.4), 1.0
    vp, va, vb = magnon.spin_wave_velocities(J, Jp, S)
    h = 1e-5
    pi = np.array([np.pi])
    w_par = magnon.dispersion(pi + h, pi, pi, J, Jp, col(1.0), S) / h
    w_a = magnon.dispersion(pi, pi + h, pi, J, Jp, col(1.0), S) / h
    np.testing.assert_allclose(w_par, vp, rtol=1e-6)
    np.testing.assert_allclose(w_a, va, rtol=1e-6)
    np.testing.assert_allclose(magnon.spin_wave_velocities(col(2.0), col(0.0), 0.5)[0],
                               2 * 2.0 * 0.5, rtol=1e-14)   # 1D: v = 2JS (Anderson 1952)


def _colpa_weight(A, B, S):
    """T = 0 weight of (S/2)^{1/2}(a + a† + b + b†)/sqrt(2) from a numerical paraunitary
    (Colpa) diagonalisation of H = A(a†a + b†b) + B(ab + a†b†) — independent of the closed
    form (J. H. P. Colpa, Physica A 93, 327 (1978))."""
    # basis (a, b†): the 2x2 bosonic Bogoliubov problem for the pair (a_k, b_{-k}).
    M = np.array([[A, B], [B, A]])
    eta = np.diag([1.0, -1.0])
    K = scipy.linalg.cholesky(M)                      # M = K† K
    ev, U = np.linalg.eigh(K @ eta @ K.conj().T)
    order = np.argsort(ev)[::-1]
    ev, U = ev[order], U[:, order]
    E = eta * ev                                      # (ω, -ω) → diag(ω, ω)
    # transformation: (a, b†)ᵀ = T (α, β†)ᵀ with T = K⁻¹ U sqrt(|ev|) (Colpa 1978, Eq. 3.9)
    T = np.linalg.solve(K, U) @ np.diag(np.sqrt(np.abs(ev)))
    omega = abs(ev[0])
    # X = a + b† (+ h.c.): amplitude to create the α quantum, <α|X|0>
    # a = T00 α + T01 β†, b† = T10 α + T11 β†; a + b† creates α† via the conjugates:
    # a† + b = T00* α† + T10* α† + ...; one-magnon matrix element of (a+a†+b+b†)
    amp_alpha = T[0, 0] + T[1, 0]          # coefficient of α† in a† + b
    amp_beta = T[0, 1] + T[1, 1]           # coefficient of β† in a + b†
    weight = 0.5 * S * 0.5 * (abs(amp_alpha) ** 2 + abs(amp_beta) ** 2)
    return omega, weight, E


@pytest.mark.parametrize("q", [0.3, 1.2, 2.0, 2.9])
def test_weight_against_numerical_bogoliubov(q):
    # Closed form (S/2)(A - B)/ω against Colpa's numerical diagonalisation (Colpa 1978).
    J, Jp, D, S = 3.0, 0.2, 1.05, 0.5
    A = S * D * (2 * J + 4 * Jp)
    B = S * (2 * J * np.cos(q) + 2 * Jp * (np.cos(0.7) + np.cos(1.9)))
    omega, weight, _ = _colpa_weight(A, B, S)
    qv = [np.array([q]), np.array([0.7]), np.array([1.9])]
    np.testing.assert_allclose(magnon.dispersion(*qv, col(J), col(Jp), col(D), S)[0, 0],
                               omega, rtol=1e-10)
    np.testing.assert_allclose(magnon.one_magnon_weight(*qv, col(J), col(Jp), col(D), S)
                               [0, 0], weight, rtol=1e-10)


def test_schulz_round_trip_and_published_form():
    # H. J. Schulz, PRL 77, 2790 (1996): J_perp = T_N / (1.28 sqrt(ln(5.8 J / T_N))).
    J = col(10.0, 1.0, 0.2, 7.0)
    TN = col(5.0, 0.3, 1e-3, 40.0)                     # K
    Jp = magnon.schulz_interchain_coupling(TN, J)
    t = K_B_MEV * TN
    np.testing.assert_allclose(Jp, t / (1.28 * np.sqrt(np.log(5.8 * J / t))), rtol=1e-14)
    np.testing.assert_allclose(magnon.neel_temperature(J, Jp), TN, rtol=1e-10)
    # J_perp -> 0 continuously gives T_N -> 0
    tn = magnon.neel_temperature(col(5.0, 5.0, 5.0), col(0.0, 1e-300, 1e-30))
    assert tn[0, 0] == 0.0 and 0 < tn[1, 0] < tn[2, 0] < 1e-26
    np.testing.assert_allclose(magnon.schulz_interchain_coupling(tn[1:], col(5.0, 5.0)),
                               col(1e-300, 1e-30), rtol=1e-10)


def _points(n=40, T=5.0, sigma=0.05, q_a=np.pi, q_b=np.pi):
    q = np.linspace(0.1, 3.0, n)
    E = np.linspace(-6.0, 12.0, n)
    return SpectralPoints(Q_par=q / 3.0, Q_a=np.full(n, q_a / 7.0), Q_b=np.full(n, q_b / 7.5),
                          d=3.0, a_perp=7.0, b_perp=7.5, energy=E,
                          sigma=np.full(n, sigma), temperature=T)


def test_detailed_balance_of_mode_areas():
    # S(Q, −ω)/S(Q, ω) = exp(−ω/k_BT) for the integrated mode areas (Lovesey 1984, Ch. 4).
    J, Jp, D, S, T = col(2.0), col(0.2), col(1.05), 0.5, 8.0
    q = np.array([1.1])
    w = magnon.dispersion(q, q, q, J, Jp, D, S)[0, 0]
    E = np.linspace(-w - 1.0, w + 1.0, 40001)
    dE = E[1] - E[0]
    one = np.ones_like(E)
    s = magnon.transverse_spectrum(q * one, q * one, q * one, E, 0.02 * one, T, J, Jp, D, S)
    loss, gain = s[0, E > 0].sum() * dE, s[0, E < 0].sum() * dE
    np.testing.assert_allclose(gain / loss, np.exp(-w / (K_B_MEV * T)), rtol=1e-6)
    w0 = magnon.one_magnon_weight(q, q, q, J, Jp, D, S)[0, 0]
    n = 1.0 / np.expm1(w / (K_B_MEV * T))
    np.testing.assert_allclose(loss, w0 * (n + 1), rtol=1e-6)   # Bose factor on the area


def test_family_shapes_batch_equals_loop_and_pickle():
    fam = SpinWaveFamily(spin=0.5)
    pts = _points()
    p = {"J": col(2.0, 5.0, 0.5), "J_perp": col(0.0, 0.3, 0.05), "delta": col(1.0, 1.2, 1.05),
         "damping": col(0.0, 0.1, 0.0), "g": col(2.0, 2.1, 2.2)}
    T = np.array([0.0, 0.5, 2.0, 10.0, 50.0, 300.0])
    out = {"spectrum": fam.spectrum(p, pts), "chi": fam.susceptibility(p, T, "powder"),
           "C": fam.heat_capacity(p, T), "S": fam.entropy(p, T)}
    assert out["spectrum"].shape == (3, 40)
    for k in ("chi", "C", "S"):
        assert out[k].shape == (3, 6) and np.all(np.isfinite(out[k]))
    for i in range(3):
        pi = {k: v[i:i + 1] for k, v in p.items()}
        np.testing.assert_allclose(fam.spectrum(pi, pts), out["spectrum"][i:i + 1], rtol=1e-12)
        np.testing.assert_allclose(fam.heat_capacity(pi, T), out["C"][i:i + 1], rtol=1e-12)
        np.testing.assert_allclose(fam.susceptibility(pi, T), out["chi"][i:i + 1],
                                   rtol=1e-12)
    fam2 = pickle.loads(pickle.dumps(SpinWaveFamily(spin=1.0, moment_axis="a")))
    assert fam2.spin == 1.0 and fam2.moment_axis == "a"
    np.testing.assert_allclose(fam2.spectrum(p, pts),
                               SpinWaveFamily(1.0, "a").spectrum(p, pts))


def test_polarisation_factor_and_bad_options():
    # Unpolarised cross-section weights the transverse modes by (1 + Q̂_z²) (G. L. Squires,
    # Introduction to the Theory of Thermal Neutron Scattering, 1978, Ch. 7).
    pts = _points(q_a=0.0, q_b=0.0)
    p = {"J": col(2.0), "J_perp": col(0.1), "delta": col(1.1), "damping": col(0.0)}
    along = SpinWaveFamily(0.5, "par").spectrum(p, pts)             # Q ∥ moment: 1 + 1
    across = SpinWaveFamily(0.5, "a").spectrum(p, pts)              # Q ⊥ moment: 1 + 0
    mean = SpinWaveFamily(0.5).spectrum(p, pts)                     # averaged: 1 + 1/3
    assert np.max(mean) > 0
    np.testing.assert_allclose(along, 1.5 * mean, rtol=1e-12, atol=0)
    np.testing.assert_allclose(across, 0.75 * mean, rtol=1e-12, atol=0)
    with pytest.raises(InputError):
        SpinWaveFamily(0.5, moment_axis="c")
    with pytest.raises(InputError):
        SpinWaveFamily(0.5).susceptibility(p, np.array([1.0]), "diagonal")


def test_damping_conserves_area():
    # A Voigt profile has unit area (Abramowitz & Stegun 1964, 7.4.13): damping moves no
    # weight.
    E = np.linspace(-60, 60, 120001)
    one = np.ones_like(E)
    args = (1.0 * one, np.pi * one, np.pi * one, E, 0.05 * one, 4.0, col(2.0), col(0.2),
            col(1.1), 0.5)
    a0 = magnon.transverse_spectrum(*args).sum() * (E[1] - E[0])
    a1 = magnon.transverse_spectrum(*args, damping=col(0.05)).sum() * (E[1] - E[0])
    np.testing.assert_allclose(a1, a0, rtol=2e-3)


@settings(max_examples=40, deadline=None)
@given(J=st.floats(0.1, 20.0), ratio=st.sampled_from([0.0, 1e-12, 1e-4]) | st.floats(0, 20.0),
       delta=st.floats(1.0, 1.5), T=st.sampled_from([0.0, 1e-6]) | st.floats(0.01, 300.0),
       damping=st.sampled_from([0.0, 0.01, 1.0]))
def test_finite_everywhere_in_prior_support(J, ratio, delta, T, damping):
    fam = SpinWaveFamily(0.5, moment_axis="b")
    p = {"J": col(J), "J_perp": col(ratio * J), "delta": col(delta),
         "damping": col(damping), "g": col(2.0)}
    n = 30
    E = np.linspace(-50, 50, n)                     # includes |E| >> k_B T
    pts = SpectralPoints(Q_par=np.linspace(0, 2.1, n), Q_a=np.full(n, np.pi / 7),
                         Q_b=np.zeros(n), d=3.0, a_perp=7.0, b_perp=7.5, energy=E,
                         sigma=np.full(n, 0.05), temperature=T)
    Ts = np.array([0.0, 1e-3, T, 1e4])
    for arr in (fam.spectrum(p, pts), fam.susceptibility(p, Ts, "z"),
                fam.susceptibility(p, Ts, "xy"), fam.heat_capacity(p, Ts), fam.entropy(p, Ts)):
        assert np.all(np.isfinite(arr))


def test_family_thermodynamics_table_and_direct_agree():
    # The family's default (table) thermodynamics equals its reference path (the direct zone
    # quadrature of evidence1d.physics.bose_thermo) at temperatures where that is converged.
    p = {"J": col(2.0, 6.0), "J_perp": col(0.0, 0.4), "delta": col(1.05, 1.3),
         "damping": col(0.0, 0.0), "g": col(2.0, 2.1)}
    T = np.array([5.0, 20.0, 80.0, 300.0])
    fast, ref = SpinWaveFamily(0.5), SpinWaveFamily(0.5, thermo_method="direct")
    for name in ("heat_capacity", "entropy"):
        np.testing.assert_allclose(getattr(fast, name)(p, T), getattr(ref, name)(p, T),
                                   rtol=1e-3)
    np.testing.assert_allclose(fast.susceptibility(p, T, "z"), ref.susceptibility(p, T, "z"),
                               rtol=1e-3)
    with pytest.raises(InputError):
        SpinWaveFamily(0.5, thermo_method="spline")
