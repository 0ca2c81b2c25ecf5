"""A corpus of bad case files, data files and model cards beyond tests/test_errors.py.

Each must give exit code 2 from ``evidence1d check``, one line on standard error that names
the file (and the line, column or key where there is one), no traceback; ``evidence1d run``
on it must leave no output folder that looks complete (no summary.json).
"""
from __future__ import annotations

import re
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from casefactory import CASE_YAML, write_valid_case, check_command, edit_file
from evidence1d.cli import main

CARD = Path(__file__).resolve().parents[2] / "models" / "gapped_spin_wave.yaml"


_edit = edit_file


_check = check_command


# ----------------------------------------------------------------- mutation builders
def case_edit(old, new):
    def f(folder):
        _edit(folder / "case.yaml", old, new)
    return f


def case_text(text):
    def f(folder):
        (folder / "case.yaml").write_text(text)
    return f


def data_text(name, text, encoding=None):
    def f(folder):
        p = folder / name
        if isinstance(text, bytes):
            p.write_bytes(text)
        else:
            p.write_text(text)
    return f


def card(old, new, whole=None):
    """Point the case at a copy of the bundled gapped_spin_wave card with one edit."""
    def f(folder):
        src = CARD.read_text(encoding="utf-8")
        if whole is not None:
            src = whole
        else:
            assert old in src, f"card text changed: {old!r}"
            src = src.replace(old, new, 1)
        (folder / "card.yaml").write_text(src, encoding="utf-8")
        _edit(folder / "case.yaml", "  - spinon_continuum", "  - card: card.yaml")
    return f


def powder(rows):
    """Replace the map by a powder spectrum with the given rows (Q, E, I, err)."""
    def f(folder):
        _edit(folder / "case.yaml", "kind: crystal_spectrum", "kind: powder_spectrum")
        _edit(folder / "case.yaml", "wavevector: rlu", "wavevector: 1/A")
        (folder / "map.csv").write_text("Q, energy, intensity, error\n" + "".join(rows))
    return f


_GOOD_POWDER = [f"{0.5 + 0.1 * i:.2f}, {0.5 + 0.2 * i:.2f}, 1.0, 0.1\n" for i in range(12)]
_BAD_POWDER = list(_GOOD_POWDER)
_BAD_POWDER[3] = "-0.3, 1.0, 1.0, 0.1\n"

_CHI_HEAD = "T chi error\n"
_CHI_ROWS = [f"{t:.1f} 0.01 1e-4\n" for t in range(2, 12)]


