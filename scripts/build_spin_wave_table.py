"""Regenerate the shipped magnon-gas table ``spin_wave_thermo.npz`` (and its ``.json``).

The linear spin-wave energy of the coupled chains (:mod:`evidence1d.physics.magnon`) in units
of S J_0 (J_0 = 2 J + z_⊥ J_⊥) depends only on r = J_⊥/J, Δ and the wavevector, through
J(Q)/J_0 = (cos q + r v) / (1 + z_⊥ r / 2) with v = cos q_a + cos q_b for z_⊥ = 4 chains
(rectangular) and v = cos q_a for z_⊥ = 2 (chains in planes).  The magnon-gas C/R, S/R and
the zone average ⟨n(n+1)⟩ are therefore functions of τ = k_B T / (S J_0), r and Δ alone, for
every spin S, one table per geometry.  This script tabulates

    Y_k(ln τ, asinh(r / r_0), asinh(g / g_0)) = ln F_k + g / τ,   g = √(Δ² − 1),

for F_k ∈ {C/R, S/R, ⟨n(n+1)⟩}; adding g/τ removes the activated factor e^{−g/τ}, so Y is
smooth and bounded in the gapped, low-temperature corner.  The asinh coordinates are
logarithmic for r ≫ r_0 and g ≫ g_0 (the crossovers 1D → 3D at τ ~ √r and gapless →
gapped at τ ~ g are scale-free) and linear, hence analytic, through r = 0 and Δ = 1.

Zone quadrature (more accurate than the product rule of the direct path at low τ): the
interchain sum v = cos q_a + cos q_b (z_⊥ = 4) is integrated with its exact density, the
square-lattice density of states p(v) = K(1 − v²/4) / π² (K the complete elliptic integral
of the first kind, parameter m), and the chain phase q uniformly; both with the tanh-sinh
(double-exponential) rule, v on [−2, 0] and [0, 2] (the logarithmic van Hove singularity
at v = 0 sits at an end point).  For z_⊥ = 2, v = cos q_a and q_a is integrated uniformly
like q.  The node deficits min(1 − J(Q)/J_0, 1 + J(Q)/J_0) are
compressed per r onto ``N_BINS`` log-spaced values by linear cloud-in-cell assignment in
the log, which conserves the weight and the mean log; energies then come from
:func:`evidence1d.physics.magnon.reduced_energy` and the sums from
:func:`evidence1d.physics.bose_thermo.log_zone_averages`.

Run ``python scripts/build_spin_wave_table.py`` from the repository root (deterministic;
a few minutes on one core).  It writes the table, a json with the grid and run time, and
prints a self-check against the direct product quadrature.

References
----------
H. Takahasi & M. Mori, Publ. RIMS Kyoto Univ. 9, 721 (1974) (double-exponential rule).
E. N. Economou, Green's Functions in Quantum Physics, 3rd ed. (Springer, 2006), Ch. 5
(density of states of the square lattice in terms of K).
R. M. White, Quantum Theory of Magnetism, 3rd ed. (Springer, 2007), Ch. 6.
"""
from __future__ import annotations

import json
import platform
import sys
import time
from datetime import datetime, timezone
from pathlib import Path

import numpy as np
import scipy
from scipy import special

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from evidence1d.physics import bose_thermo, magnon, spin_wave_table  # noqa: E402

OUT = ROOT / "evidence1d" / "physics" / "tables" / "spin_wave_thermo.npz"

#: grid of the table: (first, last, number of points) of each coordinate
LN_TAU = (np.log(1e-5), np.log(50.0), 122)
R_0, R_MAX, N_R = 5e-11, 100.0, 59          # x = asinh(r / R_0)
G_0, DELTA_MAX, N_G = 1e-6, 3.0, 46         # y = asinh(√(Δ² − 1) / G_0)
DE_STEP, DE_TMAX = 0.04, 3.2                # tanh-sinh step and half range in t
N_BINS = 6000                               # log-spaced deficits per r
Z_PERP = (2, 4)                             # interchain geometries tabulated
D_MIN = 1e-18                               # smallest deficit kept apart


