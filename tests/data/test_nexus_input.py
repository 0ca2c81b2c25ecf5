"""HDF5/NeXus spectra: NXdata signal, axes, errors and units attributes (NeXus Manual, base
class NXdata; Könnecke et al., J. Appl. Cryst. 48, 301 (2015)); files written here with
h5py."""
from __future__ import annotations

import math

import h5py
import numpy as np
import pytest

from casefactory import check_command, edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.cli import main

L = np.linspace(0.05, 0.95, 7)
E = np.linspace(0.5, 3.0, 5)
A, C = 7.0, 6.0          # lattice of the case factory (Å)


def _nxdata(parent, name="data", *, signal="data", axes=("L", "E"), shape=None, errors="errors",
            units=True, old_style=False):
    g = parent.create_group(name)
    g.attrs["NX_class"] = "NXdata"
    shape = shape or (len(L), len(E))
    sig = g.create_dataset(signal, data=1.0 + np.arange(np.prod(shape)).reshape(shape) / 10)
    if old_style:
        sig.attrs["signal"] = 1
        sig.attrs["axes"] = ":".join(axes)
    else:
        g.attrs["signal"] = signal
        g.attrs["axes"] = list(axes)
    if errors:
        g.create_dataset(errors, data=np.full(shape, 0.1))
    g.create_dataset("L", data=L)
    g.create_dataset("E", data=E)
    g.create_dataset("H", data=0.25)
    if units:
        g["L"].attrs["units"] = "r.l.u."
        g["H"].attrs["units"] = "r.l.u."
        g["E"].attrs["units"] = "meV"
    return g


def _write(path, entries=("entry",), **kw):
    with h5py.File(path, "w") as f:
        for e in entries:
            grp = f.create_group(e)
            grp.attrs["NX_class"] = "NXentry"
            _nxdata(grp, **kw)
    return path


@pytest.fixture
def folder(tmp_path):
    write_valid_case(tmp_path / "case")
    edit_file(tmp_path / "case" / "case.yaml", "file: map.csv", "file: map.nxs")
    edit_file(tmp_path / "case" / "case.yaml",
              "units: {energy: meV, wavevector: rlu, intensity: arb}", "units: {intensity: arb}")
    return tmp_path / "case"


def _map(folder):
    return next(d for d in load_case(folder / "case.yaml").datasets if d.name == "map")


def test_crystal_map_from_nxdata(folder, capsys):
    _write(folder / "map.nxs")
    ds = _map(folder)
    assert ds.n == L.size * E.size
    assert ds.units == {"intensity": "arb", "wavevector": "rlu", "energy": "meV"}
    # row-major order of the signal: L is the slow axis, E the fast one
    np.testing.assert_allclose(ds.x["Q_par"], np.repeat(2 * math.pi * L / C, E.size))
    np.testing.assert_allclose(ds.x["energy"], np.tile(E, L.size))
    np.testing.assert_allclose(ds.x["Q_perp"], 2 * math.pi * 0.25 / A)
    np.testing.assert_allclose(ds.y, 1.0 + np.arange(ds.n) / 10)
    np.testing.assert_allclose(ds.err, 0.1)
    assert ds.columns == {"q_par": "L", "q_perp": "H", "energy": "E", "intensity": "data",
                          "error": "errors"}
    assert main(["check", str(folder / "case.yaml")]) == 0
    assert "map" in capsys.readouterr().out


def test_powder_with_bin_edges_and_signal_errors(folder):
    edit_file(folder / "case.yaml", "kind: crystal_spectrum", "kind: powder_spectrum")
    edges = np.linspace(0.25, 3.25, E.size + 1)
    with h5py.File(folder / "map.nxs", "w") as f:
        g = f.create_group("entry/cut")
        g.attrs["NX_class"] = "NXdata"
        g.attrs["signal"] = "S"
        g.attrs["axes"] = ["Q", "energy"]
        g.attrs["Q_indices"] = 0
        g.attrs["energy_indices"] = 1
        g.create_dataset("S", data=np.ones((L.size, E.size)))
        g.create_dataset("S_errors", data=np.full((L.size, E.size), 0.2))
        g.create_dataset("Q", data=L * 2).attrs["units"] = "1/Å"
        g.create_dataset("energy", data=edges).attrs["units"] = "meV"
        g.create_dataset("title", data="powder cut")        # text: not a column
    ds = _map(folder)
    np.testing.assert_allclose(ds.x["energy"], np.tile(0.5 * (edges[1:] + edges[:-1]), L.size))
    np.testing.assert_allclose(ds.x["Q"], np.repeat(2 * L, E.size))
    np.testing.assert_allclose(ds.err, 0.2)


