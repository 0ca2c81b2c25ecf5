"""calibrate and plan end to end on a small two-family case: the command line on a Dask
LocalCluster it starts itself, the same calibration.json on a process pool, resume without
recomputing finished replicates, and a folder of another campaign refused."""
from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import time

import pytest

import evidence1d
from evidence1d.campaign import calibrate
from evidence1d.cli import main

FIGURES = ("confusion", "ln_k", "reliability", "coverage")


@pytest.fixture(scope="module")
def cli_calibration(two_family_case, tmp_path_factory):
    """``evidence1d calibrate`` on its own local Dask cluster (two workers)."""
    pytest.importorskip("distributed")
    out = tmp_path_factory.mktemp("cal") / "dask"
    code = main(["calibrate", str(two_family_case.path), "--replicates", "1", "--quick",
                 "--out", str(out), "--workers", "2"])
    assert code == 0
    return out


@pytest.mark.slow
def test_calibrate_writes_its_files(cli_calibration, capsys):
    out = cli_calibration
    doc = json.loads((out / "calibration.json").read_text())
    fams = ["spinon_continuum", "paramagnon"]
    assert doc["families"] == fams and doc["replicates"]["total"] == 2
    assert sorted(doc["confusion_matrix"]) == sorted(fams)
    assert sum(sum(row.values()) for row in doc["confusion_matrix"].values()) \
        == doc["replicates"]["finished"]
    for key in ("false_1d_rate", "missed_1d_rate"):
        assert doc[key]["n"] == 1 and doc[key]["rate"] in (0.0, 1.0)
    assert doc["threshold"]["ln_k"] == 3.0 and doc["threshold"]["two_ln_k"] == 6.0
    assert len(doc["reliability"]["bins"]) == 5
    assert set(doc["coverage"]) == {"68", "95"}
    assert "spinon_continuum.J" in doc["coverage"]["68"]["parameters"]
    assert sorted(p.name for p in (out / "replicates").iterdir()) == \
        ["paramagnon-0000.npz", "spinon_continuum-0000.npz"]
    page = (out / "calibration.md").read_text()
    assert "false one-dimensional rate" in page and "SIMULATED" in page
    for stem in FIGURES:
        assert (out / "figures" / f"{stem}.png").stat().st_size > 10_000
        assert (out / "figures" / f"{stem}.pdf").read_bytes()[:4] == b"%PDF"
    assert "LocalCluster" in (out / "campaign.log").read_text() or \
        "Client" in (out / "campaign.log").read_text()


@pytest.fixture(scope="module")
def pool_calibration(two_family_case, tmp_path_factory):
    out = tmp_path_factory.mktemp("cal") / "pool"
    calibrate(two_family_case, out=out, replicates=1, quick=True, workers=2, progress=False)
    return out


@pytest.mark.slow
def test_same_calibration_on_a_process_pool_and_on_dask(cli_calibration, pool_calibration):
    assert (pool_calibration / "calibration.json").read_bytes() == \
        (cli_calibration / "calibration.json").read_bytes()


def test_resume_computes_only_missing_replicates(two_family_case, pool_calibration,
                                                 tmp_path):
    out = tmp_path / "resumed"
    shutil.copytree(pool_calibration, out)
    kept = out / "replicates" / "spinon_continuum-0000.npz"
    stamp = kept.stat().st_mtime_ns
    (out / "replicates" / "paramagnon-0000.npz").unlink()
    (out / "calibration.json").unlink()
    calibrate(two_family_case, out=out, replicates=1, quick=True, workers=1, progress=False,
              figures=False)
    assert kept.stat().st_mtime_ns == stamp
    assert "1 of 2 calibration already finished; 1 to run" in (out / "campaign.log").read_text()
    assert (out / "calibration.json").read_bytes() == \
        (pool_calibration / "calibration.json").read_bytes()


def test_another_campaign_is_refused(two_family_case, pool_calibration, tmp_path):
    out = tmp_path / "other"
    shutil.copytree(pool_calibration, out)
    with pytest.raises(evidence1d.InputError, match="another campaign .*seed"):
        calibrate(two_family_case, out=out, replicates=1, quick=True, seed=99,
                  progress=False)
    (tmp_path / "plain").mkdir()
    (tmp_path / "plain" / "notes.txt").write_text("mine")
    with pytest.raises(evidence1d.InputError, match="not a campaign folder"):
        calibrate(two_family_case, out=tmp_path / "plain", replicates=1, progress=False)


