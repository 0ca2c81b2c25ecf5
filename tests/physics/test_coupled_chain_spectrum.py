"""The resolution-convolved coupled-chain spectrum and the shared energy grid.

References: the Gaussian convolutions of a Gaussian, a step and a ramp in closed form
(Abramowitz & Stegun 7.1.1, 26.2.2); the random-phase response convolved by adaptive
quadrature (scipy.integrate.quad) of the pointwise χ''/|1 + κJ_⊥χ|² with the δ-poles added
analytically (Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975)); J_⊥ = 0 against the
spinon family's convolution (Karbach et al., Phys. Rev. B 55, 12510 (1997)).
"""
from __future__ import annotations

import math

import numpy as np
import pytest
from scipy import integrate, special

from evidence1d.physics import coupled_chain as cc
from evidence1d.physics.chain import all_sheets
from evidence1d.physics.chain_spectrum import spinon_spectrum
from evidence1d.physics.coupled_chain_ordered import (ordered_modes, ordered_state,
                                                      two_soliton_threshold)
from evidence1d.physics import coupled_chain_spectrum as ccs
from evidence1d.physics.coupled_chain_spectrum import coupled_spectrum, spectrum_grid
from evidence1d.physics.coupled_chain_thermo import neel_temperature
from evidence1d.physics.resolution_grid import RowGrid
from evidence1d.units import K_B_MEV


def _map(n_q=12, n_e=30, e_lo=-2.0, e_hi=14.0):
    q = np.repeat(np.linspace(0.3, 2 * np.pi - 0.3, n_q), n_e)
    E = np.tile(np.linspace(e_lo, e_hi, n_e), n_q)
    return q, E, 0.12 + 0.02 * np.abs(E)


# ------------------------------------------------------------------------ the energy grid
def test_grid_convolves_a_gaussian_a_step_and_a_ramp_as_the_closed_forms():
    q, E, s = _map()
    row = np.unique(q, return_inverse=True)[1]
    g = RowGrid(row, E, s)
    x, c = g.node_energy, 3.0 + 0.05 * g.node_row
    C = 3.0 + 0.05 * row
    f = np.exp(-0.5 * ((x - c) / 0.5) ** 2) / (math.sqrt(2 * math.pi) * 0.5)
    w = np.sqrt(0.25 + s ** 2)                    # Gaussian ∗ Gaussian: variances add
    ref = np.exp(-0.5 * ((E - C) / w) ** 2) / (math.sqrt(2 * math.pi) * w)
    assert np.abs(g.convolve(f[None])[0] - ref).max() < 1e-3 * ref.max()
    z = (E - C) / s
    step = 0.5 * special.erfc(-z / math.sqrt(2))  # A&S 26.2.2
    assert np.abs(g.convolve((x > c)[None].astype(float))[0] - step).max() < 0.05
    ramp = s * (z * step + np.exp(-0.5 * z * z) / math.sqrt(2 * math.pi))
    got = g.convolve(np.maximum(x - c, 0.0)[None])[0]
    assert np.abs(got - ramp).max() < 5e-3 * s.max()
    np.testing.assert_allclose(g.convolve(np.ones((1, g.size)))[0], 1.0, rtol=1e-12)


def test_coarse_rule_convolves_smooth_functions_as_the_closed_form():
    """The coarse rule (every 4th node, 0.75 nodes per σ here) on a Gaussian of width
    ≥ σ: Gaussian ∗ Gaussian in closed form (variances add) within 1e-4 of the peak
    (measured 5e-6 at width 0.2 meV against σ ≥ 0.12 meV; the trapezoidal rule converges
    exponentially on smooth functions, Trefethen & Weideman, SIAM Rev. 56, 385 (2014)), a
    constant exactly; ``needed`` lists exactly the nodes each rule reads."""
    q, E, s = _map()
    row = np.unique(q, return_inverse=True)[1]
    g = RowGrid(row, E, s)
    x, c, C = g.node_energy, 3.0 + 0.05 * g.node_row, 3.0 + 0.05 * row
    coarse = np.zeros((1, E.size), bool)
    for width in (0.2, 0.5):
        f = np.exp(-0.5 * ((x - c) / width) ** 2) / (math.sqrt(2 * math.pi) * width)
        w = np.sqrt(width ** 2 + s ** 2)
        ref = np.exp(-0.5 * ((E - C) / w) ** 2) / (math.sqrt(2 * math.pi) * w)
        assert np.abs(g.convolve(f[None], coarse)[0] - ref).max() < 1e-4 * ref.max()
    np.testing.assert_allclose(g.convolve(np.ones((1, g.size)), coarse)[0], 1.0, rtol=1e-12)
    assert g.coarse_matrix.nnz < 0.3 * g.matrix.nnz
    rng = np.random.default_rng(2)
    fine = rng.random((3, E.size)) < 0.3
    need = g.needed(fine)
    for k in range(3):
        cols = set(g.matrix[fine[k]].indices) | set(g.coarse_matrix[~fine[k]].indices)
        assert set(np.flatnonzero(need[k])) == cols


