"""Resolution-convolved spectrum of weakly coupled S = 1/2 XXZ chains, above and below T_N.

Hamiltonian and the random-phase approximation as in :mod:`evidence1d.physics.coupled_chain`
(H = Σ_⟨ij⟩ J_ij [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J along the chain, J_⊥ to z_⊥ neighbouring chains);
energies meV, temperatures K, phases q = Q_∥ d, q_a, q_b in radians.

Above T_N
---------
The dressed spectrum is S_1D(q, ω) F(Q, ω) with the dressing factor
F = Σ_a m_a f_a/|1 + κ_a J_⊥(Q_⊥) f_a χ_1D(q, ω)|² (m_zz = 1, m_xx = 2; F = 1 at J_⊥ = 0),
plus the poles below the continuum (:func:`~evidence1d.physics.coupled_chain.rpa_poles`)
and the antibound states above it.
S_1D has integrable inverse-square-root edges that no grid resolves, so the convolution with
the Gaussian resolution G_σ is split as

    G_σ ∗ (S_1D F) = F_e G_σ ∗ S_1D + G_σ ∗ [(1 − φ) S_1D (F − F_e)]_grid + strips + poles,

* F_e = F(ω_L + h₀), the dressing one grid step h₀ above the lower edge ω_L (any constant
  splits exactly; this one keeps the bracket S_1D (F − F_e) small next to the edge);
* "strips" (:mod:`evidence1d.physics.coupled_chain_strips`): three strips of the bracket are
  integrated exactly, by 4-point Gauss–Legendre quadrature in t = √|ω − ω_x| on panels
  graded towards their edge ω_x (down to 10⁻⁸ of the strip), each with a share φ_k that is
  1 on the third next to its edge and falls to 0 by a quintic smoothstep (``taper``); the
  grid takes the product of the complements, so the shares add up to one and the grid's
  integrand vanishes smoothly towards each edge: no boundary of the split moves past the
  nodes as the edges move (a hard cut made the spectrum, and the likelihood by tenths of a
  nat, jump with J and Δ).  Above ω_L: the dip of F where |χ_1D| diverges (on a scale
  ∝ J_⊥²), over 3h₀ or, for a band narrower than 5h₀ (small q), the whole band, whose
  dressing the grid cannot resolve (``upper_width``); below ω_L (T > 0, ``BELOW`` h₀): the
  chain's thermal weight meets a χ'_1D growing towards the edge (as 1/(ω_L − ω) below a
  narrow band); below the top ω_U (``TOP`` h₀): χ'_1D falls steeply and 1 + κJ_⊥ f χ'_1D
  can approach 0.  Each panel's integral is placed at the centroid of |its integrand|
  (gain side with detailed balance);
* G_σ ∗ S_1D, the spinon family's exact convolution
  (:func:`evidence1d.physics.chain_spectrum.spinon_spectrum`, edges handled exactly), so
  that J_⊥ = 0 gives the spinon family's spectrum to rounding;
* the bracket on the shared energy grid of :class:`evidence1d.physics.resolution_grid.RowGrid`
  (:data:`NODES_PER_SIGMA` nodes per σ for the points within :data:`FINE_REACH` σ of a
  feature of the bracket — ω = 0, the sheets' edges and tops, the Δ > 1 line, the poles,
  the threshold below T_N — and a quarter of them, every fourth node, for the others, where
  the bracket is smooth over the window; detailed balance S(−ω) = e^{−ω/k_BT} S(ω) at the
  gain-side nodes).  The chain's density and χ'_1D are evaluated only at the (set, node)
  pairs that the points' rules read and where the bracket can be non-zero;
* "poles": each pole whose Lorentzian half width Γ is below half of
  w₀ = ½ min(ω_p, ω_L − ω_p) (a sharp bound state, unresolved by any grid) has its
  component's S_1D F_a integrated exactly over the window [ω_p − 2h₀, min(ω_p + 2h₀, ω_L)]
  (two-point Gauss–Legendre on panels uniform in ln|ω − ω_p| down to Γ/100, so the
  Lorentzian core of any width and the remainder of the linearisation are both resolved;
  for Γ = 0, at T = 0, the δ-function's residue Z (n + 1) is added), placed at ±ω_p
  (gain side with e^{−ω/k_BT}) and left out of the grid; broader poles (near the ordering
  wavevector close to T_N, overdamped by the chain's thermal weight) stay in the grid
  function, which is the full random-phase response there.
* "antibound": where κ_a J_⊥(Q_⊥) > 0 and 1 + κ_a J_⊥ f_a χ'_1D < 0 at the top, the
  component's δ-mode above the top (χ''_1D = 0 there), found and weighted as the bound
  states (:func:`_antibound`).

Below T_N
---------
The ordered-phase treatment of :mod:`evidence1d.physics.coupled_chain_ordered` (Schulz 1996;
Essler, Tsvelik & Delfino 1997, from memory): two transverse modes and the longitudinal one
as Gaussians of weights w (n + 1) and w n at ±ω_m, and the chain's continuum above the
two-soliton threshold ω_c, convolved as above with F = Θ(|ω| − ω_c) (F_e = 1 when ω_c lies
within the first step above ω_L, whose part below ω_c is then subtracted exactly, else 0).

Accuracy (tests, against adaptive quadrature of the pointwise response with the δ-poles
added analytically): within 1.5 % of the peak above T_N at 6 nodes per σ, also with a pole
within 10⁻³ meV of a thermally rounded edge (5 % at 3 nodes per σ, where the dressing's
variation near the edge is under-resolved); 4e-5 of the peak at the points on the coarse
rule (and the same against the fine rule everywhere); a band narrower than the grid step at
small q, with the antibound state above it, within 0.1 % of the peak (J_⊥ = 0.05 meV), and
its dressing at J_⊥ = 2e-3 meV within 1.2 % of itself, smooth in J; the step at ω_c below
T_N costs O(h₀/σ) of the continuum's value there (10⁻⁴ of the peak far above it).  The
π-shifted sheet of Δ > 1 (its own edges)
and the Δ > 1 line at the continuum bottom (dressed by the constant F_e; its bound state is
a pole) are approximations.

References
----------
D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
F. H. L. Essler, A. M. Tsvelik & G. Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter* (Clarendon, 1984)
(S = χ''(n + 1)/π, detailed balance).
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 25.4.29
(Gauss–Legendre).
"""
from __future__ import annotations

