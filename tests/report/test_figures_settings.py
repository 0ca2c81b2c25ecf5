"""The figures setting, cut choice, family overlays, the entropy integral and number quoting.

No run is needed: light results hold prior draws (test_figures_store.prior_results).
"""
from __future__ import annotations

import math
from types import SimpleNamespace

import numpy as np
import pytest

import evidence1d
from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.report.figures import figure_settings
from evidence1d.analysis.figure_data import _entropy
from evidence1d.analysis.overlays import family_overlays
from evidence1d.report.figures.style import quote, wavevector_label
from casefactory import write_valid_case
from test_figures_store import _SPECTRA_ONLY, figure_data_for, prior_results, summary_for


@pytest.fixture(scope="module")
def spec_case(tmp_path_factory):
    return evidence1d.load_case(write_valid_case(tmp_path_factory.mktemp("fs"), _SPECTRA_ONLY))


def _cuts(case, rng, setting):
    res = prior_results(case, rng, n=12)
    data = figure_data_for(res, case, summary_for(case, {"J": 1.0, "delta": 1.0}),
                       {"cuts": setting, "draws": 6})
    return data["models"]["spinon_continuum"]["datasets"]["map"]["cuts"]


@pytest.mark.parametrize("raw,key", [
    ({"cut": "all"}, "figures.cut"),
    ({"temperature_axis": "logarithmic"}, "figures.temperature_axis"),
    ({"map_scale": "cubic"}, "figures.map_scale"),
    ({"map_percentiles": [99, 1]}, "figures.map_percentiles"),
    ({"titles": "no"}, "figures.titles"),
    ({"draws": 2}, "figures.draws"),
    ({"truths": {"J": "one"}}, "figures.truths.J"),
    ({"truths": {"nomodel": {"J": 1.0}}}, "figures.truths.nomodel"),
    ({"cuts": "some"}, "figures.cuts"),
    ({"cuts": {"nodata": "all"}}, "figures.cuts.nodata"),
    ({"cuts": []}, "figures.cuts"),
])
def test_bad_settings_name_their_key(raw, key):
    with pytest.raises(InputError) as exc:
        figure_settings(raw, datasets=["map", "chi"], models=["spinon_continuum"])
    assert key in str(exc.value) and "\n" not in str(exc.value)


def test_settings_defaults_and_forms():
    s = figure_settings(None)
    assert s["cuts"] == {"default": ("auto", None, ()), "datasets": {}}
    assert s["temperature_axis"] == "linear" and s["titles"] is True
    s = figure_settings({"cuts": {"map": {"E": [1, 2]}}, "truths": {"J": 1, "m": {"g": 2}}},
                        datasets=["map"], models=["m"])
    assert s["cuts"]["datasets"]["map"] == ("values", "E", (1.0, 2.0))
    assert s["truths"] == {"*": {"J": 1.0}, "m": {"g": 2.0}}


def test_cuts_chosen_by_value_in_the_data_unit(spec_case, rng):
    # the map's q_par (r.l.u.) are 0.05, 0.23, 0.41, 0.59, 0.77, 0.95 (tests/casefactory.py)
    cuts = _cuts(spec_case, rng, [0.23, 0.8])
    assert [c["label"].split("=")[1].strip() for c in cuts] == ["0.23 r.l.u.", "0.77 r.l.u."]
    assert len(_cuts(spec_case, rng, "all")) == 6
    assert len(_cuts(spec_case, rng, "auto")) == 6
    with pytest.raises(InputError) as exc:
        _cuts(spec_case, rng, [1.5])
    assert "figures.cuts" in str(exc.value) and "r.l.u." in str(exc.value)
    # constant-energy cut: the energies are 0.5, 1.125, 1.75, 2.375, 3 meV
    (cut,) = _cuts(spec_case, rng, {"E": [1.1]})
    assert cut["axis"] == "Q_par" and "meV" in cut["label"]
    assert np.allclose(cut["x"], np.linspace(0.05, 0.95, 6))         # r.l.u., as given
    assert np.all(np.isfinite(cut["bands"])) and cut["bands"].shape == (5, 6)


def _pts(q_par, d=3.0, a=7.0, b=7.5):
    z = np.zeros_like(q_par)
    return SpectralPoints(Q_par=q_par, Q_a=z, Q_b=z, d=d, a_perp=a, b_perp=b, energy=z,
                          sigma=z, temperature=2.0)


