"""calibrate --generators: out-of-family truths from a generator file.

The generator file used here (suite_generators.py) adapts two generators of the
misspecification suite, whose physics is checked against published values in
tests/misspecification/test_generators.py (Karbach et al., PRB 55, 12510 (1997); Bonner &
Fisher, Phys. Rev. 135, A640 (1964)); the first test shows the adaptation reproduces the
suite's own functions on the suite's design, the others run the interface."""
from __future__ import annotations

import json
import re
import shutil
import sys
from pathlib import Path

import numpy as np
import pytest

import evidence1d
from evidence1d.campaign import calibrate
from evidence1d.campaign.generators import load_generator_file
from evidence1d.campaign.scores import calibration_scores
from evidence1d.cli import main

SUITE = Path(__file__).resolve().parent / "suite_generators.py"
GENS = ["suite_chain_exact", "suite_itinerant"]
FAMS = ["spinon_continuum", "paramagnon"]


def _suite():
    sys.path.insert(0, str(SUITE.parents[1] / "misspecification"))
    import generators
    sys.path.insert(0, str(SUITE.parent))
    import suite_generators
    return generators, suite_generators


def test_adapter_reproduces_the_suite_on_its_own_design():
    """At the suite's geometry (d = 3.1 Å, a = 7.4 Å) and resolution (FWHM 0.08 + 0.02 E),
    the adapted spectra equal the suite's chain_spectrum and paramagnon_spectrum."""
    G, A = _suite()
    L, H, E = (np.repeat([0.3, 0.9, 1.4], 4), np.tile([0.0, 0.5], 6),
               np.tile([0.4, 1.0, 1.9, 2.8], 3))
    q, qa, _ = G._phases(L, H)
    sig = G.fwhm(E) / 2.3548                 # the suite's own FWHM-to-σ factor
    np.testing.assert_allclose(A.chain_S(q, E, sig, 1.0, 1.5),
                               G.chain_spectrum(q, E, 1.0, 1.5), rtol=1e-12)
    np.testing.assert_allclose(
        A.paramagnon_S(q, qa, E, sig, 5.0, 8.0, 10.0, 2.5, 1.2, G.GEOMETRY["d"],
                       G.GEOMETRY["a"]),
        G.paramagnon_spectrum(q, qa, E, 5.0, 8.0, 10.0, 2.5, 1.2), rtol=1e-10)


def _record(family, winner, ln_k, p_1d, generator=False):
    return {"id": f"{family}-x", "family": family, "winner": winner, "ln_k_1d": ln_k,
            "p_1d": p_1d, "ln_k_truth": None if generator else 1.0, "generator": generator,
            "one_dimensional": {"spinon_continuum": True, "paramagnon": False},
            "ranks": {} if generator else {"J": 0.5}, "failed": None}


def test_scores_count_generators_in_the_1d_rates_only():
    recs = [_record("spinon_continuum", "spinon_continuum", 5.0, 0.9),
            _record("paramagnon", "paramagnon", -5.0, 0.1),
            _record("g1d", "paramagnon", -4.0, 0.2, True),        # a missed 1D
            _record("g3d", "spinon_continuum", 4.0, 0.95, True),  # a false 1D
            _record("g3d", "paramagnon", -9.0, 0.0, True)]
    doc = calibration_scores(recs, FAMS, 3.0, generators={"g1d": True, "g3d": False})
    assert doc["true_families"] == FAMS + ["g1d", "g3d"]
    assert doc["confusion_matrix"]["g3d"] == {"spinon_continuum": 1, "paramagnon": 1}
    assert (doc["false_1d_rate"]["count"], doc["false_1d_rate"]["n"]) == (1, 3)
    assert (doc["missed_1d_rate"]["count"], doc["missed_1d_rate"]["n"]) == (1, 2)
    assert doc["accuracy"]["n"] == 2 and doc["accuracy"]["count"] == 2
    assert sum(b["n"] for b in doc["reliability"]["bins"]) == 2
    assert doc["coverage"]["68"]["overall"]["n"] == 2
    assert doc["per_truth"]["g3d"]["called_1d"]["rate"] == 0.5
    assert doc["per_truth"]["g1d"]["winner_of_its_class"]["rate"] == 0.0
    assert doc["ln_k_1d"]["g3d"]["n"] == 2 and "g3d" not in doc["ln_k_truth"]


