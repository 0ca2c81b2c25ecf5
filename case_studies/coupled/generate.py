"""Regenerate the coupled-chains case study's data (deterministic; seed below).

Scenario (invented): the insulator CuGeTi2O7, Cu²⁺ S = 1/2 chains along c (J = 1.0 meV)
coupled antiferromagnetically to 4 neighbouring chains (J_⊥ = 0.10 meV, at ±a and ±b),
which order near 2.7 K.  Measured at the fictional Halvorsen Spallation Laboratory at
0.5 K (below T_N: a map along the chains at H = K = 0 and a cut across them at L = 1) and
at 4.5 K (above T_N: a second map), with χ(T) and C(T).

The data are SIMULATED here, not measured, and not by evidence1d's families: the physics
below is written in this file from the published formulas (sources beside each), with the
exact two-spinon line shape (``tests/misspecification/two_spinon.py``), the 12-site ring
(``ring_ed.py``) and the neutron factors of ``generators.py`` reused read-only.  The
Hamiltonian is H = J Σ_i S_i·S_{i+1} + J_⊥ Σ_⟨ij⟩⊥ S_i·S_j (J, J_⊥ > 0).

Physics shared with the coupled-chains family (published):
* T_N from the random-phase criterion on the chain's staggered susceptibility, in Schulz's
  closed form k_BT_N = 1.28 J_⊥ √ln(5.8 J/k_BT_N) for 4 neighbouring chains (Schulz, PRL
  77, 2790 (1996)).
* Below T_N each chain sits in the staggered field h = z_⊥ J_⊥ m of its neighbours, with
  Schulz's self-consistent moment m₀ = 1.0174 √(J_⊥/J) (Schulz 1996).  The chain in a
  staggered field is a sine-Gordon model with soliton mass
  M = 1.85 J (h/J)^{2/3} [ln(J/h)]^{1/6} (Affleck & Oshikawa, PRB 60, 1038 (1999), from
  memory), the breather B₁ degenerate with the solitons and B₂ at √3 M (Essler, Tsvelik &
  Delfino, PRB 56, 11001 (1997)).
* Random phase: the transverse soliton pole Z/(ω_q² − ω²), ω_q² = (v sin q)² + M²,
  v = πJ/2 (des Cloizeaux & Pearson 1962), Z = M² m/h = M²/(z_⊥J_⊥), dressed by
  J_⊥(Q_⊥) = 2J_⊥(cos q_a + cos q_b): ω_T² = (v sin q)² + M²[1 + J_⊥(Q_⊥)/(z_⊥J_⊥)]
  (Goldstone at the ordering vector), residue Z/(2ω_T) per transverse component; the
  two-soliton continuum above √((v sin q)² + 4M²).  Away from q = π the residues are
  continued by sin²(q/2), the chain's first-moment factor (a choice the family makes too).
* Above T_N: χ = χ_1D/(1 + J_⊥(Q_⊥) χ_1D) per component (Scalapino, Imry & Pincus, PRB
  11, 2042 (1975); Schulz 1996), χ_1D the chain's complex susceptibility at T.
* χ(T): the chain's, dressed by interchain mean field at Q = 0; C(T): the chain's.

The generator's own approximations (where it differs from the family on purpose; each is
as defensible as the family's choice):
* the moment below T_N: m = m₀ (1 − (T/T_N)²)^{0.367} (3D Heisenberg exponent β ≈ 0.367;
  the family uses exponent 1/2 and its own T_N) and Schulz's m₀ unsaturated (the family
  saturates it towards S); ln(J/h) in M as published (the family uses ln(1 + J/h)).  At
  the truth the generator's soliton mass is 0.53 meV, the family's 0.48 meV;
* line widths: the transverse modes are sharp (their thermal damping ~ e^{−M/k_BT} is
  negligible at 0.5 K); the longitudinal mode (B₂, kept at √3 M as in mean field, with the
  single-mode residue Z_L = M² m/h as in the family) is damped, a Lorentzian of HWHM
  0.05 meV (its decay into pairs of transverse modes, beyond the random phase; the size is
  this generator's choice); the family's modes are all sharp;
* the continuum below T_N: the exact two-spinon χ'' (Karbach et al., PRB 55, 12510 (1997))
  scaled to the full intensity (÷ 0.7289), switched on above the two-soliton threshold ω_c
  with the square-root rise √(1 − ω_c²/ω²) of two massive particles; the family cuts its
  line shape sharply at ω_c;
* the chain at finite T: near q = π the exact two-spinon amplitude times the conformal
  finite-temperature correlator of weight 1/4, Im[ρ(x₋)ρ(x₊)]/τ, ρ(x) = Γ(1/4 − ix)/
  Γ(3/4 − ix), x± = (ω ± ω_L)/τ, τ = 4πk_BT (Schulz, PRB 34, 6372 (1986); Bocquet et al.,
  PRB 64, 094425 (2001), from memory), the amplitude frozen below ω_L + k_BT (the thermal
  cut-off of the edge's logarithm); far from q = π, where the edge lies many k_BT up and
  the conformal form does not apply, the T = 0 exact shape; crossing over with the weight
  exp(−(ω_L/2πk_BT)²) (the family: 1/(1 + (ω_L/2πk_BT)²) and its own amplitude).  χ' by
  the Maclaurin Kramers–Kronig sum (Ohta & Ishida, Appl. Spectrosc. 42, 952 (1988)) on a
  4 μeV grid; the resolution by direct convolution on that grid;
* thermodynamics from a 12-site ring (exact diagonalisation) where it is within ~1 % of
  the infinite chain (χ from 3.8 K, C from 4.6 K; T_N lies below, so these data show the
  paramagnetic chains only), not from the family's tables.

Neutron cross-section: unpolarised neutrons, domains averaged, so the three spin
components enter with weight 2/3 each; I = s |F(Q)|² S + b₀ + b₁E with the Cu²⁺ form
factor; Poisson counts per point (the exposures below) of about 12 to 600, medians 35-53,
on a background of about 30 counts, so the Gaussian likelihood with errors √n (what a
data file reports) is adequate; errors √max(n, 1).  Resolution: Gaussian FWHM
0.08 + 0.02 E meV, as in case.yaml.

    python case_studies/coupled/generate.py
"""
import functools
from pathlib import Path
import sys

