"""Spectra on an absolute scale: the fitted intensity scale against the cross-section, and
the total-moment sum rule over the measured window.

A spectrum declared on an absolute scale (``absolute_scale:`` in its dataset block, intensity
in mb/sr/meV or b/sr/meV per magnetic ion, k_f/k_i removed in the reduction) fixes what the
intensity scale s of I(Q, E) = s |F(Q)|² S_model(Q, E) + background should be.  The
magnetic cross-section per ion is

    d²σ/dΩdE = (γ r₀)² (g/2)² |F(Q)|² Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ(Q, ω)

(Squires 1978, Ch. 7; (γ r₀)² = 290.6 mb from the CODATA neutron moment and classical
electron radius), and each family states c in Σ_αβ (δ_αβ − Q̂_α Q̂_β) S^αβ = c S_model
(:attr:`evidence1d.families.base.Family.cross_section_factor`; 2/3 for three spin components
summed with no polarisation factor, 1 for the polarisation-weighted sum), so

    s_abs = (γ r₀)² (g/2)² c        (in the data's intensity unit × meV).

The ratio r = s / s_abs over the posterior is each family's consistency check: the spectra's
weight against the family's own normalisation, which every family ties to the bulk data (the
paramagnon's amplitude is χ_u(T) through the Kramers–Kronig relation χ'(Q, 0) = χ_Q; the chain
families' amplitudes follow from the exact first-moment sum rule with the J that χ(T) and C(T)
see).  r = 1 within the declared calibration uncertainty u (default 0.2; absolute
normalisation against vanadium or phonons is rarely better than 10–20 %, common practice)
is consistent.  The deviation is z = ln r / √(u² + σ²_ln r) with σ_ln r half the 68 % width
of ln r; |z| > 2 is flagged (common practice).

Total-moment sum rule: Σ_α ∫dω ⟨S^αα(Q, ω)⟩_zone = S(S + 1) per spin (Hohenberg & Brinkman
1974; Lovesey 1984, Ch. 4).  For a single-crystal map the window moment of the family,
M = (1/2π) ∫dq ∫dE S_tot(q, E) over the measured range of q = Q_∥ d and E (S_tot the three
components summed, :meth:`~evidence1d.families.base.Family.unpolarised_spectrum`: the chain
families' own sum, (3/2) c S_model for the others; at the data's median Q_⊥; resolution-convolved, which conserves the weight inside the
window), is computed on a grid (Gauss–Legendre panels in q graded towards the multiples of π, where
chain spectra are singular; trapezoid rule in E with a step no larger than the smallest
resolution σ, which integrates a Gaussian of width σ to 1e-8); the data hold r M of S(S + 1) in the same window (the family's fit interpolates the
measured points, background removed).  Powder spectra get the ratio only.

References
----------
G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering* (CUP, 1978), Ch. 7
(magnetic cross-section, (γ r₀)² = 0.2906 b; from memory).
P. C. Hohenberg & W. F. Brinkman, Phys. Rev. B 10, 128 (1974) (sum rules).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter*, Vol. 2 (Clarendon,
1984), Ch. 4 (total-moment sum rule, Kramers–Kronig relations).
"""
from __future__ import annotations

import math

import numpy as np
from scipy import constants

from ..units import ABSOLUTE_INTENSITY_UNITS, ABSOLUTE_UNCERTAINTY, absolute_intensity_factor

__all__ = ["GAMMA_R0_SQ_MB", "ABSOLUTE_UNITS", "DEFAULT_UNCERTAINTY", "Z_FLAG",
           "absolute_unit_factor", "expected_scale", "window_moment", "absolute_scale_check"]

#: (γ r₀)² in millibarn: neutron magnetic moment in nuclear magnetons times the classical
#: electron radius, squared (CODATA via scipy.constants)
GAMMA_R0_SQ_MB = (abs(constants.physical_constants[
    "neutron mag. mom. to nuclear magneton ratio"][0])
    * constants.physical_constants["classical electron radius"][0]) ** 2 / 1e-31
#: absolute intensity units (per magnetic ion) and their value in mb/sr/meV
ABSOLUTE_UNITS = ABSOLUTE_INTENSITY_UNITS
#: default fractional calibration uncertainty of an absolute scale (common practice)
DEFAULT_UNCERTAINTY = ABSOLUTE_UNCERTAINTY
#: |z| above which a ratio is flagged
Z_FLAG = 2.0
_N_Q = 48
_MAX_E = 600
_N_DRAWS = 32


