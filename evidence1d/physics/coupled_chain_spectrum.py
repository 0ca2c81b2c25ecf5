"""Resolution-convolved spectrum of weakly coupled S = 1/2 XXZ chains, above and below T_N.

Hamiltonian and the random-phase approximation as in :mod:`evidence1d.physics.coupled_chain`
(H = Σ_⟨ij⟩ J_ij [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J along the chain, J_⊥ to z_⊥ neighbouring chains);
energies meV, temperatures K, phases q = Q_∥ d, q_a, q_b in radians.

Above T_N
---------
The dressed spectrum is S_1D(q, ω) F(Q, ω) with the dressing factor
F = Σ_a m_a f_a/|1 + κ_a J_⊥(Q_⊥) f_a χ_1D(q, ω)|² (m_zz = 1, m_xx = 2; F = 1 at J_⊥ = 0),
plus the poles below the continuum (:func:`~evidence1d.physics.coupled_chain.rpa_poles`).
S_1D has integrable inverse-square-root edges that no grid resolves, so the convolution with
the Gaussian resolution G_σ is split as

    G_σ ∗ (S_1D F) = F_e G_σ ∗ S_1D + G_σ ∗ [S_1D (F − F_e)]_grid + edge + poles,

* F_e = F(ω_L + h₀), the dressing just beyond the first grid step h₀ above the lower
  edge ω_L, so that S_1D (F − F_e) has no inverse-square-root singularity left on the grid;
  the step [ω_L, ω_L + h₀] itself (where F dips towards 0 if |χ_1D| diverges at the edge,
  on a scale ∝ J_⊥²) is left out of the grid and its weight ∫ S_1D (F − F_e) dω, computed
  by Gauss–Legendre quadrature in t = √(ω − ω_L) on panels graded towards the edge, is
  placed at ±ω_L ("edge"; F_e → 1 and that weight → 0 as J_⊥ → 0);
* G_σ ∗ S_1D, the spinon family's exact convolution
  (:func:`evidence1d.physics.chain_spectrum.spinon_spectrum`, edges handled exactly), so
  that J_⊥ = 0 gives the spinon family's spectrum to rounding;
* the bracket on the shared energy grid of :class:`evidence1d.physics.resolution_grid.RowGrid`
  (:data:`NODES_PER_SIGMA` nodes per σ; detailed balance S(−ω) = e^{−ω/k_BT} S(ω) at the
  gain-side nodes);
* "poles": each pole whose Lorentzian half width Γ is below half of
  w₀ = ½ min(ω_p, ω_L − ω_p) (a sharp bound state, unresolved by any grid) has its
  component's S_1D F_a integrated exactly over the window [ω_p − 2h₀, min(ω_p + 2h₀, ω_L)]
  (two-point Gauss–Legendre on panels uniform in ln|ω − ω_p| down to Γ/100, so the
  Lorentzian core of any width and the remainder of the linearisation are both resolved;
  for Γ = 0, at T = 0, the δ-function's residue Z (n + 1) is added), placed at ±ω_p
  (gain side with e^{−ω/k_BT}) and left out of the grid; broader poles (near the ordering
  wavevector close to T_N, overdamped by the chain's thermal weight) stay in the grid
  function, which is the full random-phase response there.

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
variation near the edge is under-resolved); the step at ω_c below T_N costs O(h₀/σ) of the
continuum's value there (10⁻⁴ of the peak far above it).  The π-shifted sheet of Δ > 1 (its own edges)
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

import numpy as np

from ..units import K_B_MEV
from .chain_spectrum import spinon_density, spinon_spectrum
from .coupled_chain import _check, _chi2, _couplings, _Sheets, rpa_poles
from .coupled_chain_ordered import ordered_modes, ordered_state, two_soliton_threshold
from .coupled_chain_thermo import neel_temperature
from .magnon import check_interchain
from .neutron import gaussian
from .resolution_grid import RowGrid

__all__ = ["coupled_spectrum", "spectrum_grid", "NODES_PER_SIGMA"]

_GL_T, _GL_W = np.polynomial.legendre.leggauss(4)
_GL_T, _GL_W = 0.5 * (_GL_T + 1.0), 0.5 * _GL_W          # on [0, 1]
#: a pole is sharp (its window integrated exactly, placed at ω_p) when Γ < this × w₀
SHARP = 0.5
#: energy nodes per resolution σ: the dressing varies on scales below σ near the edge and
#: the poles (measured: 1.5 % of the peak at 6, 5 % at 3, for a pole 5e-4 meV below a
#: thermally rounded edge)
NODES_PER_SIGMA = 6.0


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


def _bose(a, kT):
    """n(a) + 1 and n(a) at energies a > 0 (1 and 0 at T = 0)."""
    if kT <= 0:
        return np.ones_like(a), np.zeros_like(a)
    n = 1.0 / np.expm1(np.maximum(a, 1e-300) / kT)
    return n + 1.0, n


def _signed(X_loss, w, kT):
    """Values at signed nodes from loss-side values: detailed balance on the gain side."""
    if kT <= 0:
        return np.where(w < 0, 0.0, X_loss)
    return np.where(w < 0, X_loss * np.exp(-np.abs(w) / kT), X_loss)


#: graded panels in t = √(ω − ω_L) over the first step above the edge (fractions of √h)
_T_PANELS = np.array([0.0, 1e-4, 1e-3, 1e-2, 0.05, 0.2, 0.5, 1.0])


def _edge_nodes(upper):
    """Nodes t and weights of ∫₀^upper f(t) dt: 4-point Gauss–Legendre on each panel of
    :data:`_T_PANELS` (graded towards t = 0), shape (n_sets, n_rows, n_nodes)."""
    t0, t1 = _T_PANELS[:-1, None], _T_PANELS[1:, None]
    x = (t0 + (t1 - t0) * _GL_T[None, :]).ravel()
    wx = ((t1 - t0) * _GL_W[None, :]).ravel()
    return upper[..., None] * x, upper[..., None] * wx


def _edge_integral(rq, edge, upper, T, J, delta, ls, te, weight):
    """∫ S_1D(ω) weight(ω, rows) dω over [ω_L, ω_L + upper²] per set and row, in
    t = √(ω − ω_L): S_1D dω = 2t S_1D dt is finite at the inverse-square-root edge, and the
    graded panels resolve a dressing that varies on any scale down to 10⁻⁸ of the step.
    ``weight`` takes energies (n_sets, k) and their rows (k,)."""
    t, wt = _edge_nodes(upper)                              # (n_sets, n_rows, K)
    k = t.shape[-1]
    om = (edge[..., None] + t * t).reshape(t.shape[0], -1)
    cols = np.repeat(np.arange(rq.size), k)
    S = spinon_density(rq[cols], om, T, J, delta, line_shape=ls, thermal_edge=te)
    f = (2.0 * t * wt).reshape(om.shape) * S * weight(om, cols)
    return f.reshape(t.shape).sum(-1)


def _edge_terms(grid, edge, X, w, nr, kT):
    """Zero the grid function over the first step above ±ω_L (its weight is the edge term)."""
    e = edge[:, nr]
    first = (np.abs(w) >= e) & (np.abs(w) < e + grid.base_step)
    return np.where(first, 0.0, X)


def _edge_gaussians(grid, edge, D, kT):
    """The edge term D at ±ω_L (gain side with detailed balance), resolution-broadened."""
    pr, E, s = grid.point_row, grid.point_energy, grid.point_sigma
    e, d = edge[:, pr], D[:, pr]
    out = d * gaussian(E - e, s)
    if kT > 0:
        out = out + d * np.exp(-e / kT) * gaussian(E + e, s)
    return out


def _paramagnetic(rows, grid, chain, T, J, Jp, delta, z_perp, ls, te):
    kT = K_B_MEV * T
    rq, rqa, rqb = rows.T
    nr, w = grid.node_row, grid.node_energy
    a = np.abs(w)
    S = spinon_density(rq[nr], a, T, J, delta, line_shape=ls, thermal_edge=te)
    a2 = np.broadcast_to(a, S.shape)
    # one (r, θ) contraction per row and set, then 4 table reads per node
    sh_rows = _Sheets(rq, J, delta, kT, ls, te, "table", contract=True)
    chi = sh_rows.real(a2, sh_rows.iq[nr]) + 1j * _chi2(S, a2, kT)
    coup = _couplings(rq[nr], rqa[nr], rqb[nr], J, Jp, delta, z_perp)
    coup_rows = _couplings(rq, rqa, rqb, J, Jp, delta, z_perp)

    def dressing(om, cols, keys=("zz", "xx")):   # F at energies (n_sets, k) of rows (k,)
        Sr = spinon_density(rq[cols], om, T, J, delta, line_shape=ls, thermal_edge=te)
        c = sh_rows.real(om, sh_rows.iq[cols]) + 1j * _chi2(Sr, om, kT)
        return Sr, sum(m * f[:, cols] / np.abs(1.0 + g[:, cols] * f[:, cols] * c) ** 2
                       for m, f, g in (coup_rows[k] for k in keys))

    # the plateau just above the edge's first step, and the step's own weight (the dip of
    # the dressing where |χ_1D| diverges), integrated exactly
    row_edge = sh_rows.edge[:, sh_rows.iq]                 # per row (sheets are per phase)
    has_edge = np.isfinite(row_edge)
    edge = np.where(has_edge, row_edge, 0.0)
    h = grid.base_step
    F_e = np.where(has_edge, dressing(edge + h, np.arange(rq.size))[1], 1.0)
    D = np.where(has_edge, _edge_integral(rq, edge, np.full(edge.shape, np.sqrt(h)), T, J,
                                          delta, ls, te,
                                          lambda om, c: dressing(om, c)[1] - F_e[:, c]), 0.0)
    poles = rpa_poles(rq, rqa, rqb, T, J, Jp, delta, z_perp=z_perp, line_shape=ls,
                      thermal_edge=te)
    X = -F_e[:, nr] * S
    extra = 0.0
    for key, (m, f, g) in coup.items():
        term = S * f / np.abs(1.0 + g * f * chi) ** 2
        pl = poles[key]
        wp = np.nan_to_num(pl["omega"], nan=0.0)
        w0 = 0.5 * np.minimum(wp, edge - wp)
        sharp = (pl["weight"] > 0) & (w0 > 0) & (pl["width"] < SHARP * w0)
        if sharp.any():
            lo = np.where(sharp, np.maximum(wp - _WINDOW * h, 0.5 * wp), 0.0)
            hi = np.where(sharp, np.minimum(wp + _WINDOW * h, edge), 0.0)
            inside = (a >= lo[:, nr]) & (a < hi[:, nr])
            term = np.where(inside, 0.0, term)
            gain, loss = _pole_window(wp, lo, hi, pl, sharp, kT, np.arange(rq.size),
                                      lambda om, c: dressing(om, c, (key,)))
            extra = extra + _pair(grid, wp, loss, gain)
        X = X + m * term
    X = _signed(_edge_terms(grid, edge, X, w, nr, kT), w, kT)
    return (F_e[:, grid.point_row] * chain + grid.convolve(X) + extra
            + _edge_gaussians(grid, edge, D, kT))


#: half width of the window around a sharp pole, in grid steps h₀
_WINDOW = 2.0
_LOG_PANELS = 12             # panels in ln|ω − ω_p| on each side of a sharp pole


def _pole_window(wp, lo, hi, pole, sharp, kT, rows, dressing):
    """∫ S_1D F_a dω over [lo, hi] around a sharp pole (loss side, and with e^{−ω/k_BT}),
    plus the δ-function's Z (n + 1), Z n where the pole has no width (T = 0).

    Two-point Gauss–Legendre on panels uniform in ln|ω − ω_p| from 10⁻² Γ (or 10⁻⁹ of the
    window) to the window's ends on both sides, one panel across the core: the Lorentzian
    of any width and the 1/(ω − ω_p) remainder of the linearisation are both smooth there.
    """
    G = np.where(sharp, pole["width"], 0.0)
    span = np.maximum(hi - lo, 1e-300)
    x0 = np.maximum(1e-2 * G, 1e-9 * span)
    t, wt = np.polynomial.legendre.leggauss(2)
    nodes, weights = [wp + x0 * tk for tk in t], [x0 * wk for wk in wt]
    for side, end in ((1.0, hi - wp), (-1.0, wp - lo)):
        L0, L1 = np.log(x0), np.log(np.maximum(end, 2.0 * x0))
        edges = np.linspace(0.0, 1.0, _LOG_PANELS + 1)
        for u0, u1 in zip(edges[:-1], edges[1:]):
            for tk, wk in zip(t, wt):
                u = u0 + (u1 - u0) * 0.5 * (tk + 1.0)
                x = np.exp(L0 + (L1 - L0) * u)
                nodes.append(wp + side * x)
                weights.append(x * (L1 - L0) * (u1 - u0) * 0.5 * wk)
    om = np.stack(nodes, -1)                                 # (n_sets, n_rows, K)
    wts = np.stack(weights, -1)
    cols = np.repeat(rows, om.shape[-1])
    n_sets = om.shape[0]
    om_f = np.where(sharp[..., None], om, 1.0).reshape(n_sets, -1)
    S, F = dressing(om_f, cols)
    val = (S * F).reshape(om.shape) * np.where(sharp[..., None], wts, 0.0)
    loss = val.sum(-1)
    gain = (val * np.exp(-om / kT)).sum(-1) if kT > 0 else np.zeros_like(loss)
    nb1, nb = _bose(np.where(sharp, wp, 1.0), kT)
    delta_part = np.where(sharp & (G <= 0), pole["weight"], 0.0)
    return gain + delta_part * nb, loss + delta_part * nb1


def _pair(grid, wp, loss, gain):
    """Weights ``loss`` at +ω_p and ``gain`` at −ω_p per row, resolution-broadened."""
    pr, E, s = grid.point_row, grid.point_energy, grid.point_sigma
    c = np.where(loss[:, pr] != 0, wp[:, pr], 1.0)
    return loss[:, pr] * gaussian(E - c, s) + gain[:, pr] * gaussian(E + c, s)


def _ordered(rows, grid, chain, pts, T, J, Jp, delta, z_perp, ls, te):
    kT = K_B_MEV * T
    rq = rows[:, 0]
    nr, w = grid.node_row, grid.node_energy
    a = np.abs(w)
    st = ordered_state(T, J, Jp, delta, z_perp=z_perp, line_shape=ls, thermal_edge=te)
    wc = two_soliton_threshold(rq, st)                      # (n_sets, n_rows)
    sh_rows = _Sheets(rq, J, delta, kT, ls, te, "table")
    row_edge = sh_rows.edge[:, sh_rows.iq]                 # per row (sheets are per phase)
    has_edge = np.isfinite(row_edge)
    edge = np.where(has_edge, row_edge, 0.0)
    h = grid.base_step
    # F = Θ(|ω| − ω_c): the plateau above the first step is 1 if ω_c lies below its end;
    # the part of the step below ω_c is then taken out exactly
    F_e = np.where(~has_edge | (wc < edge + h), 1.0, 0.0)
    cut = np.sqrt(np.clip(wc - edge, 0.0, h))
    D = np.where(has_edge & (F_e > 0), -_edge_integral(rq, edge, cut, T, J, delta, ls, te,
                                                       lambda om, c: 1.0), 0.0)
    # only nodes above some set's threshold (or of a set whose edge step is cut) carry
    # weight: strongly ordered sets (thresholds beyond the data) cost nothing here
    weight = (a > wc[:, nr]).astype(float) - F_e[:, nr]
    cols = np.flatnonzero(np.any(weight != 0.0, axis=0))
    X = np.zeros(weight.shape)
    if cols.size:
        S = spinon_density(rq[nr[cols]], a[cols], T, J, delta, line_shape=ls,
                           thermal_edge=te)
        X[:, cols] = S * weight[:, cols]
    X = _signed(_edge_terms(grid, edge, X, w, nr, kT), w, kT)
    out = (F_e[:, grid.point_row] * chain + grid.convolve(X)
           + _edge_gaussians(grid, edge, D, kT))
    q, q_a, q_b, E, s = pts
    for mode in ordered_modes(q, q_a, q_b, T, J, Jp, delta, z_perp=z_perp, line_shape=ls,
                              thermal_edge=te).values():
        live = mode["weight"] > 0
        om = np.where(live, mode["omega"], 1.0)
        nb1, nb = _bose(om, kT)
        out = out + mode["weight"] * (nb1 * gaussian(E - om, s) + nb * gaussian(E + om, s))
    return out


def coupled_spectrum(q, q_a, q_b, E, sigma, T, J, J_perp, delta, *, z_perp=4,
                     line_shape="exact", thermal_edge="near_pi", grid=None):
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
    chain = spinon_spectrum(q, E, sigma, T, J, delta, line_shape=line_shape,
                            thermal_edge=thermal_edge)
    TN = neel_temperature(J, Jp, delta, z_perp=z_perp, line_shape=line_shape,
                          thermal_edge=thermal_edge)
    below = (TN > T)[:, 0] & (Jp > 0)[:, 0]
    out = np.empty_like(chain)
    for mask, fn in ((~below, _paramagnetic), (below, _ordered)):
        if not mask.any():
            continue
        sub = (J[mask], Jp[mask], delta[mask])
        if fn is _paramagnetic:
            out[mask] = fn(rows, grid_, chain[mask], T, *sub, z_perp, line_shape,
                           thermal_edge)
        else:
            out[mask] = fn(rows, grid_, chain[mask], (q, q_a, q_b, E, sigma), T, *sub,
                           z_perp, line_shape, thermal_edge)
    return out
