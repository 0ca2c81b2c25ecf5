"""Neutron factors shared by every model family.

Magnetic form factor, detailed balance, Gaussian energy resolution (sharp modes, Voigt
profiles and continua given by their cumulative weight), Gauss–Hermite nodes, powder
directions and the elastic line.  All functions are pure and broadcast numpy-style: a
parameter array of shape ``(n_sets, 1)`` against point arrays of shape ``(n,)`` gives
``(n_sets, n)``.

Units: energies in meV, temperatures in K, wavevectors in Å⁻¹, densities in 1/meV.

References
----------
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter*, Vol. 1 (Clarendon,
Oxford, 1984): fluctuation–dissipation theorem and detailed balance.
P. J. Brown, "Magnetic form factors", International Tables for Crystallography Vol. C,
Sect. 4.4.5 (Kluwer, 2004): dipole approximation and ⟨j_n⟩ coefficient tables, as carried
by the ``periodictable`` package.
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (Dover, 1964),
Sects. 25.4.46 (Gauss–Hermite) and 25.4.29 (Gauss–Legendre).
"""
from __future__ import annotations

import functools
import math

import numpy as np
from scipy import special

from ..errors import InputError
from ..gauss_rules import gauss_legendre
from ..units import K_B_MEV

__all__ = [
    "magnetic_form_factor", "bose_energy_factor", "boltzmann_ratio", "fwhm_to_sigma",
    "resolution_sigma", "gaussian", "convolve_modes", "gauss_hermite", "hermite_expansion_rule",
    "convolve_cumulative", "powder_directions", "elastic_line", "SIGMA_FLOOR",
    "FWHM_PER_SIGMA", "uniaxial_polarisation",
]

#: FWHM / σ of a Gaussian, 2 √(2 ln 2) = 2.35482...
FWHM_PER_SIGMA = 2.0 * math.sqrt(2.0 * math.log(2.0))
#: Smallest resolution standard deviation in meV (1e-6 meV = 1 neV); keeps every Gaussian
#: finite when a FWHM polynomial reaches zero or below.
SIGMA_FLOOR = 1e-6
_EXP_MAX = 700.0            # exp(700) ~ 1e304 is still a finite double
_SQRT_2PI = math.sqrt(2.0 * math.pi)


# ------------------------------------------------------------------- polarisation factor
def uniaxial_polarisation(f_zz, cos2) -> np.ndarray:
    """Polarisation factor of a uniaxial spin system, per unit of the summed components.

    For S^xx = S^yy (rotation symmetry about the anisotropy axis z) with
    S^zz = f_zz Σ_a S^aa and S^xx = S^yy = (1 − f_zz)/2 Σ_a S^aa, the unpolarised magnetic
    cross-section carries Σ_a (1 − Q̂_a²) S^aa (Squires 1978, Ch. 7; off-diagonal S^ab
    vanish by the same symmetry), so with c² = Q̂_z²

        Σ_a (1 − Q̂_a²) S^aa / Σ_a S^aa = f_zz (1 − c²) + (1 − f_zz)(1 + c²)/2
                                        = (1 + f_zz)/2 + c² (1 − 3 f_zz)/2.

    Isotropic fluctuations (f_zz = 1/3) give 2/3 at every Q̂, which is also the mean over
    directions (c² → 1/3) for any f_zz.

    Parameters
    ----------
    f_zz : array_like
        Share of the longitudinal component (0 to 1, dimensionless).
    cos2 : array_like
        Squared cosine between Q and the anisotropy axis (0 to 1).

    Returns
    -------
    ndarray
        The factor (dimensionless, between 0 and 1), broadcast over both arguments.

    References
    ----------
    G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering* (CUP, 1978),
    Ch. 7 (magnetic cross-section, polarisation factor δ_αβ − Q̂_α Q̂_β).
    """
    f = np.asarray(f_zz, dtype=float)
    return 0.5 * (1.0 + f) + np.asarray(cos2, dtype=float) * 0.5 * (1.0 - 3.0 * f)


