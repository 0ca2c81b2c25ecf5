"""Heat capacity and entropy of the paramagnon's overdamped modes, exact for any Γ/k_BT.

Free energy of one relaxational mode
------------------------------------
A mode with the relaxational response χ(ω) = χ Γ/(Γ − iω) (χ'' = χ ωΓ/(ω² + Γ²)) is an
oscillator coupled to a bath in its overdamped limit.  Its free energy is that of a
continuum of oscillators with the phase-shift density of states

    ρ(ω) = (1/π) Im ∂_ω ln χ(ω + i0) = (1/π) Γ/(ω² + Γ²)      (∫₀^∞ ρ dω = 1/2),

    F = ∫₀^∞ ρ(ω) k_BT ln(1 − e^{−ω/k_BT}) dω   (+ T-independent zero-point terms)

(Ford, Lewis & O'Connell 1988, from memory; the same construction gives the low-temperature
paramagnon heat capacity of Moriya 1985, Ch. 3).  Integrating by parts with
∫₀^ω ρ = arctan(ω/Γ)/π and d/dω [k_BT ln(1 − e^{−ω/k_BT})] = n(ω), then ω = 2π k_BT t,

    F = −(1/π) ∫₀^∞ arctan(ω/Γ) n(ω) dω = −2 k_BT ∫₀^∞ arctan(t/u)/(e^{2πt} − 1) dt
      = −k_BT μ(u),     u = Γ/(2π k_BT),

with Binet's function μ(u) = ln Γ(u) − (u − ½) ln u + u − ½ ln 2π (Binet's second formula,
Abramowitz & Stegun 6.1.50).  Hence, per mode and in units of k_B,

    S/k_B = −∂F/∂(k_BT) = μ(u) − u μ'(u),         μ'(u) = ψ(u) − ln u + 1/(2u),
    C/k_B = T ∂(S/k_B)/∂T = u² μ''(u),            μ''(u) = ψ'(u) − 1/u − 1/(2u²).

Limits.  k_BT ≪ Γ (u → ∞): Stirling's series μ = 1/(12u) − 1/(360u³) + … (A&S 6.1.41)
gives C = S = k_B/(6u) = (π/3) k_B (k_BT/Γ): γ = (π/3) k_B²/Γ per mode.  k_BT ≫ Γ
(u → 0): μ ≈ −½ ln(2πu), so C → k_B/2 and S ≈ (k_B/2)[ln(k_BT/Γ) + 1]: half a classical
oscillator (the phase shift of a relaxational mode only reaches π/2).  At k_BT = Γ the
exact C is 0.36 of the linear (π/3)k_BT/Γ.

Evaluation (:func:`mode_functions`): for u ≥ 7 the Stirling series with nine Bernoulli
terms (relative error < 1e-13); below, the recurrence μ(x) = μ(x + 1) + (x + ½) ln(1 + 1/x)
− 1 (from Γ(x + 1) = x Γ(x)) and its derivatives shift the argument above 7.  The zone sums
read μ, s and c from a table of these exact values on 2001 nodes in ln u ∈ [−25, 25] with
cubic Hermite interpolation (exact derivatives at the nodes; relative error < 2e-9), and
from the leading asymptotic forms outside.

Mode count and the entropy of the ions
--------------------------------------
Modes: one wavevector per magnetic ion (the Brillouin zone of the lattice with spacings d,
a_⊥, b_⊥: the wavevector cut-off of SCR theory taken as the zone itself) for each of the
three spin components, each with the full Lorentzian phase shift (no frequency cut-off);
the zone sum is :mod:`evidence1d.physics.paramagnon_zone`.
Then C_gas = 3R ⟨c(u_Q)⟩_BZ, S_gas = 3R ⟨s(u_Q)⟩_BZ per mol of magnetic ion, and at low
temperature C_gas = γ_sf T with γ_sf = π R k_B ⟨1/Γ_Q⟩_BZ.

A gas of bosonic modes has no bounded Hilbert space: S_gas grows as (3R/2) ln T and C_gas
tends to 3R/2.  For S = 1/2 ions with a uniform rate (ξ = 0) S_gas passes R ln 2 already
at k_BT = 0.244 Γ_0 (0.43 Γ_0 for S = 1, 0.89 Γ_0 for S = 5/2;
tests/physics/test_paramagnon_thermo.py), whereas the spins of the ions can hold at most
R ln(2S + 1).  The family therefore counts the modes only up to the
temperature T_x at which the gas, plus the remainder it still has to release, exhausts
that entropy:

    S_gas(T_x) + C_gas(T_x)/2 = R ln(2S + 1),
    C = C_gas(T)                (T ≤ T_x),     C = C_gas(T_x) (T_x/T)²          (T > T_x),
    S = S_gas(T)                (T ≤ T_x),     S = S_gas(T_x) + ½ C_gas(T_x) [1 − (T_x/T)²].

Above T_x the ions behave as moments with a bounded spectrum, whose heat capacity falls as
the leading term b/T² of a high-temperature expansion (Rushbrooke & Wood 1958); b is fixed
by continuity of C, and then S(T → ∞) = R ln(2S + 1) exactly.  C and S are continuous,
S = ∫ C/T dT everywhere, and below T_x the gas is untouched (k_BT_x = 0.159 Γ_0, where
C = 0.435 R, for S = 1/2 and ξ = 0; 0.28 Γ_0 for S = 1).  The tail is a bound on the
entropy, not a model of the local-moment regime.

References
----------
G. W. Ford, J. T. Lewis & R. F. O'Connell, Ann. Phys. (N.Y.) 185, 270 (1988) (free energy
of a dissipative oscillator from Im ∂_ω ln χ; from memory).
T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, 1985), Ch. 3
(spin-fluctuation free energy and specific heat, wavevector cut-off).
M. Abramowitz & I. A. Stegun (1964), 6.1.40–6.1.50 (Stirling series, Binet's formula),
6.3.5 and 6.4.6 (recurrences).
G. S. Rushbrooke & P. J. Wood, Mol. Phys. 1, 257 (1958) (high-temperature expansion).
"""
from __future__ import annotations

