"""General geometry: lattices with angles, the chain along any crystal axis or lattice
vector, wavevectors as H, K, L.

Independent references: the real-space metric tensor G_ij = a_i·a_j and its inverse, the
reciprocal metric G* = G⁻¹, give |Q|² = 4π² h·G*·h without the B matrix (Stout & Jensen,
X-ray Structure Determination, Wiley 1989, ch. 2); Q·R = 2π h·u for a lattice vector
R = u·(a, b, c) (duality of direct and reciprocal bases, same source); hand-computed values for
orthogonal cells are written out beside each check.
"""
from __future__ import annotations

import math

import numpy as np
import pytest

from casefactory import check_command, edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.data.geometry import make_geometry
from evidence1d.errors import InputError

TWO_PI = 2.0 * math.pi
LATTICE_LINE = "  lattice: {a: 7.0, b: 7.5, c: 6.0}"


def _metric(a, b, c, al, be, ga):
    """G from the cell (written here, not taken from the package)."""
    ca, cb, cg = (math.cos(math.radians(x)) for x in (al, be, ga))
    return np.array([[a * a, a * b * cg, a * c * cb], [a * b * cg, b * b, b * c * ca],
                     [a * c * cb, b * c * ca, c * c]])


def _hkl_file(path, hkl, energies=(1.0, 2.0)):
    rows = [f"{h:.6g} {k:.6g} {l:.6g} {e:.6g} 1.0 0.1"
            for (h, k, l) in hkl for e in energies]
    path.write_text("H K L E I dI\n" + "\n".join(rows) + "\n")


def _map(case):
    return next(d for d in case.datasets if d.name == "map")


@pytest.fixture
def folder(tmp_path):
    write_valid_case(tmp_path / "case")
    return tmp_path / "case"


HKL = [(0.0, 0.5, 0.0), (0.3, 0.25, -0.7), (1.0, 0.1, 0.5), (-0.6, 0.9, 1.2), (0.2, 0.0, 0.0)]


# ------------------------------------------------------------------ the reciprocal lattice
@pytest.mark.parametrize("cell", [(5.1, 6.3, 7.7, 80.0, 105.0, 95.0),
                                  (7.4, 7.9, 6.2, 90.0, 113.5, 90.0),
                                  (4.0, 4.0, 9.0, 90.0, 90.0, 120.0)])
def test_b_matrix_against_metric_tensor(cell):
    """Bᵀ B = G⁻¹ = G* and the real basis reproduces G (Stout & Jensen 1989, ch. 2)."""
    g = make_geometry(dict(zip(("a", "b", "c", "alpha", "beta", "gamma"), cell)))
    G = _metric(*cell)
    np.testing.assert_allclose(g.B.T @ g.B, np.linalg.inv(G), rtol=1e-12, atol=1e-15)
    np.testing.assert_allclose(g.real_basis.T @ g.real_basis, G, rtol=1e-12, atol=1e-12)
    # Busing & Levy: B is upper triangular with B_33 = 1/c
    assert g.B[1, 0] == g.B[2, 0] == g.B[2, 1] == 0.0 and g.B[2, 2] == pytest.approx(1 / cell[2])