def test_grid_rejects_bad_widths():
    with pytest.raises(ValueError):
        RowGrid([0, 0], [1.0, 2.0], [0.1, 0.0])


# ----------------------------------------------------------------- the convolved spectrum
@pytest.mark.parametrize("T", [0.0, 4.0, 40.0])
@pytest.mark.parametrize("delta", [0.5, 1.0, 2.0])
def test_no_interchain_coupling_is_the_spinon_spectrum(T, delta):
    q, E, s = _map(8, 20)
    qa = np.where(np.arange(q.size) % 2, np.pi, 0.3)
    J, d = np.array([[4.0], [6.0]]), np.full((2, 1), delta)
    got = coupled_spectrum(q, qa, qa, E, s, T, J, np.zeros((2, 1)), d)
    ref = spinon_spectrum(q, E, s, T, J, d)
    np.testing.assert_allclose(got, ref, rtol=1e-12, atol=1e-14 * ref.max())


def _reference(q, qa, E, s, T, J, Jp, d):
    """G_σ ∗ S_RPA at one point by adaptive quadrature, δ-poles added analytically."""
    P = [np.array([[x]]) for x in (J, Jp, d)]
    one = [np.array([x]) for x in (q, qa, qa)]

    def S(w):
        return cc.rpa_spectrum(*one, np.array([w]), T, P[0], P[1], P[2])[0, 0]

    (wl, top, _, _), _, _ = all_sheets(one[0], P[0], P[2])
    poles = cc.rpa_poles(*one, T, P[0], P[1], P[2])
    brk = [wl[0, 0], top[0, 0]] + [p["omega"][0, 0] for p in poles.values()
                                   if p["weight"][0, 0] > 0]
    lo, hi = E - 8 * s, E + 8 * s
    cuts = [lo] + sorted(x for b in brk for x in (b, -b) if lo < x < hi) + [hi]
    gauss = lambda x: math.exp(-0.5 * (x / s) ** 2) / (math.sqrt(2 * math.pi) * s)
    val = sum(integrate.quad(lambda w: gauss(E - w) * S(w), a, b, limit=400,
                             epsabs=1e-10, epsrel=1e-7)[0] for a, b in zip(cuts, cuts[1:]))
    kT = K_B_MEV * T
    for key, p in poles.items():
        Z, G, wp = p["weight"][0, 0], p["width"][0, 0], p["omega"][0, 0]
        if Z > 0 and G == 0:
            n = 1.0 / math.expm1(wp / kT) if kT > 0 else 0.0
            val += (1 if key == "zz" else 2) * Z * ((n + 1) * gauss(E - wp) + n * gauss(E + wp))
    return val


@pytest.mark.slow
@pytest.mark.parametrize("Jp, delta, T, q, qa, window", [
    # a pole 5e-4 meV below a thermally rounded edge (the hardest case measured)
    (0.1, 1.0, 10.0, 0.93 * np.pi, np.pi, (0.5, 3.0)),
    # a pole 0.0125 meV below a sharp edge; the same q away from the ordering vector
    (0.25, 1.0, 15.0, 0.6 * np.pi, np.pi, (6.0, 9.0)),
    (0.25, 1.0, 15.0, 0.6 * np.pi, 0.0, (6.0, 9.0)),
    # easy axis
    (0.15, 1.5, 8.0, 0.6 * np.pi, np.pi, (7.5, 11.0))])
