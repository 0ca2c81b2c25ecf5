"""Figures of a run, PNG and PDF: corner plots, posterior-predictive plots, the comparison.

Plots only draw: every number comes from :mod:`evidence1d.report.summary` (quantiles,
predictive bands, maps, continuum bounds).  One plain style of our own (:data:`STYLE`) sized
for a single journal column (3.4 in wide), with labelled axes and units; matplotlib's Agg
backend, no TeX installation needed.

References
----------
.. [1] J. D. Hunter, "Matplotlib: a 2D graphics environment", Comput. Sci. Eng. 9, 90 (2007).
.. [2] D. Foreman-Mackey, "corner.py: scatterplot matrices in Python", J. Open Source Softw.
   1, 24 (2016).
"""
from __future__ import annotations

import io
from pathlib import Path

import numpy as np

from .store import atomic_write

__all__ = ["STYLE", "COLUMN_WIDTH", "corner_figure", "predictive_figures",
           "comparison_figure", "write_figures", "axis_label"]

#: single-column width of most journals, inches
COLUMN_WIDTH = 3.4
_INK, _MODEL, _BAND68, _BAND95, _ONE_D = "#222222", "#1f4e8c", "#8fb0d9", "#d3e0f0", "#b3432b"

#: the plain style of every figure (matplotlib rcParams)
STYLE = {
    "figure.figsize": (COLUMN_WIDTH, 2.6), "figure.dpi": 100, "savefig.dpi": 300,
    "savefig.bbox": "tight", "savefig.pad_inches": 0.02, "font.family": "DejaVu Sans",
    "font.size": 8, "axes.labelsize": 8, "axes.titlesize": 8, "legend.fontsize": 7,
    "xtick.labelsize": 7, "ytick.labelsize": 7, "axes.linewidth": 0.6,
    "lines.linewidth": 1.0, "lines.markersize": 3, "errorbar.capsize": 0,
    "xtick.direction": "in", "ytick.direction": "in", "xtick.top": True, "ytick.right": True,
    "xtick.major.width": 0.6, "ytick.major.width": 0.6, "legend.frameon": False,
    "axes.grid": False, "pdf.fonttype": 42, "ps.fonttype": 42, "image.cmap": "viridis",
}

_X_LABELS = {"energy": "E (meV)", "Q_par": "Q$_\\parallel$ (Å$^{-1}$)",
             "Q_perp": "Q$_\\perp$ (Å$^{-1}$)", "Q": "|Q| (Å$^{-1}$)", "T": "T (K)"}
_Y_LABELS = {"susceptibility": "χ (emu/mol)", "heat_capacity": "C (J mol$^{-1}$ K$^{-1}$)",
             "entropy": "S$_\\mathrm{mag}$ (J mol$^{-1}$ K$^{-1}$)"}


def axis_label(name: str, unit: str, latex: str | None = None) -> str:
    """Axis label ``symbol (unit)`` of a parameter (no unit for dimensionless ones).

    References
    ----------
    .. [1] BIPM, *The International System of Units*, 9th ed. (2019), §5.4.
    """
    sym = latex or name
    return sym if unit in ("", "1", None) else f"{sym} ({unit})"


def _plt():
    import matplotlib
    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as plt
    return plt


def _save(fig, stem: Path) -> list:
    written = []
    for fmt in ("png", "pdf"):
        buf = io.BytesIO()
        fig.savefig(buf, format=fmt, metadata={"CreationDate": None} if fmt == "pdf" else None)
        written.append(atomic_write(stem.with_suffix(f".{fmt}"), buf.getvalue()))
    _plt().close(fig)
    return written


def corner_figure(samples, labels, title: str = ""):
    """Corner plot with the 16, 50 and 84 % quantiles marked and quoted above each column.

    Parameters
    ----------
    samples : ndarray, shape (n, k)
        Posterior samples of k parameters.
    labels : list of str
        Axis labels with units.
    title : str

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] Foreman-Mackey, J. Open Source Softw. 1, 24 (2016).
    """
    import corner
    plt = _plt()
    samples = np.asarray(samples, dtype=float)
    k = samples.shape[1]
    ranges = []
    for j in range(k):
        lo, hi = float(samples[:, j].min()), float(samples[:, j].max())
        pad = 1e-3 * max(abs(lo), 1.0) if hi <= lo else 0.0
        ranges.append((lo - pad, hi + pad))
    size = max(COLUMN_WIDTH, 1.15 * k)
    with plt.rc_context(STYLE):
        fig = plt.figure(figsize=(size, size))
        corner.corner(samples, labels=labels, range=ranges, quantiles=[0.16, 0.5, 0.84],
                      show_titles=True, title_fmt=".3g", fig=fig, color=_MODEL,
                      label_kwargs={"fontsize": 8}, title_kwargs={"fontsize": 7},
                      hist_kwargs={"linewidth": 0.8}, plot_datapoints=k <= 6,
                      levels=(0.393, 0.865), max_n_ticks=3, smooth=1.0)
        if title:
            fig.suptitle(title, fontsize=8, y=1.04)
    return fig