def test_magnon_overlay_is_the_des_cloizeaux_pearson_mode_without_interchain_coupling(
        spec_case):
    fam = spec_case.problem("gapped_spin_wave").family
    q = np.linspace(0.1, 3.0, 25) / 3.0                   # Å⁻¹, chain phase q = Q d
    p = {"J": np.array([[1.3]]), "J_perp": np.array([[0.0]]), "delta": np.array([[1.0]]),
         "damping": np.array([[0.1]]), "g": np.array([[2.0]])}
    ((label, e),) = family_overlays(fam, p, _pts(q))
    # J_perp = 0, Δ = 1: ħω = (π/2) J |sin q| (des Cloizeaux & Pearson, Phys. Rev. 128,
    # 2131, 1962), the limit the ordered family states it reaches
    assert "magnon" in label
    assert np.allclose(e, 0.5 * math.pi * 1.3 * np.abs(np.sin(q * 3.0)), rtol=1e-6)


def test_paramagnon_overlay_is_gamma0_without_correlations(tmp_path, rng):
    text = _SPECTRA_ONLY.replace("  - spinon_continuum\n  - gapped_spin_wave\n",
                                 "  - paramagnon\n")
    case = evidence1d.load_case(write_valid_case(tmp_path / "pm", text))
    fam = case.problem("paramagnon").family
    p = {"chi_uniform": np.array([[0.01]]), "theta_sf": np.array([[20.0]]),
         "xi_par": np.array([[0.0]]), "xi_perp": np.array([[0.0]]),
         "gamma0": np.array([[0.7]]), "g": np.array([[2.0]])}
    ((label, e),) = family_overlays(fam, p, _pts(np.linspace(0.1, 1.0, 7)))
    # zone-boundary centre: Γ_Q = Γ_0 (1 + κ(Q)) and κ = 0 when ξ_∥ = ξ_⊥ = 0 (Ornstein-
    # Zernike, the card's definition of Γ_0; Moriya 1985, Ch. 3)
    assert "Γ" in label and np.allclose(e, 0.7)


def test_a_family_hook_comes_first_and_unknown_families_get_none():
    class Own:
        def overlays(self, p, pts):
            return [("own curve", 2.0 * p["J"] + 0 * pts.q_par)]

    pts = _pts(np.linspace(0.1, 1.0, 4))
    ((label, e),) = family_overlays(Own(), {"J": np.array([[1.5]])}, pts)
    assert label == "own curve" and np.allclose(e, 3.0)
    assert family_overlays(object(), {}, pts) == []


def test_data_entropy_is_the_trapezoid_integral_of_c_over_t():
    # C_mag = a T: ∫ C/T dT = a (T - T0) exactly for trapezoids (any spacing)
    a, T = 0.2, np.array([1.0, 1.5, 2.5, 4.0, 7.0])
    fam = SimpleNamespace(entropy=lambda p, t: np.full((3, np.size(t)), 0.4))
    sample = SimpleNamespace(spin=0.5)
    err = np.full(T.size, 0.05)
    ent = _entropy(SimpleNamespace(family=fam), sample, T, a * T, err, np.linspace(1, 7, 9), {})
    assert np.allclose(ent["y"], 0.4 + a * (T - T[0]))
    # error of S(T_2) = 0.5 ΔT (e_1/T_1 + e_2/T_2), independent errors in quadrature
    assert ent["err"][1] == pytest.approx(0.25 * math.hypot(0.05 / 1.0, 0.05 / 1.5))
    # R ln 2 = 5.7632 J/(mol K) (CODATA R = 8.314462618 J/(mol K))
    assert ent["ceiling"] == pytest.approx(8.314462618 * math.log(2.0), rel=1e-9)
    assert ent["ceiling_label"] == "R ln 2"


def test_quoted_digits_follow_the_error():
    # two significant digits of the smaller error (PDG rounding, common practice)
    assert quote(2.1234, 2.1114, 2.1354) == "$2.123 \\pm 0.012$"
    assert quote(0.0546, 0.0511, 0.0609) == "$0.0546^{+0.0063}_{-0.0035}$"
    assert quote(1.0e-5, 0.88e-5, 1.12e-5) == "$(1.00 \\pm 0.12) \\times 10^{-5}$"
    assert wavevector_label("Q", "1/A") == "$|Q|$ (Å$^{-1}$)"
    assert wavevector_label("Q_par", "rlu") == "$Q_\\parallel$ (r.l.u.)"
