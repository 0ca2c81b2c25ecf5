"""Regenerate the shipped XXZ-chain thermodynamics table ``xxz_thermo.npz``.

The S = 1/2 XXZ chain H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}]
(J > 0 antiferromagnetic, periodic rings of N sites) is diagonalised exactly in its symmetry
sectors: total S^z (M up spins) and crystal momentum k = 2π m / N.  Each (M, k) block is a
complex Hermitian matrix in the basis of translation-symmetrised states (Sandvik 2010).  The
spin-inversion symmetry M ↔ N − M halves the work.

From the full spectra we get, per site and in units of J (t = k_B T / J):

* the longitudinal susceptibility χ*_zz = <(S^z_tot)²> / (N t) (S^z_tot commutes with H);
* the transverse one from the Kubo formula with the matrix elements of S^+_tot between the
  (M, k) and (M + 1, k) blocks, degenerate pairs taken in their limit β e^{-βE};
* C / R = (<E²> − <E>²) / (N t²) and S / R = (ln Z + <E>/t) / N.

Rings of 10 to 16 sites are extrapolated (Shanks) and compared to find where the
finite-size error exceeds the 0.5 % target.  χ*_zz, C and S of the *infinite* chain for
10⁻³ ≤ t ≤ 5 come from the non-linear integral equation of the quantum transfer matrix
(:mod:`evidence1d.physics.xxz_nlie`), exact up to discretisation; they replace the ring
values wherever they exceed 10⁻⁸.  Below the exact data the low-temperature forms of
:mod:`evidence1d.physics.chain_thermo` take over (fitted at the join) down to the table's
lowest point t = 10⁻⁶, above the table the high-temperature series does.

Run from the repository root; the result is deterministic (no random numbers)::

    python scripts/build_xxz_table.py                 # everything, about 20 min quiet
    python scripts/build_xxz_table.py --stage rings   # ~12 min (the 16-site ring ~10)
    python scripts/build_xxz_table.py --stage nlie    # ~6 min, side by side with rings
    python scripts/build_xxz_table.py --stage table   # assemble from build/xxz_cache

The json beside the table records the seconds of each stage as they ran.

References
----------
A. W. Sandvik, "Computational studies of quantum spin systems", AIP Conf. Proc. 1297, 135
(2010) — momentum-state basis and normalisation.
R. Kubo, J. Phys. Soc. Jpn. 12, 570 (1957) — static (isothermal) response from the spectrum.
A. Klümper, Z. Phys. B 91, 507 (1993) — quantum transfer matrix and its integral equation.
J. C. Bonner and M. E. Fisher, Phys. Rev. 135, A640 (1964) — finite-ring method for the chain.
"""
from __future__ import annotations

import json
import os
import platform
import sys
import time
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import scipy
import scipy.linalg
import scipy.optimize

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

#: pairs of levels closer than this (in J) are treated as degenerate in the Kubo sum
DEGENERATE = 1e-7


# --------------------------------------------------------------------------------------------
# basis of translation-symmetrised states
# --------------------------------------------------------------------------------------------
def _rotate(states, j, n_sites):
    """Cyclic left rotation of the bit patterns ``states`` by ``j`` sites (translation T^j)."""
    mask = (1 << n_sites) - 1
    return ((states << j) | (states >> (n_sites - j))) & mask


def ring_basis(n_sites):
    """Representatives, periods and shifts of all basis states of an N-site ring.

    Parameters
    ----------
    n_sites : int
        Number of sites N (even, 4 <= N <= 20).

    Returns
    -------
    dict
        ``rep`` (int64, (2^N,)): the smallest rotation of each state; ``shift``: the l with
        state = T^l rep; ``period``: the smallest R > 0 with T^R rep = rep; ``ups``: number of
        up spins (bit = 1) of each state.

    References
    ----------
    A. W. Sandvik, AIP Conf. Proc. 1297, 135 (2010), section 4.1.
    """
    n = int(n_sites)
    states = np.arange(1 << n, dtype=np.int64)
    rep = states.copy()
    jstar = np.zeros_like(states)
    period = np.full_like(states, n)
    for j in range(1, n):
        rot = _rotate(states, j, n)
        better = rot < rep
        rep[better] = rot[better]
        jstar[better] = j
        first = (rot == states) & (period == n)
        period[first] = j
    ups = np.zeros_like(states)
    for i in range(n):
        ups += (states >> i) & 1
    return {"rep": rep, "shift": (n - jstar) % n, "period": period, "ups": ups}


def _sector(basis, n_sites, m_up):
    """Representatives (sorted) of the sector with ``m_up`` up spins and their periods."""
    states = np.arange(1 << n_sites, dtype=np.int64)
    reps = states[(basis["rep"] == states) & (basis["ups"] == m_up)]
    return reps, basis["period"][reps]


