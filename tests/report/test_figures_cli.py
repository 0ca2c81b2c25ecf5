"""``evidence1d report DIR --out NEWDIR`` / ``--figures-only``, file modes under a umask, and
the console output (plain progress lines in a log, no cursor codes)."""
from __future__ import annotations

import io
import os
import stat

import pytest

from evidence1d.cli import main
from evidence1d.inference.progress import PlainProgress, stage_bar
from evidence1d.report.figures.style import new_figure, save_figure
from evidence1d.results import atomic_write, new_file_mode


@pytest.fixture
def umask():
    """Set the process umask for one test (restored afterwards)."""
    old = os.umask(0o022)
    os.umask(old)
    yield lambda m: os.umask(m)
    os.umask(old)


def _files(folder):
    return sorted(p for p in folder.rglob("*") if p.is_file())


def _snapshot(folder):
    return {p: (p.stat().st_mtime_ns, p.stat().st_size) for p in _files(folder)}


def test_report_into_a_new_folder_leaves_the_run_alone_and_is_group_readable(run_dir,
                                                                             tmp_path, umask,
                                                                             capsys):
    out, first = run_dir
    before = _snapshot(out)
    umask(0o022)
    new = tmp_path / "v2"
    assert main(["report", str(out), "--out", str(new), "--no-figures"]) == 0
    printed = capsys.readouterr().out
    assert f"report rebuilt: {new / 'report.md'}" in printed
    assert _snapshot(out) == before                          # nothing in DIR touched
    for name in ("summary.json", "report.md", "tables.tex"):
        assert (new / name).read_text(encoding="utf-8") == first[name]
    written = _files(new)
    assert {p.parent.name for p in written} >= {"v2", "samples"}
    # POSIX open(): mode 0o666 & ~umask = 0o644 under umask 022 (IEEE Std 1003.1)
    assert all(stat.S_IMODE(p.stat().st_mode) == 0o644 for p in written), \
        {p.name: oct(stat.S_IMODE(p.stat().st_mode)) for p in written}


def test_figures_only_draws_only_figures_in_the_new_folder(run_dir, tmp_path, monkeypatch,
                                                           capsys):
    import evidence1d.report.figures as figures
    out, _ = run_dir
    calls = []

    def fake_render(results, summary, folder, quick=False, workers=None):
        calls.append((folder, quick, sorted(results.models)))
        return [atomic_write(folder / "comparison.pdf", b"%PDF-")]

    monkeypatch.setattr(figures, "render", fake_render)
    new = tmp_path / "figs"
    assert main(["report", str(out), "--out", str(new), "--figures-only"]) == 0
    ((folder, quick, models),) = calls
    assert folder == new / "figures" and quick is True          # the run was --quick
    assert [p.relative_to(new).as_posix() for p in _files(new)] == ["figures/comparison.pdf"]
    assert "figures redrawn: 1 PDF and 0 PNG files" in capsys.readouterr().out
    with pytest.raises(SystemExit):                             # the two exclude each other
        main(["report", str(out), "--figures-only", "--no-figures"])


def test_modes_follow_the_umask(tmp_path, umask):
    umask(0o027)
    assert new_file_mode() == 0o640
    p = atomic_write(tmp_path / "a.txt", "x")
    assert stat.S_IMODE(p.stat().st_mode) == 0o640
    umask(0o022)
    fig, _ = new_figure(3.4, 1.0)
    for f in save_figure(fig, tmp_path / "f"):
        assert stat.S_IMODE(f.stat().st_mode) == 0o644


def test_plain_progress_lines_in_a_log():
    log = io.StringIO()                                      # not a terminal
    bar = stage_bar(200, {"label": "spinon", "position": 1}, "posterior", unit="step",
                    stream=log)
    assert isinstance(bar, PlainProgress)
    for _ in range(200):
        bar.update(1)
    bar.close()
    bar.close()                                              # closing twice writes once
    text = log.getvalue()
    assert "\r" not in text and "\x1b" not in text
    lines = text.splitlines()
    assert lines[0] == "spinon posterior: started (200 step)"
    assert [ln.split(": ")[1].split(" ")[0] for ln in lines[1:4]] == ["25%", "50%", "75%"]
    assert lines[-1].startswith("spinon posterior: done, 200/200 step in ")
    assert len(lines) == 5


def test_a_terminal_gets_one_bar_and_no_progress_means_silence():
    class Tty(io.StringIO):
        def isatty(self):
            return True

    from tqdm import tqdm
    tty = Tty()
    bar = stage_bar(10, True, "evidence", unit="β", stream=tty)
    assert isinstance(bar, tqdm) and bar.leave
    bar.update(10)
    bar.close()
    assert "evidence" in tty.getvalue()
    quiet = io.StringIO()
    bar = stage_bar(10, False, "evidence", stream=quiet)
    bar.update(10)
    bar.close()
    assert quiet.getvalue() == ""


def test_evidence_progress_in_a_log_is_plain(capsys, rng):
    import numpy as np

    from evidence1d.inference.evidence import tempered_evidence
    from evidence1d.inference.priors import JointPrior, Uniform
    prior = JointPrior(["x"], [Uniform(-5.0, 5.0)])
    tempered_evidence(lambda th: -0.5 * np.atleast_2d(th)[:, 0] ** 2, prior, rng=rng,
                      n_particles=40, n_islands=2, progress=True)
    err = capsys.readouterr().err                            # pytest's capture: not a TTY
    assert "evidence: started" in err and "evidence: done" in err
    assert "\r" not in err and "\x1b" not in err
