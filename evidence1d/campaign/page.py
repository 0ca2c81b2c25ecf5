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
    rows = doc.get("true_families", fams)
    for tf in rows:
        mark = " (generator)" if tf not in fams else ""
        lines.append(f"| {tf}{mark} | " + " | ".join(str(doc["confusion_matrix"][tf][c])
                                                     for c in fams) + " |")
    if doc.get("generators"):
        lines += ["", "### Out-of-family generators", "",
                  f"Generators of {doc['generator_file']}; {doc['generator_note']}.", "",
                  "| generator | one-dimensional | called one-dimensional | won by a family "
                  "of its class | what it is |", "|---|---|---|---|---|"]
        for g in doc["generators"]:
            pt = doc["per_truth"][g["name"]]
            lines.append(f"| {g['name']} | {'yes' if g['one_dimensional'] else 'no'} | "
                         f"{_pct(pt['called_1d'])} | {_pct(pt['winner_of_its_class'])} | "
                         f"{g['description'] or '-'} |")
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
    for s in (doc.get("leave_one_out") or {}).values():
        lines.append(f"- {s['statement']}.")
    for scope, s in doc["scopes"].items():
        what = s.get("label") or ("all spectra" if scope == "all" else f"'{scope}' alone")
        lines += ["", f"## Counting {what}",
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
    loo = doc.get("leave_one_out")
    if loo:
        lines += ["", "## What each dataset adds (leave-one-out)", "",
                  "Every replicate fitted again without one dataset (same truth, same noise "
                  "on the datasets kept): Δ = 2 ln K(all) − 2 ln K(without it), paired per "
                  "replicate. A planned measurement is valued the same way when its design "
                  "is a dataset of the case.", "",
                  "| dataset | counting time | replicates | Δ median (10-90 %) | mean Δ | "
                  "share with Δ > 0 |", "|---|---|---|---|---|---|"]
        for name, s in loo.items():
            for r in s["rows"]:
                when = f"{r['factor']:g} ×" + (f" ({r['hours']:.3g} h)" if hours else "")
                if r["n"]:
                    lines.append(f"| {name} | {when} | {r['n']} | {r['delta_median']:.3g} "
                                 f"({r['delta_q10']:.3g} to {r['delta_q90']:.3g}) | "
                                 f"{r['delta_mean']:.3g} | "
                                 f"{100 * r['share_positive']:.0f} % |")
                else:
                    lines.append(f"| {name} | {when} | 0 | n/a | n/a | n/a |")
    lines += ["", "## Figures", ""] + _figure_lines(figures, out)
    return "\n".join(lines) + "\n"
