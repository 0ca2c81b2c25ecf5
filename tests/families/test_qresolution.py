"""Momentum resolution in the generic layer, and the case-file keys that declare it.

Checks: the tensor Gauss–Hermite average against analytic Gaussian moments (a spectrum
quadratic in Q has the exact average S(Q) + (∂²S/∂Q²) σ²/2); against a brute-force average
of a real family over a dense grid of the Gaussian (independent trapezoid quadrature);
r.l.u. widths converted with 2π/c and 2π/a; bad widths rejected in one line.
"""
from __future__ import annotations

import numpy as np
import pytest

import evidence1d
from casefactory import check_command, edit_file
from evidence1d.families.base import Family, SpectralPoints
from evidence1d.families.qresolution import q_averaged_spectrum


def _pts(**kw):
    n = 7
    base = dict(Q_par=np.linspace(0.1, 1.9, n), Q_a=np.linspace(-0.5, 0.5, n),
                Q_b=np.zeros(n), d=3.0, a_perp=7.0, b_perp=7.5, energy=np.linspace(0.5, 3, n),
                sigma=np.full(n, 0.05), temperature=2.0)
    base.update(kw)
    return SpectralPoints(**base)


class _Quadratic(Family):
    """S = a + b Q_∥² + c Q_a² (a toy with exactly known Gaussian average)."""
    parameters = ("a",)

    def spectrum(self, p, pts):
        return p["a"] + 2.0 * pts.Q_par ** 2 + 3.0 * pts.Q_a ** 2


def test_quadratic_spectrum_average_is_exact():
    # E[(Q + u)²] = Q² + σ² for u ~ N(0, σ²) (Gaussian second moment, analytic)
    pts = _pts(sigma_Q_par=0.05, sigma_Q_perp=np.full(7, 0.02))
    p = {"a": np.array([[1.0], [2.0]])}
    got = q_averaged_spectrum(_Quadratic(), p, pts)
    want = p["a"] + 2.0 * (pts.Q_par ** 2 + 0.05 ** 2) + 3.0 * (pts.Q_a ** 2 + 0.02 ** 2)
    np.testing.assert_allclose(got, want, rtol=1e-12)


def test_zero_width_is_identity():
    pts = _pts()
    assert not pts.has_q_resolution
    p = {"a": np.array([[1.0]])}
    np.testing.assert_allclose(q_averaged_spectrum(_Quadratic(), p, pts),
                               _Quadratic().spectrum(p, pts))


def test_spinon_average_matches_dense_quadrature():
    """Against a 401-node trapezoid average over ±6σ of the Gaussian along the chain."""
    from evidence1d.families.spinon import SpinonFamily
    fam = SpinonFamily()
    n = 40
    Q = np.linspace(0.3, 1.8, n)
    pts = _pts(Q_par=Q, Q_a=np.zeros(n), Q_b=np.zeros(n), energy=np.full(n, 1.2),
               sigma=np.full(n, 0.08), sigma_Q_par=0.02)
    p = {"J": np.array([[1.0]]), "delta": np.array([[1.0]]), "g": np.array([[2.0]])}
    got = q_averaged_spectrum(fam, p, pts)
    u = np.linspace(-6.0, 6.0, 401)
    w = np.exp(-0.5 * u ** 2)
    w /= np.trapezoid(w, u)
    ref = np.zeros((1, n))
    from dataclasses import replace
    flat = replace(pts, sigma_Q_par=0.0)
    vals = np.stack([fam.spectrum(p, replace(flat, Q_par=Q + ui * 0.02))[0] for ui in u])
    ref[0] = np.trapezoid(vals * w[:, None], u, axis=0)
    rel = np.abs(got - ref) / np.maximum(ref.max(), 1e-12)
    assert np.max(rel) < 0.02, np.max(rel)


def test_case_q_fwhm_converted_from_rlu(valid_case):
    edit_file(valid_case, "resolution: {fwhm: [0.1, 0.02]}",
              "resolution: {fwhm: [0.1, 0.02], q_fwhm: [0.02, 0.05]}")
    case = evidence1d.load_case(valid_case)
    from evidence1d.families.predict import DatasetPredictor
    from evidence1d.families.spinon import SpinonFamily
    ds = case.datasets[0]
    pred = DatasetPredictor(SpinonFamily(), ds, case.sample)
    fwhm_per_sigma = 2.0 * np.sqrt(2.0 * np.log(2.0))
    assert pred._pts.sigma_Q_par == pytest.approx(0.02 * 2 * np.pi / 6.0 / fwhm_per_sigma)
    assert pred._pts.sigma_Q_perp == pytest.approx(0.05 * 2 * np.pi / 7.0 / fwhm_per_sigma)
    p = {"J": np.array([[1.0]]), "delta": np.array([[1.0]]), "g": np.array([[2.0]])}
    with_res = pred.magnetic(p)
    assert np.all(np.isfinite(with_res))


@pytest.mark.parametrize("bad", ["[0.02]", "[-0.1, 0.1]", "[0.1, 0.1, 0.1]"])
def test_bad_q_fwhm_is_one_line_error(valid_case, capsys, bad):
    edit_file(valid_case, "resolution: {fwhm: [0.1, 0.02]}",
              f"resolution: {{fwhm: [0.1, 0.02], q_fwhm: {bad}}}")
    code, err = check_command(capsys, valid_case)
    assert code == 2 and "q_fwhm" in err and len(err.splitlines()) == 1, err