# --------------------------------------------------------------------------- form factor
@functools.lru_cache(maxsize=None)
def _form_factor_tables(ion: str, charge: int):
    """Return the periodictable MagneticFormFactor object of an ion, or raise InputError."""
    import periodictable  # light, but keep the import local to the one function using it

    symbol = ion.strip()
    try:
        element = periodictable.elements.symbol(symbol[:1].upper() + symbol[1:].lower())
    except (ValueError, KeyError):
        raise InputError(f"unknown magnetic ion {ion!r}; expected an element symbol such "
                         f"as 'Cu', 'Ni' or 'Fe'") from None
    table = getattr(element, "magnetic_ff", None) or {}
    if charge not in table:
        known = ", ".join(f"{element.symbol}{c}+" for c in sorted(table)) or "none"
        raise InputError(f"no magnetic form factor for {element.symbol}{charge}+; "
                         f"tabulated charges for this element: {known}")
    return table[charge]


def magnetic_form_factor(Q, ion: str, charge: int, g=2.0) -> np.ndarray:
    """Magnetic form factor in the dipole approximation.

    F(Q) = ⟨j0⟩(Q) + (1 − 2/g) ⟨j2⟩(Q); the scattered intensity carries F².

    Parameters
    ----------
    Q : array_like
        Wavevector magnitude in Å⁻¹ (the sign is ignored).
    ion : str
        Element symbol, e.g. ``"Cu"`` (case-insensitive).
    charge : int
        Ionic charge, e.g. ``2`` for Cu²⁺.
    g : float or array_like, optional
        Landé g factor (dimensionless, > 0); broadcasts against ``Q``.

    Returns
    -------
    ndarray
        F(Q), dimensionless, F(0) = 1 (for g = 2).

    Raises
    ------
    InputError
        Unknown element or charge, missing ⟨j2⟩ table when g ≠ 2, or g not positive.

    References
    ----------
    P. J. Brown, International Tables for Crystallography Vol. C, Sect. 4.4.5 (2004),
    Eqs. 4.4.5.2–4.4.5.3 (analytic ⟨j_n⟩ approximations); coefficients taken from the
    ``periodictable`` package, not retyped.
    """
    if isinstance(charge, bool) or not isinstance(charge, (int, np.integer)):
        raise InputError(f"the ionic charge must be an integer; got {charge!r}")
    if not isinstance(ion, str):
        raise InputError(f"the magnetic ion must be an element symbol; got {ion!r}")
    ff = _form_factor_tables(ion, int(charge))
    Q = np.abs(np.asarray(Q, dtype=float))
    g = np.asarray(g, dtype=float)
    if not np.all(np.isfinite(g)) or np.any(g <= 0):
        raise InputError(f"the g factor must be positive and finite; got {g!r}")
    if getattr(ff, "j0", None) is None:
        raise InputError(f"no <j0> form factor table for {ion}{charge}+")
    result = ff.j0_Q(Q)
    c2 = 1.0 - 2.0 / g
    if np.any(c2 != 0.0):
        if getattr(ff, "j2", None) is None:
            raise InputError(f"no <j2> form factor table for {ion}{charge}+; use g = 2 "
                             f"or an ion with a tabulated <j2>")
        result = result + c2 * ff.j2_Q(Q)
    return np.asarray(result, dtype=float)


# ---------------------------------------------------------------------- detailed balance
def _reduced_energy(E, T):
    """Return (E, kT, x = E / kT) with x = ±inf at T = 0, 0 where E = 0; T < 0 rejected."""
    E = np.asarray(E, dtype=float)
    T = np.asarray(T, dtype=float)
    if np.any(T < 0) or np.any(np.isnan(T)):
        raise InputError(f"temperatures must be >= 0 K; got minimum {np.nanmin(T)!r}")
    kT = K_B_MEV * T
    positive = kT > 0
    with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
        x = np.where(positive, E / np.where(positive, kT, 1.0), np.sign(E) * np.inf)
    x = np.where(E == 0, 0.0, x)
    return E, kT, x


def bose_energy_factor(E, T) -> np.ndarray:
    """Energy times the Bose factor, E [n(E) + 1] = E / (1 − exp(−E / k_B T)).

    With it, S(Q, E) = χ''(Q, E) / E · bose_energy_factor(E, T) / π.

    Parameters
    ----------
    E : array_like
        Energy transfer in meV (positive: neutron energy loss).
    T : array_like
        Temperature in K (≥ 0); broadcasts against ``E``.

    Returns
    -------
    ndarray
        E / (1 − e^{−E/k_BT}) in meV: k_B T at E = 0, → E for E ≫ k_B T,
        → |E| e^{−|E|/k_BT} for E ≪ −k_B T, max(E, 0) at T = 0.  Never overflows.

    References
    ----------
    S. W. Lovesey, Theory of Neutron Scattering from Condensed Matter, Vol. 1 (1984),
    Ch. 4 (fluctuation–dissipation theorem).
    """
    E, kT, x = _reduced_energy(E, T)
    a = np.abs(x)
    small = a < 1e-8
    with np.errstate(invalid="ignore", divide="ignore"):
        # f(x) = x/(1-e^-x) = f(|x|) e^{min(x,0)}, and f(|x|) = |x| / (-expm1(-|x|))
        big = np.abs(E) / -np.expm1(-np.where(small, 1.0, a))
    series = kT * (1.0 + 0.5 * np.where(small, x, 0.0))   # x/(1-e^-x) = 1 + x/2 + ...
    return np.where(small, series, big * np.exp(np.minimum(x, 0.0)))


