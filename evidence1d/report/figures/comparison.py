"""The comparison: ln Z relative to the best family, model probabilities and P(1D).

ln Z − ln Z_best is drawn on a symmetric-logarithmic axis (linear within ±1 nat, decades
beyond), so a family a few nats behind and one 10⁵ nats behind are both readable; the
dotted lines mark 2 ln K = 2, 6 and 10, the steps of Kass & Raftery's wording.  The model
probabilities are on a logarithmic axis down to 10⁻⁶; each row quotes its number.

References
----------
.. [1] R. E. Kass and A. E. Raftery, "Bayes factors", J. Am. Stat. Assoc. 90, 773 (1995).
"""
from __future__ import annotations

import math

import numpy as np

from .style import DOUBLE_WIDTH, PALETTE, new_figure, styled, wrap

__all__ = ["comparison_figure", "FLOOR"]

#: smallest model probability drawn (smaller ones are quoted as "< 10⁻⁶")
FLOOR = 1e-6


def _pm(value: float, err: float) -> str:
    from ..summary import round_interval
    if math.isfinite(value) and abs(value) >= 1e4:         # the error no longer matters
        e = math.floor(math.log10(abs(value)))
        return f"{value / 10 ** e:.1f}×10$^{{{e}}}$".replace("-", "−")
    if not (math.isfinite(value) and math.isfinite(err)) or err <= 0:
        return f"{value:.3g}".replace("-", "−")
    m, plus, _, exp = round_interval(value, value - err, value + err)
    body = f"{m} ± {plus}".replace("-", "−")
    return f"({body})×10$^{{{exp}}}$" if exp else body


def _prob(p: float) -> str:
    if not math.isfinite(p):
        return "n/a"
    if p < FLOOR:
        return "< 10$^{-6}$"
    if p >= 0.01:
        return f"{p:.2f}"
    e = math.floor(math.log10(p))
    return f"{p / 10 ** e:.1f}×10$^{{{e}}}$"


def _p_one_d(p, err) -> str:
    if p is None or not math.isfinite(p):
        return "P(1D | data): n/a"
    if p < FLOOR:
        return "P(1D | data) < 10$^{-6}$"
    if 1.0 - p < FLOOR:
        return "P(1D | data) > 1 − 10$^{-6}$"
    if err is None or not math.isfinite(err) or err <= 0:
        return f"P(1D | data) = {_prob(p)}"
    return f"P(1D | data) = {_pm(p, err)}"


def _symlog_tick(v, _pos=None) -> str:
    if v == 0:
        return "0"
    a = abs(v)
    body = f"{a:.0f}" if a < 1e4 else f"10$^{{{round(math.log10(a))}}}$"
    return ("−" if v < 0 else "") + body


@styled
def comparison_figure(comparison: dict, quick: bool = False, titles: bool = True):
    """ln Z − ln Z_best with errors per family, model probabilities and P(1D | data).

    Parameters
    ----------
    comparison : dict
        ``figure_data(...)["comparison"]``: per-model title, one_dimensional, log_evidence,
        log_evidence_err, and the summary's comparison block.
    quick, titles : bool

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    models = comparison["models"]
    names = sorted(models, key=lambda n: -(models[n]["log_evidence"] or -np.inf))
    lz = np.array([models[n]["log_evidence"] for n in names], float)
    err = np.array([models[n]["log_evidence_err"] or 0.0 for n in names], float)
    d = lz - np.nanmax(lz)
    one_d = [bool(models[n]["one_dimensional"]) for n in names]
    y = np.arange(len(names))[::-1]
    fig, body = new_figure(DOUBLE_WIDTH, 0.34 * len(names) + 1.25, quick=quick)
    a1, a2 = body.subplots(1, 2, gridspec_kw={"width_ratios": (1.25, 1.0)})
    for yi, v, e, o in zip(y, d, err, one_d):
        a1.errorbar(v, yi, xerr=e, fmt="o" if o else "s", ms=3.5,
                    color=PALETTE["one_d"] if o else PALETTE["three_d"], elinewidth=1.0,
                    capsize=2)
    low = float(np.nanmin(d - err)) if np.isfinite(d - err).any() else -1.0
    from matplotlib.ticker import FixedLocator, FuncFormatter
    a1.set_xscale("symlog", linthresh=1.0, linscale=1.0)
    left = min(-10.0, 2.0 * low)
    a1.set_xlim(left, 1.5)
    decades = int(math.floor(math.log10(-left)))
    step = max(1, math.ceil(decades / 4))
    a1.xaxis.set_major_locator(FixedLocator([0.0] + [-(10.0 ** e) for e in
                                                     range(0, decades + 1, step)]))
    a1.xaxis.set_minor_locator(FixedLocator([]))
    a1.xaxis.set_major_formatter(FuncFormatter(_symlog_tick))
    for v in (-1.0, -3.0, -5.0):
        a1.axvline(v, color=PALETTE["grey"], ls=":", lw=0.7)
    a1.axvline(0.0, color=PALETTE["ink"], lw=0.6)
    tick = [wrap(models[n]["title"] or n, 30) + (" (1D)" if o else "")
            for n, o in zip(names, one_d)]
    a1.set_yticks(y, tick, fontsize=6)
    a1.set_ylim(-0.6, len(names) - 0.4)
    a1.set_xlabel(r"$\ln Z - \ln Z_\mathrm{best}$ (nats)")
    right = a1.secondary_yaxis("right")
    right.set_yticks(y, [_pm(v, e) for v, e in zip(d, err)], fontsize=6)
    right.tick_params(length=0)
    a1.tick_params(axis="y", which="both", right=False)

    probs = np.array([comparison["model_probabilities"].get(n, np.nan) for n in names], float)
    shown = np.clip(np.nan_to_num(probs, nan=FLOOR), FLOOR, 1.0)
    a2.barh(y, shown - FLOOR * 0.5, left=FLOOR * 0.5, height=0.55,
            color=[PALETTE["one_d"] if o else PALETTE["three_d"] for o in one_d])
    a2.set_xscale("log")
    a2.set_xlim(FLOOR * 0.5, 1.0)
    a2.set_ylim(-0.6, len(names) - 0.4)
    a2.set_yticks(y, [""] * len(names))
    a2.tick_params(axis="y", which="both", left=False, right=False)
    a2.set_xlabel("P(family | data)")
    rp = a2.secondary_yaxis("right")
    rp.set_yticks(y, [_prob(p) for p in probs], fontsize=6)
    rp.tick_params(length=0)
    a2.set_title(_p_one_d(comparison.get("p_one_dimensional"),
                          comparison.get("p_one_dimensional_err")), fontsize=7)
    if titles:
        a1.set_title("evidence relative to the best family (circles: 1D; dotted: "
                     "2 ln K = 2, 6, 10)", fontsize=7)
    return fig