#: the unit parser of :mod:`evidence1d.units` (one place)
absolute_unit_factor = absolute_intensity_factor


def expected_scale(g, factor: float, unit_factor: float = 1.0):
    """s_abs = (γ r₀)² (g/2)² c in the data's intensity unit × meV (module notes).

    Parameters
    ----------
    g : array_like
        Landé g factor(s).
    factor : float
        The family's c (:attr:`~evidence1d.families.base.Family.cross_section_factor`).
    unit_factor : float
        One data intensity unit in mb/sr/meV (:func:`absolute_unit_factor`).

    Returns
    -------
    ndarray
        The scale in (data unit)·meV.

    References
    ----------
    Squires (1978), Ch. 7.
    """
    g = np.asarray(g, dtype=float)
    return GAMMA_R0_SQ_MB * (g / 2.0) ** 2 * factor / unit_factor


def window_moment(family, predictor, p: dict, n_q: int = _N_Q) -> np.ndarray:
    """The family's share of the total moment in a single-crystal dataset's window.

    M = (1/2π) ∫dq ∫dE S_tot(q, E) over the dataset's range of q = Q_∥ d and E, with
    S_tot the family's :meth:`~evidence1d.families.base.Family.unpolarised_spectrum` (module
    notes), at the median interchain wavevector of the data
    and the dataset's temperature and resolution.

    Parameters
    ----------
    family : Family
        With a :attr:`~evidence1d.families.base.Family.cross_section_factor`.
    predictor : DatasetPredictor
        Of a single-crystal spectrum.
    p : dict of str to ndarray (k, 1)
        Parameter sets.
    n_q : int
        About this many nodes in q per piece between multiples of π (:func:`_q_rule`).

    Returns
    -------
    ndarray, shape (k,)
        M per spin (three components summed); S(S + 1) for the whole zone and all energies
        if the family obeys the total-moment sum rule.

    References
    ----------
    Hohenberg & Brinkman, Phys. Rev. B 10, 128 (1974); Lovesey (1984), Ch. 4.
    """
    from ..families.base import SpectralPoints
    from ..physics import neutron
    pts0 = predictor._pts
    ds = predictor.dataset
    E = ds.x["energy"]
    e_lo, e_hi = float(np.min(E)), float(np.max(E))
    fw = ds.options["resolution"]["fwhm"]
    sig_min = float(np.min(neutron.resolution_sigma(np.linspace(e_lo, e_hi, 64), fw)))
    n_e = int(min(_MAX_E, max(16, math.ceil((e_hi - e_lo) / max(sig_min, 1e-9)) + 1)))
    e_grid = np.linspace(e_lo, e_hi, n_e)
    w_e = np.full(n_e, (e_hi - e_lo) / (n_e - 1))
    w_e[[0, -1]] *= 0.5
    q_lo, q_hi = float(np.min(pts0.Q_par)), float(np.max(pts0.Q_par))
    q_nodes, w_q = _q_rule(q_lo * pts0.d, q_hi * pts0.d, n_q)
    Qp = np.repeat(q_nodes / pts0.d, n_e)
    Eg = np.tile(e_grid, q_nodes.size)
    pts = SpectralPoints(Q_par=Qp, Q_a=np.full(Qp.size, float(np.median(pts0.Q_a))),
                         Q_b=np.full(Qp.size, float(np.median(pts0.Q_b))), d=pts0.d,
                         a_perp=pts0.a_perp, b_perp=pts0.b_perp, energy=Eg,
                         sigma=neutron.resolution_sigma(Eg, fw),
                         temperature=pts0.temperature)
    S = family.unpolarised_spectrum(p, pts).reshape(-1, q_nodes.size, n_e)
    return np.einsum("kqe,q,e->k", S, w_q, w_e) / (2.0 * math.pi)


def _q_rule(a: float, b: float, n_q: int):
    """Nodes and weights in the chain phase on [a, b]: the interval is split at multiples of
    π (where chain spectra are singular) and each piece gets 14 Gauss–Legendre panels graded
    geometrically (ratio 1/4) towards both its ends, about ``n_q`` nodes per piece."""
    from ..gauss_rules import gauss_legendre
    cuts = [a] + [k * math.pi for k in range(math.floor(a / math.pi) + 1,
                                             math.ceil(b / math.pi)) if a < k * math.pi < b] + [b]
    n_side = 6                                 # innermost panel: 1.2e-4 of the piece
    half = [0.5 * 0.25 ** k for k in range(n_side, 0, -1)]
    u = np.array([0.0] + half + [0.5] + [1.0 - h for h in half[::-1]] + [1.0])
    x, w = gauss_legendre(max(2, math.ceil(n_q / (u.size - 1))))
    nodes, weights = [], []
    for lo, hi in zip(cuts[:-1], cuts[1:]):
        e = lo + (hi - lo) * u
        c, h = 0.5 * (e[1:] + e[:-1]), 0.5 * (e[1:] - e[:-1])
        nodes.append((c[:, None] + h[:, None] * x).ravel())
        weights.append((h[:, None] * w).ravel())
    return np.concatenate(nodes), np.concatenate(weights)