import functools
import math

import numpy as np

from ..units import K_B_MEV, R_GAS

__all__ = ["mode_functions", "gas_thermodynamics", "saturation_temperature",
           "spin_fluctuation_thermo"]

_U_SHIFT = 7
#: grid of the interpolation table in y = ln u: (first, last, number of nodes)
_Y = (-25.0, 25.0, 2001)
#: B_2k / (2k (2k − 1)), k = 1..9 (Stirling series of Binet's function, A&S 6.1.41)
_STIRLING = np.array([1.0 / 12.0, -1.0 / 360.0, 1.0 / 1260.0, -1.0 / 1680.0, 1.0 / 1188.0,
                      -691.0 / 360360.0, 1.0 / 156.0, -3617.0 / 122400.0,
                      43867.0 / 244188.0])
_ODD = 2.0 * np.arange(1, _STIRLING.size + 1) - 1.0          # 2k − 1


def _binet(u):
    """Binet's function μ(u) and its first three derivatives (module notes), u > 0."""
    u = np.clip(np.asarray(u, float), 1e-90, 1e150)
    n_shift = np.ceil(np.maximum(_U_SHIFT - u, 0.0))
    v = u + n_shift
    iv = 1.0 / v
    z = iv * iv
    # Horner in z = 1/v² of Σ c_k v^−(2k−1) and of its derivatives
    mu = m1 = m2 = m3 = 0.0
    j = _ODD
    for c, jj in zip(_STIRLING[::-1], j[::-1]):
        mu = mu * z + c
        m1 = m1 * z - jj * c
        m2 = m2 * z + jj * (jj + 1.0) * c
        m3 = m3 * z - jj * (jj + 1.0) * (jj + 2.0) * c
    mu = mu * iv
    m1 = m1 * z
    m2 = m2 * z * iv
    m3 = m3 * z * z
    sel = np.nonzero(n_shift.ravel() > 0)[0]
    if sel.size:
        # μ(x) = μ(x + 1) + (x + ½) ln(1 + 1/x) − 1 and its derivatives, x = u, …, v − 1
        us = u.ravel()[sel][:, None]
        x = us + np.arange(_U_SHIFT)
        ok = np.arange(_U_SHIFT) < n_shift.ravel()[sel][:, None]
        x = np.where(ok, x, 1.0)
        lg = np.log1p(1.0 / x)
        xx = x * (x + 1.0)
        d0 = np.where(ok, (x + 0.5) * lg - 1.0, 0.0).sum(axis=1)
        d1 = np.where(ok, lg - (x + 0.5) / xx, 0.0).sum(axis=1)
        d2 = np.where(ok, 0.5 / (xx * xx), 0.0).sum(axis=1)
        d3 = np.where(ok, -(2.0 * x + 1.0) / (xx * xx * xx), 0.0).sum(axis=1)
        out = []
        for m, dd in ((mu, d0), (m1, d1), (m2, d2), (m3, d3)):
            m = np.array(m, float).ravel()
            m[sel] += dd
            out.append(m.reshape(u.shape))
        mu, m1, m2, m3 = out
    return u, mu, m1, m2, m3