import math

import numpy as np

from ..gauss_rules import gauss_legendre
from ..units import K_B_MEV
from . import chain_exact
from .chain import all_sheets
from .chain_spectrum import _EDGE_WINDOW, _cold_density, spinon_spectrum
from .chain_thermal import _density as _thermal_density
from .chain_thermal import thermal_density
from .coupled_chain import _check, _chi2, _couplings, _Sheets, illinois_root, rpa_poles
from .coupled_chain_ordered import ordered_modes, ordered_state, two_soliton_threshold
from .coupled_chain_thermo import neel_temperature
from .magnon import check_interchain
from .neutron import gaussian
from .coupled_chain_strips import BELOW as _BELOW, TOP as _TOP
from .coupled_chain_strips import edge_gaussians as _edge_gaussians
from .coupled_chain_strips import edge_integral as _edge_integral
from .coupled_chain_strips import strip as _strip, strip_gaussians as _strip_gaussians
from .coupled_chain_strips import taper as _taper, upper_width as _upper_width
from .resolution_grid import RowGrid

__all__ = ["coupled_spectrum", "spectrum_grid", "NODES_PER_SIGMA"]

#: a pole is sharp (its window integrated exactly, placed at ω_p) when Γ < this × w₀
SHARP = 0.5
#: energy nodes per resolution σ: the dressing varies on scales below σ near the edge and
#: the poles (measured: 1.5 % of the peak at 6, 5 % at 3, for a pole 5e-4 meV below a
#: thermally rounded edge)
NODES_PER_SIGMA = 6.0
#: points farther than this many σ (plus 2h₀) from every feature take the coarse rule of
#: the grid (NODES_PER_SIGMA/4 per σ)
FINE_REACH = 5.0


def spectrum_grid(q, q_a, q_b, E, sigma):
    """The rows (distinct wavevectors) and the energy grid of a set of points.

    Parameters
    ----------
    q, q_a, q_b : array_like, shape (n,)
        Chain and interchain phases in radians.
    E, sigma : array_like, shape (n,)
        Energy transfer and Gaussian resolution standard deviation in meV.

    Returns
    -------
    rows : ndarray, shape (n_rows, 3)
        The distinct (q, q_a, q_b).
    grid : RowGrid
        Nodes per row and the convolution matrix (the row of each point: ``grid.point_row``).
    """
    q, q_a, q_b, E, sigma = np.broadcast_arrays(*(np.asarray(x, float).ravel()
                                                  for x in (q, q_a, q_b, E, sigma)))
    rows, inverse = np.unique(np.stack([q, q_a, q_b], -1), axis=0, return_inverse=True)
    return rows, RowGrid(inverse.ravel(), E, sigma, nodes_per_sigma=NODES_PER_SIGMA)