def boltzmann_ratio(E, T) -> np.ndarray:
    """Detailed-balance ratio exp(−E / k_B T) = S(Q, −E) / S(Q, E).

    Parameters
    ----------
    E : array_like
        Energy in meV.
    T : array_like
        Temperature in K (≥ 0).

    Returns
    -------
    ndarray
        exp(−E/k_BT), dimensionless; the exponent is capped at 700 so that large negative
        E/k_BT gives a large finite number, never inf; 1 at E = 0 for any T.

    References
    ----------
    S. W. Lovesey, Theory of Neutron Scattering from Condensed Matter, Vol. 1 (1984),
    Eq. 4.20 (detailed balance).
    """
    _, _, x = _reduced_energy(E, T)
    return np.exp(np.minimum(-x, _EXP_MAX))


# ---------------------------------------------------------------------------- resolution
def fwhm_to_sigma(fwhm) -> np.ndarray:
    """Gaussian standard deviation from the full width at half maximum.

    Parameters
    ----------
    fwhm : array_like
        FWHM in meV.

    Returns
    -------
    ndarray
        σ = FWHM / (2 √(2 ln 2)) in meV.

    References
    ----------
    Abramowitz & Stegun (1964), Sect. 26.2 (normal distribution).
    """
    return np.asarray(fwhm, dtype=float) / FWHM_PER_SIGMA


def resolution_sigma(E, fwhm_coeffs) -> np.ndarray:
    """Energy-resolution σ from a FWHM polynomial in energy transfer.

    FWHM(E) = c0 + c1 E + c2 E² + ..., floored at ``SIGMA_FLOOR`` after conversion.

    Parameters
    ----------
    E : array_like
        Energy transfer in meV.
    fwhm_coeffs : sequence of float
        c0 in meV, c1 in meV/meV, c2 in 1/meV, ... (at least one, all finite).

    Returns
    -------
    ndarray
        σ(E) in meV, same shape as ``E``, ≥ ``SIGMA_FLOOR``.

    Raises
    ------
    InputError
        Empty or non-finite coefficients.

    References
    ----------
    Common practice: the FWHM of a spectrometer's energy resolution is tabulated or fitted
    as a low-order polynomial in energy transfer.
    """
    coeffs = np.atleast_1d(np.asarray(fwhm_coeffs, dtype=float))
    if coeffs.ndim != 1 or coeffs.size == 0 or not np.all(np.isfinite(coeffs)):
        raise InputError(f"the resolution FWHM needs one or more finite coefficients "
                         f"(c0 [meV], c1, ...); got {fwhm_coeffs!r}")
    E = np.asarray(E, dtype=float)
    fwhm = np.polynomial.polynomial.polyval(E, coeffs)
    return np.maximum(fwhm_to_sigma(fwhm), SIGMA_FLOOR)


def gaussian(x, sigma) -> np.ndarray:
    """Normalised Gaussian density exp(−x²/2σ²) / (√(2π) σ).

    Parameters
    ----------
    x : array_like
        Energy offset in meV.
    sigma : array_like
        Standard deviation in meV (> 0).

    Returns
    -------
    ndarray
        Density in 1/meV.

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 26.2.1.
    """
    x = np.asarray(x, dtype=float)
    sigma = np.asarray(sigma, dtype=float)
    z = x / sigma
    return np.exp(-0.5 * z * z) / (_SQRT_2PI * sigma)


def elastic_line(E, sigma) -> np.ndarray:
    """Elastic (incoherent) line: a Gaussian at E = 0 with the resolution width.

    Parameters
    ----------
    E : array_like
        Energy transfer in meV.
    sigma : array_like
        Resolution standard deviation in meV.

    Returns
    -------
    ndarray
        Unit-area line in 1/meV.

    References
    ----------
    Common practice: the elastic line is the resolution function centred at E = 0.
    """
    return gaussian(E, sigma)


