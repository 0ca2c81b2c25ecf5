"""Thermodynamics: χ(T) with 1/χ(T); C(T) with C/T and the entropy; S(T) data.

The model parts are drawn separately where the run holds them: the family's magnetic part,
χ₀ + C_imp/T, the electronic γ_e T and the lattice β T³; the entropy S_mag(T) = ∫ C_mag/T dT
of the model and of the data is compared with R ln(2S + 1).  The temperature axis is
linear or logarithmic (the ``temperature_axis`` setting).

References
----------
.. [1] C. Kittel, *Introduction to Solid State Physics*, 8th ed. (Wiley, 2005), Ch. 5
   (C = γT + βT³) and Ch. 14 (magnetic entropy R ln(2S + 1), Curie law 1/χ ∝ T).
.. [2] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996).
"""
from __future__ import annotations

import numpy as np

from ...data.kinds import KINDS
from .spectra import draw_bands
from .style import COLUMN_WIDTH, PALETTE, new_figure, no_offset, styled, title_lines

__all__ = ["thermo_figure"]

_PART_STYLE = {"magnetic": "--", "constant": "-.", "electronic": ":", "lattice": (0, (5, 1, 1, 1))}


def _log_axis(ax):
    """Logarithmic T axis labelled 1, 2, 5, 10, 20, 50... in plain numbers (no minor labels)."""
    from matplotlib.ticker import FuncFormatter, LogLocator, NullFormatter
    ax.set_xscale("log")
    lo, hi = ax.get_xlim()
    subs = (1.0, 2.0, 5.0) if hi / max(lo, 1e-300) < 1e3 else (1.0,)
    ax.xaxis.set_major_locator(LogLocator(base=10.0, subs=subs))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _pos: f"{v:g}"))
    ax.xaxis.set_minor_formatter(NullFormatter())


def _data(ax, x, y, err, label="data"):
    ax.errorbar(x, y, err, fmt="o", color=PALETTE["ink"], ms=2.2, elinewidth=0.6,
                label=label, zorder=3)


def _parts(ax, x, parts, divide=None):
    for key, label, y in parts:
        yy = y / divide if divide is not None else y
        ax.plot(x, yy, color=PALETTE[key], ls=_PART_STYLE[key], lw=1.0, label=label)


def _residual(ax, x, r):
    ax.axhspan(-1, 1, color="#e6e6e6", lw=0)
    ax.axhline(0.0, color=PALETTE["model"], lw=0.6)
    ok = np.isfinite(r)
    ax.plot(x[ok], r[ok], "o", color=PALETTE["ink"], ms=2.0)
    lim = max(3.0, 1.15 * float(np.nanmax(np.abs(r[ok])))) if ok.any() else 3.0
    ax.set_ylim(-lim, lim)
    ax.set_ylabel("residual (σ)")


def _inverse(ax, b, label):
    y, err = b["y"], b["err"]
    ok = y > 0
    with np.errstate(all="ignore"):
        inv_bands = 1.0 / b["bands"][::-1]
    inv_bands = np.where(np.isfinite(inv_bands) & (b["bands"][::-1] > 0), inv_bands, np.nan)
    draw_bands(ax, b["model_x"], inv_bands, label=False)
    ax.errorbar(b["x"][ok], 1.0 / y[ok], err[ok] / y[ok] ** 2, fmt="o", color=PALETTE["ink"],
                ms=2.2, elinewidth=0.6, zorder=3)
    ax.set_ylabel(label)
    finite = np.concatenate([1.0 / y[ok], inv_bands[2][np.isfinite(inv_bands[2])]])
    if finite.size:
        lo, hi = float(finite.min()), float(finite.max())
        pad = 0.06 * (hi - lo if hi > lo else abs(hi) or 1.0)
        ax.set_ylim(min(0.0, lo - pad) if lo > 0 and lo < 0.3 * hi else lo - pad, hi + pad)


