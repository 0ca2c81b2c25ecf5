"""The report pages of a campaign (Markdown): what was simulated, the scores with their
uncertainty, how to read them, and the figures."""
from __future__ import annotations

import os
from pathlib import Path

import numpy as np

__all__ = ["calibration_page", "plan_page"]


def _pct(r) -> str:
    if r is None or r.get("rate") is None:
        return "n/a (no replicate of that kind)"
    lo, hi = r["interval95"]
    return (f"{100 * r['rate']:.1f} % ({r['count']} of {r['n']}; 95 % interval "
            f"{100 * lo:.1f}-{100 * hi:.1f} %)")


def _figure_lines(files, out) -> list:
    lines = []
    for f in files:
        if Path(f).suffix == ".png":
            rel = os.path.relpath(f, out)
            lines += [f"![{Path(f).stem}]({rel})", ""]
    return lines


def calibration_page(doc: dict, records: list, figures: list, out) -> str:
    """``calibration.md``: the page of :func:`~evidence1d.campaign.calibration.calibrate`."""
    fams = doc["families"]
    t = doc["threshold"]
    times = [r["run_time"] for r in records if r.get("run_time")]
    lines = [f"# Calibration: {doc['case']}", "",
             "SIMULATED replicates (not measurements): "
             f"{doc['replicates_per_family']} per true family, truths drawn from the "
             f"{doc['truths']}; {doc['noise']}.",
             f"Sampler settings of every fit: {doc['settings']}"
             + (" (smoke settings of --quick: not for conclusions)." if doc["quick"] else "."),
             f"{doc['replicates']['finished']} replicates scored, "
             f"{doc['replicates']['failed']} failed"
             + (f"; {np.mean(times):.0f} s per replicate on average." if times else "."),
             "", "## How often the comparison is wrong", "",
             f"A replicate is called one-dimensional when ln K (one-dimensional families "
             f"against the others) > {t['ln_k']:g}, i.e. 2 ln K > {t['two_ln_k']:g}.", "",
             f"- false one-dimensional rate (truth not one-dimensional, called so): "
             f"{_pct(doc['false_1d_rate'])}",
             f"- missed one-dimensional rate (truth one-dimensional, not called so): "
             f"{_pct(doc['missed_1d_rate'])}",
             f"- the winning family is the true one in {_pct(doc['accuracy'])}", "",
             "| true family | " + " | ".join(f"chosen: {f}" for f in fams) + " |",
             "|---|" + "---|" * len(fams)]
    for tf in fams:
        lines.append(f"| {tf} | " + " | ".join(str(doc["confusion_matrix"][tf][c])
                                               for c in fams) + " |")
    rel = doc["reliability"]
    lines += ["", "## Does P(1D) mean what it says?", "",
              "Replicates binned by their P(1D); in a reliable comparison the share of "
              "one-dimensional truths in a bin equals the bin's mean P(1D). With truths "
              "drawn from the priors the fit uses, this holds exactly for correct evidences.",
              "", "| P(1D) bin | replicates | mean P(1D) | observed share |", "|---|---|---|---|"]
    for b in rel["bins"]:
        mp = "" if b["mean_predicted"] is None else f"{b['mean_predicted']:.2f}"
        ob = "" if b["observed"] is None else f"{b['observed']:.2f}"
        lines.append(f"| {b['p_low']:.1f}-{b['p_high']:.1f} | {b['n']} | {mp} | {ob} |")
    if rel["brier_score"] is not None:
        lines += ["", f"Brier score {rel['brier_score']:.3f} (0 is perfect)."]
    lines += ["", "## Do the credible intervals cover the truth?", "",
              "| interval | nominal | observed |", "|---|---|---|"]
    for name, cov in doc["coverage"].items():
        lines.append(f"| {name} % | {100 * cov['nominal']:.1f} % | {_pct(cov['overall'])} |")
    lines += ["", "Per parameter (family: parameter, 68 % / 95 %):", ""]
    for k in doc["coverage"]["68"]["parameters"]:
        a = doc["coverage"]["68"]["parameters"][k]
        b = doc["coverage"]["95"]["parameters"][k]
        lines.append(f"- {k}: {_pct(a)} / {_pct(b)}")
    lines += ["", "With truths from the priors, coverage below nominal means intervals too "
              "narrow (or a sampler that has not converged); with truths from a posterior "
              "(--from) the intervals need not be nominal.", "", "## Figures", ""]
    lines += _figure_lines(figures, out)
    return "\n".join(lines) + "\n"


def plan_page(doc: dict, figures: list, out) -> str:
    """``plan.md``: the page of :func:`~evidence1d.campaign.planning.plan`."""
    hours = doc.get("case_counting_hours")
    lines = [f"# Counting-time plan: {doc['case']}", "",
             f"SIMULATED replicates (not measurements): truth family {doc['truth_family']}, "
             f"truths drawn from the {doc['truths']}; {doc['replicates']} replicates per "
             f"counting time; {doc['noise']}; {doc['scaling']}.",
             f"Measure: {doc['measure']}. Sampler settings: {doc['settings']}"
             + (" (smoke settings of --quick: not for conclusions)." if doc["quick"] else "."),
             f"Failed replicates: {doc['failed']}.", "", "## Answer", ""]
    for s in doc["scopes"].values():
        lines.append(f"- {s['statement']}.")
    for scope, s in doc["scopes"].items():
        lines += ["", f"## Counting {'all spectra' if scope == 'all' else scope + ' alone'}",
                  "", "| counting time | replicates | 2 ln K median (10-90 %) | "
                  f"share with 2 ln K > {doc['target_two_ln_k']:g} |", "|---|---|---|---|"]
        for r in s["rows"]:
            when = f"{r['factor']:g} ×" + (f" ({r['hours']:.3g} h)" if hours else "")
            if r["n"]:
                q = (f"{r['two_ln_k_median']:.1f} ({r['two_ln_k_q10']:.1f} to "
                     f"{r['two_ln_k_q90']:.1f})")
                lo, hi = r["interval95"]
                f = f"{100 * r['fraction_above']:.0f} % ({100 * lo:.0f}-{100 * hi:.0f} %)"
            else:
                q = f = "n/a"
            lines.append(f"| {when} | {r['n']} | {q} | {f} |")
    lines += ["", "## Figures", ""] + _figure_lines(figures, out)
    return "\n".join(lines) + "\n"
