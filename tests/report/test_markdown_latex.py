"""report.md and tables.tex: verdict, tables, warnings, escaping, compilation."""
from __future__ import annotations

import copy
import shutil
import subprocess

import pytest

from evidence1d.report.latex import latex_escape, latex_unit, render_tables
from evidence1d.report.markdown import render_markdown, report_context


@pytest.fixture(scope="module")
def context(run_dir):
    from evidence1d.results import load_results
    out, _ = run_dir
    return report_context(load_results(out))


def test_report_has_verdict_tables_and_sections(run_dir, summary):
    out, _ = run_dir
    text = (out / "report.md").read_text(encoding="utf-8")
    c = summary["comparison"]
    assert c["verdict"] in text
    assert f"**Verdict** ({c['strength']})" in text
    assert "| family | 1D | ln Z (nats) |" in text
    for name, m in summary["models"].items():
        assert f"### {m['title']} (`{name}`)" in text
        for p, v in m["parameters"].items():
            assert f"| `{p}` | {v['role']} |" in text
    for heading in ("## Diagnostics", "## Which datasets constrain which parameters",
                    "## Assumptions and limitations", "## Methods", "## For a referee response"):
        assert heading in text
    # methods actually used are cited (Kass & Raftery 1995; Goodman & Weare 2010; Vehtari 2021)
    for ref in ("Kass and A. E. Raftery", "Goodman and J. Weare", "Vehtari, A. Gelman, D. Simpson",
                "Foreman-Mackey", "Del Moral"):
        assert ref in text
    assert ("Dickey" in text) == any(m["savage_dickey"] for m in summary["models"].values())
    # limitations come from the model cards, with the options each family ran with
    assert "Schulz's relation" in text
    if "spinon_continuum" in summary["models"]:
        assert "Options: `line_shape: exact`, `anisotropy_axis: par`" in text
    assert "Options: `moment_axis: null`, `interchain: 4`" in text
    # the map is declared on an absolute scale: every family's scale ratio and window moment
    assert "### Spectra on an absolute scale" in text
    for name, m in summary["models"].items():
        rec = m["absolute_scale"]["map"]
        assert rec["unit"] == "mb/sr/meV" and rec["calibration_uncertainty"] == 0.2
        r = rec["ratio"]
        assert r["q16"] <= r["median"] <= r["q84"]
        assert rec["window"]["total_moment"] == 0.75
        assert f"| `{name}` | `map` | {r['median']:.3g} [" in text
        assert ("yes" if rec["consistent"] else "**NO**") in text


def test_unreliable_banner_follows_the_diagnostics(summary, context):
    bad = copy.deepcopy(summary)
    bad["reliable"] = False
    name = bad["comparison"]["best"]
    bad["models"][name]["diagnostics"]["ok"] = False
    bad["comparison"]["reliability"].update(
        verdict_reliable=False, winner_diagnostics_ok=False,
        reasons=[f"the posterior of the winner {name} failed the convergence diagnostics"])
    text = render_markdown(bad, context)
    head = "\n".join(text.splitlines()[:6])      # after the quick-look stamp, if any
    assert "**UNRELIABLE**" in head and name in head
    good = copy.deepcopy(summary)
    good["reliable"] = True
    good["comparison"]["verdict"] = good["comparison"]["verdict"].split(". ", 1)[-1] \
        if good["comparison"]["verdict"].startswith("UNRELIABLE") else good["comparison"]["verdict"]
    good["comparison"]["unreliable"] = []
    good["comparison"]["reliability"].update(verdict_reliable=True, reasons=[],
                                             winner_diagnostics_ok=True)
    for m in good["models"].values():
        m["diagnostics"]["ok"] = True
        m["diagnostics"]["warnings"] = []
        m["evidence_warnings"] = []
    assert "UNRELIABLE" not in render_markdown(good, context)
    assert "UNRELIABLE" not in render_tables(good, context)
    assert "UNRELIABLE" in render_tables(bad, context)


