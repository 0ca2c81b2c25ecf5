"""A chain-phase-only family computes its summed spectrum once per distinct (Q_∥, E, σ).

A cut across the chains repeats each energy at every Q_⊥; the spinon continuum depends on Q
only through q = Q_∥ d, so the kernel needs each distinct point once, while the
polarisation factor (which depends on the direction of Q) still acts point by point.
"""
from __future__ import annotations

import numpy as np
import pytest

import evidence1d.families.chain_polarisation as cp
from evidence1d.families.base import SpectralPoints
from evidence1d.families.spinon import SpinonFamily


def _cut(n_perp=12, energies=(0.3, 0.8, 1.5, 2.4)):
    """A constant-Q_∥ cut across the chains: each energy at n_perp values of Q_a."""
    E = np.repeat(np.asarray(energies), n_perp)
    Qa = np.tile(np.linspace(-1.2, 1.2, n_perp), len(energies))
    n = E.size
    return SpectralPoints(Q_par=np.full(n, 0.9), Q_a=Qa, Q_b=np.zeros(n), d=3.1, a_perp=7.4,
                          b_perp=7.9, energy=E, sigma=0.03 + 0.01 * E, temperature=1.5)


@pytest.mark.parametrize("axis", ["par", "a"])
def test_cut_across_chains_same_numbers_from_the_distinct_points(monkeypatch, axis):
    fam = SpinonFamily(anisotropy_axis=axis)
    p = {"J": np.array([[1.1], [1.3]]), "delta": np.array([[1.0], [0.8]]),
         "thermal_damping": np.array([[0.5], [1.5]])}
    pts = _cut()
    seen = []
    kernel = fam._unpolarised
    monkeypatch.setattr(fam, "_unpolarised",
                        lambda p_, pts_: seen.append(np.size(pts_.energy)) or kernel(p_, pts_))
    fast = fam.spectrum(p, pts)
    assert seen == [4]                      # four distinct energies at one Q_∥
    monkeypatch.setattr(cp, "DISTINCT_FRACTION", -1.0)   # every point on its own
    plain = fam.spectrum(p, pts)
    assert seen[-1] == pts.energy.size
    np.testing.assert_allclose(fast, plain, rtol=1e-13, atol=0.0)
    if axis == "a":   # the factor still differs across the cut (Δ = 0.8; at Δ = 1 it is 2/3)
        assert np.ptp(fast[1, :12]) > 0.01 * fast[1, :12].max()


def test_points_all_distinct_are_used_as_they_are():
    pts = _cut(n_perp=1, energies=np.linspace(0.2, 3.0, 20))
    assert cp.distinct_chain_points(pts) is None
