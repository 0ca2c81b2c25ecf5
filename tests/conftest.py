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

#: session fixtures that cost a run each: the tests that use one are kept in one xdist worker
#: (``--dist loadgroup`` in pyproject.toml), so that the run is made once, not once per worker
_SHARED_RUNS = {"run_dir": "report_run", "dask_client": "campaign",
                "two_family_case": "campaign"}


@pytest.hookimpl(tryfirst=True)     # before pytest-xdist reads the groups into the node ids
def pytest_collection_modifyitems(config, items):
    for item in items:
        for fixture, group in _SHARED_RUNS.items():
            if fixture in getattr(item, "fixturenames", ()):
                item.add_marker(pytest.mark.xdist_group(group))
                break


@pytest.fixture
def valid_case(tmp_path):
    return write_valid_case(tmp_path / "case")
