"""Two-spinon continuum of the S = 1/2 XXZ chain: exact bounds and the Müller line shape.

Hamiltonian convention: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}],
J > 0 antiferromagnetic, energies in meV (or in the units of J where stated), chain phase
q = Q_∥ d in radians.  Every kernel is vectorised: q, ω, E of shape (n,) against J, Δ of
shape (n_sets, 1) give (n_sets, n).

The spectrum model
------------------
S(q, ω) = A(q) Θ(ω − ω_L) Θ(ω_T − ω) / √(ω² − ω_L²)     (Müller et al. 1981)

summed over the three spin components (unpolarised, no polarisation factor), with
ω_L the exact lower two-spinon edge and ω_T the upper edge of the principal continuum
(ω_T = ω_U for Δ ≤ 1).  The Müller shape is exact in its edges but only an approximation
of the line shape; it is a good one at Δ = 1 and an approximation away from it.  It is the
``line_shape='muller'`` option of the spectrum; the default multiplies it by the ratio R of
the exact two-spinon profile of the Heisenberg chain, which has the same first moment
(:mod:`evidence1d.physics.chain_exact`; Karbach et al. 1997).  For Δ > 1
the exact continuum of the π-periodic spinon bands also has a π-shifted sheet (the
two-spinon states over the other Néel vacuum; upper edge b = 2I√(1 − k² sin²(q/2)) > ω_T
for |q| < π/2): the model gives it the same Müller shape on [ω_L, b] and the moment
β(1 + cos q), which vanishes as (Δ − 1)² at Δ = 1 so the spectrum is continuous through
Δ = 1; below q_κ, where the principal sheet has closed onto its edge a = ω_L, the principal
moment sits on a line at a (:func:`two_spinon_sheets`).
Its resolution convolution at any temperature (S = χ''(n + 1)/π, the thermal edge of
:mod:`evidence1d.physics.chain_thermal`), :func:`spinon_spectrum`, lives in
:mod:`evidence1d.physics.chain_spectrum` and is re-exported here.

The amplitudes follow from the exact first moments of the three spin components
(double-commutator sum rule, Hohenberg & Brinkman 1974;
:mod:`evidence1d.physics.chain_ground_state`),
M1^zz = −2J(1 − cos q)C_xx and M1^xx = M1^yy = J[(Δ − 1)(C_xx − C_zz) − (1 − cos q)(ΔC_xx + C_zz)],
with the ground-state correlators C_zz = ∂e₀/∂Δ, C_xx = (e₀ − ΔC_zz)/2 (Hellmann–Feynman).
All three components share the edges, so the summed line shape is the Müller shape with
the summed moment: A = Σ_a A_a, A_a √(ω_T² − ω_L²) = M1^aa.  The total,
M1 = α(1 − cos q) + β(1 + cos q) with β = J(Δ − 1)(C_xx − C_zz), is shared between the
sheets by :func:`~evidence1d.physics.chain_ground_state.sheet_moments`: the principal
sheet carries α(1 − cos q), the π-shifted one β(1 + cos q) for Δ > 1 (added to the
principal sheet for |q| ≥ π/2, where b ≤ ω_T); for Δ < 1, β(1 + cos q) is left out (it
stays finite at q → 0, where the gapless continuum collapses onto ω = 0).  At Δ = 1 this
is the classic −2(1 − cos q)E_0/N.

Regularisation: the lower edge used by the line shape is floored at ``OMEGA_FLOOR`` × ω_T
(ω_L → 0 at q → 0 and q → π in the gapless regime), which caps the logarithmically
divergent T = 0 weight at A arccosh(1/OMEGA_FLOOR) ≈ 7.6 A and changes the spectrum only
for |ω| < 10⁻³ ω_T.  At T > 0 the physical cut-off is thermal: the finite-temperature
form of :mod:`evidence1d.physics.chain_thermal` rounds the edge on the scale k_BT, so the
floor matters only where 4πk_BT < 10⁻³ ω_T.

References
----------
J. des Cloizeaux & J. J. Pearson, Phys. Rev. 128, 2131 (1962).
J. des Cloizeaux & M. Gaudin, J. Math. Phys. 7, 1384 (1966).
J. D. Johnson, S. Krinsky & B. M. McCoy, Phys. Rev. A 8, 2526 (1973).
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981).
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997).
P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974).
A. H. Bougourzi, M. Karbach & G. Müller, Phys. Rev. B 57, 11429 (1998) (from memory).
J.-S. Caux, J. Mossel & I. Pérez Castillo, J. Stat. Mech. P08006 (2008) (from memory).
C. N. Yang & C. P. Yang, Phys. Rev. 150, 327 (1966) (ground-state energy; from memory).
L. Hulthén, Ark. Mat. Astron. Fys. 26A, No. 11 (1938).
"""
from __future__ import annotations

