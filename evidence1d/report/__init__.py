"""The report layer: summary.json, report.md, tables.tex, figures and exported samples,
rendered from a results record alone.

:func:`write_report` renders a run's results (computed by :func:`evidence1d.runner.run`,
written to a folder by :func:`evidence1d.outputs.run_to_folder`); :func:`rebuild_report`
(``evidence1d report DIR``) reads the saved record of a run folder
(:func:`evidence1d.results.load_results`) and renders the same files again, with the same
numbers, without model code.  ``summary.json`` is written last, so that a folder without
it is visibly incomplete.

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995).
"""
from __future__ import annotations

import dataclasses
import json
from pathlib import Path

__all__ = ["write_report", "rebuild_report"]


def write_report(results, *, figures: bool = True, workers: int | None = None,
                 figures_only: bool = False) -> Path:
    """Render the report of a run into ``results.out``.

    Parameters
    ----------
    results : RunResults
        A results record with ``out`` set (the folder written).
    figures : bool
        Draw the figures (PNG and PDF; the run must have computed their data).
    workers : int, optional
        Processes that draw the figures (see :func:`evidence1d.parallel.worker_count`).
    figures_only : bool
        Draw only the figures (no summary.json, report.md, tables.tex or samples).

    Returns
    -------
    pathlib.Path
        The folder written.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    from ..results import atomic_write
    from .figures import render
    from .latex import render_tables
    from .markdown import render_markdown, report_context
    from .samples import export_samples
    from .schema import validate_summary
    from .summary import build_summary

    out = Path(results.out)
    out.mkdir(parents=True, exist_ok=True)
    summary = build_summary(results)
    validate_summary(summary)
    quick = bool(results.context.get("quick", False))
    if not figures_only:
        (out / "summary.json").unlink(missing_ok=True)
        context = report_context(results)
        export_samples(results)
        atomic_write(out / "report.md", render_markdown(summary, context))
        atomic_write(out / "tables.tex", render_tables(summary, context))
    if figures or figures_only:
        render(results, summary, out / "figures", quick=quick, workers=workers)
    if not figures_only:
        atomic_write(out / "summary.json", json.dumps(summary, indent=2, ensure_ascii=False,
                                                      allow_nan=False) + "\n")
    return out


def rebuild_report(folder, *, figures: bool = True, workers: int | None = None, out=None,
                   figures_only: bool = False) -> Path:
    """Rewrite summary.json, report.md, tables.tex, samples and figures of a saved run.

    Parameters
    ----------
    folder : str or pathlib.Path
        Output folder of a finished run (it holds ``saved/results.npz``).
    figures : bool
        Draw the figures.
    workers : int, optional
        Processes that draw the figures (see :func:`evidence1d.parallel.worker_count`).
    out : str or pathlib.Path, optional
        Write the rebuilt files into this folder instead (created; ``folder`` is left
        untouched).
    figures_only : bool
        Draw only the figures.

    Returns
    -------
    pathlib.Path
        The folder written.

    Raises
    ------
    InputError
        Not a run folder, saved results of another version, or figures asked of a run made
        without them.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    from ..errors import InputError
    from ..results import load_results

    folder = Path(folder)
    if not folder.is_dir():
        raise InputError("no such folder; give the output folder of a finished run",
                         file=folder)
    results = load_results(folder)
    if out is not None and Path(out).resolve() != folder.resolve():
        if Path(out).exists() and not Path(out).is_dir():
            raise InputError("--out must be a folder; give a new or existing folder",
                             file=Path(out))
        Path(out).mkdir(parents=True, exist_ok=True)
        results = dataclasses.replace(results, out=Path(out))
    return write_report(results, figures=figures, workers=workers, figures_only=figures_only)