def _row_sheets(rq, J, delta):
    """Per set and row, each (n_sets, n_rows): the two sheets (ω_L, ω_top, A), the highest
    upper edge (above which the chain's density vanishes), the lowest edge (ω_L or the
    Δ > 1 line's energy; 0 where neither) and the line (energy, weight); meV."""
    (wl, top, A, _), (wl_s, b, A_s, _), line = all_sheets(rq, J, delta)
    high = np.maximum(np.where(A > 0, top, 0.0), np.where(A_s > 0, b, 0.0))
    edge = np.minimum(np.where(wl > 0, wl, np.inf), np.where(line[1] > 0, line[0], np.inf))
    return ((wl, top, A), (wl_s, b, A_s)), high, np.where(np.isfinite(edge), edge, 0.0), line


def _fine(grid, features):
    """True (n_sets, n) where a point takes the fine rule of the grid: a feature of the
    grid function (an energy per set and row in meV, NaN for none; ω = 0 always) lies
    within :data:`FINE_REACH` σ + 2h₀ of ±E."""
    pr, E = grid.point_row, np.abs(grid.point_energy)
    reach = FINE_REACH * grid.point_sigma + 2.0 * grid.base_step
    fine = E <= reach
    for f in features:
        with np.errstate(invalid="ignore"):
            fine = fine | (np.abs(E - f[:, pr]) <= reach)
    return np.broadcast_to(fine, (features[0].shape[0], E.size))


def _sheet_features(sheets, line, edge):
    """The edges of both sheets, the Δ > 1 line's energy and the lowest edge (whose first
    grid step is taken out), NaN where absent, meV."""
    out = [np.where(amp > 0, x, np.nan) for lo, hi, amp in sheets for x in (lo, hi)]
    return out + [np.where(line[1] > 0, line[0], np.nan), np.where(edge > 0, edge, np.nan)]


def _density(sheets, si, ci, a, kT, ls, te):
    """The chain's S_1D at loss-side energies a ≥ 0 (meV) of (set, row) pairs (flat arrays),
    1/meV: :func:`evidence1d.physics.chain_spectrum.spinon_density` term by term (the same
    numbers), with the sheets of each set and row computed once and each sheet evaluated
    only where present; for the exact line shape at T > 0 the T = 0 and the thermal
    profile ratios share their reduced energies (:func:`_exact_parts`)."""
    out = np.zeros(a.shape)
    for lo, hi, amp in sheets:
        A = amp[si, ci]
        k = np.flatnonzero(A > 0)
        if not k.size:
            continue
        sk, ck, x = si[k], ci[k], a[k]
        lo_, hi_ = lo[sk, ck], hi[sk, ck]
        if kT > 0 and ls == "exact":
            cold, dens = _exact_parts(x, lo_, hi_, kT)
        else:
            cold = _cold_density(x, lo_, hi_, ls)
        if kT > 0:
            if ls != "exact":
                dens = thermal_density(x, lo_, kT)
            dens = np.where(x <= hi_, dens, 0.0)
            w = 1.0 / (1.0 + (lo_ / (_EDGE_WINDOW * kT)) ** 2) if te == "near_pi" else 1.0
            dens = w * dens + (1.0 - w) * cold
        else:
            dens = np.where(x > 0, cold, 0.0)
        out[k] += A[k] * dens
    return out


def _exact_parts(x, lo, hi, kT):
    """The exact line shape's T = 0 density and thermal density per unit amplitude at
    energies x ≥ 0 (meV) between floored edges lo > 0 and hi, 1/meV:
    :func:`~evidence1d.physics.chain_exact.exact_profile` and
    :func:`~evidence1d.physics.chain_thermal.thermal_density` times
    :func:`~evidence1d.physics.chain_exact.profile_ratio` (the same numbers), with the
    reduced energies y² and 1 − y² computed once for both."""
    vmax2 = (hi - lo) * (hi + lo)
    safe = np.where(vmax2 > 0, vmax2, 1.0)
    v2 = (x - lo) * (x + lo)
    y2 = v2 / safe
    omy2 = (hi - x) * (hi + x) / safe
    live = vmax2 > 0
    r0 = np.where(live, chain_exact._ratio_xy(y2, omy2), 0.0)
    rt = np.where(live, chain_exact._ratio_xy(y2, omy2, chain_exact._yc2(lo, safe, kT)), 0.0)
    inside = (x > lo) & (x < hi)
    cold = np.where(inside, r0 / np.sqrt(np.where(inside, v2, 1.0)), 0.0)
    return cold, _thermal_density(x, lo, kT) * rt


