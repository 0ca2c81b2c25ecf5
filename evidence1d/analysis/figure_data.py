"""The arrays every figure of one family draws, computed during the run and kept in the
results record (the report draws them without model code).

Deterministic (evenly spaced posterior draws, no random numbers), so a rebuilt report
draws the same curves; the drawing modules only draw what :func:`figure_data` returns.

* Spectra: :mod:`.spectra_data` (cuts, maps, overlays in the data's wavevector unit).
* Thermodynamics: data, bands, residuals and the separate parts of the model (magnetic;
  χ₀ + C_imp/T; γ_e T and β T³), the magnetic entropy S(T) = ∫ C_mag/T dT of the model and
  of the data (the data's non-magnetic parts taken away at their posterior medians) against
  R ln(2S + 1).
* Corner plots: physical parameters, the prior support and density, truths if given.

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
.. [2] C. Kittel, *Introduction to Solid State Physics*, 8th ed. (Wiley, 2005), Ch. 5
   (C = γT + βT³ of electrons and Debye phonons at low T) and Ch. 14 (magnetic entropy
   R ln(2S + 1) per mole of spins S).
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from .parameters import draw_indices
from .spectra_data import bands, predictor, spectrum_block

__all__ = ["model_figure_data"]

_DENSE_T = 120                    # points of a smooth thermodynamic curve


# ------------------------------------------------------------------ thermodynamics
def _thermo_block(problem, sample, ds, params, point_bands, log_axis):
    T = ds.x["T"]
    lo, hi = float(T.min()), float(T.max())
    Td = np.geomspace(lo, hi, _DENSE_T) if log_axis and lo > 0 else \
        np.linspace(lo, hi, _DENSE_T)
    pr = predictor(problem, sample, ds, {"T": Td})
    with np.errstate(all="ignore"):
        total = pr.predict(params)
        mag = pr.magnetic(params)
    block = {"kind": ds.kind, "name": ds.name, "x": T, "y": ds.y, "err": ds.err,
             "residual": (ds.y - point_bands[2]) / ds.err, "model_x": Td,
             "bands": bands(total), "parts": []}
    med = lambda a: np.nanmedian(np.broadcast_to(a, total.shape), axis=0)  # noqa: E731
    kind = ds.spec
    if kind.magnetic_label:
        block["parts"] = [("magnetic", kind.magnetic_label, med(mag))]
    present = [e for e in kind.extras if e.name in pr.extras]
    groups = {}                       # extras sharing a part are drawn as one curve
    for e in present:
        label, curve = groups.get(e.part, (e.part_label, np.zeros_like(total)))
        groups[e.part] = (label, curve + e.term(params[e.name], Td))
    block["parts"] += [(part, label, med(curve)) for part, (label, curve) in groups.items()]
    if kind.entropy_by_integration:
        non_mag_at_data = np.zeros_like(T)
        for e in present:
            non_mag_at_data = non_mag_at_data + e.term(float(np.median(params[e.name])), T)
        block["entropy"] = _entropy(problem, sample, T, ds.y - non_mag_at_data, ds.err,
                                    Td, params)
    if kind.free_spin_ceiling:
        block.update(_ceiling(sample))
    return block


def _ceiling(sample) -> dict:
    """R ln(2S + 1), the entropy of free spins S (Kittel, Ch. 14)."""
    from scipy.constants import R
    n = 2.0 * float(sample.spin) + 1.0
    return {"ceiling": R * math.log(n), "ceiling_label": f"R ln {n:g}"}


def _entropy(problem, sample, T, c_mag, err, Td, params):
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
    return {"model_x": Td, "bands": bands(S), "x": t, "y": s0 + w @ (c / t),
            "err": np.sqrt((w ** 2) @ ((e / t) ** 2)), **_ceiling(sample)}


# ------------------------------------------------------------------ corner
def _limits(s, support):
    lo, hi = float(np.min(s)), float(np.max(s))
    span = hi - lo if hi > lo else 1e-3 * max(abs(lo), 1.0)
    a, b = lo - 0.08 * span, hi + 0.08 * span
    pl, ph = support                     # a prior bound close by is shown
    if math.isfinite(pl) and a - 0.35 * span < pl <= lo:
        a = min(a, pl - 0.04 * span)
    if math.isfinite(ph) and hi <= ph < b + 0.35 * span:
        b = max(b, ph + 0.04 * span)
    return a, b


def _nuisance_symbol(name: str) -> str:
    if ":" in name:
        ds, what = name.split(":", 1)
        return f"{what} ({ds})"
    return {"chi0": r"$\chi_0$", "c_imp": r"$C_\mathrm{imp}$", "gamma_e": r"$\gamma_e$",
            "beta_lattice": r"$\beta$"}.get(name, name)


def _corner_block(name, problem, samples, params, truths):
    card = problem.card
    names = list(problem.names)
    cols = [j for j, n in enumerate(names) if n in card.parameters]
    if len(cols) < 2:
        cols = list(range(len(names)))
    samples = np.asarray(samples, float)[:, cols]
    out = {"names": [], "symbols": [], "units": [], "limits": [], "support": [],
           "prior_x": [], "prior_pdf": [], "quotes": [], "truths": [], "samples": samples}
    for k, j in enumerate(cols):
        n = names[j]
        pr = problem.prior.prior_of(n)
        support = tuple(float(v) for v in pr.support)
        a, b = _limits(samples[:, k], support)
        xs = np.linspace(a, b, 200)
        with np.errstate(all="ignore"):
            pdf = np.exp(np.asarray(pr.log_pdf(xs), float))
        q = params.get(n, {})
        out["names"].append(n)
        out["symbols"].append((card.parameters.get(n) or {}).get("latex")
                              or _nuisance_symbol(n))
        out["units"].append(problem.units.get(n, "") or "1")
        out["limits"].append((a, b))
        out["support"].append(support)
        out["prior_x"].append(xs)
        out["prior_pdf"].append(pdf)
        out["quotes"].append((q.get("median", math.nan), q.get("q16", math.nan),
                              q.get("q84", math.nan)))
        t = truths.get(name, {}).get(n, truths.get("*", {}).get(n))
        out["truths"].append(t)
    return out


# ------------------------------------------------------------------ one family
def model_figure_data(name, problem, sample, samples, full_samples, table: dict,
                      settings: dict) -> dict:
    """The arrays of every figure of one fitted family.

    Parameters
    ----------
    name : str
        The model's name in the case (``figures.truths`` are keyed by it).
    problem : JointProblem
    sample : Sample
        The case's sample (lattice, chain geometry, spin).
    samples : ndarray, shape (n_samples, m)
        Posterior samples of ``problem.names``.
    full_samples : ndarray, shape (n_samples, m + k)
        The same with the marginalised nuisances appended (``problem.full_names``).
    table : dict
        :func:`~evidence1d.analysis.parameters.parameter_table` of the family.
    settings : dict
        The checked ``figures`` setting of the case.

    Returns
    -------
    dict
        ``corner`` (samples, symbols, prior densities, quotes, truths), ``datasets``
        (dataset -> cuts/map block of a spectrum or thermodynamic block) and ``symbols``
        (parameter -> LaTeX symbol).

    Raises
    ------
    InputError
        A requested cut that is not in the data.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    log_axis = settings["temperature_axis"] == "log"
    full = np.asarray(full_samples)
    draws = full[draw_indices(full.shape[0], settings["draws"])]
    params = problem.params(draws)
    with np.errstate(all="ignore"):
        at_points = problem.predict(draws)
    card = problem.card
    medians = {n: v["median"] for n, v in table["parameters"].items() if n in card.parameters}
    medians.update({n: v["value"] for n, v in table["fixed_parameters"].items()
                    if n in card.parameters})
    blocks = {}
    for pr in problem.predictors:
        ds = pr.dataset
        pb = bands(at_points[ds.name])
        if ds.spec.is_spectrum:
            spec = settings["cuts"]["datasets"].get(ds.name, settings["cuts"]["default"])
            where = ("figures.cuts." + ds.name) if ds.name in \
                settings["cuts"]["datasets"] else "figures.cuts"
            blocks[ds.name] = spectrum_block(problem, sample, ds, params, pb, medians,
                                             spec, f"{where} (dataset '{ds.name}')")
        else:
            blocks[ds.name] = _thermo_block(problem, sample, ds, params, pb, log_axis)
    return {"corner": _corner_block(name, problem, samples, table["parameters"],
                                    settings["truths"]),
            "datasets": blocks,
            "symbols": {n: v.get("latex") or n for n, v in card.parameters.items()}}
