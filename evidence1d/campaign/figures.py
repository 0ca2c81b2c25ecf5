"""The figures of a campaign: confusion matrix, ln K per true family, reliability diagram,
coverage (calibration); 2 ln K and the fraction of separated replicates against counting
time (plan).  Each is saved as a 300 dpi PNG and a vector PDF in the report's style.

References
----------
.. [1] A. H. Murphy and R. L. Winkler, Appl. Stat. 26, 41 (1977): reliability diagrams.
.. [2] R. E. Kass and A. E. Raftery, JASA 90, 773 (1995): the 2 ln K scale.
.. [3] J. D. Hunter, Comput. Sci. Eng. 9, 90 (2007).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

__all__ = ["calibration_figures", "plan_figure"]


def _style():
    from ..report.figures import style
    return style


def _short(name: str) -> str:
    return name.replace("_", " ")


def calibration_figures(doc: dict, records: list, folder, quick: bool = False) -> list:
    """Draw the four calibration figures into ``folder``; return the files written."""
    st = _style()
    folder = Path(folder)
    files = []
    for stem, draw in (("confusion", _confusion), ("ln_k", _ln_k),
                       ("reliability", _reliability), ("coverage", _coverage)):
        with st.plt().rc_context(st.STYLE):
            fig = draw(doc, records, quick)
            files += st.save_figure(fig, folder / stem)
    return files


def _confusion(doc, records, quick):
    st = _style()
    fams = doc["families"]
    truths = doc.get("true_families", fams)
    m = np.array([[doc["confusion_matrix"][t][c] for c in fams] for t in truths], dtype=float)
    fig, body = st.new_figure(st.COLUMN_WIDTH, 2.9 + 0.2 * (len(truths) - len(fams)),
                              quick=quick)
    ax = body.subplots()
    rows = m.sum(axis=1, keepdims=True)
    frac = np.divide(m, rows, out=np.zeros_like(m), where=rows > 0)
    ax.imshow(frac, cmap="Blues", vmin=0, vmax=1)
    for i in range(len(truths)):
        for j in range(len(fams)):
            ax.text(j, i, f"{int(m[i, j])}", ha="center", va="center",
                    color="white" if frac[i, j] > 0.6 else "black")
    if len(truths) > len(fams):                  # generators below the families' rows
        ax.axhline(len(fams) - 0.5, color=st.PALETTE["ink"], lw=1.0)
    ax.set_xticks(range(len(fams)), [_short(f) for f in fams], rotation=20, ha="right")
    ax.set_yticks(range(len(truths)), [_short(f) + ("" if f in fams else " (gen.)")
                                       for f in truths])
    ax.set_xlabel("chosen family (largest posterior probability)")
    ax.set_ylabel("true family or generator")
    body.suptitle(st.title_lines(f"Which family wins ({doc['replicates']['finished']} "
                                 "replicates; shade: share of the row)", st.COLUMN_WIDTH))
    return fig


def _ln_k(doc, records, quick):
    st = _style()
    fams = doc.get("true_families", doc["families"])
    one_d = doc.get("truth_one_dimensional", doc["one_dimensional"])
    fig, body = st.new_figure(st.COLUMN_WIDTH, 2.6 + 0.2 * (len(fams) - len(doc["families"])),
                              quick=quick)
    ax = body.subplots()
    rng = np.random.default_rng(0)            # jitter of the points only
    t = doc["threshold"]["ln_k"]
    lin = max(2.0 * t, 1.0)
    lo, hi = -lin, lin
    for i, f in enumerate(fams):
        v = np.array([r["ln_k_1d"] for r in records if not r.get("failed")
                      and r["family"] == f and r.get("ln_k_1d") is not None], dtype=float)
        col = st.PALETTE["one_d"] if one_d.get(f) else st.PALETTE["three_d"]
        if v.size:
            ax.scatter(v, i + rng.uniform(-0.18, 0.18, v.size), s=6,
                       color=col, alpha=0.7, linewidths=0)
            ax.plot([np.median(v)] * 2, [i - 0.3, i + 0.3], color=st.PALETTE["ink"], lw=1.2)
            lo, hi = min(lo, v.min()), max(hi, v.max())
    for x in (t, -t):
        ax.axvline(x, color=st.PALETTE["grey"], ls="--", lw=0.8)
    ax.set_xscale("symlog", linthresh=lin)   # ln K spans ±1000 and ±1
    ax.set_xlim(1.5 * lo, 1.5 * hi)
    ticks = [x for x in (-1e4, -1e3, -100, -10, 0, 10, 100, 1e3, 1e4) if 1.5 * lo <= x <= 1.5 * hi]
    ax.set_xticks(ticks, [f"{x:g}" for x in ticks])
    ax.minorticks_off()
    ax.set_yticks(range(len(fams)), [_short(f) for f in fams])
    ax.set_ylim(-0.6, len(fams) - 0.4)
    ax.set_xlabel(f"ln K (1D families vs the others; linear within ±{lin:g})")
    ax.set_ylabel("true family or generator")
    body.suptitle(st.title_lines(f"ln K per true family (dashed: ±{t:g}; bar: median)",
                                 st.COLUMN_WIDTH))
    return fig


def _reliability(doc, records, quick):
    st = _style()
    fig, body = st.new_figure(st.COLUMN_WIDTH, 2.9, quick=quick)
    ax = body.subplots()
    ax.plot([0, 1], [0, 1], color=st.PALETTE["grey"], ls="--", lw=0.8, label="perfectly reliable")
    for b in doc["reliability"]["bins"]:
        if not b["n"]:
            continue
        lo, hi = b["interval95"]
        ax.errorbar(b["mean_predicted"], b["observed"],
                    yerr=[[max(0.0, b["observed"] - lo)], [max(0.0, hi - b["observed"])]],
                    fmt="o",
                    color=st.PALETTE["one_d"], ms=3, lw=0.8)
        ax.annotate(f"{b['n']}", (b["mean_predicted"], b["observed"]), xytext=(-9, 3),
                    textcoords="offset points", fontsize=5)
    ax.set_xlim(-0.02, 1.02)
    ax.set_ylim(-0.02, 1.02)
    ax.set_xlabel("predicted P(1D) (mean in bin)")
    ax.set_ylabel("observed share of one-dimensional truths")
    brier = doc["reliability"]["brier_score"]
    body.suptitle(st.title_lines("Reliability of P(1D) (95 % Wilson bars; number: "
                                 f"replicates in bin; Brier score {brier:.3f})"
                                 if brier is not None else "Reliability of P(1D)",
                                 st.COLUMN_WIDTH))
    ax.legend(loc="upper left")
    return fig


def _coverage(doc, records, quick):
    st = _style()
    keys = list(doc["coverage"]["68"]["parameters"])
    height = max(2.2, 1.1 + 0.16 * len(keys))
    fig, body = st.new_figure(st.COLUMN_WIDTH, height, quick=quick)
    ax = body.subplots()
    y = np.arange(len(keys))
    for name, off, col in (("68", -0.15, st.PALETTE["band68"]), ("95", 0.15, st.PALETTE["model"])):
        cov = doc["coverage"][name]
        for k, yy in zip(keys, y):
            r = cov["parameters"][k]
            if r["rate"] is None:
                continue
            lo, hi = r["interval95"]
            ax.errorbar(r["rate"], yy + off,
                        xerr=[[max(0.0, r["rate"] - lo)], [max(0.0, hi - r["rate"])]],
                        fmt="o", color=col, ms=3, lw=0.8,
                        label=f"{name} % interval" if k == keys[0] else None)
        ax.axvline(cov["nominal"], color=col, ls="--", lw=0.8)
    ax.set_yticks(y, [k.replace(".", ": ").replace("_", " ") for k in keys])
    ax.set_xlim(0, 1.02)
    ax.set_xlabel("share of replicates covering the truth")
    body.suptitle(st.title_lines("Coverage of the credible intervals (dashed: nominal)",
                                 st.COLUMN_WIDTH))
    ax.legend(loc="lower center", bbox_to_anchor=(0.5, 1.0), ncol=2)
    return fig


def plan_figure(doc: dict, folder, quick: bool = False) -> list:
    """Draw 2 ln K and the separated fraction against counting time into ``folder``."""
    st = _style()
    with st.plt().rc_context(st.STYLE):
        fig, body = st.new_figure(st.DOUBLE_WIDTH, 2.7, quick=quick)
        ax, bx = body.subplots(1, 2)
        hours = doc.get("case_counting_hours")
        colours = [st.PALETTE["one_d"], st.PALETTE["three_d"], st.PALETTE["electronic"],
                   st.PALETTE["lattice"], st.PALETTE["constant"], st.PALETTE["ink"]]
        for (scope, s), col in zip(doc["scopes"].items(), colours * 10):
            rows = [r for r in s["rows"] if r["n"]]
            if not rows:
                continue
            x = np.array([r["hours"] if hours else r["factor"] for r in rows])
            label = s.get("label") or ("all spectra" if scope == "all" else f"{scope} only")
            ax.fill_between(x, [r["two_ln_k_q10"] for r in rows],
                            [r["two_ln_k_q90"] for r in rows], color=col, alpha=0.2, lw=0)
            ax.plot(x, [r["two_ln_k_median"] for r in rows], "o-", color=col, ms=3,
                    label=label)
            f = np.array([r["fraction_above"] for r in rows])
            lo = np.array([r["interval95"][0] for r in rows])
            hi = np.array([r["interval95"][1] for r in rows])
            bx.errorbar(x, f, yerr=[np.clip(f - lo, 0, None), np.clip(hi - f, 0, None)],
                        fmt="o-", color=col, ms=3, lw=0.8,
                        label=label)
        target, frac = doc["target_two_ln_k"], doc["fraction"]
        top = [abs(r["two_ln_k_q90"]) for s in doc["scopes"].values() for r in s["rows"]
               if r["n"]] + [abs(r["two_ln_k_q10"]) for s in doc["scopes"].values()
                             for r in s["rows"] if r["n"]]
        if top and max(top) > 20 * target:        # decisive cases span decades of 2 ln K
            ax.set_yscale("symlog", linthresh=target)
        ax.axhline(target, color=st.PALETTE["grey"], ls="--", lw=0.8)
        bx.axhline(frac, color=st.PALETTE["grey"], ls="--", lw=0.8)
        xl = "counting time (hours)" if hours else "counting time (× the case's)"
        shown = sorted({(r["hours"] if hours else r["factor"]) for s in doc["scopes"].values()
                        for r in s["rows"] if r["n"]})
        for a in (ax, bx):
            a.set_xscale("log")
            a.set_xticks(shown, [f"{v:g}" for v in shown])      # the times computed
            a.minorticks_off()
            a.set_xlabel(xl)
        ax.set_ylabel(f"2 ln K ({_short(doc['truth_family'])} vs strongest rival)")
        ax.set_title(st.title_lines("2 ln K: median and 10-90 % of replicates "
                                    f"(dashed: {target:g})", st.DOUBLE_WIDTH / 2))
        bx.set_ylabel(f"share of replicates with 2 ln K > {target:g}")
        bx.set_ylim(-0.02, 1.02)
        bx.set_title(st.title_lines(f"Separated replicates (95 % Wilson bars; dashed: "
                                    f"{100 * frac:.0f} %)", st.DOUBLE_WIDTH / 2))
        ax.legend(loc="upper left")
        return st.save_figure(fig, Path(folder) / "plan")