import numpy as np
from scipy import special

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE.parent))
from simulated_design import generators as G, scenarios  # noqa: E402

two_spinon = G.two_spinon
K_B = G.K_B

SEED = 31
J, J_PERP, Z_PERP = 1.0, 0.10, 4                 # meV, meV, neighbouring chains
T_COLD, T_WARM = 0.5, 4.5                        # K
SCHULZ_MOMENT = 1.0174                           # m₀ = 1.0174 √(J_⊥/J), Schulz (1996)
SOLITON_PREFACTOR = 1.85                         # Affleck & Oshikawa (1999), from memory
BETA_3D = 0.367                                  # 3D Heisenberg order-parameter exponent
GAMMA_T, GAMMA_L, FRAC_L = 0.0, 0.05, 1.0       # HWHM meV, HWHM meV, share of Z_L
TWO_SPINON_SHARE = two_spinon.TWO_SPINON_INTENSITY_SHARE
EXPOSURE = {"map": 20.0, "cut": 8.0, "map_hot": 60.0}    # counts per intensity unit
BACKGROUND = {"map": (1.5, 0.05), "cut": (4.0, 0.0), "map_hot": (0.5, 0.05)}  # b₀, b₁/meV
SCALE = 10.0
FILES = {"map": "data/map_0p5K.csv", "cut": "data/cut_0p5K.csv",
         "map_hot": "data/map_4p5K.csv", "chi": "data/chi.csv",
         "heat": "data/heat_capacity.csv"}


