"""The prediction layer sees the sample's geometry: interchain phases from the lattice.

Independent reference: for a lattice vector R, Q·R = 2π h·u (duality of the direct and
reciprocal bases; Stout & Jensen, X-ray Structure Determination (Wiley 1989), ch. 2); the
families' interchain phase Q_a a_⊥ is the part of Q·R₁ across the chain, R₁ the next crystal
axis after the chain's.
"""
from __future__ import annotations

import math

import numpy as np

from casefactory import edit_file, write_valid_case
from evidence1d.case import load_case
from evidence1d.families.predict import DatasetPredictor
from evidence1d.families.spinon import SpinonFamily

HKL = [(0.3, 0.25, -0.7), (1.0, 0.1, 0.5), (-0.6, 0.9, 1.2), (0.2, 0.0, 0.0)]


def test_monoclinic_chain_along_b_interchain_phases(tmp_path):
    folder = tmp_path / "case"
    write_valid_case(folder)
    edit_file(folder / "case.yaml", "  lattice: {a: 7.0, b: 7.5, c: 6.0}",
              "  lattice: {a: 5.2, b: 6.4, c: 8.1, beta: 107}\n  chain: b")
    rows = [f"{h} {k} {l} {e} 1.0 0.1" for (h, k, l) in HKL for e in (1.0, 1.5, 2.0)]
    (folder / "map.csv").write_text("H K L E I dI\n" + "\n".join(rows) + "\n")
    case = load_case(folder / "case.yaml")
    ds = next(d for d in case.datasets if d.name == "map")
    pr = DatasetPredictor(SpinonFamily(), ds, case.sample)
    pts = pr._pts
    h = np.repeat(np.array(HKL, float), 3, axis=0)
    # chain along b: the next axis is c, then a; with b ⟂ a, c both lie across the chain
    # and Q·c = 2π L, Q·a = 2π H exactly (no part along the chain)
    np.testing.assert_allclose(pts.Q_a * pts.a_perp, 2 * math.pi * h[:, 2], atol=1e-12)
    np.testing.assert_allclose(pts.Q_b * pts.b_perp, 2 * math.pi * h[:, 0], atol=1e-12)
    assert pts.a_perp == 8.1 and math.isclose(pts.b_perp, 5.2, rel_tol=1e-12)
    np.testing.assert_allclose(pts.Q_par, 2 * math.pi * h[:, 1] / 6.4, atol=1e-12)
    # |Q| for the form factor from the reciprocal metric
    G = np.array([[5.2 ** 2, 0, 5.2 * 8.1 * math.cos(math.radians(107))], [0, 6.4 ** 2, 0],
                  [5.2 * 8.1 * math.cos(math.radians(107)), 0, 8.1 ** 2]])
    Q2 = 4 * math.pi ** 2 * np.einsum("ni,ij,nj->n", h, np.linalg.inv(G), h)
    np.testing.assert_allclose(pr._Q ** 2, Q2, rtol=1e-12)
