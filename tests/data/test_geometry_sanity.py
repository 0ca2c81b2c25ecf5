"""Physics sanity of the input, as `evidence1d check` reports it: a sample spin the family
does not describe (error), a resolution wider than the energy window, energies beyond every
chosen family's reach, a spin spacing that does not divide the lattice repeat, wavevector
information the models do not see (warnings).

Independent references: the upper edge of the two-spinon continuum, πJ sin γ/γ for
Δ = cos γ ≤ 1 (des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966)) and 2I =
(2J/π) sinh φ K(k) with K(k′)/K(k) = φ/π for Δ = cosh φ > 1 (Johnson, Krinsky & McCoy,
Phys. Rev. A 8, 2526 (1973)), computed here with scipy's complete elliptic integral; detailed
balance S(−E) = e^{−E/k_BT} S(E) (Squires, Introduction to the Theory of Thermal Neutron
Scattering, CUP 1978, ch. 7) bounds the weight on the energy-gain side.
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy.constants import k as K_B, electron_volt
from scipy.optimize import brentq
from scipy.special import ellipk

from casefactory import check_command, edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.cli import main
from evidence1d.sanity import FAR, REACH_FRACTION, case_warnings, family_energy_reach

#: the prior corner the reach is evaluated at: u = 0.995 of J ~ log-uniform(0.05, 20) meV
J_TOP = 0.05 * 400.0 ** 0.995


@pytest.fixture
def folder(tmp_path):
    write_valid_case(tmp_path / "case")
    return tmp_path / "case"


def _scale_energies(folder, factor, shift=0.0):
    lines = (folder / "map.csv").read_text().splitlines()
    out = lines[:2]
    for ln in lines[2:]:
        c = ln.split(", ")
        c[2] = f"{float(c[2]) * factor + shift:.6g}"
        out.append(", ".join(c))
    (folder / "map.csv").write_text("\n".join(out) + "\n")


def _check_out(capsys, folder):
    code = main(["check", str(folder / "case.yaml")])
    return code, capsys.readouterr().out


def _upper_edge_max(J, delta):
    """Largest two-spinon energy of the XXZ chain (see the module references)."""
    if delta <= 1.0:
        g = math.acos(delta)
        return math.pi * J * (math.sin(g) / g if g > 0 else 1.0)
    phi = math.acosh(delta)
    m = brentq(lambda m: ellipk(1.0 - m) / ellipk(m) - phi / math.pi, 1e-12, 1 - 1e-15)
    return 2.0 * J / math.pi * math.sinh(phi) * ellipk(m)


# ------------------------------------------------------------------ spin
def test_spin_one_with_the_spinon_family_is_a_check_error(folder, capsys):
    edit_file(folder / "case.yaml", "spin: 0.5", "spin: 1")
    code, err = check_command(capsys, folder / "case.yaml")
    assert code == 2 and "\n" not in err
    assert "models[0]" in err and "spinon_continuum" in err and "spin 0.5 only" in err
    assert "spin is 1" in err


# ------------------------------------------------------------------ resolution
def test_resolution_wider_than_the_energy_window(folder, capsys):
    code, out = _check_out(capsys, folder)
    assert code == 0 and "wider than the whole energy window" not in out
    edit_file(folder / "case.yaml", "fwhm: [0.1, 0.02]", "fwhm: [3.0]")
    code, out = _check_out(capsys, folder)
    assert code == 0
    line = next(ln for ln in out.splitlines() if "wider than the whole energy window" in ln)
    assert line.startswith("warning: dataset 'map'") and "3 to 3 meV" in line
    assert "0.5 to 3 meV (2.5 meV)" in line


def test_constant_energy_cut_is_not_judged(folder):
    _scale_energies(folder, 0.0, 1.5)
    edit_file(folder / "case.yaml", "fwhm: [0.1, 0.02]", "fwhm: [3.0]")
    assert not any("energy window" in w for w in case_warnings(load_case(folder / "case.yaml")))


# ------------------------------------------------------------------ energies and families
@pytest.mark.parametrize("prior, delta_top", [
    ("", 0.995 * 3.0),
    ("\n    priors: {delta: {kind: uniform, lower: 0.0, upper: 1.0}}", 0.995)])
def test_energy_reach_brackets_the_continuum_top(folder, prior, delta_top):
    """The spinon family's reach over its prior is the continuum's top at the prior's upper
    corner (J, Δ largest), to within the grid spacing (factor 1.21) above it."""
    _scale_energies(folder, 100.0)                      # 50 .. 300 meV
    edit_file(folder / "case.yaml", "fwhm: [0.1, 0.02]", "fwhm: [0.5]")
    edit_file(folder / "case.yaml", "  - spinon_continuum",
              "  - name: spinon_continuum" + prior)
    case = load_case(folder / "case.yaml")
    gain, loss = family_energy_reach(case.problem("spinon_continuum"), case.datasets[0])
    top = _upper_edge_max(J_TOP, delta_top)
    assert top <= loss <= 1.25 * top, (loss, top)
    warn = [w for w in case_warnings(case) if "energies reach" in w]
    assert len(warn) == 1 and "300 meV" in warn[0]
    assert f"spinon_continuum {loss:.3g} meV" in warn[0]
    assert 300.0 > FAR * loss


def test_no_energy_warning_for_ordinary_data(folder):
    assert case_warnings(load_case(folder / "case.yaml")) == []


def test_energy_gain_beyond_detailed_balance(folder, capsys):
    """At T = 2 K, weight at −E is at most e^{−E/k_BT} of that at +E, so |E| · S on the gain
    side stays above 10⁻³ of its peak only for E < k_BT ln 10³ (plus a few resolution σ)."""
    _scale_energies(folder, -2.0)                       # −1 .. −6 meV
    edit_file(folder / "case.yaml", "fwhm: [0.1, 0.02]", "fwhm: [0.1]")
    case = load_case(folder / "case.yaml")
    gain, _ = family_energy_reach(case.problem("spinon_continuum"), case.datasets[0])
    kT = K_B * 2.0 / electron_volt * 1e3                # meV
    bound = kT * math.log(1.0 / REACH_FRACTION) + 4 * 0.1 / 2.3548
    assert 0 < gain <= 1.25 * bound, (gain, bound)
    code, out = _check_out(capsys, folder)
    line = next(ln for ln in out.splitlines() if "energy gain" in ln)
    assert code == 0 and "down to -6 meV" in line and "T = 2 K" in line
    assert f"spinon_continuum -{gain:.3g} meV" in line


# ------------------------------------------------------------------ spacing and geometry
def test_spin_spacing_that_does_not_divide_the_repeat(folder, capsys):
    edit_file(folder / "case.yaml", "spin_spacing: 3.0", "spin_spacing: 3.3")
    code, out = _check_out(capsys, folder)
    line = next(ln for ln in out.splitlines() if "does not divide" in ln)
    assert code == 0 and "spin_spacing 3.3" in line and "c: 6 Å" in line and "1.82" in line


def test_second_perpendicular_component_is_reported_when_unused(folder):
    """K ≠ 0 gives Q_perp2 = 2πK/b; either the models see it or check says they do not."""
    rows = [f"0.1 {k:.3g} {l:.3g} {e:.3g} 1.0 0.1" for k in (0.0, 0.4) for l in
            np.linspace(0.1, 0.9, 5) for e in (1.0, 2.0)]
    (folder / "map.csv").write_text("H K L E I dI\n" + "\n".join(rows) + "\n")
    case = load_case(folder / "case.yaml")
    ds = case.datasets[0]
    np.testing.assert_allclose(np.unique(ds.x["Q_perp2"]), [0.0, 2 * math.pi * 0.4 / 7.5])
    seen = case.problem("spinon_continuum").predictors[0]._pts.Q_b
    warned = any("Q_perp2" in w for w in case_warnings(case))
    assert warned == (not np.allclose(seen, ds.x["Q_perp2"]))


def test_interchain_spacings_follow_the_chain(folder):
    """Chain along b of an orthorhombic cell: across it lie c (n1) and a (n2); the models'
    spacings must be those, or check says they are not."""
    edit_file(folder / "case.yaml", "  lattice: {a: 7.0, b: 7.5, c: 6.0}",
              "  lattice: {a: 7.0, b: 6.0, c: 7.5}\n  chain: b")
    (folder / "map.csv").write_text("H K L E I dI\n" + "\n".join(
        f"0 {k:.3g} 0.2 {e:.3g} 1.0 0.1" for k in np.linspace(0.05, 0.95, 6)
        for e in (1.0, 2.0)) + "\n")
    case = load_case(folder / "case.yaml")
    np.testing.assert_allclose(case.sample.geometry.interchain_vectors(),
                               [[7.5, 0.0], [0.0, 7.0]], atol=1e-12)
    pts = case.problem("spinon_continuum").predictors[0]._pts
    warned = any("interchain phases" in w for w in case_warnings(case))
    assert warned == (not np.allclose([pts.a_perp, pts.b_perp], [7.5, 7.0]))
