"""Every figure kind drawn from a stored run, checked for publication quality.

The run folder comes from the shared ``run_dir`` fixture (a quick run with three families);
here nothing is sampled: the results are loaded from ``saved/`` and the figures drawn from
them.  Checks (journal practice, common practice): PNG at >= 300 dpi, one- or two-column
width (3.4 in or 7.0 in; APS author guidelines, from memory), every text inside the figure,
no two texts overlapping, axis labels carrying a unit in parentheses (BIPM SI Brochure,
9th ed. 2019, §5.4: quantity symbol, unit in parentheses), the data's wavevector unit
(r.l.u.) on map axes, and the quick-run mark on every figure.
"""
from __future__ import annotations

import itertools
import json
import re

import matplotlib.text as mtext
import numpy as np
import pytest
from PIL import Image

from evidence1d.case import load_case
from evidence1d.report.figures import (QUICK_STAMP, comparison_figure, corner_figure,
                                       cut_pages, map_figure,
                                       thermo_figure)
from evidence1d.report.figures import style
from evidence1d.report.figures.style import save_figure, save_pages
from evidence1d.results import load_results
from test_figures_store import figure_data_for

_UNIT = re.compile(r"\(([^()|]+)\)\s*$")
_DIMENSIONLESS_AXES = {"P(family | data)"}


def drawn_texts(fig):
    """(Text, bbox in display pixels) of every non-empty text the figure actually draws."""
    seen = []
    original = mtext.Text.draw

    def spy(self, renderer):
        original(self, renderer)
        if self.get_visible() and self.get_text().strip():
            seen.append((self, self.get_window_extent(renderer)))

    mtext.Text.draw = spy
    try:
        fig.canvas.draw()
    finally:
        mtext.Text.draw = original
    return seen


def layout_problems(fig, tol=0.5):
    """Texts outside the figure and pairs of overlapping texts (tolerance in pixels)."""
    texts = drawn_texts(fig)
    W, H = fig.bbox.width, fig.bbox.height
    bad = [f"outside: {t.get_text()!r}" for t, b in texts
           if b.x0 < -tol or b.y0 < -tol or b.x1 > W + tol or b.y1 > H + tol]
    for (t1, b1), (t2, b2) in itertools.combinations(texts, 2):
        w = min(b1.x1, b2.x1) - max(b1.x0, b2.x0)
        h = min(b1.y1, b2.y1) - max(b1.y0, b2.y0)
        if w > tol and h > tol:
            bad.append(f"overlap: {t1.get_text()!r} / {t2.get_text()!r}")
    return bad, texts


def axis_labels(fig, texts):
    """The x and y labels the figure draws."""
    drawn = {id(t) for t, _ in texts}
    out = []
    for ax in fig.findobj(lambda a: hasattr(a, "xaxis") and hasattr(a, "yaxis")):
        for lab in (ax.xaxis.label, ax.yaxis.label):
            if id(lab) in drawn:
                out.append(lab.get_text())
    return out


def check_figure(fig, dimensionless=(), quick=True):
    bad, texts = layout_problems(fig)
    assert not bad, bad
    labels = axis_labels(fig, texts)
    assert labels
    for lab in labels:
        assert _UNIT.search(lab) or lab in _DIMENSIONLESS_AXES or lab in dimensionless, lab
    stamps = [t for t, _ in texts if t.get_text() == QUICK_STAMP]
    assert len(stamps) == (1 if quick else 0)
    return texts


def check_png(path, widths=(3.4, 7.0)):
    with Image.open(path) as im:
        dpi = im.info["dpi"]
        assert min(dpi) >= 299.5                           # stored as pixels per metre
        width_in = im.size[0] / dpi[0]
        assert any(abs(width_in - w) < 0.01 for w in widths), width_in


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    import matplotlib.pyplot as plt
    plt.close("all")


