"""The Python API: load_case, parameter names, log-likelihood and prior transform shapes,
and the simulator round trip."""
from __future__ import annotations

import pickle

import numpy as np
import pytest

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.simulate import NoiseModel, simulate_case

MODELS = "  - gapped_spin_wave\n  - paramagnon"


@pytest.fixture
def case(tmp_path):
    return evidence1d.load_case(write_valid_case(tmp_path / "c",
                                                 CASE_YAML.replace("  - spinon_continuum", MODELS)))


NUISANCES = ["chi0", "c_imp", "gamma_e", "beta_lattice", "map:scale", "map:background",
             "map:slope"]


def test_parameter_names_physical_then_nuisance(tmp_path):
    text = CASE_YAML.replace("  - spinon_continuum", MODELS).replace(
        "sampler: {", "sampler: {marginalise: false, ")
    case = evidence1d.load_case(write_valid_case(tmp_path / "c", text))
    names = case.parameter_names("gapped_spin_wave")
    # the damping ratio is sampled by the card's default prior
    assert names[:5] == ["J", "J_perp", "delta", "damping", "g"]
    assert names[5:] == NUISANCES
    assert case.marginalised_names("gapped_spin_wave") == []


def test_marginalised_nuisances_are_not_sampled(case):
    assert case.parameter_names("gapped_spin_wave") == ["J", "J_perp", "delta", "damping", "g"]
    assert sorted(case.marginalised_names("gapped_spin_wave")) == sorted(NUISANCES)


def test_shapes(case, rng):
    m = "paramagnon"
    n = len(case.parameter_names(m))
    u = rng.random((7, n))
    th = case.prior_transform(m, u)
    assert th.shape == (7, n)
    assert case.prior_transform(m, u[0]).shape == (n,)
    ll = case.log_likelihood(m, th)
    assert ll.shape == (7,) and np.all(np.isfinite(ll))
    assert isinstance(case.log_likelihood(m, th[0]), float)
    assert case.log_likelihood(m, th[0]) == pytest.approx(ll[0], rel=1e-12)


def test_outside_support_is_minus_inf(case, rng):
    m = "gapped_spin_wave"
    th = case.prior_transform(m, rng.random(len(case.parameter_names(m))))
    th[0] = -1.0          # J < 0 is outside its log-uniform prior
    assert case.log_likelihood(m, th) == -np.inf
    th[0] = np.nan
    assert case.log_likelihood(m, th) == -np.inf


def test_case_pickles(case, rng):
    m = "paramagnon"
    th = case.prior_transform(m, rng.random((3, len(case.parameter_names(m)))))
    case2 = pickle.loads(pickle.dumps(case))
    np.testing.assert_array_equal(case.log_likelihood(m, th), case2.log_likelihood(m, th))


def test_gaussian_likelihood_normalisation(tmp_path):
    # Gaussian log-likelihood with full normalisation: at the truth with zero noise the
    # value is −Σ ln(σ √(2π)) (analytic); nuisances sampled, not marginalised
    text = CASE_YAML.replace("  - spinon_continuum", MODELS).replace(
        "sampler: {", "sampler: {marginalise: false, ")
    case = evidence1d.load_case(write_valid_case(tmp_path / "c", text))
    m = "paramagnon"
    prob = case.problem(m)
    th = prob.prior_transform(np.full(len(prob.names), 0.5))
    pred = prob.predict(th[None])
    for ds in case.datasets:
        object.__setattr__(ds, "y", pred[ds.name][0].copy())
    expect = -sum(np.sum(np.log(ds.err * np.sqrt(2 * np.pi))) for ds in case.datasets)
    assert prob.log_likelihood(th) == pytest.approx(expect, rel=1e-10)


