"""Spectra: cuts with predictive bands and residuals (paged), and (Q, ħω) maps.

Draws the blocks of :func:`evidence1d.report.figures.data.figure_data`; no computation of
model values here.

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks (data against the predictive bands, residuals in units of the error).
.. [2] J. D. Hunter, Comput. Sci. Eng. 9, 90 (2007).
"""
from __future__ import annotations

import math

import numpy as np
from matplotlib import patheffects

from .style import (COLUMN_WIDTH, DOUBLE_WIDTH, PALETTE, intensity_label, new_figure,
                    no_offset, styled, title_lines, wavevector_label)

__all__ = ["cut_pages", "map_figure", "CUTS_PER_PAGE", "draw_bands"]

#: cuts on one page (two rows of three)
CUTS_PER_PAGE = 6
_ENERGY = r"$\hbar\omega$ (meV)"
_RESIDUAL = "residual (σ)"
_OUTLINE = [patheffects.withStroke(linewidth=2.0, foreground="black")]
_OVERLAY_STYLES = ("--", ":", "-", "-.")


def draw_bands(ax, x, bands, label=True):
    """The 95 % and 68 % predictive bands and the median of ``bands`` (5, n).

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    ax.fill_between(x, bands[0], bands[4], color=PALETTE["band95"], lw=0,
                    label="95 % band" if label else None)
    ax.fill_between(x, bands[1], bands[3], color=PALETTE["band68"], lw=0,
                    label="68 % band" if label else None)
    ax.plot(x, bands[2], color=PALETTE["model"], lw=1.0,
            label="posterior median" if label else None)


def _residual(ax, x, r):
    ax.axhspan(-1, 1, color="#e6e6e6", lw=0)
    ax.axhline(0.0, color=PALETTE["model"], lw=0.6)
    ok = np.isfinite(r)
    ax.plot(x[ok], r[ok], "o", color=PALETTE["ink"], ms=1.8)
    lim = max(3.0, float(np.nanmax(np.abs(r[ok]))) * 1.15) if ok.any() else 3.0
    ax.set_ylim(-lim, lim)
    ax.yaxis.set_major_locator(_locator(3, symmetric=True))


def _locator(n, symmetric=False):
    from matplotlib.ticker import MaxNLocator
    return MaxNLocator(n, symmetric=symmetric, prune=None)


def _x_label(block, cut):
    if cut["axis"] == "energy":
        return _ENERGY
    return wavevector_label(cut["axis"], block["wavevector_unit"])


def _title(body, text, width, tail=""):
    if text:
        body.suptitle(title_lines(text, width, tail=tail), fontsize=7)


@styled
def cut_pages(block: dict, model_title: str, quick: bool = False, titles: bool = True) -> list:
    """Pages of cuts of one spectrum: data with errors, median and 68/95 % bands, residuals.

    Parameters
    ----------
    block : dict
        A spectrum block of :func:`~evidence1d.report.figures.data.figure_data`.
    model_title : str
        The family's title (the page title names it and the dataset).
    quick : bool
        Mark the pages "quick look, not for publication".
    titles : bool
        Draw the page title.

    Returns
    -------
    list of matplotlib.figure.Figure
        :data:`CUTS_PER_PAGE` cuts per page.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    cuts = block["cuts"]
    pages = [cuts[i:i + CUTS_PER_PAGE] for i in range(0, len(cuts), CUTS_PER_PAGE)]
    n_pages = len(pages)
    ncols = 3 if len(cuts) > 2 else max(1, len(cuts))
    width = DOUBLE_WIDTH if ncols == 3 else COLUMN_WIDTH
    figs = []
    for p, page in enumerate(pages):
        rows = math.ceil(len(page) / ncols)
        height = 1.75 * rows + 0.75
        fig, body = new_figure(width, height, quick=quick)
        outer = body.add_gridspec(rows, ncols)
        for k, cut in enumerate(page):
            r, c = divmod(k, ncols)
            inner = outer[r, c].subgridspec(2, 1, height_ratios=(3, 1), hspace=0.0)
            ax = body.add_subplot(inner[0])
            axr = body.add_subplot(inner[1], sharex=ax)
            draw_bands(ax, cut["model_x"], cut["bands"], label=k == 0)
            ax.errorbar(cut["x"], cut["y"], cut["err"], fmt="o", color=PALETTE["ink"],
                        ms=2.0, elinewidth=0.6, label="data" if k == 0 else None)
            ax.set_title(cut["label"], fontsize=6.5, pad=2)
            ax.tick_params(labelbottom=False)
            ax.yaxis.set_major_locator(_locator(4))
            _residual(axr, cut["x"], cut["residual"])
            if c == 0:
                ax.set_ylabel(intensity_label(block["intensity_unit"]))
                axr.set_ylabel(_RESIDUAL, fontsize=6)
            if r == rows - 1 or k + ncols >= len(page):
                axr.set_xlabel(_x_label(block, cut))
            axr.xaxis.set_major_locator(_locator(4))
            no_offset(ax)
            no_offset(axr)
        handles, labels = body.axes[0].get_legend_handles_labels()
        body.legend(handles, labels, loc="outside lower center", ncol=4, fontsize=6)
        if titles:
            tail = f"at {block['common']}" if block.get("common") else ""
            if n_pages > 1:
                tail = f"{tail} (page {p + 1} of {n_pages})".strip()
            _title(body, f"{model_title}: dataset '{block['name']}'", width, tail)
        figs.append(fig)
    return figs