@pytest.fixture(scope="module")
def stored(run_dir):
    out, _ = run_dir
    results = load_results(out)
    case = load_case(results.case_path)
    summary = json.loads((out / "summary.json").read_text(encoding="utf-8"))
    return out, results, case, summary


@pytest.fixture(scope="module")
def fdata(stored):
    out, results, case, summary = stored
    first = next(iter(results.models))
    settings = {"cuts": {"map": "all"}, "temperature_axis": "log", "draws": 40,
                "truths": {first: {results.models[first].names[0]: 0.5}}}
    return figure_data_for(results, case, summary, settings,
                           quick=results.context["quick"])


def test_the_stored_run_is_a_quick_run(stored, fdata):
    assert fdata["quick"] is True


def test_maps_carry_the_data_unit_and_every_family_overlay(fdata, tmp_path):
    labels = {"spinon_continuum": "two-spinon", "gapped_spin_wave": "magnon dispersion",
              "paramagnon": "relaxation rate"}
    for model, md in fdata["models"].items():
        mp = md["datasets"]["map"]["map"]
        assert mp["unit"] == "rlu"
        assert any(labels[model] in ov["label"] for ov in mp["overlays"]), model
    model = next(iter(fdata["models"]))
    block = fdata["models"][model]["datasets"]["map"]
    fig = map_figure(block["map"], fdata["models"][model]["title"], "map",
                     block["intensity_unit"], quick=True)
    check_figure(fig)
    xlabels = [ax.get_xlabel() for ax in fig.axes if ax.get_xlabel()]
    assert len(xlabels) == 3 and all(lab.endswith("(r.l.u.)") for lab in xlabels)
    png = save_figure(fig, tmp_path / "map")[0]
    check_png(png)


def test_cut_pages(fdata, tmp_path, monkeypatch):
    model = next(iter(fdata["models"]))
    block = fdata["models"][model]["datasets"]["map"]
    assert len(block["cuts"]) == 6                         # "all": every Q of the 6 x 5 grid
    assert all("r.l.u." in c["label"] for c in block["cuts"])
    pages = cut_pages(block, fdata["models"][model]["title"], quick=True)
    assert len(pages) == 1
    check_figure(pages[0])
    check_png(save_pages(pages, tmp_path / "cuts")[0])
    many = dict(block, cuts=block["cuts"] + block["cuts"][:1])      # 7 cuts: two pages
    pages = cut_pages(many, "t", quick=True)
    monkeypatch.setattr(style, "PNG_DPI", 40)              # only the page count matters
    files = save_pages(pages, tmp_path / "many")
    assert sorted(p.name for p in files) == ["many.pdf", "many.png", "many_p2.png"]
    pdf = (tmp_path / "many.pdf").read_bytes()
    assert len(re.findall(rb"/Type\s*/Page[^s]", pdf)) == 2


@pytest.mark.parametrize("dataset", ["chi", "heat"])
def test_thermodynamic_figures(fdata, tmp_path, dataset):
    model = next(iter(fdata["models"]))
    block = fdata["models"][model]["datasets"][dataset]
    keys = {k for k, _, _ in block["parts"]}
    assert keys == ({"magnetic", "constant"} if dataset == "chi"
                    else {"magnetic", "electronic", "lattice"})
    fig = thermo_figure(block, fdata["models"][model]["title"], quick=True, log_t=True)
    check_figure(fig)
    assert all(ax.get_xscale() == "log" for ax in fig.axes)
    ylabels = " ".join(ax.get_ylabel() for ax in fig.axes)
    if dataset == "chi":
        assert "1/\\chi" in ylabels
    else:
        assert "C/T" in ylabels and "S_\\mathrm{mag}" in ylabels
        assert any(ln.get_label() == "R ln 2" for ax in fig.axes for ln in ax.get_lines())
    check_png(save_figure(fig, tmp_path / dataset)[0])


