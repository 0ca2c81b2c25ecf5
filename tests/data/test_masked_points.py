"""Masked or empty bins (zero, negative or NaN errors, NaN values): a one-line error by
default; with ``masked: drop`` they are left out and counted by rule in ``check``."""
from __future__ import annotations

import numpy as np
import pytest

from casefactory import check_command, edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.cli import main

Q = np.repeat(np.linspace(0.05, 0.95, 6), 5)
E = np.tile(np.linspace(0.5, 3.0, 5), 6)


def _map(folder, bad: dict):
    """Write the map with rows replaced: {row index: (intensity, error)} as text."""
    rows = []
    for i, (q, e) in enumerate(zip(Q, E)):
        inten, err = bad.get(i, ("1.0", "0.1"))
        rows.append(f"{q:.4f}, 0.0, {e:.4f}, {inten}, {err}\n")
    (folder / "map.csv").write_text("# test map\nq_par, q_perp, energy, intensity, error\n"
                                    + "".join(rows))


@pytest.fixture
def folder(tmp_path):
    write_valid_case(tmp_path / "case")
    return tmp_path / "case"


def _drop(folder):
    edit_file(folder / "case.yaml", "    temperature: 2.0\n",
              "    temperature: 2.0\n    masked: drop\n")


@pytest.mark.parametrize("row, cells, line, words", [
    (3, ("nan", "0.1"), 6, ["column 'intensity'", "not finite"]),
    (4, ("1.0", "0"), 7, ["column 'error'", "not positive"]),
    (5, ("1.0", "-1"), 8, ["column 'error'", "not positive"]),
    (6, ("0.0", "nan"), 9, ["column 'error'", "not finite"]),
])
def test_masked_points_are_an_error_by_default(folder, capsys, row, cells, line, words):
    _map(folder, {row: cells})
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    for w in words + [f"map.csv:{line}", "masked: drop"]:
        assert w in err, (w, err)


def test_first_bad_row_in_file_order_is_named(folder, capsys):
    _map(folder, {9: ("1.0", "0"), 2: ("nan", "0.1")})
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "map.csv:5" in err and "not finite" in err


def test_drop_counts_each_rule(folder, capsys):
    bad = {1: ("nan", "0.1"), 2: ("nan", "nan"),      # non-finite value (first rule wins)
           4: ("1.0", "inf"), 5: ("0.0", "nan"),       # non-finite error
           7: ("1.0", "0"), 8: ("1.0", "-0.5"), 11: ("0", "0")}   # non-positive error
    _map(folder, bad)
    _drop(folder)
    ds = next(d for d in load_case(folder / "case.yaml").datasets if d.name == "map")
    assert ds.masked == {"non-finite value": 2, "non-finite error": 2, "non-positive error": 3}
    assert ds.n == len(Q) - 7 and ds.n_masked == 7
    keep = np.array([i not in bad for i in range(len(Q))])
    np.testing.assert_allclose(ds.x["energy"], np.round(E, 4)[keep])
    np.testing.assert_array_equal(ds.lines, np.arange(3, 3 + len(Q))[keep])
    assert np.all(np.isfinite(ds.y)) and np.all(ds.err > 0)
    assert main(["check", str(folder / "case.yaml")]) == 0
    out = capsys.readouterr().out
    assert ("dataset 'map': dropped 7 masked point(s) (non-finite value: 2, non-finite error: "
            "2, non-positive error: 3); 23 kept") in out


def test_drop_on_thermodynamic_data(folder):
    T = np.linspace(2.0, 60.0, 12)
    rows = [f"{t:.3f} {0.375 / (t + 5):.6g} {'0' if i == 3 else '1e-4'}" for i, t in enumerate(T)]
    (folder / "chi.csv").write_text("T chi error\n" + "\n".join(rows) + "\n")
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}",
              "units: {temperature: K, chi: emu/mol}\n    masked: drop")
    ds = next(d for d in load_case(folder / "case.yaml").datasets if d.name == "chi")
    assert ds.n == 11 and ds.masked["non-positive error"] == 1
    assert 3 not in [int(np.argmin(abs(T - t))) for t in ds.x["T"]]


def test_clean_data_with_drop_reports_zero(folder, capsys):
    _drop(folder)
    ds = next(d for d in load_case(folder / "case.yaml").datasets if d.name == "map")
    assert ds.n_masked == 0 and ds.n == len(Q)
    assert main(["check", str(folder / "case.yaml")]) == 0
    assert "dropped 0" in capsys.readouterr().out


def test_non_finite_coordinates_stay_an_error(folder, capsys):
    _drop(folder)
    text = (folder / "map.csv").read_text().splitlines()
    text[4] = "nan, 0.0, 1.0, 1.0, 0.1"
    (folder / "map.csv").write_text("\n".join(text) + "\n")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "map.csv:5" in err and "column 'q_par'" in err


def test_too_few_points_after_dropping(folder, capsys):
    _map(folder, {i: ("1.0", "0") for i in range(25)})
    _drop(folder)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "too few points (5)" in err and "25 masked points were dropped" in err


def test_masked_option_is_validated(folder, capsys):
    edit_file(folder / "case.yaml", "    temperature: 2.0\n",
              "    temperature: 2.0\n    masked: skip\n")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "datasets[0].masked" in err and "drop" in err