def test_convolution_against_adaptive_quadrature(Jp, delta, T, q, qa, window):
    """Within 2 % of the peak (measured 0.2–1.5 % at 6 nodes per σ)."""
    J = 5.0
    assert neel_temperature(np.array([[J]]), np.array([[Jp]]), np.array([[delta]]))[0, 0] < T
    E = np.linspace(*window, 8)
    s = 0.2 + 0.02 * np.abs(E)
    n = E.size
    got = coupled_spectrum(np.full(n, q), np.full(n, qa), np.full(n, qa), E, s, T,
                           np.array([[J]]), np.array([[Jp]]), np.array([[delta]]))[0]
    ref = np.array([_reference(q, qa, e, si, T, J, Jp, delta) for e, si in zip(E, s)])
    assert np.abs(got - ref).max() < 0.02 * ref.max(), np.abs(got - ref) / ref.max()


@pytest.mark.slow
def test_dressing_of_a_narrow_band_at_small_q_against_quadrature_and_smooth_in_J():
    """At small q the continuum is narrower than a grid step (q = 0.157: ω_U − ω_L ≈ 8e-4
    meV) and χ'_1D grows as 1/(ω_L − ω) below it, where at T > 0 the chain has thermal
    weight.  The dressing (the change from J_⊥ = 0) against adaptive quadrature of the
    pointwise random-phase response (``_reference``): within 5 % of its largest value
    (measured 1.2 %; 11 % before the step below the edge was integrated exactly), and a
    smooth function of J (second differences over steps of 1e-3 J below 1e-3 of the
    dressing; before, the grid nodes crossing the edge flipped its sign)."""
    q, T, J, Jp, d = 0.157, 1.5, 1.06, 2e-3, 0.98
    E = np.array([0.15, 0.23, 0.25, 0.3])
    s = np.full(E.size, 0.036)
    n = E.size
    ref = np.array([_reference(q, 0.0, e, si, T, J, Jp, d) - _reference(q, 0.0, e, si, T, J,
                                                                        0.0, d)
                    for e, si in zip(E, s)])
    Js = J + np.linspace(-0.004, 0.004, 9)[:, None]
    args = (np.full(n, q), np.zeros(n), np.zeros(n), E, s, T, Js)
    got = (coupled_spectrum(*args, np.full_like(Js, Jp), np.full_like(Js, d))
           - coupled_spectrum(*args, np.zeros_like(Js), np.full_like(Js, d)))
    scale = np.abs(ref).max()
    assert np.abs(got[4] - ref).max() < 0.05 * scale, (got[4], ref)
    assert np.abs(np.diff(got, 2, axis=0)).max() < 1e-3 * scale


def _antibound_reference(q, qa, T, J, Jp, d):
    """The antibound states above the top by Brent's method on the pointwise χ'_1D of
    :func:`~evidence1d.physics.coupled_chain.chain_susceptibility` (independent of the
    kernel's vectorised search): [(multiplicity, ω_p, Z)], Z = 1/(κ²J_⊥(Q)² f ∂χ'/∂ω)."""
    from scipy import optimize
    P = [np.array([[x]]) for x in (J, Jp, d)]
    one = [np.array([x]) for x in (q, qa, qa)]
    (_, top, _, _), _, _ = all_sheets(one[0], P[0], P[2])
    top = top[0, 0]
    coup = cc._couplings(*one, P[0], P[1], P[2], 4)

    def chi1(w):
        return cc.chain_susceptibility(one[0], np.array([w]), T, P[0], P[2])[0, 0].real

    out = []
    for key in ("zz", "xx"):
        m, f, g = coup[key]
        f, g = f[0, 0], g[0, 0]
        if g * f <= 0 or 1.0 + g * f * chi1(top * (1 + 1e-12)) >= 0:
            continue
        wp = optimize.brentq(lambda w: 1.0 + g * f * chi1(w), top * (1 + 1e-12), 100 * top,
                             xtol=1e-14, rtol=1e-13)
        step = 1e-6 * (wp - top)
        slope = (chi1(wp + step) - chi1(wp - step)) / (2 * step)
        out.append((m, wp, 1.0 / (g * g * f * slope)))
    return out


