"""Metal context: the Wilson ratio of the fitted temperature-independent susceptibility χ₀
and the electronic heat-capacity coefficient γ_e.

R_W = (4π² k_B² / (3 (g μ_B)²)) · χ₀ / γ_e, with g = 2 (the usual convention), is 1 for
free electrons (Pauli χ = μ_B² N(E_F), Sommerfeld γ = π² k_B² N(E_F)/3) and about 2 for
strongly correlated metals and for the Heisenberg chain (Wilson 1975; common practice).
χ₀ in emu/mol (erg G⁻² mol⁻¹), γ_e in J/(mol K²) = 10⁷ erg/(mol K²); CGS constants from
CODATA via :mod:`scipy.constants`.  χ₀ as fitted also holds the core diamagnetism and any
Van Vleck term, which the reader must subtract before reading R_W as a Fermi-liquid ratio:
the report says so.

References
----------
.. [1] K. G. Wilson, "The renormalization group: critical phenomena and the Kondo
   problem", Rev. Mod. Phys. 47, 773 (1975) (from memory).
.. [2] N. W. Ashcroft and N. D. Mermin, *Solid State Physics* (Saunders, 1976), ch. 2 and
   ch. 31: Sommerfeld γ and Pauli susceptibility.
"""
from __future__ import annotations

import math

import numpy as np
from scipy import constants

__all__ = ["WILSON_FACTOR", "wilson_ratio", "metal_context"]

_KB_CGS = constants.k * 1e7                                   # erg/K
_MU_B_CGS = constants.physical_constants["Bohr magneton"][0] * 1e3   # erg/G (J/T → erg/G)
#: 4π² k_B² / (3 (2 μ_B)²) in (erg/(mol K²)) / (emu/mol), for χ₀ in emu/mol and γ in
#: erg/(mol K²)
WILSON_FACTOR = 4 * math.pi ** 2 * _KB_CGS ** 2 / (3 * (2 * _MU_B_CGS) ** 2)


def wilson_ratio(chi0_emu_per_mol, gamma_j_per_mol_k2):
    """R_W = 4π² k_B² χ₀ / (3 (2 μ_B)² γ_e) (module notes).

    Parameters
    ----------
    chi0_emu_per_mol : array_like
        χ₀ in emu/mol.
    gamma_j_per_mol_k2 : array_like
        γ_e in J/(mol K²).

    Returns
    -------
    ndarray
        Dimensionless; NaN where γ_e ≤ 0.

    References
    ----------
    .. [1] Wilson, Rev. Mod. Phys. 47, 773 (1975) (from memory).
    """
    chi = np.asarray(chi0_emu_per_mol, dtype=float)
    gam = np.asarray(gamma_j_per_mol_k2, dtype=float) * 1e7      # erg/(mol K²)
    with np.errstate(all="ignore"):
        return np.where(gam > 0, WILSON_FACTOR * chi / gam, np.nan)


def metal_context(names, samples, units) -> dict | None:
    """The Wilson ratio's posterior median and central 68 % interval, when χ₀ and γ_e are
    both among the parameters.

    Parameters
    ----------
    names : sequence of str
        Parameter names (columns of ``samples``); ``chi0`` and ``gamma_e`` are used.
    samples : ndarray, shape (n, len(names))
        Posterior samples.
    units : dict
        Units of the parameters (χ₀ in emu/mol and γ_e in J/(mol K^2), the internal
        units; anything else gives None).

    Returns
    -------
    dict or None
        ``wilson_ratio`` {median, q16, q84} (None if no sample has γ_e > 0),
        ``fraction_gamma_nonpositive`` and ``note``; None when χ₀ or γ_e is not fitted.

    References
    ----------
    .. [1] Wilson (1975); Ashcroft & Mermin (1976), ch. 2 and 31.
    """
    names = list(names)
    if "chi0" not in names or "gamma_e" not in names:
        return None
    if units.get("chi0") != "emu/mol" or units.get("gamma_e") != "J/(mol K^2)":
        return None                       # the internal units of evidence1d.units
    x = np.atleast_2d(np.asarray(samples, dtype=float))
    rw = wilson_ratio(x[:, names.index("chi0")], x[:, names.index("gamma_e")])
    ok = np.isfinite(rw)
    frac = float(1.0 - np.mean(ok))
    q = None
    if ok.any():
        lo, med, hi = np.quantile(rw[ok], [0.16, 0.5, 0.84])
        q = {"median": float(med), "q16": float(lo), "q84": float(hi)}
    note = ("R_W = 4π² k_B² χ₀ / (3 (2 μ_B)² γ_e) from the fitted χ₀ and γ_e (1 for free "
            "electrons, about 2 for strong correlations); χ₀ also holds core diamagnetism "
            "and Van Vleck terms, to subtract before reading R_W as a Fermi-liquid ratio")
    if frac > 0:
        note += f"; {frac:.0%} of the samples have γ_e ≤ 0 and are left out"
    return {"wilson_ratio": q, "fraction_gamma_nonpositive": frac, "note": note}
