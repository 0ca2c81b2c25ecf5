"""Thermal damping of a continuum: χ'' broadened by a Gaussian of width b k_BT.

A family's spectrum S_0(q, ω) = χ''_0(q, ω)[n(ω) + 1]/π (the convention of every family,
n(ω) = 1/(e^{ω/k_BT} − 1)) is damped by convolving χ''_0 in energy with a Gaussian of
standard deviation σ_th = b k_BT (b ≥ 0 dimensionless, sampled by the chain families):

    χ''_b = G_th ∗ χ''_0,   S_b = χ''_b (n + 1)/π.

χ''_b stays odd in ω, so S_b obeys detailed balance S_b(−ω) = e^{−ω/k_BT} S_b(ω) exactly, and
χ''_b has the same integral ∫ χ''/ω dω up to O(σ_th²) (the static susceptibility is not
renormalised to first order).  A width proportional to k_BT is the scale of the thermal
relaxation of a critical (Luttinger-liquid) chain, whose staggered on-site correlation
decays in time as [πk_BT/sinh(πk_BT t/ħ)]^{4h} → e^{−πk_BT t/ħ} for the Heisenberg chain's
h = 1/4 (Schulz, PRB 34, 6372 (1986); from memory); the
Gaussian form and the free factor b are phenomenology (common practice), the same footing as
the Lorentzian damping ratio of the ordered family's modes.

Evaluation from the family's own resolution-convolved spectrum.  With S_0 detailed-balanced,
χ''_0/π = S_0(ω) − S_0(−ω) and G ∗ [S_0(−·)](ω) = (G ∗ S_0)(−ω), so with P_σ = G_σ ∗ S_0,

    χ''_b/π = P_th(ω) − P_th(−ω).

The measured spectrum G_r ∗ S_b (resolution σ_r) is written as the family's exact undamped
convolution plus the change that damping makes, with the Bose factor taken outside the
resolution in that change only:

    I_b(E) = P_r(E) + [n(E) + 1] {[P_e(E) − P_e(−E)] − [P_r(E) − P_r(−E)]},
    σ_e² = σ_r² + σ_th².

I_b is exact for b = 0 and for σ_r → 0 (then I_b = S_b); otherwise the error is that of
commuting n + 1 with the resolution in the change alone, O(σ_r²/k_BT²) of the change.  Where
both the Bose factor and the gain-side terms are negligible (E ≥ 9.2 k_BT and E ≥ 4.3 σ_e
of the set: e^{−E/k_BT} and the Gaussian's reach below 1e-4), I_b = P_e.  For
|E| < 0.05 k_BT the change is taken at ±0.05 k_BT (where n + 1 and the odd bracket are both
resolved), so that the quadrature error of P does not divide by E/k_BT.

References
----------
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter* (Clarendon, 1984)
(detailed balance, χ'' odd in ω).
H. J. Schulz, Phys. Rev. B 34, 6372 (1986) (thermal time scale of the critical chain; from
memory).
"""
from __future__ import annotations

import numpy as np

from ..units import K_B_MEV

__all__ = ["damped_spectrum", "FAR_BOSE", "FAR_GAUSS", "NEAR_ZERO"]

#: E/k_BT beyond which e^{−E/k_BT} < 1e-4 (the change's Bose terms are dropped)
FAR_BOSE = 9.2
#: E/σ_e beyond which the Gaussian reaches the other side with less than 1e-4 (gain terms dropped)
FAR_GAUSS = 4.3
#: |E|/k_BT below which the change is taken at ±NEAR_ZERO k_BT
NEAR_ZERO = 0.05


