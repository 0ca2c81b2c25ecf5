"""Figures of a run, vector PDF and 300-dpi PNG: corner plots, spectra, thermodynamics, the
comparison.

:func:`render` assembles the figure data the run computed (:mod:`.data`, from
:mod:`evidence1d.analysis.figure_data`) and draws every figure;
:func:`write_figures` draws precomputed data.  Figures fit one journal column (3.4 in) or
two (7.0 in), use the colour-blind-safe palette and the style of :mod:`.style`, label axes
in physics words with units (ħω (meV), Q in the data's wavevector unit, T (K), χ, C) and
carry the mark "quick look, not for publication" when the run used ``--quick``.

Files (``folder/``):
``corner_<model>``, ``predictive_<model>_<dataset>`` (cuts of a spectrum, several pages in
one PDF and ``_p2``, ``_p3``... PNGs; or the thermodynamic figure), ``map_<model>_<dataset>``
(gridded spectra) and ``comparison``, each as ``.pdf`` and ``.png``.

References
----------
.. [1] J. D. Hunter, "Matplotlib: a 2D graphics environment", Comput. Sci. Eng. 9, 90 (2007).
.. [2] D. Foreman-Mackey, "corner.py: scatterplot matrices in Python", J. Open Source Softw.
   1, 24 (2016).
"""
from __future__ import annotations

from pathlib import Path

from ...data.kinds import KINDS
from .comparison import comparison_figure
from .corner import corner_figure
from .data import figure_data
from ...figure_settings import figure_settings
from .spectra import cut_pages, map_figure
from .style import COLUMN_WIDTH, DOUBLE_WIDTH, PNG_DPI, QUICK_STAMP, STYLE, axis_label
from .thermo import thermo_figure

__all__ = ["STYLE", "COLUMN_WIDTH", "DOUBLE_WIDTH", "PNG_DPI", "QUICK_STAMP", "axis_label",
           "corner_figure", "cut_pages", "map_figure", "thermo_figure", "comparison_figure",
           "dataset_figures", "figure_data", "figure_settings", "write_figures",
           "render"]


def dataset_figures(block: dict, model_title: str, settings: dict, quick: bool = False) -> list:
    """The figures of one dataset under one family.

    Parameters
    ----------
    block : dict
        A dataset block of :func:`~.data.figure_data`.
    model_title : str
    settings : dict
        The checked ``figures`` setting.
    quick : bool

    Returns
    -------
    list of (str, list of matplotlib.figure.Figure)
        ("predictive", pages) for cuts or the thermodynamic figure, ("map", [figure]) for
        a gridded spectrum.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    titles = settings["titles"]
    out = []
    if KINDS[block["kind"]].is_spectrum:
        if block["cuts"]:
            out.append(("predictive", cut_pages(block, model_title, quick, titles)))
        if block["map"] is not None:
            out.append(("map", [map_figure(block["map"], model_title, block["name"],
                                           block["intensity_unit"], settings["map_scale"],
                                           settings["map_percentiles"], quick, titles)]))
    else:
        out.append(("predictive", [thermo_figure(block, model_title, quick, titles,
                                                 settings["temperature_axis"] == "log")]))
    return out


def _draw(kind: str, folder: Path, args: tuple, settings: dict, quick: bool) -> list:
    """Draw and save one figure job; returns the files written."""
    from .style import save_figure, save_pages
    if kind == "corner":
        model, block, title = args
        return save_figure(corner_figure(block, title if settings["titles"] else "", quick),
                           folder / f"corner_{model}")
    if kind == "dataset":
        model, dataset, block, title = args
        written = []
        for prefix, figs in dataset_figures(block, title, settings, quick):
            written += save_pages(figs, folder / f"{prefix}_{model}_{dataset}")
        return written
    (comparison,) = args
    return save_figure(comparison_figure(comparison, quick, settings["titles"]),
                       folder / "comparison")


def write_figures(folder, data: dict, workers: int | None = 1) -> list:
    """Draw and save every figure of :func:`~.data.figure_data`, PNG and PDF.

    Parameters
    ----------
    folder : pathlib.Path
        Output folder (created).
    data : dict
        From :func:`~.data.figure_data`.
    workers : int, optional
        Processes drawing the figures in parallel (None: see
        :func:`evidence1d.parallel.worker_count`); the files do not depend on it.

    Returns
    -------
    list of pathlib.Path

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    from ...parallel import run_in_pool, worker_count
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    s, q = data["settings"], data["quick"]
    jobs = [("corner", folder, (m, md["corner"], md["title"]), s, q)
            for m, md in data["models"].items()]
    jobs += [("dataset", folder, (m, d, block, md["title"]), s, q)
             for m, md in data["models"].items() for d, block in md["datasets"].items()]
    jobs.append(("comparison", folder, (data["comparison"],), s, q))
    # the corner plots are the slowest: they go first
    return [f for files in run_in_pool(_draw, jobs, worker_count(workers, len(jobs)))
            for f in files]


def render(results, summary: dict, folder, quick: bool = False,
           workers: int | None = None) -> list:
    """Draw every figure of a run into ``folder`` from its results record.

    Parameters
    ----------
    results : RunResults
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary`.
    folder : pathlib.Path
    quick : bool
        Mark every figure "quick look, not for publication".
    workers : int, optional

    Returns
    -------
    list of pathlib.Path

    References
    ----------
    .. [1] Hunter, Comput. Sci. Eng. 9, 90 (2007).
    """
    return write_figures(folder, figure_data(results, summary, quick), workers=workers)