def _real(sh, a, si, ci):
    """χ'_1D at energies a ≥ 0 (meV) of (set, row) pairs, 1/meV: ``_Sheets.real`` of
    :mod:`evidence1d.physics.coupled_chain` on flat pairs (the same numbers)."""
    qi = sh.iq[ci]
    out = np.zeros(a.shape)
    for sten, hi, amp in sh.parts:
        A = amp[si, qi]
        k = np.flatnonzero(A > 0)
        if k.size:
            sub = (si[k], qi[k])
            out[k] += math.pi * A[k] * sten.real(a[k] / hi[sub], sub) / hi[sub]
    la, lw = sh.line[0][si, qi], sh.line[1][si, qi]
    with np.errstate(divide="ignore", invalid="ignore"):
        line = 2.0 * la * lw / ((la - a) * (la + a))
    return out + np.where(lw > 0, line, 0.0)


def _bose(a, kT):
    """n(a) + 1 and n(a) at energies a > 0 (1 and 0 at T = 0)."""
    if kT <= 0:
        return np.ones_like(a), np.zeros_like(a)
    n = 1.0 / np.expm1(np.maximum(a, 1e-300) / kT)
    return n + 1.0, n


def _grid_values(grid, shape, si, ni, vals, kT):
    """Loss-side values at (set, node) pairs onto the signed grid (n_sets, m), zero
    elsewhere; detailed balance S(−ω) = e^{−ω/k_BT} S(ω) at the gain-side nodes."""
    w = grid.node_energy[ni]
    X = np.zeros(shape)
    X[si, ni] = (np.where(w < 0, np.exp(-np.abs(w) / kT), 1.0) * vals if kT > 0
                 else np.where(w < 0, 0.0, vals))
    return X


def _paramagnetic(rows, grid, chain, T, J, Jp, delta, z_perp, ls, te):
    kT = K_B_MEV * T
    rq, rqa, rqb = rows.T
    nr, a = grid.node_row, np.abs(grid.node_energy)
    sheets, high, edge, line = _row_sheets(rq, J, delta)
    # one (r, θ) contraction per row and set, then 4 table reads per energy
    sh_rows = _Sheets(rq, J, delta, kT, ls, te, "table", contract=True)
    coup = _couplings(rq, rqa, rqb, J, Jp, delta, z_perp)

    def dressing(om, si, ci, keys=("zz", "xx")):   # S_1D and F at flat (set, row) pairs
        S = _density(sheets, si, ci, om, kT, ls, te)
        c1, c2 = _real(sh_rows, om, si, ci), _chi2(S, om, kT)
        out = []
        for m, f, g in (coup[k] for k in keys):     # m f/|1 + κJ_⊥ f χ|², in real numbers
            f_ = f[si, ci]
            gf = g[si, ci] * f_
            out.append(m * f_ / ((1.0 + gf * c1) ** 2 + (gf * c2) ** 2))
        return S, out

    # F_e: the dressing one grid step above the edge (any constant splits exactly; this one
    # keeps S_1D (F − F_e) small next to the edge)
    has_edge = edge > 0
    h = grid.base_step
    si, ci = np.nonzero(has_edge)
    F_e = np.ones(edge.shape)
    F_e[si, ci] = sum(dressing(edge[si, ci] + h, si, ci)[1])

    def dip(om, s_, c_):
        S, F = dressing(om, s_, c_)
        return S * (sum(F) - F_e[s_, c_])

    poles = _poles(rows, coup, T, J, Jp, delta, z_perp, ls, te)
    # the strips on both sides of the edge, integrated exactly with the taper φ; the grid
    # takes the complement 1 − φ, which vanishes smoothly towards the edge, so no boundary
    # of the split moves past the grid's nodes as the edge moves (a hard cut made the
    # spectrum, and the likelihood by tenths of a nat, jump with J and Δ).  Above: the dip
    # of the dressing where |χ_1D| diverges (on a scale ∝ J_⊥²) and, for a band narrower
    # than a few grid steps (small q), the whole band, whose dressing the grid cannot
    # resolve.  Below (T > 0): the chain's thermal weight meets a χ'_1D that grows towards
    # the edge (as 1/(ω_L − ω) below a narrow band); not where a sharp pole's window,
    # integrated exactly already, reaches into it.
    band = np.where(has_edge, high - edge, 0.0)
    above = _upper_width(band, h)
    below = np.minimum(_BELOW * h, edge)
    if kT > 0:
        for key, pl in poles.items():
            wp = np.nan_to_num(pl["omega"], nan=0.0)
            w0 = 0.5 * np.minimum(wp, edge - wp)
            sharp = (pl["weight"] > 0) & (w0 > 0) & (pl["width"] < SHARP * w0)
            below = np.where(sharp & (wp + _WINDOW * h > edge - below), 0.0, below)
    else:
        below = np.zeros(edge.shape)               # no chain weight below the edge at T = 0
    up_w, up_at = _strip(edge, above, np.minimum(above, band), has_edge & (band > 0), dip, 1.0)
    lo_w, lo_at = _strip(edge, below, below, has_edge & (below > 0), dip, -1.0)
    # and the strip below the top, where χ'_1D falls steeply and, as J_⊥(Q_⊥) > 0 grows,
    # 1 + κJ_⊥ f χ'_1D approaches 0 (the antibound state forming): its share φ_t (1 − φ_up),
    # so that the grid's share (1 − φ_up)(1 − φ_t) and the strips' add up to one
    top_len = np.where(has_edge, np.minimum(_TOP * h, band), 0.0)
    top_w_ = np.full(edge.shape, _TOP * h)

    def dip_top(om, s_, c_):
        return dip(om, s_, c_) * (1.0 - _taper((om - edge[s_, c_]) / above[s_, c_]))

    tp_w, tp_at = _strip(high, top_w_, top_len, has_edge & (top_len > 0), dip_top, -1.0)
    # the grid function S_1D (F − F_e) where S_1D ≠ 0 (|ω| up to the top), times 1 − φ
    # within the strips, at the nodes that the points' rules read
    fine = _fine(grid, _sheet_features(sheets, line, edge)
                 + [p["omega"] for p in poles.values()])
    e, eb, ea = edge[:, nr], below[:, nr], above[:, nr]
    si, ni = np.nonzero(grid.needed(fine) & (a <= high[:, nr] - _TOP * h / 3.0)
                        & ~((a > e - eb / 3.0) & (a < e + ea / 3.0)))
    ci, x = nr[ni], a[ni]
    S, F = dressing(x, si, ci)
    dist = x - edge[si, ci]
    with np.errstate(divide="ignore", invalid="ignore"):
        keep = np.where(dist < 0, 1.0 - _taper(-dist / below[si, ci]),
                        (1.0 - _taper(dist / above[si, ci]))
                        * (1.0 - _taper((high[si, ci] - x) / (_TOP * h))))
    keep = np.where(np.isfinite(keep) & has_edge[si, ci], keep, 1.0)
    S = S * keep                                   # the grid's share next to the edge
    vals = -F_e[si, ci] * S
    extra = 0.0
    for (key, pl), Fk in zip(poles.items(), F):
        wp = np.nan_to_num(pl["omega"], nan=0.0)
        w0 = 0.5 * np.minimum(wp, edge - wp)
        sharp = (pl["weight"] > 0) & (w0 > 0) & (pl["width"] < SHARP * w0)
        if sharp.any():
            lo = np.where(sharp, np.maximum(wp - _WINDOW * h, 0.5 * wp), 0.0)
            hi = np.where(sharp, np.minimum(wp + _WINDOW * h, edge), 0.0)
            Fk = np.where((x >= lo[si, ci]) & (x < hi[si, ci]), 0.0, Fk)
            gain, loss = _pole_window(wp, lo, hi, pl, sharp, kT,
                                      lambda om, s_, c_: dressing(om, s_, c_, (key,)))
            extra = extra + _pair(grid, wp, loss, gain)
        vals = vals + S * Fk
    X = _grid_values(grid, (J.shape[0], grid.size), si, ni, vals, kT)
    for loss, gain, wp in _antibound(sh_rows, coup, high, kT).values():
        if np.any(loss > 0):
            extra = extra + _pair(grid, wp, loss, gain)
    return (F_e[:, grid.point_row] * chain + grid.convolve(X, fine) + extra
            + _strip_gaussians(grid, np.concatenate([up_at, lo_at, tp_at], -1),
                               np.concatenate([up_w, lo_w, tp_w], -1), kT))


