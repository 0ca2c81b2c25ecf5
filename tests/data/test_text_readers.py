"""Text data files as real exports write them: commented headers, units in the column
headers, common error-column spellings, explicit column mapping, unused columns reported,
per-formula-unit thermodynamics."""
from __future__ import annotations

import math

import numpy as np
import pytest

from casefactory import check_command, edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.cli import main
from evidence1d.data.table import parse_column_name, read_table, split_header
from evidence1d.errors import InputError

T = np.linspace(2.0, 60.0, 12)
CHI = 0.375 / (T + 5.0)


def _chi_file(folder, header, rows=None, sep=" "):
    rows = rows if rows is not None else [f"{t:.3f}{sep}{c:.6g}{sep}1e-4" for t, c in zip(T, CHI)]
    (folder / "chi.csv").write_text(header + "\n" + "\n".join(rows) + "\n", encoding="utf-8")


def _ds(case, name):
    return next(d for d in case.datasets if d.name == name)


@pytest.fixture
def folder(tmp_path):
    write_valid_case(tmp_path / "case")
    return tmp_path / "case"


# ------------------------------------------------------------------ header cells
@pytest.mark.parametrize("cell, name, unit", [
    ("T(K)", "T", "K"), ("chi [emu/mol]", "chi", "emu/mol"), ("E (meV)", "E", "meV"),
    ("C [J/(mol K)]", "C", "J/(mol K)"), ("chi(T)", "chi", None), ("S(Q,E)", "S", None),
    ("error", "error", None), ("|Q| (1/A)", "|Q|", "1/A")])
def test_parse_column_name(cell, name, unit):
    assert parse_column_name(cell) == (name, unit)


def test_white_space_header_keeps_units_with_names():
    assert split_header("T (K)  C [J/(mol K)]  dC", None) == ["T (K)", "C [J/(mol K)]", "dC"]
    assert split_header('"T (K)","chi"', ",") == ["T (K)", "chi"]


# ------------------------------------------------------------------ commented headers
def test_commented_header_is_read(folder):
    _chi_file(folder, "# measured on a SQUID, 0.1 T\n# T chi err")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.n == len(T)
    np.testing.assert_allclose(ds.x["T"], np.round(T, 3))
    np.testing.assert_allclose(ds.y, [float(f"{c:.6g}") for c in CHI])
    assert ds.columns == {"T": "T", "chi": "chi", "error": "err"}


def test_last_matching_comment_line_is_the_header(folder):
    # an earlier header-like comment is superseded by the last one above the data
    _chi_file(folder, "# T chi\n# run 42: cooled in zero field\n# Temp(K), X (emu/mol), dchi\n"
                      "# ------", sep=", ")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.columns == {"T": "Temp(K)", "chi": "X (emu/mol)", "error": "dchi"}


def test_comment_that_is_not_a_header_is_not_taken(folder, capsys):
    _chi_file(folder, "# run 42 cooled in zero field\n# 1 2 3")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "no header line" in err and "'#'" in err and "\n" not in err


def test_uncommented_header_wins_over_comments(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("# a b c\nT chi error\n1 2 3\n")
    t = read_table(p)
    assert list(t.columns) == ["T", "chi", "error"] and t.header_line == 2


def test_semicolons_and_byte_order_mark(folder):
    text = "\ufeffT (K); chi (emu/mol); error\n" + "".join(
        f"{t:.3f}; {c:.6g}; 1e-4\n" for t, c in zip(T, CHI))
    (folder / "chi.csv").write_text(text, encoding="utf-8")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.n == len(T)


def test_decimal_comma_is_named(folder, capsys):
    _chi_file(folder, "T;chi;error", rows=[f"{t:.1f};0,01;1e-4" for t in T])
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "chi.csv:2" in err and "decimal commas" in err


# ------------------------------------------------------------------ units in headers
def test_header_units_replace_the_case_declaration(folder):
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}", "units: {}")
    _chi_file(folder, "T(K) chi[emu/mol] error")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.units == {"temperature": "K", "chi": "emu/mol"}


def test_header_units_convert(folder):
    """mK -> K and SI m^3/mol -> emu/mol: chi[m^3/mol] = 4 pi 1e-6 chi[emu/mol] (standard
    cgs-SI handbook conversion, e.g. Blundell, Magnetism in Condensed Matter (2001),
    appendix on units)."""
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}", "units: {}")
    rows = [f"{1000 * t:.1f} {4 * math.pi * 1e-6 * c:.10g} {4 * math.pi * 1e-10:.10g}"
            for t, c in zip(T, CHI)]
    _chi_file(folder, "T (mK)  chi (m^3/mol)  dchi (m3/mol)", rows=rows)
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    np.testing.assert_allclose(ds.x["T"], T, rtol=1e-4)
    np.testing.assert_allclose(ds.y, CHI, rtol=1e-8)
    np.testing.assert_allclose(ds.err, 1e-4, rtol=1e-8)


