"""Line shape of a magnon pair at ±ħω: detailed balance, damping and Gaussian resolution.

One convention for every family of the project: S(E) = χ''(E) [n(E) + 1] / π point by
point, the resolution applied to S afterwards.  A sharp mode gives two Gaussians with areas
w [n(ω) + 1] and w n(ω); a damped mode (Lorentzian pair in χ'') is convolved exactly
through the Faddeeva function where the Bose factor allows it and numerically for the
small remainder (:func:`mode_pair`).  Energies in meV, temperatures in K.

References
----------
S. W. Lovesey, Theory of Neutron Scattering from Condensed Matter, Vol. 1 (Clarendon,
1984), Ch. 4 (fluctuation–dissipation theorem, detailed balance).
M. Abramowitz & I. A. Stegun, Handbook of Mathematical Functions (1964), Eqs. 7.1.3,
7.1.23, 7.4.13 (Faddeeva function, its asymptotic series, Voigt profile), 4.5.67
(partial fractions of coth), 25.4.46 (Gauss–Hermite rule).
"""
from __future__ import annotations

import numpy as np
from scipy import special

from ..units import K_B_MEV
from . import neutron

__all__ = ["mode_pair", "voigt_pair", "voigt", "VOIGT_CUT"]

#: distance from a mode, in Gaussian widths, beyond which the Voigt tail expansion is used
VOIGT_CUT = 10.0
_ETA_SHARP = 1e-12                   # damping ratios below it are treated as 0
#: Gauss–Hermite nodes for the Bose-factor remainder of a damped mode (even: no node sits
#: on the point itself, where n(E) + 1 varies on the scale k_BT)
_N_REMAINDER = 4
#: nodes of the line-adapted rule for the remainder of a damped mode narrower than σ
_N_NARROW = 32
_NARROW_BELOW = 3.0                  # ... used where ω + Γ < 3 σ
_CLOSE = 6.0                         # 2 nodes suffice beyond 6 σ from ±ω and from 0
#: the k_BT/E' part of the Bose factor is convolved exactly for ħω below ~4 k_BT
_KAPPA_SCALE = 4.0