#: false-position steps of the antibound search (as the bound states':
#: :func:`~evidence1d.physics.coupled_chain.rpa_poles`)
_N_ANTIBOUND = 24


def _antibound(sh, coup, high, kT):
    """The antibound states above the continuum, per component: where κ_a J_⊥(Q_⊥) > 0 the
    real part of D_a = 1 + κ_a J_⊥(Q_⊥) f_a χ_1D vanishes at one ω_p above the highest upper
    edge ω_U if D_a(ω_U) < 0 (there χ''_1D = 0, and χ'_1D < 0 rises monotonically to 0), and
    the component carries a δ-function mode of weight Z = 1/(κ_a² J_⊥(Q_⊥)² f_a ∂χ'_1D/∂ω)
    (the bound state's residue, Scalapino, Imry & Pincus 1975, mirrored above the band).

    Found per (set, row) by the Illinois false-position method on ln(ω − ω_U) for
    asinh(χ'/χ'_p − 1), χ'_p = −1/(κJ_⊥f), between 10⁻¹³ and e⁵ ω_U above the top; ∂χ'/∂ω by a
    centred difference.  Returns {key: (loss, gain, ω_p)}, each (n_sets, n_rows): the
    weights m Z (n + 1) at +ω_p and m Z n at −ω_p (m the component's multiplicity), 0 where
    there is no state."""
    out = {}
    for key in ("zz", "xx"):
        m, f, g = coup[key]
        gf = g * f
        live = (gf > 0) & (high > 0)
        si, ci = np.nonzero(live)
        loss, gain, wp_all = (np.zeros(high.shape) for _ in range(3))
        if si.size:
            top, target = high[si, ci], -1.0 / gf[si, ci]

            def F(x, s_=si, c_=ci, t_=top, tg=target):
                return np.arcsinh(_real(sh, t_ + np.exp(x), s_, c_) / tg - 1.0)

            a, b = np.log(top) - 30.0, np.log(top) + 5.0
            fa, fb = F(a), F(b)
            ok = (fa > 0) & (fb < 0)
            si, ci, top, target = si[ok], ci[ok], top[ok], target[ok]
            a, b, fa, fb = a[ok], b[ok], fa[ok], fb[ok]
            if si.size:
                d = np.exp(illinois_root(lambda x: F(x, si, ci, top, target), a, b, fa, fb,
                                         _N_ANTIBOUND))
                wp = top + d
                step = np.maximum(1e-5 * d, 1e-12 * top)
                slope = (_real(sh, wp + step, si, ci) - _real(sh, wp - step, si, ci)) / (2 * step)
                good = slope > 0
                Z = np.where(good, 1.0 / (g[si, ci] ** 2 * f[si, ci]
                                          * np.where(good, slope, 1.0)), 0.0)
                nb1, nb = _bose(wp, kT)
                loss[si, ci], gain[si, ci], wp_all[si, ci] = m * Z * nb1, m * Z * nb, wp
        out[key] = (loss, gain, wp_all)
    return out


