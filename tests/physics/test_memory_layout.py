"""Kernels give the same numbers whatever the memory layout of their inputs.

Both kernels below write corrections through ``ravel()`` views; for a Fortran-ordered
array ``ravel()`` is a copy and such writes would be lost silently.  The reference is the
same call on C-ordered copies (an exact identity, not a tolerance).
"""
from __future__ import annotations

import numpy as np

from evidence1d.physics import chain_thermal, magnon_lineshape


def test_conformal_g_is_layout_independent():
    # |x| >= 3 takes the asymptotic series of |Γ(1/4 + iy)|² e^{πy}; below, the table
    y = np.linspace(0.0, 12.0, 24).reshape(4, 6)
    f = np.asfortranarray(y)
    assert not f.flags.c_contiguous
    assert np.array_equal(chain_thermal._g(f), chain_thermal._g(y))
    # and the far values are the asymptotic form 2π y^{-1/2} e^{R(y)} (Stirling), not g(3)
    far = y >= 3.0
    assert np.unique(chain_thermal._g(f)[far]).size == far.sum()


def test_mode_pair_is_layout_independent():
    E = np.linspace(-3.0, 3.0, 40)
    omega = np.linspace(0.5, 2.0, 3)[:, None] * np.ones((1, 40))
    sigma = np.full(40, 0.05)
    w = np.ones((3, 40))
    damping = np.full((3, 1), 0.1)
    c = magnon_lineshape.mode_pair(E, sigma, omega, w, 5.0, damping=damping)
    f = magnon_lineshape.mode_pair(E, sigma, np.asfortranarray(omega),
                                   np.asfortranarray(w), 5.0, damping=damping)
    assert np.array_equal(c, f)