def test_monoclinic_chain_along_b_from_hkl_file(folder):
    """H K L E file, monoclinic cell (β = 107°), chain along b: |Q| from G* = G⁻¹;
    Q_∥ = Q·b̂ = 2πK/b; with b ⟂ a, c the next axis c is already across the chain, so
    Q_⊥ = Q·ĉ = 2πL/c; Q_⊥₂ = Q·â* = 2π (G* h)_1 / √G*_11."""
    cell = (5.2, 6.4, 8.1, 90.0, 107.0, 90.0)
    edit_file(folder / "case.yaml", LATTICE_LINE,
              "  lattice: {a: 5.2, b: 6.4, c: 8.1, beta: 107}\n  chain: b")
    edit_file(folder / "case.yaml", "spin_spacing: 3.0", "spin_spacing: 3.2")
    _hkl_file(folder / "map.csv", HKL)
    ds = _map(load_case(folder / "case.yaml"))
    h = np.repeat(np.array(HKL), 2, axis=0).T          # (3, n), two energies per point
    Gs = np.linalg.inv(_metric(*cell))
    Q2 = TWO_PI ** 2 * np.einsum("in,ij,jn->n", h, Gs, h)
    got = ds.x["Q_par"] ** 2 + ds.x["Q_perp"] ** 2 + ds.x["Q_perp2"] ** 2
    np.testing.assert_allclose(got, Q2, rtol=1e-12)
    np.testing.assert_allclose(ds.x["Q_par"], TWO_PI * h[1] / 6.4, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(ds.x["Q_perp"], TWO_PI * h[2] / 8.1, rtol=1e-12, atol=1e-14)
    np.testing.assert_allclose(ds.x["Q_perp2"], TWO_PI * (Gs @ h)[0] / math.sqrt(Gs[0, 0]),
                               rtol=1e-12, atol=1e-14)
    assert ds.unused_columns == () and set(ds.columns) >= {"H", "K", "L"}
    assert ds.units["wavevector"] == "rlu"


def test_orthorhombic_hand_values():
    """a = 4, b = 5, c = 8 Å: Q = 2π(H/a, K/b, L/c) component by component."""
    g = make_geometry({"a": 4.0, "b": 5.0, "c": 8.0})           # chain along c
    qp, q1, q2 = g.components([0.5, 1.0], [0.0, 1.0], [0.25, 0.5])
    # (0.5, 0, 0.25): Q_par = 2π·0.25/8 = π/16, Q_perp (along a) = 2π·0.5/4 = π/4, Q_perp2 = 0
    # (1, 1, 0.5): Q_par = π/8, Q_perp = π/2, Q_perp2 (along b) = 2π/5
    np.testing.assert_allclose(qp, [0.19634954084936207, 0.39269908169872414], rtol=1e-14)
    np.testing.assert_allclose(q1, [0.7853981633974483, 1.5707963267948966], rtol=1e-14)
    np.testing.assert_allclose(q2, [0.0, 1.2566370614359172], rtol=1e-14, atol=1e-15)
    # chain along a: t = â, n1 = b̂ (next axis), n2 = â × b̂ = ĉ
    g = make_geometry({"a": 4.0, "b": 5.0, "c": 8.0}, "a")
    qp, q1, q2 = g.components([0.5], [0.2], [1.0])
    # Q_par = 2π·0.5/4 = π/4; Q_perp = 2π·0.2/5 = 0.08π; Q_perp2 = 2π·1/8 = π/4
    np.testing.assert_allclose([qp[0], q1[0], q2[0]],
                               [0.7853981633974483, 0.25132741228718347, 0.7853981633974483],
                               rtol=1e-14)
    np.testing.assert_allclose(g.interchain_vectors(), [[5.0, 0.0], [0.0, 8.0]], atol=1e-14)


def test_chain_along_a_lattice_vector(folder):
    """chain: [1, 0, 1] in a = 4, b = 5, c = 8 Å: R = (4, 0, 8), |R| = √80, t = (1, 0, 2)/√5.
    The axis closest to t is c (cos 2/√5 against 1/√5 for a), so n1 ∝ a − (a·t)t =
    (3.2, 0, −1.6), i.e. (2, 0, −1)/√5, and n2 = t × n1 = (0, 1, 0).  For (H, K, L) =
    (1, 0.5, 1): Q = 2π(1/4, 0.1, 1/8), so Q_par = 2π·0.5/√5, Q_perp = 2π·0.375/√5,
    Q_perp2 = 2π·0.1; and Q·R = 2π h·u = 4π, so Q_par = 4π/√80 as well."""
    g = make_geometry({"a": 4.0, "b": 5.0, "c": 8.0}, [1, 0, 1])
    qp, q1, q2 = g.components([1.0], [0.5], [1.0])
    np.testing.assert_allclose(qp, TWO_PI * 0.5 / math.sqrt(5.0), rtol=1e-13)
    np.testing.assert_allclose(qp, 4 * math.pi / math.sqrt(80.0), rtol=1e-13)
    np.testing.assert_allclose(q1, TWO_PI * 0.375 / math.sqrt(5.0), rtol=1e-13)
    np.testing.assert_allclose(q2, TWO_PI * 0.1, rtol=1e-13)
    assert g.chain_label == "[1, 0, 1]" and g.chain_axis == 2
    # the same through a case file, in a triclinic cell: Q·R = 2π(H + L) for R = a + c
    cell = (5.0, 6.0, 7.0, 85.0, 100.0, 95.0)
    edit_file(folder / "case.yaml", LATTICE_LINE, "  lattice: {a: 5.0, b: 6.0, c: 7.0, "
              "alpha: 85, beta: 100, gamma: 95}\n  chain: [1, 0, 1]")
    _hkl_file(folder / "map.csv", HKL)
    ds = _map(load_case(folder / "case.yaml"))
    h = np.repeat(np.array(HKL), 2, axis=0).T
    G = _metric(*cell)
    R_len = math.sqrt(np.array([1, 0, 1]) @ G @ np.array([1, 0, 1]))
    np.testing.assert_allclose(ds.x["Q_par"], TWO_PI * (h[0] + h[2]) / R_len, rtol=1e-12,
                               atol=1e-14)
    Q2 = TWO_PI ** 2 * np.einsum("in,ij,jn->n", h, np.linalg.inv(G), h)
    np.testing.assert_allclose(ds.x["Q_par"] ** 2 + ds.x["Q_perp"] ** 2
                               + ds.x["Q_perp2"] ** 2, Q2, rtol=1e-12)


def test_directions_are_orthonormal_and_right_handed():
    g = make_geometry({"a": 5.1, "b": 6.3, "c": 7.7, "alpha": 80, "beta": 105, "gamma": 95},
                      [1, 2, -1])
    t, n1, n2 = g.directions
    M = np.stack([n1, n2, t])
    np.testing.assert_allclose(M @ M.T, np.eye(3), atol=1e-14)
    assert np.linalg.det(M) == pytest.approx(1.0)


# ------------------------------------------------------------------ today's files keep working
def test_q_par_q_perp_rlu_unchanged(folder):
    """q_par, q_perp in r.l.u. with the default geometry: exactly 2πL/c and 2πH/a."""
    ds = _map(load_case(folder / "case.yaml"))
    q = np.repeat(np.linspace(0.05, 0.95, 6), 5)
    np.testing.assert_array_equal(ds.x["Q_par"], 2.0 * math.pi * np.round(q, 4) / 6.0)
    np.testing.assert_array_equal(ds.x["Q_perp"], 0.0)
    np.testing.assert_array_equal(ds.x["Q_perp2"], 0.0)
    assert "Q_perp2" not in ds.ranges()


def test_q_components_in_inverse_angstrom_with_any_geometry(folder):
    edit_file(folder / "case.yaml", "wavevector: rlu", "wavevector: 1/A")
    edit_file(folder / "case.yaml", LATTICE_LINE,
              "  lattice: {a: 7.0, b: 7.5, c: 6.0, gamma: 120}\n  chain: a")
    text = (folder / "map.csv").read_text().replace("q_perp,", "q_perp, q_perp2,")
    lines = text.splitlines()
    (folder / "map.csv").write_text("\n".join(lines[:2] + [ln.replace(", 0.0,", ", 0.0, 0.3,")
                                                          for ln in lines[2:]]) + "\n")
    ds = _map(load_case(folder / "case.yaml"))
    np.testing.assert_allclose(ds.x["Q_perp2"], 0.3)
    np.testing.assert_allclose(ds.x["Q_par"], np.repeat(np.linspace(0.05, 0.95, 6), 5),
                               atol=1e-4)


def test_hkl_file_simulates_back_with_its_columns(folder, tmp_path):
    from evidence1d.simulate import write_dataset
    _hkl_file(folder / "map.csv", HKL)
    ds = _map(load_case(folder / "case.yaml"))
    out = tmp_path / "sim.csv"
    write_dataset(ds, np.full(ds.n, 2.0), np.full(ds.n, 0.2), out, note="test")
    header = out.read_text().splitlines()[1]
    assert header.split(", ")[:3] == ["H", "K", "L"]


# ------------------------------------------------------------------ bad geometry
@pytest.mark.parametrize("sample, words", [
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0, alpha: 100, beta: 30, gamma: 30}",
     ["sample.lattice.alpha", "make no cell", "alpha must be smaller than beta + gamma"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0, alpha: 150, beta: 120, gamma: 100}",
     ["sample.lattice.alpha", "sum must be below 360"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0, beta: 180}",
     ["sample.lattice.beta", "outside (0°, 180°)"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0, gamma: -20}",
     ["sample.lattice.gamma", "expected a number > 0"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0}\n  chain: [0, 0, 0]",
     ["sample.chain", "zero length"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0}\n  chain: d",
     ["sample.chain", "unknown chain direction 'd'"]),
    ("  lattice: {a: 7.0, b: 7.5, c: 6.0}\n  chain: [1, 0]",
     ["sample.chain", "[u, v, w]"]),
])
def test_bad_geometry_one_line_errors(folder, capsys, sample, words):
    edit_file(folder / "case.yaml", LATTICE_LINE, sample)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err and "case.yaml:" in err
    for w in words:
        assert w in err, (w, err)