@pytest.mark.slow
def test_calibrate_with_generators_end_to_end(two_family_case, dask_client, tmp_path):
    """Two families and two suite generators on a Dask LocalCluster; the workers receive
    the generator file as text."""
    out = tmp_path / "gen"
    doc = calibrate(two_family_case, out=out, replicates=1, quick=True, generators=SUITE,
                    executor=dask_client, progress=False)
    assert json.loads((out / "calibration.json").read_text()) == json.loads(json.dumps(doc))
    assert doc["replicates"] == {"total": 4, "finished": 4, "failed": 0}
    assert doc["true_families"] == FAMS + GENS
    assert doc["truth_one_dimensional"] == {"spinon_continuum": True, "paramagnon": False,
                                            "suite_chain_exact": True,
                                            "suite_itinerant": False}
    for g in GENS:
        assert sum(doc["confusion_matrix"][g].values()) == 1
        assert set(doc["confusion_matrix"][g]) == set(FAMS)
        assert doc["per_truth"][g]["generator"]
    assert doc["false_1d_rate"]["n"] == 2 and doc["missed_1d_rate"]["n"] == 2
    assert doc["accuracy"]["n"] == 2
    assert all(k.split(".")[0] in FAMS for k in doc["coverage"]["68"]["parameters"])
    assert "no parameter coverage" in doc["generator_note"]
    assert [g["name"] for g in doc["generators"]] == GENS
    from evidence1d.results import load_record
    rec, _ = load_record(out / "replicates" / "suite_chain_exact-0000.npz")
    assert rec["generator"] and 0.0 < rec["truth"]["J"] < 2.0 and rec["ranks"] == {}
    page = (out / "calibration.md").read_text()
    assert "Out-of-family generators" in page and "suite_itinerant (generator)" in page
    assert (out / "figures" / "confusion.png").stat().st_size > 10_000
    # resumed: nothing computed again
    calibrate(two_family_case, out=out, replicates=1, quick=True, generators=SUITE,
              executor=dask_client, progress=False, figures=False)
    assert "4 of 4 calibration already finished; 0 to run" in \
        (out / "campaign.log").read_text()
    # another generator file is another campaign
    other = tmp_path / "other_generators.py"
    other.write_text(SUITE.read_text() + "\n# changed\n")
    with pytest.raises(evidence1d.InputError, match="another campaign .*generators"):
        calibrate(two_family_case, out=out, replicates=1, quick=True, generators=other,
                  executor=dask_client, progress=False)


HEAD = "import numpy as np\n"
GOOD = ("def sim(design, rng):\n"
        "    return {n: np.ones(d['n']) for n, d in design['datasets'].items()}\n")
