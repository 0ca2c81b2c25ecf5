"""The five misspecification scenarios: what each generator is and what should win.

Every builder returns ``(Scenario, spectra, chi, heat)`` for
:func:`generators.write_case`; the physics is computed in :mod:`generators`,
:mod:`two_spinon` and :mod:`ring_ed`, never by evidence1d's kernels.
"""
from __future__ import annotations

import numpy as np

import generators as G
from generators import K_B, R_GAS, Scenario

J_CHAIN = 1.0          # meV, every chain-based scenario


def schulz_neel_temperature(J, J_perp, z):
    """T_N (K) of coupled S = 1/2 chains from z J_⊥ / 4 = k_BT_N / (1.28 √ln(5.8 J / k_BT_N))
    (Schulz, PRL 77, 2790 (1996), written for z = 4 neighbouring chains), solved here by
    bracketing."""
    from scipy.optimize import brentq
    f = lambda t: t / (1.28 * np.sqrt(np.log(5.8 * J / t))) - z * J_perp / 4.0  # noqa: E731
    return brentq(f, 1e-9 * J, 5.0 * J) / K_B


def _extras_chi(T, chi):
    """Add χ₀ = 1e-4 emu/mol and free-spin impurities C_imp = 3e-3 emu K/mol."""
    return chi + 1.0e-4 + 3.0e-3 / T


def _extras_heat(T, c, gamma=0.0, beta=2.0e-4):
    return c + gamma * T + beta * T ** 3


def _chain_thermo(J, D):
    T_chi = D["T_chi"][D["T_chi"] >= 0.33 * J / K_B]     # the 12-site ring within ~1 %
    T_c = D["T_c"][D["T_c"] >= 0.4 * J / K_B]
    chi, _ = G.chain_chi_c(T_chi, J)
    _, c = G.chain_chi_c(T_c, J)
    return ((T_chi, _extras_chi(T_chi, chi), 0.01, 2e-5, "chi"),
            (T_c, _extras_heat(T_c, c), 0.015, 2e-3, "C"))


def chain_zero_temperature(design=None, T=0.3):
    """(a) Heisenberg chain measured at T (default 0.3 K, k_BT = 0.026 J): the exact
    two-spinon line shape at T = 0 (Karbach et al., PRB 55, 12510 (1997)) times the Bose
    factor; χ, C from a 12-site ring.  Differs from the spinon family by the missing ~27 % of
    four-spinon weight (the family spreads the full first moment over the two-spinon shape),
    its own quadrature and the ring thermodynamics — and, at 0.3 K, by the thermal rounding
    of the lower edge, which the generator leaves out: near q = π the chain's edge is rounded
    over ~π k_BT (Schulz, PRB 34, 6372 (1986)), 0.08 meV at 0.3 K against a resolution
    σ = 0.036 meV, so these data have an edge sharper than a chain at 0.3 K (measured: at
    L = 0.96, E = 0.2 meV the generator is 17 % above the spinon family's finite-T shape,
    within 3 % of its T = 0 shape).  At 0.05 K (π k_BT = 0.014 meV) the two agree to 3 %."""
    J = J_CHAIN
    D = design or G.design()
    spectra = {}
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = D[key]
        q, _, _ = G._phases(L, H)
        spectra[key] = (G.chain_spectrum(q, E, J, T), bkg, slope)
    chi, heat = _chain_thermo(J, D)
    return (Scenario("chain_exact_two_spinon", chain_zero_temperature.__doc__,
                     "one_dimensional", J), spectra, chi, heat, T)


def thermal_hwhm(kT):
    """Half width (meV) of the generator's Lorentzian damping of χ'' at k_BT (meV).

    Chosen so that the damped q = π response, χ''_γ = πAω/(ω² + γ²) from χ''_0 = πA/ω,
    has the exact finite-temperature value S(π, ω → 0) = A k_BT/γ² of the critical chain's
    conformal form, χ''_T = πA Im[ρ(x)²]/(4πk_BT) with ρ(x) = Γ(1/4 − ix)/Γ(3/4 − ix) and
    x = ω/4πk_BT (Schulz, PRB 34, 6372 (1986); from memory), whose small-ω slope gives
    S(π, 0) = A ρ(0)²/(8π k_BT): γ = k_BT √(8π) Γ(3/4)/Γ(1/4) = 1.694 k_BT.
    """
    from scipy.special import gamma
    return kT * np.sqrt(8.0 * np.pi) * gamma(0.75) / gamma(0.25)