def test_rlu_components_need_the_default_geometry(folder, capsys):
    edit_file(folder / "case.yaml", LATTICE_LINE, LATTICE_LINE + "\n  chain: b")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    assert "datasets[0].units.wavevector" in err and "H, K, L" in err and "chain along b" in err


def test_hkl_in_inverse_angstrom_is_an_error(folder, capsys):
    edit_file(folder / "case.yaml", "wavevector: rlu", "wavevector: 1/A")
    _hkl_file(folder / "map.csv", HKL)
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "Miller indices in r.l.u." in err and "units.wavevector" in err


def test_q_resolution_in_rlu_needs_a_matching_conversion(folder, capsys):
    """q_fwhm in r.l.u. is converted with 2π/c and 2π/a downstream: right for a chain along
    c whenever a ⟂ c (here α = 80° only), wrong for β ≠ 90° (one r.l.u. of H across the
    chain is 2π/(a sin β))."""
    _hkl_file(folder / "map.csv", HKL)
    edit_file(folder / "case.yaml", "resolution: {fwhm: [0.1, 0.02]}",
              "resolution: {fwhm: [0.1, 0.02], q_fwhm: [0.02, 0.05]}")
    edit_file(folder / "case.yaml", LATTICE_LINE, "  lattice: {a: 7.0, b: 7.5, c: 6.0, "
              "alpha: 80}")
    load_case(folder / "case.yaml")
    edit_file(folder / "case.yaml", "alpha: 80", "beta: 100")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "resolution.q_fwhm" in err and "\n" not in err
    want = 2 * math.pi / (7.0 * math.sin(math.radians(100.0)))
    assert f"{want:.4g}" in err


