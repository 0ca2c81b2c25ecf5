"""Figure data of spectra (computed during the run, drawn by :mod:`evidence1d.report`): cuts with predictive bands and residuals, (Q, ħω) maps, overlays.

Cuts are groups of points at one wavevector (energy scans) or one energy (wavevector scans);
``auto`` takes up to :data:`AUTO_CUTS` evenly spaced ones, ``all`` every one, a list the
nearest to each value (an error if a value is farther than half the spacing of the cuts).
Wavevectors are converted to the data's unit: r.l.u. along the chain are units of 2π/|R|
(R the chain's lattice vector), across it of 2π/|X_⊥| (:meth:`Geometry.rlu_width_factors`;
2π/c and 2π/a for a chain along c in an orthogonal cell).

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
.. [2] W. R. Busing and H. A. Levy, Acta Cryst. 22, 457 (1967) (Q = 2π B h).
"""
from __future__ import annotations

import dataclasses
import math

import numpy as np

from ..errors import InputError
from .parameters import draw_indices
from .overlays import family_overlays

__all__ = ["AUTO_CUTS", "BAND_QUANTILES", "per_rlu", "spectrum_block", "bands", "predictor"]

#: quantiles of the predictive bands: 95 % and 68 % central intervals and the median
BAND_QUANTILES = (0.025, 0.16, 0.5, 0.84, 0.975)

#: cuts drawn per spectrum when the setting is ``auto``
AUTO_CUTS = 6
_DENSE = 40                       # points of a smooth model curve along a cut


def per_rlu(sample, axis: str) -> float:
    """Å⁻¹ per reciprocal-lattice unit along ``axis`` ('Q_par': the chain, else across it).

    References
    ----------
    .. [1] W. R. Busing and H. A. Levy, Acta Cryst. 22, 457 (1967) (Q = 2π B h).
    """
    geo = getattr(sample, "geometry", None)
    if geo is not None and hasattr(geo, "rlu_width_factors"):
        along, across = geo.rlu_width_factors()
    else:
        along = 2.0 * math.pi / float(sample.lattice["c"])
        across = 2.0 * math.pi / float(sample.lattice["a"])
    return float(along if axis == "Q_par" else across)


def bands(pred) -> np.ndarray:
    """Quantiles :data:`BAND_QUANTILES` over draws, shape (5, n).

    References
    ----------
    .. [1] R. J. Hyndman and Y. Fan, Am. Stat. 50, 361 (1996) (sample quantiles).
    """
    with np.errstate(all="ignore"):
        return np.nanquantile(pred, BAND_QUANTILES, axis=0)


def predictor(problem, sample, ds, x):
    """A dataset predictor of ``problem``'s family at other points ``x`` (same kind and
    options as ``ds``).

    References
    ----------
    .. [1] :class:`evidence1d.families.predict.DatasetPredictor`.
    """
    from ..families.predict import DatasetPredictor
    n = len(next(iter(x.values())))
    other = dataclasses.replace(ds, x=x, y=np.zeros(n), err=np.ones(n),
                                lines=np.zeros(n, dtype=int))
    return DatasetPredictor(problem.family, other, sample)


def _groups(keys: np.ndarray) -> list:
    """Indices of points sharing a key row (rounded), in order of the key."""
    _, inv = np.unique(np.round(keys, 6), axis=0, return_inverse=True)
    inv = inv.reshape(-1)
    return [np.flatnonzero(inv == g) for g in range(inv.max() + 1)]


def _digits(values) -> int:
    """Decimals that print the values as given (to 0.5 % of their spacing) and
    distinctly."""
    v = np.unique(np.round(np.asarray(values, float), 9))
    if v.size < 2:
        mag = abs(float(v[0])) if v.size else 1.0
        step = 0.01 * mag if mag > 0 else 0.01
    else:
        step = float(np.min(np.diff(v)))
    d = max(0, -math.floor(math.log10(step)))
    while d < 8 and (np.max(np.abs(np.round(v, d) - v)) > 5e-3 * step
                     or np.unique(np.round(v, d)).size < v.size):
        d += 1
    return d


def _fmt(value: float, digits: int) -> str:
    s = f"{value:.{digits}f}"
    return s.lstrip("-") if float(s) == 0 else s.replace("-", "−")


