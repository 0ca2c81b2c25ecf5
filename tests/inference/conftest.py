"""Shared fixtures: a seed overridable by the environment variable EVIDENCE1D_TEST_SEED."""
import os

import numpy as np
import pytest


@pytest.fixture
def seed():
    return int(os.environ.get("EVIDENCE1D_TEST_SEED", "20261201"))


@pytest.fixture
def rng(seed):
    return np.random.default_rng(seed)
