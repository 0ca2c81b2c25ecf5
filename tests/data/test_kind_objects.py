"""Dataset kinds as objects: units round-trip through loading and the simulator's writer
against independent unit constants, the kinds own their nuisances, priors and labels, and a
family's declared kinds are checked when its card (and a case) loads.

Unit constants written here from their definitions, not from evidence1d.units:
- the SI defining constants (BIPM, The International System of Units, 9th ed., 2019):
  h = 6.62607015e-34 J s, e = 1.602176634e-19 C, k = 1.380649e-23 J/K, c = 299792458 m/s
  (exact), so 1 K = k/e eV, 1 THz = h 1e12/e eV, 1 cm⁻¹ = h c 100/e eV;
- molar susceptibility, CGS-Gaussian to SI: χ[m³/mol] = 4π × 10⁻⁶ χ[emu/mol]
  (R. B. Goldfarb and F. R. Fickett, Units for Magnetic Properties, NBS Special Publication
  696, 1985);
- SI prefixes m = 1e-3, µ = 1e-6 (BIPM 2019, Table 7).
"""
from __future__ import annotations

import math
import pickle
import textwrap
from types import SimpleNamespace

import numpy as np
import pytest

from evidence1d.data import KINDS, SAMPLE_EXTRAS, kind_named, load_dataset
from evidence1d.data.geometry import make_geometry
from evidence1d.errors import InputError
from evidence1d.simulate import write_dataset

H_PLANCK, E_CHARGE, K_BOLTZMANN, C_LIGHT = 6.62607015e-34, 1.602176634e-19, 1.380649e-23, \
    299792458.0
MEV_PER = {"meV": 1.0, "ueV": 1e-3, "K": K_BOLTZMANN / E_CHARGE * 1e3,
           "THz": H_PLANCK * 1e12 / E_CHARGE * 1e3,
           "cm-1": H_PLANCK * C_LIGHT * 100.0 / E_CHARGE * 1e3}
K_PER = {"K": 1.0, "mK": 1e-3}
EMU_PER_MOL_PER = {"emu/mol": 1.0, "m3/mol": 1.0 / (4.0 * math.pi * 1e-6)}
J_PER_MOL_K_PER = {"J/mol/K": 1.0, "mJ/mol/K": 1e-3}
LATTICE = {"a": 7.0, "b": 7.5, "c": 6.0}


def _sample(ions=2.0):
    return SimpleNamespace(lattice=LATTICE, geometry=make_geometry(LATTICE),
                           ions_per_formula_unit=ions, formula_units_per_ion=1.0 / ions,
                           spin=0.5, spin_spacing=3.0)


def _write(path, header, rows):
    path.write_text(", ".join(header) + "\n"
                    + "".join(", ".join(f"{v:.10g}" for v in r) + "\n" for r in rows))


def _round_trip(tmp_path, kind, header, rows, units, **block):
    """Load a file, write it back with the simulator's writer at the loaded values, reload."""
    path = tmp_path / f"{kind}.csv"
    _write(path, header, rows)
    b = {"kind": kind, "units": units, "_where": "datasets[0]", **block}
    ds = load_dataset(b, path, name="d", sample=_sample())
    out = tmp_path / "written" / path.name
    write_dataset(ds, ds.y, ds.err, out, note="round trip", fu_per_ion=0.5)
    back = np.loadtxt(out, delimiter=",", comments="#", skiprows=2)
    return ds, np.loadtxt(path, delimiter=",", skiprows=1), back  # the values as written


def test_every_kind_is_covered_by_the_round_trips():
    assert set(KINDS) == {"crystal_spectrum", "powder_spectrum", "susceptibility",
                          "heat_capacity", "entropy"}


@pytest.mark.parametrize("chi_unit", sorted(EMU_PER_MOL_PER))
@pytest.mark.parametrize("t_unit", sorted(K_PER))
@pytest.mark.parametrize("per", ["magnetic_ion", "formula_unit"])
def test_susceptibility_units_round_trip(tmp_path, chi_unit, t_unit, per):
    T = np.linspace(2.0, 60.0, 8)
    chi = 1e-7 * (1.0 + T) if chi_unit == "m3/mol" else 0.3 / (T + 2.0)
    rows = np.column_stack([T, chi, 0.01 * chi])
    ds, rows, back = _round_trip(tmp_path, "susceptibility", ["T", "chi", "error"], rows,
                                 {"temperature": t_unit, "chi": chi_unit}, per=per)
    fu = 0.5 if per == "formula_unit" else 1.0        # two ions per formula unit
    np.testing.assert_allclose(ds.x["T"], rows[:, 0] * K_PER[t_unit], rtol=1e-12)
    np.testing.assert_allclose(ds.y, rows[:, 1] * EMU_PER_MOL_PER[chi_unit] * fu, rtol=1e-12)
    np.testing.assert_allclose(ds.err, rows[:, 2] * EMU_PER_MOL_PER[chi_unit] * fu,
                               rtol=1e-12)
    np.testing.assert_allclose(back, rows, rtol=1e-7)     # the writer keeps 8 digits