def convolve_modes(E, sigma, centers, weights, damping=None) -> np.ndarray:
    """Sharp or damped modes broadened by the Gaussian energy resolution.

    result(E) = Σ_modes w · V(E − ω; σ, γ), with V the Voigt profile (the Gaussian when
    ``damping`` is None).

    Parameters
    ----------
    E, sigma : ndarray, shape (n,)
        Energy transfer and resolution standard deviation in meV.
    centers : array_like
        Mode energies ω in meV (any sign), broadcastable to (n_sets, n) or, for several
        modes, (n_sets, n, n_modes).
    weights : array_like
        Mode weights (integrated intensity per mode), same broadcasting as ``centers``.
    damping : array_like, optional
        Lorentzian half width at half maximum γ in meV (≥ 0), same broadcasting.

    Returns
    -------
    ndarray, shape (n_sets, n)
        Broadened spectrum in units of weight/meV; the last axis is summed when the
        broadcast inputs are 3-D.

    References
    ----------
    Voigt profile as the convolution of Gaussian and Lorentzian: Abramowitz & Stegun
    (1964), Eq. 7.4.13; evaluated with scipy.special.voigt_profile.
    """
    E = np.asarray(E, dtype=float)
    sigma = np.asarray(sigma, dtype=float)
    centers = np.asarray(centers, dtype=float)
    weights = np.asarray(weights, dtype=float)
    parts = [centers, weights] + ([] if damping is None else [np.asarray(damping, float)])
    three_d = max(a.ndim for a in parts) >= 3
    if three_d:
        E, sigma = E[:, None], sigma[:, None]
    if damping is None:
        profile = gaussian(E - centers, sigma)
    else:
        gamma = np.maximum(np.asarray(damping, dtype=float), 0.0)
        profile = special.voigt_profile(E - centers, sigma, gamma)
    out = weights * profile
    return out.sum(axis=-1) if three_d else out


@functools.lru_cache(maxsize=32)
def _gauss_hermite_cached(n_nodes: int):
    x, w = np.polynomial.hermite_e.hermegauss(n_nodes)
    w = w / w.sum()
    x.setflags(write=False)
    w.setflags(write=False)
    return x, w


def gauss_hermite(n_nodes: int):
    """Gauss–Hermite nodes and weights for averaging over a unit Gaussian.

    ∫ f(E') G_σ(E − E') dE' ≈ Σ_i w_i f(E + σ x_i), exact for polynomials f of degree
    ≤ 2 n_nodes − 1.

    Parameters
    ----------
    n_nodes : int
        Number of nodes (≥ 1).

    Returns
    -------
    x : ndarray, shape (n_nodes,)
        Nodes in units of σ (roots of the probabilists' Hermite polynomial He_n).
    w : ndarray, shape (n_nodes,)
        Weights summing to 1.

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 25.4.46; numpy.polynomial.hermite_e.hermegauss.
    """
    if isinstance(n_nodes, bool) or not isinstance(n_nodes, (int, np.integer)) or n_nodes < 1:
        raise InputError(f"the number of Gauss-Hermite nodes must be a positive integer; "
                         f"got {n_nodes!r}")
    x, w = _gauss_hermite_cached(int(n_nodes))
    return x.copy(), w.copy()


@functools.lru_cache(maxsize=None)
def hermite_expansion_rule(n_nodes: int):
    """Gauss–Hermite rule with the matrix of the Hermite expansion at its nodes: a_k =
    Σ_j f(z_j) B_jk are the coefficients of the interpolant f ≈ Σ_{k<n} a_k He_k (discrete
    orthogonality of He_k under the n-node rule), so ∫_{−∞}^{b} φ f follows from ∫ φ He_k.

    Parameters
    ----------
    n_nodes : int
        Number of nodes n (≥ 1).

    Returns
    -------
    z, w, B : ndarray, shapes (n,), (n,), (n, n)
        Nodes (units of σ) and weights of :func:`gauss_hermite`, B_jk = w_j He_k(z_j)/k!
        (read-only).

    References
    ----------
    Abramowitz & Stegun (1964), Eqs. 22.2.15 (orthogonality of He_k) and 25.4.46.
    """
    z, w = gauss_hermite(n_nodes)
    he = np.polynomial.hermite_e.hermevander(z, n_nodes - 1)
    B = w[:, None] * he / np.cumprod(np.r_[1.0, np.arange(1.0, n_nodes)])
    for a in (z, w, B):
        a.setflags(write=False)
    return z, w, B