_SYMBOL = {"Q_par": r"$Q_\parallel$", "Q_perp": r"$Q_\perp$", "Q": r"$|Q|$",
           "energy": r"$\hbar\omega$"}


def _fixed(axis: str, value: float, unit: str) -> str:
    """``Q⊥ = 0.00 r.l.u.``: a wavevector component held fixed."""
    return f"{_SYMBOL[axis]} = {_fmt(value, _digits([value]))} {_unit_text(axis, unit)}"


def _unit_text(axis: str, unit: str) -> str:
    if axis == "energy":
        return "meV"
    return "r.l.u." if unit == "rlu" else "Å$^{-1}$"


# ------------------------------------------------------------------ spectra
def _select(spec, values, where, unit_text):
    """Indices into ``values`` chosen by a cut spec."""
    kind, _, wanted = spec
    n = len(values)
    if kind == "all":
        return list(range(n))
    if kind == "auto":
        return [int(i) for i in draw_indices(n, AUTO_CUTS)]
    v = np.asarray(values, float)
    step = float(np.min(np.diff(np.unique(v)))) if np.unique(v).size > 1 else \
        max(abs(float(v[0])), 1.0)
    out = []
    for w in wanted:
        i = int(np.argmin(np.abs(v - w)))
        if abs(v[i] - w) > 0.5 * step + 1e-9 * max(1.0, abs(w)):
            raise InputError(f"{where}: no cut near {w:g} {unit_text} (cuts from "
                             f"{v.min():.4g} to {v.max():.4g} {unit_text}); give values "
                             "that occur in the data")
        if i not in out:
            out.append(i)
    return out


def _components(ds):
    return [k for k in ("Q_par", "Q_perp", "Q_perp2") if k in ds.x] if \
        ds.spec.single_crystal else ["Q"]


