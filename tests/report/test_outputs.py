"""The output folder of a run: files, schema, rebuild without sampling, command line."""
from __future__ import annotations

import json
import shutil

import h5py
import numpy as np
import pytest

from evidence1d.errors import InputError
from evidence1d.provenance import file_hash
from evidence1d.report import rebuild_report
from evidence1d.report.schema import validate_summary
from evidence1d.results import load_results


def test_summary_validates_and_holds_every_sampled_parameter(run_dir, summary):
    out, _ = run_dir
    validate_summary(summary)
    res = load_results(out)
    assert set(summary["models"]) == set(res.models)
    for name, mr in res.models.items():
        params = summary["models"][name]["parameters"]
        assert list(params) == list(mr.full_names)     # nuisances included, in order
        assert mr.nuisance_names                       # linear nuisances marginalised
        assert all(params[n].get("marginalised") for n in mr.nuisance_names)
        for p, v in params.items():
            assert v["q16"] <= v["median"] <= v["q84"]
            assert v["unit"]
        # medians are those of the saved samples (numpy quantiles, Hyndman & Fan 1996 def. 7)
        med = np.quantile(mr.posterior.samples, 0.5, axis=0)
        assert np.allclose([params[p]["median"] for p in mr.names], med, rtol=0, atol=0)
        lap = summary["models"][name]["laplace"]
        assert lap is None or lap["approximate"] is True
    c = summary["comparison"]
    assert abs(sum(c["model_probabilities"].values()) - 1.0) < 1e-12
    n = len(summary["models"])
    assert len(c["pairs"]) == n * (n - 1) // 2
    for p in c["pairs"]:                              # ln K = ln Z_a − ln Z_b (Kass & Raftery 1995)
        za = summary["models"][p["a"]]["log_evidence"]
        zb = summary["models"][p["b"]]["log_evidence"]
        assert p["ln_k"] == pytest.approx(za - zb, abs=1e-9)
    assert summary["provenance"]["seed"] == 7


def test_every_output_file_is_written_and_not_empty(run_dir, summary):
    out, _ = run_dir
    names = list(summary["models"])
    expected = ["summary.json", "report.md", "tables.tex", "figures/comparison.png",
                "figures/comparison.pdf", "saved/results.npz"]
    for m in names:
        expected += [f"figures/corner_{m}.png", f"figures/corner_{m}.pdf",
                     f"samples/{m}.nc", f"samples/{m}.csv"]
        for ds in ("map", "chi", "heat"):
            expected += [f"figures/predictive_{m}_{ds}.png", f"figures/predictive_{m}_{ds}.pdf"]
        expected += [f"figures/map_{m}_map.png", f"figures/map_{m}_map.pdf"]
    for rel in expected:
        p = out / rel
        assert p.is_file() and p.stat().st_size > 0, rel
    assert (out / "figures/comparison.png").read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert (out / "figures/comparison.pdf").read_bytes()[:5] == b"%PDF-"
    assert not list(out.rglob("*.tmp")), "temporary files left behind"


def test_summary_json_is_written_last(run_dir):
    # summary.json marks a finished run; only the append-only run.log (whose last line
    # records the finish) may be touched after it
    out, _ = run_dir
    t = (out / "summary.json").stat().st_mtime_ns
    others = [p for p in out.rglob("*") if p.is_file()
              and p.name not in ("summary.json", "run.log") and "chains" not in p.parts]
    assert others
    assert all(p.stat().st_mtime_ns <= t for p in others)


def test_samples_files_hold_the_posterior(run_dir):
    out, _ = run_dir
    res = load_results(out)
    for name, mr in res.models.items():
        lines = (out / "samples" / f"{name}.csv").read_text().splitlines()
        assert lines[0].split(",") == list(mr.full_names)
        table = np.array([[float(v) for v in ln.split(",")] for ln in lines[1:]])
        assert np.array_equal(table, mr.full_samples)
        assert np.array_equal(table[:, :len(mr.names)], mr.posterior.samples)
        with h5py.File(out / "samples" / f"{name}.nc", "r") as f:   # NetCDF-4 is HDF5
            post = f["posterior"]
            for j, p in enumerate(mr.names):
                arr = post[p][()]                        # (chain = walker, draw)
                chain = mr.posterior.chain[mr.posterior.burn_in:, :, j]
                assert np.array_equal(arr, chain.T)


