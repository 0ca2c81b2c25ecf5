"""Every bad input gets one line naming where and what, exit code 2, no traceback."""
from __future__ import annotations

import pytest

from evidence1d.cli import main
from casefactory import CASE_YAML, write_valid_case, check_command, edit_file


_edit = edit_file


_run_check = check_command


def _mutations():
    # (id, function(folder) -> path to check, words the message must contain)
    def case_edit(old, new):
        def f(folder):
            _edit(folder / "case.yaml", old, new)
            return folder / "case.yaml"
        return f

    def data_edit(name, old, new):
        def f(folder):
            _edit(folder / name, old, new)
            return folder / "case.yaml"
        return f

    def chi_rows(rows):
        def f(folder):
            (folder / "chi.csv").write_text("T, chi, error\n" + "".join(rows))
            return folder / "case.yaml"
        return f

    return [
        ("missing case file", lambda folder: folder / "nope.yaml", ["nope.yaml", "not found"]),
        ("yaml syntax", case_edit("title: test case", "title: [unclosed"), ["case.yaml:",
                                                                            "syntax"]),
        ("unknown kind", case_edit("kind: susceptibility", "kind: susceptibilty"),
         ["kind", "susceptibility"]),
        ("unknown unit", case_edit("chi: emu/mol}", "chi: emu/g}"), ["emu/g", "units.chi"]),
        ("missing unit", case_edit("units: {temperature: K, chi: emu/mol}",
                                   "units: {temperature: K}"), ["missing unit 'chi'"]),
        ("missing data file", case_edit("file: chi.csv", "file: chii.csv"),
         ["chii.csv", "not found"]),
        ("missing column", data_edit("chi.csv", "T chi error", "T chi dX"),
         ["missing column 'error'"]),
        ("non-numeric cell", data_edit("chi.csv", "1e-4\n", "abc\n"),
         ["chi.csv:2", "non-numeric", "error"]),
        ("nan", data_edit("heat.csv", "\t0.01\n", "\tnan\n"), ["heat.csv:2", "not finite"]),
        ("inf", data_edit("map.csv", "1.0, 0.1\n", "inf, 0.1\n"), ["map.csv:3", "not finite"]),
        ("zero error", chi_rows([f"{t}, 0.01, {0.0 if t == 5 else 1e-4}\n"
                                 for t in range(2, 12)]), ["chi.csv:5", "not positive"]),
        ("negative error", chi_rows([f"{t}, 0.01, {-1e-4 if t == 4 else 1e-4}\n"
                                     for t in range(2, 12)]), ["chi.csv:4", "not positive"]),
        ("too few points", chi_rows([f"{t}, 0.01, 1e-4\n" for t in range(2, 5)]),
         ["too few points"]),
        ("duplicated temperature", chi_rows([f"{t}, 0.01, 1e-4\n" for t in
                                             [2, 3, 4, 5, 5, 6, 7]]),
         ["chi.csv:6", "duplicated temperature 5"]),
        ("unknown model", case_edit("  - spinon_continuum", "  - spinon_continum"),
         ["unknown model", "spinon_continuum"]),
        ("prior lower >= upper", case_edit(
            "  - spinon_continuum",
            "  - name: spinon_continuum\n    priors: {J: {kind: uniform, lower: 2, upper: 1}}"),
         ["models[0].priors.J", "lower"]),
        ("log prior non-positive", case_edit(
            "  - spinon_continuum",
            "  - name: spinon_continuum\n    priors: {J: {kind: log_uniform, lower: 0, upper: 1}}"),
         ["models[0].priors.J"]),
        ("unknown key", case_edit("spin_spacing: 3.0", "spin_spacng: 3.0"),
         ["unknown key 'spin_spacng'", "did you mean 'spin_spacing'"]),
        ("missing required key", case_edit("  ion: Cu\n", ""), ["missing required key 'ion'"]),
        ("unknown ion", case_edit("ion: Cu", "ion: Qq"), ["sample.ion"]),
        ("spectrum without resolution", case_edit("    resolution: {fwhm: [0.1, 0.02]}\n", ""),
         ["resolution"]),
        ("duplicated key", case_edit("  charge: 2\n", "  charge: 2\n  charge: 3\n"),
         ["duplicated key 'charge'"]),
        ("parameter not in model", case_edit(
            "  - spinon_continuum",
            "  - name: spinon_continuum\n    priors: {Jperp: {kind: uniform, lower: 0, upper: 1}}"),
         ["'Jperp' is not a parameter"]),
        ("negative temperature", chi_rows([f"{t}, 0.01, 1e-4\n" for t in
                                           [-2, 3, 4, 5, 6, 7]]), ["chi.csv:2", "> 0 K"]),
    ]


@pytest.mark.parametrize("mutate, words", [(m[1], m[2]) for m in _mutations()],
                         ids=[m[0] for m in _mutations()])
def test_bad_input_gives_one_line(tmp_path, capsys, mutate, words):
    folder = tmp_path / "case"
    write_valid_case(folder)
    target = mutate(folder)
    code, err = _run_check(capsys, target)
    assert code == 2
    assert "\n" not in err, err
    assert "Traceback" not in err
    assert err.startswith("evidence1d: error: ")
    for w in words:
        assert w in err, f"{w!r} not in {err!r}"


def test_valid_case_checks(tmp_path, capsys):
    path = write_valid_case(tmp_path / "case")
    assert main(["check", str(path)]) == 0
    out = capsys.readouterr().out
    assert "map" in out and "crystal_spectrum" in out and "spinon_continuum" in out


def test_debug_shows_traceback(tmp_path):
    path = write_valid_case(tmp_path / "case")
    _edit(path, "kind: susceptibility", "kind: nonsense")
    with pytest.raises(Exception):
        main(["--debug", "check", str(path)])


@pytest.mark.parametrize("old, new, words", [
    ("steps: 200", "steps: 2.5e2x", ["sampler.steps", "expected an integer", "'2.5e2x'"]),
    ("steps: 200", "steps: 200, ess_fraction: 1.5",
     ["sampler.ess_fraction", "expected a number in (0, 1)"]),
    ("steps: 200", "steps: 200, walkers: -2", ["sampler.walkers", "integer >= 0"]),
    ("{fwhm: [0.1, 0.02]}", "{fwhm: [0.1, 2e-2x]}",
     ["datasets[0].resolution.fwhm[1]", "finite number"]),
    ("{fwhm: [0.1, 0.02]}", "{fwhm: [0.1, 0.02]}\n    powder_average: {max_grid: 1}",
     ["datasets[0].powder_average.max_grid", "integer from 2 to 4096"]),
    ("{fwhm: [0.1, 0.02]}", "{fwhm: [0.1, 0.02]}\n    powder_average: {tolerance: 2}",
     ["datasets[0].powder_average.tolerance", "number in (0, 1)"]),
    ("sd: 0.05}", "sd: -5e-2}", ["sample.g.sd", "expected a number > 0"]),
    ("seed: 7", "seed: 7\nfigures: {draws: 2}", ["figures.draws", "integer >= 5"]),
    ("seed: 7", "seed: 7\nfigures: {map_scale: cubic}", ["figures.map_scale", "'cubic'"]),
])
def test_bad_setting_names_its_key_in_one_line(tmp_path, capsys, old, new, words):
    path = write_valid_case(tmp_path / "case")
    _edit(path, old, new)
    code, err = _run_check(capsys, path)
    assert code == 2 and "\n" not in err and "Traceback" not in err
    assert "case.yaml:" in err                     # the file and the line of the key
    for w in words:
        assert w in err, f"{w!r} not in {err!r}"