@pytest.mark.parametrize("kind,value", [("heat_capacity", "C"), ("entropy", "S")])
@pytest.mark.parametrize("unit", sorted(J_PER_MOL_K_PER))
@pytest.mark.parametrize("per", ["magnetic_ion", "formula_unit"])
def test_heat_and_entropy_units_round_trip(tmp_path, kind, value, unit, per):
    T = np.geomspace(1.0, 80.0, 9)
    y = (1e3 if unit == "mJ/mol/K" else 1.0) * T / (1.0 + T)
    rows = np.column_stack([T, y, 0.02 * y])
    ds, rows, back = _round_trip(tmp_path, kind, ["T", value, "error"], rows,
                                 {"temperature": "K", kind: unit}, per=per)
    fu = 0.5 if per == "formula_unit" else 1.0
    np.testing.assert_allclose(ds.y, rows[:, 1] * J_PER_MOL_K_PER[unit] * fu, rtol=1e-12)
    np.testing.assert_allclose(ds.err, rows[:, 2] * J_PER_MOL_K_PER[unit] * fu, rtol=1e-12)
    np.testing.assert_allclose(back, rows, rtol=1e-7)


@pytest.mark.parametrize("e_unit", sorted(MEV_PER))
def test_crystal_spectrum_units_round_trip(tmp_path, e_unit):
    L = np.linspace(0.1, 1.0, 12)
    H = np.linspace(-0.2, 0.3, 12)
    E = np.linspace(0.5, 3.0, 12) / MEV_PER[e_unit]
    I = 1.0 + L
    rows = np.column_stack([L, H, E, I, 0.1 * I])
    ds, rows, back = _round_trip(tmp_path, "crystal_spectrum",
                                 ["q_par", "q_perp", "energy", "intensity", "error"], rows,
                                 {"energy": e_unit, "wavevector": "rlu", "intensity": "arb"},
                                 resolution={"fwhm": [0.1]})
    np.testing.assert_allclose(ds.x["energy"], rows[:, 2] * MEV_PER[e_unit], rtol=1e-12)
    # r.l.u. of a cell with right angles and the chain along c: Q_par = 2πL/c, Q_perp = 2πH/a
    np.testing.assert_allclose(ds.x["Q_par"], 2 * math.pi * rows[:, 0] / LATTICE["c"],
                               rtol=1e-12)
    np.testing.assert_allclose(ds.x["Q_perp"], 2 * math.pi * rows[:, 1] / LATTICE["a"],
                               rtol=1e-12, atol=1e-15)
    np.testing.assert_array_equal(ds.y, rows[:, 3])       # intensity: a free label
    np.testing.assert_allclose(back, rows, rtol=1e-7)


def test_powder_spectrum_units_round_trip(tmp_path):
    Q = np.repeat(np.linspace(0.5, 2.0, 4), 3)
    E = np.tile(np.linspace(10.0, 30.0, 3), 4)             # in K
    I = 2.0 + Q
    rows = np.column_stack([Q, E, I, 0.2 * I])
    ds, rows, back = _round_trip(tmp_path, "powder_spectrum", ["Q", "energy", "intensity",
                                                                "error"], rows,
                                 {"energy": "K", "wavevector": "1/A", "intensity": "counts"},
                                 resolution={"fwhm": [0.1]})
    np.testing.assert_allclose(ds.x["energy"], rows[:, 1] * MEV_PER["K"], rtol=1e-12)
    np.testing.assert_array_equal(ds.x["Q"], rows[:, 0])
    np.testing.assert_allclose(back, rows, rtol=1e-7)


@pytest.mark.parametrize("name", sorted(KINDS))
def test_to_and_from_internal_are_inverse_for_every_unit(name, rng):
    kind = KINDS[name]
    accepted = kind.units[kind.value_unit]
    values = rng.uniform(-3.0, 3.0, 20)
    for unit in (accepted or ["arb"]):
        units = {kind.value_unit: unit}
        for fu in (1.0, 0.25):
            fu = fu if not kind.is_spectrum else 1.0
            back = kind.from_internal(kind.to_internal(values, units, fu), units, fu)
            np.testing.assert_allclose(back, values, rtol=1e-14)


def test_value_factors_match_the_independent_constants():
    assert KINDS["susceptibility"].value_factor({"chi": "m3/mol"}) == \
        pytest.approx(EMU_PER_MOL_PER["m3/mol"], rel=1e-14)
    for name in ("heat_capacity", "entropy"):
        kind = KINDS[name]
        assert kind.value_factor({kind.value_unit: "mJ/mol/K"}) == pytest.approx(1e-3)
    assert KINDS["crystal_spectrum"].value_factor({"intensity": "arb"}) == 1.0


