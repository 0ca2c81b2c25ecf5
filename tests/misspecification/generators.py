"""Data generators for the misspecification suite, independent of evidence1d's kernels.

Each scenario writes a small case (a map along the chain, a cut across it, χ(T), C(T)) with
data that none of evidence1d's families generates exactly: the physics is computed here with
its own code (exact two-spinon line shape, exact diagonalisation of rings, its own spin-wave
and relaxational responses, its own ordered-state and metallic thermodynamics), with counting
noise, sloping backgrounds, free-spin impurities, a temperature-independent χ₀ and lattice and
electronic heat capacity.  The data are simulated; every file says so in its first line.

Scenario (invented): crystals of a chain compound of Cu²⁺ (S = 1/2), chains along c with
spin spacing d = 3.1 Å (c = 6.2 Å, a = 7.4 Å, b = 7.9 Å), measured at a fictional neutron
source; the same design for every scenario so that only the physics changes.

Neutron cross-section: unpolarised neutrons, isotropic (or transverse-only) fluctuations,
I = s |F(Q)|² Σ_α (1 − Q̂_α²) S^αα(Q, ω) + b₀ + b₁ E (Squires, Introduction to the Theory of
Thermal Neutron Scattering (CUP 1978), ch. 7); F the Cu²⁺ dipole form factor from the
International Tables via the periodictable package; S(Q, ω) = χ''(Q, ω)[n(ω) + 1]/π.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from scipy import constants as sc
from scipy import special

import ring_ed
import two_spinon

K_B = sc.k / sc.e * 1e3                    # meV / K
R_GAS = sc.R                               # J / (mol K)
# N_A μ_B² / k_B in cgs (emu K / mol): the Curie constant per (g² S(S+1)/3)
_NA_MUB2_KB = sc.N_A * (sc.physical_constants["Bohr magneton"][0] * 1e3) ** 2 / (sc.k * 1e7)

GEOMETRY = {"d": 3.1, "a": 7.4, "b": 7.9, "c": 6.2}
G_TRUE = 2.12


# ----------------------------------------------------------------------- neutron factors
def form_factor_sq(Q, g=G_TRUE):
    """|F(Q)|² of Cu²⁺ in the dipole approximation ⟨j0⟩ + (1 − 2/g)⟨j2⟩."""
    import periodictable
    ff = periodictable.elements.symbol("Cu").ion[2].magnetic_ff[2]
    F = ff.j0_Q(Q) + (1.0 - 2.0 / g) * ff.j2_Q(Q)
    return np.asarray(F, float) ** 2


def bose(E, T):
    """n(E) + 1 for E ≠ 0 (meV, K); E n(E) + E → k_BT as E → 0 is handled by callers."""
    x = np.asarray(E, float) / (K_B * T)
    return 1.0 / (-np.expm1(-x))


def fwhm(E, c=(0.08, 0.02)):
    return c[0] + c[1] * np.asarray(E, float)


def gauss(x, s):
    return np.exp(-0.5 * (x / s) ** 2) / (np.sqrt(2 * np.pi) * s)


# ----------------------------------------------------------------------- spectra
def chain_spectrum(q, E, J, T, thermal_width=0.0):
    """2 S^zz(q, ω) of the Heisenberg chain (exact two-spinon shape), resolution applied.

    With ``thermal_width`` = Γ > 0 the T = 0 χ''(q, ω) (odd in ω) is convolved with a
    Lorentzian of HWHM Γ before the Bose factor: a lifetime damping of the spinons (the
    chain families damp χ'' with a Gaussian instead; the scenarios choose Γ by
    :func:`scenarios.thermal_hwhm`).
    """
    q, E = np.asarray(q, float), np.asarray(E, float)
    out = np.zeros_like(E)
    sig = fwhm(E) / 2.3548
    for qi in np.unique(q):
        m = q == qi
        om, wt = two_spinon.nodes(qi, J, 300)
        if thermal_width <= 0:
            loss = wt * bose(om, T)
            gain = wt * (bose(om, T) - 1.0)
            val = (loss[None, :] * gauss(E[m, None] - om[None, :], sig[m, None])
                   + gain[None, :] * gauss(E[m, None] + om[None, :], sig[m, None])).sum(1)
        else:
            # χ''_T(ω)/π on a fine grid, then S = χ''(n + 1)/π, then the Gaussian
            grid = np.linspace(-6.0 * J, 6.0 * J, 2401)
            grid = grid[np.abs(grid) > 1e-9]
            lor = lambda x: thermal_width / np.pi / (x ** 2 + thermal_width ** 2)  # noqa
            chi = (wt[None, :] * (lor(grid[:, None] - om[None, :])
                                  - lor(grid[:, None] + om[None, :]))).sum(1)
            s_grid = chi * bose(grid, T)
            dg = grid[1] - grid[0]
            val = (s_grid[None, :] * gauss(E[m, None] - grid[None, :], sig[m, None])).sum(1) * dg
        out[m] = 2.0 * val
    return out


def mode_spectrum(E, omega, weight, T, damping=0.0):
    """Σ over ±ω of a damped harmonic mode of area ``weight`` (loss side, T = 0), resolution
    applied: S = weight [(n + 1) V(E − ω) + n V(E + ω)] with V a Voigt profile."""
    sig = fwhm(E) / 2.3548
    nb = bose(omega, T)
    prof = (lambda x: special.voigt_profile(x, sig, damping)) if damping > 0 else \
        (lambda x: gauss(x, sig))
    return weight * (nb * prof(E - omega) + (nb - 1.0) * prof(E + omega))


def paramagnon_spectrum(q, qa, E, T, chi_peak, xi_par, xi_perp, gamma0, q0=np.pi):
    """2 S^zz of an overdamped paramagnon, χ'' = χ_Q ωΓ_Q/(ω² + Γ_Q²), Lorentzian
    Ornstein–Zernike χ_Q = χ_peak / (1 + ξ_∥²k_∥² + ξ_⊥²k_⊥²) in its continuum form around
    the antiferromagnetic centre, Γ_Q = Γ₀ (1 + ξ²k²) (Moriya 1985), on a fine grid then the
    Gaussian resolution."""
    d, a = GEOMETRY["d"], GEOMETRY["a"]
    dq = np.angle(np.exp(1j * (q - q0)))                  # folded into (−π, π]
    dqa = np.angle(np.exp(1j * (qa - np.pi)))
    k2 = (xi_par * dq / d) ** 2 + (xi_perp * dqa / a) ** 2
    chi_q = chi_peak / (1.0 + k2)
    gam = gamma0 * (1.0 + k2)
    sig = fwhm(E) / 2.3548
    grid = np.linspace(-12.0, 12.0, 4801)
    grid = grid[np.abs(grid) > 1e-9]
    dg = grid[1] - grid[0]
    out = np.zeros_like(E)
    for i in range(E.size):
        chi2 = chi_q[i] * grid * gam[i] / (grid ** 2 + gam[i] ** 2)
        s = chi2 * bose(grid, T) / np.pi
        out[i] = 2.0 * (s * gauss(E[i] - grid, sig[i])).sum() * dg
    return out


# ----------------------------------------------------------------------- thermodynamics
def chi_emu(chi_star, J, g=G_TRUE):
    """χ*_zz (per site, units N g² μ_B² / J) to emu/mol; J in meV."""
    return chi_star * g ** 2 * _NA_MUB2_KB / (J / K_B)


def chain_chi_c(T, J):
    """χ (emu/mol) and C (J/(mol K)) of the Heisenberg chain from a 12-site ring (t ≥ 0.3)."""
    t = K_B * np.asarray(T, float) / J
    chi, c, _ = ring_ed.ring_thermodynamics(t)
    return chi_emu(chi, J), R_GAS * c


# ----------------------------------------------------------------------- noise and files
@dataclass
class Scenario:
    """One misspecification scenario: what it is, what should win, the data it writes."""

    name: str
    description: str
    right_class: str                       # 'one_dimensional', 'ordered' or 'itinerant'
    J: float | None
    files: dict = field(default_factory=dict)   # file name -> (columns, header comment)
    temperature: float = 1.5
    extra_case: str = ""
    model_options: dict = field(default_factory=dict)   # family -> options for the case
    extra_models: tuple = ()               # fitted besides the three standard families


def _counts(I, exposure, rng):
    n = rng.poisson(np.maximum(I, 0.0) * exposure)
    return n / exposure, np.sqrt(np.maximum(n, 1.0)) / exposure


def _thermo(y, rel, floor, rng):
    err = rel * np.abs(y) + floor
    return y + err * rng.standard_normal(y.size), err


def design():
    """Points of every scenario: a map along the chain, a cut across it at L = 0.96."""
    # energy steps (0.12 and 0.1 meV) no wider than the resolution, as in a real scan
    L = np.linspace(0.1, 1.9, 14)
    E = np.linspace(0.25, 3.6, 28)
    LL, EE = np.meshgrid(L, E, indexing="ij")
    H = np.linspace(0.0, 1.0, 6)
    E2 = np.linspace(0.2, 2.3, 22)
    HH, EE2 = np.meshgrid(H, E2, indexing="ij")
    return {"map": (LL.ravel(), np.zeros(LL.size), EE.ravel()),
            "cut": (np.full(HH.size, 0.96), HH.ravel(), EE2.ravel()),
            "T_chi": np.geomspace(4.0, 300.0, 30), "T_c": np.geomspace(1.8, 30.0, 24)}


def _phases(L, H):
    q = 2 * np.pi * L * GEOMETRY["d"] / GEOMETRY["c"]
    qa = 2 * np.pi * H           # Q_a a = 2π H
    Q = 2 * np.pi * np.sqrt((L / GEOMETRY["c"]) ** 2 + (H / GEOMETRY["a"]) ** 2)
    return q, qa, Q


def write_data(folder: Path, files: dict, design: dict, spectra: dict, chi, heat, rng,
               header: str, exposure=5.0, scale=40.0):
    """Write the simulated data files.

    ``files`` maps 'map', 'cut', 'chi', 'heat' to paths relative to ``folder``; spectra are
    I = scale |F(Q)|² S + background + slope E with Poisson counts at ``exposure`` counts per
    intensity unit; thermodynamic data get Gaussian errors (relative + floor).
    """
    head = f"# SIMULATED data ({header}); not a measurement\n"
    for key, (S, bkg, slope) in spectra.items():
        L, H, E = design[key]
        _, _, Q = _phases(L, H)
        I = scale * form_factor_sq(Q) * S + bkg + slope * E
        y, e = _counts(I, exposure, rng)
        path = folder / files[key]
        path.parent.mkdir(parents=True, exist_ok=True)
        with open(path, "w") as fh:
            fh.write(head + "q_par, q_perp, energy, intensity, error\n")
            for row in zip(L, H, E, y, e):
                fh.write(", ".join(f"{v:.6g}" for v in row) + "\n")
    for key, (T, y0, rel, floor, col) in {"chi": chi, "heat": heat}.items():
        y, e = _thermo(y0, rel, floor, rng)
        path = folder / files[key]
        path.parent.mkdir(parents=True, exist_ok=True)
        with open(path, "w") as fh:
            fh.write(head + f"T, {col}, error\n")
            for row in zip(T, y, e):
                fh.write(", ".join(f"{v:.6g}" for v in row) + "\n")


def write_case(folder: Path, scen: Scenario, spectra: dict, chi, heat, rng,
               exposure=5.0, temperature=1.5):
    """Write data files and case.yaml for a scenario; return the case path."""
    folder.mkdir(parents=True, exist_ok=True)
    head = f"# SIMULATED data (misspecification suite: {scen.name}); not a measurement\n"
    files = {k: f"data/{k}.csv" for k in ("map", "cut", "chi", "heat")}
    write_data(folder, files, design(), spectra, chi, heat, rng,
               f"misspecification suite: {scen.name}", exposure=exposure)
    text = f"""# {head[2:].strip()}