def damped_spectrum(convolve, E, sigma, T, width, with_undamped=False):
    """Resolution-convolved spectrum of a continuum whose χ'' is damped by G(b k_BT).

    Parameters
    ----------
    convolve : callable
        ``convolve(E, sigma, rows)`` → the family's undamped, resolution-convolved S_0
        (1/meV), shape (n_sets, m), at energies ``E`` and Gaussian widths ``sigma`` (meV),
        each of shape (n_sets, m) or (m,), for the points ``rows`` (integer indices into the
        n points, shape (m,)).  S_0 must obey detailed balance.
    E : array_like, shape (n,)
        Energy transfer in meV (positive: neutron energy loss).
    sigma : array_like, shape (n,)
        Gaussian resolution standard deviation σ_r in meV (> 0).
    T : float
        Temperature in K.  T = 0 (or b = 0 for every set) returns ``convolve(E, sigma)``.
    width : array_like, shape (n_sets, 1)
        Damping width b ≥ 0 in units of k_BT (σ_th = b k_BT).
    with_undamped : bool, optional
        Also return the undamped P_r = ``convolve(E, sigma)`` at every point: the
        construction has it already at the points near zero energy, so only the far points
        cost an extra call.

    Returns
    -------
    ndarray, shape (n_sets, n)
        G_r ∗ S_b in the units of ``convolve`` (module notes for the construction and its
        accuracy); with ``with_undamped``, the pair (G_r ∗ S_b, P_r).

    References
    ----------
    Lovesey (1984) (detailed balance); module notes.
    """
    E = np.asarray(E, dtype=float)
    sigma = np.asarray(sigma, dtype=float)
    kT = K_B_MEV * float(T)
    b = np.asarray(width, dtype=float).reshape(-1, 1)
    every = np.arange(E.size)
    if kT <= 0.0 or not np.any(b > 0.0):
        out = convolve(E, sigma, every)
        return (out, out) if with_undamped else out
    sig_e = np.sqrt(sigma ** 2 + (b * kT) ** 2)                      # (n_sets, n)
    out = convolve(E, sig_e, every)                                  # P_e: the far points' value
    near_set = (E < FAR_BOSE * kT) | (E < FAR_GAUSS * sig_e)        # (n_sets, n)
    rows = np.flatnonzero(near_set.any(axis=0))
    if rows.size == 0:
        return (out, convolve(E, sigma, every)) if with_undamped else out
    x = E[rows] / kT
    x = np.where(np.abs(x) < NEAR_ZERO, np.where(x < 0.0, -NEAR_ZERO, NEAR_ZERO), x)
    e = x * kT
    s_r, s_e = sigma[rows], sig_e[:, rows]
    # one call for the three further terms: P_r(e), P_r(−e), P_e(−e)
    m = rows.size
    E3 = np.concatenate([e, -e, -e])
    S3 = np.concatenate([np.broadcast_to(s_r, s_e.shape), np.broadcast_to(s_r, s_e.shape), s_e],
                        axis=1)
    P = convolve(np.broadcast_to(E3, S3.shape), S3, np.concatenate([rows, rows, rows]))
    pr_p, pr_m, pe_m = P[:, :m], P[:, m:2 * m], P[:, 2 * m:]
    pe_p = out[:, rows]
    moved = e != E[rows]
    if np.any(moved):                   # P_e at the shifted energies of the points near 0
        pe_p = pe_p.copy()
        idx = np.flatnonzero(moved)
        pe_p[:, idx] = convolve(np.broadcast_to(e[idx], s_e[:, idx].shape), s_e[:, idx],
                                rows[idx])
        pr_here = convolve(np.broadcast_to(E[rows][idx], s_e[:, idx].shape),
                           np.broadcast_to(s_r[idx], s_e[:, idx].shape), rows[idx])
    with np.errstate(over="ignore"):
        n1 = 1.0 / -np.expm1(-x)              # n(E) + 1 (→ −0 far on the gain side)
    change = n1 * ((pe_p - pe_m) - (pr_p - pr_m))
    base = pr_p
    if np.any(moved):
        base = pr_p.copy()
        base[:, idx] = pr_here
    # each set takes the change only at its own near points, so that a set's result does
    # not depend on the other sets of the batch
    out[:, rows] = np.where(near_set[:, rows], base + change, out[:, rows])
    if not with_undamped:
        return out
    undamped = np.empty_like(out)
    undamped[:, rows] = base                              # P_r(E) at the near points
    far = np.setdiff1d(every, rows)
    if far.size:
        undamped[:, far] = convolve(np.broadcast_to(E[far], (out.shape[0], far.size)),
                                    np.broadcast_to(sigma[far], (out.shape[0], far.size)),
                                    far)
    return out, undamped
