"""Unit tests of evidence1d.physics.chain_thermo and of the table-building script."""
from __future__ import annotations

import importlib.util
from pathlib import Path

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from evidence1d.errors import InputError
from evidence1d.physics.chain_thermo import (activation_energy, luttinger_parameter,
                                             luttinger_velocity, xxz_thermodynamics)

ROOT = Path(__file__).resolve().parents[2]
KEYS = ("chi_star", "chi_star_perp", "c_over_r", "s_over_r")


def _script():
    spec = importlib.util.spec_from_file_location("build_xxz_table",
                                                  ROOT / "scripts" / "build_xxz_table.py")
    mod = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(mod)
    return mod


def _dense_ring(n, delta):
    """Full 2^n Hamiltonian of the periodic XXZ ring by Kronecker products (textbook)."""
    sx = np.array([[0, 0.5], [0.5, 0]])
    sy = np.array([[0, -0.5j], [0.5j, 0]])
    sz = np.diag([0.5, -0.5])

    def site(op, i):
        m = np.eye(1)
        for j in range(n):
            m = np.kron(m, op if j == i else np.eye(2))
        return m
    x = [site(sx, i) for i in range(n)]
    y = [site(sy, i) for i in range(n)]
    z = [site(sz, i) for i in range(n)]
    h = sum(x[i] @ x[(i + 1) % n] + y[i] @ y[(i + 1) % n] + delta * z[i] @ z[(i + 1) % n]
            for i in range(n))
    return h, sum(x), sum(z)


@pytest.mark.parametrize("delta", [0.0, 0.6, 1.0, 2.5])
def test_sector_diagonalisation_matches_dense_ring(delta):
    # Kubo (1957) static susceptibility and canonical C, S from the full dense spectrum of an
    # 8-site ring: an independent computation without symmetry sectors.
    n, t = 8, np.array([0.07, 0.3, 1.0, 4.0])
    h, mx, mz = _dense_ring(n, delta)
    w, v = np.linalg.eigh(h)
    w -= w.min()
    ref = []
    for tt in t:
        p = np.exp(-w / tt)
        z = p.sum()
        de = w[None, :] - w[:, None]
        with np.errstate(divide="ignore", invalid="ignore"):
            f = np.where(np.abs(de) < 1e-9, p[:, None] / tt, (p[:, None] - p[None, :]) / de)
        chi = [(np.abs(v.conj().T @ m @ v) ** 2 * f).sum() / z / n for m in (mz, mx)]
        e1, e2 = (p * w).sum() / z, (p * w * w).sum() / z
        ref.append(chi + [(e2 - e1 ** 2) / tt ** 2 / n, (np.log(z) + e1 / tt) / n])
    mod = _script()
    got = mod.ring_thermodynamics(mod.ring_spectrum(mod.prepare_ring(n), delta), t)
    np.testing.assert_allclose(np.array([got[k] for k in KEYS]).T, np.array(ref),
                               rtol=1e-10, atol=1e-13)


def test_broadcast_shapes_and_keys():
    t = np.geomspace(0.01, 100.0, 7)
    delta = np.array([[0.0], [0.9], [2.2]])
    out = xxz_thermodynamics(t, delta)
    assert set(out) == set(KEYS)
    for k in KEYS:
        assert out[k].shape == (3, 7)
    # batch equals loop
    for i, d in enumerate(delta[:, 0]):
        single = xxz_thermodynamics(t, d)
        for k in KEYS:
            np.testing.assert_allclose(out[k][i], single[k], rtol=1e-12)


@pytest.mark.parametrize("bad_t, bad_delta", [(0.0, 1.0), (-1.0, 1.0), (np.nan, 1.0),
                                              (1.0, -0.1), (1.0, 3.5), (1.0, np.inf)])
def test_invalid_input_raises_input_error(bad_t, bad_delta):
    with pytest.raises(InputError):
        xxz_thermodynamics(np.array([bad_t]), np.array([bad_delta]))


