"""Coupled chains on pure chain data: the Savage–Dickey ratio favours J_⊥ = 0.

The data are the suite's exact two-spinon chain at 0.3 K (:func:`scenarios.chain_zero_temperature`,
Karbach et al., Phys. Rev. B 55, 12510 (1997), written independently of evidence1d's
kernels).  The coupled-chains family contains the spinon family at J_⊥ = 0, so on chain data
the posterior of J_⊥ should pile up at 0: the Savage–Dickey density ratio
p(J_⊥ = 0 | data)/π(J_⊥ = 0) (Dickey, Ann. Math. Stat. 42, 204 (1971)) must exceed 1, and the
spinon family must not lose to it (Occam's razor: the extra parameter buys nothing).
"""
from __future__ import annotations

import numpy as np
import pytest

import evidence1d
import generators as G
import scenarios as S


@pytest.mark.slow
def test_savage_dickey_favours_no_interchain_coupling_on_chain_data(tmp_path, seed):
    scen, spectra, chi, heat, T = S.chain_zero_temperature()
    scen.extra_models = ("coupled_chains",)
    path = G.write_case(tmp_path / "chain", scen, spectra, chi, heat,
                        np.random.default_rng(seed), temperature=T)
    case = evidence1d.load_case(path)
    res = evidence1d.run(case, quick=True, progress=False, figures=False, workers=2,
                         models=["spinon_continuum", "coupled_chains"])
    sd = res.models["coupled_chains"].savage_dickey
    assert sd["parameter"] == "J_perp"
    assert sd["ln_bf_nested_vs_full"] is not None
    assert sd["ln_bf_nested_vs_full"] - 2 * sd["ln_bf_err"] > 0, sd
    lz = {n: (m.evidence.log_z, m.evidence.log_z_err) for n, m in res.models.items()}
    (a, ea), (b, eb) = lz["spinon_continuum"], lz["coupled_chains"]
    assert a - b > -3 * np.hypot(ea, eb), lz
    near = sd["near_limit"]["J_perp/J"]
    assert near["p_below"]["0.05"] > 0.5, near
