"""What the command line prints: the case table of ``check``, the verdict of ``run`` and the
lines of ``report``.  Plain text, no cursor codes (progress lines:
:mod:`evidence1d.inference.progress`)."""
from __future__ import annotations

from pathlib import Path

__all__ = ["case_table", "verdict_lines", "report_lines"]

_RANGE_LABELS = {"Q_par": ("Q_par", "1/A"), "Q_perp": ("Q_perp", "1/A"), "Q": ("|Q|", "1/A"),
                 "energy": ("E", "meV"), "T": ("T", "K")}


def _table(rows, header):
    widths = [max(len(str(r[i])) for r in [header] + rows) for i in range(len(header))]
    line = "  ".join("-" * w for w in widths)
    fmt = lambda r: "  ".join(str(c).ljust(w) for c, w in zip(r, widths))  # noqa: E731
    return "\n".join([fmt(header), line] + [fmt(r) for r in rows])


def case_table(case) -> str:
    """Plain-text summary of a validated case: datasets, points, ranges, models.

    Parameters
    ----------
    case : Case

    Returns
    -------
    str

    References
    ----------
    .. [1] The case file layout of :mod:`evidence1d.case`.
    """
    rows = []
    for ds in case.datasets:
        rng = []
        for k, (lo, hi) in ds.ranges().items():
            lab, unit = _RANGE_LABELS.get(k, (k, ""))
            rng.append(f"{lab} {lo:.3g}..{hi:.3g} {unit}")
        extra = ""
        if ds.spec.is_spectrum:
            extra = f"T={ds.options['temperature']:g} K"
        rows.append([ds.name, ds.kind, ds.n, "; ".join(rng), extra])
    out = [f"case: {case.title}  ({case.path})",
           f"sample: {case.sample.name}, {case.sample.ion}{case.sample.charge}+ S={case.sample.spin:g}, "
           f"d={case.sample.spin_spacing:g} A",
           "", _table(rows, ["dataset", "kind", "points", "ranges", "conditions"]), ""]
    mrows = []
    for name, choice in case.models.items():
        prob = case.problem(name)
        n_phys = sum(1 for p in prob.names if p in choice.card.parameters)
        opts = ", ".join(f"{k}={'null' if v is None else v}"
                         for k, v in choice.card.options.items())
        mrows.append([name, "yes" if choice.card.one_dimensional else "no", n_phys,
                      len(prob.names) - n_phys, len(prob.names), opts])
    out.append(_table(mrows, ["model", "1D", "physical", "nuisance", "sampled", "options"]))
    out.append("")
    out.append(f"seed {case.seed}; output {case.output}")
    return "\n".join(out)


def verdict_lines(results) -> str:
    """The lines ``run`` prints at the end: verdict, ln Z table, where the report is.

    References
    ----------
    .. [1] Kass & Raftery, JASA 90, 773 (1995) (the verdict's wording).
    """
    cmp_ = results.comparison
    lines = ["", "model                     ln Z              P(model)  1D"]
    for name, m in results.models.items():
        lines.append(f"{name:<25} {m.evidence.log_z:9.2f} ± {m.evidence.log_z_err:<5.2f} "
                     f"{cmp_.posterior_probability[name]:8.3f}  {'yes' if m.one_dimensional else 'no'}")
    lines += ["", f"P(one-dimensional | data) = {cmp_.p_one_dimensional:.3g}",
              "verdict: " + cmp_.verdict]
    if not results.reliable:
        lines.append("WARNING: the verdict is UNRELIABLE (see report.md)")
    best = results.models.get(getattr(cmp_, "best", None))
    fits = (getattr(best, "analysis", None) or {}).get("goodness_of_fit") or {}
    bad = [ds for ds, f in fits.items() if f.get("bad_fit")]
    if bad:
        lines.append(f"WARNING: BAD FIT: the winner {cmp_.best} fits {', '.join(bad)} badly; "
                     "the data prefer it to the others, not that it describes them "
                     "(see the goodness-of-fit table in report.md)")
    absolute = (getattr(best, "analysis", None) or {}).get("absolute_scale") or {}
    off = [f"{ds} (r = {rec['ratio']['median']:.3g})" for ds, rec in absolute.items()
           if "ratio" in rec and not rec["consistent"]]
    if off:
        lines.append(f"WARNING: ABSOLUTE SCALE: the winner {cmp_.best} needs an intensity "
                     f"scale the calibration rules out on {', '.join(off)} (see report.md)")
    return "\n".join(lines)


def report_lines(out, figures: bool = True, figures_only: bool = False) -> str:
    """The lines ``report`` prints: what was written where.

    Parameters
    ----------
    out : pathlib.Path
        The folder written.
    figures, figures_only : bool
        As given to :func:`evidence1d.report.rebuild_report`.

    Returns
    -------
    str

    References
    ----------
    .. [1] The run folder layout of :mod:`evidence1d.outputs`.
    """
    out = Path(out)
    folder = out / "figures"
    n_pdf = len(list(folder.glob("*.pdf"))) if folder.is_dir() else 0
    n_png = len(list(folder.glob("*.png"))) if folder.is_dir() else 0
    lines = [] if figures_only else [f"report rebuilt: {out / 'report.md'}"]
    if figures or figures_only:
        lines.append(f"figures {'redrawn' if figures_only else 'drawn'}: {n_pdf} PDF and "
                     f"{n_png} PNG files in {folder}")
    return "\n".join(lines)