def mode_functions(u):
    """Thermodynamics of one relaxational mode as functions of u = Γ/(2π k_BT).

    Parameters
    ----------
    u : array_like
        Γ/(2π k_BT) > 0 (clipped to [1e-90, 1e150]).

    Returns
    -------
    dict of str to ndarray
        ``f`` = −F/(k_BT) = μ(u) (Binet's function), ``s`` = S/k_B = μ − uμ',
        ``c`` = C/k_B = u²μ'', and ``dc_du`` = dc/du = 2uμ'' + u²μ'''.

    References
    ----------
    Abramowitz & Stegun (1964), 6.1.41 and 6.1.50; Ford, Lewis & O'Connell (1988).
    """
    u, mu, m1, m2, m3 = _binet(u)
    return {"f": mu, "s": mu - u * m1, "c": u * u * m2, "dc_du": 2.0 * u * m2 + u * u * m3}


@functools.lru_cache(maxsize=1)
def _mode_table():
    """f = μ, s, c and their derivatives in y = ln u on the grid of :data:`_Y` (read-only)."""
    y = np.linspace(_Y[0], _Y[1], _Y[2])
    u = np.exp(y)
    mf = mode_functions(u)
    f, s_, c = mf["f"], mf["s"], mf["c"]
    # d/dy: f_y = u μ' = f − s, s_y = −u² μ'' = −c, c_y = u dc/du
    tab = np.stack([f, f - s_, s_, -c, c, u * mf["dc_du"]])
    tab.setflags(write=False)
    return tab


def _interpolated(u, quantities):
    """Cubic Hermite interpolation of the mode functions in ln u (module notes).

    ``quantities`` from {'f', 's', 'c', 'dc'}; 'dc' is dc/d ln u.  Outside the grid the
    leading asymptotic forms hold to double precision: c = s = 1/(6u), f = 1/(12u) for
    ln u > 25; c = 1/2 − u, s = 1/2 − ln(2πu)/2, f = −ln(2πu)/2 for ln u < −25.
    """
    tab = _mode_table()
    y0, y1, n = _Y
    h = (y1 - y0) / (n - 1)
    y = np.log(np.clip(u, 1e-300, 1e300))
    t = (np.clip(y, y0, y1) - y0) / h
    i = np.minimum(t.astype(np.intp), n - 2)
    t = t - i
    t2 = t * t
    t1 = 1.0 - t
    out = {}
    rows = {"f": 0, "s": 2, "c": 4, "dc": 4}
    for q in quantities:
        r = rows[q]
        a, da, b, db = tab[r][i], tab[r + 1][i] * h, tab[r][i + 1], tab[r + 1][i + 1] * h
        if q == "dc":
            val = ((6.0 * t2 - 6.0 * t) * (a - b) + (3.0 * t2 - 4.0 * t + 1.0) * da
                   + (3.0 * t2 - 2.0 * t) * db) / h
        else:
            val = (t1 * t1 * ((1.0 + 2.0 * t) * a + t * da)
                   + t2 * ((3.0 - 2.0 * t) * b - t1 * db))
        hi, lo = y > y1, y < y0
        if np.any(hi) or np.any(lo):
            with np.errstate(divide="ignore", over="ignore"):
                big = {"f": 1.0 / (12.0 * u), "s": 1.0 / (6.0 * u), "c": 1.0 / (6.0 * u),
                       "dc": -1.0 / (6.0 * u)}[q]
                small = {"f": -0.5 * np.log(2.0 * math.pi * np.maximum(u, 1e-300)),
                         "s": 0.5 - 0.5 * np.log(2.0 * math.pi * np.maximum(u, 1e-300)),
                         "c": 0.5 - u, "dc": -u}[q]
            val = np.where(hi, big, np.where(lo, small, val))
        out[q] = val
    return out