def test_entropy_data_figure(fdata):
    model = next(iter(fdata["models"]))
    heat = fdata["models"][model]["datasets"]["heat"]
    ent = heat["entropy"]
    block = {"kind": "entropy", "name": "S", "x": ent["x"], "y": ent["y"],
             "err": np.maximum(ent["err"], 0.01), "residual": np.zeros(ent["x"].size),
             "model_x": ent["model_x"], "bands": ent["bands"], "parts": [],
             "ceiling": ent["ceiling"], "ceiling_label": ent["ceiling_label"]}
    check_figure(thermo_figure(block, "a family", quick=False), quick=False)


def test_corner_plots_one_and_two_columns(fdata, stored, tmp_path):
    _, _, _, summary = stored
    by_size = sorted(fdata["models"], key=lambda m: fdata["models"][m]["corner"]["samples"]
                     .shape[1])
    for model in (by_size[0], by_size[-1]):
        block = fdata["models"][model]["corner"]
        units = summary["models"][model]["parameters"]
        free = [s for s, n in zip(block["symbols"], block["names"]) if units[n]["unit"] == "1"]
        fig = corner_figure(block, fdata["models"][model]["title"], quick=True)
        texts = check_figure(fig, dimensionless=free)
        joined = " ".join(t.get_text() for t, _ in texts)
        assert "±" in joined or "^{+" in joined                 # quoted intervals
        png = save_figure(fig, tmp_path / f"corner_{model}")[0]
        check_png(png, widths=(3.4,) if block["samples"].shape[1] <= 3 else (7.0,))
    first = next(iter(fdata["models"]))
    assert fdata["models"][first]["corner"]["truths"][0] == 0.5


@pytest.mark.parametrize("k", [4, 8, 10])
def test_corner_ticks_of_a_narrow_posterior_far_from_zero_do_not_collide(k):
    """A posterior 0.03 wide at 19.98 (seen on a quick run of eight parameters) gave three
    5-character tick labels 19.97, 19.98, 19.99 that overlapped in the seven-inch corner
    plot; the labels must fit whatever the number of panels."""
    rng = np.random.default_rng(0)
    block = dict(samples=19.98 + 0.006 * rng.standard_normal((2000, k)),
                 symbols=[f"$p_{i}$" for i in range(k)], units=["meV"] * k,
                 names=[f"p{i}" for i in range(k)], limits=[(19.962, 19.998)] * k,
                 support=[(0.0, 40.0)] * k, prior_x=[np.linspace(0.0, 40.0, 50)] * k,
                 prior_pdf=[np.full(50, 1 / 40.0)] * k, quotes=[(19.98, 19.974, 19.986)] * k,
                 truths=[None] * k)
    bad, texts = layout_problems(corner_figure(block, "narrow", quick=True))
    assert not bad, bad
    assert sum(t.get_text() in ("19.97", "19.99") for t, _ in texts) >= 2   # still labelled


def test_comparison_is_readable_over_five_decades(fdata, tmp_path):
    cmp_ = json.loads(json.dumps(fdata["comparison"]))
    names = list(cmp_["models"])
    cmp_["models"][names[-1]]["log_evidence"] = cmp_["models"][names[0]]["log_evidence"] - 1e5
    cmp_["evidence_budget"] = {                    # the layout of summary.json (schema.py)
        "families": names[:2], "ln_k": 3.5, "ln_k_err": 0.4,
        "sequential": [{"dataset": "map", "ln_k": 2.9, "ln_k_err": 0.3},
                       {"dataset": "chi", "ln_k": 0.6, "ln_k_err": 0.2}]}
    fig = comparison_figure(cmp_, quick=True)
    texts = check_figure(fig)
    a1, a2 = fig.axes[:2]
    assert a1.get_xscale() == "symlog" and a1.get_xlim()[0] <= -1e5
    assert a2.get_xscale() == "log"
    joined = " ".join(t.get_text() for t, _ in texts)
    assert "evidence budget" in joined and "2.90 ± 0.30" in joined
    if cmp_.get("prior_sensitivity"):
        assert "prior sensitivity" in joined
    check_png(save_figure(fig, tmp_path / "comparison")[0])
