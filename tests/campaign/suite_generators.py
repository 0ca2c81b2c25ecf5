"""A generator file for ``evidence1d calibrate --generators``: two generators of the
misspecification suite (tests/misspecification) adapted to any case's design points.

Not a test module: ``tests/campaign/test_outside_generators.py`` runs a calibration with
it, and a user may copy it as a starting point.  The physics is the suite's own, written
independently of evidence1d's kernels (``two_spinon.py``: the exact two-spinon line shape
of Karbach et al., PRB 55, 12510 (1997); ``ring_ed.py``: exact diagonalisation of a
12-site ring; ``generators.py``: Bose factor, Gaussian resolution, Cu²⁺ form factor); this
file only evaluates it at the case's points, temperatures and resolution instead of the
suite's fixed design, and draws the parameters.

Adapter choices (not physics):
- chain phase q = Q_∥ d, interchain phase q_a = Q_⊥ a (the case's spin spacing d and
  lattice constant a: the first direction across the chain of an orthogonal cell);
- intensity I = s |F(Q)|² S(Q, E) + b, with s set so that the mean magnetic intensity is
  0.5-1.5 × the mean of the case's measured values and b = 0-0.2 × that mean, so that the
  case's errors give a signal-to-noise like the measurement's;
- χ in emu/mol and C in J/(mol K) of magnetic ion only (other units: a one-line error).
"""
from __future__ import annotations

import sys
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "misspecification"))

import generators as G  # noqa: E402  (the suite's generators)
import two_spinon  # noqa: E402

#: the 12-site ring is within ~1 % of the infinite chain for t = k_BT/J above these
#: (ring_ed.py, measured there against the infinite-chain values)
T_MIN_CHI, T_MIN_C = 0.33, 0.4


def _spectrum_points(ds, sample):
    if not ds["spectrum"] or ds["powder"]:
        raise ValueError(f"the adapter handles single-crystal spectra only; "
                         f"'{ds['kind']}' is not one")
    x = ds["x"]
    q = x["Q_par"] * sample["spin_spacing"]
    qa = x["Q_perp"] * sample["lattice"]["a"]
    Q = np.sqrt(x["Q_par"] ** 2 + x["Q_perp"] ** 2 + x["Q_perp2"] ** 2)
    return q, qa, Q, x["energy"], ds["fwhm"] / (2.0 * np.sqrt(2.0 * np.log(2.0)))


def chain_S(q, E, sigma, J, T, n=300):
    """2 S^zz(q, E) of the Heisenberg chain: the exact two-spinon T = 0 χ'' times the
    Bose factor at T (the suite's :func:`generators.chain_spectrum` without thermal
    damping), with a Gaussian resolution of σ (meV) per point."""
    out = np.zeros_like(E)
    for qi in np.unique(q):
        m = q == qi
        om, wt = two_spinon.nodes(qi, J, n)
        loss, gain = wt * G.bose(om, T), wt * (G.bose(om, T) - 1.0)
        out[m] = 2.0 * (loss[None, :] * G.gauss(E[m, None] - om[None, :], sigma[m, None])
                        + gain[None, :] * G.gauss(E[m, None] + om[None, :],
                                                  sigma[m, None])).sum(1)
    return out


def paramagnon_S(q, qa, E, sigma, T, chi_peak, xi_par, xi_perp, gamma0, d, a):
    """2 S^zz of the overdamped paramagnon of the suite's
    :func:`generators.paramagnon_spectrum`: χ'' = χ_Q ωΓ_Q/(ω² + Γ_Q²), χ_Q = χ_peak /
    (1 + ξ_∥²k_∥² + ξ_⊥²k_⊥²), Γ_Q = Γ₀(1 + ξ²k²) (Moriya, *Spin Fluctuations in Itinerant
    Electron Magnetism*, Springer 1985), S = χ''(n + 1)/π on a fine grid, then the
    Gaussian resolution; here with the case's spacings d, a and resolution."""
    k2 = ((xi_par * np.angle(np.exp(1j * (q - np.pi))) / d) ** 2
          + (xi_perp * np.angle(np.exp(1j * (qa - np.pi))) / a) ** 2)
    grid = np.linspace(-12.0, 12.0, 4801)
    grid = grid[np.abs(grid) > 1e-9]
    dg = grid[1] - grid[0]
    out = np.empty_like(E)
    for lo in range(0, E.size, 256):
        sl = slice(lo, lo + 256)
        chi_q = (chi_peak / (1.0 + k2[sl]))[:, None]
        gam = (gamma0 * (1.0 + k2[sl]))[:, None]
        s = chi_q * grid * gam / (grid ** 2 + gam ** 2) * G.bose(grid, T) / np.pi
        out[sl] = 2.0 * (s * G.gauss(E[sl, None] - grid, sigma[sl, None])).sum(1) * dg
    return out