def gas_thermodynamics(T, log_gamma, w, quantities=("c", "s")):
    """Heat capacity, entropy and free energy of the gas of overdamped modes, per mol.

    Three spin components per zone wavevector (module notes); no entropy ceiling.

    Parameters
    ----------
    T : array_like, shape (n,) or (n_sets, n)
        Temperature in K (≥ 0).
    log_gamma, w : ndarray, shape (n_sets, m)
        Rates (ln of meV) and weights from :func:`compress_rates` (or any zone rule).
    quantities : sequence of {'c', 's', 'f', 'dc'}
        ``c``: C in J/(mol K); ``s``: S in J/(mol K); ``f``: F in J/mol (without the
        T-independent zero-point part); ``dc``: dC/d ln T in J/(mol K) from the derivative
        of the interpolant (within 1 % of the exact one; used for Newton steps).

    Returns
    -------
    dict of str to ndarray, shape (n_sets, n)

    References
    ----------
    Ford, Lewis & O'Connell (1988); Moriya (1985), Ch. 3.
    """
    T = np.asarray(T, float)
    T2 = T[None, :] if T.ndim == 1 else T
    kT = K_B_MEV * np.maximum(T2, 1e-300)
    u = np.exp(log_gamma)[:, None, :] / (2.0 * math.pi * kT[..., None])
    unknown = [q for q in quantities if q not in ("c", "s", "f", "dc")]
    if unknown:
        raise ValueError(f"unknown quantity {unknown[0]!r}")
    mf = _interpolated(u, quantities)
    w3 = w[:, None, :]
    out = {q: 3.0 * R_GAS * np.sum(w3 * mf[q], axis=-1) for q in quantities}
    if "f" in out:
        out["f"] = -np.maximum(T2, 0.0) * out["f"]
    if "dc" in out:
        out["dc"] = -out["dc"]                     # dC/d ln T = −dC/d ln u
    zero = T2 <= 0.0
    if np.any(zero):
        for q in out:
            out[q] = np.where(zero, 0.0, out[q])
    return out