import numpy as np

from .chain_ground_state import (_as_params, continuum_first_moment, first_moment,
                                 first_moment_components, nearest_neighbour_correlators,
                                 sheet_moments, xxz_ground_state_energy)

__all__ = ["spinon_bounds", "spinon_gap", "xxz_ground_state_energy", "first_moment",
           "first_moment_components", "nearest_neighbour_correlators",
           "continuum_first_moment", "sheet_moments", "two_spinon_sheets", "muller_edges",
           "muller_amplitude", "muller_density", "muller_cumulative", "all_sheets",
           "reduced_phase", "longitudinal_share", "OMEGA_FLOOR"]

#: Floor of the line-shape lower edge, as a fraction of the upper edge ω_T.
OMEGA_FLOOR = 1e-3


# ------------------------------------------------------------------ helpers and checks
def reduced_phase(q):
    """Map any real chain phase onto [0, π] using 2π periodicity and q → −q.

    Parameters
    ----------
    q : array_like
        Chain phase q = Q_∥ d in radians.

    Returns
    -------
    ndarray
        |q| folded into [0, π] (rad), same shape; the two-spinon continuum of the chain
        H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z] is 2π-periodic and even in q.

    References
    ----------
    Müller et al., Phys. Rev. B 24, 1429 (1981) (the symmetry of the continuum).
    """
    q = np.asarray(q, dtype=float)
    return np.abs(np.remainder(q + np.pi, 2.0 * np.pi) - np.pi)


def _theta_234(nome):
    """Jacobi theta functions θ2, θ3, θ4 at zero argument for a nome ≤ e^{−π}.

    Seven terms reach double precision for nome ≤ e^{−π} (Abramowitz & Stegun 16.27)."""
    n = np.arange(1, 8).reshape((-1,) + (1,) * np.ndim(nome))
    qn2 = nome ** (n * n)
    t3 = 1.0 + 2.0 * qn2.sum(axis=0)
    t4 = 1.0 + 2.0 * (np.where(n % 2 == 1, -1.0, 1.0) * qn2).sum(axis=0)
    m = np.arange(0, 8).reshape((-1,) + (1,) * np.ndim(nome))
    t2 = 2.0 * nome ** 0.25 * (nome ** (m * (m + 1))).sum(axis=0)
    return t2, t3, t4


def _ising_parameters(delta):
    """Spinon parameters of the gapped chain, Δ = cosh φ ≥ 1 (rows with Δ < 1 get φ = 0).

    Returns φ, k, k′ and I/J with I = (J/π) sinh φ K(k), the modulus fixed by
    K(k′)/K(k) = φ/π, i.e. nome e^{−φ}.  k, k′ and K follow from Jacobi theta functions
    of the nome (φ ≥ π) or of the conjugate nome e^{−π²/φ} (φ < π), which converge fast
    and stay exact through φ → 0 (Δ → 1⁺), where k → 1, k′ → 0 and I → πJ/2.

    References: Johnson, Krinsky & McCoy (1973); Abramowitz & Stegun (1964) 16.38, 17.3.
    """
    phi = np.arccosh(np.maximum(delta, 1.0))
    large = phi >= np.pi
    with np.errstate(divide="ignore", over="ignore"):
        nome = np.where(large, np.exp(-phi), np.exp(-np.pi ** 2 / np.where(phi > 0, phi, 1.0)))
    nome = np.where(phi > 0, nome, 0.0)
    t2, t3, t4 = _theta_234(nome)
    k_a, kp_a = (t2 / t3) ** 2, (t4 / t3) ** 2           # nome e^{-φ}: k = θ2²/θ3²
    sinhc = np.where(phi > 0, np.sinh(phi) / np.where(phi > 0, phi, 1.0), 1.0)
    # K(k) = (π/2) θ3(e^{-φ})²  =  (π/2) (π/φ) θ3(e^{-π²/φ})²   (modular transformation)
    I_large = np.sinh(phi) / 2.0 * t3 ** 2
    I_small = np.pi / 2.0 * sinhc * t3 ** 2
    k = np.where(large, k_a, kp_a)
    kp = np.where(large, kp_a, k_a)
    I_over_J = np.where(large, I_large, I_small)
    return phi, k, kp, I_over_J


