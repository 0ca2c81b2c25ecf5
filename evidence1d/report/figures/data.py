"""The arrays every figure draws, computed once from a run's results and its case.

Deterministic (evenly spaced posterior draws, no random numbers), so a rebuilt report
draws the same curves.  The drawing modules only draw what this module returns.

* Spectra: cuts (constant Q: energy scans; constant E: wavevector scans) with the data,
  the posterior-predictive median and its 68 % and 95 % bands, and normalised residuals;
  for data on a full (Q, E) grid, the map of data, median model and residuals, with the
  characteristic energies of the family (:mod:`.overlays`) at the posterior medians.
  Wavevectors are converted to the user's unit (r.l.u. when the data were given in r.l.u.:
  Q_∥ in units of 2π/|R| along the chain R, Q_⊥ in units of 2π/|X_⊥| across it).
* Thermodynamics: data, bands, residuals and the separate parts of the model (magnetic;
  χ₀ + C_imp/T; γ_e T and β T³), the magnetic entropy S(T) = ∫ C_mag/T dT of the model and
  of the data (the data's non-magnetic parts taken away at their posterior medians) against
  R ln(2S + 1).
* Corner plots: physical parameters, the prior support and density, truths if given.

The ``figures`` setting (the case file's ``figures:`` block) chooses cuts, the temperature
axis, the map colour scale, titles and truths; :func:`figure_settings` checks it.

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
.. [2] C. Kittel, *Introduction to Solid State Physics*, 8th ed. (Wiley, 2005), Ch. 5
   (C = γT + βT³ of electrons and Debye phonons at low T) and Ch. 14 (magnetic entropy
   R ln(2S + 1) per mole of spins S).
"""
from __future__ import annotations

import dataclasses
import json
import math
from pathlib import Path

import numpy as np

from ...errors import InputError, closest_key
from ..summary import BAND_QUANTILES, MAX_DRAWS, draw_indices
from .overlays import family_overlays

__all__ = ["DEFAULT_SETTINGS", "AUTO_CUTS", "figure_settings", "figure_data", "is_quick",
           "per_rlu"]

#: cuts drawn per spectrum when the setting is ``auto``
AUTO_CUTS = 6
_DENSE = 40                       # points of a smooth model curve along a cut
_DENSE_T = 120                    # points of a smooth thermodynamic curve
#: defaults of the ``figures`` setting
DEFAULT_SETTINGS = {"cuts": "auto", "temperature_axis": "linear", "map_scale": "linear",
                    "map_percentiles": (1.0, 99.0), "titles": True, "truths": {},
                    "draws": MAX_DRAWS}
_SCALES = ("linear", "sqrt", "log")


# ------------------------------------------------------------------ the setting
def _cut_spec(value, where: str):
    """('auto' | 'all' | 'values', direction 'Q' | 'E' | None, values tuple)."""
    if isinstance(value, str) and value.strip().lower() in ("auto", "all"):
        return (value.strip().lower(), None, ())
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        value = [value]
    if isinstance(value, (list, tuple)):
        try:
            vals = tuple(float(v) for v in value)
        except (TypeError, ValueError):
            raise InputError(f"{where} must be 'auto', 'all', a list of numbers or "
                             f"{{Q: [...]}} / {{E: [...]}}; got {value!r}") from None
        if not vals:
            raise InputError(f"{where} is an empty list; give values or 'all'")
        return ("values", None, vals)
    if isinstance(value, dict) and len(value) == 1 and next(iter(value)) in ("Q", "E"):
        d, v = next(iter(value.items()))
        kind, _, vals = _cut_spec(v, f"{where}.{d}")
        return (kind, d, vals)
    raise InputError(f"{where} must be 'auto', 'all', a list of numbers or {{Q: [...]}} / "
                     f"{{E: [...]}}; got {value!r}")