def _poles(rows, coup, T, J, Jp, delta, z_perp, ls, te):
    """:func:`~evidence1d.physics.coupled_chain.rpa_poles` per row, searched only in the rows
    where some set has κ_a J_⊥(Q_⊥) < 0 (elsewhere D_a has no zero below the edge)."""
    rq, rqa, rqb = rows.T
    cand = np.flatnonzero(np.any((coup["zz"][2] < 0) | (coup["xx"][2] < 0), axis=0))
    out = {key: {"omega": np.full(J.shape[:1] + rq.shape, np.nan),
                 "weight": np.zeros(J.shape[:1] + rq.shape),
                 "width": np.zeros(J.shape[:1] + rq.shape)} for key in ("zz", "xx")}
    if cand.size:
        found = rpa_poles(rq[cand], rqa[cand], rqb[cand], T, J, Jp, delta, z_perp=z_perp,
                          line_shape=ls, thermal_edge=te)
        for key, res in found.items():
            for k, v in res.items():
                out[key][k][:, cand] = v
    return out


#: half width of the window around a sharp pole, in grid steps h₀
_WINDOW = 2.0
_LOG_PANELS = 12             # panels in ln|ω − ω_p| on each side of a sharp pole


def _pole_window(wp, lo, hi, pole, sharp, kT, dressing):
    """∫ S_1D F_a dω over [lo, hi] around a sharp pole (loss side, and with e^{−ω/k_BT}),
    plus the δ-function's Z (n + 1), Z n where the pole has no width (T = 0).

    Two-point Gauss–Legendre on panels uniform in ln|ω − ω_p| from 10⁻² Γ (or 10⁻⁹ of the
    window) to the window's ends on both sides, one panel across the core: the Lorentzian
    of any width and the 1/(ω − ω_p) remainder of the linearisation are both smooth there.
    Evaluated at the sharp (set, row) pairs only.
    """
    si, ci = np.nonzero(sharp)
    wp_, lo_, hi_ = wp[si, ci], lo[si, ci], hi[si, ci]
    G = pole["width"][si, ci]
    x0 = np.maximum(1e-2 * G, 1e-9 * np.maximum(hi_ - lo_, 1e-300))
    t, wt = gauss_legendre(2)
    nodes, weights = [wp_ + x0 * tk for tk in t], [x0 * wk for wk in wt]
    for side, end in ((1.0, hi_ - wp_), (-1.0, wp_ - lo_)):
        L0, L1 = np.log(x0), np.log(np.maximum(end, 2.0 * x0))
        edges = np.linspace(0.0, 1.0, _LOG_PANELS + 1)
        for u0, u1 in zip(edges[:-1], edges[1:]):
            for tk, wk in zip(t, wt):
                u = u0 + (u1 - u0) * 0.5 * (tk + 1.0)
                x = np.exp(L0 + (L1 - L0) * u)
                nodes.append(wp_ + side * x)
                weights.append(x * (L1 - L0) * (u1 - u0) * 0.5 * wk)
    om = np.stack(nodes, -1)                                 # (k, K)
    K = om.shape[-1]
    S, F = dressing(om.ravel(), np.repeat(si, K), np.repeat(ci, K))
    val = (S * F[0]).reshape(om.shape) * np.stack(weights, -1)
    loss, gain = np.zeros(wp.shape), np.zeros(wp.shape)
    loss[si, ci] = val.sum(-1)
    if kT > 0:
        gain[si, ci] = (val * np.exp(-om / kT)).sum(-1)
    nb1, nb = _bose(np.where(sharp, wp, 1.0), kT)
    delta_part = np.where(sharp & (pole["width"] <= 0), pole["weight"], 0.0)
    return gain + delta_part * nb, loss + delta_part * nb1