def _hamiltonian_parts(basis, n_sites, m_up):
    """Diagonal Ising energy per representative and the hopping list of one S^z sector.

    H_xy = (J/2) Σ_i (S^+_i S^-_{i+1} + h.c.) flips antiparallel neighbours with amplitude 1/2;
    the Ising term is Δ Σ_i S^z_i S^z_{i+1} = Δ (n_parallel − n_antiparallel) / 4.
    """
    reps, per = _sector(basis, n_sites, m_up)
    n_anti = np.zeros_like(reps)
    src, dst, shift = [], [], []
    for i in range(n_sites):
        j = (i + 1) % n_sites
        pair = (1 << i) | (1 << j)
        anti = ((reps >> i) & 1) != ((reps >> j) & 1)
        n_anti += anti
        idx = np.nonzero(anti)[0]
        flipped = reps[idx] ^ pair
        src.append(idx)
        dst.append(np.searchsorted(reps, basis["rep"][flipped]))
        shift.append(basis["shift"][flipped])
    zz = (n_sites - 2 * n_anti) / 4.0
    return reps, per, zz, np.concatenate(src), np.concatenate(dst), np.concatenate(shift)


def _block(n_rows, n_cols, rows, cols, values):
    out = np.zeros((n_rows, n_cols), dtype=complex)
    np.add.at(out, (rows, cols), values)
    return out


def _momentum_blocks(n_sites, per, src, dst, shift, amp, per_dst=None):
    """Dense (k-sector) matrices of a translation-invariant operator given by a move list.

    Returns a list over m = 0..N-1 of (valid_src, valid_dst, matrix) where the matrix element
    <b(k)|O|a(k)> = Σ amp e^{ikl} sqrt(R_a / R_b) (Sandvik 2010, eq. 98).
    """
    per_dst = per if per_dst is None else per_dst
    out = []
    for m in range(n_sites):
        k = 2.0 * np.pi * m / n_sites
        ok_src = (m * per) % n_sites == 0
        ok_dst = (m * per_dst) % n_sites == 0
        isrc = np.cumsum(ok_src) - 1
        idst = np.cumsum(ok_dst) - 1
        keep = ok_src[src] & ok_dst[dst]
        s, d, l = src[keep], dst[keep], shift[keep]
        val = amp * np.exp(1j * k * l) * np.sqrt(per[s] / per_dst[d])
        out.append((ok_src, ok_dst,
                    _block(int(ok_dst.sum()), int(ok_src.sum()), idst[d], isrc[s], val)))
    return out


