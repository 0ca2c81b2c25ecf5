"""Coupled chains on pure chain data: how close to one dimension the posterior stays.

The data are the suite's exact two-spinon chain at 0.3 K (:func:`scenarios.chain_zero_temperature`,
Karbach et al., Phys. Rev. B 55, 12510 (1997), written independently of evidence1d's
kernels).  The coupled-chains family contains the spinon family at J_⊥ = 0.  On chain data
its posterior must stay near one dimension (J_⊥/J below a few per cent), and ideally the
Savage–Dickey density ratio p(J_⊥ = 0 | data)/π(J_⊥ = 0) (Dickey, Ann. Math. Stat. 42, 204
(1971)) exceeds 1 — which it does not today (see the expected failure below).
"""
from __future__ import annotations

import numpy as np
import pytest

import evidence1d
import generators as G
import scenarios as S


@pytest.fixture(scope="module")
def chain_fit(tmp_path_factory):
    scen, spectra, chi, heat, T = S.chain_zero_temperature()
    scen.extra_models = ("coupled_chains",)
    folder = tmp_path_factory.mktemp("chain")
    path = G.write_case(folder, scen, spectra, chi, heat, np.random.default_rng(4242),
                        temperature=T)
    case = evidence1d.load_case(path)
    return evidence1d.run(case, quick=True, progress=False, figures=False, workers=2,
                          models=["spinon_continuum", "coupled_chains"])


@pytest.mark.slow
def test_posterior_stays_near_one_dimension_on_chain_data(chain_fit):
    sd = chain_fit.models["coupled_chains"].savage_dickey
    assert sd["parameter"] == "J_perp"
    near = sd["near_limit"]
    assert near["J_perp/J"]["p_below"]["0.05"] > 0.9, near
    # measured: median k_B T_N / J = 0.028 (T_N = 0.31 K at J = 0.96 meV)
    assert near["kT_N/J"]["p_below"]["0.05"] > 0.5, near


@pytest.mark.slow
@pytest.mark.xfail(strict=True, reason=(
    "measured (quick settings, seed 4242): the coupled family wins by 27 nats (ln Z -495.8 "
    "+- 1.2 against -523.3 +- 0.2) with J_perp = 0.0086 meV = 0.009 J and its T_N = 0.31 K "
    "just above the 0.3 K of the data, so the ordered phase's low-energy modes near q = pi, "
    "added on top of the full chain continuum (the model does not take their weight out "
    "of it), absorb the spinon family's misfit there; no posterior mass at J_perp = 0 "
    "(Savage-Dickey ln BF = -inf)"))
def test_savage_dickey_favours_no_interchain_coupling_on_chain_data(chain_fit):
    sd = chain_fit.models["coupled_chains"].savage_dickey
    assert sd["ln_bf_nested_vs_full"] is not None
    assert sd["ln_bf_nested_vs_full"] - 2 * sd["ln_bf_err"] > 0, sd
    lz = {n: (m.evidence.log_z, m.evidence.log_z_err) for n, m in chain_fit.models.items()}
    (a, ea), (b, eb) = lz["spinon_continuum"], lz["coupled_chains"]
    assert a - b > -3 * np.hypot(ea, eb), lz
