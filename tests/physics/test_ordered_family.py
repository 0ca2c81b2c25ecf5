"""The ordered (gapped spin-wave) family: options, polarisation, momentum resolution,
batching, and finiteness over its prior."""
from __future__ import annotations

import pickle
from dataclasses import replace

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from evidence1d.errors import InputError
from evidence1d.families.base import SpectralPoints
from evidence1d.families.qresolution import q_averaged_spectrum
from evidence1d.families.spin_wave import SpinWaveFamily


def col(*v):
    return np.array(v, dtype=float).reshape(-1, 1)


def _points(n=40, T=5.0, sigma=0.05, q_a=np.pi, q_b=np.pi, sq=0.0, sqa=0.0):
    q = np.linspace(0.1, 3.0, n)
    E = np.linspace(-6.0, 12.0, n)
    return SpectralPoints(Q_par=q / 3.0, Q_a=np.full(n, q_a / 7.0), Q_b=np.full(n, q_b / 7.5),
                          d=3.0, a_perp=7.0, b_perp=7.5, energy=E, sigma=np.full(n, sigma),
                          temperature=T, sigma_Q_par=sq, sigma_Q_perp=sqa)


P = {"J": col(2.0, 5.0, 0.5), "J_perp": col(0.0, 0.3, 0.05), "delta": col(1.0, 1.2, 2.5),
     "damping": col(0.0, 0.1, 0.6), "g": col(2.0, 2.1, 2.2)}


def test_declared_contract_fields_and_options():
    fam = SpinWaveFamily()
    assert fam.spins == (0.5,) and fam.handles_q_resolution and fam.z_perp == 4
    assert SpinWaveFamily(interchain=2).z_perp == 2
    with pytest.raises(InputError, match="frustrated"):
        SpinWaveFamily(interchain=6)
    with pytest.raises(InputError, match="S = 1/2"):
        SpinWaveFamily(spin=1.0)
    with pytest.raises(InputError):
        SpinWaveFamily(moment_axis="c")
    with pytest.raises(InputError):
        SpinWaveFamily(thermo_method="spline")
    with pytest.raises(InputError):
        fam.susceptibility(P, np.array([1.0]), "diagonal")


def test_batch_equals_loop_and_pickle():
    T = np.array([0.0, 0.5, 2.0, 10.0, 50.0, 300.0])
    for fam in (SpinWaveFamily(), SpinWaveFamily(moment_axis="a", interchain=2)):
        pts = _points(sq=0.02, sqa=0.01)
        out = {"spectrum": fam.spectrum(P, pts), "chi": fam.susceptibility(P, T, "powder"),
               "C": fam.heat_capacity(P, T), "S": fam.entropy(P, T)}
        for i in range(3):
            pi = {k: v[i:i + 1] for k, v in P.items()}
            np.testing.assert_allclose(fam.spectrum(pi, pts), out["spectrum"][i:i + 1],
                                       rtol=1e-12)
            np.testing.assert_allclose(fam.heat_capacity(pi, T), out["C"][i:i + 1],
                                       rtol=1e-12)
            np.testing.assert_allclose(fam.entropy(pi, T), out["S"][i:i + 1], rtol=1e-12)
            np.testing.assert_allclose(fam.susceptibility(pi, T), out["chi"][i:i + 1],
                                       rtol=1e-12)
        fam2 = pickle.loads(pickle.dumps(fam))
        assert fam2.z_perp == fam.z_perp and fam2.moment_axis == fam.moment_axis
        np.testing.assert_array_equal(fam2.spectrum(P, pts), out["spectrum"])