title: "misspecification: {scen.name}"
sample:
  name: invented Cu chain compound
  ion: Cu
  charge: 2
  spin: 0.5
  g: {{kind: normal, mean: 2.1, sd: 0.05}}
  spin_spacing: {GEOMETRY['d']}
  lattice: {{a: {GEOMETRY['a']}, b: {GEOMETRY['b']}, c: {GEOMETRY['c']}}}
datasets:
  - {{name: map, kind: crystal_spectrum, file: data/map.csv, temperature: {temperature},
     units: {{energy: meV, wavevector: rlu, intensity: arb}},
     resolution: {{fwhm: [0.08, 0.02]}}, background: linear}}
  - {{name: cut, kind: crystal_spectrum, file: data/cut.csv, temperature: {temperature},
     units: {{energy: meV, wavevector: rlu, intensity: arb}},
     resolution: {{fwhm: [0.08, 0.02]}}, background: flat}}
  - {{name: chi, kind: susceptibility, file: data/chi.csv,
     units: {{temperature: K, chi: emu/mol}}, field: powder}}
  - {{name: heat, kind: heat_capacity, file: data/heat.csv,
     units: {{temperature: K, heat_capacity: J/mol/K}}}}
models:
{{models}}
sampler: {{steps: 100, particles: 100, islands: 2}}
seed: 4242
{scen.extra_case}"""
    models = "\n".join(
        f"  - {{name: {m}" + (f", options: {scen.model_options[m]}" if m in scen.model_options
                             else "") + "}"
        for m in ("spinon_continuum", "gapped_spin_wave", "paramagnon") + scen.extra_models)
    (folder / "case.yaml").write_text(text.replace("{models}", models))
    return folder / "case.yaml"
