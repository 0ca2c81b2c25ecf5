"""The comparison: ln Z relative to the best family, model probabilities and P(1D); the
evidence budget (ln K by dataset) and the prior sensitivity of ln K when the run has them.

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


def _symlog_axis(ax, values, right=1.5):
    """Symmetric-log x axis down to the most negative value, ticks a few decades apart."""
    from matplotlib.ticker import FixedLocator, FuncFormatter
    finite = np.asarray(values, float)
    finite = finite[np.isfinite(finite)]
    low = float(finite.min()) if finite.size else -1.0
    high = float(finite.max()) if finite.size else 0.0
    ax.set_xscale("symlog", linthresh=1.0, linscale=1.0)
    left = min(-10.0, 2.0 * low)
    right = max(right, 2.0 * high if high > 0 else right)
    ax.set_xlim(left, right)
    ticks = [0.0]
    for sign, end in ((-1.0, -left), (1.0, right)):
        if end >= 10.0:
            decades = int(math.floor(math.log10(end)))
            step = max(1, math.ceil(decades / 4))
            ticks += [sign * 10.0 ** e for e in range(0, decades + 1, step)]
    ax.xaxis.set_major_locator(FixedLocator(sorted(ticks)))
    ax.xaxis.set_minor_locator(FixedLocator([]))
    ax.xaxis.set_major_formatter(FuncFormatter(_symlog_tick))


def _right_labels(ax, y, labels):
    r = ax.secondary_yaxis("right")
    r.set_yticks(y, labels, fontsize=6)
    r.tick_params(length=0)
    ax.tick_params(axis="y", which="both", right=False)


def _evidence_panel(ax, comparison, names, titles):
    models = comparison["models"]
    lz = np.array([models[n]["log_evidence"] for n in names], float)
    err = np.array([models[n]["log_evidence_err"] or 0.0 for n in names], float)
    d = lz - np.nanmax(lz)
    y = np.arange(len(names))[::-1]
    for yi, v, e, n in zip(y, d, err, names):
        o = bool(models[n]["one_dimensional"])
        ax.errorbar(v, yi, xerr=e, fmt="o" if o else "s", ms=3.5,
                    color=PALETTE["one_d"] if o else PALETTE["three_d"], elinewidth=1.0,
                    capsize=2)
    _symlog_axis(ax, d - err)
    for v in (-1.0, -3.0, -5.0):
        ax.axvline(v, color=PALETTE["grey"], ls=":", lw=0.7)
    ax.axvline(0.0, color=PALETTE["ink"], lw=0.6)
    ax.set_yticks(y, [wrap(models[n]["title"] or n, 30)
                      + (" (1D)" if models[n]["one_dimensional"] else "") for n in names],
                  fontsize=6)
    ax.set_ylim(-0.6, len(names) - 0.4)
    ax.set_xlabel(r"$\ln Z - \ln Z_\mathrm{best}$ (nats)")
    _right_labels(ax, y, [_pm(v, e) for v, e in zip(d, err)])
    if titles:
        ax.set_title("evidence relative to the best family (circles: 1D; dotted: "
                     "2 ln K = 2, 6, 10)", fontsize=7)


def _probability_panel(ax, comparison, names):
    models = comparison["models"]
    y = np.arange(len(names))[::-1]
    probs = np.array([comparison["model_probabilities"].get(n, np.nan) for n in names], float)
    shown = np.clip(np.nan_to_num(probs, nan=FLOOR), FLOOR, 1.0)
    ax.barh(y, shown - FLOOR * 0.5, left=FLOOR * 0.5, height=0.55,
            color=[PALETTE["one_d"] if models[n]["one_dimensional"] else PALETTE["three_d"]
                   for n in names])
    ax.set_xscale("log")
    ax.set_xlim(FLOOR * 0.5, 1.0)
    ax.set_ylim(-0.6, len(names) - 0.4)
    ax.set_yticks(y, [""] * len(names))
    ax.tick_params(axis="y", which="both", left=False)
    ax.set_xlabel("P(family | data)")
    _right_labels(ax, y, [_prob(p) for p in probs])
    ax.set_title(_p_one_d(comparison.get("p_one_dimensional"),
                          comparison.get("p_one_dimensional_err")), fontsize=7)


def _rows_panel(ax, labels, values, errors, right, reference=None):
    y = np.arange(len(labels))[::-1]
    v = np.array([np.nan if x is None else x for x in values], float)
    e = np.array([0.0 if x is None else x for x in errors], float)
    ok = np.isfinite(v)
    ax.errorbar(v[ok], y[ok], xerr=e[ok], fmt="D", ms=3.0, color=PALETTE["model"],
                elinewidth=1.0, capsize=2)
    spread = np.concatenate([v[ok] - e[ok], v[ok] + e[ok]] +
                            ([[reference]] if reference is not None else []))
    if spread.size and np.nanmax(np.abs(spread)) > 30.0:
        _symlog_axis(ax, spread, right=float(np.nanmax(spread)) * 1.2 + 1.0)
    ax.axvline(0.0 if reference is None else reference, color=PALETTE["ink"], lw=0.6)
    ax.set_yticks(y, labels, fontsize=6)
    ax.set_ylim(-0.6, len(labels) - 0.4)
    _right_labels(ax, y, right)


def _budget_panel(ax, budget, titles, wrap_at=70):
    rows = budget.get("sequential") or []
    a, b = (budget.get("families") or ["A", "B"])[:2]
    _rows_panel(ax, [r["dataset"] for r in rows], [r.get("ln_k") for r in rows],
                [r.get("ln_k_err") for r in rows],
                [_pm(r["ln_k"], r.get("ln_k_err") or 0.0) if r.get("ln_k") is not None
                 else "n/a" for r in rows])
    ax.set_xlabel(f"contribution to ln K of {a} over {b} (nats)")
    if titles:
        ax.set_title(wrap(f"evidence budget: ln K = {_pm(budget['ln_k'], budget['ln_k_err'])} "
                          "by dataset, each given those above it", wrap_at), fontsize=7)


def _sensitivity_panel(ax, sens, titles, symbols, wrap_at=70):
    rows = sens.get("rows") or []
    a, b = (sens.get("families") or ["A", "B"])[:2]
    _rows_panel(ax, [f"{symbols.get(r['parameter'], r['parameter'])}: {r['change']}"
                     for r in rows],
                [r.get("ln_k") for r in rows], [r.get("ln_k_err") for r in rows],
                [_pm(r["ln_k"], r.get("ln_k_err") or 0.0) if r.get("ln_k") is not None
                 else r.get("method") or "no number" for r in rows],
                reference=sens.get("ln_k"))
    ax.set_xlabel(f"ln K of {a} over {b} (nats)")
    if titles:
        ax.set_title(wrap(f"prior sensitivity: ln K = {_pm(sens['ln_k'], 0.0)} with the "
                          "declared priors (line)", wrap_at), fontsize=7)


@styled
def comparison_figure(comparison: dict, quick: bool = False, titles: bool = True):
    """ln Z − ln Z_best per family, model probabilities and P(1D | data); the evidence budget
    and the prior sensitivity of ln K when the run has them.

    Parameters
    ----------
    comparison : dict
        ``figure_data(...)["comparison"]``: per-model title, one_dimensional, log_evidence,
        log_evidence_err, and the summary's comparison block (``evidence_budget`` and
        ``prior_sensitivity`` are drawn when present and not null).
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
    budget = comparison.get("evidence_budget") or None
    sens = comparison.get("prior_sensitivity") or None
    extra = [x for x in (budget and ("budget", budget), sens and ("sens", sens)) if x]
    top = 0.34 * len(names) + 1.25
    n_rows = max([len(x.get("sequential") or []) if k == "budget" else len(x.get("rows") or [])
                  for k, x in extra] or [0])
    bottom = 0.16 * n_rows + 1.1 if extra else 0.0
    fig, body = new_figure(DOUBLE_WIDTH, top + bottom, quick=quick)
    gs = body.add_gridspec(2 if extra else 1, 2, width_ratios=(1.25, 1.0),
                           height_ratios=(top, bottom) if extra else None)
    _evidence_panel(body.add_subplot(gs[0, 0]), comparison, names, titles)
    _probability_panel(body.add_subplot(gs[0, 1]), comparison, names)
    # side by side, each title wraps to its own panel's width (about 40 characters at 7 pt)
    wrap_at = 70 if len(extra) == 1 else 40
    for k, (kind, block) in enumerate(extra):
        ax = body.add_subplot(gs[1, :] if len(extra) == 1 else gs[1, k])
        if kind == "budget":
            _budget_panel(ax, block, titles, wrap_at)
        else:
            _sensitivity_panel(ax, block, titles, comparison.get("symbols") or {}, wrap_at)
    return fig
