"""The polarisation factor of the chain families against the neutron cross-section and
exact diagonalisation of rings (the ring helpers of test_spinon_moments, nothing from the
package's kernels).

The cross-section carries Σ_a (1 − Q̂_a²) S^aa (Squires, Introduction to the Theory of
Thermal Neutron Scattering, CUP 1978, Ch. 7); the first moments of the components are the
double-commutator sum rules (Hohenberg & Brinkman, Phys. Rev. B 10, 128 (1974)), measured
here on 12-site rings.
"""
from __future__ import annotations

import numpy as np
import pytest

from evidence1d.families.base import SpectralPoints
from evidence1d.families.coupled_chains import CoupledChainsFamily
from evidence1d.families.spinon import SpinonFamily
from evidence1d.physics.chain import longitudinal_share
from evidence1d.physics.neutron import uniaxial_polarisation

from test_spinon_moments import L_RING, ring_moments

D_SPACING = 3.0


def test_polarisation_factor_limits():
    # Squires (1978), Ch. 7: Σ_a (1 − Q̂_a²) S^aa with S^xx = S^yy
    f = np.linspace(0.0, 1.0, 11)[:, None]
    c2 = np.linspace(0.0, 1.0, 7)[None, :]
    P = uniaxial_polarisation(f, c2)
    # isotropic fluctuations: 2/3 whatever the direction of Q
    np.testing.assert_allclose(uniaxial_polarisation(1 / 3, c2), 2 / 3, rtol=1e-15)
    # Q along the axis: only the two transverse components, (1 − f); Q across it: the
    # longitudinal one and one transverse, f + (1 − f)/2
    np.testing.assert_allclose(P[:, -1], 1 - f[:, 0], rtol=0, atol=1e-15)
    np.testing.assert_allclose(P[:, 0], f[:, 0] + (1 - f[:, 0]) / 2, rtol=0, atol=1e-15)
    # the mean over directions (⟨c²⟩ = 1/3) is 2/3 for any share
    np.testing.assert_allclose(uniaxial_polarisation(f, 1 / 3), 2 / 3, rtol=1e-14)


def test_free_fermion_share():
    # Δ = 0: C_xx = −1/(2π), C_zz = −1/π² (free fermions); the moments give
    # f_zz = (1/π) / (1/π + 1/(2π) + 1/π²) for every q ≠ 0
    q = np.linspace(0.3, np.pi, 5)
    f = longitudinal_share(q, np.array([[1.0]]), np.array([[0.0]]))[0]
    want = (1 / np.pi) / (1 / np.pi + 1 / (2 * np.pi) + 1 / np.pi ** 2)
    np.testing.assert_allclose(f, want, rtol=1e-7)


def _components(fam, p, q, E, sigma):
    """S^zz and S^xx + S^yy at chain phase q from the family's polarised spectrum at two
    directions of Q (the factor is linear in c² = Q̂_z²: S = S_T (1 + c²)/2 + S_z (1 − c²))."""
    Qp = np.full(E.size, q / D_SPACING)
    vals = []
    for Qa in (0.0, 3.0 * abs(q / D_SPACING) + 0.4):
        pts = SpectralPoints(Q_par=Qp, Q_a=np.full(E.size, Qa), Q_b=np.zeros(E.size),
                             d=D_SPACING, a_perp=7.0, b_perp=7.5, energy=E,
                             sigma=np.full(E.size, sigma), temperature=0.0)
        vals.append((fam.spectrum(p, pts)[0], float(pts.axis_cos2("par")[0])))
    (s1, c1), (s2, c2) = vals
    b = (s1 - s2) / (c1 - c2)
    a = s1 - c1 * b
    S_T = a + b
    return a - S_T / 2, S_T


@pytest.mark.parametrize("delta", [0.5, 1.0, 2.0, 3.0])
def test_component_first_moments_against_ring(delta):
    # the polarised spectrum of the spinon family splits into S^zz and S^xx + S^yy whose
    # first moments are the ring's (12 sites; finite-size tolerance 0.03 J as for the total
    # moments in test_spinon_moments).  For Δ < 1 the model leaves out the transverse part
    # β(1 + cos q) (four spinons and more; chain_ground_state.sheet_moments), so only S^zz
    # is compared there.  Measured: at most 0.026 J off (S^zz at q = π, Δ = 2: the ring's
    # finite size); equal shares of 1/3 would be 0.04-0.6 J off at Δ = 0.5-3
    q_ring, _, _, mxx, mzz = ring_moments(L_RING, delta)
    J = 1.0
    p = {"J": np.array([[J]]), "delta": np.array([[delta]]), "g": np.array([[2.0]])}
    fam = SpinonFamily()
    E = np.linspace(-1.0, 9.0, 20001)
    for m in (2, 4, 6, 9):                        # q = π/3, 2π/3, π, 3π/2 on the ring
        S_z, S_T = _components(fam, p, q_ring[m], E, 0.04)
        assert np.trapezoid(E * S_z, E) == pytest.approx(mzz[m], abs=0.03)
        if delta >= 1.0:
            assert np.trapezoid(E * S_T, E) == pytest.approx(2 * mxx[m], abs=0.03)
        assert np.all(S_z > -1e-9) and np.all(S_T > -1e-9)


@pytest.mark.parametrize("fam_cls", [SpinonFamily, CoupledChainsFamily])
def test_isotropic_chain_is_two_thirds_of_the_summed_components(fam_cls):
    # Δ = 1: S^xx = S^yy = S^zz, so the cross-section is (2/3) Σ_a S^aa at every Q̂
    # (rotation invariance; Squires 1978, Ch. 7), whatever the anisotropy axis option; to
    # 1e-9, the accuracy of the tabulated correlators C_xx = C_zz at Δ = 1
    rng = np.random.default_rng(3)
    n = 30
    pts = SpectralPoints(Q_par=rng.uniform(-2, 2, n), Q_a=rng.uniform(-2, 2, n),
                         Q_b=rng.uniform(-2, 2, n), d=D_SPACING, a_perp=7.0, b_perp=7.5,
                         energy=rng.uniform(0.2, 3.0, n), sigma=np.full(n, 0.05),
                         temperature=1.5)
    p = {"J": np.array([[1.0], [2.0]]), "delta": np.array([[1.0], [1.0]]),
         "J_perp": np.array([[0.05], [0.1]]), "g": np.array([[2.0], [2.0]])}
    for axis in ("par", "a", "b"):
        fam = fam_cls(anisotropy_axis=axis)
        np.testing.assert_allclose(fam.spectrum(p, pts), 2 / 3 * fam.unpolarised_spectrum(p, pts),
                                   rtol=1e-9)


def test_anisotropy_axis_option_is_checked():
    from evidence1d.errors import InputError
    with pytest.raises(InputError, match="anisotropy_axis.*par.*got 'z'"):
        SpinonFamily(anisotropy_axis="z")
