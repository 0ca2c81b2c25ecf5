"""Fixtures of the campaign tests: a small two-family case and one Dask LocalCluster for the
whole directory (two worker processes, one thread each: the machine has two cores)."""
from __future__ import annotations

import pytest

from casefactory import CASE_YAML, write_valid_case

#: the small case of tests/casefactory.py with two families and tiny sampler settings
TWO_FAMILIES = (CASE_YAML.replace("  - spinon_continuum", "  - spinon_continuum\n  - paramagnon")
                .replace("sampler: {steps: 200, particles: 100, islands: 2}",
                         "sampler: {steps: 40, particles: 40, islands: 2}"))


@pytest.fixture(scope="session")
def two_family_case(tmp_path_factory):
    import evidence1d
    return evidence1d.load_case(write_valid_case(tmp_path_factory.mktemp("case2"),
                                                 TWO_FAMILIES))


@pytest.fixture(scope="session")
def dask_client():
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                                       dashboard_address=":0")
    client = distributed.Client(cluster)
    yield client
    client.close()
    cluster.close()
