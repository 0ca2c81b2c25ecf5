"""The gapped chain (Delta > 1): principal and pi-shifted two-spinon sheets against exact
diagonalisation of a 16-site ring written here, and their limits.

Ring: H = sum_j [S^x_j S^x_{j+1} + S^y_j S^y_{j+1} + Delta S^z_j S^z_{j+1}] (J = 1), periodic.
Lanczos (scipy.sparse.linalg.eigsh) gives the two lowest states of the S^z = 0 block: the
ground state and its quasi-degenerate partner (momentum pi; the two combine into the two
Néel vacua of the infinite chain).  The static structure factor of the inelastic spectrum is
S(q) = (1/L)[2 |S^x_q|0>|^2 + |S^z_q|0>|^2] minus the weight into the partner (the Bragg
peak of the Néel order at q = pi, which the model does not describe).
"""
from __future__ import annotations

import functools

import numpy as np
import pytest
from scipy import sparse
from scipy.sparse import linalg as sparse_linalg

from evidence1d.physics import chain

L_RING = 16


@functools.lru_cache(maxsize=None)
def _inelastic_structure_factor(L, delta):
    """q = 2 pi m / L (m = 0..L/2) and the inelastic S(q) of the ring (three components)."""
    n = 1 << L
    b = np.arange(n, dtype=np.int64)
    bits = ((b[:, None] >> np.arange(L)) & 1).astype(np.int8)
    s = bits - 0.5
    diag = delta * np.sum(s * np.roll(s, -1, axis=1), axis=1)
    rows, cols, vals = [b], [b], [diag]
    for j in range(L):
        k = (j + 1) % L
        src = b[bits[:, j] != bits[:, k]]
        rows.append(src ^ ((1 << j) | (1 << k)))
        cols.append(src)
        vals.append(np.full(src.size, 0.5))
    H = sparse.csr_matrix((np.concatenate(vals), (np.concatenate(rows), np.concatenate(cols))),
                          shape=(n, n))
    sector = np.flatnonzero(bits.sum(axis=1) == L // 2)
    w, v = sparse_linalg.eigsh(H[sector][:, sector], k=2, which="SA", tol=1e-12,
                               v0=np.cos(np.arange(sector.size)))
    v = v[:, np.argsort(w)]
    psi, partner = np.zeros(n), np.zeros(n)
    psi[sector], partner[sector] = v[:, 0], v[:, 1]
    q = 2 * np.pi * np.arange(L // 2 + 1) / L
    S = np.zeros(q.size)
    for m, qm in enumerate(q):
        ph = np.exp(-1j * qm * np.arange(L))
        z = (s @ ph) * psi
        x = np.zeros(n, complex)
        for j in range(L):
            x[b ^ (1 << j)] += 0.5 * ph[j] * psi
        bragg = abs(np.vdot(partner, z)) ** 2
        S[m] = (2 * np.vdot(x, x).real + np.vdot(z, z).real - bragg) / L
    return q, S


@pytest.mark.parametrize("delta", [2.0, 3.0])
def test_static_structure_factor_against_ring(delta):
    # before the pi-shifted sheet the model had no weight below q_kappa (0.60 at Delta = 2,
    # 0.91 at Delta = 3) where the ring has S(q) ~ 0.1-0.3.  Measured ratios model/ring at
    # L = 16, q = 0, pi/8, ..., pi:
    #   Delta = 2: 1.51 1.23 1.09 1.02 0.98 0.96 0.95 0.98 1.18
    #   Delta = 3: 1.18 1.17 1.12 1.03 0.99 0.97 1.01 1.07 1.13
    # The ring's S(q) at q -> 0 still grows with L at Delta = 2 (0.076, 0.083, 0.088 for
    # L = 12, 14, 16), so the q = 0 ratio overstates the model's excess; the ~15 % excess at
    # q = 0 and pi is the Müller shape's (too much weight at the lower edge of a gapped
    # continuum), common to both sheets.
    q, S_ring = _inelastic_structure_factor(L_RING, delta)
    J, D = np.array([[1.0]]), np.array([[delta]])
    sheets = chain.two_spinon_sheets(q, J, D)
    ratio = sheets["weight"][0] / S_ring
    assert np.all((ratio[1:] > 0.9) & (ratio[1:] < 1.25)), ratio
    assert 0.9 < ratio[0] < 1.6, ratio
    # below q_kappa the weight is the shifted sheet's and the bottom line's
    kp = chain._ising_parameters(D)[2][0, 0]
    below = q < np.arccos((1 - kp) / (1 + kp))
    assert np.all(sheets["A"][0, below] == 0) and np.all(sheets["A_shifted"][0, below] > 0)


def test_sheets_carry_the_exact_first_moment_and_vanish_at_the_isotropic_point():
    q = np.linspace(0.0, np.pi, 41)
    J = np.array([[1.3]])
    for delta in (1.5, 2.0, 3.0, 8.0):
        D = np.array([[delta]])
        m_p, m_s = chain.sheet_moments(q, J, D)
        # Hohenberg & Brinkman (1974) moment, computed again from the components
        m_xx, m_zz = chain.first_moment_components(q, J, D)
        np.testing.assert_allclose(m_p + m_s, 2 * m_xx + m_zz, rtol=1e-12)
        assert np.all(m_s >= 0) and m_s[0, -1] == pytest.approx(0.0, abs=1e-12)
    # the pi-shifted weight vanishes as (Delta - 1)^2 (C_xx - C_zz is O(Delta - 1))
    small = [chain.sheet_moments(np.array([0.0]), J, np.array([[1 + e]]))[1][0, 0]
             for e in (1e-2, 2e-2)]
    assert small[1] / small[0] == pytest.approx(4.0, rel=0.05)


def test_ising_limit_is_flat():
    # Delta -> infinity: a flipped spin (two domain walls) costs J Delta whatever q, so the
    # transverse S^xx = S^yy -> 1/4 and S^zz -> 0 inelastic: S(q) -> 1/2 at every q
    # (perturbation theory in 1/Delta; analytic)
    q = np.linspace(0.05, np.pi - 0.05, 25)
    W = chain.two_spinon_sheets(q, np.array([[1.0]]), np.array([[200.0]]))["weight"][0]
    np.testing.assert_allclose(W, 0.5, rtol=0.03)


def test_continuous_in_q_and_through_the_isotropic_point():
    # no step where the principal sheet opens (q_kappa) or the shifted one closes (pi/2)
    q = np.linspace(1e-3, np.pi - 0.2, 4001)
    for delta in (1.2, 2.0, 3.0):
        D = np.array([[delta]])
        kp = chain._ising_parameters(D)[2][0, 0]
        for qc in (np.arccos((1 - kp) / (1 + kp)), np.pi / 2):
            W = chain.two_spinon_sheets(qc + np.array([-1e-7, 1e-7]), np.array([[1.0]]),
                                        D)["weight"][0]
            assert W[1] == pytest.approx(W[0], rel=1e-4), (delta, qc)
    W = [chain.two_spinon_sheets(q, np.array([[1.0]]), np.array([[d]]))["weight"][0]
         for d in (1.0, 1.0 + 1e-6)]
    np.testing.assert_allclose(W[1], W[0], atol=1e-4)


def _default_model_structure_factor(q, delta):
    """∫ S(q, ω) dω of the spinon family's default line shape (the exact Δ = 1 profile between
    the XXZ edges, both sheets) by adaptive quadrature, plus the line at the continuum
    bottom below q_κ (per spin, three components, T = 0)."""
    import warnings
    from scipy import integrate
    from evidence1d.physics import chain_spectrum as cs
    J, D = np.array([[1.0]]), np.array([[delta]])
    sh = chain.two_spinon_sheets(q, J, D)
    out = np.array(sh["line_weight"][0], dtype=float)
    warnings.simplefilter("ignore", integrate.IntegrationWarning)   # the lower-edge singularity
    for i, qi in enumerate(q):
        f = lambda w: float(cs.spinon_density(np.array([qi]), np.array([w]), 0.0, J, D)[0, 0])
        edges = sorted({float(sh["lower"][0, i]), float(sh["top"][0, i]), float(sh["b"][0, i])})
        hi = max(edges) * 1.001
        out[i] += integrate.quad(f, 0.0, hi, points=[e for e in edges if 0 < e < hi],
                                 limit=400)[0]
    return out


@pytest.mark.xfail(strict=True, reason="open: for Δ > 1 the default line shape (the exact "
                   "Δ = 1 profile between gapped edges) puts too much weight at the lower edge")
@pytest.mark.parametrize("delta", [2.0, 3.0])
def test_default_line_shape_static_structure_factor_within_ten_percent(delta):
    # The default line shape's S(q) against the 16-site ring (q = pi/8 ... pi; q = 0 left
    # out, the ring's S(0) is not converged in L).  Measured ratios (2026-12-04):
    #   Delta = 2: 1.33 1.12 1.04 1.01 1.01 1.05 1.15 1.49
    #   Delta = 3: 1.29 1.16 1.05 1.01 1.01 1.10 1.21 1.32
    # The target of 10 % (exact two-spinon theory of the massive regime) is not met at the
    # zone ends; the test turns into a failure (strict xfail) once it is.
    q, S_ring = _inelastic_structure_factor(L_RING, delta)
    ratio = _default_model_structure_factor(q[1:], delta) / S_ring[1:]
    assert np.all(np.abs(ratio - 1.0) < 0.10), ratio