def test_plan_writes_its_files(two_family_case, tmp_path, dask_client, capsys):
    from evidence1d.campaign import plan
    out = tmp_path / "plan"
    doc = plan(two_family_case, out=out, times=[1, 4], replicates=1, quick=True, hours=2.0,
               executor=dask_client, progress=False)
    disk = json.loads((out / "plan.json").read_text())
    assert disk == json.loads(json.dumps(doc))
    assert doc["truth_family"] == "spinon_continuum" and doc["rivals"] == ["paramagnon"]
    rows = doc["scopes"]["all"]["rows"]
    assert [r["factor"] for r in rows] == [1.0, 4.0] and [r["hours"] for r in rows] == [2, 8]
    assert all(r["n"] == 1 and r["two_ln_k_median"] is not None for r in rows)
    # one truth (and one noise draw) for a replicate at every counting time
    from evidence1d.results import load_record
    recs = [load_record(out / "replicates" / f"all-x{f}-0000.npz")[0] for f in (1, 4)]
    assert recs[0]["truth"] == recs[1]["truth"]
    assert recs[0]["scale"] == {"map": 1.0} and recs[1]["scale"] == {"map": 0.5}
    assert "separate the families at 2 ln K > 10 in 90 % of replicates" in \
        doc["scopes"]["all"]["statement"] or "none of the listed" in \
        doc["scopes"]["all"]["statement"]
    assert (out / "figures" / "plan.png").stat().st_size > 10_000
    assert "2 ln K" in (out / "plan.md").read_text()
    assert len(list((out / "replicates").iterdir())) == 2


@pytest.mark.slow
def test_interrupted_campaign_resumes(two_family_case, tmp_path):
    """A real interruption (SIGINT to the command) keeps the finished replicates; the same
    command then computes only the rest."""
    out = tmp_path / "cut"
    cmd = [sys.executable, "-m", "evidence1d.cli", "calibrate", str(two_family_case.path),
           "--replicates", "1", "--quick", "--out", str(out), "--processes", "--workers",
           "1", "--no-figures"]
    env = dict(os.environ, MPLBACKEND="Agg")
    # Ctrl-C restored in the child (a suite run in the background of a non-interactive
    # shell inherits SIGINT ignored, and Python keeps it so)
    proc = subprocess.Popen(cmd, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE,
                            start_new_session=True,
                            preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    deadline = time.time() + 900          # a loaded machine is slow
    while time.time() < deadline and not any((out / "replicates").glob("*.npz")):
        time.sleep(0.2)
    os.killpg(proc.pid, signal.SIGINT)
    _, err = proc.communicate(timeout=120)
    finished = sorted((out / "replicates").glob("*.npz"))
    assert proc.returncode == 130, err.decode()[-2000:]
    assert len(finished) == 1             # one worker: the second replicate was running
    stamps = {p.name: p.stat().st_mtime_ns for p in finished}
    assert main(cmd[3:]) == 0
    assert {p.name: p.stat().st_mtime_ns for p in finished} == stamps
    log = (out / "campaign.log").read_text()
    assert "1 of 2 calibration already finished" in log
    assert len(list((out / "replicates").glob("*.npz"))) == 2


def test_campaign_command_errors_are_one_line(two_family_case, tmp_path, capsys):
    case = str(two_family_case.path)
    assert main(["plan", case, "--counting-times", "1,two", "--processes"]) == 2
    assert "--counting-times expects numbers" in capsys.readouterr().err
    assert main(["plan", case, "--counting-times", "0,1", "--processes",
                 "--out", str(tmp_path / "p")]) == 2
    assert "counting times must be numbers > 0" in capsys.readouterr().err
    assert main(["calibrate", case, "--threshold", "-1", "--processes",
                 "--out", str(tmp_path / "c")]) == 2
    assert "threshold must be a number >= 0" in capsys.readouterr().err
    assert main(["plan", case, "--truth", "magnonn", "--processes",
                 "--out", str(tmp_path / "t")]) == 2
    assert "unknown model 'magnonn'" in capsys.readouterr().err
    assert main(["calibrate", case, "--from", str(tmp_path / "nothing"), "--processes",
                 "--out", str(tmp_path / "f")]) == 2
    assert "holds no saved results" in capsys.readouterr().err


@pytest.mark.slow
def test_calibrate_from_a_posterior(two_family_case, tmp_path):
    """--from DIR: truths are rows of the run's posterior samples."""
    import numpy as np

    from evidence1d.results import load_record
    run_dir = tmp_path / "run"
    res = evidence1d.run_to_folder(two_family_case, out=run_dir, progress=False,
                                   figures=False, workers=2, budget=False)
    out = tmp_path / "cal"
    doc = calibrate(two_family_case, out=out, replicates=1, quick=True, source=run_dir,
                    workers=2, progress=False, figures=False)
    assert doc["truths"].startswith("posterior of ")
    for fam, mr in res.models.items():
        rec, _ = load_record(out / "replicates" / f"{fam}-0000.npz")
        row = np.array([rec["truth"][n] for n in mr.full_names])
        assert np.any(np.all(np.isclose(np.asarray(mr.full_samples), row, rtol=0,
                                        atol=0), axis=1))