def _mutations():
    # (id, mutate(folder), file named in the message, words the message must contain)
    return [
        # ---------------------------------------------------------------- model cards
        ("card missing parameter",
         card("  damping: ", "  dampingX: "), "card.yaml", ["missing: damping", "parameters"]),
        ("card unknown family", card("family: gapped_spin_wave", "family: gapped_spinwave"),
         "card.yaml", ["unknown family 'gapped_spinwave'", "did you mean"]),
        ("card bad prior kind",
         card("prior: {kind: uniform, lower: 0.0, upper: 2.0}",
              "prior: {kind: flat, lower: 0.0, upper: 2.0}"), "card.yaml",
         ["unknown prior kind 'flat'", "parameters.J_perp.prior.kind"]),
        ("card nested limit names a non-parameter",
         card("nested_1d_limit: {parameter: J_perp,", "nested_1d_limit: {parameter: Jperp,"),
         "card.yaml", ["'Jperp'", "nested_1d_limit.parameter"]),
        ("card nested limit value not a number",
         card("{parameter: J_perp, value: 0.0}", "{parameter: J_perp, value: zero}"),
         "card.yaml", ["nested_1d_limit.value", "number"]),
        ("card is a YAML list", card(None, None, whole="- name: x\n- family: y\n"),
         "card.yaml", ["expected a mapping", "list"]),
        ("card file not found",
         case_edit("  - spinon_continuum", "  - card: no_such_card.yaml"),
         "no_such_card.yaml", ["not found"]),
        ("card prior missing a bound",
         card("prior: {kind: uniform, lower: 0.0, upper: 2.0}",
              "prior: {kind: uniform, lower: 0.0}"), "card.yaml", ["upper", "J_perp"]),
        ("card one_dimensional not a bool",
         card("one_dimensional: false", "one_dimensional: nope"), "card.yaml",
         ["one_dimensional", "true or false"]),
        ("card unknown parameter",
         card("  g:       {", "  K:       {unit: meV, description: x, prior: {kind: fixed, "
                             "value: 0}}\n  g:       {"), "card.yaml", ["unknown: K"]),
        ("card parameters not a mapping",
         card(None, None, whole="name: x\ntitle: y\nfamily: paramagnon\none_dimensional: false"
                                "\nparameters: [J, g]\n"), "card.yaml", ["parameters"]),
        ("card and name both given",
         case_edit("  - spinon_continuum", "  - {name: spinon_continuum, card: c.yaml}"),
         "case.yaml", ["exactly one of 'name'", "models[0]"]),
        # ---------------------------------------------------------------- data files
        ("ragged row", data_text("chi.csv", _CHI_HEAD + "".join(_CHI_ROWS[:4])
                                 + "6.0 0.01\n" + "".join(_CHI_ROWS[5:])),
         "chi.csv:6", ["row has 2 cells", "3 columns"]),
        ("empty data file", data_text("chi.csv", ""), "chi.csv", ["no header"]),
        ("header only", data_text("chi.csv", "# comment\nT chi error\n"), "chi.csv",
         ["no data rows"]),
        ("duplicated column", data_text("chi.csv", "T chi chi\n" + "".join(_CHI_ROWS)),
         "chi.csv:1", ["duplicated column", "chi"]),
        ("non-UTF-8 bytes", data_text("chi.csv", b"T chi error\n2.0 0.01 1e-4\n\xff\xfe\x00\n"),
         "chi.csv", ["UTF-8"]),
        ("negative |Q|", powder(_BAD_POWDER), "map.csv:5", ["|Q|", "column 'Q'"]),
        ("empty column name", data_text("chi.csv", "T,,error\n" + "".join(
            r.replace(" ", ",") for r in _CHI_ROWS)), "chi.csv:1", ["empty column name"]),
        ("data file is a folder", case_edit("file: chi.csv", "file: ."), "case", ["not found"]),
        ("too few spectrum points", powder(_GOOD_POWDER[:4]), "map.csv", ["too few points"]),
        # ---------------------------------------------------------------- case files
        ("string for a number", case_edit("spin_spacing: 3.0", "spin_spacing: three"),
         "case.yaml:", ["sample.spin_spacing", "finite number"]),
        ("negative dataset temperature", case_edit("temperature: 2.0", "temperature: -2.0"),
         "case.yaml:", ["datasets[0].temperature", "> 0"]),
        ("zero spin spacing", case_edit("spin_spacing: 3.0", "spin_spacing: 0"),
         "case.yaml:", ["sample.spin_spacing", "0.5"]),
        ("lattice missing c", case_edit("{a: 7.0, b: 7.5, c: 6.0}", "{a: 7.0, b: 7.5}"),
         "case.yaml:", ["missing required key 'c'", "sample.lattice"]),
        ("lattice not a mapping", case_edit("{a: 7.0, b: 7.5, c: 6.0}", "7.0"),
         "case.yaml:", ["sample.lattice", "expected a mapping"]),
        ("resolution without fwhm", case_edit("{fwhm: [0.1, 0.02]}", "{width: 0.1}"),
         "case.yaml:", ["datasets[0].resolution", "width"]),
        ("resolution fwhm empty", case_edit("{fwhm: [0.1, 0.02]}", "{fwhm: []}"),
         "case.yaml:", ["datasets[0].resolution.fwhm"]),
        ("resolution fwhm not positive", case_edit("{fwhm: [0.1, 0.02]}", "{fwhm: [-0.1]}"),
         "case.yaml:", ["datasets[0].resolution.fwhm", "width > 0"]),
        ("unknown field direction", case_edit("    units: {temperature: K, chi: emu/mol}",
                                              "    units: {temperature: K, chi: emu/mol}\n"
                                              "    field: x"),
         "case.yaml:", ["datasets[1].field", "'x'"]),
        ("unknown background", case_edit("    temperature: 2.0",
                                         "    temperature: 2.0\n    background: quadratic"),
         "case.yaml:", ["datasets[0].background", "quadratic"]),
        ("prior_odds unknown model", case_edit("seed: 7", "seed: 7\nprior_odds: {spinon: 1}"),
         "case.yaml:", ["prior_odds.spinon", "not a model"]),
        ("prior_odds negative", case_edit("seed: 7",
                                          "seed: 7\nprior_odds: {spinon_continuum: -1}"),
         "case.yaml:", ["prior_odds.spinon_continuum", "> 0"]),
        ("sampler steps zero", case_edit("steps: 200", "steps: 0"),
         "case.yaml:", ["sampler.steps", ">= 1"]),
        ("sampler unknown key", case_edit("steps: 200", "stepz: 200"),
         "case.yaml:", ["unknown key 'stepz'", "did you mean 'steps'"]),
        ("charge not an integer", case_edit("charge: 2", "charge: 2.5"),
         "case.yaml:", ["sample.charge", "integer"]),
        ("seed not an integer", case_edit("seed: 7", "seed: lucky"),
         "case.yaml:", ["seed", "integer"]),
        ("case is a YAML list", case_text("- title: x\n- sample: y\n"),
         "case.yaml", ["expected a mapping", "list"]),
        ("empty case file", case_text(""), "case.yaml", ["empty"]),
        ("non-UTF-8 case file", lambda folder: (folder / "case.yaml").write_bytes(
            CASE_YAML.encode() + b"# \xff\xfe\n"), "case.yaml", ["UTF-8"]),
        ("tab indentation", case_edit("  name: test chain", "\tname: test chain"),
         "case.yaml:", ["YAML syntax error", "column"]),
        ("empty dataset list", case_text(re.sub(r"datasets:\n(  .*\n|    .*\n)*",
                                                "datasets: []\n", CASE_YAML)),
         "case.yaml:", ["datasets", "non-empty list"]),
        ("empty model list", case_edit("models:\n  - spinon_continuum", "models: []"),
         "case.yaml:", ["models", "non-empty list"]),
        ("model listed twice", case_edit("  - spinon_continuum",
                                         "  - spinon_continuum\n  - spinon_continuum"),
         "case.yaml:", ["listed twice"]),
        ("duplicated dataset name", case_edit("  - name: chi", "  - name: map"),
         "case.yaml:", ["duplicated dataset name 'map'"]),
        ("unknown extra", case_edit("seed: 7", "seed: 7\nextras: {chi_zero: {kind: fixed, "
                                              "value: 0}}"),
         "case.yaml:", ["unknown extra 'chi_zero'"]),
        ("bad g prior", case_edit("g: {kind: normal, mean: 2.1, sd: 0.05}",
                                  "g: {kind: normal, mean: 2.1, sd: -0.05}"),
         "case.yaml:", ["sample.g"]),
        ("prior_odds not a mapping", case_edit("seed: 7", "seed: 7\nprior_odds: [1, 2]"),
         "case.yaml:", ["prior_odds", "mapping"]),
        ("boolean for a number", case_edit("spin: 0.5", "spin: true"),
         "case.yaml:", ["sample.spin", "finite number"]),
        ("sampler not a mapping", case_edit("sampler: {steps: 200, particles: 100, islands: 2}",
                                            "sampler: fast"),
         "case.yaml:", ["sampler", "mapping"]),
    ]