def chain_thermal(design=None):
    """(b) Heisenberg chain at k_BT = 0.30 J: the exact two-spinon χ'' at T = 0 (Karbach et
    al. 1997) convolved at every q with a Lorentzian of HWHM γ = 1.69 k_BT, then the Bose
    factor; χ, C from a 12-site ring.  γ is the lifetime broadening that gives the damped
    q = π response the exact finite-temperature S(π, ω → 0) of the critical chain
    (:func:`thermal_hwhm`).  Differs from the spinon family: the damping is Lorentzian (the
    family's is Gaussian and free) and acts on the bare two-spinon line shape at every q
    (the family dresses the edge with the conformal form near q = π), there is no
    four-spinon weight, and the thermodynamics are the ring's."""
    J = J_CHAIN
    T = 0.30 * J / K_B
    D = design or G.design()
    spectra = {}
    width = thermal_hwhm(K_B * T)
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = D[key]
        q, _, _ = G._phases(L, H)
        spectra[key] = (G.chain_spectrum(q, E, J, T, thermal_width=width), bkg, slope)
    chi, heat = _chain_thermo(J, D)
    return (Scenario("chain_thermal", chain_thermal.__doc__, "one_dimensional", J),
            spectra, chi, heat, T)


def magnon_gas(omega, T, n=24):
    """Heat capacity per spin (units of k_B) and the Kubo sum ⟨n(n + 1)⟩/T (1/K) of a gas of
    bosons with dispersion ``omega(q, q_a, q_b)`` (meV, one mode per spin over the chemical
    zone, the rotated-frame form of a collinear antiferromagnet's two transverse modes),
    averaged over an n³ midpoint grid of the zone: c = ⟨x² n(n + 1)⟩, x = ω/k_BT
    (R. M. White, Quantum Theory of Magnetism, 3rd ed. (2007), Ch. 6; R. Kubo, Phys. Rev.
    87, 568 (1952) for χ_∥ ∝ ⟨n(n + 1)⟩/T)."""
    k = 2.0 * np.pi * (np.arange(n) + 0.5) / n - np.pi
    q, qa, qb = (a.ravel() for a in np.meshgrid(k, k, k, indexing="ij"))
    w = np.asarray(omega(q, qa, qb), float)
    T = np.atleast_1d(np.asarray(T, float))
    x = w[None, :] / (K_B * T[:, None])
    e = np.exp(-x)
    nn1 = e / (1.0 - e) ** 2
    return (x * x * nn1).mean(axis=1), nn1.mean(axis=1) / T