def _pair(grid, wp, loss, gain):
    """Weights ``loss`` at +ω_p and ``gain`` at −ω_p per row, resolution-broadened."""
    pr, E, s = grid.point_row, grid.point_energy, grid.point_sigma
    c = np.where(loss[:, pr] != 0, wp[:, pr], 1.0)
    return loss[:, pr] * gaussian(E - c, s) + gain[:, pr] * gaussian(E + c, s)


def _ordered(rows, grid, chain, pts, T, J, Jp, delta, z_perp, ls, te):
    kT = K_B_MEV * T
    rq = rows[:, 0]
    nr, a = grid.node_row, np.abs(grid.node_energy)
    st = ordered_state(T, J, Jp, delta, z_perp=z_perp, line_shape=ls, thermal_edge=te)
    wc = two_soliton_threshold(rq, st)                      # (n_sets, n_rows)
    sheets, high, edge, line = _row_sheets(rq, J, delta)
    has_edge = edge > 0
    h = grid.base_step
    # F = Θ(|ω| − ω_c): the plateau above the first step is 1 if ω_c lies below its end;
    # the part of the step below ω_c is then taken out exactly
    F_e = np.where(~has_edge | (wc < edge + h), 1.0, 0.0)
    cut = np.sqrt(np.clip(wc - edge, 0.0, h))
    D = -_edge_integral(edge, cut, has_edge & (F_e > 0) & (cut > 0),
                        lambda om, s_, c_: _density(sheets, s_, c_, om, kT, ls, te))
    out = F_e[:, grid.point_row] * chain + _edge_gaussians(grid, edge, D, kT)
    # only (set, node) pairs where the weight Θ(|ω| − ω_c) − F_e is not 0 and the chain
    # has weight (|ω| up to the top), outside the first step above the edge, at the nodes
    # the points' rules read: strongly ordered sets (thresholds beyond the data) cost
    # nothing here
    reach = np.maximum.reduceat(a, np.flatnonzero(np.diff(nr, prepend=-1)))  # per row
    act = np.flatnonzero(np.any((F_e > 0) | (wc < reach), axis=1))
    if act.size:
        sheets_a = tuple(tuple(x[act] for x in sh) for sh in sheets)
        fine = _fine(grid, _sheet_features(sheets_a, tuple(x[act] for x in line),
                                           edge[act]) + [wc[act]])
        e, c = edge[act][:, nr], wc[act][:, nr]
        weight = (a > c).astype(float) - F_e[act][:, nr]
        si, ni = np.nonzero((weight != 0.0) & (a <= high[act][:, nr])
                            & ~((a >= e) & (a < e + h)) & grid.needed(fine))
        vals = _density(sheets_a, si, nr[ni], a[ni], kT, ls, te) * weight[si, ni]
        X = _grid_values(grid, weight.shape, si, ni, vals, kT)
        out[act] += grid.convolve(X, fine)
    q, q_a, q_b, E, s = pts
    for mode in ordered_modes(q, q_a, q_b, T, J, Jp, delta, z_perp=z_perp, line_shape=ls,
                              thermal_edge=te).values():
        live = mode["weight"] > 0
        om = np.where(live, mode["omega"], 1.0)
        nb1, nb = _bose(om, kT)
        out = out + mode["weight"] * (nb1 * gaussian(E - om, s) + nb * gaussian(E + om, s))
    return out