MUTATIONS = _mutations()


def test_corpus_is_large_and_distinct():
    ids = [m[0] for m in MUTATIONS]
    assert len(set(ids)) == len(ids)
    # with the 24 cases of tests/test_errors.py, at least 40 in all (issue 9)
    assert len(ids) + 24 >= 40


@pytest.mark.parametrize("mutate, where, words", [m[1:] for m in MUTATIONS],
                         ids=[m[0] for m in MUTATIONS])
def test_bad_input_one_line_exit_2(tmp_path, capsys, mutate, where, words):
    folder = tmp_path / "case"
    write_valid_case(folder)
    mutate(folder)
    code, err = _check(capsys, folder / "case.yaml")
    assert code == 2, err
    assert "\n" not in err, err
    assert "Traceback" not in err
    assert err.startswith("evidence1d: error: ")
    assert where in err, f"{where!r} not in {err!r}"
    for w in words:
        assert w in err, f"{w!r} not in {err!r}"


@pytest.mark.parametrize("mutate", [MUTATIONS[i][1] for i in (0, 12, 21, 33)],
                         ids=[MUTATIONS[i][0] for i in (0, 12, 21, 33)])
def test_run_on_bad_input_leaves_no_complete_output(tmp_path, capsys, mutate):
    folder = tmp_path / "case"
    write_valid_case(folder)
    mutate(folder)
    out = tmp_path / "out"
    code = main(["run", str(folder / "case.yaml"), "--out", str(out), "--no-figures"])
    err = capsys.readouterr().err.strip()
    assert code == 2 and "\n" not in err and "Traceback" not in err
    assert not (out / "summary.json").exists()
    assert not out.exists() or not any(out.rglob("summary.json"))


