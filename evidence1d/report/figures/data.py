"""The figure data of a run, assembled from its results record (no model code).

The arrays of every family (corner samples, predictive bands, cuts, maps, overlays,
thermodynamic parts) were computed during the run by
:func:`evidence1d.analysis.figure_data.model_figure_data` and kept in
``ModelResult.analysis["figures"]``; the comparison panel takes its numbers from the
summary.

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
"""
from __future__ import annotations

from ...errors import InputError

__all__ = ["figure_data"]


def figure_data(results, summary: dict, quick: bool = False) -> dict:
    """The arrays of every figure of a run.

    Parameters
    ----------
    results : RunResults
    summary : dict
        From :func:`~evidence1d.report.summary.build_summary`.
    quick : bool
        The run used ``--quick`` settings (every figure is marked).

    Returns
    -------
    dict
        {"settings", "quick", "title", "comparison", "models": {model: {"title",
        "one_dimensional", "corner", "datasets": {dataset: block}}}}.

    Raises
    ------
    InputError
        The run was made without figure data (``--no-figures``).

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    settings = results.context.get("figure_settings")
    missing = [n for n, mr in results.models.items() if "figures" not in mr.analysis]
    if settings is None or missing:
        raise InputError("this run was made without figures (--no-figures): its figure "
                         "data were not computed; run the case again to draw them")
    out = {"settings": settings, "quick": bool(quick), "title": summary.get("title", ""),
           "comparison": {"models": {n: {k: m.get(k) for k in
                                         ("title", "one_dimensional", "log_evidence",
                                          "log_evidence_err")}
                                     for n, m in summary["models"].items()},
                          **summary["comparison"]},
           "models": {}}
    for name, mr in results.models.items():
        fig = mr.analysis["figures"]
        out["comparison"].setdefault("symbols", {}).update(fig["symbols"])
        out["models"][name] = {"title": summary["models"][name].get("title", name),
                               "one_dimensional": bool(mr.one_dimensional),
                               "corner": fig["corner"], "datasets": fig["datasets"]}
    return out