def figure_settings(raw=None, datasets=(), models=()) -> dict:
    """The checked ``figures`` setting with defaults filled in.

    Parameters
    ----------
    raw : dict or None
        The case file's ``figures:`` block: ``cuts`` ('auto', 'all', a list of Q values
        in the data's wavevector unit or E values in meV, ``{Q: [...]}``, ``{E: [...]}``, or
        a mapping dataset -> one of these), ``temperature_axis`` ('linear' or 'log'),
        ``map_scale`` ('linear', 'sqrt' or 'log'), ``map_percentiles`` ([low, high], the
        colour limits of the maps), ``titles`` (bool), ``truths`` ({parameter: value} or
        {model: {parameter: value}}), ``draws`` (posterior draws for the bands).
    datasets, models : sequence of str
        Names in the case (to check the per-dataset and per-model entries).

    Returns
    -------
    dict

    Raises
    ------
    InputError
        Unknown keys or values, naming ``figures.<key>``.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    raw = dict(raw or {})
    unknown = [k for k in raw if k not in DEFAULT_SETTINGS]
    if unknown:
        raise InputError(f"unknown key figures.{unknown[0]}; "
                         f"{closest_key(unknown[0], DEFAULT_SETTINGS)}")
    s = {**DEFAULT_SETTINGS, **raw}
    cuts = s["cuts"]
    per = {}
    if isinstance(cuts, dict) and not (len(cuts) == 1 and next(iter(cuts)) in ("Q", "E")):
        for name, v in cuts.items():
            if datasets and name not in datasets:
                raise InputError(f"figures.cuts.{name}: no dataset of that name; "
                                 f"{closest_key(name, datasets)}")
            per[name] = _cut_spec(v, f"figures.cuts.{name}")
        default = ("auto", None, ())
    else:
        default = _cut_spec(cuts, "figures.cuts")
    s["cuts"] = {"default": default, "datasets": per}
    for key, allowed in (("temperature_axis", ("linear", "log")), ("map_scale", _SCALES)):
        if s[key] not in allowed:
            raise InputError(f"figures.{key} must be one of {', '.join(allowed)}; "
                             f"got {s[key]!r}")
    try:
        lo, hi = (float(v) for v in s["map_percentiles"])
    except (TypeError, ValueError):
        raise InputError("figures.map_percentiles must be two numbers [low, high]") from None
    if not 0.0 <= lo < hi <= 100.0:
        raise InputError(f"figures.map_percentiles must satisfy 0 <= low < high <= 100; "
                         f"got [{lo:g}, {hi:g}]")
    s["map_percentiles"] = (lo, hi)
    if not isinstance(s["titles"], bool):
        raise InputError(f"figures.titles must be true or false; got {s['titles']!r}")
    if not isinstance(s["draws"], int) or isinstance(s["draws"], bool) or s["draws"] < 5:
        raise InputError(f"figures.draws must be an integer >= 5; got {s['draws']!r}")
    s["truths"] = _truths(s["truths"], models)
    return s


def _truths(raw, models) -> dict:
    if not isinstance(raw, dict):
        raise InputError("figures.truths must map parameter -> value or model -> "
                         "{parameter: value}")
    out = {"*": {}}
    for k, v in raw.items():
        if isinstance(v, dict):
            if models and k not in models:
                raise InputError(f"figures.truths.{k}: no model of that name; "
                                 f"{closest_key(k, models)}")
            out[k] = {}
            for p, x in v.items():
                out[k][p] = _number(x, f"figures.truths.{k}.{p}")
        else:
            out["*"][k] = _number(v, f"figures.truths.{k}")
    return out


def _number(x, where):
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise InputError(f"{where} must be a number; got {x!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{where} must be finite; got {x!r}")
    return v


def is_quick(folder, results=None, case=None) -> bool:
    """Whether a run folder holds a ``--quick`` run (``settings.json``), else whether the
    sampler settings were reduced below the case's.

    References
    ----------
    .. [1] The run folder layout of :mod:`evidence1d.report.store`.
    """
    p = Path(folder) / "settings.json"
    if p.is_file():
        try:
            return bool(json.loads(p.read_text(encoding="utf-8")).get("quick", False))
        except (OSError, ValueError):
            pass
    if results is not None and case is not None:
        return any(results.settings.get(k) != v for k, v in case.sampler.items()
                   if k in ("steps", "particles", "islands"))
    return False


# ------------------------------------------------------------------ helpers
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


def _bands(pred) -> np.ndarray:
    with np.errstate(all="ignore"):
        return np.nanquantile(pred, BAND_QUANTILES, axis=0)


def _predictor(problem, case, ds, x):
    from ...families.predict import DatasetPredictor
    n = len(next(iter(x.values())))
    other = dataclasses.replace(ds, x=x, y=np.zeros(n), err=np.ones(n),
                                lines=np.zeros(n, dtype=int))
    return DatasetPredictor(problem.family, other, case.sample)


def _groups(keys: np.ndarray) -> list:
    """Indices of points sharing a key row (rounded), in order of the key."""
    _, inv = np.unique(np.round(keys, 6), axis=0, return_inverse=True)
    inv = inv.reshape(-1)
    return [np.flatnonzero(inv == g) for g in range(inv.max() + 1)]


def _digits(values) -> int:
    """Decimals that print distinct values distinctly (at least those of the spacing)."""
    v = np.unique(np.round(np.asarray(values, float), 9))
    if v.size < 2:
        mag = abs(float(v[0])) if v.size else 1.0
        return 2 if mag == 0 else max(0, 2 - math.floor(math.log10(mag)))
    step = float(np.min(np.diff(v)))
    d = max(0, -math.floor(math.log10(step)))
    while d < 8 and np.unique(np.round(v, d)).size < v.size:
        d += 1
    return d


def _fmt(value: float, digits: int) -> str:
    s = f"{value:.{digits}f}"
    return "0" if float(s) == 0 else s.replace("-", "−")


_SYMBOL = {"Q_par": r"$Q_\parallel$", "Q_perp": r"$Q_\perp$", "Q": r"$|Q|$",
           "energy": r"$\hbar\omega$"}


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
        ds.kind == "crystal_spectrum" else ["Q"]


def _spectrum_block(problem, case, ds, params, point_bands, medians, spec, where):
    x, E = ds.x, ds.x["energy"]
    unit = ds.units.get("wavevector", "1/A") if ds.kind == "crystal_spectrum" else "1/A"
    comps = _components(ds)
    scale = {c: (per_rlu(case.sample, c) if unit == "rlu" else 1.0) for c in comps}
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
        block["common"] = ", ".join(
            f"{_SYMBOL[c]} = {_fmt(reps[0, comps.index(c)] / scale[c], _digits([reps[0, comps.index(c)] / scale[c]]))} "
            f"{_unit_text(c, unit)}" for c in fixed)
        dense = {k: [] for k in x}
        for i in pick:
            g = q_groups[i]
            e = np.linspace(E[g].min(), E[g].max(), _DENSE)
            for k in x:
                dense[k].append(e if k == "energy" else np.full(_DENSE, x[k][g[0]]))
        dense = {k: np.concatenate(v) for k, v in dense.items()}
        with np.errstate(all="ignore"):
            bands = _bands(_predictor(problem, case, ds, dense).predict(params))
        for c, i in enumerate(pick):
            g = q_groups[i]
            o = g[np.argsort(E[g])]
            s = slice(c * _DENSE, (c + 1) * _DENSE)
            block["cuts"].append({
                "axis": "energy", "label": f"{_SYMBOL[comp]} = {_fmt(vals[i], dig)} "
                                           f"{_unit_text(comp, unit)}",
                "x": E[o], "y": ds.y[o], "err": ds.err[o], "residual": resid[o],
                "model_x": dense["energy"][s], "bands": bands[:, s]})
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
    block["map"] = _map_block(problem, case, ds, point_bands, medians, comps, scale, unit)
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


def _map_block(problem, case, ds, point_bands, medians, comps, scale, unit):
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
    common = ", ".join(f"{_SYMBOL[c]} = {_fmt(x[c][0] / scale[c], _digits([x[c][0] / scale[c]]))} "
                       f"{_unit_text(c, unit)}" for c in fixed
                       if abs(x[c][0]) > 1e-12 or c == "Q_perp")
    out = {"axis": axis, "unit": unit, "x": ux / scale[axis], "energy": uE,
           "data": ds.y[idx], "model": med[idx], "residual": (ds.y[idx] - med[idx]) / ds.err[idx],
           "overlays": [], "common": common}
    if ds.kind == "crystal_spectrum":
        out["overlays"] = _overlays(problem, case, ds, medians, axis, ux, scale[axis])
    return out


def _overlays(problem, case, ds, medians, axis, ux, factor):
    from ...families.base import SpectralPoints
    q = np.linspace(ux.min(), ux.max(), 240)
    const = {c: np.full(q.size, float(ds.x[c][0])) for c in ("Q_par", "Q_perp", "Q_perp2")
             if c in ds.x}
    const[axis] = q
    zero = np.zeros(q.size)
    s = case.sample
    pts = SpectralPoints(Q_par=const["Q_par"], Q_a=const["Q_perp"],
                         Q_b=const.get("Q_perp2", zero), d=s.spin_spacing,
                         a_perp=s.lattice["a"], b_perp=s.lattice["b"], energy=zero,
                         sigma=zero, temperature=float(ds.options.get("temperature") or 0.0))
    p = {n: np.array([[v]]) for n, v in medians.items()}
    return [{"label": lab, "x": q / factor, "y": e}
            for lab, e in family_overlays(problem.family, p, pts)]


# ------------------------------------------------------------------ thermodynamics
def _thermo_block(problem, case, ds, params, point_bands, log_axis):
    T = ds.x["T"]
    lo, hi = float(T.min()), float(T.max())
    Td = np.geomspace(lo, hi, _DENSE_T) if log_axis and lo > 0 else \
        np.linspace(lo, hi, _DENSE_T)
    pr = _predictor(problem, case, ds, {"T": Td})
    with np.errstate(all="ignore"):
        total = pr.predict(params)
        mag = pr.magnetic(params)
    block = {"kind": ds.kind, "name": ds.name, "x": T, "y": ds.y, "err": ds.err,
             "residual": (ds.y - point_bands[2]) / ds.err, "model_x": Td,
             "bands": _bands(total), "parts": []}
    med = lambda a: np.nanmedian(np.broadcast_to(a, total.shape), axis=0)  # noqa: E731
    if ds.kind == "susceptibility":
        const = np.zeros_like(total)
        if "chi0" in pr.extras:
            const = const + params["chi0"]
        if "c_imp" in pr.extras:
            const = const + params["c_imp"] / Td
        block["parts"] = [("magnetic", "model χ (magnetic)", med(mag))]
        if pr.extras:
            block["parts"].append(("constant", r"$\chi_0 + C_\mathrm{imp}/T$", med(const)))
    elif ds.kind == "heat_capacity":
        block["parts"] = [("magnetic", "magnetic", med(mag))]
        non_mag_at_data = np.zeros_like(T)
        if "gamma_e" in pr.extras:
            block["parts"].append(("electronic", r"electronic $\gamma_e T$",
                                   med(params["gamma_e"] * Td)))
            non_mag_at_data = non_mag_at_data + float(np.median(params["gamma_e"])) * T
        if "beta_lattice" in pr.extras:
            block["parts"].append(("lattice", r"lattice $\beta T^3$",
                                   med(params["beta_lattice"] * Td ** 3)))
            non_mag_at_data = non_mag_at_data + float(np.median(params["beta_lattice"])) * T ** 3
        block["entropy"] = _entropy(problem, case, T, ds.y - non_mag_at_data, ds.err,
                                    Td, params)
    elif ds.kind == "entropy":
        block.update(_ceiling(case))
    return block


def _ceiling(case) -> dict:
    """R ln(2S + 1), the entropy of free spins S (Kittel, Ch. 14)."""
    from scipy.constants import R
    n = 2.0 * float(case.sample.spin) + 1.0
    return {"ceiling": R * math.log(n), "ceiling_label": f"R ln {n:g}"}


def _entropy(problem, case, T, c_mag, err, Td, params):
    """Model S_mag(T) bands and the data's ∫ C_mag/T dT (trapezoids) from the lowest T,
    started at the model's median S(T_min); errors added in quadrature."""
    try:
        with np.errstate(all="ignore"):
            S = problem.family.entropy(params, Td)
    except (InputError, NotImplementedError, ValueError, KeyError):
        return None
    S = np.asarray(S, float)
    if not np.any(np.isfinite(S)):
        return None
    order = np.argsort(T)
    t, c, e = T[order], c_mag[order], err[order]
    w = np.zeros((t.size, t.size))                  # S_i = S_0 + Σ_j w_ij C_j/T_j
    for i in range(1, t.size):
        w[i] = w[i - 1]
        dt = 0.5 * (t[i] - t[i - 1])
        w[i, i - 1] += dt
        w[i, i] += dt
    s0 = float(np.nanmedian(np.asarray(problem.family.entropy(params, t[:1]), float)))
    return {"model_x": Td, "bands": _bands(S), "x": t, "y": s0 + w @ (c / t),
            "err": np.sqrt((w ** 2) @ ((e / t) ** 2)), **_ceiling(case)}