def test_old_style_signal_attribute(folder):
    with h5py.File(folder / "map.nxs", "w") as f:
        _nxdata(f, "scan", old_style=True)
    assert _map(folder).n == L.size * E.size


def test_entry_selects_a_group(folder, capsys):
    _write(folder / "map.nxs", entries=("entry1", "entry2"))
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "map.nxs" in err and "several NXdata groups" in err and "entry:" in err
    edit_file(folder / "case.yaml", "file: map.nxs", "file: map.nxs\n    entry: entry2")
    assert _map(folder).n == L.size * E.size
    edit_file(folder / "case.yaml", "entry: entry2", "entry: /entry3/data")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "key '/entry3/data'" in err and "/entry1" in err


def test_default_attribute_chain(folder):
    with h5py.File(folder / "map.nxs", "w") as f:
        f.attrs["default"] = "entry2"
        for e in ("entry1", "entry2"):
            grp = f.create_group(e)
            grp.attrs["NX_class"] = "NXentry"
            grp.attrs["default"] = "good"
            _nxdata(grp, "good")
            _nxdata(grp, "other", shape=(L.size, E.size))
        f["entry2/good/data"][0, 0] = 42.0
    assert _map(folder).y[0] == 42.0


def test_masked_bins_in_the_signal(folder, capsys):
    _write(folder / "map.nxs")
    with h5py.File(folder / "map.nxs", "r+") as f:
        f["entry/data/data"][2, 3] = np.nan
        f["entry/data/errors"][4, 1] = 0.0
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    assert "key '/entry/data/data[2, 3]'" in err and "not finite" in err and "masked: drop" in err
    edit_file(folder / "case.yaml", "    temperature: 2.0\n",
              "    temperature: 2.0\n    masked: drop\n")
    ds = _map(folder)
    assert ds.n == L.size * E.size - 2
    assert ds.masked == {"non-finite value": 1, "non-finite error": 0, "non-positive error": 1}


@pytest.mark.parametrize("build, words", [
    (lambda p: p.write_text("q_par, energy\n1, 2\n"), ["map.nxs", "cannot open as HDF5"]),
    (lambda p: _write(p, axes=("L", "E"), shape=(L.size + 1, E.size)),
     ["key '/entry/data/L'", "does not fit dimension(s) 0"]),
    (lambda p: _write(p, axes=("L", "Energy")), ["key '/entry/data'", "'Energy'"]),
    (lambda p: _write(p, errors=None), ["missing column 'error'", "key '/entry/data'"]),
    (lambda p: _write(p, units=False), ["missing unit 'energy'"]),
])
def test_bad_files_give_one_line(folder, capsys, build, words):
    build(folder / "map.nxs")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err and "Traceback" not in err
    for w in words:
        assert w in err, (w, err)


def test_no_signal_attribute(folder, capsys):
    with h5py.File(folder / "map.nxs", "w") as f:
        g = f.create_group("entry/data")
        g.attrs["NX_class"] = "NXdata"
        g.create_dataset("data", data=np.ones((3, 3)))
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "key '/entry/data'" in err and "'signal'" in err


def test_entry_on_a_text_file_is_an_error(tmp_path, capsys):
    write_valid_case(tmp_path / "case")
    edit_file(tmp_path / "case" / "case.yaml", "file: map.csv", "file: map.csv\n    entry: x")
    code, err = check_command(capsys, tmp_path / "case" / "case.yaml")
    assert code == 2 and "datasets[0].entry" in err
