"""Kramers–Kronig transform of the spinon line shape (evidence1d.physics.coupled_chain_kk).

Checks against sources outside the kernel: adaptive quadrature (scipy.integrate.quad, with
its Cauchy weight for principal values); the closed-form real part of the T = 0 Müller shape
(Müller, Thomas, Beck & Bonner, PRB 24, 1429 (1981): χ'' = πA/√(ω² − ω_L²) on (ω_L, ω_T),
whose transform is elementary, Abramowitz & Stegun 3.3.21/3.3.23); and the complex
finite-temperature conformal form of the staggered susceptibility of the Heisenberg chain,
χ(ω) ∝ ρ(x₋)ρ(x₊), ρ(x) = Γ(1/4 − ix)/Γ(3/4 − ix), x± = (ω ± vk)/4πk_BT (Schulz, PRB 34, 6372
(1986); Bocquet, Essler, Tsvelik & Gogolin, PRB 64, 094425 (2001); both from memory),
evaluated here with scipy.special.loggamma.
"""
from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import integrate, special

from evidence1d.physics import coupled_chain as cc
from evidence1d.physics import coupled_chain_kk as kk
from evidence1d.physics import coupled_chain_kk_table as kk_table
from evidence1d.physics.chain import two_spinon_sheets
from evidence1d.units import K_B_MEV

J1, D1 = np.array([[1.0]]), np.array([[1.0]])


def _quad_cauchy(f, a, b, t):
    """P∫_a^b f(x)/(x − t) dx by quad (Cauchy weight when t is inside or on an end)."""
    if a <= t <= b:
        return integrate.quad(f, a, b, weight="cauchy", wvar=t, limit=200)[0]
    return integrate.quad(lambda x: f(x) / (x - t), a, b, limit=200)[0]


def test_cauchy_weights_are_exact_for_the_piecewise_linear_interpolant(rng):
    nodes = np.sinh(np.linspace(0.0, 3.0, 14))
    p = rng.normal(size=nodes.size)
    interp = lambda x: np.interp(x, nodes, p)                     # noqa: E731
    for t in (-0.7, 0.05, 0.9, nodes[5], 4.2, 12.0):
        got = kk.cauchy_weights(nodes, t) @ p
        if t == nodes[5]:                      # at a node: one principal value over all
            want = integrate.quad(interp, nodes[0], nodes[-1], weight="cauchy", wvar=t,
                                  limit=400)[0]
        else:
            want = sum(_quad_cauchy(interp, a, b, t) for a, b in zip(nodes[:-1], nodes[1:]))
        assert got == pytest.approx(want, rel=1e-8, abs=1e-10)
    for t in (0.3j, 1.0 + 0.2j):               # off the axis: real and imaginary parts
        w = kk.cauchy_weights(nodes, np.array(t)) @ p
        re = integrate.quad(lambda x: interp(x) * (x - t.real) / abs(x - t) ** 2,
                            nodes[0], nodes[-1], points=list(nodes[1:-1]), limit=200)[0]
        im = integrate.quad(lambda x: interp(x) * t.imag / abs(x - t) ** 2,
                            nodes[0], nodes[-1], points=list(nodes[1:-1]), limit=200)[0]
        assert w.real == pytest.approx(re, rel=1e-8, abs=1e-10)
        assert w.imag == pytest.approx(im, rel=1e-8, abs=1e-10)


def test_side_weights_are_the_two_half_line_kernels(rng):
    nodes = np.sinh(np.linspace(0.0, 2.5, 12))
    p = rng.uniform(0.5, 1.5, nodes.size)
    interp = lambda x: np.interp(x, nodes, p)                     # noqa: E731
    for y in (0.04, 1.3, 30.0):
        pv, lor = kk.side_weights(nodes, np.array([y]))
        a = math.sqrt(y)
        want_pv = sum(_quad_cauchy(lambda x: interp(x) / (x + a), lo, hi, a)
                      for lo, hi in zip(nodes[:-1], nodes[1:]))
        want_lor = integrate.quad(lambda x: interp(x) / (x * x + y), 0.0, nodes[-1],
                                  points=list(nodes[1:-1]), limit=200)[0]
        assert pv[0] @ p == pytest.approx(want_pv, rel=1e-8)
        assert lor[0] @ p == pytest.approx(want_lor, rel=1e-8)


def _muller_real(u, r):
    """Real part of χ'' = π/√(u² − r²) on (r, 1) (A = 1, ω_top = 1), divided by π: (2/π)
    ∫ ω' dω'/(√(ω'² − r²)(ω'² − u²)) by u' = √(ω'² − r²) (Abramowitz & Stegun 3.3.21/23)."""
    v = math.sqrt(1.0 - r * r)
    u = np.abs(np.asarray(u, float))
    out = np.empty_like(u)
    lo = u < r
    a = np.sqrt(r * r - u[lo] ** 2)
    out[lo] = 2.0 / a * np.arctan(v / a)
    b = np.sqrt(u[~lo] ** 2 - r * r)
    out[~lo] = np.log(np.abs((v - b) / (v + b))) / b
    return out / math.pi