def saturation_temperature(log_gamma, w, s_max, n_grid=9, n_newton=6):
    """T_x where S_gas + C_gas/2 = s_max: the gas exhausts the ions' entropy (module notes).

    Parameters
    ----------
    log_gamma, w : ndarray, shape (n_sets, m)
        Compressed zone rule of the rates.
    s_max : float
        The ions' entropy R ln(2S + 1) in J/(mol K) (> 0).
    n_grid, n_newton : int
        Equally spaced points in ln T over [ln Γ_min − 10, ln Γ_max + 10] (k_BT in meV),
        evaluated at once, bracket the root (S_gas + C_gas/2 increases with T); then
        safeguarded Newton steps from the secant point of the bracket.

    Returns
    -------
    ndarray, shape (n_sets, 1)
        T_x in K.

    References
    ----------
    W. H. Press et al., *Numerical Recipes*, 3rd ed. (CUP, 2007), Sect. 9.4 (Newton with
    bisection safeguard).
    """
    big = np.where(w > 0, log_gamma, np.nan)
    lo = np.nanmin(big, axis=1, keepdims=True) - 10.0 - math.log(K_B_MEV)
    hi = np.nanmax(big, axis=1, keepdims=True) + 10.0 - math.log(K_B_MEV)

    def h(x, deriv):
        g = gas_thermodynamics(np.exp(x), log_gamma, w, ("s", "c", "dc") if deriv
                               else ("s", "c"))
        val = g["s"] + 0.5 * g["c"] - s_max
        return val, (g["c"] + 0.5 * g["dc"] if deriv else None)

    grid = lo + (hi - lo) * np.linspace(0.0, 1.0, n_grid)
    val, _ = h(grid, False)
    k = np.clip(np.sum(val < 0, axis=1, keepdims=True) - 1, 0, n_grid - 2)
    lo, hi = (np.take_along_axis(grid, k + j, axis=1) for j in (0, 1))
    v_lo, v_hi = (np.take_along_axis(val, k + j, axis=1) for j in (0, 1))
    with np.errstate(invalid="ignore", divide="ignore"):
        frac = np.clip(-v_lo / (v_hi - v_lo), 0.0, 1.0)
    x = lo + np.where(np.isfinite(frac), frac, 0.5) * (hi - lo)
    for _ in range(n_newton):
        val, der = h(x, True)
        lo, hi = np.where(val < 0, x, lo), np.where(val < 0, hi, x)
        step = x - val / np.where(der > 0, der, np.inf)
        x = np.where((step >= lo) & (step <= hi) & (der > 0), step, 0.5 * (lo + hi))
    return np.exp(x)


def spin_fluctuation_thermo(T, log_gamma, w, s_max, quantities=("c", "s")):
    """C(T) and S(T) of the paramagnon modes with the entropy ceiling (module notes).

    Parameters
    ----------
    T : array_like, shape (n,)
        Temperature in K (≥ 0).
    log_gamma, w : ndarray, shape (n_sets, m)
        Compressed zone rule of the rates (:func:`compress_rates`).
    s_max : float
        R ln(2S + 1) in J/(mol K).
    quantities : sequence of {'c', 's'}

    Returns
    -------
    dict of str to ndarray, shape (n_sets, n)
        C and S in J/(mol K) per mol of magnetic ion.

    References
    ----------
    Ford, Lewis & O'Connell (1988); Moriya (1985), Ch. 3; Rushbrooke & Wood (1958).
    """
    T = np.asarray(T, float)[None, :]
    n_sets = log_gamma.shape[0]
    # T_x matters only for sets that reach it within the requested temperatures: where
    # S_gas + C_gas/2 < s_max at the highest T, T_x lies above every T (the sum increases
    # with T) and the gas holds throughout
    tx = np.full((n_sets, 1), np.inf)
    t_top = float(np.max(T)) if T.size else 0.0
    if t_top > 0:
        top = gas_thermodynamics(np.array([t_top]), log_gamma, w, ("s", "c"))
        need = (top["s"] + 0.5 * top["c"] >= s_max)[:, 0]
        if need.any():
            tx[need] = saturation_temperature(log_gamma[need], w[need], s_max)
    at_x = gas_thermodynamics(np.where(np.isfinite(tx), tx, 1.0), log_gamma, w, ("c", "s"))
    below = T <= tx
    Tb = np.where(below, T, tx)
    gas = gas_thermodynamics(Tb, log_gamma, w, tuple(quantities))
    with np.errstate(divide="ignore"):
        r2 = np.where(below, 1.0, (tx / np.where(below, 1.0, T)) ** 2)
    out = {}
    if "c" in quantities:
        out["c"] = np.where(below, gas["c"], at_x["c"] * r2)
    if "s" in quantities:
        out["s"] = np.where(below, gas["s"], at_x["s"] + 0.5 * at_x["c"] * (1.0 - r2))
    return out