# ------------------------------------------------------------- hypothesis-generated garbage
_SETTINGS = settings(max_examples=25, deadline=None,
                     suppress_health_check=[HealthCheck.function_scoped_fixture])


def _is_number(cell):
    try:
        float(cell)
        return True
    except ValueError:
        return False


@_SETTINGS
@given(cell=st.text(alphabet=st.characters(blacklist_categories=("Cs", "Cc", "Zs", "Zl", "Zp"),
                                           blacklist_characters="#,\t\n\r \x0b\x0c\x1c\x1d"
                                                                "\x1e\x1f\x85\u2028\u2029"),
                    min_size=1, max_size=12).filter(lambda s: s.strip() and not _is_number(s)))
def test_garbage_cell_names_line_and_column(tmp_path_factory, capsys, cell):
    folder = tmp_path_factory.mktemp("cell")
    write_valid_case(folder)
    rows = list(_CHI_ROWS)
    rows[2] = f"4.0 {cell} 1e-4\n"
    (folder / "chi.csv").write_text(_CHI_HEAD + "".join(rows), encoding="utf-8")
    code, err = _check(capsys, folder / "case.yaml")
    assert code == 2, err
    assert "\n" not in err and "Traceback" not in err
    assert re.search(r"chi\.csv:4, column 'chi'", err), err


_SCALAR = st.one_of(
    st.text(alphabet="abcxyz-_.:!?&*%@'\"[]{}|>~ 0123456789eE+", max_size=10),
    st.integers(-10**6, 10**6).map(str), st.floats(allow_nan=True).map(repr),
    st.sampled_from(["null", "~", "true", "no", ".inf", "-.nan", "1e400", "0x1F", "[]",
                     "{}", "[1, 2]", "{a: 1}", "''", "2020-01-01", "!!binary aGVsbG8="]))


@_SETTINGS
@given(key=st.sampled_from(["spin_spacing: 3.0", "charge: 2", "temperature: 2.0",
                            "steps: 200", "seed: 7", "spin: 0.5", "c: 6.0}"]),
       scalar=_SCALAR)
def test_garbage_yaml_scalar_is_accepted_or_one_line(tmp_path_factory, capsys, key, scalar):
    folder = tmp_path_factory.mktemp("scalar")
    write_valid_case(folder)
    name = key.split(":")[0]
    tail = "}" if key.endswith("}") else ""
    text = (folder / "case.yaml").read_text()
    if "{" in key or tail:
        new = f"{name}: {scalar}{tail}"
    else:
        new = f"{name}: {scalar}"
    (folder / "case.yaml").write_text(text.replace(key, new, 1))
    try:
        code, err = _check(capsys, folder / "case.yaml")
    except SystemExit as exc:  # pragma: no cover - argparse never sees these
        pytest.fail(f"SystemExit {exc}")
    assert code in (0, 2)
    if code == 2:
        assert "\n" not in err and "Traceback" not in err
        assert "case.yaml" in err