def test_make_geometry_errors_name_keys():
    with pytest.raises(InputError) as e:
        make_geometry({"a": 1, "b": 1, "c": 1}, [0, 0, 0], where="s")
    assert e.value.key == "s.chain"
    with pytest.raises(InputError) as e:
        make_geometry({"a": 1, "b": 1, "c": 1, "alpha": 60, "beta": 60, "gamma": 120})
    assert e.value.key == "sample.lattice.gamma"


def test_hkl_from_nexus_scalar_fields(folder):
    """An NXdata cut along K with scalar H and L fields, chain along b of a monoclinic cell:
    Q_par = 2πK/b, Q_perp = 2πL/c (c ⟂ b), |Q| from G* = G⁻¹."""
    h5py = pytest.importorskip("h5py")
    K = np.linspace(0.05, 0.95, 6)
    E = np.linspace(0.5, 3.0, 4)
    with h5py.File(folder / "map.nxs", "w") as f:
        g = f.create_group("entry").create_group("cut")
        f["entry"].attrs["NX_class"] = "NXentry"
        g.attrs.update({"NX_class": "NXdata", "signal": "data", "axes": ["K", "E"]})
        g.create_dataset("data", data=np.ones((K.size, E.size)))
        g.create_dataset("errors", data=np.full((K.size, E.size), 0.1))
        g.create_dataset("K", data=K)
        g.create_dataset("E", data=E)
        g.create_dataset("H", data=0.3)
        g.create_dataset("L", data=-0.4)
        g["E"].attrs["units"] = "meV"
    edit_file(folder / "case.yaml", "file: map.csv", "file: map.nxs")
    edit_file(folder / "case.yaml", "units: {energy: meV, wavevector: rlu, intensity: arb}",
              "units: {intensity: arb}")
    edit_file(folder / "case.yaml", LATTICE_LINE,
              "  lattice: {a: 7.0, b: 6.0, c: 7.5, beta: 95}\n  chain: b")
    ds = _map(load_case(folder / "case.yaml"))
    assert ds.units["wavevector"] == "rlu" and ds.unused_columns == ()
    h = np.stack([np.full(ds.n, 0.3), np.repeat(K, E.size), np.full(ds.n, -0.4)])
    Gs = np.linalg.inv(_metric(7.0, 6.0, 7.5, 90.0, 95.0, 90.0))
    np.testing.assert_allclose(ds.x["Q_par"], TWO_PI * h[1] / 6.0, rtol=1e-12)
    np.testing.assert_allclose(ds.x["Q_perp"], TWO_PI * -0.4 / 7.5, rtol=1e-12)
    np.testing.assert_allclose(ds.x["Q_par"] ** 2 + ds.x["Q_perp"] ** 2 + ds.x["Q_perp2"] ** 2,
                               TWO_PI ** 2 * np.einsum("in,ij,jn->n", h, Gs, h), rtol=1e-12)
