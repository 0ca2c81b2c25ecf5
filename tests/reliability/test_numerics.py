"""Numerical safety: −inf (never NaN, never an exception) outside the support, finite inside;
detailed balance safe for T → 0 and large E/k_BT; predictions continuous through Δ = 1 and
as J_⊥ → 0."""
from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import evidence1d
from casefactory import CASE_YAML, write_valid_case
from evidence1d.families import SpectralPoints
from evidence1d.physics.neutron import K_B_MEV, boltzmann_ratio, bose_energy_factor

MODELS = ("spinon_continuum", "gapped_spin_wave", "paramagnon")
FAST = settings(max_examples=30, deadline=None,
                suppress_health_check=[HealthCheck.function_scoped_fixture])


@pytest.fixture(scope="module")
def case(tmp_path_factory):
    text = CASE_YAML.replace("  - spinon_continuum", "".join(f"  - {m}\n" for m in MODELS)
                             .rstrip("\n"))
    return evidence1d.load_case(write_valid_case(tmp_path_factory.mktemp("num") / "c", text))


def _unit_rows(n_rows, n):
    # points of the closed unit cube, corners and faces included
    edge = st.sampled_from([0.0, 1.0, 1e-12, 1.0 - 1e-12])
    cell = st.one_of(st.floats(0.0, 1.0), edge)
    return st.lists(st.lists(cell, min_size=n, max_size=n), min_size=1, max_size=n_rows)


@pytest.mark.parametrize("model", MODELS)
@FAST
@given(data=st.data())
def test_likelihood_finite_inside_the_support(case, model, data):
    n = len(case.parameter_names(model))
    u = np.array(data.draw(_unit_rows(4, n)))
    theta = case.prior_transform(model, u)
    assert np.all(np.isfinite(case.log_prior(model, theta)))
    ll = case.log_likelihood(model, theta)
    assert ll.shape == (len(u),) and np.all(np.isfinite(ll)), (theta, ll)
    # the predictions themselves are finite, not only the masked likelihood
    for name, y in case.problem(model).predict(theta).items():
        assert np.all(np.isfinite(y)), (model, name, theta)


def _outside(prior, theta, j, how, size):
    """theta with column j moved outside the prior support of that parameter."""
    lo, hi = prior.free_priors[j].support
    x = theta.copy()
    if how == "nan":
        x[:, j] = np.nan
    elif how == "+inf":
        x[:, j] = np.inf
    elif how == "-inf":
        x[:, j] = -np.inf
    elif how == "below" and np.isfinite(lo):
        x[:, j] = lo - size * max(abs(lo), 1.0)
    elif how == "above" and np.isfinite(hi):
        x[:, j] = hi + size * max(abs(hi), 1.0)
    else:
        return None
    return x


@pytest.mark.parametrize("model", MODELS)
@FAST
@given(data=st.data())
def test_likelihood_minus_inf_outside_the_support(case, model, data):
    names = case.parameter_names(model)
    prior = case.problem(model).prior
    u = np.array(data.draw(_unit_rows(3, len(names))))
    theta = case.prior_transform(model, u)
    j = data.draw(st.integers(0, len(names) - 1))
    how = data.draw(st.sampled_from(["nan", "+inf", "-inf", "below", "above"]))
    size = data.draw(st.sampled_from([1e-9, 1e-3, 1.0, 1e6, 1e300]))
    x = _outside(prior, theta, j, how, size)
    if x is None:
        return          # an unbounded side (e.g. a normal prior on g): nothing outside
    with np.errstate(all="raise"):   # no floating-point warning either
        ll = case.log_likelihood(model, x)
        lpost = case.problem(model).log_posterior(x)
    assert np.all(ll == -np.inf), (names[j], how, ll)
    assert np.all(lpost == -np.inf), (names[j], how, lpost)
    with np.errstate(invalid="ignore"):
        assert np.all(case.log_prior(model, x) == -np.inf)


# -------------------------------------------------------------------- detailed balance
@FAST
@given(E=st.floats(-1e4, 1e4), T=st.one_of(st.just(0.0), st.floats(5e-324, 1e3)))
def test_detailed_balance_never_overflows(E, T):
    f = bose_energy_factor(E, T)
    r = boltzmann_ratio(E, T)
    assert np.isfinite(f) and f >= 0.0
    assert np.isfinite(r) and r >= 0.0
    kT = K_B_MEV * T            # 0 for subnormal T
    x = E / kT if kT > 0 else np.copysign(np.inf, E)
    if abs(x) < 600.0 and E != 0.0:
        # S(-E)/S(E) = exp(-E/k_BT): Lovesey, Theory of Neutron Scattering (1984), Eq. 4.20
        np.testing.assert_allclose(bose_energy_factor(-E, T), f * np.exp(-x), rtol=1e-10)
    if T < 1e-9 and abs(E) > 1e-3:
        # T -> 0: E [n(E) + 1] -> max(E, 0) (analytic limit of E / (1 - exp(-E/k_BT)))
        assert f == pytest.approx(max(E, 0.0), rel=1e-12, abs=1e-300)