def _ordered_thermo(J, J_perp, z, T_N, jump, D, omega=None):
    """Chain ring χ dressed by interchain mean field above T_N; below it χ_⊥ = χ(T_N) and
    χ_∥ falling (powder (2χ_⊥ + χ_∥)/3); C: ring C above T_N, (C(T_N) + jump) times a
    falling shape below.  The shapes below T_N: with ``omega`` (the generator's own magnon
    dispersion, meV, of (q, q_a, q_b)) those of its magnon gas (:func:`magnon_gas`; C and
    χ_∥ ∝ ⟨n(n + 1)⟩/T, each scaled to its value at T_N), consistent with a gapped
    spectrum; without it, χ_∥ ∝ (T/T_N)² and C ∝ (T/T_N)³ (a gapless antiferromagnet's
    low-temperature laws).  When T_N lies below the ring's range (t < 0.33) the data start
    above it (χ from t = 0.33, C from t = 0.4) and show only the paramagnetic chain."""
    paramagnetic_only = T_N < 0.33 * J / K_B
    T_chi = D["T_chi"][D["T_chi"] >= 0.33 * J / K_B] if paramagnetic_only else D["T_chi"]
    T_c = D["T_c"][D["T_c"] >= 0.4 * J / K_B] if paramagnetic_only else D["T_c"]
    t = K_B * np.maximum(T_chi, T_N) / J
    chi1, _, _ = G.ring_ed.ring_thermodynamics(t)
    chi3 = chi1 / (1.0 + z * (J_perp / J) * chi1)
    chi_TN = G.ring_ed.ring_thermodynamics(K_B * T_N / J)[0]
    chi_TN = chi_TN / (1.0 + z * (J_perp / J) * chi_TN)
    below = T_chi < T_N
    cold = T_c < T_N
    if omega is None:
        par_shape = (T_chi / T_N) ** 2
        c_shape = (T_c / T_N) ** 3
    else:
        _, kubo = magnon_gas(omega, np.r_[np.minimum(T_chi, T_N), T_N])
        par_shape = kubo[:-1] / kubo[-1]
        c_gas, _ = magnon_gas(omega, np.r_[np.minimum(T_c, T_N), T_N])
        c_shape = c_gas[:-1] / c_gas[-1]
    chi3 = np.where(below, chi_TN * (2.0 + par_shape) / 3.0, chi3)
    chi = G.chi_emu(chi3, J)
    _, c_hi = G.chain_chi_c(np.maximum(T_c, T_N), J)
    _, c_TN = G.chain_chi_c(np.array([T_N]), J)
    c = np.where(cold, (c_TN + jump) * c_shape, c_hi)
    return ((T_chi, _extras_chi(T_chi, chi), 0.01, 2e-5, "chi"),
            (T_c, _extras_heat(T_c, c), 0.015, 2e-3, "C"))


def lswt_dispersion(J, Jp, z, delta, renormalisation):
    """ω(q, q_a, q_b) = Z S √((Δ J₀)² − J(Q)²) (meV) of linear spin waves about the Néel
    state of chains (J) coupled to z = 2 (along a) or 4 (along a and b) neighbouring chains
    (J_⊥), J₀ = 2J + z J_⊥, J(Q) = 2J cos q + 2J_⊥ Σ cos q_⊥, easy axis Δ ≥ 1, with the
    factor Z on every term (the rotated-frame form; T. Holstein & H. Primakoff, Phys. Rev.
    58, 1098 (1940); P. W. Anderson, Phys. Rev. 86, 694 (1952))."""
    S_ = 0.5
    J0 = 2.0 * J + z * Jp

    def omega(q, qa, qb):
        inter = np.cos(qa) if z == 2 else np.cos(qa) + np.cos(qb)
        JQ = 2.0 * J * np.cos(q) + 2.0 * Jp * inter
        return renormalisation * S_ * np.sqrt((delta * J0) ** 2 - JQ ** 2)
    return omega


def mode_and_continuum_spectra(D, J, Jp, gap, frac, T):
    """Spectra of weakly coupled chains below T_N: a sharp transverse magnon
    ω² = ((π/2) J sin q)² + gap² + π J J_⊥ (1 + cos q_a) carrying ``frac`` of the two-spinon
    weight (brighter where softer) and the exact two-spinon continuum (the rest) pushed above
    2 gap (ω → sqrt(ω² + 4 gap²)), both with the Bose factor, for the design's map and cut."""
    spectra = {}
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = D[key]
        q, qa, _ = G._phases(L, H)
        S = np.zeros_like(E)
        sig = G.fwhm(E) / 2.3548
        for i in range(E.size):
            om, wt = G.two_spinon.nodes(q[i], J, 200)
            om = np.sqrt(om ** 2 + 4.0 * gap ** 2)
            nb = G.bose(om, T)
            cont = (wt * (nb * G.gauss(E[i] - om, sig[i])
                          + (nb - 1) * G.gauss(E[i] + om, sig[i]))).sum()
            w_mode = frac * wt.sum()
            wm2 = (0.5 * np.pi * J * np.sin(q[i])) ** 2 + gap ** 2
            wm = np.sqrt(wm2 + np.pi * J * Jp * (1.0 + np.cos(qa[i])))
            w_mode *= np.sqrt(wm2 + 2 * np.pi * J * Jp) / wm          # softer mode, brighter
            mode = G.mode_spectrum(np.array([E[i]]), wm, w_mode, T, damping=0.02)[0]
            S[i] = 2.0 * ((1.0 - frac) * cont + mode)
        spectra[key] = (S, bkg, slope)
    return spectra


