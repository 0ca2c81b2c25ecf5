"""Magnetic form factor against the International Tables (via periodictable)."""
import numpy as np
import pytest

from evidence1d.physics.neutron import magnetic_form_factor


def test_cu2_j0_international_tables():
    # <j0> of Cu2+ at Q = 1, 2, 4 1/A: 0.95284, 0.82966, 0.51012
    # (Brown, International Tables for Crystallography Vol. C, 2004, Sect. 4.4.5, via periodictable)
    np.testing.assert_allclose(magnetic_form_factor(np.array([1.0, 2.0, 4.0]), "Cu", 2),
                               [0.95284, 0.82966, 0.51012], atol=5e-6)


def test_j2_term_dipole_approximation():
    # F = <j0> + (1 - 2/g) <j2> (Brown 2004, Eq. 4.4.5.2); <j2>(Q=2) of Cu2+ = 0.06316
    # from the same tables via periodictable; the term vanishes for g = 2
    F2 = magnetic_form_factor(2.0, "Cu", 2, g=2.0)
    F22 = magnetic_form_factor(2.0, "Cu", 2, g=2.2)
    assert F22 - F2 == pytest.approx((1 - 2 / 2.2) * 0.0631583, rel=1e-4)
    # <j2>(0) = 0: the form factor is 1 at Q = 0 for any g (normalisation of <j0>)
    assert magnetic_form_factor(0.0, "Cu", 2, g=2.3) == pytest.approx(1.0, abs=1e-3)
