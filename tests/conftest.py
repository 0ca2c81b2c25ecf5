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

#: session or module fixtures that cost a run each: the tests that use one are kept in one
#: xdist worker (``--dist loadgroup`` in pyproject.toml), so that the run is made once, not
#: once per worker
_SHARED_RUNS = {"run_dir": "report_run", "dask_client": "campaign",
                "two_family_case": "campaign", "chain_fit": "coupled_limit",
                "first_run": "runner_first_run", "reference": "interrupt_reference"}


@pytest.hookimpl(trylast=True)
def pytest_collection_modifyitems(config, items):
    """Warn when pytest-xdist could not keep a group in one worker (its node-id suffix is
    missing): the suite still passes, but each worker repeats the shared runs."""
    if not getattr(config.option, "loadgroup", False):
        return
    lost = [it.nodeid for it in items
            if it.get_closest_marker("xdist_group") and "@" not in it.nodeid]
    if lost:
        import warnings
        warnings.warn(f"pytest-xdist did not group {len(lost)} tests (e.g. {lost[0]}); "
                      "shared runs are repeated in every worker (pytest >= 9.2?)")


def pytest_itemcollected(item):
    """Mark each test that uses a shared run with its group as it is collected: before any
    ``pytest_collection_modifyitems``, where pytest-xdist reads the groups into the node ids
    (the order of that hook between conftest and plugins changed with pytest 9.2)."""
    for fixture, group in _SHARED_RUNS.items():
        if fixture in getattr(item, "fixturenames", ()):
            item.add_marker(pytest.mark.xdist_group(group))
            break


@pytest.fixture
def valid_case(tmp_path):
    return write_valid_case(tmp_path / "case")