def ordered_with_continuum(design=None):
    """(c) Weakly coupled chains below T_N ≈ 4 K (J_⊥ = 0.16 J, 4 neighbouring chains):
    a sharp transverse magnon ω² = ((π/2) J sin q)² + Δ_T² + π J J_⊥ (1 + cos q_a),
    Δ_T = 0.35 meV, carrying 40 % of the two-spinon weight, and the exact two-spinon
    continuum (60 %) pushed above 2Δ_T (ω → sqrt(ω² + 4Δ_T²)); C and χ_∥ below T_N
    from the magnon gas of that mode (:func:`_ordered_thermo`).  Differs from the ordered
    family by the continuum, from the spinon family by the gapped mode and the order."""
    J, Jp, gap, frac, T = J_CHAIN, 0.16, 0.35, 0.4, 1.5
    D = design or G.design()
    spectra = mode_and_continuum_spectra(D, J, Jp, gap, frac, T)

    def omega(q, qa, qb):        # the mode over the whole zone (equal to it at Q_b = 0)
        return np.sqrt((0.5 * np.pi * J * np.sin(q)) ** 2 + gap ** 2
                       + 0.5 * np.pi * J * Jp * (1.0 + np.cos(qa)) * (1.0 + np.cos(qb)))
    chi, heat = _ordered_thermo(J, Jp, 4, schulz_neel_temperature(J, Jp, 4), 0.6, D,
                                omega=omega)
    return (Scenario("ordered_with_continuum", ordered_with_continuum.__doc__, "ordered", J,
                     extra_models=("coupled_chains",)), spectra, chi, heat, T)


def magnon_lswt(design, J, Jp, z, delta, T, damping=0.03, renormalisation=np.pi / 2):
    """Spectra of a sharp magnon of coupled chains: linear spin waves
    ω = Z S sqrt((Δ J₀)² − J(Q)²), J₀ = 2J + z J_⊥, J(Q) = 2J cos q + 2J_⊥ Σ cos(interchain
    phases) (z = 2: along a only; z = 4: along a and b, Q_b = 0 in these data), the quantum
    factor Z on every term, transverse weight (S/2)(A − B)/sqrt(A² − B²) times 4/3 for the
    averaged polarisation, Lorentzian HWHM ``damping`` (meV)."""
    S_ = 0.5
    spectra = {}
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = design[key]
        q, qa, _ = G._phases(L, H)
        J0 = 2 * J + z * Jp
        inter = np.cos(qa) if z == 2 else np.cos(qa) + 1.0
        A = S_ * delta * J0
        B = S_ * (2 * J * np.cos(q) + 2 * Jp * inter)
        root = np.sqrt(A ** 2 - B ** 2)
        w = 0.5 * S_ * (A - B) / root * 4.0 / 3.0
        spectra[key] = (G.mode_spectrum(E, renormalisation * root, w, T, damping=damping),
                        bkg, slope)
    return spectra


def magnon_planar(design=None, renormalisation=np.pi / 2):
    """(d) A sharp magnon of chains coupled in planes (2 neighbouring chains along a, not
    the family's default 4; the case file says so, as a user who knows the structure
    would), J_⊥ = 0.15 J, easy-axis Δ = 1.06, measured at 0.5 K: linear spin waves
    (:func:`magnon_lswt`) with the chain's quantum factor Z = π/2 (des Cloizeaux & Pearson
    1962) on every term, HWHM 0.03 meV; ordered thermodynamics with T_N ≈ 2.1 K (below it
    the magnon gas of the same spin waves, :func:`_ordered_thermo`).  Differs
    from the ordered family by its unrenormalised interchain exchange and its intensities
    (spin-wave theory, not the single-mode sum rule)."""
    J, Jp, delta, T = J_CHAIN, 0.15, 1.06, 0.5
    D = design or G.design()
    spectra = magnon_lswt(D, J, Jp, 2, delta, T, renormalisation=renormalisation)
    chi, heat = _ordered_thermo(J, Jp, 2, schulz_neel_temperature(J, Jp, 2), 0.5, D,
                                omega=lswt_dispersion(J, Jp, 2, delta, renormalisation))
    return (Scenario("magnon_planar", magnon_planar.__doc__, "ordered", J,
                     model_options={"gapped_spin_wave": {"interchain": 2}}),
            spectra, chi, heat, T)