def _over_t(ax, b, label):
    x, mx = b["x"], b["model_x"]
    draw_bands(ax, mx, b["bands"] / mx, label=False)
    ax.errorbar(x, b["y"] / x, b["err"] / x, fmt="o", color=PALETTE["ink"], ms=2.2,
                elinewidth=0.6, zorder=3)
    _parts(ax, mx, [(a, None, y) for a, _, y in b["parts"]], divide=mx)
    ax.set_ylabel(label)


def _entropy(ax, ent):
    draw_bands(ax, ent["model_x"], ent["bands"], label=False)
    if ent.get("x") is not None:
        ax.errorbar(ent["x"], ent["y"], ent["err"], fmt="s", color=PALETTE["ink"], ms=2.0,
                    mfc="white", elinewidth=0.5, zorder=3,
                    label=r"data $\int C_\mathrm{mag}/T\,dT$")
    ax.axhline(ent["ceiling"], color=PALETTE["prior"], ls="--", lw=0.8,
               label=ent["ceiling_label"])
    ax.set_ylabel(KINDS["entropy"].value_label)
    top = max(ent["ceiling"], float(np.nanmax(ent["bands"][4])),
              float(np.nanmax(ent["y"] + ent["err"])) if ent.get("x") is not None else 0.0)
    ax.set_ylim(0.0, 1.08 * top)


@styled
def thermo_figure(block: dict, model_title: str, quick: bool = False, titles: bool = True,
                  log_t: bool = False):
    """The figure of one thermodynamic dataset under one family.

    Susceptibility: χ(T) with its parts, 1/χ(T), residuals.  Heat capacity: C(T) with the
    magnetic, electronic and lattice parts, C/T, residuals and the magnetic entropy against
    R ln(2S + 1).  Entropy data: S(T), residuals.

    Parameters
    ----------
    block : dict
        A thermodynamic block of :func:`~evidence1d.report.figures.data.figure_data`.
    model_title : str
    quick, titles : bool
    log_t : bool
        Logarithmic temperature axis.

    Returns
    -------
    matplotlib.figure.Figure

    References
    ----------
    .. [1] Kittel (2005), Ch. 5 and 14.
    """
    kind = KINDS[block["kind"]]
    ent = block.get("entropy")
    derived = kind.derived_panel
    rows = (3,) + ((2.2,) if derived else ()) + (1.1,) + ((2.4,) if ent else ())
    height = 0.62 * sum(rows) + 0.9
    fig, body = new_figure(COLUMN_WIDTH, height, quick=quick)
    axes = body.subplots(len(rows), 1, sharex=True, gridspec_kw={"height_ratios": rows,
                                                                "hspace": 0.0})
    x, mx = block["x"], block["model_x"]
    ax = axes[0]
    draw_bands(ax, mx, block["bands"])
    _data(ax, x, block["y"], block["err"])
    _parts(ax, mx, block["parts"])
    ax.set_ylabel(kind.value_label)
    if kind.free_spin_ceiling and "ceiling" in block:
        ax.axhline(block["ceiling"], color=PALETTE["prior"], ls="--", lw=0.8,
                   label=block["ceiling_label"])
        top = max(block["ceiling"], float(np.nanmax(block["bands"][4])),
                  float(np.nanmax(block["y"] + block["err"])))
        ax.set_ylim(min(0.0, float(np.nanmin(block["y"] - block["err"]))), 1.08 * top)
    k = 1
    if derived:
        {"inverse": _inverse, "over_T": _over_t}[derived[0]](axes[k], block, derived[1])
        k += 1
    _residual(axes[k], x, block["residual"])
    k += 1
    if ent:
        _entropy(axes[k], ent)
    for a in axes:
        if log_t:
            _log_axis(a)
        no_offset(a)
        a.label_outer()
    axes[-1].set_xlabel(kind.x_label)
    handles, labels = [], []
    for a in axes:
        for h, lab in zip(*a.get_legend_handles_labels()):
            if lab not in labels:
                handles.append(h)
                labels.append(lab)
    body.legend(handles, labels, loc="outside lower center", ncol=3, fontsize=6)
    if titles:
        body.suptitle(title_lines(f"{model_title}:\ndataset '{block['name']}'", COLUMN_WIDTH),
                      fontsize=7)
    return fig