def design():
    """Measured points: a map along the chain at H = K = 0 (30 L × 24 E), a cut across the
    chains at L = 1 (12 H × 21 E, steps of 0.1 meV), χ from 2 to 300 K and C from 1.5 to
    30 K (energies meV, L and H in r.l.u. of the invented cell)."""
    L = np.linspace(0.05, 1.95, 30)
    E = np.linspace(0.25, 3.6, 24)
    LL, EE = np.meshgrid(L, E, indexing="ij")
    H = np.linspace(0.0, 1.0, 12)
    E2 = np.linspace(0.2, 2.2, 21)
    HH, EE2 = np.meshgrid(H, E2, indexing="ij")
    return {"map": (LL.ravel(), np.zeros(LL.size), EE.ravel()),
            "cut": (np.ones(HH.size), HH.ravel(), EE2.ravel()),
            "map_hot": (LL.ravel(), np.zeros(LL.size), EE.ravel()),
            "T_chi": np.geomspace(2.0, 300.0, 50), "T_c": np.geomspace(1.5, 30.0, 40)}


# ------------------------------------------------------------------ ordered state
def ordered_state(T):
    """T_N (K), moment m, staggered field h (meV) and soliton mass M (meV) at T (module
    notes: Schulz 1996; Affleck & Oshikawa 1999)."""
    T_N = scenarios.schulz_neel_temperature(J, J_PERP, Z_PERP)
    m = SCHULZ_MOMENT * np.sqrt(J_PERP / J) * (1.0 - (T / T_N) ** 2) ** BETA_3D
    h = Z_PERP * J_PERP * m
    M = SOLITON_PREFACTOR * J * (h / J) ** (2.0 / 3.0) * np.log(J / h) ** (1.0 / 6.0)
    return T_N, m, h, M


def interchain(qa, qb=0.0):
    """J_⊥(Q_⊥) = 2J_⊥(cos q_a + cos q_b) in meV (chains at ±a and ±b)."""
    return 2.0 * J_PERP * (np.cos(qa) + np.cos(qb))


def cold_spectrum(q, qa, E, T):
    """Neutron-weighted S (1/meV per spin, 2/3 of the three components) below T_N with the
    resolution applied, at chain phase q, interchain phase q_a (q_b = 0) and energy E."""
    _, m, h, M = ordered_state(T)
    v = 0.5 * np.pi * J
    Z = M ** 2 * m / h
    sig = G.fwhm(E) / 2.3548
    out = np.zeros_like(E)
    for i in range(E.size):
        stag = np.sin(0.5 * q[i]) ** 2
        along = (v * np.sin(q[i])) ** 2
        wT = np.sqrt(along + M ** 2 * (1.0 + interchain(qa[i]) / (Z_PERP * J_PERP)))
        wL = np.sqrt(along + 3.0 * M ** 2)
        modes = 0.0
        for om, res, gam, ncomp in ((wT, Z, GAMMA_T, 2), (wL, FRAC_L * Z, GAMMA_L, 1)):
            w = res * stag / (2.0 * om)
            nb = G.bose(om, T)
            prof = ((lambda x: special.voigt_profile(x, sig[i], gam)) if gam > 0  # noqa: E731
                    else (lambda x: G.gauss(x, sig[i])))
            modes += ncomp * w * (nb * prof(E[i] - om) + (nb - 1.0) * prof(E[i] + om))
        om, wt = two_spinon.nodes(q[i], J, 400)
        wc = np.sqrt(along + 4.0 * M ** 2)
        wt = np.where(om > wc, wt * np.sqrt(np.clip(1.0 - (wc / om) ** 2, 0.0, 1.0)), 0.0)
        nb = G.bose(np.maximum(om, 1e-9), T)
        cont = (wt * (nb * G.gauss(E[i] - om, sig[i])
                      + (nb - 1.0) * G.gauss(E[i] + om, sig[i]))).sum() / TWO_SPINON_SHARE
        out[i] = (2.0 / 3.0) * (modes + 3.0 * cont)
    return out