def test_simulate_recovers_truth_at_high_signal(case, rng):
    truth = {"chi_uniform": 0.01, "theta_sf": 20.0, "xi_par": 6.0, "xi_perp": 1.0,
             "gamma0": 2.0, "g": 2.1, "map:scale": 5.0, "chi0": 1e-4}
    sims = simulate_case(case, "paramagnon", truth, NoiseModel(exposure=1e6, relative=1e-4),
                         rng)
    prob = case.problem("paramagnon")
    vec = np.array([truth.get(n, 0.0) if not n.endswith("scale") else truth[n]
                    for n in prob.full_names])
    pred = prob.predict(vec[None])
    for ds in case.datasets:
        y, err = sims[ds.name]
        assert np.all(err > 0)
        np.testing.assert_allclose(y, pred[ds.name][0], rtol=0.02, atol=5 * err.max())


def test_unknown_truth_parameter(case, rng):
    with pytest.raises(evidence1d.InputError, match="unknown parameter 'Jx'"):
        simulate_case(case, "paramagnon", {"Jx": 1.0}, NoiseModel(), rng)


def test_numbers_written_without_a_dot_mean_the_same_everywhere(tmp_path):
    # YAML 1.1 (PyYAML) reads 1e-1 (no dot) as the string '1e-1'; every numeric setting goes
    # through one number parser, so a prior, the resolution, a powder setting and the sampler
    # read it as the number it spells.
    import yaml
    assert yaml.safe_load("x: 1e-1")["x"] == "1e-1"            # the YAML 1.1 behaviour
    plain = evidence1d.load_case(write_valid_case(tmp_path / "a"))
    text = (CASE_YAML.replace("resolution: {fwhm: [0.1, 0.02]}",
                              "resolution: {fwhm: [1e-1, 2e-2]}\n"
                              "    powder_average: {tolerance: 5e-3, max_grid: 6.4e1}")
            .replace("sd: 0.05}", "sd: 5e-2}")
            .replace("sampler: {", "sampler: {ess_fraction: 5e-1, steps: 2e2, "))
    text = text.replace("steps: 200, ", "")
    spelled = evidence1d.load_case(write_valid_case(tmp_path / "b", text))
    assert spelled.datasets[0].options["resolution"]["fwhm"] == [0.1, 0.02]
    assert spelled.datasets[0].options["powder_average"]["tolerance"] == 5e-3
    assert spelled.datasets[0].options["powder_average"]["max_grid"] == 64
    assert spelled.sample.g_prior == plain.sample.g_prior
    assert spelled.sampler == {**plain.sampler, "ess_fraction": 0.5}
    assert isinstance(spelled.sampler["steps"], int) and spelled.sampler["steps"] == 200
    theta = np.array(plain.prior_transform("spinon_continuum",
                                           np.full(len(plain.parameter_names(
                                               "spinon_continuum")), 0.4)))
    assert spelled.log_likelihood("spinon_continuum", theta) == \
        plain.log_likelihood("spinon_continuum", theta)


def test_sampler_and_evidence_settings_share_the_engine_of_the_case_file():
    from evidence1d.errors import InputError
    from evidence1d.inference.evidence import check_evidence_settings
    from evidence1d.inference.posterior import sample_posterior
    from evidence1d.inference.priors import JointPrior, Uniform
    prior = JointPrior(["a", "b"], [Uniform(0, 1), Uniform(0, 1)])
    assert check_evidence_settings(prior, "2e1", 4.0, "5e-1") == {
        "n_particles": 20, "n_islands": 4, "target_cess": 0.5, "moved": 0.9}
    for args, key, words in [((prior, 7, 4), "n_particles", "integer >= 8 (2 m + 4"),
                             ((prior, 20, 1), "n_islands", "integer >= 2"),
                             ((prior, 20, 4, 1.0), "target_cess", "number in (0, 1)"),
                             ((prior, 20, 4, 0.5, "most"), "moved", "finite number")]:
        with pytest.raises(InputError) as info:
            check_evidence_settings(*args)
        assert info.value.key == key and words in str(info.value), str(info.value)
    rng = np.random.default_rng(0)
    for kw, key in [({"n_steps": 1}, "n_steps"), ({"n_steps": 10, "n_walkers": 5}, "n_walkers"),
                    ({"n_steps": 10, "checkpoint_every": 0}, "checkpoint_every")]:
        with pytest.raises(InputError) as info:
            sample_posterior(lambda t: np.zeros(len(t)), prior, rng=rng, progress=False, **kw)
        assert info.value.key == key and "\n" not in str(info.value)