def _band(ax, x, bands):
    ax.fill_between(x, bands[0], bands[4], color=_BAND95, lw=0, label="95 %")
    ax.fill_between(x, bands[1], bands[3], color=_BAND68, lw=0, label="68 %")
    ax.plot(x, bands[2], color=_MODEL, label="median model")


def _cuts_figure(block, ylab, title):
    plt = _plt()
    cuts = block["cuts"]
    n = len(cuts)
    cols = min(2, n)
    rows = int(np.ceil(n / cols))
    with plt.rc_context(STYLE):
        fig, axes = plt.subplots(rows, cols, figsize=(COLUMN_WIDTH, 1.25 * rows + 0.7),
                                 squeeze=False)
        for ax, cut in zip(axes.flat, cuts):
            _band(ax, cut["model_x"], cut["bands"])
            ax.errorbar(cut["x"], cut["y"], cut["err"], fmt="o", color=_INK, ms=2,
                        elinewidth=0.6, label="data")
            ax.set_title(cut["label"], fontsize=6)
            ax.tick_params(labelsize=6)
        for ax in list(axes.flat)[n:]:
            ax.set_visible(False)
        fig.supxlabel(_X_LABELS.get(cuts[0]["axis"], cuts[0]["axis"]), fontsize=8)
        fig.supylabel(ylab, fontsize=8)
        handles, labels = axes.flat[0].get_legend_handles_labels()
        fig.suptitle(title, fontsize=8, y=0.995)
        top = 1.0 - 0.55 / fig.get_figheight()
        fig.tight_layout(rect=(0, 0, 1, top))
        fig.legend(handles, labels, loc="upper center", ncol=4, fontsize=6,
                   bbox_to_anchor=(0.5, top + 0.2 / fig.get_figheight()))
    return fig


def _map_figure(block, ylab, title):
    plt = _plt()
    mp = block["map"]
    x, E = mp["x"], mp["energy"]
    with plt.rc_context(STYLE):
        fig, axes = plt.subplots(3, 1, figsize=(COLUMN_WIDTH, 6.4), sharex=True)
        vmin = float(np.nanmin([mp["data"].min(), mp["model"].min()]))
        vmax = float(np.nanmax([mp["data"].max(), mp["model"].max()]))
        r = float(max(np.nanmax(np.abs(mp["residual"])), 1e-12))
        panels = (("data", mp["data"], None, (vmin, vmax), ylab),
                  ("median model", mp["model"], None, (vmin, vmax), ylab),
                  ("residual (data − model)/error", mp["residual"], "RdBu_r", (-r, r),
                   "normalised residual"))
        for ax, (lab, z, cmap, (lo, hi), clab) in zip(axes, panels):
            im = ax.pcolormesh(x, E, z, shading="nearest", cmap=cmap, vmin=lo, vmax=hi)
            fig.colorbar(im, ax=ax, label=clab, pad=0.02)
            ax.set_ylabel(_X_LABELS["energy"])
            ax.set_title(lab, fontsize=7)
            b = mp["bounds"]
            if b is not None:
                for edge, ls in (("lower", "--"), ("upper", ":")):
                    ax.plot(b["x"], b[edge], color="white" if cmap is None else _INK,
                            ls=ls, lw=0.9, label=f"two-spinon {edge} bound")
                ax.set_ylim(E.min() - 0.5 * np.ptp(E) / max(E.size - 1, 1),
                            E.max() + 0.5 * np.ptp(E) / max(E.size - 1, 1))
        if mp["bounds"] is not None:
            b = mp["bounds"]
            axes[0].legend(loc="upper right", fontsize=6, labelcolor="white")
            axes[0].set_title(f"data; continuum bounds at J = {b['J']:.3g} meV, "
                              f"Δ = {b['delta']:.3g}", fontsize=7)
        axes[-1].set_xlabel(_X_LABELS[mp["axis"]])
        fig.suptitle(title, fontsize=8)
        fig.tight_layout()
    return fig


def _thermo_figure(block, title):
    plt = _plt()
    with plt.rc_context(STYLE):
        fig, (ax, axr) = plt.subplots(2, 1, figsize=(COLUMN_WIDTH, 3.2), sharex=True,
                                      gridspec_kw={"height_ratios": (3, 1)})
        _band(ax, block["model_x"], block["bands"])
        ax.errorbar(block["x"], block["y"], block["err"], fmt="o", color=_INK, ms=2.5,
                    elinewidth=0.6, label="data")
        ax.set_ylabel(_Y_LABELS.get(block["kind"], block["kind"]))
        ax.legend(loc="best", fontsize=6)
        ax.set_title(title, fontsize=8)
        axr.axhline(0.0, color=_MODEL, lw=0.6)
        axr.plot(block["x"], block["residual"], "o", color=_INK, ms=2.5)
        axr.set_ylabel("residual / error")
        axr.set_xlabel(_X_LABELS["T"])
        fig.tight_layout()
    return fig


