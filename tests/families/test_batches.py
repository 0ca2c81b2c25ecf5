"""Predictions computed in batches of parameter sets equal the whole batch at once.

A family with a large working memory per (set, point) pair declares
``max_pairs_per_call`` and :class:`evidence1d.families.predict.DatasetPredictor` splits the
sets under it; a set's prediction must not depend on the split (the family contract's
"batch equals loop").  Measured: the coupled chains' likelihood of 200 sets on the
flagship data held 370 MiB of temporaries at once, 24 MiB in batches of 20 000 pairs.
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

import evidence1d
from evidence1d.families.coupled_chains import CoupledChainsFamily

CASE = Path(__file__).resolve().parents[2] / "case_studies" / "flagship" / "case.yaml"


def test_batches_of_sets_give_the_whole_batch(monkeypatch):
    case = evidence1d.load_case(CASE)
    prob = case.problem("coupled_chains")
    rng = np.random.default_rng(3)
    theta = prob.prior_transform(rng.uniform(0.1, 0.9, (5, len(prob.names))))
    theta[:3, prob.names.index("J_perp")] *= 1e-3          # above T_N; the others ordered
    monkeypatch.setattr(CoupledChainsFamily, "max_pairs_per_call", None)
    whole = prob.predict(theta)
    monkeypatch.setattr(CoupledChainsFamily, "max_pairs_per_call", 1000)   # 1 set per call
    parts = prob.predict(theta)
    for name in whole:
        np.testing.assert_allclose(parts[name], whole[name], rtol=1e-12, atol=0.0)