def _quantiles(x) -> dict:
    q16, med, q84 = np.percentile(x, [16, 50, 84])
    return {"median": float(med), "q16": float(q16), "q84": float(q84)}


def absolute_scale_check(problem, full_names, full_samples, n_draws: int = _N_DRAWS):
    """Per absolute-scale spectrum of the case: the ratio r = s/s_abs and the window moment.

    Parameters
    ----------
    problem : JointProblem
        The family's problem (its family, predictors and datasets).
    full_names : list of str
        Names of the columns of ``full_samples`` (sampled parameters, then the drawn
        marginalised nuisances).
    full_samples : ndarray, shape (n, len(full_names))
        Posterior samples, parameter units.
    n_draws : int
        Evenly spaced posterior draws for the window moment.

    Returns
    -------
    dict or None
        dataset -> {"unit", "calibration_uncertainty", "cross_section_factor",
        "expected_scale", "ratio", "z", "consistent", "window", "note"}; None when no
        dataset declares an absolute scale.  A family with no stated cross-section factor
        gets {"note": ...} per dataset.

    References
    ----------
    Squires (1978), Ch. 7; Hohenberg & Brinkman (1974).
    """
    fam = problem.family
    names = list(full_names)
    x = np.atleast_2d(np.asarray(full_samples, dtype=float))
    out = {}
    for pr in problem.predictors:
        ds = pr.dataset
        opt = ds.options.get("absolute_scale")
        if not opt or not pr.kind.is_spectrum:
            continue
        unit = ds.units.get("intensity")
        uf = absolute_unit_factor(unit)
        u = float(opt.get("uncertainty", DEFAULT_UNCERTAINTY))
        rec = {"unit": unit, "calibration_uncertainty": u}
        c = getattr(fam, "cross_section_factor", None)
        key = f"{ds.name}:scale"
        if c is None or uf is None or key not in names:
            rec["note"] = ("not checked: " + ("the family does not state its cross-section "
                                             "convention" if c is None else
                                             "the intensity scale is not a free parameter"
                                             if uf is not None else
                                             f"unit {unit!r} is not absolute"))
            out[ds.name] = rec
            continue
        g = x[:, names.index("g")] if "g" in names else np.full(len(x), 2.0)
        s_abs = expected_scale(g, c, uf)
        r = x[:, names.index(key)] / s_abs
        pos = r[r > 0]
        lr = np.log(pos) if pos.size else np.array([-np.inf])
        q16, med, q84 = np.percentile(lr, [16, 50, 84])
        sd = 0.5 * (q84 - q16)
        z = float(med / math.hypot(u, sd)) if np.isfinite(med) else -math.inf
        rec.update(cross_section_factor=float(c), expected_scale=_quantiles(s_abs),
                   ratio=_quantiles(r), z=z, consistent=bool(abs(z) <= Z_FLAG))
        if pr.kind.single_crystal:
            idx = np.linspace(0, len(x) - 1, min(n_draws, len(x))).astype(int)
            p = problem.params(x[idx, :len(problem.names)])
            m = window_moment(fam, pr, p)
            total = fam.spin * (fam.spin + 1.0)
            rec["window"] = {
                "Q_par": [float(np.min(ds.x["Q_par"])), float(np.max(ds.x["Q_par"]))],
                "energy": [float(np.min(ds.x["energy"])), float(np.max(ds.x["energy"]))],
                "total_moment": total, "model_moment": _quantiles(m),
                "data_moment": _quantiles(m * r[idx])}
        rec["note"] = (f"r = s/s_abs with s_abs = (γr₀)²(g/2)²c = {np.median(s_abs):.4g} "
                       f"{unit}·meV (c = {c:.3g}); |z| = |ln r|/√(u² + σ²) ≤ {Z_FLAG:g} is "
                       f"consistent with the calibration uncertainty u = {u:g}")
        out[ds.name] = rec
    return out or None