BAD_FILES = {
    "syntax": (HEAD + "def f(:\n", "line 2: syntax error"),
    "raises": (HEAD + "1 / 0\n", "fails when run: ZeroDivisionError"),
    "none": (HEAD, "defines no GENERATORS"),
    "empty": (HEAD + "GENERATORS = []\n", "must be a non-empty list"),
    "not_mapping": (HEAD + "GENERATORS = ['x']\n", "GENERATORS[0] must be a mapping"),
    "missing": (HEAD + GOOD + "GENERATORS = [{'name': 'a', 'one_dimensional': True}]\n",
                "missing simulate"),
    "unknown_key": (HEAD + GOOD + "GENERATORS = [{'name': 'a', 'one_dimensional': True, "
                    "'simulate': sim, 'colour': 1}]\n", "unknown key(s) colour"),
    "bad_name": (HEAD + GOOD + "GENERATORS = [{'name': 'a b', 'one_dimensional': True, "
                 "'simulate': sim}]\n", "name must be letters"),
    "twice": (HEAD + GOOD + "GENERATORS = [{'name': 'a', 'one_dimensional': True, "
              "'simulate': sim}] * 2\n", "'a' is used twice"),
    "flag": (HEAD + GOOD + "GENERATORS = [{'name': 'a', 'one_dimensional': 'yes', "
             "'simulate': sim}]\n", "one_dimensional must be true or false"),
    "not_callable": (HEAD + "GENERATORS = [{'name': 'a', 'one_dimensional': True, "
                     "'simulate': 3}]\n", "simulate must be a function"),
    "model_name": (HEAD + GOOD + "GENERATORS = [{'name': 'paramagnon', "
                   "'one_dimensional': False, 'simulate': sim}]\n",
                   "has the name of a model of the case"),
    "datasets": (HEAD + "def sim(d, rng):\n    return {'map': np.ones(30)}\n"
                 "GENERATORS = [{'name': 'a', 'one_dimensional': True, 'simulate': sim}]\n",
                 "returned datasets ['map']; expected exactly"),
    "points": (HEAD + "def sim(d, rng):\n    return {n: np.ones(3) for n in d['datasets']}\n"
               "GENERATORS = [{'name': 'a', 'one_dimensional': True, 'simulate': sim}]\n",
               "dataset 'map' has 30 points; got values of shape (3,)"),
    "nan": (HEAD + "def sim(d, rng):\n    return {n: np.full(x['n'], np.nan) for n, x in "
            "d['datasets'].items()}\n"
            "GENERATORS = [{'name': 'a', 'one_dimensional': True, 'simulate': sim}]\n",
            "non-finite values for dataset 'map'"),
    "call_fails": (HEAD + "def sim(d, rng):\n    raise KeyError('Q_perp3')\n"
                   "GENERATORS = [{'name': 'a', 'one_dimensional': True, 'simulate': sim}]\n",
                   "fails: KeyError: 'Q_perp3'"),
    "params": (HEAD + "def sim(d, rng):\n    return ({n: np.ones(x['n']) for n, x in "
               "d['datasets'].items()}, {'J': 'big'})\n"
               "GENERATORS = [{'name': 'a', 'one_dimensional': True, 'simulate': sim}]\n",
               "parameters it returns must be a mapping"),
}


@pytest.mark.parametrize("label", sorted(BAD_FILES))
def test_bad_generator_files_give_one_line_errors(two_family_case, tmp_path, label):
    text, message = BAD_FILES[label]
    path = tmp_path / f"{label}.py"
    path.write_text(text)
    with pytest.raises(evidence1d.InputError, match=re.escape(message)) as info:
        load_generator_file(path, two_family_case)
    assert str(path.resolve()) in str(info.value) and "\n" not in str(info.value)


def test_generator_file_errors_on_the_command_line(two_family_case, tmp_path, capsys):
    case = str(two_family_case.path)
    assert main(["calibrate", case, "--generators", str(tmp_path / "nope.py"),
                 "--processes", "--out", str(tmp_path / "a")]) == 2
    err = capsys.readouterr().err.strip()
    assert err.startswith("evidence1d: error: cannot read generator file") and \
        "nope.py" in err and "\n" not in err
    (tmp_path / "g.txt").write_text("GENERATORS = []\n")
    assert main(["calibrate", case, "--generators", str(tmp_path / "g.txt"),
                 "--processes", "--out", str(tmp_path / "b")]) == 2
    assert "expected a Python file (.py)" in capsys.readouterr().err
    assert not (tmp_path / "a").exists() and not (tmp_path / "b").exists()


def test_a_good_minimal_generator_file_loads(two_family_case, tmp_path):
    path = tmp_path / "flat.py"
    path.write_text(HEAD + GOOD + "GENERATORS = [{'name': 'flat', 'one_dimensional': False, "
                    "'simulate': sim, 'description': 'ones\\n everywhere'}]\n")
    gf, gens = load_generator_file(path, two_family_case)
    assert [(g.name, g.one_dimensional, g.description) for g in gens] == \
        [("flat", False, "ones everywhere")]
    shutil.copy(path, tmp_path / "flat_copy.py")
    assert load_generator_file(tmp_path / "flat_copy.py", two_family_case)[0].sha256 == \
        gf.sha256