def tanh_sinh(a, b, h=DE_STEP, t_max=DE_TMAX):
    """Tanh-sinh nodes on [a, b]: distances to a and to b, and weights (sum b − a)."""
    t = np.arange(-t_max, t_max + 0.5 * h, h)
    z = 0.5 * np.pi * np.sinh(t)
    half = 0.5 * (b - a)
    to_a = half * 2.0 / (1.0 + np.exp(-2.0 * z))      # (b − a)(1 + tanh z)/2, exact at a
    to_b = half * 2.0 / (1.0 + np.exp(2.0 * z))
    w = half * h * 0.5 * np.pi * np.cosh(t) / np.cosh(z) ** 2
    return to_a, to_b, w


def zone_nodes_reduced(z_perp=4):
    """Nodes of the zone average: (1 − cos q, 1 + cos q, z/2 − v, z/2 + v), weights (sum 1)."""
    qa, qb, wq = tanh_sinh(0.0, np.pi)
    one_m_u, one_p_u = 2.0 * np.sin(0.5 * qa) ** 2, 2.0 * np.sin(0.5 * qb) ** 2
    wq = wq / np.pi
    U = lambda a: a[:, None]                                  # noqa: E731
    if z_perp == 2:                                           # v = cos q_a, q_a uniform
        return (U(one_m_u), U(one_p_u), one_m_u[None, :], one_p_u[None, :],
                U(wq / wq.sum()) * (wq / wq.sum())[None, :])
    # v on [0, 2]: distance to 0 is |v|, to 2 is 2 − v; mirrored for [−2, 0]
    v0, v2, wv = tanh_sinh(0.0, 2.0)
    dens = special.ellipkm1(v0 * v0 / 4.0) / np.pi ** 2     # K(m), 1 − m = v²/4
    two_m_v = np.concatenate([v2, 4.0 - v2])                 # v = 2 − v2 and v = −(2 − v2)
    two_p_v = np.concatenate([4.0 - v2, v2])
    wv = np.concatenate([wv * dens, wv * dens])
    wv = wv / wv.sum()                                        # exact normalisation is 1
    return (U(one_m_u), U(one_p_u), two_m_v[None, :], two_p_v[None, :],
            U(wq / wq.sum()) * wv[None, :])


def deficit_bins(r, nodes, n_bins=N_BINS, z_perp=4):
    """Deficits d = min(1 ∓ J(Q)/J_0) compressed onto log-spaced values; weights sum 1."""
    omu, opu, tmv, tpv, w = nodes
    # J(Q)/J_0 = (u + r v)/(1 + z r / 2) (magnon.exchange_sum divided by J_0)
    d_m = (omu + r * tmv) / (1.0 + 0.5 * z_perp * r)
    d_p = (opu + r * tpv) / (1.0 + 0.5 * z_perp * r)
    d = np.minimum(d_m, d_p).ravel()
    lg = np.log(np.maximum(d, D_MIN))
    lo, hi = np.log(D_MIN), 0.0
    pos = (lg - lo) / (hi - lo) * (n_bins - 1)
    i0 = np.minimum(np.floor(pos).astype(int), n_bins - 2)
    f = pos - i0
    wb = np.bincount(i0, weights=w.ravel() * (1.0 - f), minlength=n_bins)
    wb += np.bincount(i0 + 1, weights=w.ravel() * f, minlength=n_bins)
    return np.exp(np.linspace(lo, hi, n_bins)), wb


def table_point(d, wb, delta, tau):
    """Y_C, Y_S, Y_L at one (r, Δ) for all τ, each (n_tau,)."""
    eps = magnon.reduced_energy(d, 2.0 - d, delta)
    gap = np.sqrt(max(delta * delta - 1.0, 0.0))
    keep = wb > 0
    return bose_thermo.log_zone_averages(eps[keep], wb[keep], tau, gap)