@pytest.mark.slow
def test_antibound_state_above_a_narrow_band_against_quadrature():
    """Where J_⊥(Q_⊥) > 0 (here Q_⊥ = 0) the dressing pushes a narrow small-q band's weight
    above its top into an antibound δ-mode (Scalapino, Imry & Pincus 1975, mirrored): at
    q = 0.157, J_⊥ = 0.05 meV its weight is 0.0047 per spin (5 % of the peak), which the
    spectrum used to drop (and the grid then resolved the band's dressing at the 15 % level).
    Against adaptive quadrature of the pointwise response plus the δ-modes found
    independently (``_antibound_reference``): within 1 % of the peak (measured 0.06 %)."""
    q, T, J, Jp, d = 0.157, 1.5, 1.06, 0.05, 0.98
    P = [np.array([[x]]) for x in (J, Jp, d)]
    assert neel_temperature(*P)[0, 0] < T
    (wl, top, _, _), _, _ = all_sheets(np.array([q]), P[0], P[2])
    E = np.linspace(wl[0, 0] - 0.1, top[0, 0] + 0.1, 5)
    s = np.full(E.size, 0.036)
    modes = _antibound_reference(q, 0.0, T, J, Jp, d)
    assert sum(m * Z for m, _, Z in modes) > 0.004
    kT = K_B_MEV * T
    ref = np.array([_reference(q, 0.0, e, si, T, J, Jp, d) for e, si in zip(E, s)])
    for m, wp, Z in modes:
        n = 1.0 / math.expm1(wp / kT)
        g = lambda x: np.exp(-0.5 * (x / s) ** 2) / (math.sqrt(2 * math.pi) * s)
        ref = ref + m * Z * ((n + 1) * g(E - wp) + n * g(E + wp))
    n = E.size
    got = coupled_spectrum(np.full(n, q), np.zeros(n), np.zeros(n), E, s, T, *P)[0]
    assert np.abs(got - ref).max() < 0.01 * ref.max(), (got, ref)


@pytest.mark.slow
def test_points_far_from_every_feature_take_the_coarse_rule_accurately():
    """Points farther than FINE_REACH σ from the edges, the top, the poles and ω = 0 take
    the coarse rule (1.5 nodes per σ): within 2e-4 of the peak of the adaptive quadrature
    of the pointwise response (measured 4e-5; the rule's error on a function smooth over
    the window is far smaller, what remains is the table of χ'), on both sides."""
    J, Jp, d, T, q, qa = 5.0, 0.2, 1.0, 12.0, 0.6 * np.pi, 0.0
    E = np.concatenate([np.linspace(-2.5, -0.8, 4), np.linspace(1.0, 6.5, 8),
                        np.linspace(8.5, 11.5, 4)])
    s = 0.08 + 0.01 * np.abs(E)
    n = E.size
    P = [np.array([[x]]) for x in (J, Jp, d)]
    (wl, top, _, _), _, _ = all_sheets(np.array([q]), P[0], P[2])
    feats = np.array([0.0, wl[0, 0], top[0, 0]])
    assert np.all(np.abs(np.abs(E)[:, None] - feats).min(1) > 6.0 * s)   # all coarse
    got = coupled_spectrum(np.full(n, q), np.full(n, qa), np.full(n, qa), E, s, T, *P)[0]
    ref = np.array([_reference(q, qa, e, si, T, J, Jp, d) for e, si in zip(E, s)])
    assert np.abs(got - ref).max() < 2e-4 * ref.max(), np.abs(got - ref) / ref.max()