def test_inputs_are_copied_with_matching_hashes(run_dir, summary):
    import evidence1d
    out, _ = run_dir
    case = evidence1d.load_case(out / "inputs" / "case.yaml")
    for ds in case.datasets:
        assert out / "inputs" in ds.path.parents
        assert file_hash(ds.path) == summary["provenance"]["data_sha256"][ds.name]
    assert file_hash(out / "inputs" / "case.yaml") == summary["provenance"]["case_sha256"]


def test_rebuild_gives_identical_numbers_and_text(run_dir, tmp_path):
    out, first = run_dir
    moved = tmp_path / "moved"                        # no dependence on the original paths
    shutil.copytree(out, moved)
    shutil.rmtree(out.parent / "case")
    for p in ("summary.json", "report.md", "tables.tex"):
        (moved / p).unlink()
    assert rebuild_report(moved, figures=False) == moved
    for name, text in first.items():
        assert (moved / name).read_text(encoding="utf-8") == text, name
    assert json.loads((moved / "summary.json").read_text()) == json.loads(first["summary.json"])


def test_rebuild_refuses_a_folder_without_saved_results(tmp_path):
    with pytest.raises(InputError, match="saved results"):
        rebuild_report(tmp_path)
    with pytest.raises(InputError, match="no such folder"):
        rebuild_report(tmp_path / "missing")


def test_rebuild_needs_neither_the_inputs_nor_model_code(run_dir, tmp_path):
    """The report renders from the saved record alone: without inputs/ and chains/, in a
    fresh interpreter where importing any model module is an error."""
    import subprocess
    import sys
    out, first = run_dir
    moved = tmp_path / "bare"
    shutil.copytree(out, moved, ignore=shutil.ignore_patterns("inputs", "chains"))
    for p in ("summary.json", "report.md", "tables.tex"):
        (moved / p).unlink()
    code = ("import sys, importlib.abc\n"
            "class Block(importlib.abc.MetaPathFinder):\n"
            "    def find_spec(self, name, path, target=None):\n"
            "        if name.split('.')[:2] in (['evidence1d', m] for m in\n"
            "                ('physics', 'families', 'problem', 'case', 'runner', 'cards')):\n"
            "            raise ImportError('model code imported: ' + name)\n"
            "sys.meta_path.insert(0, Block())\n"
            "from evidence1d.report import rebuild_report\n"
            f"rebuild_report({str(moved)!r}, figures=True, workers=1)\n")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr
    for name, text in first.items():
        assert (moved / name).read_text(encoding="utf-8") == text, name
    assert (moved / "figures" / "comparison.png").is_file()


def test_saved_record_round_trips(run_dir, tmp_path):
    """save_results(load_results(DIR)) writes the same record: every array and number."""
    import dataclasses

    from evidence1d.results import save_results, to_tree
    out, _ = run_dir
    res = load_results(out)
    save_results(dataclasses.replace(res, out=tmp_path), tmp_path)
    again = load_results(tmp_path)
    a1, a2 = {}, {}
    t1, t2 = to_tree(dataclasses.replace(res, out=None, case_path=None), a1), \
        to_tree(dataclasses.replace(again, out=None, case_path=None), a2)
    assert t1 == t2 and a1.keys() == a2.keys()
    assert all(np.array_equal(a1[k], a2[k], equal_nan=True) for k in a1)
    assert not res.models[next(iter(res.models))].posterior.samples.flags.writeable


def test_report_command_rebuilds(run_dir, tmp_path, capsys):
    from evidence1d.cli import main
    out, first = run_dir
    moved = tmp_path / "cli"
    shutil.copytree(out, moved, ignore=shutil.ignore_patterns("figures"))
    assert main(["report", str(moved), "--no-figures"]) == 0
    assert "report rebuilt" in capsys.readouterr().out
    assert (moved / "report.md").read_text(encoding="utf-8") == first["report.md"]
    assert main(["report", str(tmp_path / "nothing")]) == 2