def prepare_ring(n_sites):
    """Δ-independent pieces of the exact diagonalisation of an N-site ring.

    Parameters
    ----------
    n_sites : int
        Even ring size N.

    Returns
    -------
    dict
        Per sector M = 0..N/2: the Ising diagonal, the hopping blocks per momentum, and the
        S^+_tot blocks (M, k) → (M + 1, k) for M < N/2.

    References
    ----------
    A. W. Sandvik, AIP Conf. Proc. 1297, 135 (2010).
    """
    n = int(n_sites)
    if n % 2 or n < 4:
        raise ValueError("ring size must be even and >= 4")
    basis = ring_basis(n)
    sectors = []
    for m_up in range(n // 2 + 1):
        reps, per, zz, src, dst, shift = _hamiltonian_parts(basis, n, m_up)
        hop = _momentum_blocks(n, per, src, dst, shift, 0.5)
        sectors.append({"reps": reps, "per": per, "zz": zz, "hop": hop})
    for m_up in range(n // 2):
        a, b = sectors[m_up], sectors[m_up + 1]
        src, dst, shift = [], [], []
        for i in range(n):
            down = ((a["reps"] >> i) & 1) == 0
            idx = np.nonzero(down)[0]
            raised = a["reps"][idx] | (1 << i)
            src.append(idx)
            dst.append(np.searchsorted(b["reps"], basis["rep"][raised]))
            shift.append(basis["shift"][raised])
        a["splus"] = _momentum_blocks(n, a["per"], np.concatenate(src), np.concatenate(dst),
                                      np.concatenate(shift), 1.0, per_dst=b["per"])
    return {"n_sites": n, "sectors": sectors}


def ring_spectrum(ring, delta):
    """Full spectrum of a ring and the data of its transverse Kubo sum.

    Parameters
    ----------
    ring : dict
        Output of :func:`prepare_ring`.
    delta : float
        Anisotropy Δ of H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ].

    Returns
    -------
    dict
        ``energy`` (levels in J), ``weight`` (multiplicity from M ↔ N − M), ``sz`` (S^z of
        each level), and for the transverse susceptibility the per-level Kubo sums ``kubo_e``,
        ``kubo_a`` (Σ_m |<m|S^+|n>|²/(E_m − E_n) over non-degenerate partners) and the
        degenerate pairs ``deg_e``, ``deg_w`` (energy and |<m|S^+|n>|²), all with the mirror
        multiplicity included.

    References
    ----------
    R. Kubo, J. Phys. Soc. Jpn. 12, 570 (1957).
    """
    n = ring["n_sites"]
    sectors = ring["sectors"]
    energy, weight, sz = [], [], []
    kubo_e, kubo_a, deg_e, deg_w = [], [], [], []
    previous = None
    for m_up, sec in enumerate(sectors):
        mult = 1.0 if 2 * m_up == n else 2.0
        current = []
        for m, (ok, _, hop) in enumerate(sec["hop"]):
            h = hop + np.diag(delta * sec["zz"][ok])
            if h.shape[0] == 0:
                current.append((np.zeros(0), np.zeros((0, 0))))
                continue
            w, v = scipy.linalg.eigh(h, check_finite=False)
            current.append((w, v))
            energy.append(w)
            weight.append(np.full(w.size, mult))
            sz.append(np.full(w.size, m_up - n / 2.0))
        if previous is not None:
            for m in range(n):
                wa, va = previous[0][m]
                wb, vb = current[m]
                splus = previous[1][m][2]
                if wa.size == 0 or wb.size == 0:
                    continue
                mat = np.abs(vb.conj().T @ splus @ va) ** 2  # (b levels, a levels)
                diff = wb[:, None] - wa[None, :]
                deg = np.abs(diff) < DEGENERATE
                with np.errstate(divide="ignore"):
                    inv = np.where(deg, 0.0, 1.0 / np.where(deg, 1.0, diff))
                kubo_e.append(wa)
                kubo_a.append(2.0 * (mat * inv).sum(axis=0))
                kubo_e.append(wb)
                kubo_a.append(-2.0 * (mat * inv).sum(axis=1))
                bi, ai = np.nonzero(deg)
                deg_e.append(0.5 * (wa[ai] + wb[bi]))
                deg_w.append(2.0 * mat[bi, ai])
        previous = (current, sec.get("splus"))
    cat = np.concatenate
    return {"n_sites": n, "energy": cat(energy), "weight": cat(weight), "sz": cat(sz),
            "kubo_e": cat(kubo_e), "kubo_a": cat(kubo_a),
            "deg_e": cat(deg_e) if deg_e else np.zeros(0),
            "deg_w": cat(deg_w) if deg_w else np.zeros(0)}


def ground_state_energy(n_sites, delta=1.0):
    """Ground-state energy per site E_0 / (N J) of a periodic XXZ ring.

    Parameters
    ----------
    n_sites : int
        Even ring size N.
    delta : float, optional
        Anisotropy Δ; 1 is the Heisenberg chain.

    Returns
    -------
    float
        E_0 / (N J); tends to 1/4 − ln 2 for Δ = 1 as N → ∞ (Hulthén 1938).

    References
    ----------
    L. Hulthén, Ark. Mat. Astron. Fys. 26A, No. 11 (1938).
    """
    spec = ring_spectrum(prepare_ring(n_sites), delta)
    return float(spec["energy"].min() / n_sites)


def ring_thermodynamics(spec, t):
    """Thermodynamics per site of one ring at reduced temperatures t = k_B T / J.

    Parameters
    ----------
    spec : dict
        Output of :func:`ring_spectrum`.
    t : array_like
        Reduced temperatures (> 0).

    Returns
    -------
    dict
        ``chi_star``, ``chi_star_perp`` (χ J / (N g² μ_B²)), ``c_over_r``, ``s_over_r``,
        each of the shape of ``t``.

    References
    ----------
    R. Kubo, J. Phys. Soc. Jpn. 12, 570 (1957); standard canonical-ensemble formulas.
    """
    t = np.asarray(t, dtype=float)
    n = spec["n_sites"]
    e0 = spec["energy"].min()
    beta = 1.0 / t.reshape(-1, 1)
    e = spec["energy"] - e0
    boltz = spec["weight"] * np.exp(-beta * e)
    z = boltz.sum(axis=1)
    e1 = (boltz * e).sum(axis=1) / z
    e2 = (boltz * e * e).sum(axis=1) / z
    m2 = (boltz * spec["sz"] ** 2).sum(axis=1) / z
    kubo = (np.exp(-beta * (spec["kubo_e"] - e0)) * spec["kubo_a"]).sum(axis=1)
    kubo += beta[:, 0] * (np.exp(-beta * (spec["deg_e"] - e0)) * spec["deg_w"]).sum(axis=1)
    out = {"chi_star": m2 * beta[:, 0] / n,
           # χ_xx = (1/Z) Σ |<m|S^x|n>|² (e^{-βE_n} − e^{-βE_m})/(E_m − E_n), S^x = (S^+ + S^-)/2
           "chi_star_perp": kubo / (2.0 * z * n),
           "c_over_r": (e2 - e1 ** 2) * beta[:, 0] ** 2 / n,
           "s_over_r": (np.log(z) + e1 * beta[:, 0]) / n}
    return {key: val.reshape(t.shape) for key, val in out.items()}


# --------------------------------------------------------------------------------------------
# table construction
# --------------------------------------------------------------------------------------------
#: ring sizes; the last three give a Shanks (Aitken Δ²) extrapolation, the first three a
#: second one whose difference estimates its error
RING_SIZES = (10, 12, 14, 16)
#: grid of the shipped table: uniform in ln t and in Δ
#: where rings and NLIE are computed: 10⁻³ ≤ t ≤ 10⁴, uniform in ln t ...
COMPUTED_GRID = np.exp(np.linspace(np.log(1e-3), np.log(1e4), 323))
#: ... and the table's grid: three more decades below, at the same spacing, filled by the
#: low-temperature forms (their log corrections and activation are kept down to t = 10⁻⁶
#: instead of a linear continuation in ln t)
_STEP = np.log(COMPUTED_GRID[1] / COMPUTED_GRID[0])
N_BELOW = int(round(np.log(1e3) / _STEP))
T_GRID = np.exp(np.log(COMPUTED_GRID[0]) + _STEP * np.arange(-N_BELOW, COMPUTED_GRID.size))


def _pad_below(values):
    """Pad (…, n_computed) arrays with NaN below the computed grid to the table grid."""
    values = np.asarray(values, dtype=float)
    if values.shape[-1] == T_GRID.size:
        return values
    pad = np.full(values.shape[:-1] + (T_GRID.size - values.shape[-1],), np.nan)
    return np.concatenate([pad, values], axis=-1)
DELTA_GRID = np.linspace(0.0, 3.0, 31)
QUANTITIES = ("chi_star", "chi_star_perp", "c_over_r", "s_over_r")


def ring_table(delta_grid=DELTA_GRID, t_grid=COMPUTED_GRID, sizes=RING_SIZES, log=print):
    """Thermodynamics of every ring size on the (Δ, t) grid.

    Returns
    -------
    dict
        ``data[N][quantity]`` of shape (n_delta, n_t), and ``seconds`` per ring size.
    """
    data, seconds = {}, {}
    for n in sizes:
        start = time.perf_counter()
        ring = prepare_ring(n)
        rows = {q: [] for q in QUANTITIES}
        for delta in delta_grid:
            thermo = ring_thermodynamics(ring_spectrum(ring, float(delta)), t_grid)
            for q in QUANTITIES:
                rows[q].append(thermo[q])
        data[n] = {q: np.array(v) for q, v in rows.items()}
        seconds[n] = time.perf_counter() - start
        log(f"N = {n}: {seconds[n]:.1f} s")
    return {"data": data, "seconds": seconds}


#: finite-size target: the two largest rings must agree to this relative accuracy
TOLERANCE = 0.005
#: half-width in ln t of the smooth blend (above the join) between low-temperature form and ring data
BLEND = 0.15
#: powers of t in the exponent of the low-temperature entropy form
C_POWERS = (2, 3, 4)
GROUPS = {"chi": ("chi_star",), "perp": ("chi_star_perp",), "cs": ("c_over_r", "s_over_r")}


def _shanks(q0, q1, q2):
    """Aitken Δ² (Shanks) limit of three successive ring sizes; q2 where already converged.

    Finite-temperature corrections of rings decay exponentially with N (for N t ≫ u), so
    q_N ≈ q_∞ + A r^N and q_∞ = q2 − (q2 − q1)² / ((q2 − q1) − (q1 − q0)).
    (D. Shanks, J. Math. Phys. 34, 1 (1955).)
    """
    d1, d2 = q1 - q0, q2 - q1
    den = d2 - d1
    converged = np.abs(d2) < 1e-9 * np.abs(q2)
    safe = np.where(converged | (den == 0.0), 1.0, den)
    return np.where(converged | (den == 0.0), q2, q2 - d2 * d2 / safe)


def ring_estimate(rings):
    """Extrapolated ring values and their relative error estimate.

    Returns
    -------
    (dict, dict)
        quantity → Shanks limit of the three largest rings, and quantity → |S_big/S_small − 1|
        with S_small the limit from the three smallest rings.
    """
    sizes = sorted(rings)
    best, err = {}, {}
    for q in QUANTITIES:
        vals = [rings[n][q] for n in sizes]
        with np.errstate(all="ignore"):
            big = _shanks(*vals[-3:])
            small = _shanks(*vals[-4:-1])
        best[q] = big
        with np.errstate(all="ignore"):
            e = np.abs(big / small - 1.0)
        err[q] = np.where(np.isfinite(e), e, np.inf)
    return best, err


def join_temperatures(err, t_grid=T_GRID, delta_grid=DELTA_GRID, tol=TOLERANCE):
    """Join temperature per Δ and quantity group: below it the ring estimate is not converged.

    The raw values (smallest t above which the error estimate stays below ``tol``) are made a
    smooth function of Δ by a quartic (quadratic for the noisier transverse one) fit in ln t,
    shifted up to lie above every raw value; rows converged down to the second computed
    point (exact NLIE values) keep that join.

    Returns
    -------
    dict
        group → (raw, smooth) arrays of shape (n_delta,).
    """
    window = t_grid <= 5.0
    out = {}
    for group, names in GROUPS.items():
        rel = np.max([err[q] for q in names], axis=0)[:, window]
        raw = []
        for row in rel:
            bad = np.nonzero(~(row < tol))[0]
            raw.append(t_grid[window][bad.max() + 1] if bad.size else t_grid[window][0])
        raw = np.log(np.array(raw))
        # rows converged down to the second computed point (the exact NLIE rows of Δ ≲ 1)
        # keep that join: it is the same for all of them, so already smooth in Δ
        floor = COMPUTED_GRID[1] if t_grid.size == T_GRID.size else t_grid[1]
        lowest = raw <= np.log(floor) + 1e-12
        fit = raw.copy()
        if np.count_nonzero(~lowest) > 5:
            d, r = delta_grid[~lowest], raw[~lowest]
            coef = np.polynomial.polynomial.polyfit(d, r, 2 if group == "perp" else 4)
            smooth = np.polynomial.polynomial.polyval(d, coef)
            fit[~lowest] = smooth + max(0.0, float(np.max(r - smooth)))
        out[group] = (np.exp(raw), np.exp(fit))
    return out


def _smoothstep(z):
    """C² step from 0 (z ≤ 0) to 1 (z ≥ 1)."""
    z = np.clip(z, 0.0, 1.0)
    return z ** 3 * (10.0 - 15.0 * z + 6.0 * z * z)


def _match(funcs, target, log_t, i):
    """Coefficients c with Σ c_k f_k matching value and ln-t slope of target at index i.

    With more functions than the two conditions the minimum-norm solution (functions scaled
    to 1 at the join) is taken; it stays continuous in Δ when two functions become collinear.
    """
    def d(f):
        return (f[i + 1] - f[i - 1]) / (log_t[i + 1] - log_t[i - 1])
    scale = np.array([f[i] for f in funcs])
    mat = np.array([[f[i] for f in funcs], [d(f) for f in funcs]]) / scale
    coef = np.linalg.pinv(mat) @ np.array([target[i], d(target)])
    return coef / scale


def assemble_delta(delta, ring_big, t_join, log=print):
    """Final ln Q on ``T_GRID`` for one Δ: ring data joined to the low-T forms.

    Parameters
    ----------
    delta : float
        Anisotropy Δ.
    ring_big : dict
        quantity → values (n_t,) of the largest ring on ``T_GRID``.
    t_join : dict
        group → join temperature.

    Returns
    -------
    (dict, dict)
        quantity → ln Q on ``T_GRID``, and the fitted coefficients with diagnostics.
    """
    from evidence1d.physics.chain_thermo import low_temperature_basis
    lt = np.log(T_GRID)
    tt = T_GRID
    basis = low_temperature_basis(tt, delta)
    x, y = basis["x"], basis["y"]
    info = {}
    final = {}

    def blend(log_low, log_ring, tj):
        w = _smoothstep((lt - np.log(tj)) / (2 * BLEND))
        return np.where(w <= 0.0, log_low, np.where(w >= 1.0, log_ring,
                                                    (1 - w) * log_low + w * log_ring))

    # longitudinal susceptibility: χ0 (1 + a y + b t² + c t⁴) √(1+x) e^{-x}
    i = int(np.searchsorted(tt, t_join["chi"]))
    env = np.log(basis["chi0"]) + basis["log_g_chi"] - x
    target = ring_big["chi_star"] / np.exp(env) - 1.0
    a, b, c = _match([y, tt ** 2, tt ** 4], target, lt, i)
    factor = 1.0 + a * y + b * tt ** 2 + c * tt ** 4
    # in logarithms: e^{-x} underflows deep in the activated range of Δ > 1
    log_chi_low = env + np.log(np.maximum(factor, 1e-300))
    near_join = tt <= t_join["chi"] * np.exp(2 * BLEND)
    log_chi_low = np.where(near_join, log_chi_low, np.log(ring_big["chi_star"]))
    chi_low = np.where(near_join, factor, 1.0)              # only its sign is checked below
    info["chi"] = {"a": a, "b": b, "c": c}
    final["chi_star"] = blend(log_chi_low, np.log(ring_big["chi_star"]), t_join["chi"])

    # transverse: χ_zz + c0 + c1 χ_zz + c2 t², the correction fitted to χ_⊥ − χ_zz of the
    # rings, so that it vanishes identically at Δ = 1 (SU(2) symmetry)
    i = int(np.searchsorted(tt, t_join["perp"]))
    chi_final = np.exp(final["chi_star"])
    c0, c1, c2 = _match([np.ones_like(tt), chi_final, tt ** 2],
                        ring_big["chi_star_perp"] - ring_big["chi_star"], lt, i)
    perp_low = chi_final + c0 + c1 * chi_final + c2 * tt ** 2
    perp_low = np.where(tt <= t_join["perp"] * np.exp(2 * BLEND), perp_low,
                        ring_big["chi_star_perp"])
    info["perp"] = {"c0": c0, "c1": c1, "c2": c2}
    final["chi_star_perp"] = blend(np.log(np.maximum(perp_low, 1e-300)), np.log(ring_big["chi_star_perp"]),
                                   t_join["perp"])

    # entropy first: S/R = (π t / 3u) exp(a t² + b t³ + c t⁴) (1+x)^{3/2} e^{-x} (positive,
    # the conformal slope at t → 0, the dilute spinon gas S ∝ t^{-1/2} e^{-ε_s/t} for Δ > 1).
    # ln S, its first and its second derivative in ln t are matched to the ring entropy at
    # the join; since C = dS/d ln t, the heat capacity of the same form then joins the ring C
    # with continuous value and slope, and S = ∫ C/t holds on both sides (no blend needed)
    i = int(np.searchsorted(tt, t_join["cs"]))
    powers = C_POWERS
    log_env = np.log(basis["c1"] * tt) + 1.5 * np.log1p(x) - x
    dlog_env = 1.0 - 1.5 * x / (1.0 + x) + x                # d ln(env) / d ln t
    near = slice(i - 1, i + 2)
    target = np.log(ring_big["s_over_r"][near]) - log_env[near]
    h = lt[i + 1] - lt[i]

    def conditions(f):
        return np.array([f[1], (f[2] - f[0]) / (2 * h), (f[2] - 2 * f[1] + f[0]) / h ** 2])
    mat = np.array([conditions(tt[near] ** p) for p in powers]).T
    coef = np.linalg.solve(mat, conditions(target))
    poly = np.minimum(sum(k * tt ** p for k, p in zip(coef, powers)), 700.0)
    log_s_low = log_env + poly                              # logarithms: no underflow
    c_low = dlog_env + sum(p * k * tt ** p for k, p in zip(coef, powers))   # C / S
    below = tt < t_join["cs"]
    with np.errstate(invalid="ignore"):
        final["s_over_r"] = np.where(below, log_s_low, np.log(ring_big["s_over_r"]))
        final["c_over_r"] = np.where(below, log_s_low + np.log(np.maximum(c_low, 1e-300)),
                                     np.log(ring_big["c_over_r"]))
    info["c"] = {"powers": list(powers), "coefficients": [float(k) for k in coef]}
    c_ratio = np.exp(log_s_low[i]) * c_low[i] / ring_big["c_over_r"][i] - 1.0
    info["c_mismatch_at_join"] = float(c_ratio)
    low = tt < t_join["cs"]
    if min(chi_low[low].min(), c_low[low].min(), perp_low[low].min()) <= 0.0:
        log(f"warning: non-positive low-temperature form at delta = {delta}")
    return final, info


def build_table(rings, delta_grid=DELTA_GRID, t_grid=T_GRID, log=print, nlie=None):
    """Stored logarithms of the shipped table and the diagnostics of its construction.

    Parameters
    ----------
    rings : dict
        ring size → quantity → (n_delta, n_t) values (from :func:`ring_table`).
    nlie : dict, optional
        quantity → (n_delta, n_t) infinite-chain values from :func:`nlie_table` (NaN where
        not solved); they replace the ring estimates of χ*_zz, C and S wherever present.

    Returns
    -------
    (dict, dict)
        npz arrays (``log_t``, ``delta`` and one (n_delta, n_t) array per quantity holding
        ln Q + ε_s/t for the activated quantities, ln Q otherwise) and json diagnostics.
    """
    from evidence1d.physics.chain_thermo import ACTIVATED, activation_energy
    rings = {n: {q: _pad_below(v) for q, v in data.items()} for n, data in rings.items()}
    if nlie is not None:
        nlie = {q: _pad_below(nlie[q]) for q in NLIE_QUANTITIES}
    big, err = ring_estimate(rings)
    exact = np.zeros((delta_grid.size, t_grid.size), bool)
    if nlie is not None:
        # the infinite-chain values replace the ring estimates wherever the NLIE was solved
        # (never at the first grid points, which the low-temperature match needs)
        exact = np.isfinite(nlie["c_over_r"])
        # the join needs exact values on both sides of it (value, slope and curvature are
        # matched from three points), so the lowest exact point is not a candidate
        lowest = np.argmax(exact, axis=1)
        inner = exact & (np.arange(t_grid.size)[None, :] > lowest[:, None])
        for q in NLIE_QUANTITIES:
            big[q] = np.where(exact, nlie[q], big[q])
            err[q] = np.where(inner, 0.0, err[q])
    joins = join_temperatures(err, t_grid, delta_grid)
    arrays = {q: np.zeros((delta_grid.size, t_grid.size)) for q in QUANTITIES}
    fits = []
    for j, delta in enumerate(delta_grid):
        ring_big = {q: big[q][j] for q in QUANTITIES}
        # entropy of the ring region from its heat capacity, S = ln 2 − ∫_t^∞ C/t' dt'
        # (high-temperature tail (2 + Δ²)/(32 t²) beyond the grid), so that S and C are
        # exactly consistent and S(∞) = ln 2
        c = ring_big["c_over_r"]
        with np.errstate(all="ignore"):
            seg = 0.5 * (c[1:] + c[:-1]) * np.diff(np.log(t_grid))
            tail = (2.0 + delta ** 2) / (32.0 * t_grid[-1] ** 2)
            above = np.concatenate([np.cumsum(seg[::-1])[::-1], [0.0]]) + tail
        ring_big["s_over_r"] = np.where(exact[j], big["s_over_r"][j], np.log(2.0) - above)
        t_join = {g: float(joins[g][1][j]) for g in GROUPS}
        with np.errstate(all="ignore"):
            final, info = assemble_delta(float(delta), ring_big, t_join, log=log)
        x = activation_energy(delta) / t_grid
        for q in QUANTITIES:
            arrays[q][j] = final[q] + (x if q in ACTIVATED else 0.0)
        info.update({"delta": float(delta), "t_join": t_join,
                     "t_join_raw": {g: float(joins[g][0][j]) for g in GROUPS}})
        fits.append(info)
    arrays["log_t"] = np.log(t_grid)
    arrays["delta"] = np.asarray(delta_grid, dtype=float)
    return arrays, {"fits": fits}


#: the NLIE supplies χ*_zz, C and S of the infinite chain at t ≤ NLIE_T_MAX ...
NLIE_T_MAX = 5.0
#: ... wherever all three exceed NLIE_FLOOR (below it the activated values of Δ > 1 are
#: smaller than the equation's absolute accuracy allows to resolve)
NLIE_FLOOR = 1e-8
NLIE_QUANTITIES = ("chi_star", "c_over_r", "s_over_r")


def nlie_table(delta_grid=DELTA_GRID, t_grid=COMPUTED_GRID, log=print):
    """χ*_zz, C/R and S/R of the infinite chain from the NLIE on the (Δ, t) grid.

    Solved from t = NLIE_T_MAX downwards; for Δ > 1 the descent stops once a quantity falls
    below NLIE_FLOOR. Points not computed are NaN.

    Returns
    -------
    dict
        quantity → (n_delta, n_t) values, and ``seconds``.
    """
    from evidence1d.physics.xxz_nlie import NlieGrid, nlie_thermodynamics
    start = time.perf_counter()
    out = {q: np.full((delta_grid.size, t_grid.size), np.nan) for q in NLIE_QUANTITIES}
    todo = np.nonzero(t_grid <= NLIE_T_MAX)[0][::-1]
    for j, delta in enumerate(delta_grid):
        grid = NlieGrid(float(delta))
        for chunk in np.array_split(todo, max(1, todo.size // 16)):
            vals = nlie_thermodynamics(t_grid[chunk], float(delta), grid)
            for q in NLIE_QUANTITIES:
                out[q][j, chunk] = vals[q]
            if min(np.min(vals[q]) for q in NLIE_QUANTITIES) < NLIE_FLOOR:
                break
        ok = np.all([out[q][j] > NLIE_FLOOR for q in NLIE_QUANTITIES], axis=0)
        # keep only the contiguous range down from NLIE_T_MAX
        bad = np.nonzero(~ok & (t_grid <= NLIE_T_MAX))[0]
        cut = bad.max() + 1 if bad.size else 0
        for q in NLIE_QUANTITIES:
            out[q][j, :cut] = np.nan
        log(f"NLIE delta = {delta:.2f}: t >= {t_grid[cut]:.4g} "
            f"({time.perf_counter() - start:.0f} s)")
    out["seconds"] = time.perf_counter() - start
    return out


def _save(path, data):
    flat = {}
    for key, value in data.items():
        if isinstance(value, dict):
            for sub, arr in value.items():
                flat[f"{key}/{sub}"] = np.asarray(arr)
        else:
            flat[key] = np.asarray(value)
    np.savez(path, **flat)


def _load(path):
    out = {}
    with np.load(path) as raw:
        for key in raw.files:
            if "/" in key:
                head, sub = key.split("/", 1)
                out.setdefault(int(head) if head.isdigit() else head, {})[sub] = raw[key]
            else:
                out[key] = raw[key][()] if raw[key].ndim == 0 else raw[key]
    return out


def main(argv=None):
    """Run the diagonalisations and the NLIE, build the table and write npz and json.

    ``--stage rings`` and ``--stage nlie`` compute one part each and keep it in ``--cache``
    (so that they can run side by side on two cores); ``--stage table`` assembles the table
    from the cache. The default runs everything in one go.
    """
    import argparse
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--stage", choices=("all", "rings", "nlie", "table"), default="all")
    parser.add_argument("--cache", type=Path, default=ROOT / "build" / "xxz_cache")
    args = parser.parse_args(argv)
    args.cache.mkdir(parents=True, exist_ok=True)
    if args.stage in ("all", "rings"):
        rt = ring_table()
        _save(args.cache / "rings.npz", {**{str(n): v for n, v in rt["data"].items()},
                                         "seconds": {str(n): v for n, v in rt["seconds"].items()}})
    if args.stage in ("all", "nlie"):
        _save(args.cache / "nlie.npz", nlie_table())
    if args.stage in ("all", "table"):
        raw = _load(args.cache / "rings.npz")
        rt = {"data": {n: v for n, v in raw.items() if isinstance(n, int)},
              "seconds": {int(n): float(v) for n, v in raw["seconds"].items()}}
        nlie = _load(args.cache / "nlie.npz")
        nlie["seconds"] = float(nlie["seconds"])
        write_table(rt, nlie)


def write_table(rt, nlie=None, out_dir=ROOT / "evidence1d" / "physics" / "tables"):
    """Build the table from ring data ``rt`` (from :func:`ring_table`) and the NLIE values
    ``nlie`` (from :func:`nlie_table`) and write npz + json.

    The recorded run time is the diagonalisation time per ring size plus the NLIE time plus
    the build time.
    """
    start = time.perf_counter()
    out_dir = Path(out_dir)
    out_dir.mkdir(parents=True, exist_ok=True)
    arrays, diag = build_table(rt["data"], nlie=nlie)
    np.savez_compressed(out_dir / "xxz_thermo.npz", **arrays)
    meta = {
        "method": "chi_zz, C and S of the infinite chain for t <= "
                  f"{NLIE_T_MAX} from the non-linear integral equation of the quantum "
                  "transfer matrix (evidence1d.physics.xxz_nlie), where all three exceed "
                  f"{NLIE_FLOOR}; elsewhere (chi_perp everywhere) "
                  "exact diagonalisation of periodic S=1/2 XXZ rings in (S^z, k) sectors "
                  "(complex Hermitian blocks, spin inversion M <-> N-M); transverse "
                  "susceptibility from the Kubo formula with <M+1,k|S^+_tot|M,k>; ring "
                  "values = Shanks (Aitken) limit of the three largest rings, error "
                  "estimate = its difference from the limit of the three smallest; where "
                  f"that exceeds {TOLERANCE:.1%} the low-temperature forms of "
                  "evidence1d.physics.chain_thermo take over: susceptibilities with value "
                  f"and slope matched and a C2 blend over ln t_join .. ln t_join + "
                  f"{2 * BLEND}; entropy with value, slope and curvature matched, C = "
                  "dS/d ln t; ring entropy = ln 2 - integral of C/t from t to infinity",
        "hamiltonian": "H = J sum_i [SxSx + SySy + Delta SzSz], J > 0",
        "stored": "ln Q on a grid uniform in ln t and Delta; ln Q + eps_s/t for chi_star, "
                  "c_over_r, s_over_r (eps_s = half the two-spinon gap, zero for Delta<=1)",
        "ring_sizes": sorted(int(n) for n in rt["data"]),
        "seconds_per_ring_size": {str(k): round(v, 1) for k, v in rt["seconds"].items()},
        "grid": {"t_min": float(T_GRID[0]), "t_max": float(T_GRID[-1]),
                 "n_t": int(T_GRID.size), "delta_min": float(DELTA_GRID[0]),
                 "delta_max": float(DELTA_GRID[-1]), "n_delta": int(DELTA_GRID.size)},
        "joins": diag["fits"],
        "nlie_seconds": round(nlie["seconds"], 1) if nlie else None,
        "run_time_seconds": round(time.perf_counter() - start + sum(rt["seconds"].values())
                                  + (nlie["seconds"] if nlie else 0.0), 1),
        "machine": f"{platform.machine()}, {os.cpu_count()} cores (shared)",
        "date": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "versions": {"python": platform.python_version(), "numpy": np.__version__,
                     "scipy": scipy.__version__},
    }
    with open(out_dir / "xxz_thermo.json", "w", encoding="utf-8") as fh:
        json.dump(meta, fh, indent=1)
    print(f"wrote {out_dir / 'xxz_thermo.npz'} in {meta['run_time_seconds']} s")


if __name__ == "__main__":
    main()
