"""The measurement plan shared by the single-crystal case studies, and the link to the
out-of-family generators.

The generators live in ``tests/misspecification`` (written independently of evidence1d's
kernels: exact two-spinon line shape, exact diagonalisation of rings, their own spin-wave,
paramagnon and ordered-state thermodynamics); the case studies use them with their own
scenarios, designs and seeds.  Nothing here is a measurement.
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests" / "misspecification"))

import generators  # noqa: E402,F401  (re-exported for the generate.py scripts)
import scenarios  # noqa: E402,F401

FILES = {"map": "data/map_along_chain.csv", "cut": "data/cut_across_chain.csv",
         "chi": "data/chi.csv", "heat": "data/heat_capacity.csv"}


def design():
    """A map along the chain (30 L × 24 E), a cut across it at L = 1 (12 H × 16 E), χ from 2
    to 300 K (50 points) and C from 1.5 to 30 K (40 points); energies in meV, L and H in
    r.l.u. of the invented cell (c = 6.2 Å, a = 7.4 Å, spin spacing 3.1 Å)."""
    L = np.linspace(0.05, 1.95, 30)
    E = np.linspace(0.25, 3.6, 24)
    LL, EE = np.meshgrid(L, E, indexing="ij")
    H = np.linspace(0.0, 1.0, 12)
    E2 = np.linspace(0.25, 3.0, 16)
    HH, EE2 = np.meshgrid(H, E2, indexing="ij")
    return {"map": (LL.ravel(), np.zeros(LL.size), EE.ravel()),
            "cut": (np.ones(HH.size), HH.ravel(), EE2.ravel()),
            "T_chi": np.geomspace(2.0, 300.0, 50), "T_c": np.geomspace(1.5, 30.0, 40)}