@settings(max_examples=100, deadline=None)
@given(log_t=st.floats(np.log(1e-4), np.log(1e6)), delta=st.floats(0.0, 3.0))
def test_finite_and_positive_everywhere(log_t, delta):
    out = xxz_thermodynamics(np.array([np.exp(log_t)]), np.array([[delta]]))
    for k in KEYS:
        assert np.all(np.isfinite(out[k]))
        assert np.all(out[k] >= 0.0)
    # entropy never exceeds the free-spin value R ln 2 (second law; common practice)
    assert out["s_over_r"][0, 0] <= np.log(2.0) * (1 + 1e-6)


def test_curie_and_high_temperature_limits():
    # Curie law χ* = 1/(4t) and S → R ln 2 for free S = 1/2 spins; first corrections from the
    # β expansion of Tr e^{-βH} (Curie–Weiss θ = −J/2 at Δ = 1; common practice).
    t = np.array([2e3, 9e3, 1.1e4, 1e5])
    delta = np.array([[0.0], [1.0], [3.0]])
    out = xxz_thermodynamics(t, delta)
    np.testing.assert_allclose(out["chi_star"], 0.25 / t * (1 - 0.5 * delta / t), rtol=1e-6)
    np.testing.assert_allclose(out["chi_star_perp"], 0.25 / t * (1 - 0.5 / t) + 0 * delta,
                               rtol=1e-6)
    np.testing.assert_allclose(out["c_over_r"], (2 + delta ** 2) / (16 * t ** 2), rtol=1e-3)
    np.testing.assert_allclose(out["s_over_r"], np.log(2.0), rtol=1e-6)


def test_su2_symmetry_at_heisenberg_point():
    # At Δ = 1 the Hamiltonian is SU(2) invariant, so χ_xx = χ_zz exactly.
    t = np.geomspace(0.005, 200.0, 60)
    out = xxz_thermodynamics(t, 1.0)
    np.testing.assert_allclose(out["chi_star_perp"], out["chi_star"], rtol=2e-3)


def test_smooth_in_t_and_delta_no_jumps():
    # On a grid much finer than the table, log-log slopes stay bounded (a jump of 0.3 % in a
    # value would give a slope > 4 over one step here) and change by less than 1 between
    # neighbouring points (no kinks), in t and in Δ, across the joins between ring data and
    # low-temperature forms. The activation exponent ε_s/t is taken out first.
    log_t = np.linspace(np.log(0.02), np.log(50.0), 2001)
    delta = np.linspace(0.0, 3.0, 301)
    out_t = xxz_thermodynamics(np.exp(log_t), delta[::15, None])
    out_d = xxz_thermodynamics(np.exp(log_t[::100]), delta[:, None])
    eps = activation_energy(delta)
    for k in KEYS:
        lq = np.log(out_t[k])
        if k != "chi_star_perp":
            lq = lq + eps[::15, None] / np.exp(log_t)
        d1 = np.diff(lq, axis=1) / np.diff(log_t)
        assert np.max(np.abs(d1)) < 4.0, k
        assert np.max(np.abs(np.diff(d1, axis=1))) < 1.0, k
        ld = np.log(out_d[k])
        if k != "chi_star_perp":
            ld = ld + eps[:, None] / np.exp(log_t[::100])
        dd = np.diff(ld, axis=0) / np.diff(delta)[:, None]
        assert np.max(np.abs(dd)) < 60.0, k
        assert np.max(np.abs(np.diff(dd, axis=0))) < 2.0, k


def test_luttinger_liquid_constants():
    # u = π sin γ/(2γ), K = π/(2(π−γ)), Δ = cos γ (des Cloizeaux & Pearson 1962; Luther &
    # Peschel 1975): free fermions u = 1, K = 1; Heisenberg u = π/2, K = 1/2, χ0 = 1/π².
    np.testing.assert_allclose(luttinger_velocity([0.0, 1.0]), [1.0, np.pi / 2])
    np.testing.assert_allclose(luttinger_parameter([0.0, 1.0]), [1.0, 0.5])
    k, u = luttinger_parameter(1.0), luttinger_velocity(1.0)
    np.testing.assert_allclose(k / (np.pi * u), 1 / np.pi ** 2)


