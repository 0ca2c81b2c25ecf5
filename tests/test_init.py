"""`evidence1d init`: a starting case file from data files that `check` accepts once its
TODO placeholders are filled in."""
from __future__ import annotations

import shutil
from pathlib import Path

import numpy as np
import pytest
import yaml

from evidence1d.case import load_case
from evidence1d.cli import main
from evidence1d.init_case import PLACEHOLDER, detect, find_placeholders

FLAGSHIP = Path(__file__).resolve().parents[1] / "case_studies" / "flagship"


def _fill(node, truth):
    """Replace every placeholder in ``node`` by the value at the same place in ``truth``."""
    if isinstance(node, dict):
        return {k: (truth[k] if v == PLACEHOLDER else _fill(v, truth.get(k, {})))
                for k, v in node.items()}
    return node


def _fill_case(path):
    """The generated case with the flagship case's sample, units, temperatures and
    resolutions put in place of the placeholders (datasets matched by file name)."""
    spec = yaml.safe_load(path.read_text(encoding="utf-8"))
    truth = yaml.safe_load((FLAGSHIP / "case.yaml").read_text(encoding="utf-8"))
    spec["sample"] = _fill(spec["sample"], truth["sample"])
    by_file = {Path(d["file"]).name: d for d in truth["datasets"]}
    spec["datasets"] = [_fill(d, by_file[Path(d["file"]).name]) for d in spec["datasets"]]
    path.write_text(yaml.safe_dump(spec, sort_keys=False, allow_unicode=True),
                    encoding="utf-8")


@pytest.fixture
def work(tmp_path):
    shutil.copytree(FLAGSHIP / "data", tmp_path / "data")
    return tmp_path


def test_init_on_the_flagship_data_then_check(work, capsys, monkeypatch):
    monkeypatch.chdir(work)
    assert main(["init", "data"]) == 0
    out = capsys.readouterr().out
    case = work / "case.yaml"
    assert case.is_file() and "fill in the" in out and "evidence1d check case.yaml" in out
    spec = yaml.safe_load(case.read_text(encoding="utf-8"))
    kinds = {Path(d["file"]).name: d["kind"] for d in spec["datasets"]}
    assert kinds == {"chi.csv": "susceptibility", "heat_capacity.csv": "heat_capacity",
                     "map_along_chain.csv": "crystal_spectrum",
                     "cut_across_chain.csv": "crystal_spectrum"}
    assert {"spinon_continuum", "gapped_spin_wave", "paramagnon"} <= set(spec["models"])
    text = case.read_text(encoding="utf-8")
    for what in ("ion", "charge", "spin_spacing", "temperature", "resolution", "lattice"):
        line = next(ln for ln in text.splitlines() if ln.strip().startswith(what + ":"))
        assert "TODO" in line.split("#", 1)[1], line
    left = find_placeholders(case)
    assert ("sample.ion" in dict((k, ln) for ln, k in left)) and len(left) == 18
    # unfilled: check names the first placeholder in one line
    code = main(["check", str(case)])
    err = capsys.readouterr().err.strip()
    assert code == 2 and "\n" not in err and "case.yaml:6" in err and "'sample.ion'" in err
    assert "17 more" in err
    _fill_case(case)
    assert find_placeholders(case) == []
    assert main(["check", str(case)]) == 0
    assert "case is valid" in capsys.readouterr().out
    # the filled case reads the same data as the flagship case
    ours = {d.path.name: d for d in load_case(case).datasets}
    for ds in load_case(FLAGSHIP / "case.yaml").datasets:
        for k, v in ds.x.items():
            np.testing.assert_array_equal(ours[ds.path.name].x[k], v)
        np.testing.assert_array_equal(ours[ds.path.name].y, ds.y)


def test_init_refuses_to_overwrite_without_force(work, capsys):
    out = work / "sub" / "case.yaml"
    assert main(["init", str(work / "data" / "chi.csv"), "--out", str(out)]) == 0
    capsys.readouterr()
    out.write_text("# mine\n")
    assert main(["init", str(work / "data" / "chi.csv"), "--out", str(out)]) == 2
    err = capsys.readouterr().err.strip()
    assert "\n" not in err and "already exists" in err and "--force" in err
    assert out.read_text() == "# mine\n"
    assert main(["init", str(work / "data" / "chi.csv"), "--out", str(out), "--force"]) == 0
    spec = yaml.safe_load(out.read_text(encoding="utf-8"))
    assert spec["datasets"][0]["file"] == "../data/chi.csv"


def test_kinds_and_units_from_headers(tmp_path, capsys):
    T = np.linspace(2, 100, 8)
    (tmp_path / "m.dat").write_text("T (K)\tM (emu/mol)\tdM (emu/mol)\n" + "".join(
        f"{t:g}\t{0.3 / t:.5g}\t1e-4\n" for t in T))
    (tmp_path / "s.txt").write_text("# T (K), S [J/(mol K)], err\n" + "".join(
        f"{t:g}, {0.1 * t:.4g}, 0.01\n" for t in T))
    (tmp_path / "hkl.csv").write_text("H, K, L, E (meV), I, dI\n" + "".join(
        f"0, 0.5, {l:.3g}, {e:g}, 1, 0.1\n" for l in np.linspace(0.1, 0.9, 5)
        for e in (1, 2)))
    (tmp_path / "odd.csv").write_text("x1, x2, x3\n1, 2, 3\n")
    (tmp_path / "notes.txt").write_text("measured on Tuesday\n")
    m = detect(tmp_path / "m.dat")
    assert (m.kind, m.units) == ("susceptibility", {"temperature": "K", "chi": "emu/mol"})
    assert m.columns == {"chi": "M (emu/mol)", "error": "dM (emu/mol)"}
    s = detect(tmp_path / "s.txt")
    assert (s.kind, s.units) == ("entropy", {"temperature": "K", "entropy": "J/mol/K"})
    h = detect(tmp_path / "hkl.csv")
    assert h.kind == "crystal_spectrum" and h.layout == "hkl"
    assert h.units == {"energy": "meV", "wavevector": "rlu", "intensity": "arb"}
    assert detect(tmp_path / "odd.csv").kind is None
    out = tmp_path / "case.yaml"
    assert main(["init", str(tmp_path), "--out", str(out)]) == 0
    said = capsys.readouterr().out
    assert "skipped" in said and "notes.txt" in said and "odd.csv -> kind unknown" in said
    spec = yaml.safe_load(out.read_text(encoding="utf-8"))
    by = {d["file"]: d for d in spec["datasets"]}
    assert by["odd.csv"]["kind"] == PLACEHOLDER and "notes.txt" not in by
    assert by["m.dat"]["columns"] == {"chi": "M (emu/mol)", "error": "dM (emu/mol)"}
    assert by["m.dat"]["units"] == {"temperature": "K", "chi": "emu/mol"}
    # fill the rest by hand, drop the unknown file: check accepts it
    del spec["datasets"][[d["file"] for d in spec["datasets"]].index("odd.csv")]
    spec["sample"].update(ion="Cu", charge=2, spin_spacing=3.0,
                          lattice={"a": 7.0, "b": 7.5, "c": 6.0})
    for d in spec["datasets"]:
        if d["kind"] == "crystal_spectrum":
            d.update(temperature=2.0, resolution={"fwhm": [0.1]})
    spec["models"] = ["spinon_continuum"]
    out.write_text(yaml.safe_dump(spec, sort_keys=False))
    assert main(["check", str(out)]) == 0