def _norm(data, scale: str, percentiles):
    from matplotlib.colors import LogNorm, Normalize, PowerNorm
    finite = data[np.isfinite(data)]
    lo, hi = (np.percentile(finite, percentiles) if finite.size else (0.0, 1.0))
    lo, hi = float(lo), float(hi)
    if scale == "log":
        pos = finite[finite > 0]
        lo = max(lo, float(np.percentile(pos, percentiles[0])) if pos.size else 1e-3)
        hi = max(hi, 10 * lo)
        return LogNorm(vmin=lo, vmax=hi), "log"
    if not hi > lo:
        pad = 0.5 * abs(hi) if hi != 0 else 1.0
        lo, hi = lo - pad, hi + pad
    if scale == "sqrt":
        lo = max(lo, 0.0)
        return PowerNorm(0.5, vmin=lo, vmax=max(hi, lo + 1e-12)), "square root"
    return Normalize(vmin=lo, vmax=hi), "linear"


def _overlay(ax, overlays):
    for k, ov in enumerate(overlays):
        ok = np.isfinite(ov["y"])
        ax.plot(ov["x"][ok], ov["y"][ok], color="white", lw=0.9,
                ls=_OVERLAY_STYLES[k % len(_OVERLAY_STYLES)], path_effects=_OUTLINE,
                label=ov["label"])


@styled
def map_figure(block: dict, model_title: str, dataset: str, intensity_unit: str,
               scale: str = "linear", percentiles=(1.0, 99.0), quick: bool = False,
               titles: bool = True):
    """Data, median model and normalised residual on the (Q, ħω) grid, side by side.

    The colour limits of data and model are the stated percentiles of the data (so a
    strong zone-centre signal does not hide the continuum), arrows on the colour bar mark
    clipped values; the family's characteristic energies (:mod:`.overlays`) are drawn on
    every panel and named in a legend below the panels.

    Parameters
    ----------
    block : dict
        The ``map`` entry of a spectrum block.
    model_title, dataset, intensity_unit : str
    scale : {'linear', 'sqrt', 'log'}
    percentiles : (float, float)
    quick, titles : bool

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] van der Walt & Smith, SciPy 2015 (viridis).
    .. [2] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    x, E = block["x"], block["energy"]
    e_lo = E.min() - 0.5 * np.ptp(E) / max(E.size - 1, 1)
    e_hi = E.max() + 0.5 * np.ptp(E) / max(E.size - 1, 1)
    overlays = [ov for ov in block["overlays"]
                if np.any((ov["y"] >= e_lo) & (ov["y"] <= e_hi))]       # visible ones only
    fig, body = new_figure(DOUBLE_WIDTH, 2.55, quick=quick)
    axes = body.subplots(1, 3, sharey=True)
    norm, how = _norm(block["data"], scale, percentiles)
    r = block["residual"]
    rl = max(3.0, float(np.nanpercentile(np.abs(r), 99))) if np.isfinite(r).any() else 3.0
    ims = []
    p0, p1 = percentiles
    for ax, z, lab in zip(axes, (block["data"], block["model"], r),
                          (f"data (colour: {how}, {p0:g}–{p1:g} % range)",
                           "posterior median model", "residual")):
        kw = {"norm": norm} if lab != "residual" else {"cmap": "RdBu_r", "vmin": -rl,
                                                        "vmax": rl}
        ims.append(ax.pcolormesh(x, E, z, shading="nearest", rasterized=True, **kw))
        ax.set_title(lab, fontsize=7, pad=2)
        ax.set_xlabel(wavevector_label(block["axis"], block["unit"]))
        _overlay(ax, overlays)
        ax.set_xlim(x.min() - 0.5 * np.ptp(x) / max(x.size - 1, 1),
                    x.max() + 0.5 * np.ptp(x) / max(x.size - 1, 1))
        ax.set_ylim(e_lo, e_hi)
        ax.tick_params(color="white" if lab != "residual" else PALETTE["ink"], which="both")
        no_offset(ax)
    axes[0].set_ylabel(_ENERGY)
    extend = "neither" if how == "log" else "both"
    cb = body.colorbar(ims[1], ax=list(axes[:2]), pad=0.02, fraction=0.05, extend=extend)
    # the intensity scale's label above its bar: beside it, it stood next to the residual
    # panel and read as that panel's axis label
    cb.ax.set_title(intensity_label(intensity_unit), fontsize=6, pad=3)
    cb2 = body.colorbar(ims[2], ax=axes[2], pad=0.02, fraction=0.08)
    cb2.set_label("(data − model)/error (σ)", fontsize=6)
    for c in (cb, cb2):
        c.ax.tick_params(labelsize=6)
    if overlays:
        from matplotlib.lines import Line2D
        handles = [Line2D([], [], color=PALETTE["ink"], lw=1.0,
                          ls=_OVERLAY_STYLES[k % len(_OVERLAY_STYLES)])
                   for k in range(len(overlays))]
        labels = [ov["label"] + " (at the posterior medians)" if k == 0 else ov["label"]
                  for k, ov in enumerate(overlays)]
        body.legend(handles, labels, loc="outside lower center", ncol=len(labels),
                    fontsize=6)
    if titles:
        _title(body, f"{model_title}: dataset '{dataset}'", DOUBLE_WIDTH,
               f"at {block['common']}" if block.get("common") else "")
    return fig