def test_latex_escaping():
    # the ten special characters (Lamport, LaTeX, 2nd ed., 1994, §3.2)
    assert latex_escape("a_b & 50% $x$ #1 {y} ~ ^") == \
        r"a\_b \& 50\% \$x\$ \#1 \{y\} \textasciitilde{} \textasciicircum{}"
    assert latex_escape("Δ = 1, 3 Å, χ₀") == r"$\Delta$ = 1, 3 \AA{}, $\chi$$_{0}$"
    assert latex_escape("\\") == r"\textbackslash{}"
    assert latex_escape("☃") == "?"
    assert latex_unit("1") == "" and latex_unit("J/(mol K^2)") == "J/(mol K$^{2}$)"
    assert latex_unit("arb·meV") == r"arb$\cdot$meV"


def test_tables_are_booktabs_tabulars_with_units(run_dir, summary):
    out, _ = run_dir
    tex = (out / "tables.tex").read_text(encoding="utf-8")
    n_tab = tex.count(r"\begin{tabular}")
    budget = summary["comparison"]["evidence_budget"] is not None
    assert n_tab == 3 + budget + len(summary["models"])     # + goodness of fit (+ budget)
    for rule in (r"\toprule", r"\midrule", r"\bottomrule", r"\end{tabular}"):
        assert tex.count(rule) == n_tab
    assert r"$\ln Z$ (nats)" in tex and "(meV)" in tex
    body = "\n".join(ln for ln in tex.splitlines() if not ln.startswith("%"))
    assert body.count("{") - body.count(r"\{") == body.count("}") - body.count(r"\}")
    assert all(ord(ch) < 128 for ch in body), "non-ASCII left in the LaTeX body"


def test_tables_compile_with_pdflatex(run_dir, tmp_path):
    exe = shutil.which("pdflatex")
    if exe is None:
        pytest.skip("pdflatex is not installed")
    out, _ = run_dir
    shutil.copy(out / "tables.tex", tmp_path / "tables.tex")
    (tmp_path / "doc.tex").write_text("\\documentclass{article}\n\\usepackage[T1]{fontenc}\n"
                                      "\\usepackage{booktabs}\n\\begin{document}\n"
                                      "\\input{tables.tex}\n\\end{document}\n")
    proc = subprocess.run([exe, "-interaction=nonstopmode", "-halt-on-error", "doc.tex"],
                          cwd=tmp_path, capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stdout[-2000:]
    assert (tmp_path / "doc.pdf").stat().st_size > 0


def test_quick_run_is_stamped_not_for_publication(run_dir, summary, context):
    out, _ = run_dir                      # the fixture's run used --quick
    assert "QUICK LOOK, NOT FOR PUBLICATION" in (out / "report.md").read_text(encoding="utf-8")
    plain = dict(context, quick=False)
    assert "QUICK LOOK" not in render_markdown(summary, plain)
    assert "QUICK LOOK" in "\n".join(render_markdown(summary, dict(context, quick=True))
                                     .splitlines()[:4])


def test_absolute_scale_alert_follows_the_winner(summary):
    from evidence1d.report.referee import absolute_alert
    s = copy.deepcopy(summary)
    rec = s["models"][s["comparison"]["best"]]["absolute_scale"]["map"]
    rec["consistent"] = True
    assert absolute_alert(s) == []
    rec["consistent"], rec["ratio"]["median"] = False, 0.42
    line = absolute_alert(s)[0]
    assert line.startswith("> **ABSOLUTE SCALE**") and "`map` needs r = 0.42" in line


def test_absolute_scale_warning_on_the_terminal(run_dir):
    # the line `run` prints follows the winner's absolute-scale check, like BAD FIT
    import dataclasses
    from evidence1d.report.console import verdict_lines
    from evidence1d.results import load_results
    res = load_results(run_dir[0])
    best = res.models[res.comparison.best]
    rec = best.analysis["absolute_scale"]["map"]
    for flag in (True, False):
        rec = {**rec, "consistent": flag, "ratio": {**rec["ratio"], "median": 0.42}}
        an = {**best.analysis, "absolute_scale": {"map": rec}}
        models = {**res.models, best.name: dataclasses.replace(best, analysis=an)}
        text = verdict_lines(dataclasses.replace(res, models=models))
        assert ("WARNING: ABSOLUTE SCALE" in text) is (not flag)
        if not flag:
            assert "map (r = 0.42)" in text