# ------------------------------------------------------------------ chain at finite T
def _rho(x):
    """ρ(x) = Γ(1/4 − ix)/Γ(3/4 − ix) (complex)."""
    return np.exp(special.loggamma(0.25 - 1j * x) - special.loggamma(0.75 - 1j * x))


def _cold_cells(q, w):
    """Cell averages of the T = 0 chain χ''_0 = π S₀ sign(ω) on the uniform grid ``w``
    (1/meV per component; the exact two-spinon shape scaled to the full intensity): the
    density at the cell centre, and near the lower edge (integrable 1/√ singularity) the
    exact two-spinon weights of the cell divided by its width."""
    h = float(w[1] - w[0])
    wl, wu = two_spinon.edges(q, J)
    aw = np.abs(w)
    S0 = two_spinon._shape(q, aw / J, 1.0) * two_spinon.normalisation() / J
    near = np.abs(aw - wl) < 3.0 * h
    if near.any():
        om, wt = two_spinon.nodes(q, J, 4000)
        for k, c in zip(np.flatnonzero(near), aw[near]):
            sel = (om >= c - 0.5 * h) & (om < c + 0.5 * h)
            S0[k] = wt[sel].sum() / h
    return np.pi * np.sign(w) * S0 / TWO_SPINON_SHARE


def chain_chi2(q, w, T):
    """χ''_1D(q, ω) per component at T (1/meV; odd in ω) on the uniform grid ``w`` (module
    notes): near q = π the exact two-spinon amplitude times the conformal finite-T form,
    far from it the T = 0 exact shape, crossing over as w = exp(−(ω_L/2πk_BT)²)."""
    kT = K_B * T
    tau = 4.0 * np.pi * kT
    wl, wu = two_spinon.edges(q, J)
    aw = np.abs(w)
    inside = aw < wu
    # amplitude B = π S₀ √(ω² − ω_L²) of the exact T = 0 shape, frozen below ω_L + k_BT
    wb = (np.clip(aw, wl + kT, wu * (1.0 - 1e-6)) if wl + kT < wu
          else np.full_like(aw, 0.5 * (wl + wu)))
    S0 = two_spinon._shape(q, wb / J, 1.0) * two_spinon.normalisation() / J / TWO_SPINON_SHARE
    B = np.pi * S0 * np.sqrt(np.maximum(wb ** 2 - wl ** 2, 0.0))
    phi = np.imag(_rho((w - wl) / tau) * _rho((w + wl) / tau)) / tau
    thermal = np.where(inside, B * phi, 0.0)
    weight = np.exp(-(wl / (2.0 * np.pi * kT)) ** 2)
    if weight > 1.0 - 1e-12:
        return thermal
    return weight * thermal + (1.0 - weight) * _cold_cells(q, w)


@functools.lru_cache(maxsize=2)
def _kk_kernel(n, h):
    i = np.arange(n)
    diff = i[None, :] - i[:, None]
    odd = (diff % 2) != 0
    return np.where(odd, 1.0 / np.where(odd, diff * h, 1.0), 0.0)


def kramers_kronig(w, chi2):
    """χ'(ω) on the grid by the Maclaurin sum χ'(ω_i) = (2h/π) Σ_{j−i odd} χ''_j/(ω_j − ω_i)
    (Ohta & Ishida 1988); uniform grid of step h."""
    h = float(w[1] - w[0])
    return (2.0 * h / np.pi) * _kk_kernel(w.size, h) @ chi2


def warm_spectrum(q, qa, E, T):
    """Neutron-weighted S (1/meV per spin) above T_N with the resolution applied: the chain
    dressed in the random-phase approximation, three equal components."""
    step = 0.004
    w = (np.arange(-1150, 1150) + 0.5) * step             # ±4.6 meV, no node at 0
    sig = G.fwhm(E) / 2.3548
    out = np.zeros_like(E)
    for key in set(zip(q.tolist(), qa.tolist())):
        qi, qai = key
        c2 = chain_chi2(qi, w, T)
        c1 = kramers_kronig(w, c2)
        chi = c1 + 1j * c2
        rpa = chi / (1.0 + interchain(qai) * chi)
        S = np.imag(rpa) * G.bose(w, T) / np.pi            # χ''(n + 1)/π
        m = (q == qi) & (qa == qai)
        for k in np.flatnonzero(m):
            out[k] = 2.0 * (S * G.gauss(E[k] - w, sig[k])).sum() * step   # 2/3 × 3
    return out