def test_activation_energy_is_half_des_cloizeaux_gaudin_gap():
    # E_g = J sinh φ Σ_n (−1)^n / cosh(nφ): 0.0865894 J at Δ = 1.5, 0.3898023 J at Δ = 2
    # (des Cloizeaux & Gaudin, J. Math. Phys. 7, 1384 (1966)); direct sum as a cross-check.
    np.testing.assert_allclose(2 * activation_energy([1.5, 2.0]), [0.0865894, 0.3898023],
                               rtol=2e-6)
    phi = np.arccosh(2.7)
    n = np.arange(-300, 301)
    direct = np.sinh(phi) * np.sum((-1.0) ** n / np.cosh(n * phi))
    np.testing.assert_allclose(2 * activation_energy(2.7), direct, rtol=1e-12)
    assert activation_energy(1.0) == 0.0 and activation_energy(0.4) == 0.0
    assert 0 < activation_energy(1.05) < 1e-5


def test_table_metadata_present():
    import json
    meta = json.loads((ROOT / "evidence1d/physics/tables/xxz_thermo.json").read_text())
    for key in ("method", "ring_sizes", "grid", "run_time_seconds", "date", "versions"):
        assert key in meta
    assert meta["ring_sizes"][-1] >= 16


def test_separable_and_pointwise_paths_agree():
    # The (n_sets, 1) × (n_points,) batch is interpolated separably; any other broadcast
    # pointwise. Both must give the same numbers.
    t = np.geomspace(3e-4, 2e4, 57)
    delta = np.linspace(0.0, 3.0, 13)[:, None]
    fast = xxz_thermodynamics(t, delta)
    tt, dd = np.broadcast_arrays(t, delta)
    slow = xxz_thermodynamics(np.ascontiguousarray(tt), np.ascontiguousarray(dd))
    for k in KEYS:
        np.testing.assert_allclose(fast[k], slow[k], rtol=1e-12)


def test_per_set_temperatures_equal_the_separable_path():
    # the family's batch: t = k_B T / J differs per set (n_sets, n), delta (n_sets, 1); the
    # pointwise path must equal the separable one set by set, including t below the table
    # (linear continuation) and above it (high-temperature series)
    rng = np.random.default_rng(2)
    delta = rng.uniform(0.0, 3.0, (9, 1))
    J = np.exp(rng.uniform(np.log(0.05), np.log(20.0), (9, 1)))
    t = np.geomspace(1e-5, 3e4, 40)[None, :] * (1.0 / J)
    batch = xxz_thermodynamics(t, delta)
    for i in range(9):
        single = xxz_thermodynamics(t[i], delta[i:i + 1])
        for k in KEYS:
            np.testing.assert_allclose(batch[k][i], single[k][0], rtol=1e-12, atol=0)
    eps = activation_energy(delta)
    assert eps.shape == delta.shape and np.all(eps[delta <= 1.0] == 0.0)


def test_asking_for_some_quantities_gives_the_same_numbers():
    # the family asks only for what a dataset needs; the values must not depend on that
    rng = np.random.default_rng(5)
    t = np.exp(rng.uniform(np.log(1e-7), np.log(3e4), (6, 30)))
    delta = rng.uniform(0.0, 3.0, (6, 1))
    for temps in (t, t[0]):                 # pointwise and separable paths
        full = xxz_thermodynamics(temps, delta)
        for keys in (("c_over_r",), ("s_over_r",), ("chi_star_perp", "chi_star")):
            part = xxz_thermodynamics(temps, delta, keys)
            assert tuple(part) == keys
            for k in keys:
                np.testing.assert_array_equal(part[k], full[k])
    with pytest.raises(ValueError):
        xxz_thermodynamics(t, delta, ("chi",))