def coupled_spectrum(q, q_a, q_b, E, sigma, T, J, J_perp, delta, *, z_perp=4,
                     line_shape="exact", thermal_edge="near_pi", grid=None,
                     thermal_damping=0.0):
    """Resolution-convolved S(Q, E) of the coupled chains per spin, 1/meV (module notes).

    Above this family's T_N (:func:`evidence1d.physics.coupled_chain_thermo.neel_temperature`)
    the random-phase dressing of the chain's continuum and its poles; below it the ordered
    phase (modes and the continuum above the two-soliton threshold).  Three spin components
    summed, no polarisation factor, no form factor; S(−E) = e^{−E/k_BT} S(E) before
    resolution.

    Parameters
    ----------
    q, q_a, q_b : array_like, shape (n,)
        Chain phase q = Q_∥ d and interchain phases q_a = Q_a a_⊥, q_b = Q_b b_⊥ (rad).
    E, sigma : array_like, shape (n,)
        Energy transfer and Gaussian resolution standard deviation in meV (σ > 0).
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV (J > 0, J_⊥ ≥ 0) and anisotropy Δ.
    z_perp : {4, 2}, optional
        Number of neighbouring chains.
    line_shape, thermal_edge : str, optional
        As the spinon family.
    grid : tuple, optional
        ``spectrum_grid(q, q_a, q_b, E, sigma)`` computed once for these points (a cache).
    thermal_damping : array_like, shape (n_sets, 1) or scalar, optional
        The spinon family's thermal damping b ≥ 0 (dimensionless;
        :mod:`evidence1d.physics.thermal_damping`).  Above T_N the dressed response P is
        computed from the undamped chain U = G_σ ∗ S_0 and the damping's change of the
        chain's own spectrum, G_σ ∗ S_b − U, is added times r = min(P/U, 1) at each point:
        dressed by the local suppression where the dressing suppresses (the result is
        r G_σ ∗ S_b ≥ 0), undressed where it enhances or adds a pole.  J_⊥ = 0 is the
        spinon family at the same b, the result is non-negative and does not depend on
        the grid step through F_e.  Below T_N it does not act: the ordered phase's
        continuum above the two-soliton threshold and its modes are those of the undamped
        chain (a damped chain cut with the undamped one's threshold left negative leakage
        below it).
        The interchain corrections (the dressing, the edge step, the poles) are those of
        the undamped chain.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in 1/meV per spin; the spinon family's spectrum at J_⊥ = 0.

    References
    ----------
    Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); Schulz, Phys. Rev. Lett. 77,
    2790 (1996); Essler, Tsvelik & Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
    """
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge)
    z_perp = check_interchain(z_perp)
    Jp = np.broadcast_to(np.asarray(J_perp, float).reshape(-1, 1), J.shape)
    q, q_a, q_b, E, sigma = np.broadcast_arrays(*(np.asarray(x, float).ravel()
                                                  for x in (q, q_a, q_b, E, sigma)))
    rows, grid_ = grid if grid is not None else spectrum_grid(q, q_a, q_b, E, sigma)
    chain, bare = spinon_spectrum(q, E, sigma, T, J, delta, line_shape=line_shape,
                                  thermal_edge=thermal_edge, thermal_damping=thermal_damping,
                                  with_undamped=True)
    # the random-phase split multiplies the chain's convolved spectrum by F_e, a value of
    # the dressing one grid step above the edge, and takes F_e S_1D off the grid function:
    # the two cancel only if both are the same (undamped) chain, so the dressed response is
    # built on the undamped chain and the damping's change G∗S_b − G∗S_0 is added to it
    # (a grid-independent result; J_⊥ = 0 is still the spinon family at the same b)
    damped = T > 0 and np.any(np.asarray(thermal_damping, float) > 0)
    TN = neel_temperature(J, Jp, delta, z_perp=z_perp, line_shape=line_shape,
                          thermal_edge=thermal_edge)
    below = (TN > T)[:, 0] & (Jp > 0)[:, 0]
    out = np.empty_like(chain)
    for mask, fn in ((~below, _paramagnetic), (below, _ordered)):
        if not mask.any():
            continue
        sub = (J[mask], Jp[mask], delta[mask])
        if fn is _paramagnetic:
            out[mask] = fn(rows, grid_, bare[mask], T, *sub, z_perp, line_shape,
                           thermal_edge)
            if damped:
                # the damping's change G∗S_b − G∗S_0, dressed by the local ratio of the
                # dressed to the bare response capped at 1: where the dressing suppresses
                # (ratio r < 1) the result is r G∗S_b ≥ 0, where it enhances or adds a pole
                # the change is added undressed (≥ G∗S_b ≥ 0); J_⊥ = 0 gives G∗S_b
                P, U = out[mask], bare[mask]
                with np.errstate(divide="ignore", invalid="ignore"):
                    r = np.where(U > 0, np.clip(P / U, 0.0, 1.0), 1.0)
                out[mask] = P + r * (chain[mask] - U)
        else:
            # the ordered phase cuts the chain's continuum at the two-soliton threshold with
            # the undamped chain (F = Θ(|ω| − ω_c)); a damped chain there would leave its
            # thermal leakage below the threshold, negative where the undamped weight is
            # taken off, so the thermal damping acts above T_N only
            out[mask] = fn(rows, grid_, bare[mask], (q, q_a, q_b, E, sigma), T, *sub,
                           z_perp, line_shape, thermal_edge)
    return out