def mode_pair(energy, sigma, omega, w, temperature, damping=None):
    """A mode pair at ±ħω with T = 0 weight w: detailed balance, damping and resolution.

    The project's finite-temperature convention, S = χ''(n + 1)/π point by point, with the
    response of a damped mode χ''(E) = π W [L(E − ω) − L(E + ω)] (Lorentzians of half width
    Γ = η ħω_Q, η the damping ratio) and W = w π / (2 arctan(1/η)) so that the energy-loss
    weight at T = 0 is the single-mode weight w; the Gaussian resolution G_σ is applied
    afterwards, S = G_σ ∗ f with f(E') = W N(E') [L(E' − ω) − L(E' + ω)], N = n + 1.

    Writing N(E') = κ k_BT/E' + 1/2 + h_κ(E'), κ = 1/(1 + (ω/4k_BT)⁴), the first two
    parts convolve exactly: k_BT/E' times the Lorentzian pair is, by partial fractions,
    [ω (L₋ + L₊) − Γ (D₋ − D₊)]/(ω² + Γ²) (D the dispersive Lorentzian), and G_σ turns L
    and D into the real and imaginary parts of the Faddeeva function (:func:`voigt_pair`).
    Of the third part, h_κ(ω)(L₋ + L₊) also convolves exactly; the remainder
    W {h_κ(E')[L₋ − L₊] − h_κ(ω)(L₋ + L₊)}, proportional to Γ, small in the classical
    regime ħω ≪ k_BT (κ → 1) and smooth on the scale of the line when ħω ≫ k_BT (κ → 0),
    is convolved with a 4-node Gauss–Hermite rule where the line is wider than 3σ (2 nodes
    beyond 6σ from ±ω and from 0, where the remainder is smooth on the scale of σ) and with
    a 32-node rule adapted to the line (E' = (ω + Γ) tan θ, midpoints in θ) where it is
    narrower.  The result is exact for a sharp mode (areas w [n(ω) + 1] and w n(ω)) and
    within 1 % of the peak of a brute-force convolution for damped modes from far inside
    the resolution to far outside it, at T = 0 and above (tests).

    Parameters
    ----------
    energy : ndarray, shape (n,)
        Energy transfer in meV.
    sigma : ndarray, broadcastable to (n_sets, n)
        Gaussian standard deviation in meV (energy and momentum resolution).
    omega, w : ndarray, shape (n_sets, n)
        Mode energy in meV (> 0) and its T = 0 weight (energy-loss side).
    temperature : float
        Sample temperature in K.
    damping : ndarray, shape (n_sets, 1), optional
        Damping ratio η = Γ/ħω ≥ 0 (``None``, or below 1e-12: sharp modes).

    Returns
    -------
    ndarray, shape (n_sets, n)
        S(E) in 1/meV (units of w per meV); detailed balance S(−E) = e^{−E/k_BT} S(E)
        holds point by point as σ → 0.

    References
    ----------
    Hohenberg & Brinkman (1974); S. W. Lovesey, Theory of Neutron Scattering from
    Condensed Matter, Vol. 1 (1984), Ch. 4 (fluctuation–dissipation, detailed balance);
    M. J. Cooper & R. Nathans, Acta Cryst. 23, 357 (1967) (Gaussian resolution, linearised
    dispersion); Abramowitz & Stegun (1964), Eqs. 7.1.3–7.1.4, 7.4.13 (Faddeeva function,
    Voigt profile), 4.5.67 (partial fractions of coth) and 25.4.46 (Gauss–Hermite rule).
    """
    omega = np.asarray(omega, float)
    n1 = neutron.bose_energy_factor(omega, temperature) / omega           # n(ω) + 1
    n0 = n1 * neutron.boltzmann_ratio(omega, temperature)                 # n(ω)
    sig = np.asarray(sigma, float)
    E = np.asarray(energy, float)
    eta = None if damping is None else np.asarray(damping, float)
    if eta is not None:                     # η below 1e-12 is a sharp mode (exactly)
        eta = np.where(eta < _ETA_SHARP, 0.0, eta)
    if eta is None or np.all(eta == 0.0):
        # weights first, so that a far tail is rounded once (no double rounding in denormals)
        return (w * n1) * neutron.gaussian(E - omega, sig) + (w * n0) * neutron.gaussian(
            E + omega, sig)
    gamma = eta * omega
    kT = K_B_MEV * float(temperature)
    with np.errstate(divide="ignore"):
        W = w * np.where(eta > 0, 0.5 * np.pi / np.arctan(1.0 / eta), 1.0)
    r4 = (omega / (_KAPPA_SCALE * kT)) ** 4 if kT > 0 else np.inf + 0.0 * omega
    kappa = 1.0 / (1.0 + r4)                               # share of k_BT/E' done exactly
    c = kappa * (kT / omega) * (eta * eta / (1.0 + eta * eta))
    v_m, d_m = voigt_pair(E - omega, sig, gamma)
    v_p, d_p = voigt_pair(E + omega, sig, gamma)
    disp = (kappa * kT * gamma / (omega * omega + gamma * gamma)) * (d_m - d_p)
    # C order: the remainder below is added through ravel() views
    out = np.ascontiguousarray((W * (n1 - c)) * v_m + (W * (n0 - c)) * v_p - W * disp)
    h_w = n1 - 0.5 - kappa * kT / omega                    # h_κ(ω)
    shape = out.shape
    args = [np.broadcast_to(a, shape) for a in (omega, gamma, h_w, kappa * kT, W, sig)]
    Eb = np.broadcast_to(E, shape)
    # remainder: Gauss–Hermite in the resolution where the line is wider than σ, a rule
    # adapted to the line (E' = s tan θ, s = ω + Γ) where it is narrower
    narrow = (args[0] + args[1]) < _NARROW_BELOW * args[5]
    # 4 Gauss–Hermite nodes within 6σ of ±ω or of 0 (where the remainder has its
    # structure), 2 beyond (there it is smooth on the scale of σ: error ~(σ/6σ)⁴)
    dist = np.minimum(np.minimum(np.abs(Eb - args[0]), np.abs(Eb + args[0])), np.abs(Eb))
    close = dist < _CLOSE * args[5]
    for sel, n_nodes in ((~narrow & close, _N_REMAINDER), (~narrow & ~close, 2)):
        jdx = np.flatnonzero(sel)
        if jdx.size == 0:
            continue
        om_, g_, hw_, kx_, W_, sg_ = (a.ravel()[jdx] for a in args)
        Ej = Eb.ravel()[jdx]
        x, hk = neutron.gauss_hermite(n_nodes)
        wide = sum(hi * _bose_remainder(Ej + xi * sg_, om_, g_, hw_, kx_, kT)
                   for xi, hi in zip(x, hk))
        out.ravel()[jdx] += W_ * wide
    idx = np.flatnonzero(narrow)
    if idx.size:
        om_, g_, hw_, kx_, W_, sg_ = (a.ravel()[idx][:, None] for a in args)
        th = (np.arange(_N_NARROW) + 0.5) / _N_NARROW * np.pi - 0.5 * np.pi
        scale = om_ + g_
        e = scale * np.tan(th)
        wq = scale * (np.pi / _N_NARROW) / np.cos(th) ** 2
        r = _bose_remainder(e, om_, g_, hw_, kx_, kT)
        Ek = Eb.ravel()[idx][:, None]
        conv = np.sum(wq * r * neutron.gaussian(Ek - e, sg_), axis=1)
        out.ravel()[idx] += W_[:, 0] * conv
    return np.maximum(out, 0.0)            # f ≥ 0; rounding of the remainder can dip below