# ------------------------------------------------------------------ what the kinds own
def test_kinds_are_singletons_across_pickling():
    for kind in KINDS.values():
        assert pickle.loads(pickle.dumps(kind)) is kind
        assert kind_named(kind.name) is kind
    with pytest.raises(InputError, match="unknown dataset kind 'suceptibility'.*did you mean"):
        kind_named("suceptibility")


def test_kind_attributes():
    spectra = {k for k, v in KINDS.items() if v.is_spectrum}
    assert spectra == {"crystal_spectrum", "powder_spectrum"}
    assert [k for k, v in KINDS.items() if v.single_crystal] == ["crystal_spectrum"]
    assert {v.family_method for v in KINDS.values()} == {"spectrum", "susceptibility",
                                                         "heat_capacity", "entropy"}
    assert {k: v.value for k, v in KINDS.items()} == {
        "crystal_spectrum": "intensity", "powder_spectrum": "intensity",
        "susceptibility": "chi", "heat_capacity": "C", "entropy": "S"}
    assert dict(SAMPLE_EXTRAS) == {
        "chi0": ("emu/mol", SAMPLE_EXTRAS["chi0"][1], "susceptibility"),
        "c_imp": ("emu K/mol", SAMPLE_EXTRAS["c_imp"][1], "susceptibility"),
        "gamma_e": ("J/(mol K^2)", SAMPLE_EXTRAS["gamma_e"][1], "heat_capacity"),
        "beta_lattice": ("J/(mol K^4)", SAMPLE_EXTRAS["beta_lattice"][1], "heat_capacity")}
    for v in KINDS.values():
        assert v.value_label and v.x_label
    assert KINDS["susceptibility"].derived_panel[0] == "inverse"
    assert KINDS["heat_capacity"].derived_panel[0] == "over_T"
    assert KINDS["entropy"].free_spin_ceiling and KINDS["heat_capacity"].entropy_by_integration


@pytest.mark.parametrize("options,own,extras", [
    ({}, ["scale", "background", "slope"], []),
    ({"background": "flat", "elastic": True}, ["scale", "background", "elastic"], []),
    ({"background": "none", "inflate_errors": True}, ["scale", "inflate"], []),
])
def test_spectrum_nuisance_names(options, own, extras):
    for name in ("crystal_spectrum", "powder_spectrum"):
        got = KINDS[name].nuisance_names("m", options)
        assert got == ([f"m:{s}" for s in own], extras)


def test_thermo_extras_follow_the_options():
    chi, heat, ent = KINDS["susceptibility"], KINDS["heat_capacity"], KINDS["entropy"]
    assert chi.nuisance_names("x", {}) == ([], ["chi0", "c_imp"])
    assert chi.nuisance_names("x", {"impurity": False}) == ([], ["chi0"])
    assert heat.nuisance_names("h", {"lattice": False, "inflate_errors": True}) == \
        (["h:inflate"], ["gamma_e"])
    assert ent.nuisance_names("s", {}) == ([], [])


def test_extra_terms_priors_and_columns_against_their_formulas(rng):
    """χ₀ + C_imp/T (Curie law of impurities) and γ_e T + β T³ (Kittel, Ch. 5 and 11)."""
    T = np.geomspace(2.0, 100.0, 7)
    a = rng.uniform(0.0, 2.0, (3, 1))
    # default prior bounds fixed before the data (thermo_kinds.CEILINGS): the Debye T³
    # coefficient 12π⁴ n R/(5 θ_D³) of n = 32 atoms with θ_D = 50 K (Kittel Ch. 5) is 0.5;
    # the Curie constant 0.125 g² S(S + 1) of S = 1, g = 2 (Kittel Ch. 11) is 1
    debye = 12 * np.pi ** 4 * 32 * 8.314462618 / (5 * 50.0 ** 3)
    want = {"chi0": (np.ones(7), a + 0 * T, 0.05),
            "c_imp": (1 / T, a / T, 0.125 * 4 * 2),
            "gamma_e": (T, a * T, 2.0),
            "beta_lattice": (T ** 3, a * T ** 3, round(debye, 2))}
    for kind in (KINDS["susceptibility"], KINDS["heat_capacity"]):
        for e in kind.extras:
            col, term, top = want[e.name]
            np.testing.assert_allclose(e.column(T), col, rtol=1e-15)
            np.testing.assert_allclose(np.broadcast_to(e.term(a, T), (3, 7)), term,
                                       rtol=1e-15)
            prior = e.default_prior()
            assert prior["upper"] == pytest.approx(top, rel=1e-15)
            assert prior["lower"] == pytest.approx(-top if e.name == "chi0" else 0.0)