# ------------------------------------------------------------------ corner
def _limits(s, support):
    lo, hi = float(np.min(s)), float(np.max(s))
    span = hi - lo if hi > lo else 1e-3 * max(abs(lo), 1.0)
    a, b = lo - 0.08 * span, hi + 0.08 * span
    pl, ph = support
    if math.isfinite(pl) and pl > a - 0.35 * span:
        a = min(a, pl - 0.04 * span) if pl < lo else pl - 0.04 * span
    if math.isfinite(ph) and ph < b + 0.35 * span:
        b = max(b, ph + 0.04 * span) if ph > hi else ph + 0.04 * span
    return a, b


def _nuisance_symbol(name: str) -> str:
    if ":" in name:
        ds, what = name.split(":", 1)
        return f"{what} ({ds})"
    return {"chi0": r"$\chi_0$", "c_imp": r"$C_\mathrm{imp}$", "gamma_e": r"$\gamma_e$",
            "beta_lattice": r"$\beta$"}.get(name, name)


def _corner_block(mr, case, problem, summary_params, truths):
    card = case.models[mr.name].card if mr.name in case.models else problem.card
    cols = [j for j, n in enumerate(mr.names) if n in card.parameters]
    if len(cols) < 2:
        cols = list(range(len(mr.names)))
    samples = np.asarray(mr.posterior.samples, float)[:, cols]
    out = {"names": [], "symbols": [], "units": [], "limits": [], "support": [],
           "prior_x": [], "prior_pdf": [], "quotes": [], "truths": [], "samples": samples}
    for k, j in enumerate(cols):
        n = mr.names[j]
        pr = problem.prior.priors[problem.prior.names.index(n)]
        support = tuple(float(v) for v in pr.support)
        a, b = _limits(samples[:, k], support)
        xs = np.linspace(a, b, 200)
        with np.errstate(all="ignore"):
            pdf = np.exp(np.asarray(pr.log_pdf(xs), float))
        q = summary_params.get(n, {})
        out["names"].append(n)
        out["symbols"].append((card.parameters.get(n) or {}).get("latex")
                              or _nuisance_symbol(n))
        out["units"].append(mr.units.get(n, "") or "1")
        out["limits"].append((a, b))
        out["support"].append(support)
        out["prior_x"].append(xs)
        out["prior_pdf"].append(pdf)
        out["quotes"].append((q.get("median", math.nan), q.get("q16", math.nan),
                              q.get("q84", math.nan)))
        t = truths.get(mr.name, {}).get(n, truths.get("*", {}).get(n))
        out["truths"].append(t)
    return out