# ------------------------------------------------------------------ thermodynamics
def thermodynamics(D):
    """χ(T) (powder, emu/mol) and C(T) (J/(mol K)) with their errors: the 12-site ring where
    it is within ~1 % of the infinite chain, χ dressed by interchain mean field
    χ* → χ*/(1 + z_⊥(J_⊥/J)χ*) (Scalapino, Imry & Pincus 1975), plus χ₀, free-spin
    impurities and lattice heat capacity (tests/misspecification/scenarios.py)."""
    T_chi = D["T_chi"][D["T_chi"] >= 0.33 * J / K_B]
    T_c = D["T_c"][D["T_c"] >= 0.4 * J / K_B]
    chi1, _, _ = G.ring_ed.ring_thermodynamics(K_B * T_chi / J)
    chi = G.chi_emu(chi1 / (1.0 + Z_PERP * (J_PERP / J) * chi1), J)
    _, c = G.chain_chi_c(T_c, J)
    return ((T_chi, scenarios._extras_chi(T_chi, chi), 0.01, 2e-5, "chi"),
            (T_c, scenarios._extras_heat(T_c, c), 0.015, 2e-3, "C"))


def write(D, spectra, chi, heat, rng):
    """Data files: Poisson counts for the spectra, Gaussian errors for χ and C."""
    head = ("# SIMULATED data (coupled-chains case study, invented insulator CuGeTi2O7; "
            "case_studies/coupled/generate.py); not a measurement\n")
    for key, S in spectra.items():
        L, H, E = D[key]
        _, _, Q = G._phases(L, H)
        b0, b1 = BACKGROUND[key]
        I = SCALE * G.form_factor_sq(Q) * S + b0 + b1 * E
        n = rng.poisson(np.maximum(I, 0.0) * EXPOSURE[key])
        y, e = n / EXPOSURE[key], np.sqrt(np.maximum(n, 1.0)) / EXPOSURE[key]
        with open(HERE / FILES[key], "w") as fh:
            fh.write(head + "q_par, q_perp, energy, intensity, error\n")
            for row in zip(L, H, E, y, e):
                fh.write(", ".join(f"{v:.6g}" for v in row) + "\n")
        print(f"{key}: counts median {np.median(n):.0f}, max {n.max()}, min {n.min()}")
    for key, (T, y0, rel, floor, col) in {"chi": chi, "heat": heat}.items():
        err = rel * np.abs(y0) + floor
        y = y0 + err * rng.standard_normal(y0.size)
        with open(HERE / FILES[key], "w") as fh:
            fh.write(head + f"T, {col}, error\n")
            for row in zip(T, y, err):
                fh.write(", ".join(f"{v:.6g}" for v in row) + "\n")


if __name__ == "__main__":
    D = design()
    T_N, m, h, M = ordered_state(T_COLD)
    assert T_COLD < T_N < T_WARM, T_N
    spectra = {}
    for key, T, fn in (("map", T_COLD, cold_spectrum), ("cut", T_COLD, cold_spectrum),
                       ("map_hot", T_WARM, warm_spectrum)):
        L, H, E = D[key]
        q, qa, _ = G._phases(L, H)
        spectra[key] = fn(q, qa, E, T)
    chi, heat = thermodynamics(D)
    (HERE / "data").mkdir(exist_ok=True)
    write(D, spectra, chi, heat, np.random.default_rng(SEED))
    print(f"coupled-chains data regenerated in {HERE / 'data'}: T_N = {T_N:.2f} K, "
          f"m = {m:.3f}, h = {h:.3f} meV, M = {M:.3f} meV at {T_COLD} K")