def test_one_dimensional_limits_key(tmp_path):
    """``one_dimensional_limits`` is exclude by default, include on request, and a bad
    value is a one-line error naming the key; the verdict block says whether the nested
    limits count."""
    from types import SimpleNamespace

    from evidence1d.inference.compare import compare_models
    from evidence1d.inference.nested_limits import with_nested_limits
    from evidence1d.report.verdict import _one_dimensional_block
    assert evidence1d.load_case(write_valid_case(tmp_path / "a")).one_dimensional_limits \
        == "exclude"
    case = evidence1d.load_case(write_valid_case(
        tmp_path / "b", CASE_YAML + "one_dimensional_limits: include\n"))
    assert case.one_dimensional_limits == "include"
    assert case.replace(seed=3).one_dimensional_limits == "include"
    with pytest.raises(evidence1d.InputError) as exc:
        evidence1d.load_case(write_valid_case(tmp_path / "c",
                                              CASE_YAML + "one_dimensional_limits: all\n"))
    assert "one_dimensional_limits" in str(exc.value) and "\n" not in str(exc.value)
    cmp_ = compare_models({"a": (0.0, 0.1, True), "b": (1.0, 0.1, False)})
    models = {"a": SimpleNamespace(savage_dickey=None),
              "b": SimpleNamespace(savage_dickey={"parameter": "J_perp", "value": 0.0,
                                                  "ln_bf_nested_vs_full": 1.0,
                                                  "ln_bf_err": 0.1})}
    off = _one_dimensional_block(cmp_, models)
    on = _one_dimensional_block(with_nested_limits(cmp_, {"b": (1.0, 0.1)}), models)
    assert off["nested_limits"][0]["counted"] is False and "are not counted" in \
        off["definition"]
    assert on["nested_limits"][0]["counted"] is True and "are counted" in on["definition"]
    assert on["p_with_nested_limits"] == pytest.approx(off["p_with_nested_limits"])


def _damping_case(tmp_path, text):
    from casefactory import write_valid_case
    return evidence1d.load_case(write_valid_case(tmp_path, text))


def test_thermal_damping_is_sampled_only_where_a_spectrum_is_warm(tmp_path):
    """The chain families' damping acts only on spectra at T > 0 (Family.thermal_parameters):
    sampled with a spectrum, held at 0 in a case of thermodynamics only, sampled again when
    the case gives it a prior of its own."""
    warm = _damping_case(tmp_path / "warm", CASE_YAML)
    assert "thermal_damping" in warm.parameter_names("spinon_continuum")
    head, rest = CASE_YAML.split("  - name: map\n", 1)
    cold_text = head + "  - name: chi\n" + rest.split("  - name: chi\n", 1)[1]
    cold = _damping_case(tmp_path / "cold", cold_text)
    assert "thermal_damping" not in cold.parameter_names("spinon_continuum")
    prob = cold.problem("spinon_continuum")
    theta = np.array([[1.0, 1.0, 2.1]])
    assert prob.params(theta)["thermal_damping"][0, 0] == 0.0
    own = cold_text.replace("  - spinon_continuum\n", "  - {name: spinon_continuum, priors: "
                            "{thermal_damping: {kind: uniform, lower: 0, upper: 1}}}\n")
    assert "thermal_damping" in _damping_case(tmp_path / "own", own).parameter_names(
        "spinon_continuum")