def build():
    s = np.linspace(*LN_TAU)
    x = np.linspace(0.0, np.arcsinh(R_MAX / R_0), N_R)
    y = np.linspace(0.0, np.arcsinh(np.sqrt(DELTA_MAX ** 2 - 1.0) / G_0), N_G)
    r = R_0 * np.sinh(x)
    delta = np.sqrt(1.0 + (G_0 * np.sinh(y)) ** 2)
    tau = np.exp(s)
    out = np.empty((3, len(Z_PERP), N_R, N_G, s.size))
    n_nodes = {}
    for iz, z in enumerate(Z_PERP):
        nodes = zone_nodes_reduced(z)
        n_nodes[z] = int(nodes[-1].size)
        for i, ri in enumerate(r):
            d, wb = deficit_bins(ri, nodes, z_perp=z)
            for k, dk in enumerate(delta):
                out[:, iz, i, k, :] = table_point(d, wb, dk, tau)
            print(f"z_perp = {z}, r = {ri:.3e} done ({i + 1}/{N_R})", flush=True)
    return s, x, y, out, n_nodes


def self_check(table_file):
    """Largest relative difference table vs the direct product rule (n_grid = 48, T ≥ 2 K)."""
    rng = np.random.default_rng(7)
    J = np.exp(rng.uniform(np.log(0.1), np.log(20.0), (40, 1)))
    Jp, D = rng.uniform(0.0, 2.0, (40, 1)), rng.uniform(1.0, 3.0, (40, 1))
    T = np.geomspace(2.0, 400.0, 30)
    res = {}
    for z in Z_PERP:
        a = bose_thermo.magnon_gas(T, J, Jp, D, 0.5, n_grid=48, n_bins=None,
                                   method="direct", z_perp=z)
        b = bose_thermo.magnon_gas(T, J, Jp, D, 0.5, method="table", z_perp=z)
        tau = bose_thermo.K_B_MEV * T / (0.5 * (2.0 * J + z * Jp))
        for k in ("c_over_r", "s_over_r"):
            ok = (a[k] > 1e-6) & (tau <= np.exp(LN_TAU[1]))  # inside the tabulated τ range
            res[f"z_perp={z}:{k}"] = float(np.max(np.abs(b[k][ok] / a[k][ok] - 1.0)))
    return res


def main():
    t0 = time.perf_counter()
    s, x, y, out, n_nodes = build()
    seconds = time.perf_counter() - t0
    OUT.parent.mkdir(parents=True, exist_ok=True)
    np.savez_compressed(OUT, ln_tau=s, x_r=x, y_gap=y, r_0=R_0, g_0=G_0,
                        z_perp=np.array(Z_PERP), y_c=out[0].astype(np.float32),
                        y_s=out[1].astype(np.float32), y_l=out[2].astype(np.float32))
    bose_thermo.spin_wave_table.cache_clear()
    spin_wave_table._geometry_coefficients.cache_clear()
    check = self_check(OUT)
    meta = {
        "table": OUT.name, "built": datetime.now(timezone.utc).isoformat(timespec="seconds"),
        "run_time_s": round(seconds, 1), "python": platform.python_version(),
        "numpy": np.__version__, "scipy": scipy.__version__,
        "grid": {"ln_tau": [float(s[0]), float(s[-1]), int(s.size)],
                 "x_r = asinh(r / r_0)": [0.0, float(x[-1]), int(x.size)], "r_0": R_0,
                 "r_max": R_MAX,
                 "y_gap = asinh(sqrt(delta^2 - 1) / g_0)": [0.0, float(y[-1]), int(y.size)],
                 "g_0": G_0, "delta_max": DELTA_MAX, "z_perp": list(Z_PERP)},
        "quadrature": {"rule": "tanh-sinh in q; in v with the square-lattice density "
                                "(z_perp = 4) or in q_a (z_perp = 2)",
                       "step": DE_STEP, "t_max": DE_TMAX, "nodes": {str(k): v for k, v in n_nodes.items()},
                       "deficit_bins": N_BINS},
        "functions": {"y_c": "ln(C/R) + g/tau", "y_s": "ln(S/R) + g/tau",
                      "y_l": "ln<n(n+1)> + g/tau"},
        "self_check_max_rel_diff_vs_direct_n_grid_48": check,
        "file_bytes": OUT.stat().st_size,
    }
    OUT.with_suffix(".json").write_text(json.dumps(meta, indent=2) + "\n")
    print(json.dumps(meta, indent=2))


if __name__ == "__main__":
    main()