def _intensity(ds, Q, S, rng):
    level = float(np.mean(np.abs(ds["values"])))
    mag = G.form_factor_sq(Q) * S
    s = rng.uniform(0.5, 1.5) * level / max(float(np.mean(mag)), 1e-300)
    return s * mag + rng.uniform(0.0, 0.2) * level


def _check_units(ds, name):
    want = {"susceptibility": ("chi", "emu/mol"),
            "heat_capacity": ("heat_capacity", "J/mol/K")}
    if ds["kind"] not in want:
        raise ValueError(f"dataset '{name}': the adapter makes spectra, susceptibility and "
                         f"heat_capacity only; got {ds['kind']}")
    key, unit = want[ds["kind"]]
    if ds["units"].get(key) != unit or ds["per"] != "ion":
        raise ValueError(f"dataset '{name}': the adapter writes {unit} per mol of magnetic "
                         f"ion; got {ds['units'].get(key)} per {ds['per']}")


def _thermo_t_min(design):
    T = [ds["x"]["T"].min() for ds in design["datasets"].values() if not ds["spectrum"]]
    return min(T) if T else None


def chain_exact(design, rng):
    """Heisenberg chain: exact two-spinon spectra, 12-site-ring χ(T) and C(T), with
    χ₀ + C_imp/T and a lattice β T³ (the suite's scenario 'chain_exact_two_spinon' with
    drawn J, extras and intensities)."""
    t_min = _thermo_t_min(design)
    J_hi = 2.0 if t_min is None else min(2.0, G.K_B * t_min / T_MIN_C)
    J = float(rng.uniform(0.6, 1.0) * J_hi)
    chi0, c_imp, beta = rng.uniform(0, 2e-4), rng.uniform(0, 5e-3), rng.uniform(0, 2e-4)
    out = {}
    for name, ds in design["datasets"].items():
        if ds["spectrum"]:
            q, _, Q, E, sig = _spectrum_points(ds, design["sample"])
            out[name] = _intensity(ds, Q, chain_S(q, E, sig, J, ds["temperature"]), rng)
            continue
        _check_units(ds, name)
        T = ds["x"]["T"]
        chi, c = G.chain_chi_c(T, J)
        out[name] = (chi + chi0 + c_imp / T if ds["kind"] == "susceptibility"
                     else c + beta * T ** 3)
    return out, {"J": J, "chi0": chi0, "C_imp": c_imp, "beta": beta}


def itinerant(design, rng):
    """Nearly antiferromagnetic metal: overdamped paramagnon with a continuum
    Ornstein–Zernike χ_Q, ξ(T) = ξ₀/sqrt(1 + T/20 K) along the chain and a quarter of it
    across; Stoner-enhanced Pauli χ with a T² decrease plus impurities; C/T = γ + β T² +
    δ T² ln(T/20 K) (Doniach & Engelsberg, PRL 17, 750 (1966)) (the suite's scenario
    'itinerant' with drawn ξ₀, Γ₀, χ_P, γ and intensities)."""
    xi0, gamma0 = rng.uniform(8.0, 16.0), rng.uniform(0.6, 2.0)
    chi_p, c_imp, gamma = rng.uniform(1e-3, 3e-3), rng.uniform(0, 3e-3), rng.uniform(0.01, 0.04)
    sample = design["sample"]
    out = {}
    for name, ds in design["datasets"].items():
        if ds["spectrum"]:
            q, qa, Q, E, sig = _spectrum_points(ds, sample)
            T = ds["temperature"]
            xi = xi0 / np.sqrt(1.0 + T / 20.0)
            S = paramagnon_S(q, qa, E, sig, T, 8.0, xi, xi / 4.0, gamma0,
                             sample["spin_spacing"], sample["lattice"]["a"])
            out[name] = _intensity(ds, Q, S, rng)
            continue
        _check_units(ds, name)
        T = ds["x"]["T"]
        out[name] = (chi_p * (1.0 - 0.3 * (T / 300.0) ** 2) + c_imp / T
                     if ds["kind"] == "susceptibility"
                     else T * (gamma + 2.0e-4 * T ** 2 - 1.5e-5 * T ** 2 * np.log(T / 20.0)))
    return out, {"xi0": xi0, "Gamma0": gamma0, "chi_P": chi_p, "C_imp": c_imp,
                 "gamma": gamma}


GENERATORS = [
    {"name": "suite_chain_exact", "one_dimensional": True, "simulate": chain_exact,
     "description": chain_exact.__doc__},
    {"name": "suite_itinerant", "one_dimensional": False, "simulate": itinerant,
     "description": itinerant.__doc__},
]
