"""The look of every figure: style, colour-blind-safe palette, column widths, labels, saving.

Figures are drawn at a journal column width (:data:`COLUMN_WIDTH` one column,
:data:`DOUBLE_WIDTH` two), laid out inside that width (constrained layout or explicit
margins), and saved inside :data:`STYLE` as a vector PDF and a PNG at :data:`PNG_DPI`,
without a tight bounding box, so the saved page is exactly the figure that was laid out.
Colours are those of Okabe & Ito [1]_, distinguishable with every common colour-vision
deficiency; maps use viridis [2]_, residual maps a diverging blue-red scale.

References
----------
.. [1] M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures and
   presentations that are friendly to colorblind people" (2008), jfly.uni-koeln.de/color.
.. [2] S. van der Walt and N. Smith, "A better default colormap for Matplotlib",
   SciPy 2015 (viridis: perceptually uniform, readable in grey scale and with colour-vision
   deficiencies).
.. [3] J. D. Hunter, "Matplotlib: a 2D graphics environment", Comput. Sci. Eng. 9, 90
   (2007).
"""
from __future__ import annotations

import io
import math
import textwrap
from pathlib import Path

from ...results import atomic_write

__all__ = ["STYLE", "COLUMN_WIDTH", "DOUBLE_WIDTH", "PNG_DPI", "PALETTE", "QUICK_STAMP",
           "STAMP_HEIGHT", "axis_label", "wavevector_label", "intensity_label", "quote",
           "value_text", "new_figure", "save_figure", "save_pages", "stamp_quick", "wrap", "plt",
           "fit_text", "no_offset", "styled", "title_lines"]

#: single-column width in inches (APS and most journals: 3.375-3.5 in; common practice)
COLUMN_WIDTH = 3.4
#: two-column width in inches (APS: 7.0 in; common practice)
DOUBLE_WIDTH = 7.0
#: resolution of the PNG files (journals ask for at least 300 dpi; common practice)
PNG_DPI = 300
#: the mark on every figure of a ``--quick`` run
QUICK_STAMP = "quick look, not for publication"
#: height in inches of the strip that holds the mark
STAMP_HEIGHT = 0.16

#: Okabe & Ito (2008) colours by role
PALETTE = {
    "ink": "#000000", "model": "#0072B2", "band68": "#7fb2d8", "band95": "#cfe2f1",
    "one_d": "#D55E00", "three_d": "#0072B2", "magnetic": "#D55E00",
    "electronic": "#009E73", "lattice": "#CC79A7", "constant": "#E69F00",
    "truth": "#D55E00", "prior": "#777777", "stamp": "#D55E00", "grey": "#999999",
}

#: the plain style of every figure (matplotlib rcParams)
STYLE = {
    "figure.dpi": 100, "savefig.dpi": PNG_DPI, "savefig.bbox": None,
    "savefig.pad_inches": 0.0, "font.family": "DejaVu Sans", "mathtext.fontset": "dejavusans",
    "font.size": 7, "axes.labelsize": 7, "axes.titlesize": 7, "legend.fontsize": 6,
    "xtick.labelsize": 6, "ytick.labelsize": 6, "axes.linewidth": 0.6,
    "lines.linewidth": 1.0, "lines.markersize": 3, "errorbar.capsize": 0,
    "xtick.direction": "in", "ytick.direction": "in", "xtick.top": True, "ytick.right": True,
    "xtick.major.width": 0.6, "ytick.major.width": 0.6, "xtick.minor.width": 0.4,
    "ytick.minor.width": 0.4, "legend.frameon": False, "axes.grid": False,
    "axes.formatter.useoffset": False, "axes.formatter.limits": (-3, 4),
    "axes.formatter.use_mathtext": False, "pdf.fonttype": 42, "ps.fonttype": 42,
    "image.cmap": "viridis", "figure.constrained_layout.h_pad": 0.02,
    "figure.constrained_layout.w_pad": 0.02,
}

_WAVEVECTOR_SYMBOLS = {"Q_par": r"$Q_\parallel$", "Q_perp": r"$Q_\perp$", "Q": r"$|Q|$"}