@pytest.mark.parametrize("header", ["T (K) chi (emu/(mol Oe)) err", "T [K] chi [cm^3/mol] err",
                                    "T(K) chi(emu mol^-1 Oe^-1) err"])
def test_exported_unit_spellings(folder, header):
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}", "units: {}")
    _chi_file(folder, header)
    assert _ds(load_case(folder / "case.yaml"), "chi").units["chi"] == "emu/mol"


def test_heat_capacity_header_units(folder):
    edit_file(folder / "case.yaml", "units: {temperature: K, heat_capacity: J/mol/K}",
              "units: {temperature: K}")
    text = "T\tC [mJ/(mol K)]\tdC [mJ/(mol K)]\n" + "".join(
        f"{t:.3f}\t{10 * t:.6g}\t10\n" for t in T)
    (folder / "heat.csv").write_text(text)
    ds = _ds(load_case(folder / "case.yaml"), "heat")
    np.testing.assert_allclose(ds.y, 0.01 * T, rtol=1e-4)   # mJ -> J
    np.testing.assert_allclose(ds.err, 0.01)


@pytest.mark.parametrize("header, words", [
    ("T(K) chi[m3/mol] error", ["chi.csv:1", "column 'chi[m3/mol]'",
                                "key 'datasets[1].units.chi'", "unit clash", "m3/mol",
                                "emu/mol"]),
    ("T(C) chi error", ["chi.csv:1", "column 'T(C)'", "unknown temperature unit 'C'",
                        "header"]),
    ("T chi[emu/mol] error[m3/mol]", ["chi.csv:1", "column 'error[m3/mol]'", "must agree"]),
])
def test_header_unit_errors(folder, capsys, header, words):
    _chi_file(folder, header)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    for w in words:
        assert w in err, (w, err)


def test_wavevector_header_units(folder, capsys):
    """r.l.u. in the headers: Q_par = 2 pi L / c (chain along c), Q_perp = 2 pi H / a;
    with H, K and L all present K is used too (Q_perp2 = 2 pi K / b)."""
    edit_file(folder / "case.yaml", "units: {energy: meV, wavevector: rlu, intensity: arb}",
              "units: {intensity: arb}")
    q = np.linspace(0.05, 0.95, 12)
    text = "H (r.l.u.)  K  L (r.l.u.)  E (meV)  I  dI\n" + "".join(
        f"0.1 0 {x:.4f} 1.5 1.0 0.1\n" for x in q)
    (folder / "map.csv").write_text(text)
    ds = _ds(load_case(folder / "case.yaml"), "map")
    np.testing.assert_allclose(ds.x["Q_par"], 2 * math.pi * np.round(q, 4) / 6.0)
    np.testing.assert_allclose(ds.x["Q_perp"], 2 * math.pi * 0.1 / 7.0)
    np.testing.assert_allclose(ds.x["Q_perp2"], 0.0)
    assert ds.unused_columns == () and ds.columns["K"] == "K"
    assert main(["check", str(folder / "case.yaml")]) == 0
    out = capsys.readouterr().out
    assert "not used" not in out
    # the two wavevector columns must agree on their unit
    (folder / "map.csv").write_text(text.replace("L (r.l.u.)", "L (1/A)"))
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "'L (1/A)' in 1/A" in err and "'H (r.l.u.)' in rlu" in err
    assert "must agree" in err


# ------------------------------------------------------------------ error aliases, mapping
@pytest.mark.parametrize("err_name", ["dchi", "err", "error", "sigma", "chi_err", "chierr",
                                      "Chi_Error", "uncertainty"])
def test_error_aliases(folder, err_name):
    _chi_file(folder, f"T chi {err_name}")
    assert _ds(load_case(folder / "case.yaml"), "chi").columns["error"] == err_name


@pytest.mark.parametrize("value, err_name", [("C", "dC"), ("Cp", "Cp_err"), ("C", "Cerr")])
def test_heat_capacity_error_aliases(folder, value, err_name):
    (folder / "heat.csv").write_text(f"T {value} {err_name}\n" + "".join(
        f"{t:.3f} {0.01 * t:.6g} 0.01\n" for t in T))
    assert _ds(load_case(folder / "case.yaml"), "heat").columns["error"] == err_name


def test_two_error_candidates_need_a_mapping(folder, capsys):
    _chi_file(folder, "T chi err dchi", rows=[f"{t} {c:.6g} 1e-4 2e-4" for t, c in zip(T, CHI)])
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "'dchi', 'err'" in err and "columns: {error: <header>}" in err
    edit_file(folder / "case.yaml", "    file: chi.csv\n",
              "    file: chi.csv\n    columns: {error: dchi}\n")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    np.testing.assert_allclose(ds.err, 2e-4)
    assert ds.unused_columns == ("err",)