def test_coarse_and_fine_rules_agree_on_prior_draws():
    """The two-rule grid against the fine rule everywhere (``coarse=1``) on draws of both
    phases (three of the eight ordered at this T): within 2e-4 of each set's peak
    (measured 4e-5 at most, near a threshold below T_N)."""
    q, E, s = _map(8, 40, -1.0, 6.0)
    s = 0.03 + 0.01 * np.abs(E)
    qa = np.where(np.arange(q.size) % 3 == 0, np.pi, 0.2)
    rng = np.random.default_rng(11)
    J = rng.uniform(0.5, 3.0, (8, 1))
    Jp = np.concatenate([rng.uniform(0.0, 0.02, (4, 1)), rng.uniform(0.05, 0.4, (4, 1))])
    d = rng.uniform(0.5, 1.8, (8, 1))
    rows, g = spectrum_grid(q, qa, qa, E, s)
    both = coupled_spectrum(q, qa, qa, E, s, 3.0, J, Jp, d, grid=(rows, g))
    fine = coupled_spectrum(q, qa, qa, E, s, 3.0, J, Jp, d,
                            grid=(rows, RowGrid(g.point_row, E, s, 6.0, coarse=1)))
    peak = np.abs(fine).max(axis=1, keepdims=True)
    assert np.all(np.abs(both - fine) < 2e-4 * peak), (np.abs(both - fine) / peak).max()


def test_ordered_phase_has_modes_below_and_the_chain_continuum_above_threshold():
    """Below T_N: the chain's convolved continuum well above the two-soliton threshold, and
    the sharp modes' weight near their energies (Schulz 1996; Essler et al. 1997)."""
    J, Jp, d = np.array([[5.0]]), np.array([[0.3]]), np.array([[1.0]])
    T = 2.0
    assert neel_temperature(J, Jp, d)[0, 0] > 3 * T
    q = np.full(60, 0.7 * np.pi)
    E = np.linspace(0.05, 14.0, 60)
    s = np.full(60, 0.1)
    got = coupled_spectrum(q, np.full(60, np.pi), np.full(60, np.pi), E, s, T, J, Jp, d)[0]
    chain = spinon_spectrum(q, E, s, T, J, d)[0]
    wc = two_soliton_threshold(q[:1], ordered_state(T, J, Jp, d))[0, 0]
    far = E > wc + 8 * s
    assert np.abs(got[far] - chain[far]).max() < 1e-3 * chain.max()   # the grid's accuracy
    assert np.all(got >= -1e-9 * got.max())
    # below the lowest mode nothing (the chain continuum there is gone), at the modes their
    # weight w (n + 1) in a Gaussian
    modes = ordered_modes(q[:1], np.array([np.pi]), np.array([np.pi]), T, J, Jp, d)
    low = min(m["omega"][0, 0] for m in modes.values())
    assert low < wc
    below = E < low - 8 * s
    assert below.any() and np.all(got[below] < 1e-6 * got.max())
    # between the highest mode and the threshold the chain has weight, the ordered phase none
    high = max(m["omega"][0, 0] for m in modes.values())
    assert high < wc
    mid, narrow = np.array([0.5 * (high + wc)]), np.array([(wc - high) / 20.0])
    one = [np.full(1, x) for x in (0.7 * np.pi, np.pi, np.pi)]
    gap = coupled_spectrum(*one, mid, narrow, T, J, Jp, d)[0, 0]
    assert spinon_spectrum(one[0], mid, narrow, T, J, d)[0, 0] > 0.05
    assert gap < 1e-6
    Et = np.array([m["omega"][0, 0] for m in modes.values()])
    at = coupled_spectrum(np.full(3, 0.7 * np.pi), np.full(3, np.pi), np.full(3, np.pi), Et,
                          np.full(3, 0.01), T, J, Jp, d)[0]
    peak = sum(m["weight"][0, 0] / (math.sqrt(2 * math.pi) * 0.01) for m in modes.values()
               if abs(m["omega"][0, 0] - Et[0]) < 1e-9)
    assert at[0] == pytest.approx(peak, rel=0.02)


def test_batch_equals_loop_and_detailed_balance_of_the_grid():
    q, E, s = _map(6, 16, -4.0, 4.0)
    qa = np.full(q.size, np.pi)
    rng = np.random.default_rng(5)
    J = rng.uniform(3, 6, (4, 1))
    Jp = np.array([[0.0], [0.05], [0.2], [0.4]])
    d = rng.uniform(0.8, 1.6, (4, 1))
    grid = spectrum_grid(q, qa, qa, E, s)
    batch = coupled_spectrum(q, qa, qa, E, s, 6.0, J, Jp, d, grid=grid)
    loop = np.concatenate([coupled_spectrum(q, qa, qa, E, s, 6.0, J[i:i + 1], Jp[i:i + 1],
                                            d[i:i + 1]) for i in range(4)])
    np.testing.assert_allclose(batch, loop, rtol=1e-10, atol=1e-300)
    assert np.all(np.isfinite(batch))