# ------------------------------------------------------------------------------ bounds
def _edges(q, J, delta):
    """Exact lower/upper continuum edges and the principal upper edge, all (n_sets, n)."""
    J, delta = _as_params(J, delta)
    qr = reduced_phase(q)
    # gapless regime, Δ = cos γ (des Cloizeaux & Pearson 1962; des Cloizeaux & Gaudin 1966)
    gamma = np.arccos(np.clip(delta, -1.0, 1.0))
    v = J * np.sinc(gamma / np.pi)                     # J sin γ / γ, → J at Δ = 1
    lo_xy = 0.5 * np.pi * v * np.sin(qr)
    up_xy = np.pi * v * np.sin(0.5 * qr)
    # gapped regime, Δ = cosh φ (Johnson, Krinsky & McCoy 1973)
    _, k, kp, iJ = _ising_parameters(delta)
    I = J * iJ
    s, c = np.sin(0.5 * qr), np.cos(0.5 * qr)
    a = 2.0 * I * np.sqrt(kp * kp + k * k * s * s)     # 2I √(1 − k² cos²(q/2))
    b = 2.0 * I * np.sqrt(kp * kp + k * k * c * c)     # 2I √(1 − k² sin²(q/2))
    middle = np.abs(np.cos(qr)) <= (1.0 - kp) / (1.0 + kp)
    lo_z = np.where(middle, I * (1.0 + kp) * np.sin(qr), np.minimum(a, b))
    gapped = delta > 1.0
    lower = np.where(gapped, lo_z, lo_xy)
    upper = np.where(gapped, np.maximum(a, b), up_xy)
    top = np.where(gapped, a, up_xy)
    return lower, upper, top


def spinon_bounds(q, J, delta):
    """Exact lower and upper bounds of the two-spinon continuum of the XXZ chain.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0.  For −1 < Δ = cos γ ≤ 1:
    ω_L = (πJ sin γ / 2γ)|sin q|, ω_U = (πJ sin γ / γ)|sin(q/2)|.  For Δ = cosh φ > 1 the
    extremes of ε(p₁) + ε(q − p₁) with ε(p) = I √(1 − k² cos² p), I = (J/π) sinh φ K(k),
    K(k′)/K(k) = φ/π: ω_U = max(2I√(1 − k²cos²(q/2)), 2I√(1 − k²sin²(q/2))); ω_L is the
    smaller of the two for |cos q| > (1 − k′)/(1 + k′) and I(1 + k′)|sin q| otherwise.

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians, any real value (2π-periodic, even in q).
    J : array_like, shape (n_sets, 1)
        Exchange (> 0), in any energy unit; the bounds come out in the same unit.
    delta : array_like, shape (n_sets, 1)
        Anisotropy Δ > −1.

    Returns
    -------
    lower, upper : ndarray, shape (n_sets, n)
        Continuum bounds in the units of J.  The lower edge is continuous through Δ = 1;
        for Δ > 1 the upper edge includes the π-shifted part of the continuum, so for
        |q| < π/2 it jumps at Δ = 1 (the weight there vanishes as Δ → 1⁺).

    Raises
    ------
    InputError
        J ≤ 0 or Δ ≤ −1.

    References
    ----------
    des Cloizeaux & Pearson, Phys. Rev. 128, 2131 (1962); des Cloizeaux & Gaudin,
    J. Math. Phys. 7, 1384 (1966); Johnson, Krinsky & McCoy, Phys. Rev. A 8, 2526 (1973).
    """
    lower, upper, _ = _edges(q, J, delta)
    return lower, upper


