"""Shared fixtures: a seeded Generator (override with EVIDENCE1D_TEST_SEED) and a small
valid case written to a temporary folder, which tests mutate one thing at a time."""
from __future__ import annotations

import os
import textwrap

import numpy as np
import pytest

import matplotlib

matplotlib.use("Agg")


@pytest.fixture
def seed():
    return int(os.environ.get("EVIDENCE1D_TEST_SEED", "12345"))


@pytest.fixture
def rng(seed):
    return np.random.default_rng(seed)


from casefactory import write_valid_case  # noqa: E402


@pytest.fixture
def valid_case(tmp_path):
    return write_valid_case(tmp_path / "case")