@pytest.mark.parametrize("Jp, delta, T, q, qa, window", [
    (0.25, 1.0, 15.0, 0.6 * np.pi, 0.0, (6.0, 9.0)),          # sharp edge, no pole
    (0.1, 1.0, 10.0, 0.93 * np.pi, np.pi, (0.5, 3.0)),         # pole below a rounded edge
    (0.15, 1.5, 8.0, 0.6 * np.pi, np.pi, (7.5, 11.0))])        # easy axis
def test_damped_dressed_spectrum_does_not_depend_on_the_grid(monkeypatch, Jp, delta, T, q,
                                                             qa, window):
    # With the thermal damping b > 0 the result must converge as the energy grid is refined
    # (a property of any quadrature, no reference needed).  The split's plateau F_e, the
    # dressing one grid step above the edge, once multiplied the damped chain while F_e S_1D
    # was taken off the grid with the undamped one: the mismatch F_e (G∗S_b − G∗S_0) changed
    # with the step (measured 4–37 % of the peak between 6 and 24 nodes per σ; now
    # 0.5–1.6 %, the scheme's accuracy).
    J = 5.0
    E = np.linspace(*window, 8)
    s = 0.2 + 0.02 * np.abs(E)
    n = E.size
    args = (np.full(n, q), np.full(n, qa), np.full(n, qa), E, s, T, np.array([[J]]),
            np.array([[Jp]]), np.array([[delta]]))
    out = []
    for k in (6.0, 24.0):
        monkeypatch.setattr(ccs, "NODES_PER_SIGMA", k)
        out.append(coupled_spectrum(*args, thermal_damping=np.array([[1.5]]))[0])
    assert np.abs(out[0] - out[1]).max() < 0.025 * np.abs(out[1]).max()


def test_near_order_the_spectrum_is_non_negative_whatever_the_damping():
    # S(Q, E) ≥ 0 is a property of any spectrum (a sum of |matrix element|² weights;
    # Lovesey 1984).  Below T_N the ordered phase cuts the chain's continuum at the
    # two-soliton threshold with the undamped chain; a damped chain there once left its
    # thermal leakage minus the undamped sub-threshold weight, negative at small q (measured
    # −0.12 against a peak of 2.7 at J = 0.971 meV, J_⊥ = 0.0464 meV, Δ = 1.23, b = 1.98,
    # 1.5 K).  The damping now acts above T_N only.
    J, Jp, d, b, T = 0.971, 0.0464, 1.2324, 1.98, 1.5
    P = [np.array([[x]]) for x in (J, Jp, d)]
    assert neel_temperature(*P)[0, 0] > T
    L = np.linspace(0.05, 1.95, 30)
    E = np.linspace(0.25, 3.6, 24)
    q = np.repeat(np.pi * L, E.size)
    EE = np.tile(E, L.size)
    s = (0.08 + 0.02 * EE) / 2.3548
    zero = np.zeros_like(q)
    damped = coupled_spectrum(q, zero, zero, EE, s, T, *P, thermal_damping=np.array([[b]]))[0]
    bare = coupled_spectrum(q, zero, zero, EE, s, T, *P)[0]
    assert damped.min() > -1e-6 * damped.max(), damped.min()      # rounding only
    np.testing.assert_array_equal(damped, bare)
    # above T_N (here 1.44 K) near order: the dressing suppresses the narrow small-q band
    # five-fold, and the damping's change added undressed made the spectrum negative
    # (measured −2.2 times the peak); it is now dressed by the local suppression
    P = [np.array([[x]]) for x in (1.001, 0.0419, 1.297)]
    assert neel_temperature(*P)[0, 0] < T
    for qa in (0.0, np.pi):
        z = np.full_like(q, qa)
        above = coupled_spectrum(q, z, z, EE, s, T, *P, thermal_damping=np.array([[1.74]]))[0]
        assert above.min() > -1e-6 * above.max(), (qa, above.min() / above.max())