def test_polarisation_factor():
    # Unpolarised cross-section weights the transverse modes by (1 + Q̂_z²) (G. L. Squires,
    # Introduction to the Theory of Thermal Neutron Scattering, 1978, Ch. 7).
    pts = _points(q_a=0.0, q_b=0.0)
    p = {"J": col(2.0), "J_perp": col(0.1), "delta": col(1.1), "damping": col(0.0)}
    along = SpinWaveFamily(moment_axis="par").spectrum(p, pts)       # Q ∥ moment: 1 + 1
    across = SpinWaveFamily(moment_axis="a").spectrum(p, pts)        # Q ⊥ moment: 1 + 0
    mean = SpinWaveFamily().spectrum(p, pts)                         # averaged: 1 + 1/3
    assert np.max(mean) > 0
    np.testing.assert_allclose(along, 1.5 * mean, rtol=1e-12, atol=0)
    np.testing.assert_allclose(across, 0.75 * mean, rtol=1e-12, atol=0)


def test_own_momentum_resolution_matches_the_generic_average():
    # The family's σ_eff (analytic gradient) against the generic layer's Gauss–Hermite
    # average of its own sharp spectrum over Q (evidence1d.families.qresolution, 15 × 9
    # nodes; Cooper & Nathans, Acta Cryst. 23, 357 (1967)), on a cut through the mode.
    fam = SpinWaveFamily()
    p = {"J": col(3.0), "J_perp": col(0.2), "delta": col(1.1), "damping": col(0.005)}
    n = 300
    q = np.full(n, 1.2)
    E = np.linspace(0.5, 7.0, n)
    pts = SpectralPoints(Q_par=q / 3.0, Q_a=np.full(n, 0.9 / 7.0), Q_b=np.zeros(n), d=3.0,
                         a_perp=7.0, b_perp=7.5, energy=E, sigma=np.full(n, 0.02),
                         temperature=2.0, sigma_Q_par=0.01, sigma_Q_perp=0.008)
    own = fam.spectrum(p, pts)
    generic = q_averaged_spectrum(fam, p, pts, n_nodes=(15, 9))
    flat = fam.spectrum(p, replace(pts, sigma_Q_par=0.0, sigma_Q_perp=0.0))
    assert np.max(np.abs(own - flat)) > 0.15 * np.max(flat)
    # linearising ω over the ellipsoid is good to ~3 % of the peak at these widths
    np.testing.assert_allclose(own, generic, rtol=0, atol=0.03 * np.max(generic))


@settings(max_examples=30, deadline=None)
@given(J=st.floats(0.05, 20.0), ratio=st.sampled_from([0.0, 1e-12, 1e-4]) | st.floats(0, 40.0),
       delta=st.sampled_from([1.0, 3.0]) | st.floats(1.0, 3.0),
       T=st.sampled_from([0.0, 1e-6]) | st.floats(0.01, 300.0),
       eta=st.sampled_from([0.0, 0.01, 1.0]), z=st.sampled_from([2, 4]))
def test_finite_everywhere_in_prior_support(J, ratio, delta, T, eta, z):
    fam = SpinWaveFamily(moment_axis="b", interchain=z)
    p = {"J": col(J), "J_perp": col(min(ratio * J, 2.0)), "delta": col(delta),
         "damping": col(eta), "g": col(2.0)}
    n = 30
    E = np.linspace(-50, 50, n)                     # includes |E| >> k_B T
    pts = SpectralPoints(Q_par=np.linspace(0, 2.1, n), Q_a=np.full(n, np.pi / 7),
                         Q_b=np.zeros(n), d=3.0, a_perp=7.0, b_perp=7.5, energy=E,
                         sigma=np.full(n, 0.05), temperature=T, sigma_Q_par=0.01,
                         sigma_Q_perp=0.02)
    Ts = np.array([0.0, 1e-3, T, 1e4])
    for arr in (fam.spectrum(p, pts), fam.susceptibility(p, Ts, "z"),
                fam.susceptibility(p, Ts, "xy"), fam.heat_capacity(p, Ts), fam.entropy(p, Ts)):
        assert np.all(np.isfinite(arr)) and np.all(arr >= 0)