def plt():
    """matplotlib.pyplot on the Agg backend (no display, no TeX installation needed).

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    import matplotlib
    matplotlib.use("Agg", force=False)
    import matplotlib.pyplot as pyplot
    return pyplot


def styled(draw):
    """Decorator: run a drawing function inside :data:`STYLE` (fonts, ticks, line widths
    apply to everything it creates).

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007) (``rc_context``).
    """
    import functools

    @functools.wraps(draw)
    def inner(*args, **kwargs):
        with plt().rc_context(STYLE):
            return draw(*args, **kwargs)
    return inner


def axis_label(name: str, unit: str, latex: str | None = None) -> str:
    """Axis label ``symbol (unit)`` of a parameter (no unit for dimensionless ones).

    Parameters
    ----------
    name : str
        Parameter name (used when ``latex`` is not given).
    unit : str
        Unit; ``""``, ``"1"`` or None for dimensionless.
    latex : str, optional
        The symbol in matplotlib mathtext (the model card's ``latex``).

    Returns
    -------
    str

    References
    ----------
    .. [1] BIPM, *The International System of Units*, 9th ed. (2019), §5.4.
    """
    sym = latex or name
    return sym if unit in ("", "1", None) else f"{sym} ({unit})"


def wavevector_label(axis: str, unit: str) -> str:
    """Label of a wavevector axis in the user's unit: ``Q∥ (r.l.u.)`` or ``Q∥ (Å⁻¹)``.

    Parameters
    ----------
    axis : {'Q_par', 'Q_perp', 'Q'}
    unit : {'rlu', '1/A'}

    Returns
    -------
    str

    References
    ----------
    .. [1] BIPM SI Brochure (2019), §5.4 (quantity symbol, unit in parentheses).
    """
    sym = _WAVEVECTOR_SYMBOLS.get(axis, axis)
    return f"{sym} (r.l.u.)" if unit == "rlu" else f"{sym} (Å$^{{-1}}$)"


def intensity_label(unit: str | None) -> str:
    """``I (arb. units)`` for an arbitrary intensity unit, else ``I (<unit>)``.

    References
    ----------
    .. [1] BIPM SI Brochure (2019), §5.4.
    """
    u = (unit or "arb").strip()
    return "I (arb. units)" if u.lower() in ("arb", "arb.", "a.u.", "au", "arbitrary") \
        else f"I ({u})"


def quote(median: float, q16: float, q84: float) -> str:
    """A posterior summary in mathtext, its digits set by the error.

    Two significant digits of the smaller error (PDG convention, common practice) via
    :func:`evidence1d.report.summary.round_interval`: ``1.052 ± 0.012``, or
    ``1.052^{+0.013}_{−0.011}`` when the two sides differ, times a power of ten if needed.

    Parameters
    ----------
    median, q16, q84 : float
        Median and the 16 % and 84 % quantiles.

    Returns
    -------
    str

    References
    ----------
    .. [1] Particle Data Group, Review of Particle Physics, "Introduction" (rounding of
       errors; common practice).
    """
    from ..summary import round_interval
    if not all(math.isfinite(v) for v in (median, q16, q84)):
        return "n/a"
    m, plus, minus, exp = round_interval(median, q16, q84)
    body = (f"{m} \\pm {plus}" if plus == minus else f"{m}^{{+{plus}}}_{{-{minus}}}")
    if exp:
        body = f"({body}) \\times 10^{{{exp}}}"
    return f"${body}$"


def value_text(symbol: str, median: float, q16: float, q84: float, unit: str = "") -> str:
    """``symbol = value ± error unit`` (see :func:`quote`).

    References
    ----------
    .. [1] Particle Data Group, Review of Particle Physics, "Introduction" (common practice).
    """
    u = "" if unit in ("", "1", None) else f" {unit}"
    return f"{symbol} = {quote(median, q16, q84)}{u}"


def wrap(text: str, width: int) -> str:
    """Wrap plain text to lines of at most ``width`` characters.

    References
    ----------
    .. [1] Python standard library, ``textwrap``.
    """
    return "\n".join(textwrap.wrap(text, width)) if text else text


def _shown_length(text: str) -> int:
    """Characters a mathtext string shows (``$Q_\\perp$`` shows two)."""
    import re
    return len(re.sub(r"\$|\\[A-Za-z]+|[_{}^]", "", text)) + text.count("\\") // 2


def title_lines(text: str, width_in: float, size: float = 7.0, tail: str = "") -> str:
    """Wrap a title to a figure ``width_in`` inches wide at font ``size`` points (DejaVu Sans
    averages about 0.6 em per character); ``tail`` (e.g. ``at Q⊥ = 0 r.l.u.``) is kept in
    one piece, on the last line if it fits there, else on its own line.

    References
    ----------
    .. [1] DejaVu Sans metrics (about 0.6 em per character; common practice).
    """
    limit = max(20, int(width_in * 72.0 / (0.6 * size)) - 2)
    lines = [w for line in text.split("\n") for w in wrap(line, limit).split("\n")]
    if tail:
        if _shown_length(lines[-1]) + 1 + _shown_length(tail) <= limit:
            lines[-1] = f"{lines[-1]} {tail}"
        else:
            lines.append(tail)
    return "\n".join(lines)


def no_offset(ax) -> None:
    """Plain tick labels: no offset (“+1”) and no multiplier text on either axis.

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007) (``ScalarFormatter``).
    """
    from matplotlib.ticker import ScalarFormatter
    for axis in (ax.xaxis, ax.yaxis):
        fmt = axis.get_major_formatter()
        if isinstance(fmt, ScalarFormatter):
            fmt.set_useOffset(False)


def new_figure(width: float, height: float, constrained: bool = True, quick: bool = False):
    """A figure of ``width`` × ``height`` inches (plus the quick-look strip) inside :data:`STYLE`.

    Parameters
    ----------
    width, height : float
        Inches; ``width`` should be :data:`COLUMN_WIDTH` or :data:`DOUBLE_WIDTH`.
    constrained : bool
        Use matplotlib's constrained layout (everything kept inside the figure).
    quick : bool
        Add a strip of :data:`STAMP_HEIGHT` on top with :data:`QUICK_STAMP`.

    Returns
    -------
    fig : matplotlib.figure.Figure
        The figure to save.
    body : matplotlib.figure.Figure or SubFigure
        Where to draw (the figure itself, or the part below the strip).

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007) (constrained layout, subfigures).
    """
    p = plt()
    with p.rc_context(STYLE):
        fig = p.figure(figsize=(width, height + (STAMP_HEIGHT if quick else 0.0)),
                       layout="constrained" if constrained else None)
        if not quick:
            return fig, fig
        if not constrained:
            stamp_quick(fig)
            return fig, fig
        top, body = fig.subfigures(2, 1, height_ratios=(STAMP_HEIGHT, height), hspace=0.0)
        top.text(0.5, 0.5, QUICK_STAMP, ha="center", va="center", fontsize=6,
                 color=PALETTE["stamp"], fontstyle="italic")
    return fig, body


def stamp_quick(fig) -> None:
    """Mark a figure with explicit margins: one line in the bottom :data:`STAMP_HEIGHT`
    (which the figure keeps free).

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    h = fig.get_figheight()
    fig.text(0.5, 0.5 * STAMP_HEIGHT / h, QUICK_STAMP, ha="center", va="center",
             fontsize=6, color=PALETTE["stamp"], fontstyle="italic")


