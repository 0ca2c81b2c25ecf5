"""The results layer: summary.json, report.md, tables.tex, figures and saved samples.

:func:`write_report` is called by :func:`evidence1d.runner.run` at the end of a run; it saves
what a rebuild needs (inputs, evidence and chain arrays), exports the posterior samples,
writes the report, the tables and the figures, and writes ``summary.json`` last, so that a
folder without it is visibly incomplete.  :func:`rebuild_report` (``evidence1d report DIR``)
reloads the saved results and the copied case and writes the same files again, with the
same numbers, without sampling.

References
----------
.. [1] R. E. Kass and A. E. Raftery, J. Am. Stat. Assoc. 90, 773 (1995).
"""
from __future__ import annotations

import json
from pathlib import Path

__all__ = ["write_report", "rebuild_report"]


def _write_outputs(results, case, figures: bool, workers: int | None = None, *,
                   figures_only: bool = False, quick: bool | None = None) -> Path:
    from .figures import is_quick, render
    from .latex import render_tables
    from .markdown import render_markdown, report_context
    from .schema import validate_summary
    from .store import atomic_write, export_samples
    from .summary import build_summary

    out = Path(results.out)
    summary = build_summary(results, case)
    validate_summary(summary)
    if quick is None:
        quick = is_quick(out, results, case)
    if not figures_only:
        context = dict(report_context(results, case), quick=bool(quick))
        export_samples(results)
        atomic_write(out / "report.md", render_markdown(summary, context))
        atomic_write(out / "tables.tex", render_tables(summary, context))
    if figures or figures_only:
        # the case file's ``figures:`` block (cuts, temperature axis, truths...), if any
        render(results, case, summary, out / "figures", settings=getattr(case, "figures", None),
               quick=quick, workers=workers)
    if not figures_only:
        atomic_write(out / "summary.json", json.dumps(summary, indent=2, ensure_ascii=False,
                                                      allow_nan=False) + "\n")
    return out


def write_report(results, case, *, figures: bool = True, workers: int | None = None) -> Path:
    """Write the output folder of a run.

    Parameters
    ----------
    results : RunResults
        From :func:`evidence1d.runner.run`; ``results.out`` is the folder.
    case : Case
        The case that was run.
    figures : bool
        Draw the figures (PNG and PDF).
    workers : int, optional
        Processes that draw the figures (see :func:`evidence1d.parallel.worker_count`).

    Returns
    -------
    pathlib.Path
        The output folder.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    from .store import save_inputs, save_results
    out = Path(results.out)
    out.mkdir(parents=True, exist_ok=True)
    (out / "summary.json").unlink(missing_ok=True)
    case_copy = save_inputs(case, out)
    save_results(results, case_copy)
    return _write_outputs(results, case, figures, workers)


def rebuild_report(folder, *, figures: bool = True, workers: int | None = None, out=None,
                   figures_only: bool = False) -> Path:
    """Rewrite summary.json, report.md, tables.tex, samples and figures of a saved run.

    Parameters
    ----------
    folder : str or pathlib.Path
        Output folder of a finished run (it holds ``saved/`` and ``inputs/``).
    figures : bool
        Draw the figures.
    workers : int, optional
        Processes that draw the figures (see :func:`evidence1d.parallel.worker_count`).
    out : str or pathlib.Path, optional
        Write the rebuilt files into this folder instead (created; ``folder`` is left
        untouched; the saved results stay in ``folder``).
    figures_only : bool
        Draw only the figures (no summary.json, report.md, tables.tex or samples).

    Returns
    -------
    pathlib.Path
        The folder written.

    Raises
    ------
    InputError
        Not a run folder, copied inputs changed since the run (their SHA-256 differs from
        the provenance record), or the case's parameters differ from the saved ones.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995).
    """
    from ..case import load_case
    from ..errors import InputError
    from ..provenance import file_hash
    from .store import load_results

    folder = Path(folder)
    if not folder.is_dir():
        raise InputError("no such folder; give the output folder of a finished run",
                         file=folder)
    results = load_results(folder)
    case = load_case(results.case_path)
    recorded = results.provenance.get("data_sha256", {})
    for ds in case.datasets:
        if ds.name in recorded and file_hash(ds.path) != recorded[ds.name]:
            raise InputError(f"the copy of dataset '{ds.name}' differs from the file that was "
                             "run (SHA-256 mismatch); restore it or run the case again",
                             file=ds.path)
    for name, mr in results.models.items():
        if name not in case.models or case.parameter_names(name) != list(mr.names):
            raise InputError(f"the saved results of '{name}' do not match the copied case "
                             "(different parameters); run the case again",
                             file=results.case_path)
    from .figures import is_quick
    quick = is_quick(folder, results, case)
    if out is not None and Path(out).resolve() != folder.resolve():
        import dataclasses
        if Path(out).exists() and not Path(out).is_dir():
            raise InputError("--out must be a folder; give a new or existing folder",
                             file=Path(out))
        Path(out).mkdir(parents=True, exist_ok=True)
        results = dataclasses.replace(results, out=Path(out))
    return _write_outputs(results, case, figures, workers, figures_only=figures_only,
                          quick=quick)
