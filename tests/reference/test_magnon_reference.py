"""Spin-wave and paramagnon kernels against published values and reference libraries."""
from __future__ import annotations

import numpy as np
import scipy.constants as sc
from scipy import integrate, special

from evidence1d.physics import magnon, ordered_thermo as ot, paramagnon as pm
from evidence1d.physics import paramagnon_zone as pz


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def test_zero_point_reduction_simple_cubic():
    # Sublattice magnetisation of the S = 1/2 simple-cubic Heisenberg antiferromagnet in
    # linear spin-wave theory: S − 0.078 (P. W. Anderson, Phys. Rev. 86, 694 (1952); value
    # from memory).  Our J = J_perp lattice is simple cubic; the zone average of the T = 0
    # transverse weight (S/2)(A − B)/ω is (S/2)(1 + 2 δS).
    n = 48
    g = (np.arange(n) + 0.5) / n * 2 * np.pi
    qq = np.stack(np.meshgrid(g, g, g), -1).reshape(-1, 3).T
    w = magnon.one_magnon_weight(*qq, col(1.0), col(1.0), col(1.0), 0.5)
    dS = (w.mean() / 0.25 - 1.0) / 2.0
    assert abs(dS - 0.078) < 0.002


def test_zero_point_reduction_chain_diverges_logarithmically():
    # In 1D the spin-wave zero-point deviation diverges (Anderson 1952; no long-range
    # order, Mermin & Wagner, PRL 17, 1133 (1966)): <A/ω> grows like ln of the cutoff.
    q = np.linspace(1e-3, np.pi - 1e-3, 200001)
    z = np.zeros_like(q)
    w = magnon.one_magnon_weight(q, z, z, col(1.0), col(0.0), col(1.0), 0.5)[0]
    q2 = np.linspace(1e-5, np.pi - 1e-5, 2000001)
    w2 = magnon.one_magnon_weight(q2, q2 * 0, q2 * 0, col(1.0), col(0.0), col(1.0), 0.5)[0]
    # (S/2)(A − B)/ω = (S/2)(1 − cos q)/|sin q| ≈ (S/2)·2/|π − q| near q = π: the average
    # over [0, π] gains (S/2)(2/π) ln(10⁻³/10⁻⁵) when the cutoff shrinks 100-fold
    gain = np.trapezoid(w2, q2) / np.pi - np.trapezoid(w, q) / np.pi
    np.testing.assert_allclose(gain, 0.25 * (2 / np.pi) * np.log(100.0), rtol=2e-3)


def test_curie_constant_from_codata():
    # N_A g² μ_B² S(S+1) / (3 k_B) with CODATA constants (scipy.constants), in emu K/mol:
    # 0.375148 for S = 1/2, g = 2.
    muB_cgs = sc.physical_constants["Bohr magneton"][0] * 1e3
    kB_cgs = sc.k * 1e7
    ref = sc.N_A * 4 * muB_cgs ** 2 * 0.75 / (3 * kB_cgs)
    assert abs(ref - 0.375148) < 2e-6
    T = np.array([1e8])
    for d in ("powder", "z", "xy"):
        chi = ot.ordered_susceptibility(T, col(3.0), col(0.3), col(1.2), col(2.0), d)
        np.testing.assert_allclose(chi * T, ref, rtol=1e-6)
    # g = 2.1 scales as g²
    chi = ot.ordered_susceptibility(T, col(3.0), col(0.3), col(1.2), col(2.1))
    np.testing.assert_allclose(chi * T, ref * (2.1 / 2) ** 2, rtol=1e-6)


def test_schulz_relation_values():
    # H. J. Schulz, PRL 77, 2790 (1996): J_perp = T_N / (1.28 sqrt(ln(5.8 J / T_N))),
    # evaluated directly for T_N/J = 0.01 and 0.1.
    from evidence1d.units import K_B_MEV
    J = col(1.0, 1.0)
    x = col(0.01, 0.1)
    jp = x / (1.28 * np.sqrt(np.log(5.8 / x)))
    np.testing.assert_allclose(magnon.neel_temperature(J, jp) * K_B_MEV, x, rtol=1e-12)


def test_paramagnon_kramers_kronig_with_quad_on_family_kernel():
    # (2/π) ∫₀^∞ χ''(ω)/ω dω = χ_Q (Kramers–Kronig, Lovesey 1984, Ch. 4) for the χ_Q and Γ_Q
    # of a lattice point, integrated with scipy.integrate.quad.
    q = np.array([2.5])
    kappa = pm.oz_denominator(q, q * 0, q * 0, col(8.0), col(2.0), 3.0, 7.0, 7.5)
    kappa0 = pm.oz_denominator(0.0, 0.0, 0.0, col(8.0), col(2.0), 3.0, 7.0, 7.5)
    chi_q = pm.static_susceptibility(kappa, kappa0, col(0.4))[0, 0]
    gam = pm.relaxation_rate(kappa, col(1.3))[0, 0]
    val, _ = integrate.quad(lambda w: pm.chi_double_prime(w, chi_q, gam) / w, 0, np.inf)
    np.testing.assert_allclose(2 / np.pi * val, chi_q, rtol=1e-8)


def test_paramagnon_zone_average_1d_closed_form():
    # 1D: ⟨1/(1 + b sin²(q/2))⟩ = 1/sqrt(1 + b) (elementary integral).  2D (ξ_∥ = 0, equal
    # b along a and b), against the complete elliptic integral from scipy.special.ellipk:
    # ⟨1/(1 + b(sin² x + sin² y))⟩ = (2/π) K(k²) / (1 + b), k = b/(1 + b)
    # (lattice Green function of the square lattice; G. N. Watson, Q. J. Math. 10, 266
    # (1939), from memory).
    for b in (0.3, 4.0, 100.0):
        xi = 3.0 * np.sqrt(b) / 2.0
        got = pz.zone_average_inverse_rate(col(1.0), col(xi), col(0.0), 3.0, 7.0, 7.5)
        np.testing.assert_allclose(got, 1 / np.sqrt(1 + b), rtol=1e-8)
        xi_t = 7.0 * np.sqrt(b) / 2.0
        got = pz.zone_average_inverse_rate(col(1.0), col(0.0), col(xi_t), 3.0, 7.0, 7.0)
        k = b / (1 + b)
        np.testing.assert_allclose(got, 2 / np.pi * special.ellipk(k * k) / (1 + b),
                                   rtol=1e-6)