def fit_text(fig, text_artist, box, min_size: float = 4.5) -> None:
    """Shrink a text's font until its extent fits ``box`` (a Bbox in display units).

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007) (``Text.get_window_extent``).
    """
    fig.canvas.draw_idle()
    renderer = fig.canvas.get_renderer()
    size = text_artist.get_fontsize()
    while size > min_size:
        ext = text_artist.get_window_extent(renderer)
        if ext.width <= box.width and ext.height <= box.height:
            return
        size -= 0.5
        text_artist.set_fontsize(size)


def _png_pdf(fig) -> tuple:
    p = plt()
    with p.rc_context(STYLE):
        png, pdf = io.BytesIO(), io.BytesIO()
        fig.savefig(png, format="png", dpi=PNG_DPI, bbox_inches=None)
        _freeze_layout(fig)                   # the PDF keeps the layout of the PNG
        fig.savefig(pdf, format="pdf", bbox_inches=None, metadata={"CreationDate": None})
    return png.getvalue(), pdf.getvalue()


def _freeze_layout(fig) -> None:
    """Stop the layout engine after a first draw (the positions stay; saving again is
    faster and gives the same page)."""
    if fig.get_layout_engine() is not None:
        fig.set_layout_engine("none")


def _with(stem: Path, suffix: str) -> Path:
    """``stem`` plus a suffix (never replacing a dot already in a dataset's name)."""
    return stem.with_name(stem.name + suffix)


def save_figure(fig, stem: Path) -> list:
    """Save ``stem.png`` (:data:`PNG_DPI` dpi) and ``stem.pdf`` (vector) and close the figure.

    Parameters
    ----------
    fig : matplotlib.figure.Figure
    stem : pathlib.Path
        Path without suffix.

    Returns
    -------
    list of pathlib.Path

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    png, pdf = _png_pdf(fig)
    plt().close(fig)
    stem = Path(stem)
    return [atomic_write(_with(stem, ".png"), png), atomic_write(_with(stem, ".pdf"), pdf)]


def save_pages(figs: list, stem: Path) -> list:
    """Save several pages: one multi-page ``stem.pdf`` and ``stem.png`` (page 1),
    ``stem_p2.png``, ... for the others; closes the figures.

    Returns
    -------
    list of pathlib.Path

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007) (``backend_pdf.PdfPages``).
    """
    if len(figs) == 1:
        return save_figure(figs[0], stem)
    from matplotlib.backends.backend_pdf import PdfPages
    p = plt()
    stem = Path(stem)
    written = []
    pdf = io.BytesIO()
    with p.rc_context(STYLE):
        with PdfPages(pdf, metadata={"CreationDate": None}) as pages:
            for fig in figs:
                pages.savefig(fig, bbox_inches=None)
                _freeze_layout(fig)
        for i, fig in enumerate(figs):
            buf = io.BytesIO()
            fig.savefig(buf, format="png", dpi=PNG_DPI, bbox_inches=None)
            name = stem.name if i == 0 else f"{stem.name}_p{i + 1}"
            written.append(atomic_write(stem.with_name(name + ".png"), buf.getvalue()))
            p.close(fig)
    written.append(atomic_write(_with(stem, ".pdf"), pdf.getvalue()))
    return written