def chain_above_neel(design, J, Jp, T, alpha=0.4, z=4):
    """Weakly coupled Heisenberg chains just above T_N: the two-spinon χ'' with a thermal
    Lorentzian damping of HWHM 1.69 k_BT (:func:`thermal_hwhm`), then the Bose factor, and an interchain factor of
    random-phase form 1/(1 + α [J_⊥(Q)/zJ_⊥] g_q g_ω) that suppresses the low-energy
    intensity near q = π where the interchain exchange sum is largest (g_q a Lorentzian in
    q − π of width 2k_BT/(πJ), the thermal inverse correlation length; g_ω = 1/(1 +
    (ω/2k_BT)²)); χ from the 12-site ring dressed by interchain mean field, C from the ring
    (the data start where the ring is within ~1 %)."""
    spectra = {}
    kT = K_B * T
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = design[key]
        q, qa, _ = G._phases(L, H)
        S1 = G.chain_spectrum(q, E, J, T, thermal_width=thermal_hwhm(kT))
        inter = (np.cos(qa) + 1.0) / 2.0 if z == 4 else np.cos(qa)
        dq = np.angle(np.exp(1j * (q - np.pi)))
        g_q = 1.0 / (1.0 + (dq * np.pi * J / (2.0 * kT)) ** 2)
        g_w = 1.0 / (1.0 + (E / (2.0 * kT)) ** 2)
        spectra[key] = (S1 / (1.0 + alpha * inter * g_q * g_w), bkg, slope)
    T_chi = design["T_chi"][design["T_chi"] >= 0.33 * J / K_B]
    T_c = design["T_c"][design["T_c"] >= 0.4 * J / K_B]
    chi1, _, _ = G.ring_ed.ring_thermodynamics(K_B * T_chi / J)
    chi = G.chi_emu(chi1 / (1.0 + z * (Jp / J) * chi1), J)
    _, c = G.chain_chi_c(T_c, J)
    return spectra, (T_chi, _extras_chi(T_chi, chi), 0.01, 2e-5, "chi"), \
        (T_c, _extras_heat(T_c, c), 0.015, 2e-3, "C")


def itinerant(design=None, T=5.0):
    """(e) A nearly antiferromagnetic metal: overdamped paramagnon with Lorentzian
    Ornstein–Zernike χ_Q (continuum form, not the lattice form of the paramagnon family),
    ξ(T) = 12 Å / sqrt(1 + T/20 K) along the chain and a quarter of it across, Γ₀ = 1.2
    meV; χ(T) a Stoner-enhanced Pauli term with a T² decrease plus impurities; C/T = γ +
    β T² + δ T² ln(T/20 K) (paramagnon T³ ln T term, Doniach & Engelsberg, PRL 17, 750
    (1966))."""
    xi = 12.0 / np.sqrt(1.0 + T / 20.0)
    D = design or G.design()
    spectra = {}
    for key, bkg, slope in (("map", 0.6, 0.05), ("cut", 0.5, 0.0)):
        L, H, E = D[key]
        q, qa, _ = G._phases(L, H)
        spectra[key] = (G.paramagnon_spectrum(q, qa, E, T, 8.0, xi, xi / 4.0, 1.2),
                        bkg, slope)
    T_chi = D["T_chi"]
    chi = 2.0e-3 * (1.0 - 0.3 * (T_chi / 300.0) ** 2) + 2.0e-3 / T_chi
    T_c = D["T_c"]
    c = T_c * (0.025 + 2.0e-4 * T_c ** 2 - 1.5e-5 * T_c ** 2 * np.log(T_c / 20.0))
    return (Scenario("itinerant", itinerant.__doc__, "itinerant", None), spectra,
            (T_chi, chi, 0.01, 2e-5, "chi"), (T_c, c, 0.015, 2e-3, "C"), T)


SCENARIOS = {"chain_exact_two_spinon": chain_zero_temperature, "chain_thermal": chain_thermal,
             "ordered_with_continuum": ordered_with_continuum, "magnon_planar": magnon_planar,
             "itinerant": itinerant}
