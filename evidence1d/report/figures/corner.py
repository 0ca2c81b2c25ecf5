"""Corner plot of a family's posterior with the prior support, prior density and truths.

Diagonal: the marginal posterior (histogram), its 16, 50 and 84 % quantiles, the prior
density's shape over the same range, the region outside the prior support shaded.  Below
the diagonal: 2D marginals with the contours holding 39.3 % and 86.5 % of the mass (1σ and
2σ of a 2D Gaussian).  Truths (simulated data) are drawn as lines and crosses.  The
medians and 68 % intervals are quoted in the empty upper triangle, their digits set by the
errors.  The layout is explicit (margins in inches) so no label leaves the figure.

References
----------
.. [1] D. Foreman-Mackey, "corner.py: scatterplot matrices in Python", J. Open Source
   Softw. 1, 24 (2016) (2D histogram contours).
.. [2] Particle Data Group, Review of Particle Physics, "Introduction" (two significant
   digits of the error; common practice).
"""
from __future__ import annotations

import math

import numpy as np
from matplotlib.transforms import Bbox

from .style import (COLUMN_WIDTH, DOUBLE_WIDTH, PALETTE, STAMP_HEIGHT, axis_label, fit_text,
                    new_figure, styled, value_text, wrap)

__all__ = ["corner_figure"]

_LEFT, _BOTTOM, _RIGHT, _TOP, _GAP = 0.64, 0.42, 0.08, 0.08, 0.04
_LEVELS = (0.393, 0.865)


def _power(limits) -> int:
    """Power of ten taken out of an axis whose numbers are very small or large."""
    m = max(abs(limits[0]), abs(limits[1]))
    if m == 0 or not math.isfinite(m):
        return 0
    e = math.floor(math.log10(m))
    return e if (e < -2 or e > 3) else 0


def _label(symbol, unit, power):
    if power:
        u = "" if unit in ("", "1", None) else f" {unit}"
        return f"{symbol} ($10^{{{power}}}${u})"
    return axis_label(symbol, unit, symbol)


def _ticks(ax, axis, lim):
    """At most three ticks, none within 12 % of an edge (labels of neighbouring panels
    never meet), plain numbers."""
    from matplotlib.ticker import FixedLocator, MaxNLocator, ScalarFormatter
    lo, hi = lim
    ticks = MaxNLocator(4).tick_values(lo, hi)
    inner = [t for t in ticks if lo + 0.12 * (hi - lo) <= t <= hi - 0.12 * (hi - lo)]
    if len(inner) > 3:
        inner = inner[::2]
    if len(inner) > 2:             # long labels (a narrow range far from 0): two ticks only
        def width(t):
            d = next((d for d in range(10) if abs(round(t, d) - t) <= 1e-9 * max(1.0, abs(t))),
                     10)
            return len(f"{t:.{d}f}")
        # room between neighbouring ticks on the page, in points, against the widest label
        # (6-pt digits are about 0.6 em wide; x labels lie side by side, y labels are short
        # rows, so only x needs the check)
        box = ax.get_position()
        span = (box.width * ax.figure.get_figwidth() if axis == "x"
                else box.height * ax.figure.get_figheight()) * 72.0
        gap = span * (inner[1] - inner[0]) / max(hi - lo, 1e-300)
        label = max(width(t) for t in inner) * 0.6 * 6.0
        if max(width(t) for t in inner) >= 6 or (axis == "x" and gap < 1.5 * label):
            inner = [inner[0], inner[-1]]
    fmt = ScalarFormatter(useOffset=False)
    fmt.set_scientific(False)
    a = ax.xaxis if axis == "x" else ax.yaxis
    a.set_major_locator(FixedLocator(inner))
    a.set_major_formatter(fmt)


def _support_shade(ax, support, limits, axis="x"):
    lo, hi = support
    span = (ax.axvspan if axis == "x" else ax.axhspan)
    line = (ax.axvline if axis == "x" else ax.axhline)
    for inside, (a, b) in ((lo > limits[0], (limits[0], lo)), (hi < limits[1], (hi, limits[1]))):
        if inside and math.isfinite(a) and math.isfinite(b):
            span(a, b, color="#dddddd", lw=0, zorder=0)
            line(lo if a == limits[0] else hi, color=PALETTE["prior"], lw=0.6, ls="-")