def spinon_gap(J, delta):
    """Two-spinon gap 2 I k′ of the XXZ chain (0 for Δ ≤ 1).

    Parameters
    ----------
    J : array_like
        Exchange (> 0); the gap is in the same unit.
    delta : array_like
        Anisotropy Δ > −1; the gap opens for Δ = cosh φ > 1.

    Returns
    -------
    ndarray
        Gap, = J sinh φ Σ_n (−1)ⁿ / cosh(nφ) (des Cloizeaux & Gaudin 1966), exponentially
        small as Δ → 1⁺.

    References
    ----------
    des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966); Johnson, Krinsky & McCoy,
    Phys. Rev. A 8, 2526 (1973).
    """
    J, delta = _as_params(J, delta)
    _, _, kp, iJ = _ising_parameters(delta)
    return np.where(delta > 1.0, 2.0 * J * iJ * kp, 0.0)


# ------------------------------------------------------------------------ Müller shape
def _h(r):
    """arccosh(1/r) / √(1 − r²) for 0 < r ≤ 1, stable at r → 1 (value 1)."""
    s = np.sqrt(np.maximum(1.0 - r * r, 0.0))
    with np.errstate(divide="ignore", invalid="ignore"):
        val = np.log1p((s + s * s / (1.0 + r)) / r) / s
    return np.where(s > 1e-8, val, 1.0)


def _sheet_split(q, J, delta):
    """Edges and the sheets' moments: lower (floored), principal top a, upper, m_p, m_s.

    For Δ > 1 and |q| ≥ π/2 the π-shifted sheet [ω_L, b] lies inside the principal one
    (b ≤ a) and its moment is added to the principal sheet; for |q| < π/2 it is a sheet of
    its own up to b = ω_U (:func:`two_spinon_sheets`)."""
    lower, upper, top = _edges(q, J, delta)
    m_p, m_s = sheet_moments(q, J, delta)
    inside = upper <= top                       # b ≤ a: fold the shifted moment in
    m_p = m_p + np.where(inside, m_s, 0.0)
    m_s = np.where(inside, 0.0, m_s)
    return np.maximum(lower, OMEGA_FLOOR * top), top, upper, m_p, m_s


def _sheet(wl, top, m1):
    """Müller amplitude m1/√(top² − wl²) and total weight of one sheet, (n_sets, n)."""
    valid = (top > 0) & (wl < top)
    safe_top = np.where(valid, top, 1.0)
    r = np.where(valid, wl / safe_top, 1.0)
    width = safe_top * np.sqrt(np.maximum(1.0 - r * r, 0.0))   # √(ω_T² − ω_L²)
    with np.errstate(divide="ignore", invalid="ignore"):
        A = np.where(valid & (width > 0), m1 / np.where(width > 0, width, 1.0), 0.0)
    total = np.where(valid, m1 / safe_top * _h(r), 0.0)           # A arccosh(ω_T/ω_L)
    return np.where(valid, wl, 0.0), np.where(valid, top, 0.0), A, total


def _muller(q, J, delta):
    """Principal sheet: edges (floored ω_L, ω_T), amplitude A and total weight, (n_sets, n)."""
    wl, top, _, m_p, _ = _sheet_split(q, J, delta)
    return _sheet(wl, top, m_p)


def all_sheets(q, J, delta):
    """The parts of the model spectrum at T = 0, as tuples of arrays.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0.  The pieces of
    :func:`two_spinon_sheets`, in the form the convolution of
    :mod:`evidence1d.physics.chain_spectrum` uses.

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.

    Returns
    -------
    principal : tuple of ndarray (n_sets, n)
        Floored lower edge ω_L and upper edge ω_T (meV), Müller amplitude A, total weight.
    shifted : tuple of ndarray (n_sets, n)
        The π-shifted sheet of Δ > 1: ω_L, its upper edge b (meV), amplitude, weight.
    line : tuple of ndarray (n_sets, n)
        The line at the continuum bottom below q_κ (Δ > 1): energy a (meV), weight W.

    References
    ----------
    Müller et al., Phys. Rev. B 24, 1429 (1981); Bougourzi, Karbach & Müller, Phys. Rev. B
    57, 11429 (1998) (the π-shifted sheet; from memory).
    """
    wl, top, upper, m_p, m_s = _sheet_split(q, J, delta)
    shifted = _sheet(wl, upper, m_s)
    line = (delta > 1.0) & (top > 0) & (wl >= top)   # |q| < q_κ: principal sheet empty
    W = np.where(line, m_p / np.where(top > 0, top, 1.0), 0.0)
    return _sheet(wl, top, m_p), shifted, (np.where(line, top, 0.0), W)


