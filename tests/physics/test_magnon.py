"""Tests of the linear spin-wave kernels of coupled chains (geometry, gradient, weights,
Schulz's T_N)."""
from __future__ import annotations

import numpy as np
import pytest
import scipy.linalg
from hypothesis import given, settings, strategies as st

from evidence1d.errors import InputError
from evidence1d.physics import magnon
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


def test_interchain_geometries_and_triangular_rejected():
    # z_perp = 2: J(Q) = 2J cos q + 2J_perp cos q_a (chains in planes); the gap is
    # S (2J + 2J_perp) sqrt(Δ² − 1) (White 2007, Ch. 6, with J_0 = Σ_j J_j); q_b is ignored.
    J, Jp, D, S = col(3.0), col(0.4), col(1.2), 0.5
    q = np.array([0.3, 1.1, np.pi])
    for qb in (0.0, 2.0):
        jq = magnon.exchange_sum(q, q + 0.2, q * 0 + qb, J, Jp, z_perp=2)
        np.testing.assert_allclose(jq, 2 * 3.0 * np.cos(q) + 2 * 0.4 * np.cos(q + 0.2)
                                   [None, :], rtol=1e-14)
    np.testing.assert_allclose(magnon.spin_wave_gap(J, Jp, D, S, 2),
                               S * (6.0 + 0.8) * np.sqrt(1.2 ** 2 - 1), rtol=1e-14)
    w = magnon.dispersion(np.array([np.pi]), np.array([np.pi]), np.array([0.7]), J, Jp, D,
                          S, 2)
    np.testing.assert_allclose(w, magnon.spin_wave_gap(J, Jp, D, S, 2), rtol=1e-12)
    assert magnon.check_interchain(4) == 4 and magnon.check_interchain(2) == 2
    with pytest.raises(InputError, match="frustrated"):
        magnon.check_interchain(6)
    for bad in (3, "4", True, None):
        with pytest.raises(InputError):
            magnon.check_interchain(bad)


@pytest.mark.parametrize("z_perp", [4, 2])
def test_dispersion_gradient_against_finite_differences(z_perp):
    # Analytic ∂ω/∂q_i against central differences of magnon.dispersion (step 1e-6,
    # truncation error ~1e-12 relative) at generic points and near a Goldstone point.
    rng = np.random.default_rng(5)
    q = [rng.uniform(0, 2 * np.pi, 30) for _ in range(3)]
    q[0][:3] = np.pi + np.array([1e-3, -2e-3, 5e-3])
    J, Jp, D, S = col(4.0, 1.0), col(0.3, 0.8), col(1.0, 1.3), 0.5
    omega, *grad = magnon.dispersion_gradient(*q, J, Jp, D, S, z_perp)
    np.testing.assert_allclose(omega, magnon.dispersion(*q, J, Jp, D, S, z_perp), rtol=1e-14)
    h = 1e-6
    for i in range(3):
        up = [qq.copy() for qq in q]
        dn = [qq.copy() for qq in q]
        up[i] += h
        dn[i] -= h
        fd = (magnon.dispersion(*up, J, Jp, D, S, z_perp)
              - magnon.dispersion(*dn, J, Jp, D, S, z_perp)) / (2 * h)
        np.testing.assert_allclose(grad[i], fd, rtol=1e-6, atol=1e-8)
    if z_perp == 2:
        assert np.all(grad[2] == 0)


def test_schulz_relation_scales_with_z_perp_J_perp():
    # The random-phase criterion z_perp J_perp χ_s(T_N) = 1 behind Schulz's relation
    # (Schulz, PRL 77, 2790 (1996)) depends on z_perp J_perp only: two chains at 2 J_perp
    # order where four at J_perp do.
    J, Jp = col(5.0, 1.0), col(0.1, 0.02)
    np.testing.assert_allclose(magnon.neel_temperature(J, 2 * Jp, 2),
                               magnon.neel_temperature(J, Jp, 4), rtol=1e-14)
    TN = magnon.neel_temperature(J, Jp, 2)
    np.testing.assert_allclose(magnon.schulz_interchain_coupling(TN, J, 2), Jp, rtol=1e-10)