@styled
def corner_figure(block: dict, title: str = "", quick: bool = False):
    """Corner plot of one family's physical parameters.

    Parameters
    ----------
    block : dict
        The ``corner`` entry of a model in
        :func:`~evidence1d.report.figures.data.figure_data`: samples (n, k), symbols,
        units, limits, support, prior_x, prior_pdf, quotes (median, q16, q84), truths.
    title : str
        The family's title (quoted above the values).
    quick : bool
        Mark the figure "quick look, not for publication".

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] Foreman-Mackey, J. Open Source Softw. 1, 24 (2016).
    """
    import corner as corner_lib
    samples = np.asarray(block["samples"], float)
    k = samples.shape[1]
    width = COLUMN_WIDTH if k <= 3 else DOUBLE_WIDTH
    stamp = STAMP_HEIGHT if quick else 0.0
    panel = (width - _LEFT - _RIGHT - (k - 1) * _GAP) / k
    height = width + stamp
    fig, _ = new_figure(width, width, constrained=False, quick=quick)
    powers = [_power(lim) for lim in block["limits"]]
    scale = [10.0 ** -p for p in powers]
    lims = [(a * s, b * s) for (a, b), s in zip(block["limits"], scale)]
    sup = [(a * s, b * s) for (a, b), s in zip(block["support"], scale)]
    labels = [_label(sym, u, p) for sym, u, p in zip(block["symbols"], block["units"], powers)]
    truths = [None if t is None else t * s for t, s in zip(block["truths"], scale)]
    x = samples * np.array(scale)[None, :]

    def rect(r, c):
        left = _LEFT + c * (panel + _GAP)
        bottom = stamp + _BOTTOM + (k - 1 - r) * (panel + _GAP)
        return [left / width, bottom / height, panel / width, panel / height]

    for r in range(k):
        for c in range(r + 1):
            ax = fig.add_axes(rect(r, c))
            ax.set_xlim(lims[c])
            if r == c:
                _diagonal(ax, x[:, c], lims[c], sup[c], block, c, scale[c], truths[c])
            else:
                ax.set_ylim(lims[r])
                try:
                    corner_lib.hist2d(x[:, c], x[:, r], ax=ax, range=[lims[c], lims[r]],
                                      bins=20, levels=_LEVELS, smooth=1.0,
                                      plot_datapoints=False, plot_density=True,
                                      color=PALETTE["model"],
                                      contour_kwargs={"linewidths": 0.7})
                except (ValueError, IndexError):
                    ax.plot(x[:, c], x[:, r], ",", color=PALETTE["model"])
                ax.set_xlim(lims[c])
                ax.set_ylim(lims[r])
                _support_shade(ax, sup[c], lims[c], "x")
                _support_shade(ax, sup[r], lims[r], "y")
                if truths[c] is not None:
                    ax.axvline(truths[c], color=PALETTE["truth"], lw=0.8)
                if truths[r] is not None:
                    ax.axhline(truths[r], color=PALETTE["truth"], lw=0.8)
                _ticks(ax, "y", lims[r])
                if c == 0:
                    ax.set_ylabel(labels[r])
                else:
                    ax.tick_params(labelleft=False)
            _ticks(ax, "x", lims[c])
            if r == k - 1:
                ax.set_xlabel(labels[c])
            else:
                ax.tick_params(labelbottom=False)
            ax.tick_params(labelsize=6, top=True, right=True)
            if c == 0 and r > 0:
                ax.yaxis.set_label_coords(-0.47 / panel, 0.5)
            if r == k - 1:
                ax.xaxis.set_label_coords(0.5, -0.26 / panel)
    _quotes(fig, block, title, k, panel, width, height, stamp)
    return fig


def _diagonal(ax, x, lim, sup, block, j, scale, truth):
    h, edges = np.histogram(x, bins=30, range=lim, density=True)
    ax.stairs(h, edges, color=PALETTE["model"], lw=0.8)
    top = float(h.max()) if h.size and h.max() > 0 else 1.0
    px = np.asarray(block["prior_x"][j], float) * scale
    pdf = np.asarray(block["prior_pdf"][j], float)
    ok = np.isfinite(pdf) & (pdf > 0)
    if ok.any():
        ax.plot(px[ok], 0.5 * top * pdf[ok] / pdf[ok].max(), color=PALETTE["prior"],
                ls=":", lw=0.9)
    for q in np.quantile(x, (0.16, 0.5, 0.84)):
        ax.axvline(q, color=PALETTE["model"], ls="--", lw=0.6)
    _support_shade(ax, sup, lim, "x")
    if truth is not None:
        ax.axvline(truth, color=PALETTE["truth"], lw=0.9)
    ax.set_ylim(0, 1.1 * top)
    ax.set_yticks([])


def _quotes(fig, block, title, k, panel, width, height, stamp):
    """Family title and quoted values in the empty upper-right block of panels."""
    h = max(1, k // 3)
    x0 = (_LEFT + h * (panel + _GAP)) / width
    top = (height - _TOP) / height
    x1 = (width - _RIGHT) / width
    y0 = top - (h * panel + (h - 1) * _GAP) / height
    if k == 1:
        return
    lines = []
    for sym, unit, (m, lo, hi) in zip(block["symbols"], block["units"], block["quotes"]):
        lines.append(value_text(sym, m, lo, hi, unit))
    chars = max(12, int((x1 - x0) * width * 72 / 7 / 0.55))
    head = wrap(title, chars) + "\n" if title else ""
    legend = ("dotted: prior density (shape); grey: outside the prior"
              + ("; red: truth" if any(t is not None for t in block["truths"]) else ""))
    text = fig.text(x0 + 0.1 / width, top - 0.02 / height,
                    head + "\n".join(lines) + "\n" + wrap(legend, int(chars * 1.2)),
                    ha="left", va="top", fontsize=7, linespacing=1.45)
    box = Bbox.from_extents(0, 0, (x1 - x0) * fig.bbox.width - 0.12 * fig.dpi,
                            (top - y0) * fig.bbox.height - 0.04 * fig.dpi)
    fit_text(fig, text, box)