def _bose_energy(e, kT):
    """e [n(e) + 1] = e / (1 − e^{−e/k_BT}) without overflow: |e| e^{−x}/(1 − e^{−x}) for
    e < 0 (x = |e|/k_BT), k_BT at e = 0, max(e, 0) at T = 0 (as neutron.bose_energy_factor)."""
    if kT <= 0.0:
        return np.maximum(e, 0.0)
    ae = np.abs(e)
    x = ae / kT
    with np.errstate(divide="ignore", invalid="ignore"):
        out = ae / -np.expm1(-x)
    out = np.where(x > 1e-300, out, kT)
    return np.where(e < 0, out * np.exp(-x), out)


def _bose_remainder(e, omega, gamma, h_w, kT_exact, kT):
    """R/W = h_κ(e)[L(e − ω) − L(e + ω)] − h_κ(ω)[L(e − ω) + L(e + ω)], zero where Γ = 0.

    h_κ(e) = n(e) + 1/2 − κ k_BT/e; h_κ(e)[L₋ − L₊] = (e[n(e)+1] − κ k_BT) K(e) − (L₋ − L₊)/2
    with K(e) = [L₋ − L₊]/e = 4Γω / (π ((e − ω)² + Γ²)((e + ω)² + Γ²)), finite at e = 0.
    """
    g2 = gamma * gamma
    with np.errstate(divide="ignore", invalid="ignore"):
        qm = (e - omega) ** 2 + g2
        qp = (e + omega) ** 2 + g2
        gp = gamma / np.pi
        K = (4.0 * omega) * gp / (qm * qp)
        lm, lp = gp / qm, gp / qp
        rem = (_bose_energy(e, kT) - kT_exact) * K - (0.5 + h_w) * lm + (0.5 - h_w) * lp
    return np.where(gamma > 0, rem, 0.0)