def test_column_mapping_errors(folder, capsys):
    edit_file(folder / "case.yaml", "    file: chi.csv\n",
              "    file: chi.csv\n    columns: {chii: T}\n")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "datasets[1].columns.chii" in err and "did you mean 'chi'" in err
    edit_file(folder / "case.yaml", "columns: {chii: T}", "columns: {chi: M}")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "chi.csv" in err and "'M'" in err and "datasets[1].columns.chi" in err


def test_unused_column_is_reported(folder, capsys):
    _chi_file(folder, "T chi error field_T", rows=[f"{t} {c:.6g} 1e-4 nan"
                                                   for t, c in zip(T, CHI)])
    assert main(["check", str(folder / "case.yaml")]) == 0
    out = capsys.readouterr().out
    assert "warning: dataset 'chi': column(s) 'field_T' of chi.csv not used" in out


# ------------------------------------------------------------------ per formula unit
def _per_fu(folder, kind_line, sample_line):
    edit_file(folder / "case.yaml", kind_line, kind_line + "\n    per: formula_unit")
    if sample_line:
        edit_file(folder / "case.yaml", "  spin: 0.5\n", "  spin: 0.5\n" + sample_line + "\n")


@pytest.mark.parametrize("sample_line", ["  ions_per_formula_unit: 2",
                                         "  formula_units_per_ion: 0.5"])
def test_heat_capacity_per_formula_unit(folder, sample_line):
    """C per mole of formula unit with two magnetic ions is twice C per mole of ion."""
    ref = _ds(load_case(folder / "case.yaml"), "heat")
    _per_fu(folder, "    kind: heat_capacity", sample_line)
    case = load_case(folder / "case.yaml")
    ds = _ds(case, "heat")
    np.testing.assert_allclose(ds.y, ref.y / 2) and np.testing.assert_allclose(ds.err, ref.err / 2)
    assert case.sample.ions_per_formula_unit == 2.0
    assert case.sample.formula_units_per_ion == 0.5


def test_entropy_per_formula_unit(folder):
    edit_file(folder / "case.yaml", "kind: heat_capacity", "kind: entropy")
    edit_file(folder / "case.yaml", "heat_capacity: J/mol/K", "entropy: J/mol/K")
    (folder / "heat.csv").write_text("T S dS\n" + "".join(f"{t} {0.3 * t:.6g} 0.03\n"
                                                          for t in T))
    _per_fu(folder, "    kind: entropy", "  ions_per_formula_unit: 3")
    ds = _ds(load_case(folder / "case.yaml"), "heat")
    np.testing.assert_allclose(ds.y, 0.1 * T, rtol=1e-5)
    np.testing.assert_allclose(ds.err, 0.01)


@pytest.mark.parametrize("kind_line, sample_line, words", [
    ("    kind: heat_capacity", None, ["datasets[2].per", "ions_per_formula_unit"]),
    ("    kind: crystal_spectrum", "  ions_per_formula_unit: 2",
     ["datasets[0].per", "spectra are per magnetic ion"]),
    ("    kind: susceptibility", "  ions_per_formula_unit: 2\n  formula_units_per_ion: 0.5",
     ["sample.formula_units_per_ion", "not both"]),
])
def test_per_formula_unit_errors(folder, capsys, kind_line, sample_line, words):
    _per_fu(folder, kind_line, sample_line)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    for w in words:
        assert w in err, (w, err)


def test_read_table_still_rejects_nan_by_default(tmp_path):
    p = tmp_path / "t.csv"
    p.write_text("T chi error\n1 nan 3\n")
    with pytest.raises(InputError, match="not finite"):
        read_table(p)
    assert math.isnan(read_table(p, allow_nonfinite=True).columns["chi"][0])


# ------------------------------------------------------------------ units rows, empty cells
@pytest.mark.parametrize("head", ["T chi dchi\nK emu/mol emu/mol",
                                  "# T chi dchi\n# K [emu/mol] [emu/mol]",
                                  "T, chi, dchi\nK, m3/mol, m3/mol"])
def test_row_of_units_under_the_header(folder, head):
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}", "units: {}")
    _chi_file(folder, head, sep=", " if "," in head else " ")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.n == len(T)
    assert ds.units == {"temperature": "K", "chi": "m3/mol" if "m3" in head else "emu/mol"}


def test_units_row_clash_is_an_error(folder, capsys):
    _chi_file(folder, "T chi err\nK m3/mol m3/mol")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "unit clash" in err and "column 'chi'" in err


def test_empty_cells_are_masked_points(folder, capsys):
    rows = [f"{t:.3f},{'' if i == 4 else f'{c:.6g}'},1e-4" for i, (t, c) in enumerate(zip(T, CHI))]
    _chi_file(folder, "T,chi,error", rows=rows)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "chi.csv:6" in err and "column 'chi'" in err and "masked: drop" in err
    edit_file(folder / "case.yaml", "units: {temperature: K, chi: emu/mol}",
              "units: {temperature: K, chi: emu/mol}\n    masked: drop")
    ds = _ds(load_case(folder / "case.yaml"), "chi")
    assert ds.n == len(T) - 1 and ds.masked["non-finite value"] == 1