# ------------------------------------------------------------------ families declare kinds
_CARD = textwrap.dedent("""\
    name: test_card
    title: a family for the test
    family: {family}
    one_dimensional: true
    parameters:
      J: {{unit: meV, description: exchange, prior: {{kind: log_uniform, lower: 0.1, upper: 10}}}}
    nested_1d_limit: null
    assumptions: [a test]
    limitations: [a test]
    references: [none]
    """)


def _families():
    from evidence1d.families import Family
    from evidence1d.families.spinon import SpinonFamily

    class NoKinds(Family):
        parameters = ("J",)

    class UnknownKind(Family):
        parameters = ("J",)
        kinds = ("crystal_spectrum", "neutron_diffraction")

        def spectrum(self, p, pts):
            return np.zeros((len(p["J"]), len(pts.energy)))

    class MissingMethod(Family):
        parameters = ("J",)
        kinds = ("crystal_spectrum", "susceptibility")

        def spectrum(self, p, pts):
            return np.zeros((len(p["J"]), len(pts.energy)))

    class SpectraOnly(SpinonFamily):
        kinds = ("crystal_spectrum",)

    return {"no_kinds": NoKinds, "unknown_kind": UnknownKind,
            "missing_method": MissingMethod, "spectra_only": SpectraOnly}


@pytest.fixture
def registry(monkeypatch):
    import evidence1d.families as fams
    reg = dict(fams.FAMILY_CLASSES)
    reg.update(_families())
    monkeypatch.setattr(fams, "FAMILY_CLASSES", reg)
    return reg


@pytest.mark.parametrize("family,words", [
    ("no_kinds", "declares no dataset kinds"),
    ("unknown_kind", "declares dataset kind 'neutron_diffraction', which is not a kind"),
    ("missing_method", "declares dataset kind 'susceptibility' but does not implement "
                       "susceptibility()"),
])
def test_a_family_declaring_an_unsupported_kind_is_rejected_at_card_load(
        tmp_path, registry, family, words):
    from evidence1d.cards import load_card
    path = tmp_path / "card.yaml"
    path.write_text(_CARD.format(family=family))
    with pytest.raises(InputError) as err:
        load_card(path)
    text = str(err.value)
    assert words in text and "\n" not in text
    assert err.value.key == "family"


def test_bundled_families_declare_their_kinds():
    from evidence1d.cards import bundled_cards, load_card
    from evidence1d.families import FAMILY_CLASSES
    for path in bundled_cards().values():
        cls = FAMILY_CLASSES[load_card(path).family]
        assert cls.declaration_problem() is None
        assert set(cls.kinds) == set(KINDS)


def test_a_case_with_data_its_family_does_not_predict_is_rejected(tmp_path, registry):
    from casefactory import CASE_YAML, write_valid_case

    from evidence1d.case import load_case
    card = _CARD.format(family="spectra_only").replace("parameters:\n", textwrap.dedent("""\
        parameters:
          delta: {unit: "1", description: anisotropy, prior: {kind: uniform, lower: 0, upper: 2}}
          thermal_damping: {unit: "1", description: damping, prior: {kind: uniform, lower: 0, upper: 3}}
          g: {unit: "1", description: g factor, prior: {kind: normal, mean: 2.1, sd: 0.1}}
        """))
    (tmp_path / "card.yaml").write_text(card)
    text = CASE_YAML.replace("  - spinon_continuum", f"  - {{card: {tmp_path / 'card.yaml'}}}")
    path = write_valid_case(tmp_path / "case", text)
    with pytest.raises(InputError) as err:
        load_case(path)
    msg = str(err.value)
    assert "does not predict susceptibility data (dataset 'chi')" in msg and "\n" not in msg
    assert "models[0]" in msg


def test_families_are_built_from_the_sample():
    from evidence1d.families import FAMILY_CLASSES
    sample = _sample()
    para = FAMILY_CLASSES["paramagnon"]
    assert para.sample_options(sample) == {"lattice": (3.0, 7.0, 7.5)}
    assert FAMILY_CLASSES["spinon_continuum"].sample_options(sample) == {}
    assert FAMILY_CLASSES["gapped_spin_wave"].sample_options(sample) == {}


def test_the_prediction_layer_refuses_a_kind_the_family_does_not_declare(valid_case):
    from evidence1d.case import load_case
    from evidence1d.families.predict import DatasetPredictor
    from evidence1d.families.spinon import SpinonFamily

    class SpectraOnly(SpinonFamily):
        kinds = ("crystal_spectrum",)

    case = load_case(valid_case)
    chi = next(ds for ds in case.datasets if ds.kind == "susceptibility")
    DatasetPredictor(SpinonFamily(), chi, case.sample)
    with pytest.raises(InputError, match="does not predict susceptibility data"):
        DatasetPredictor(SpectraOnly(), chi, case.sample)