@pytest.mark.parametrize("r", [1e-3, 0.05, 0.5, 0.9, 0.99])
def test_zero_temperature_muller_shape_against_its_closed_form(r):
    u = np.concatenate([np.linspace(0.0, 0.97 * r, 6), np.linspace(1.03 * r, 0.97, 6),
                        [1.05, 2.0, 7.0, 40.0]])
    got = kk.shape_real(u, np.full(u.size, r), np.zeros(u.size), "muller")
    want = _muller_real(u, r)
    # the interpolated shape is exactly the Müller shape (p_± constant): rounding only
    np.testing.assert_allclose(got, want, rtol=1e-8, atol=1e-10 * np.max(np.abs(want)))


def _conformal(omega, wl, kT, A):
    """πA ρ(x₋)ρ(x₊)/τ, the complex conformal form (the chain's χ'' is its imaginary part)."""
    tau = 4.0 * math.pi * kT
    xm, xp = (omega - wl) / tau, (omega + wl) / tau
    lr = lambda x: special.loggamma(0.25 - 1j * x) - special.loggamma(0.75 - 1j * x)  # noqa
    return math.pi * A * np.exp(lr(xm) + lr(xp)) / tau


def _cut_tail(omega, wl, top, A):
    """The part of the conformal form beyond ω_T, to O((k_BT/ω_T)²): the transform of
    πA/√(ω'² − ω_L²) on |ω'| > ω_T (elementary, as in :func:`_muller_real`)."""
    vt = math.sqrt(top * top - wl * wl)
    b2 = omega * omega - wl * wl
    out = np.empty_like(omega)
    pos = b2 > 0
    b = np.sqrt(b2[pos])
    out[pos] = A / b * np.log((vt + b) / (vt - b))
    a = np.sqrt(-b2[~pos])
    out[~pos] = 2.0 * A / a * (0.5 * math.pi - np.arctan(vt / a))
    return out


@pytest.mark.parametrize("q, T", [(math.pi, 2.0), (3.0, 1.0), (2.95, 3.0)])
def test_real_part_reproduces_the_conformal_form(q, T):
    """Müller shape, conformal edge at every q: χ''_chain = Im χ_conf for |ω| ≤ ω_T, so
    χ'_chain = Re χ_conf − (the cut tail); k_BT/ω_T ≤ 0.1 keeps the tail's thermal
    correction below 1e-3 of it."""
    kT = K_B_MEV * T
    s = two_spinon_sheets(np.array([q]), J1, D1)
    wl, top, A = s["lower"][0, 0], s["top"][0, 0], s["A"][0, 0]
    omega = np.concatenate([np.linspace(0.0, 3 * wl + 6 * kT, 9), [0.5 * top, 0.8 * top]])
    qq = np.full(omega.size, q)
    conf = _conformal(omega, wl, kT, A)
    chi = cc.chain_susceptibility(qq, omega, T, J1, D1, line_shape="muller",
                                  thermal_edge="everywhere", method="exact")[0]
    # the reference: its imaginary part is the chain's χ'' (conventions agree)
    np.testing.assert_allclose(chi.imag, conf.imag, rtol=1e-6, atol=1e-9 * abs(conf).max())
    want = conf.real - _cut_tail(omega, wl, top, A)
    scale = np.max(np.abs(conf))
    assert np.max(np.abs(chi.real - want)) < 2e-3 * scale
    tab = cc.chain_susceptibility(qq, omega, T, J1, D1, line_shape="muller",
                                  thermal_edge="everywhere")[0]
    assert np.max(np.abs(tab.real - want)) < 5e-3 * scale


def _chi2(q, w, T, line_shape):
    from evidence1d.physics.chain_spectrum import spinon_density
    S = spinon_density(np.array([q]), np.array([w]), T, J1, D1, line_shape=line_shape)[0, 0]
    kT = K_B_MEV * T
    return math.pi * S * (-math.expm1(-w / kT) if kT > 0 else 1.0)


@pytest.mark.parametrize("line_shape, q, T", [("exact", math.pi, 2.0), ("exact", 2.8, 2.0),
                                              ("exact", 2.0, 0.0), ("muller", 2.5, 5.0)])
