"""Resolution-convolved two-spinon spectrum of the S = 1/2 XXZ chain at any temperature.

Finite-temperature convention (every family): S(q, ω) = χ''(q, ω) [n(ω) + 1]/π.  Two line
shapes of each two-spinon sheet, both with the exact first moment (``line_shape``): the exact
two-spinon profile of the Heisenberg chain placed between the sheet's edges (the default;
:mod:`evidence1d.physics.chain_exact`, its convolution in
:mod:`evidence1d.physics.chain_exact_quadrature`) and the Müller shape.  At T = 0 the Müller
shape of :mod:`evidence1d.physics.chain` is S_0(q, ω) = A(q) Θ(ω − ω_L) Θ(ω_T − ω) /
√(ω² − ω_L²) on the energy-loss side and nothing on the gain side; the exact profile is
S_0 times the ratio R(ω), which vanishes at ω_T.  At T > 0, χ'' is the same shape with its
edge dressed by the finite-temperature conformal form and S = χ''(n + 1)/π on both sides
(:mod:`evidence1d.physics.chain_thermal`: detailed balance S(q, −ω) = e^{−ω/k_BT} S(q, ω)
holds exactly, S is finite at ω → 0 near q = π); the exact profile multiplies it by the
thermal ratio R_T (even in ω).

The T = 0 convolution of the Müller shape with the Gaussian resolution is that of
:mod:`evidence1d.physics.chain_muller_quadrature` (exact in the cumulative-weight
variable, so neither the edge nor the step at ω_T rings or loses weight).

At T > 0 :func:`evidence1d.physics.chain_thermal.convolve_thermal` takes over; on its edge
path it calls the T = 0 edge path
(:func:`~evidence1d.physics.chain_muller_quadrature.muller_edge_side`, with the Boltzmann
factor on the gain side) and adds the thermal correction, so the spectrum tends to the
T = 0 one as T → 0.

Conventions (H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0, chain phase q in radians,
energies in meV, batched (n_sets, 1) parameters against (n,) points) are those of
:mod:`evidence1d.physics.chain`.

References
----------
M. Karbach, G. Müller, A. H. Bougourzi, A. Fledderjohann & K.-H. Mütter, Phys. Rev. B 55,
12510 (1997) (the exact two-spinon profile).
G. Müller, H. Thomas, H. Beck & J. C. Bonner, Phys. Rev. B 24, 1429 (1981).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter* (Clarendon, 1984)
(detailed balance).
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 22.2.15,
22.8.8, 25.4.29, 25.4.46 (Hermite polynomials, Gauss–Legendre and Gauss–Hermite rules).
H. J. Schulz, Phys. Rev. B 34, 6372 (1986) (finite-temperature form; from memory).
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from ..units import K_B_MEV
from . import chain_exact, chain_exact_quadrature as cxq
from .chain import all_sheets, reduced_phase
from .chain_muller_quadrature import N_SIGMA, muller_edge_side, muller_smooth_side
from .chain_thermal import HERMITE_TIERS, convolve_thermal, thermal_density
from .thermal_damping import damped_spectrum

__all__ = ["spinon_spectrum", "spinon_density", "LINE_SHAPES"]

#: line shapes of the two-spinon sheets: the exact Δ = 1 profile between the XXZ edges
#: (default) and the Müller ansatz
LINE_SHAPES = ("exact", "muller")

_HERMITE_MAX = HERMITE_TIERS[-1][1]  # σ/k_BT up to which the thermal path is Gauss–Hermite
#: exact profile at T > 0, signed axis: panels of the per-window rule for σ ≤ 1.25 k_BT
#: (windows near ±ω_U), and the σ/k_BT up to which wider windows take the shared lattice of
#: :func:`~evidence1d.physics.chain_exact_quadrature.signed_side_grid` (every window, not
#: only those near ±ω_U; the widths of a thermally damped spectrum)
_SIGNED_NARROW_PANELS = 2
_SIGNED_REACH = 3.2


def _convolve_exact(Ef, sf, wl, top, A, kT, n_nodes, n_panels, smooth, group=None):
    """One sheet with the exact profile A R_T(ω) D(ω) on [ω_L, top], convolved, flat arrays.

    T = 0: :func:`evidence1d.physics.chain_exact_quadrature.convolve_zero`.  T > 0:
    σ ≤ 1.25 k_BT near ±ω_U, :func:`~evidence1d.physics.chain_exact_quadrature.signed_side`
    (one rule per window); every window with 1.25 k_BT < σ ≤ 3.2 k_BT (the widths of a
    thermally damped spectrum, whose windows overlap several times along a column),
    :func:`~evidence1d.physics.chain_exact_quadrature.signed_side_grid` (one lattice of
    panels per sheet, shared by its windows; ``group`` labels the pairs of one sheet;
    measured within 5e-5 of the peak against adaptive quadrature in the tests);
    the rest, :func:`evidence1d.physics.chain_thermal.convolve_thermal` with the profile
    ratio R_T at its nodes, :func:`~evidence1d.physics.chain_exact_quadrature.t_side` as the
    T = 0 edge path and, for windows clear of the thermal edge but not of ω_U, on the
    thermal density.
    """
    if not (A > 0).any():
        return np.zeros(Ef.size)
    if kT <= 0:
        return cxq.convolve_zero(Ef, sf, wl, top, A, n_nodes, n_panels, smooth, group)

    def old_side(Es, s, wl_, top_, A_, kTa, boltz):
        return A_ * cxq.t_side(Es, s, wl_, top_, kTa, -1.0 if boltz else 1.0, False,
                                       n_nodes, n_panels)

    def top_side(c, s, wl_, top_, kTa):
        return cxq.t_side(c, s, wl_, top_, kTa, 1.0, True, n_nodes, n_panels)

    # σ ≲ k_BT: Gauss–Hermite on the signed axis unless the window nears ±ω_U (where the
    # profile vanishes as a square root; all such pairs on the reference path)
    kTa = np.full(Ef.size, float(kT))
    six = N_SIGMA * sf
    reach = _SIGNED_REACH if smooth else _HERMITE_MAX
    narrow = ((A > 0) & (sf <= reach * kT) & (Ef - six < top) & (Ef + six > -top)
              & ((Ef + six > wl - 40.0 * kT) | (Ef - six < 40.0 * kT - wl)))
    if smooth:
        narrow &= (np.abs(Ef) + cxq.TOP_CLEAR * sf > top) | (sf > _HERMITE_MAX * kT)
    out = np.zeros(Ef.size)
    if smooth:
        # σ ≤ 1.25 k_BT (windows near ±ω_U only): one rule per window; wider windows (a
        # thermally damped spectrum, σ of a few k_BT, overlapping several times along a
        # column): one node grid per sheet shared by the windows
        ix = np.flatnonzero(narrow & (sf <= _HERMITE_MAX * kT))
        if ix.size:
            out[ix] = A[ix] * cxq.signed_side(Ef[ix], sf[ix], wl[ix], top[ix], kTa[ix],
                                              n_panels=_SIGNED_NARROW_PANELS)
        ix = np.flatnonzero(narrow & (sf > _HERMITE_MAX * kT))
        if ix.size:
            out[ix] = A[ix] * cxq.signed_side_grid(Ef[ix], sf[ix], wl[ix], top[ix], kTa[ix],
                                                   None if group is None else group[ix])
    else:
        ix = np.flatnonzero(narrow)
        if ix.size:
            out[ix] = A[ix] * cxq.signed_side(Ef[ix], sf[ix], wl[ix], top[ix], kTa[ix],
                                              n_nodes, max(n_panels, 2), N_SIGMA)
    out += convolve_thermal(Ef, sf, wl, top, np.where(narrow, 0.0, A), kT, old_side,
                            "quadrature", n_nodes, n_panels, smooth,
                            ratio=chain_exact.ratio_fast, top_side=top_side)
    return out


def _convolve_sheet(Ef, sf, wl, top, A, kT, method, n_nodes, n_panels, smooth,
                    line_shape="muller", group=None):
    """One sheet on [ω_L, top], convolved, flat (pair) arrays: the Müller shape
    A/√(ω² − ω_L²) (below), or the exact profile (:func:`_convolve_exact`).

    T = 0: pairs whose window is clear of the singular edge (lo = E − 6σ ≥ ω_L) take
    :func:`~evidence1d.physics.chain_muller_quadrature.muller_smooth_side`, the others
    :func:`~evidence1d.physics.chain_muller_quadrature.muller_edge_side`; with
    ``smooth=False`` every pair takes the latter (the reference path).  T > 0:
    :func:`evidence1d.physics.chain_thermal.convolve_thermal`.
    """
    if line_shape == "exact":
        return _convolve_exact(Ef, sf, wl, top, A, kT, n_nodes, n_panels, smooth, group)
    out = np.zeros(Ef.size)
    valid = A > 0
    if not valid.any():
        return out
    if kT > 0:
        def old_side(Es, s, wl_, top_, A_, kTa, boltz):
            return muller_edge_side(Es, s, wl_, top_, A_, kTa, boltz, method, n_nodes,
                                    n_panels)
        return convolve_thermal(Ef, sf, wl, top, A, kT, old_side, method, n_nodes, n_panels,
                                smooth)
    six = N_SIGMA * sf
    lo = Ef - six
    active = (top > lo) & (Ef + six > wl) & valid
    if smooth:
        easy = (lo >= wl) & (top > lo) & valid
        ix = np.flatnonzero(easy)
        if ix.size:
            out[ix] += muller_smooth_side(Ef[ix], sf[ix], wl[ix], (top[ix] - Ef[ix]) / sf[ix],
                                          A[ix])
        active &= ~easy
    ix = np.flatnonzero(active)
    if ix.size:
        out[ix] += muller_edge_side(Ef[ix], sf[ix], wl[ix], top[ix], A[ix], np.ones(ix.size),
                                    False, method, n_nodes, n_panels)
    return out


#: the thermal (conformal) edge applies where the lower edge lies within the thermal window:
#: weight w = 1/(1 + (ω_L / (2π k_BT))²), the T = 0 edge with detailed balance elsewhere
_EDGE_WINDOW = 2.0 * math.pi
_W_MIN = 1e-3


def _edge_blend(Ef, sf, wl, top, A, kT, settings, group=None):
    """One sheet with the finite-temperature edge confined to the Luttinger regime.

    The conformal finite-temperature form of the edge (:mod:`chain_thermal`) describes the
    chain where both ω and the edge ω_L are small against J, i.e. near q = π (Schulz 1986);
    applied at an edge far above k_BT it would smear the edge over ~5 k_BT regardless.  The
    spectrum is therefore w S_T + (1 − w) S_cold with w = 1/(1 + (ω_L/2πk_BT)²), a function
    of q only, and S_cold the T = 0 edge with detailed balance, S_cold(ω) = S_0(ω) for ω > 0
    and e^{−|ω|/k_BT} S_0(|ω|) for ω < 0, both convolved exactly (the gain-side image by
    completing the square in the Gaussian, so that a resolution wider than k_BT is right
    too); where 1 − w matters, ω ≥ ω_L ≳ 2πk_BT and S_0 differs from S_0 [n(ω) + 1] by less
    than e^{−2π}.  Both parts
    obey detailed balance point by point, so the blend does; w → 1 at q = π, w → 0 as T → 0.
    """
    if kT <= 0:
        return _convolve_sheet(Ef, sf, wl, top, A, kT, *settings, group=group)
    w = 1.0 / (1.0 + (wl / (_EDGE_WINDOW * kT)) ** 2)
    out = np.zeros_like(Ef)
    hot = np.flatnonzero(w > _W_MIN)
    if hot.size:
        out[hot] = w[hot] * _convolve_sheet(Ef[hot], sf[hot], wl[hot], top[hot], A[hot], kT,
                                            *settings,
                                            group=None if group is None else group[hot])
    cold = np.flatnonzero(w < 1.0 - _W_MIN)
    if cold.size:
        Ec, sc, wlc, topc, Ac = Ef[cold], sf[cold], wl[cold], top[cold], A[cold]
        gc = None if group is None else group[cold]
        s0 = _convolve_sheet(Ec, sc, wlc, topc, Ac, 0.0, *settings, group=gc)  # S_0, ω > 0
        # its gain-side image e^{−|ω|/k_BT} S_0(|ω|), ω < 0, convolved exactly by completing
        # the square: ∫ G_σ(E + x) e^{−x/k_BT} S_0(x) dx
        #   = e^{E/k_BT + σ²/2(k_BT)²} (G_σ ∗ S_0)(−E − σ²/k_BT)
        shift = sc * sc / kT
        r = np.flatnonzero(N_SIGMA * sc - Ec - shift > wlc)      # the window reaches S_0
        if r.size:
            gain = _convolve_sheet(-Ec[r] - shift[r], sc[r], wlc[r], topc[r], Ac[r], 0.0,
                                   *settings, group=None if gc is None else gc[r])
            s0[r] += np.exp(Ec[r] / kT + 0.5 * (sc[r] / kT) ** 2) * gain
        out[cold] += (1.0 - w[cold]) * s0
    return out


def _spectrum(q, E, sigma, T, J, delta, method, n_nodes, n_panels, smooth,
              line_shape="muller", thermal_edge="near_pi"):
    """:func:`spinon_spectrum` on checked arrays; ``smooth`` enables the Gauss–Hermite paths.

    The principal sheet, the π-shifted sheet (Δ > 1, |q| < π/2) and the line at the
    continuum bottom (Δ > 1, |q| < q_κ) of :func:`evidence1d.physics.chain.two_spinon_sheets`,
    each convolved on flat arrays of the (parameter set, point) pairs; the line is
    W [(n(a) + 1) G_σ(E − a) + n(a) G_σ(E + a)].
    """
    qr = reduced_phase(q)
    if qr.ndim == 1 and qr.size > 1:    # maps repeat each wavevector: edges once per q
        q_unique, inverse = np.unique(qr, return_inverse=True)
    else:
        q_unique, inverse = qr, None
    (wl, top, A, _), (wl_s, b, A_s, _), (a, W) = all_sheets(q_unique, J, delta)
    parts = [wl, top, A, wl_s, b, A_s, a, W]
    if inverse is not None:
        parts = [np.take(p, inverse, axis=-1) for p in parts]
    shape = np.broadcast_shapes(parts[0].shape, E.shape, sigma.shape)
    wl, top, A, wl_s, b, A_s, a, W, Ef, sf = (
        np.ascontiguousarray(np.broadcast_to(p, shape)).ravel() for p in parts + [E, sigma])
    # pairs of one parameter set and one wavevector share a sheet (the windows of a column
    # share one node grid where the rule allows it)
    if inverse is not None and len(shape) == 2:
        group = (np.arange(shape[0])[:, None] * q_unique.size + inverse).ravel()
    else:
        group = np.arange(Ef.size)
    kT = K_B_MEV * T
    settings = (method, int(n_nodes), int(n_panels), smooth, line_shape)
    sheet = _edge_blend if thermal_edge == "near_pi" else (
        lambda e, s_, lo, hi, amp, kT_, st, group: _convolve_sheet(e, s_, lo, hi, amp, kT_, *st,
                                                                 group=group))
    out = sheet(Ef, sf, wl, top, A, kT, settings, group)
    ix = np.flatnonzero(A_s > 0)
    if ix.size:
        out[ix] += sheet(Ef[ix], sf[ix], wl_s[ix], b[ix], A_s[ix], kT, settings, group[ix])
    ix = np.flatnonzero(W > 0)
    if ix.size:
        e, s, en = Ef[ix], sf[ix], a[ix]
        with np.errstate(over="ignore"):          # e^{a/k_BT} → ∞: no thermal weight
            bose = 1.0 / np.expm1(en / kT) if kT > 0 else 0.0
        g = lambda x: np.exp(-0.5 * (x / s) ** 2) / (math.sqrt(2.0 * math.pi) * s)
        out[ix] += W[ix] * ((1.0 + bose) * g(e - en) + bose * g(e + en))
    return out.reshape(shape)


def spinon_spectrum(q, E, sigma, T, J, delta, *, line_shape="exact", method="quadrature",
                    n_nodes=None, n_panels=3, thermal_edge="near_pi", thermal_damping=None,
                    with_undamped=False):
    """Resolution-convolved two-spinon S(q, E) per spin, S = χ''(n + 1)/π.

    T = 0: the model of :func:`evidence1d.physics.chain.two_spinon_sheets` on the
    energy-loss side (the principal sheet; for Δ > 1 also the π-shifted sheet and, below
    q_κ, the line at the continuum bottom), each sheet with the exact two-spinon profile
    A R(ω)/√(ω² − ω_L²) = (A/K₁) e^{−I(t)}/√(ω_U² − ω²) between its edges
    (:mod:`evidence1d.physics.chain_exact`; exact at Δ = 1, an approximation otherwise) or,
    with ``line_shape='muller'``, the Müller shape A/√(ω² − ω_L²); both have the exact first
    moment.  T > 0: S_T = A R_T(ω) Φ_T(ω)/(1 − e^{−ω/k_BT}) on both sides, with Φ_T the
    thermal Müller shape (:func:`evidence1d.physics.chain_thermal.thermal_shape`) and R_T
    the profile ratio with its lower-edge enhancement cut off at k_BT (R_T = 1 for the
    Müller shape); S(−ω) = e^{−ω/k_BT} S(ω) exactly.  The spectrum is convolved with the
    Gaussian resolution of width σ at each point (edges and the Müller step at ω_T
    handled with no ringing and no lost weight, whatever the point spacing).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    E : array_like, shape (n,)
        Energy transfer in meV (positive: neutron energy loss).
    sigma : array_like, shape (n,)
        Gaussian resolution standard deviation in meV (> 0).
    T : float
        Temperature in K (≥ 0; T = 0 gives no energy-gain side).  At T > 0 the accuracy
        is that of :func:`evidence1d.physics.chain_thermal.convolve_thermal`: about 5e-5
        of the peak for σ ≤ 1.25 k_BT (Gauss–Hermite on the signed axis), 1e-3 at most
        (as at T = 0 plus the thermal correction) otherwise; 'cumulative' about 2 %.
    J : array_like, shape (n_sets, 1)
        Exchange in meV, H = J Σ [SxSx + SySy + Δ SzSz], J > 0.
    delta : array_like, shape (n_sets, 1)
        Anisotropy Δ > −1.
    line_shape : {'exact', 'muller'}, optional
        Line shape of the two-spinon sheets (default 'exact').
    method : {'quadrature', 'cumulative'}, optional
        'quadrature' (default, fastest).  Müller shape: points whose ±6σ window reaches
        the singular edge ω_L take Gauss–Legendre in W over ``n_panels`` panels of the
        window (``n_nodes`` = 6 per panel; error ~2e-4 of the peak of S(q, ·), at most 5e-4
        measured over the default priors); points clear of ω_L by 6σ take a Gauss–Hermite
        rule (4 nodes, or 8 with the step at ω_T; error < 2.5e-5 of the local value).
        Exact profile (:mod:`evidence1d.physics.chain_exact_quadrature`): Gauss–Legendre
        in the Karbach variable t or in ω with a u-rule at ω_U on ``n_panels`` panels of
        ``n_nodes`` = 6, or Gauss–Hermite (4 nodes) for windows clear of both edges;
        measured error < 1e-4 of the peak at T = 0, < 2e-4 at T > 0 (against adaptive
        quadrature).  'cumulative' (Müller shape only): W tabulated on ``n_nodes`` = 24 nodes
        over the window (error ~0.3 %) and convolved by
        :func:`evidence1d.physics.neutron.convolve_cumulative` (piecewise-linear W, exact
        erf integrals) at every point.
    n_nodes, n_panels : int, optional
        Accuracy settings (see ``method``).
    thermal_edge : {'near_pi', 'everywhere'}, optional
        Where the finite-temperature (conformal) edge applies: 'near_pi' (default) blends
        it with the T = 0 edge with detailed balance by the weight w = 1/(1 + (ω_L/2πk_BT)²)
        of :func:`_edge_blend` (the conformal form is the chain's low-energy theory, valid
        where ω_L ≲ 2πk_BT, i.e. near q = π); 'everywhere' uses it at every q (kept for the
        tests of its quadrature).
    thermal_damping : array_like, shape (n_sets, 1) or scalar, optional
        Thermal damping b ≥ 0 (dimensionless): χ'' convolved with a Gaussian of standard
        deviation b k_BT, detailed balance kept (:mod:`evidence1d.physics.thermal_damping`);
        ``None`` or 0: undamped.
    with_undamped : bool, optional
        Also return the undamped spectrum at the same points (the damped one computes most
        of it on the way; :func:`evidence1d.physics.thermal_damping.damped_spectrum`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        S(q, E) in 1/meV per spin, three spin components summed, no form factor; with
        ``with_undamped`` the pair (damped, undamped).

    Raises
    ------
    InputError
        Unknown ``line_shape`` or ``method``, 'cumulative' with the exact profile,
        σ ≤ 0, T < 0.

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997) (exact profile); Müller et al., Phys.
    Rev. B 24, 1429 (1981); detailed balance, Lovesey (1984); thermal form, Schulz, Phys.
    Rev. B 34, 6372 (1986) (from memory); Gauss–Legendre and Gauss–Hermite quadrature,
    Abramowitz & Stegun 25.4.29, 25.4.46.
    """
    _check_line_shape(line_shape, "spinon_spectrum")
    if method not in ("quadrature", "cumulative"):
        raise InputError(f"the 'method' parameter of spinon_spectrum must be 'quadrature' "
                         f"or 'cumulative'; got {method!r} instead")
    if method == "cumulative" and line_shape != "muller":
        raise InputError("the 'cumulative' method of spinon_spectrum is available for "
                         "line_shape 'muller' only; use method 'quadrature'")
    if n_nodes is None:
        n_nodes = 6 if method == "quadrature" else 24
    q = np.asarray(q, dtype=float)
    E = np.asarray(E, dtype=float)
    sigma = np.asarray(sigma, dtype=float)
    if np.any(~(sigma > 0)):
        raise InputError("the resolution sigma must be positive (meV)")
    T = _check_temperature(T)
    if thermal_edge not in ("near_pi", "everywhere"):
        raise InputError(f"the 'thermal_edge' parameter of spinon_spectrum must be 'near_pi' "
                         f"or 'everywhere'; got {thermal_edge!r} instead")
    smooth = method == "quadrature"
    if thermal_damping is None:
        out = _spectrum(q, E, sigma, T, J, delta, method, n_nodes, n_panels, smooth=smooth,
                        line_shape=line_shape, thermal_edge=thermal_edge)
        return (out, out) if with_undamped else out
    J = np.asarray(J, dtype=float).reshape(-1, 1)
    delta = np.asarray(delta, dtype=float).reshape(-1, 1)
    b = np.broadcast_to(np.asarray(thermal_damping, dtype=float).reshape(-1, 1), J.shape)

    def undamped(E_, s_, rows):
        return _spectrum(q[rows], E_, s_, T, J, delta, method, n_nodes, n_panels,
                         smooth=smooth, line_shape=line_shape, thermal_edge=thermal_edge)

    return damped_spectrum(undamped, E, sigma, T, b, with_undamped=with_undamped)


def _check_line_shape(line_shape, where):
    if line_shape not in LINE_SHAPES:
        raise InputError(f"the 'line_shape' of {where} must be 'exact' or 'muller'; got "
                         f"{line_shape!r} instead")


def _check_temperature(T):
    T = float(T)
    if not (T >= 0) or not math.isfinite(T):
        raise InputError(f"the temperature must be finite and >= 0 K; got {T!r}")
    return T


def _cold_density(a, lo, hi, line_shape):
    """T = 0 density per unit amplitude at ω = a ≥ 0 between the edges."""
    if line_shape == "exact":
        return chain_exact.exact_profile(a, lo, hi)
    inside = (a > lo) & (a <= hi)
    return np.where(inside, 1.0 / np.sqrt(np.where(inside, a * a - lo ** 2, 1.0)), 0.0)


def spinon_density(q, omega, T, J, delta, *, line_shape="exact", thermal_edge="near_pi"):
    """Unconvolved model S(q, ω) = χ''(n + 1)/π per spin, both sheets (no bottom line).

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0.  Per sheet (edges ω_L, floored, and
    ω_T or b; Müller amplitude A of the exact first moment): T = 0, A R(ω)/√(ω² − ω_L²)
    (exact profile) or A/√(ω² − ω_L²) (Müller) on (ω_L, ω_T); T > 0, w times A R_T(ω) D_T(ω)
    or A D_T(ω) for |ω| ≤ ω_T, D_T = :func:`~evidence1d.physics.chain_thermal.thermal_density`,
    plus 1 − w times the T = 0 density with detailed balance, w = 1/(1 + (ω_L/2πk_BT)²) (the
    thermal edge confined to the Luttinger regime near q = π; see :func:`_edge_blend`).
    The line W δ(ω − a) of Δ > 1 below q_κ is not included.

    Parameters
    ----------
    q, omega : array_like, shape (n,)
        Chain phase (rad) and energy transfer (meV, any sign).
    T : float
        Temperature in K (≥ 0).
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ.
    line_shape : {'exact', 'muller'}, optional
    thermal_edge : {'near_pi', 'everywhere'}, optional
        As :func:`spinon_spectrum` ('everywhere': w = 1).

    Returns
    -------
    ndarray, shape (n_sets, n)
        In 1/meV, three spin components summed.

    References
    ----------
    Karbach et al., Phys. Rev. B 55, 12510 (1997); Müller et al., Phys. Rev. B 24, 1429
    (1981); Schulz, Phys. Rev. B 34, 6372 (1986) (from memory).
    """
    _check_line_shape(line_shape, "spinon_density")
    if thermal_edge not in ("near_pi", "everywhere"):
        raise InputError(f"the 'thermal_edge' parameter of spinon_density must be 'near_pi' "
                         f"or 'everywhere'; got {thermal_edge!r} instead")
    T = _check_temperature(T)
    kT = K_B_MEV * T
    omega = np.asarray(omega, dtype=float)
    (wl, top, A, _), (wl_s, b, A_s, _), _ = all_sheets(q, J, delta)
    out = 0.0
    for lo, hi, amp in ((wl, top, A), (wl_s, b, A_s)):
        ok = amp > 0
        lo_, hi_ = np.where(ok, lo, 1.0), np.where(ok, hi, 2.0)
        cold = _cold_density(np.abs(omega), lo_, hi_, line_shape)
        if kT > 0:
            dens = thermal_density(omega, lo_, kT)
            if line_shape == "exact":
                dens = dens * chain_exact.profile_ratio(omega, lo_, hi_, kT)
            dens = np.where(np.abs(omega) <= hi_, dens, 0.0)
            w = (1.0 / (1.0 + (lo_ / (_EDGE_WINDOW * kT)) ** 2)     # see _edge_blend
                 if thermal_edge == "near_pi" else 1.0)
            cold = cold * np.where(omega >= 0, 1.0, np.exp(-np.abs(omega) / kT))  # gain side
            dens = w * dens + (1.0 - w) * cold
        else:
            dens = np.where(omega > 0, cold, 0.0)
        out = out + np.where(ok, amp * dens, 0.0)
    return out