def voigt_pair(x, sigma, gamma, cut=VOIGT_CUT):
    """Gaussian-convolved absorptive and dispersive Lorentzians, V + i D = G_σ ∗ (1/π)/(x − iΓ).

    V is the Voigt profile and D the convolution of the Gaussian with (1/π) x/(x² + Γ²):
    V + i D = w(z)/(σ√(2π)), z = (x + iΓ)/(σ√2), w the Faddeeva function (exact, within
    ``cut`` σ of the centre).  Beyond, the Gaussian-moment (heat-kernel) expansion
    (1/π)[u + σ² u³ + 3σ⁴ u⁵ + 15σ⁶ u⁷], u = 1/(x − iΓ), in real arithmetic: with
    a = x²/(x² + Γ²), ρ = σ²/(x² + Γ²),

        V = Γ/(π (x² + Γ²)) [1 + ρ(4a − 1) + 3ρ²(16a² − 12a + 1) + 15ρ³(64a³ − 80a² + 24a − 1)],
        D = x/(π (x² + Γ²)) [1 + ρ(4a − 3) + 3ρ²(16a² − 20a + 5) + 15ρ³(64a³ − 112a² + 56a − 7)];

    the next term is at most 945 (σ/x)⁸ ≈ 10⁻⁵ of the value at cut = 10 and the Gaussian
    core e^{−x²/2σ²} < 2 × 10⁻²² is dropped.  Where Γ = 0: V is the plain Gaussian and D is
    returned as 0 (it only ever enters multiplied by Γ).

    Parameters
    ----------
    x : ndarray
        Energy offset from the mode in meV.
    sigma : ndarray
        Gaussian standard deviation in meV (> 0), broadcastable to x.
    gamma : ndarray
        Lorentzian half width at half maximum in meV (≥ 0), broadcastable to x.
    cut : float, optional
        Where the expansion takes over, in units of σ.

    Returns
    -------
    V, D : ndarray
        In 1/meV, shape of the broadcast inputs (V has unit area).

    References
    ----------
    Abramowitz & Stegun (1964), Eqs. 7.1.3, 7.1.23 (Faddeeva function and its asymptotic
    series) and 7.4.13 (Voigt profile); scipy.special.wofz.
    """
    x = np.asarray(x, float)
    sigma = np.asarray(sigma, float)
    gamma = np.asarray(gamma, float)
    shape = np.broadcast_shapes(x.shape, sigma.shape, gamma.shape)
    x2, s2 = x * x, sigma * sigma
    with np.errstate(divide="ignore", invalid="ignore"):
        u = x2 + gamma * gamma
        a = x2 / u
        rho = s2 / u
        pv = _series(a, rho, (64.0, -80.0, 24.0, -1.0), (16.0, -12.0, 1.0), (4.0, -1.0))
        pd = _series(a, rho, (64.0, -112.0, 56.0, -7.0), (16.0, -20.0, 5.0), (4.0, -3.0))
        v = pv * (gamma / np.pi) / u
        d = pd * (x / np.pi) / u
    sharp = gamma == 0.0
    if np.any(sharp):
        v = np.where(sharp, neutron.gaussian(x, sigma), v)
        d = np.where(sharp, 0.0, d)
    v = np.broadcast_to(v, shape).copy()
    d = np.broadcast_to(d, shape).copy()
    near = np.flatnonzero(np.broadcast_to((x2 < (cut * cut) * s2) & ~sharp, shape))
    if near.size:
        pick = lambda arr: np.broadcast_to(arr, shape).ravel()[near]   # noqa: E731
        sg = pick(sigma)
        wz = special.wofz((pick(x) + 1j * pick(gamma)) / (np.sqrt(2.0) * sg))
        wz /= np.sqrt(2.0 * np.pi) * sg
        v.ravel()[near] = wz.real
        d.ravel()[near] = wz.imag
    return v, d


def _series(a, rho, p3, p2, p1):
    """1 + ρ P₁(a) + 3ρ² P₂(a) + 15ρ³ P₃(a) (Horner, in place), polynomials high to low."""
    t = p3[0] * a
    for coef in p3[1:-1]:
        t += coef
        t *= a
    t += p3[-1]
    t *= 15.0 * rho
    q = p2[0] * a
    q += p2[1]
    q *= a
    q += p2[2]
    q *= 3.0
    q += t
    q *= rho
    out = p1[0] * a
    out += p1[1]
    out += q
    out *= rho
    out += 1.0
    return out


def voigt(x, sigma, gamma, cut=VOIGT_CUT):
    """Voigt profile (the real part of :func:`voigt_pair`), in 1/meV.

    Parameters
    ----------
    x, sigma, gamma : ndarray
        Offset, Gaussian standard deviation and Lorentzian HWHM in meV (broadcastable).
    cut : float, optional
        Where the tail expansion takes over, in units of σ.

    Returns
    -------
    ndarray
        Unit-area profile.

    References
    ----------
    Abramowitz & Stegun (1964), Eq. 7.4.13.
    """
    return voigt_pair(x, sigma, gamma, cut)[0]
