"""A chain checkpoint damaged by a kill in mid-write is not trusted: resume starts afresh."""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
import pytest

from evidence1d.inference.posterior import sample_posterior

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "inference"))
from gaussian_problems import linear_gaussian  # noqa: E402


@pytest.mark.parametrize("content", [b"", b"\x89HDF\r\n\x1a\n" + b"\x00" * 40,
                                     b"not an hdf5 file at all"],
                         ids=["empty", "truncated header", "garbage"])
def test_damaged_checkpoint_is_recomputed(tmp_path, seed, content):
    loglike, prior, _, _, _ = linear_gaussian(np.random.default_rng(seed), 2, "normal", 5.0)
    fresh = sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=60,
                             progress=False, checkpoint=tmp_path / "a.h5", checkpoint_every=20)
    path = tmp_path / "b.h5"
    path.write_bytes(content)
    resumed = sample_posterior(loglike, prior, rng=np.random.default_rng(seed), n_steps=60,
                               progress=False, checkpoint=path, checkpoint_every=20,
                               resume=True)
    assert resumed.resumed_from == 0
    np.testing.assert_array_equal(resumed.chain, fresh.chain)
