"""The executor contract of evidence1d.parallel and run(executor=...): jobs receive the joint
problem (which must survive pickling), and the same seed gives the same numbers on our own
process pool, a concurrent.futures pool and a Dask LocalCluster."""
from __future__ import annotations

import concurrent.futures as cf
import multiprocessing as mp
import pickle

import numpy as np
import pytest

import evidence1d
from evidence1d.parallel import map_jobs, run_in_pool


def _square_plus(x, y):
    return x * x + y


def _fail_on_three(x):
    if x == 3:
        raise ValueError("three")
    return x


class _MapOnly:
    """An executor with nothing but ``map`` (the builtin one)."""

    def map(self, fn, *iterables):
        return map(fn, *iterables)


JOBS = [(i, 10 * i) for i in range(7)]
EXPECTED = [i * i + 10 * i for i in range(7)]


def test_pickled_problem_gives_the_same_log_likelihood(two_family_case, rng):
    """Jobs ship the joint problem: a copy through pickle must give the same numbers (its
    marginalised blocks were once keyed by id(), which a copy does not keep)."""
    for name in two_family_case.models:
        problem = two_family_case.problem(name)
        assert problem.blocks, "the test needs marginalised nuisances"
        theta = problem.prior_transform(rng.random((6, len(problem.names))))
        copy = pickle.loads(pickle.dumps(problem))
        np.testing.assert_array_equal(copy.log_likelihood(theta),
                                      problem.log_likelihood(theta))
        assert copy.term_sizes() == problem.term_sizes()


@pytest.mark.parametrize("kind", ["threads", "processes", "mp_pool", "map_only"])
def test_map_jobs_any_executor(kind):
    seen = []
    if kind == "threads":
        with cf.ThreadPoolExecutor(2) as ex:
            out = map_jobs(ex, _square_plus, JOBS, on_result=seen.append)
    elif kind == "processes":
        with cf.ProcessPoolExecutor(2, mp_context=mp.get_context("fork")) as ex:
            out = map_jobs(ex, _square_plus, JOBS, on_result=seen.append)
    elif kind == "mp_pool":
        with mp.get_context("fork").Pool(2) as pool:
            out = map_jobs(pool, _square_plus, JOBS, on_result=seen.append)
    else:
        out = map_jobs(_MapOnly(), _square_plus, JOBS, on_result=seen.append)
    assert out == EXPECTED                       # job order, whatever the completion order
    assert sorted(seen) == sorted(EXPECTED)      # every result reported once


def test_map_jobs_dask(dask_client):
    seen = []
    assert map_jobs(dask_client, _square_plus, JOBS, on_result=seen.append) == EXPECTED
    assert sorted(seen) == sorted(EXPECTED)
    assert run_in_pool(_square_plus, JOBS, 1, executor=dask_client) == EXPECTED


def test_map_jobs_raises_the_jobs_error():
    with cf.ThreadPoolExecutor(2) as ex:
        with pytest.raises(ValueError, match="three"):
            map_jobs(ex, _fail_on_three, [(i,) for i in range(6)])
    with pytest.raises(TypeError, match="submit"):
        map_jobs(object(), _square_plus, JOBS)


def _numbers(res):
    return {n: (m.evidence.log_z, m.evidence.log_z_err, m.posterior.samples.tolist())
            for n, m in res.models.items()}, res.comparison.p_one_dimensional


@pytest.fixture(scope="module")
def reference_run(two_family_case):
    return evidence1d.run(two_family_case, seed=5, progress=False, figures=False,
                          workers=1, budget=False)


def test_same_numbers_on_a_process_pool_executor(two_family_case, reference_run):
    with cf.ProcessPoolExecutor(2, mp_context=mp.get_context("fork")) as ex:
        res = evidence1d.run(two_family_case, seed=5, progress=False, figures=False,
                             budget=False, executor=ex)
    assert _numbers(res) == _numbers(reference_run)


def test_same_numbers_on_dask(two_family_case, reference_run, dask_client):
    res = evidence1d.run(two_family_case, seed=5, progress=False, figures=False,
                         budget=False, executor=dask_client)
    assert _numbers(res) == _numbers(reference_run)


def test_case_replace_makes_variants_without_files(two_family_case, tmp_path,
                                                   monkeypatch):
    monkeypatch.chdir(tmp_path)
    case = two_family_case
    chi = case.datasets[1]
    v = case.replace(data={"chi": (2 * chi.y, chi.err)}, sampler={"steps": 10},
                     priors={"spinon_continuum":
                             {"J": {"kind": "uniform", "lower": 0.5, "upper": 2.0}}},
                     models=["spinon_continuum"], seed=3)
    assert list(v.models) == ["spinon_continuum"] and v.seed == 3
    assert not any(tmp_path.iterdir())
    np.testing.assert_array_equal(v.datasets[1].y, 2 * chi.y)
    np.testing.assert_array_equal(case.datasets[1].y, chi.y)     # the original is unchanged
    assert v.sampler["steps"] == 10 and case.sampler["steps"] == 40
    assert v.models["spinon_continuum"].priors["J"].upper == 2.0
    # the variant's likelihood sees the new data: doubling χ changes the χ term only
    p0, p1 = case.problem("spinon_continuum"), v.problem("spinon_continuum")
    theta = p0.prior_transform(np.full((1, len(p0.names)), 0.5))
    t0, t1 = p0.log_likelihood_terms(theta), p1.log_likelihood_terms(theta)
    assert t0["map"] == t1["map"] and t0["heat"] == t1["heat"]
    assert t0["chi"] != t1["chi"]
    with pytest.raises(evidence1d.InputError, match="not a model of the variant"):
        case.replace(models=["spinon_continuum"], priors={"paramagnon": {}})
    with pytest.raises(evidence1d.InputError, match="errors > 0"):
        case.replace(data={"chi": (chi.y, 0 * chi.err)})