def test_static_limit_against_quadrature(line_shape, q, T):
    """χ'(q, 0) = (2/π) ∫₀^∞ χ''(ω)/ω dω (scipy quad; the T = 0 edge by ω = ω_L + u²)."""
    s = two_spinon_sheets(np.array([q]), J1, D1)
    wl, top = s["lower"][0, 0], s["top"][0, 0]
    f = lambda w: _chi2(q, w, T, line_shape) / w                  # noqa: E731
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        if T > 0:
            kT = K_B_MEV * T
            pts = sorted({min(max(wl + k * kT, 1e-9), top) for k in (-20, -3, 0, 3, 20)})
            want = sum(integrate.quad(f, a, b, limit=400)[0]
                       for a, b in zip([1e-9] + pts, pts + [top]) if b > a)
        else:
            want = integrate.quad(lambda u: 2 * u * f(wl + u * u), 0, math.sqrt(top - wl),
                                  limit=400)[0]
    want *= 2.0 / math.pi
    for method, tol in (("exact", 2.5e-3), ("table", 4e-3)):
        got = cc.chain_static_susceptibility(np.array([q]), T, J1, D1, line_shape=line_shape,
                                             method=method)[0, 0]
        assert got == pytest.approx(want, rel=tol)


@pytest.mark.slow
@pytest.mark.parametrize("line_shape, q, T", [("exact", 2.8, 2.0), ("exact", 2.9, 0.5),
                                              ("muller", 2.0, 2.0)])
def test_dynamic_real_part_against_quadrature(line_shape, q, T):
    """χ'(ω) = (1/π) P∫₀^ω_T χ''(ω')[1/(ω' − ω) + 1/(ω' + ω)] dω' by quad, away from ω_T."""
    s = two_spinon_sheets(np.array([q]), J1, D1)
    wl, top = s["lower"][0, 0], s["top"][0, 0]
    kT = K_B_MEV * T
    f = lambda w: _chi2(q, w, T, line_shape)                      # noqa: E731
    pts = sorted({0.0, top} | {min(max(wl + k * kT, 0.0), top) for k in (-20, -5, -1, 0, 1, 5,
                                                                          20)})
    omega = np.array([0.1 * wl, 0.7 * wl, 1.1 * wl, 0.5 * (wl + top), 1.3 * top])
    want = []
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for w in omega:
            tot = 0.0
            for a, b in zip(pts[:-1], pts[1:]):
                if b > a:
                    tot += _quad_cauchy(f, a, b, w) + _quad_cauchy(f, a, b, -w)
            want.append(tot / math.pi)
    want = np.array(want)
    qq = np.full(omega.size, q)
    for method, tol in (("exact", 3e-3), ("table", 6e-3)):
        got = cc.chain_susceptibility(qq, omega, T, J1, D1, line_shape=line_shape,
                                      method=method)[0].real
        assert np.max(np.abs(got - want)) < tol * np.max(np.abs(want))


def test_table_matches_the_exact_transform(rng):
    m = 300
    r = 1.0 / (1.0 + np.exp(-rng.uniform(-6.9, 6.9, m)))
    theta = np.where(rng.random(m) < 0.15, 0.0, np.exp(rng.uniform(math.log(1e-5),
                                                                    math.log(100.0), m)))
    u = rng.uniform(0.0, 1.4, m) * np.where(rng.random(m) < 0.5, 1.0, r)
    u = np.where(np.abs(u - 1.0) < 0.05, u + 0.1, u)        # not within 5 % of the top
    for shape in ("exact", "muller"):
        got = kk_table.table_real(u, r, theta, shape)
        want = kk.shape_real(u, r, theta, shape)
        scale = np.maximum(np.abs(want), np.abs(kk.shape_real(np.zeros(m), r, theta, shape)))
        err = np.abs(got - want) / scale
        assert np.percentile(err, 99) < 5e-3
        assert err.max() < 1.5e-2


def test_retarded_symmetry_and_the_bottom_line():
    q = np.array([0.3, 0.3, 2.0, 2.0])
    w = np.array([0.4, -0.4, 1.9, -1.9])
    chi = cc.chain_susceptibility(q, w, 3.0, np.array([[1.0]]), np.array([[2.0]]))[0]
    np.testing.assert_allclose(chi[1::2], np.conj(chi[0::2]), rtol=1e-12)
    # Δ = 2, q = 0.3 < q_κ: the line W δ(ω − a) adds 2aW/(a² − ω²) (it diverges at a)
    s = two_spinon_sheets(np.array([0.3]), np.array([[1.0]]), np.array([[2.0]]))
    a = s["line_energy"][0, 0]
    assert s["line_weight"][0, 0] > 0
    near = cc.chain_susceptibility(np.array([0.3, 0.3]), np.array([a * 0.999, a * 1.001]),
                                   3.0, np.array([[1.0]]), np.array([[2.0]]))[0].real
    assert near[0] > 0 > near[1]