def convolve_cumulative(E, sigma, omega_nodes, W_nodes) -> np.ndarray:
    """Exact Gaussian convolution of a spectral density given by its cumulative weight.

    The cumulative weight W(ω) is tabulated on nodes ω_0 < ω_1 < ... < ω_{m−1} (last axis)
    and taken piecewise linear between them, so the density is ΔW_j/Δω_j on each interval
    and its Gaussian convolution is exact:

        result(E) = Σ_j (ΔW_j / Δω_j) [Φ((E − ω_j)/σ) − Φ((E − ω_{j+1})/σ)].

    Weight is conserved whatever the data spacing and however narrow the resolution; no
    ringing.  Intervals narrower than 1e-9 σ are treated as point weights.

    Parameters
    ----------
    E, sigma : ndarray, shape (n,)
        Energy transfer and resolution standard deviation in meV.
    omega_nodes : array_like, shape (..., n, m)
        Non-decreasing node energies in meV (last axis), broadcastable with ``W_nodes``.
    W_nodes : array_like, shape (..., n, m)
        Cumulative weight at the nodes (non-decreasing for a non-negative density).

    Returns
    -------
    ndarray, shape (..., n)
        Convolved density in weight/meV.

    References
    ----------
    Exact integral of a Gaussian over an interval through the error function:
    Abramowitz & Stegun (1964), Eq. 7.1.1 and 26.2.2.
    """
    E = np.asarray(E, dtype=float)[..., None]
    sigma = np.asarray(sigma, dtype=float)[..., None]
    omega = np.asarray(omega_nodes, dtype=float)
    W = np.asarray(W_nodes, dtype=float)
    omega, W = np.broadcast_arrays(omega, W)
    z = (E - omega) / sigma
    Phi = special.ndtr(z)
    d_omega = np.diff(omega, axis=-1)
    dW = np.diff(W, axis=-1)
    dPhi = Phi[..., :-1] - Phi[..., 1:]
    tiny = d_omega < 1e-9 * sigma
    with np.errstate(divide="ignore", invalid="ignore"):
        terms = np.where(tiny, 0.0, dW / np.where(tiny, 1.0, d_omega) * dPhi)
    out = terms.sum(axis=-1)
    if np.any(tiny):
        mid = 0.5 * (omega[..., :-1] + omega[..., 1:])
        out = out + np.where(tiny, dW * gaussian(E - mid, sigma), 0.0).sum(axis=-1)
    return out


# ------------------------------------------------------------------------- powder average
def powder_directions(n_theta: int = 16, n_phi: int = 16):
    """Directions and weights for the average over the unit sphere.

    Gauss–Legendre in cos θ (θ from the chain axis) times the uniform rule in φ: exact for
    spherical harmonics of degree ≤ min(2 n_theta − 1, n_phi − 1).

    Parameters
    ----------
    n_theta : int, optional
        Gauss–Legendre nodes in cos θ on [−1, 1].
    n_phi : int, optional
        Equally spaced azimuths φ_k = 2π (k + 1/2) / n_phi.

    Returns
    -------
    u : ndarray, shape (n_theta * n_phi, 3)
        Unit vectors with components (along the chain, along a, along b):
        (cos θ, sin θ cos φ, sin θ sin φ).
    w : ndarray, shape (n_theta * n_phi,)
        Weights summing to 1.

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 25.4.29 (Gauss–Legendre); trapezoidal rule for
    periodic functions in φ.
    """
    for name, value in (("n_theta", n_theta), ("n_phi", n_phi)):
        if isinstance(value, bool) or not isinstance(value, (int, np.integer)) or value < 1:
            raise InputError(f"the '{name}' parameter of powder_directions must be a "
                             f"positive integer; got {value!r} instead")
    c, wc = gauss_legendre(int(n_theta))
    phi = 2.0 * np.pi * (np.arange(int(n_phi)) + 0.5) / int(n_phi)
    s = np.sqrt(1.0 - c * c)
    u = np.stack([np.repeat(c, n_phi),
                  np.outer(s, np.cos(phi)).ravel(),
                  np.outer(s, np.sin(phi)).ravel()], axis=-1)
    w = np.repeat(wc / 2.0, n_phi) / n_phi
    return u, w