def predictive_figures(block: dict, model: str, dataset: str) -> list:
    """Posterior-predictive figures of one dataset under one family.

    Parameters
    ----------
    block : dict
        One entry of :func:`~evidence1d.report.summary.predictive_data`.
    model, dataset : str

    Returns
    -------
    list of (str, matplotlib.figure.Figure)
        File stems and figures: ``predictive_<model>_<dataset>`` (cuts or the thermodynamic
        curve with residuals) and, for gridded spectra, ``map_<model>_<dataset>``.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996): posterior predictive checks.
    """
    title = f"{dataset}: {model}"
    out = []
    if block["kind"] in ("crystal_spectrum", "powder_spectrum"):
        ylab = f"I ({block['units'].get('intensity', 'arb')})"
        if block["cuts"]:
            out.append((f"predictive_{model}_{dataset}", _cuts_figure(block, ylab, title)))
        if block["map"] is not None:
            out.append((f"map_{model}_{dataset}", _map_figure(block, ylab, title)))
    else:
        out.append((f"predictive_{model}_{dataset}", _thermo_figure(block, title)))
    return out


def comparison_figure(summary: dict):
    """ln Z − ln Z_best with errors per family, and the model probabilities with P(1D).

    Parameters
    ----------
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary`.

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    plt = _plt()
    models = summary["models"]
    c = summary["comparison"]
    names = list(models)
    lz = np.array([models[n]["log_evidence"] for n in names])
    err = np.array([models[n]["log_evidence_err"] or 0.0 for n in names])
    one_d = [models[n]["one_dimensional"] for n in names]
    y = np.arange(len(names))
    colours = [_ONE_D if o else _MODEL for o in one_d]
    with plt.rc_context(STYLE):
        fig, (a1, a2) = plt.subplots(1, 2, figsize=(COLUMN_WIDTH * 2, 0.5 * len(names) + 1.4))
        for yi, v, e, col in zip(y, lz - lz.max(), err, colours):
            a1.errorbar(v, yi, xerr=e, fmt="o", color=col)
        a1.axvline(0.0, color=_INK, lw=0.6)
        a1.set_yticks(y, names)
        a1.set_xlabel("ln Z − ln Z$_\\mathrm{best}$ (nats)")
        a1.set_title("evidence relative to the best family (red: 1D)", fontsize=7)
        probs = [c["model_probabilities"][n] for n in names]
        a2.barh(y, probs, color=colours)
        a2.set_yticks(y, [""] * len(names))
        a2.set_xlim(0, 1)
        a2.set_xlabel("P(family | data)")
        a2.set_title(f"P(1D | data) = {c['p_one_dimensional']:.3g} ± "
                     f"{c['p_one_dimensional_err']:.2g}", fontsize=7)
        fig.tight_layout()
    return fig


def _draw(kind: str, folder: Path, args: tuple) -> list:
    """Draw and save one figure job of :func:`write_figures`; returns the files written."""
    if kind == "corner":
        samples, labels, title, stem = args
        return _save(corner_figure(samples, labels, title=title), folder / stem)
    if kind == "predictive":
        block, model, dataset = args
        written = []
        for stem, fig in predictive_figures(block, model, dataset):
            written += _save(fig, folder / stem)
        return written
    (summary,) = args
    return _save(comparison_figure(summary), folder / "comparison")


def write_figures(folder, summary: dict, predictive: dict, corner_inputs: dict,
                  workers: int | None = 1) -> list:
    """Draw and save every figure, PNG and PDF.

    Parameters
    ----------
    folder : pathlib.Path
        Output folder (created).
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary`.
    predictive : dict
        From :func:`~evidence1d.report.summary.predictive_data`.
    corner_inputs : dict
        model -> {"samples": (n, k) array, "labels": list of str}.
    workers : int, optional
        Processes drawing the figures in parallel (None: see
        :func:`evidence1d.parallel.worker_count`); the files do not depend on it.

    Returns
    -------
    list of pathlib.Path
        Files written: ``corner_<model>``, ``predictive_*``, ``map_*``, ``comparison``.

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    from ..parallel import run_in_pool, worker_count
    folder = Path(folder)
    jobs = [("corner", folder, (ci["samples"], ci["labels"],
                                f"{summary['models'][model]['title']} ({model})",
                                f"corner_{model}"))
            for model, ci in corner_inputs.items()]
    jobs += [("predictive", folder, (block, model, dataset))
             for model, per in predictive.items() for dataset, block in per.items()]
    jobs.append(("comparison", folder, (summary,)))
    # the corner plots are the slowest: start them first
    return [f for files in run_in_pool(_draw, jobs, worker_count(workers, len(jobs)))
            for f in files]