def two_spinon_sheets(q, J, delta):
    """Both two-spinon sheets of the model and the bottom line where the principal is empty.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0.  The model spectrum at T = 0 is

        S(q, ω) = A Θ(ω_T − ω)/√(ω² − ω_L²) + A_s Θ(b − ω)/√(ω² − ω_L²) + W δ(ω − a)

    (all for ω > ω_L): the principal sheet up to ω_T (the Müller shape with the moment
    α(1 − cos q) of :func:`sheet_moments`, plus β(1 + cos q) for |q| ≥ π/2), the π-shifted
    sheet up to b = 2I√(1 − k² sin²(q/2)) for Δ > 1 and |q| < π/2 (moment β(1 + cos q),
    the same Müller shape; b → the Heisenberg edge region only as its weight β → 0), and,
    for Δ > 1 and |q| < q_κ where the principal sheet has shrunk to its edge a = ω_L, a
    line at a with the principal moment, W = α(1 − cos q)/a (the limit of the principal
    sheet as its width closes, so S(q) is continuous at q_κ).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV (> 0) and anisotropy Δ > −1.

    Returns
    -------
    dict of ndarray, shape (n_sets, n)
        ``lower`` (ω_L, floored; shared by both sheets), ``top`` (ω_T) and ``A`` of the
        principal sheet; ``b`` and
        ``A_shifted`` of the π-shifted sheet; ``line_energy`` (a) and ``line_weight`` (W);
        ``weight``: the total ∫S dω (static structure factor of the model), all in meV,
        1/meV·meV or dimensionless; zeros where a part is absent.

    References
    ----------
    Müller et al., Phys. Rev. B 24, 1429 (1981); Johnson, Krinsky & McCoy (1973);
    Bougourzi, Karbach & Müller, Phys. Rev. B 57, 11429 (1998) and Caux, Mossel & Pérez
    Castillo, J. Stat. Mech. P08006 (2008) (the two sheets; from memory).
    """
    (wl, top, A, total), (wl_s, b, A_s, total_s), (a, W) = all_sheets(q, J, delta)
    return {"lower": np.where(wl > 0, wl, wl_s), "top": top, "A": A, "b": b,
            "A_shifted": A_s, "line_energy": a, "line_weight": W,
            "weight": total + total_s + W}


def muller_edges(q, J, delta):
    """Energy range of the Müller line shape: (ω_L floored, ω_T).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV (> 0) and anisotropy Δ > −1 (H = J Σ [SxSx + SySy + Δ SzSz]).

    Returns
    -------
    lower, top : ndarray, shape (n_sets, n)
        In meV: ω_L = max(exact lower edge, OMEGA_FLOOR ω_T) and ω_T (the exact upper edge
        for Δ ≤ 1, the principal upper edge 2I√(1 − k² cos²(q/2)) for Δ > 1); both 0
        where the continuum is empty.

    References
    ----------
    Müller et al., Phys. Rev. B 24, 1429 (1981); Johnson, Krinsky & McCoy (1973).
    """
    wl, top, _, _ = _muller(q, J, delta)
    return wl, top