def spectrum_block(problem, sample, ds, params, point_bands, medians, spec, where):
    """Cuts and map of one spectrum under one family.

    Parameters
    ----------
    problem : JointProblem
    sample : Sample
        The case's sample (lattice, chain geometry).
    ds : Dataset
    params : dict of str to ndarray (k, 1)
        Posterior draws of every parameter.
    point_bands : ndarray (5, n)
        Predictive quantiles at the data points.
    medians : dict of str to float
        Posterior medians of the physical parameters (for the overlays).
    spec : tuple
        The cut choice from :func:`~.settings.figure_settings`.
    where : str
        The setting's key, for error messages.

    Returns
    -------
    dict
        kind, name, wavevector_unit, intensity_unit, cuts (label, axis, x, y, err,
        residual, model_x, bands), common (the fixed wavevector), map (or None), direction.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    x, E = ds.x, ds.x["energy"]
    unit = ds.units.get("wavevector", "1/A") if ds.spec.single_crystal else "1/A"
    comps = _components(ds)
    scale = {c: (per_rlu(sample, c) if unit == "rlu" else 1.0) for c in comps}
    wave = np.stack([x[c] for c in comps], axis=1)
    q_groups = [g for g in _groups(wave) if g.size >= 3]
    e_groups = [g for g in _groups(E[:, None]) if g.size >= 3]
    direction = spec[1] or ("Q" if q_groups and len(_groups(wave)) <= ds.n / 3 else "E")
    resid = (ds.y - point_bands[2]) / ds.err
    block = {"kind": ds.kind, "name": ds.name, "wavevector_unit": unit,
             "intensity_unit": ds.units.get("intensity", "arb"), "cuts": [], "common": "",
             "map": None, "direction": direction}
    if direction == "Q" and q_groups:
        reps = np.array([wave[g[0]] for g in q_groups])
        j = int(np.argmax(np.ptp(reps, axis=0))) if len(q_groups) > 1 else 0
        comp = comps[j]
        vals = reps[:, j] / scale[comp]
        pick = _select(spec, vals, where, _unit_text(comp, unit))
        dig = _digits(vals)
        fixed = [c for k, c in enumerate(comps) if k != j and np.ptp(reps[:, k]) < 1e-9
                 and (abs(reps[0, k]) > 1e-12 or c == "Q_perp")]
        block["common"] = ", ".join(_fixed(c, reps[0, comps.index(c)] / scale[c], unit)
                                    for c in fixed)
        dense = {k: [] for k in x}
        for i in pick:
            g = q_groups[i]
            e = np.linspace(E[g].min(), E[g].max(), _DENSE)
            for k in x:
                dense[k].append(e if k == "energy" else np.full(_DENSE, x[k][g[0]]))
        dense = {k: np.concatenate(v) for k, v in dense.items()}
        with np.errstate(all="ignore"):
            dense_bands = bands(predictor(problem, sample, ds, dense).predict(params))
        for c, i in enumerate(pick):
            g = q_groups[i]
            o = g[np.argsort(E[g])]
            s = slice(c * _DENSE, (c + 1) * _DENSE)
            block["cuts"].append({
                "axis": "energy", "label": f"{_SYMBOL[comp]} = {_fmt(vals[i], dig)} "
                                           f"{_unit_text(comp, unit)}",
                "x": E[o], "y": ds.y[o], "err": ds.err[o], "residual": resid[o],
                "model_x": dense["energy"][s], "bands": dense_bands[:, s]})
    elif e_groups:
        vals = np.array([E[g[0]] for g in e_groups])
        pick = _select(spec, vals, where, "meV")
        dig = _digits(vals)
        for i in pick:
            g = e_groups[i]
            j = int(np.argmax(np.ptp(wave[g], axis=0)))
            comp = comps[j]
            o = g[np.argsort(x[comp][g])]
            xs = x[comp][o] / scale[comp]
            block["cuts"].append({
                "axis": comp, "label": f"{_SYMBOL['energy']} = {_fmt(vals[i], dig)} meV",
                "x": xs, "y": ds.y[o], "err": ds.err[o], "residual": resid[o],
                "model_x": xs, "bands": point_bands[:, o]})
    block["map"] = _map_block(problem, sample, ds, point_bands, medians, comps, scale, unit)
    return block


def _grid(qx, E):
    """(x values, E values, index map (nE, nx)) if the points form a full grid, else None."""
    ux, uE = np.unique(np.round(qx, 6)), np.unique(np.round(E, 6))
    if ux.size < 3 or uE.size < 3 or ux.size * uE.size != qx.size:
        return None
    idx = np.full((uE.size, ux.size), -1)
    idx[np.searchsorted(uE, np.round(E, 6)), np.searchsorted(ux, np.round(qx, 6))] = \
        np.arange(qx.size)
    return None if np.any(idx < 0) else (qx[idx[0]], E[idx[:, 0]], idx)


def _map_block(problem, sample, ds, point_bands, medians, comps, scale, unit):
    x, E = ds.x, ds.x["energy"]
    varying = [c for c in comps if np.unique(np.round(x[c], 6)).size > 1]
    if len(varying) != 1:
        return None
    axis = varying[0]
    grid = _grid(x[axis], E)
    if grid is None:
        return None
    ux, uE, idx = grid
    med = point_bands[2]
    fixed = [c for c in comps if c != axis]
    common = ", ".join(_fixed(c, x[c][0] / scale[c], unit) for c in fixed
                       if abs(x[c][0]) > 1e-12 or c == "Q_perp")
    out = {"axis": axis, "unit": unit, "x": ux / scale[axis], "energy": uE,
           "data": ds.y[idx], "model": med[idx], "residual": (ds.y[idx] - med[idx]) / ds.err[idx],
           "overlays": [], "common": common}
    if ds.spec.single_crystal:
        out["overlays"] = _overlays(problem, sample, ds, medians, axis, ux, scale[axis])
    return out


def _overlays(problem, sample, ds, medians, axis, ux, factor):
    from ..families.base import SpectralPoints
    q = np.linspace(ux.min(), ux.max(), 240)
    const = {c: np.full(q.size, float(ds.x[c][0])) for c in ("Q_par", "Q_perp", "Q_perp2")
             if c in ds.x}
    const[axis] = q
    zero = np.zeros(q.size)
    s = sample
    pts = SpectralPoints(Q_par=const["Q_par"], Q_a=const["Q_perp"],
                         Q_b=const.get("Q_perp2", zero), d=s.spin_spacing,
                         a_perp=s.lattice["a"], b_perp=s.lattice["b"], energy=zero,
                         sigma=zero, temperature=float(ds.options.get("temperature") or 0.0))
    p = {n: np.array([[v]]) for n, v in medians.items()}
    return [{"label": lab, "x": q / factor, "y": e}
            for lab, e in family_overlays(problem.family, p, pts)]