def _points(temperature, energy):
    n = energy.size
    Q_par = np.linspace(0.05, 2.0, n)
    return SpectralPoints(Q_par=Q_par, Q_a=np.full(n, 0.3), Q_b=np.zeros(n), d=3.0,
                          a_perp=7.0, b_perp=7.5, energy=energy, sigma=np.full(n, 0.05),
                          temperature=temperature)


def _col(v):
    return np.array([[float(v)]])


def _physical_point(case, model, u):
    prob = case.problem(model)
    theta = case.prior_transform(model, np.asarray(u, float))
    return {k: v for k, v in prob.prior.expand(theta[None, :]).items()
            if k in prob.family.parameters}


@pytest.mark.parametrize("model", MODELS)
@FAST
@given(data=st.data())
def test_spectrum_finite_for_t_to_zero_and_large_e_over_kt(case, model, data):
    n = len(case.parameter_names(model))
    u = data.draw(st.lists(st.floats(0.0, 1.0), min_size=n, max_size=n))
    p = _physical_point(case, model, u)
    fam = case.problem(model).family
    T = data.draw(st.sampled_from([0.0, 1e-12, 1e-6, 1e-3, 0.05]))
    emax = data.draw(st.sampled_from([3.0, 50.0, 500.0]))
    E = np.linspace(-emax, emax, 41)        # E/k_BT up to ~1e17 and down to -1e17
    s = fam.spectrum(p, _points(T, E))
    assert s.shape == (1, E.size) and np.all(np.isfinite(s))
    if T > 0:
        # continuous as T -> 0: at k_BT far below every energy scale nothing changes.  At
        # 1e-12 K (k_BT = 8.6e-17 meV) that holds for every family; at 1e-6 K it does not
        # for the zone-centre paramagnon at a prior corner, whose relaxation rate Γ_Q -> 0
        # as Q -> 0 (conserved magnetisation; floored at 1e-12 meV) lies below k_BT, so its
        # quasi-elastic weight ~ k_BT/Γ_Q is physics, not a discontinuity (found by this
        # test in CI on 2026-12-05: 1.0e-6 relative at E = 3σ).  Measured at 1e-12 K over
        # 200 parameter draws (prior corners included) x 3 energy ranges per family: within
        # 1e-6 relative plus 1e-10 of the largest value (round-off of values that cancel).
        s0 = fam.spectrum(p, _points(0.0, E))
        if T <= 1e-12:
            np.testing.assert_allclose(s, s0, rtol=1e-6, atol=1e-10 * np.max(np.abs(s0)))


# ---------------------------------------------------------------- continuity at Δ = 1
@FAST
@given(J=st.floats(0.3, 5.0), T=st.floats(0.05, 100.0), side=st.sampled_from([-1.0, 1.0]))
def test_spinon_predictions_continuous_through_isotropic_point(case, J, T, side):
    fam = case.problem("spinon_continuum").family
    E = np.linspace(0.0, 3.5 * J, 40)
    Tg = np.geomspace(0.05, 300.0, 12)

    def predictions(delta):
        p = {"J": _col(J), "delta": _col(delta), "g": _col(2.1)}
        return [fam.spectrum(p, _points(T, E)), fam.susceptibility(p, Tg, "powder"),
                fam.susceptibility(p, Tg, "z"), fam.heat_capacity(p, Tg), fam.entropy(p, Tg)]

    at_one = predictions(1.0)
    near = predictions(1.0 + side * 1e-6)
    for a, b in zip(near, at_one):
        assert np.all(np.isfinite(a))
        # continuity: a step of 1e-6 in Δ moves every prediction by < 1e-3 of its scale
        assert np.max(np.abs(a - b)) <= 1e-3 * np.max(np.abs(b)) + 1e-300


# -------------------------------------------------------------- continuity as J_⊥ -> 0
@FAST
@given(J=st.floats(0.3, 5.0), delta=st.floats(1.0, 1.5), T=st.floats(0.05, 50.0))
def test_spin_wave_predictions_continuous_as_interchain_coupling_vanishes(case, J, delta, T):
    fam = case.problem("gapped_spin_wave").family
    E = np.linspace(0.0, 4.0 * J, 40)
    Tg = np.geomspace(0.05, 300.0, 12)

    def predictions(jp):
        p = {"J": _col(J), "J_perp": _col(jp), "delta": _col(delta), "damping": _col(0.0),
             "g": _col(2.1)}
        return [fam.spectrum(p, _points(T, E)), fam.susceptibility(p, Tg, "powder"),
                fam.heat_capacity(p, Tg), fam.entropy(p, Tg)]

    zero = predictions(0.0)
    steps = (1e-6, 1e-9, 1e-12, 1e-15)
    diffs = np.array([[np.max(np.abs(a - b)) / np.max(np.abs(b))
                       for a, b in zip(predictions(jp), zero)] for jp in steps])
    assert np.all(np.isfinite(diffs))
    # continuity: the change shrinks as J_⊥ -> 0 and is negligible at J_⊥ = 1e-15 meV
    assert np.all(diffs[1:] <= diffs[:-1] * 1.01 + 1e-12), diffs
    assert np.all(diffs[-1] <= 1e-7), diffs