def longitudinal_share(q, J, delta):
    """Share f_zz of the longitudinal component S^zz in the model spectrum at chain phase q.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0, anisotropy axis z.  The model gives
    each spin component the line shape of the summed spectrum at the same q, scaled to the
    component's exact first moment (the amplitudes of :func:`two_spinon_sheets` are fixed
    by the same moments), so S^aa(q, ω) = f_aa(q) S(q, ω) with

        f_zz = M1^zz / M1_model,   f_xx = f_yy = (1 − f_zz)/2,

    M1^zz = −2J(1 − cos q) C_xx (:func:`first_moment_components`) and M1_model the moment the
    model carries, α(1 − cos q) + β(1 + cos q) for Δ > 1 and α(1 − cos q) for Δ ≤ 1
    (:func:`sheet_moments`; the part β(1 + cos q) left out for Δ < 1 is transverse).  For
    Δ ≤ 1 the share does not depend on q: f_zz = 2C_xx/[(3 + Δ)C_xx + (1 + Δ)C_zz]
    (1/3 at Δ = 1 by rotation invariance; 0.550 at Δ = 0, where S^zz carries the moment
    J(1 − cos q)/π against J(1 − cos q)[1/(4π) + 1/(2π²)] in each transverse component's
    principal part, with C_xx = −1/(2π), C_zz = −1/π²).  The ω-integrated first moment of every component
    is then exact (Hohenberg & Brinkman 1974); how the components share the line shape
    within the continuum is the model's assumption (exact at Δ = 1).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV (> 0) and anisotropy Δ > −1.

    Returns
    -------
    ndarray, shape (n_sets, n)
        f_zz in [0, 1]; 1/3 where the model carries no moment (q = 0 for Δ ≤ 1).

    References
    ----------
    P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974) (component moments);
    G. L. Squires, Introduction to the Theory of Thermal Neutron Scattering (CUP, 1978),
    Ch. 7 (why the components matter: the polarisation factor δ_αβ − Q̂_α Q̂_β).
    """
    J, delta = _as_params(J, delta)
    _, m_zz = first_moment_components(q, J, delta)
    m_p, m_s = sheet_moments(q, J, delta)
    total = m_p + m_s
    ok = total > 1e-12 * J
    f = np.where(ok, m_zz / np.where(ok, total, 1.0), 1.0 / 3.0)
    return np.clip(f, 0.0, 1.0)


def muller_amplitude(q, J, delta):
    """Amplitude A(q) of the principal sheet's Müller shape from the first-moment sum rule.

    ∫ ω A / √(ω² − ω_L²) dω over [ω_L, ω_T] = A √(ω_T² − ω_L²) = α(1 − cos q) (plus
    β(1 + cos q) for Δ > 1 and |q| ≥ π/2; :func:`sheet_moments`).  The components share
    the edges, so A = A_xx + A_yy + A_zz.  The π-shifted sheet and the bottom line are in
    :func:`two_spinon_sheets`.

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.

    Returns
    -------
    ndarray, shape (n_sets, n)
        A(q), dimensionless (S in 1/meV times meV); 0 where the continuum is empty.

    References
    ----------
    Müller et al. (1981); Hohenberg & Brinkman, Phys. Rev. B 10, 128 (1974).
    """
    return _muller(q, J, delta)[2]


def muller_density(q, omega, J, delta):
    """T = 0 Müller line shape of the principal sheet, A Θ(ω − ω_L) Θ(ω_T − ω) / √(ω² − ω_L²).

    For Δ > 1 the model adds the π-shifted sheet and, below q_κ, a line
    (:func:`two_spinon_sheets`).

    An approximation of the two-spinon line shape, good at Δ = 1, cruder away from it.

    Parameters
    ----------
    q, omega : array_like, shape (n,)
        Chain phase (rad) and energy (meV) of each point.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in 1/meV per spin (three components summed); 0 outside the continuum and at the
        integrable edge singularity ω = ω_L itself.

    References
    ----------
    G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981).
    """
    wl, top, A, _ = _muller(q, J, delta)
    omega = np.asarray(omega, dtype=float)
    inside = (omega > wl) & (omega <= top)
    arg = np.where(inside, omega * omega - wl * wl, 1.0)
    return np.where(inside, A / np.sqrt(arg), 0.0)


def muller_cumulative(q, omega, J, delta):
    """Cumulative weight W(q, ω) = ∫_{ω_L}^{ω} S dω' = A arccosh(ω/ω_L), clipped to [ω_L, ω_T].

    Principal sheet only (:func:`two_spinon_sheets` gives the model's total weight).

    Parameters
    ----------
    q, omega : array_like, shape (n,)
        Chain phase (rad) and energy (meV).
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.

    Returns
    -------
    ndarray, shape (n_sets, n)
        W, dimensionless: 0 below ω_L, the total A arccosh(ω_T/ω_L) (finite thanks to the
        floor of ω_L) above ω_T.

    References
    ----------
    Müller et al. (1981); closed form of ∫ dω/√(ω² − a²), Abramowitz & Stegun 3.3.44.
    """
    wl, top, A, _ = _muller(q, J, delta)
    omega = np.clip(np.asarray(omega, dtype=float), wl, top)
    ratio = np.where(wl > 0, omega / np.where(wl > 0, wl, 1.0), 1.0)
    return A * np.arccosh(np.maximum(ratio, 1.0))