# ------------------------------------------------------------------ everything
def figure_data(results, case, summary: dict, settings=None, quick: bool = False) -> dict:
    """The arrays of every figure of a run.

    Parameters
    ----------
    results : RunResults
    case : Case
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary` (posterior medians, the
        comparison).
    settings : dict, optional
        The ``figures`` setting (raw or from :func:`figure_settings`).
    quick : bool
        The run used ``--quick`` settings (every figure is marked).

    Returns
    -------
    dict
        {"settings", "quick", "title", "comparison", "models": {model: {"title",
        "one_dimensional", "corner", "datasets": {dataset: block}}}}.

    Raises
    ------
    InputError
        A bad ``figures`` setting, or a requested cut that is not in the data.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    names = [ds.name for ds in case.datasets]
    if not (isinstance(settings, dict) and isinstance(settings.get("cuts"), dict)
            and "default" in settings["cuts"]):
        settings = figure_settings(settings, names, list(results.models))
    out = {"settings": settings, "quick": bool(quick), "title": summary.get("title", ""),
           "comparison": {"models": {n: {k: m.get(k) for k in
                                         ("title", "one_dimensional", "log_evidence",
                                          "log_evidence_err")}
                                     for n, m in summary["models"].items()},
                          **summary["comparison"]},
           "models": {}}
    log_axis = settings["temperature_axis"] == "log"
    for name, mr in results.models.items():
        problem = case.problem(name)
        samples = np.asarray(mr.full_samples)
        draws = samples[draw_indices(samples.shape[0], settings["draws"])]
        params = problem.params(draws)
        with np.errstate(all="ignore"):
            at_points = problem.predict(draws)
        sm = summary["models"][name]
        medians = {n: v["median"] for n, v in sm["parameters"].items()
                   if n in problem.card.parameters}
        medians.update({n: v["value"] for n, v in sm.get("fixed_parameters", {}).items()
                        if n in problem.card.parameters})
        blocks = {}
        for pr in problem.predictors:
            ds = pr.dataset
            pb = _bands(at_points[ds.name])
            if ds.kind in ("crystal_spectrum", "powder_spectrum"):
                spec = settings["cuts"]["datasets"].get(ds.name, settings["cuts"]["default"])
                where = ("figures.cuts." + ds.name) if ds.name in \
                    settings["cuts"]["datasets"] else "figures.cuts"
                blocks[ds.name] = _spectrum_block(problem, case, ds, params, pb, medians,
                                                  spec, f"{where} (dataset '{ds.name}')")
            else:
                blocks[ds.name] = _thermo_block(problem, case, ds, params, pb, log_axis)
        out["models"][name] = {
            "title": sm.get("title", name), "one_dimensional": bool(mr.one_dimensional),
            "corner": _corner_block(mr, case, problem, sm["parameters"], settings["truths"]),
            "datasets": blocks}
    return out
