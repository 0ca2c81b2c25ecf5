"""Interrupting ``evidence1d run`` (SIGINT, SIGKILL) loses no finished work: ``--resume``
completes the run, and its results agree with an uninterrupted run of the same seed."""
from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.cli import main

ROOT = Path(__file__).resolve().parents[2]
SEED = 3
TEXT = (CASE_YAML.replace("  - spinon_continuum", "  - paramagnon\n  - gapped_spin_wave")
        .replace("sampler: {steps: 200, particles: 100, islands: 2}",
                 "sampler: {steps: 300, particles: 40, islands: 2, checkpoint_every: 50}"))


@pytest.fixture(scope="module")
def reference(tmp_path_factory):
    """The case and the summary of an uninterrupted run with the same seed."""
    folder = tmp_path_factory.mktemp("interrupt")
    path = write_valid_case(folder / "case", TEXT)
    out = folder / "uninterrupted"
    # --quick: the same sampler settings (they are below the quick ones) without the evidence
    # budget, a stage after the posterior that an interruption at the first checkpoint never
    # reaches (it ran three times here, for no check)
    evidence1d.run_to_folder(evidence1d.load_case(path), seed=SEED, out=out, progress=False,
                             figures=False, workers=1, quick=True)
    return path, json.loads((out / "summary.json").read_text())


def _start(case, out, *extra):
    env = dict(os.environ, PYTHONPATH=str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", ""))
    cmd = [sys.executable, "-m", "evidence1d.cli", "run", str(case), "--out", str(out),
           "--seed", str(SEED), "--no-figures", "--quick", *extra]
    # Ctrl-C restored in the child: a suite started in the background of a non-interactive
    # shell inherits SIGINT ignored, and Python then keeps it ignored
    return subprocess.Popen(cmd, cwd=ROOT, env=env, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, start_new_session=True,
                            preexec_fn=_default_sigint)


def _default_sigint():
    signal.signal(signal.SIGINT, signal.SIG_DFL)


def _wait_for_checkpoint(proc, out, timeout=90.0):
    t0 = time.monotonic()
    while not list((out / "chains").glob("*.h5")):
        if proc.poll() is not None:
            pytest.fail(f"the run ended (code {proc.returncode}) before its first checkpoint: "
                        + proc.stderr.read().decode(errors="replace")[-2000:])
        if time.monotonic() - t0 > timeout:
            os.killpg(proc.pid, signal.SIGKILL)
            pytest.fail("no checkpoint file appeared")
        time.sleep(0.02)
    time.sleep(0.3)     # let the chain get a few checkpoints in


def _resume_and_compare(case, out, ref, capsys, *extra):
    assert not (out / "summary.json").exists()   # an interrupted folder never looks complete
    code = main(["run", str(case), "--out", str(out), "--seed", str(SEED), "--resume",
                 "--no-figures", "--quick", *extra])
    capsys.readouterr()
    assert code == 0
    got = json.loads((out / "summary.json").read_text())
    assert set(got["models"]) == set(ref["models"])
    for name, r in ref["models"].items():
        g = got["models"][name]
        # the evidence is deterministic given the seed: reused or recomputed, it is equal to
        # rounding (the interrupted run computed its islands in pool workers, the reference
        # in this process; they have been seen to differ in the last bit, 1e-16 relative)
        assert abs(g["log_evidence"] - r["log_evidence"]) <= 1e-12 * abs(r["log_evidence"]), \
            name
        for p, q in r["parameters"].items():
            a = g["parameters"][p]
            sd = max(q["q84"] - q["q16"], a["q84"] - a["q16"]) / 2.0
            # posterior medians agree within 3 posterior sd (common practice)
            assert abs(a["median"] - q["median"]) <= 3.0 * sd + 1e-12 * abs(q["median"]), \
                (name, p, a["median"], q["median"], sd)
    leftovers = [p for p in out.rglob("*") if p.name.endswith(".tmp")]
    assert not leftovers, leftovers                 # every output written atomically
    assert "resume=True" in (out / "run.log").read_text()
    return got


@pytest.mark.slow
def test_sigkill_then_resume_matches_uninterrupted(reference, tmp_path, capsys):
    case, ref = reference
    out = tmp_path / "killed"
    proc = _start(case, out, "--workers", "1")
    _wait_for_checkpoint(proc, out)
    proc.kill()
    proc.communicate(timeout=30)
    assert proc.returncode == -signal.SIGKILL
    # what a kill in the middle of an atomic write leaves behind; resume must clear it
    (out / "chains" / ".paramagnon.evidence.pkl.k1ll3d.tmp").write_bytes(b"\x80partial")
    _resume_and_compare(case, out, ref, capsys, "--workers", "1")


@pytest.mark.slow
def test_sigint_exits_130_with_one_line_then_resume(reference, tmp_path, capsys):
    case, ref = reference
    out = tmp_path / "interrupted"
    proc = _start(case, out)                        # default workers: one per family/core
    _wait_for_checkpoint(proc, out)
    os.killpg(proc.pid, signal.SIGINT)              # Ctrl-C reaches the whole group
    try:
        _, err = proc.communicate(timeout=60)
    except subprocess.TimeoutExpired:
        os.killpg(proc.pid, signal.SIGKILL)
        pytest.fail("the run did not stop after SIGINT")
    err = err.decode(errors="replace")
    assert proc.returncode == 130, err[-2000:]
    assert "Traceback" not in err, err[-3000:]
    # progress bars redraw with carriage returns; the last thing written is the message
    last = err.replace("\r", "\n").strip().splitlines()[-1]
    assert "interrupted" in last and "--resume" in last, last
    assert err.count("evidence1d: interrupted") == 1
    _resume_and_compare(case, out, ref, capsys)
