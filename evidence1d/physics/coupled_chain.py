"""Weakly coupled S = 1/2 XXZ chains in the random-phase approximation: the dynamics.

Hamiltonian (the project's convention on every bond):

    H = Σ_⟨ij⟩ J_ij [S^x_i S^x_j + S^y_i S^y_j + Δ S^z_i S^z_j],

J > 0 along the chain, J_⊥ to each of z_⊥ neighbouring chains in the interchain geometry of
the ordered family (:data:`evidence1d.physics.magnon.INTERCHAIN`: z_⊥ = 4 rectangular,
z_⊥ = 2 planar).  Energies meV, temperatures K, chain phase q = Q_∥ d and interchain phases
q_a = Q_a a_⊥, q_b = Q_b b_⊥ in radians.

The chain's complex susceptibility
----------------------------------
χ_1D(q, ω) = χ' + iχ'' per spin (1/meV, three spin components summed), retarded,
χ(ω) = (1/π) ∫ χ''(ω')/(ω' − ω − i0) dω', with S = χ''(n + 1)/π (every family).  χ'' is
the spinon family's line shape at the same J, Δ and T: χ'' = π S_1D (1 − e^{−ω/k_BT}) with
S_1D = :func:`evidence1d.physics.chain_spectrum.spinon_density` (odd in ω).  χ' is its
Kramers–Kronig transform, sheet by sheet (:func:`evidence1d.physics.chain.all_sheets`):
a sheet of amplitude A, lower edge ω_L and top ω_top contributes π A V(u; r, θ)/ω_top with
u = |ω|/ω_top, r = ω_L/ω_top, θ = k_BT/ω_top and V the transform of the sheet's shape
(:mod:`evidence1d.physics.coupled_chain_kk`: product integration on a grid graded towards
the edge, exact for the interpolated shape, and its universal table).  For Δ > 1 and
|q| < q_κ the model's line W δ(ω − a) at the continuum bottom adds its exact real part
2aW/(a² − ω²) (its δ-functions are, as in ``spinon_density``, not in the pointwise χ'').

The random-phase approximation
------------------------------
Treating the interchain bonds to first order in the chain's response (Scalapino, Imry &
Pincus 1975; Schulz 1996; Essler, Tsvelik & Delfino 1997), each spin component is dressed
separately,

    χ^aa(Q, ω) = χ^aa_1D(q, ω) / (1 + κ_a J_⊥(Q_⊥) χ^aa_1D(q, ω)),
    J_⊥(Q_⊥) = Σ_δ J_⊥ e^{iQ·δ} = 2 J_⊥ (cos q_a + cos q_b)   [z_⊥ = 4;  2 J_⊥ cos q_a for 2],

κ_z = Δ, κ_x = κ_y = 1 (the XXZ anisotropy on the interchain bonds too, as in the ordered
family).  This is the form χ_1D/(1 − J(Q) χ_1D) written with J(Q) = −J_⊥(Q_⊥): the
instability is at the ordering vector, J_⊥(Q_0) = −z_⊥ J_⊥, where the denominator is
1 − κ z_⊥ J_⊥ χ_1D (the Néel criterion of :mod:`~evidence1d.physics.coupled_chain_thermo`).
The line shape gives the summed components only; each component is given a third,
χ^aa_1D = χ_1D/3 (exact at Δ = 1; for Δ ≠ 1 an approximation: the components' shapes differ,
and splitting by their exact first moments would put less than a third in z for Δ > 1 and
turn the ordering into the plane near Δ = 1, against the easy axis).  Since
Im[χ/(1 + κJχ)] = χ''/|1 + κJχ|²,

    S(Q, ω) = Σ_a f_a S_1D(q, ω) / |1 + κ_a J_⊥(Q_⊥) f_a χ_1D(q, ω)|²

(:func:`rpa_spectrum`): J_⊥ = 0 gives S_1D exactly, and detailed balance S(−ω) =
e^{−ω/k_BT} S(ω) holds point by point because |1 + κJχ|² is even in ω.  Where χ''_1D = 0
(below the lower edge, above the top) the dressed response has poles instead,
:func:`rpa_poles`.  The first frequency moment is unchanged by the dressing
(χ_RPA → −2M1/ω² as ω → ∞, like χ_1D), the static susceptibility is
χ_1D(q, 0)/(1 + κJ_⊥ χ_1D(q, 0)), and the integrated intensity ∫S dω is not conserved: it
moves towards Q_0 (tests).

References
----------
D. J. Scalapino, Y. Imry & P. Pincus, Phys. Rev. B 11, 2042 (1975).
H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
F. H. L. Essler, A. M. Tsvelik & G. Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
H. M. Nussenzveig, *Causality and Dispersion Relations* (Academic Press, 1972).
"""
from __future__ import annotations

import math

import numpy as np

from ..errors import InputError
from ..units import K_B_MEV
from . import coupled_chain_kk as kk, coupled_chain_kk_table as kk_table
from .chain import all_sheets
from .chain_spectrum import LINE_SHAPES, spinon_density
from .magnon import check_interchain, exchange_sum

__all__ = ["METHODS", "chain_susceptibility", "chain_static_susceptibility",
           "component_shares", "interchain_exchange", "rpa_susceptibility", "rpa_spectrum",
           "rpa_poles"]

#: how χ' is evaluated: the universal table (fast) or the transform at each point (reference)
METHODS = ("table", "exact")


def _check(T, J, delta, line_shape, thermal_edge, method="table"):
    if line_shape not in LINE_SHAPES:
        raise InputError(f"the 'line_shape' of the coupled-chain kernels must be 'exact' or "
                         f"'muller'; got {line_shape!r} instead")
    if thermal_edge not in ("near_pi", "everywhere"):
        raise InputError(f"the 'thermal_edge' of the coupled-chain kernels must be "
                         f"'near_pi' or 'everywhere'; got {thermal_edge!r} instead")
    if method not in METHODS:
        raise InputError(f"the 'method' of the coupled-chain kernels must be 'table' or "
                         f"'exact'; got {method!r} instead")
    T = float(T)
    if not (T >= 0) or not math.isfinite(T):
        raise InputError(f"the temperature must be finite and >= 0 K; got {T!r}")
    return T, np.asarray(J, float).reshape(-1, 1), np.asarray(delta, float).reshape(-1, 1)


def _chi2(S, a, kT):
    """χ'' = π S (1 − e^{−a/k_BT}) at energies a ≥ 0 (π S at T = 0)."""
    return math.pi * S * (-np.expm1(-a / kT) if kT > 0 else 1.0)


class _Sheets:
    """The sheets of the chain's model at the unique chain phases of the points, computed
    once: per sheet the table stencil (or r), ω_top and A, the bottom line (a, W) and the
    lowest edge, each (n_sets, n_q); ``iq`` maps the points to the unique phases."""

    def __init__(self, q, J, delta, kT, line_shape, thermal_edge, method, contract=False):
        qu, self.iq = np.unique(np.asarray(q, float), return_inverse=True)
        self.iq = self.iq.reshape(np.shape(q))
        (wl, top, A, _), (wl_s, b, A_s, _), (la, lw) = all_sheets(qu, J, delta)
        self.args = (kT, line_shape, thermal_edge, method)
        self.parts = []
        for lo, hi, amp in ((wl, top, A), (wl_s, b, A_s)):
            ok = amp > 0
            if ok.any():
                hi_ = np.where(ok, hi, 1.0)
                r, theta = lo / hi_, np.broadcast_to(kT / hi_, hi_.shape)
                sten = (kk_table.TableStencil(r, theta, line_shape, thermal_edge)
                        if method == "table" else (r, theta))
                sten = sten.contract() if contract and method == "table" else sten
                self.parts.append((sten, hi_, np.where(ok, amp, 0.0)))
        self.line = (la, lw)
        low = np.where(wl > 0, wl, np.inf)
        self.edge = np.minimum(low, np.where(lw > 0, la, np.inf))

    def real(self, a, cols=None):
        """χ'_1D at energies a = |ω| (n_sets, n) of the points (or of the unique phases
        ``cols``, an index array of shape (n,))."""
        cols = self.iq if cols is None else cols
        index = (np.arange(a.shape[0])[:, None], cols[None, :])
        out = np.zeros(a.shape)
        for sten, hi, amp in self.parts:
            amp_p = amp[index]
            live = amp_p > 0
            sub = index if live.all() else tuple(np.broadcast_to(i, a.shape)[live]
                                                 for i in index)
            if not live.any():
                continue                      # only where the sheet is present (Δ > 1 …)
            u = (a if live.all() else a[live]) / hi[sub]
            if isinstance(sten, kk_table.TableStencil):
                V = sten.real(u, sub)
            else:
                V = kk.shape_real(u, sten[0][sub], sten[1][sub], *self.args[1:3])
            if live.all():
                out += math.pi * amp_p * V / hi[index]
            else:
                out[live] += math.pi * amp_p[live] * V / hi[sub]
        la, lw = self.line[0][index], self.line[1][index]
        with np.errstate(divide="ignore", invalid="ignore"):
            line = 2.0 * la * lw / ((la - a) * (la + a))
        return out + np.where(lw > 0, line, 0.0)


def _real_part(q, a, kT, J, delta, line_shape, thermal_edge, method):
    """χ'_1D at chain phases q (n,) and energies a = |ω| (n_sets, n)."""
    return _Sheets(q, J, delta, kT, line_shape, thermal_edge, method).real(a)


def chain_susceptibility(q, omega, T, J, delta, *, line_shape="exact",
                         thermal_edge="near_pi", method="table"):
    """Complex chain susceptibility χ_1D(q, ω) = χ' + iχ'' per spin, 1/meV.

    H = J Σ [S^x S^x + S^y S^y + Δ S^z S^z], J > 0; three spin components summed; retarded,
    χ(−ω) = χ(ω)*.  χ'' = π S_1D (1 − e^{−ω/k_BT}) exactly, S_1D from
    :func:`evidence1d.physics.chain_spectrum.spinon_density` (the spinon family's line
    shape); χ' its Kramers–Kronig transform (module notes).

    Parameters
    ----------
    q, omega : array_like, shape (n,)
        Chain phase (rad) and energy transfer (meV, any sign).
    T : float
        Temperature in K (≥ 0).
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV (> 0) and anisotropy Δ > −1.
    line_shape, thermal_edge : str, optional
        As the spinon family (defaults 'exact', 'near_pi').
    method : {'table', 'exact'}, optional
        χ' from the universal table (default; :func:`~.coupled_chain_kk_table.table_real`) or by
        the transform at each point (:func:`~.coupled_chain_kk.shape_real`, 2K line-shape
        evaluations per point: the reference).

    Returns
    -------
    ndarray of complex, shape (n_sets, n)
        χ_1D in 1/meV per spin.

    Raises
    ------
    InputError
        Bad temperature or option, J ≤ 0, Δ ≤ −1.

    References
    ----------
    Nussenzveig (1972) (Kramers–Kronig); Karbach et al., Phys. Rev. B 55, 12510 (1997),
    Müller et al., Phys. Rev. B 24, 1429 (1981) (line shape); Schulz, Phys. Rev. B 34, 6372
    (1986) (thermal edge; from memory).
    """
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge, method)
    q, omega = np.broadcast_arrays(np.asarray(q, float), np.asarray(omega, float))
    kT = K_B_MEV * T
    a = np.abs(omega)
    S = spinon_density(q, a, T, J, delta, line_shape=line_shape, thermal_edge=thermal_edge)
    a = np.broadcast_to(a, S.shape)
    chi1 = _real_part(q, a, kT, J, delta, line_shape, thermal_edge, method)
    return chi1 + 1j * np.sign(omega) * _chi2(S, a, kT)


def chain_static_susceptibility(q, T, J, delta, *, line_shape="exact",
                                thermal_edge="near_pi", method="table"):
    """Static χ'_1D(q, 0) = (2/π) ∫₀^∞ χ''(q, ω)/ω dω per spin, 1/meV (three components).

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phases in radians.
    T : float
        Temperature in K.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ (H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0).
    line_shape, thermal_edge, method : str, optional
        As :func:`chain_susceptibility`.

    Returns
    -------
    ndarray, shape (n_sets, n)
        In 1/meV.

    References
    ----------
    Kramers–Kronig at ω = 0 (Nussenzveig 1972).
    """
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge, method)
    q = np.atleast_1d(np.asarray(q, float))
    a = np.zeros((J.shape[0], q.size))
    return _real_part(q, a, K_B_MEV * T, J, delta, line_shape, thermal_edge, method)


# ------------------------------------------------------------------ random-phase dressing
def component_shares(q, J, delta):
    """Shares f_zz, f_xx (= f_yy) of the spin components in the chain's line shape: 1/3.

    Parameters
    ----------
    q : array_like, shape (n,)
        Chain phase in radians.
    J, delta : array_like, shape (n_sets, 1)
        Exchange in meV and anisotropy Δ (H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0).

    Returns
    -------
    f_zz, f_xx : ndarray, shape (n_sets, n)
        1/3 each (module notes: exact at Δ = 1, an approximation otherwise).

    References
    ----------
    Rotation invariance of the Heisenberg chain (Δ = 1); the module notes.
    """
    shape = np.broadcast_shapes(np.shape(J), np.shape(delta), (np.size(q),))
    third = np.full(shape, 1.0 / 3.0)
    return third, third.copy()


def interchain_exchange(q_a, q_b, J_perp, z_perp=4):
    """Lattice Fourier sum of the interchain exchange J_⊥(Q_⊥) = Σ_δ J_⊥ e^{iQ·δ}, meV.

    2 J_⊥ (cos q_a + cos q_b) for z_⊥ = 4, 2 J_⊥ cos q_a for z_⊥ = 2; −z_⊥ J_⊥ at the
    ordering vector.

    Parameters
    ----------
    q_a, q_b : array_like, shape (n,)
        Interchain phases in radians (q_b ignored for z_⊥ = 2).
    J_perp : array_like, shape (n_sets, 1)
        Interchain exchange in meV (> 0 antiferromagnetic).
    z_perp : {4, 2}, optional
        Interchain geometry (:data:`evidence1d.physics.magnon.INTERCHAIN`).

    Returns
    -------
    ndarray, shape (n_sets, n)
        J_⊥(Q_⊥) in meV.

    References
    ----------
    R. M. White, Quantum Theory of Magnetism (2007), Ch. 6 (through
    :func:`evidence1d.physics.magnon.exchange_sum` with no chain exchange).
    """
    z_perp = check_interchain(z_perp)
    Jp = np.asarray(J_perp, float)
    return exchange_sum(0.5 * np.pi, q_a, q_b, np.zeros_like(Jp), Jp, z_perp)


def _couplings(q, q_a, q_b, J, J_perp, delta, z_perp):
    """Per component: multiplicity, share f_a and coupling κ_a J_⊥(Q_⊥), each (n_sets, n)."""
    Jq = interchain_exchange(q_a, q_b, np.asarray(J_perp, float).reshape(-1, 1), z_perp)
    f_zz, f_xx = component_shares(q, J, delta)
    return {"zz": (1.0, f_zz, delta * Jq), "xx": (2.0, f_xx, Jq)}


def _prepare(q, q_a, q_b, omega, T, J, delta, line_shape, thermal_edge, method):
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge, method)
    q, q_a, q_b, omega = np.broadcast_arrays(*(np.asarray(x, float)
                                               for x in (q, q_a, q_b, omega)))
    kT = K_B_MEV * T
    a = np.abs(omega)
    S = spinon_density(q, a, T, J, delta, line_shape=line_shape, thermal_edge=thermal_edge)
    a = np.broadcast_to(a, S.shape)
    chi = _real_part(q, a, kT, J, delta, line_shape, thermal_edge, method) \
        + 1j * _chi2(S, a, kT)
    return T, J, delta, (q, q_a, q_b, omega), kT, S, chi


def rpa_susceptibility(q, q_a, q_b, omega, T, J, J_perp, delta, *, z_perp=4,
                       line_shape="exact", thermal_edge="near_pi", method="table",
                       components=False):
    """Dressed susceptibility Σ_a χ^aa_1D/(1 + κ_a J_⊥(Q_⊥) χ^aa_1D) per spin, 1/meV.

    H = Σ J_ij [S^x S^x + S^y S^y + Δ S^z S^z] with J along and J_⊥ between chains (module
    notes); valid above the Néel temperature (1 + κ J_⊥(Q_0) χ^aa_1D(π, 0) > 0).

    Parameters
    ----------
    q, q_a, q_b, omega : array_like, shape (n,)
        Phases (rad) and energy (meV, any sign).
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV (J > 0, J_⊥ ≥ 0 antiferromagnetic) and anisotropy Δ.
    z_perp : {4, 2}, optional
        Interchain geometry.
    line_shape, thermal_edge, method : str, optional
        As :func:`chain_susceptibility`.
    components : bool, optional
        Return {'zz': χ^zz, 'xx': χ^xx} (χ^yy = χ^xx) instead of the sum.

    Returns
    -------
    ndarray of complex, shape (n_sets, n), or dict of them

    References
    ----------
    Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); Schulz, Phys. Rev. Lett. 77,
    2790 (1996); Essler, Tsvelik & Delfino, Phys. Rev. B 56, 11001 (1997) (from memory).
    """
    T, J, delta, pts, kT, S, chi = _prepare(q, q_a, q_b, omega, T, J, delta, line_shape,
                                            thermal_edge, method)
    chi = np.where(pts[3] < 0, np.conj(chi), chi)
    out = {key: f * chi / (1.0 + g * f * chi) for key, (_, f, g)
           in _couplings(pts[0], pts[1], pts[2], J, J_perp, delta, z_perp).items()}
    return out if components else out["zz"] + 2.0 * out["xx"]


def rpa_spectrum(q, q_a, q_b, omega, T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
                 thermal_edge="near_pi", method="table"):
    """Dressed S(Q, ω) = Σ_a f_a S_1D / |1 + κ_a J_⊥(Q_⊥) f_a χ_1D|² per spin, 1/meV.

    The continuum part of χ''_RPA (n + 1)/π, unconvolved, three components summed, no form
    factor; J_⊥ = 0 gives :func:`~evidence1d.physics.chain_spectrum.spinon_density`
    exactly.  Poles where χ''_1D = 0 are in :func:`rpa_poles`.

    Parameters
    ----------
    q, q_a, q_b, omega : array_like, shape (n,)
        Phases (rad) and energy transfer (meV, any sign).
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ.
    z_perp : {4, 2}, optional
        Interchain geometry.
    line_shape, thermal_edge, method : str, optional
        As :func:`chain_susceptibility`.

    Returns
    -------
    ndarray, shape (n_sets, n)
        S in 1/meV per spin; S(−ω) = e^{−ω/k_BT} S(ω) exactly.

    References
    ----------
    Scalapino, Imry & Pincus (1975); Schulz (1996); S. W. Lovesey, Theory of Neutron
    Scattering from Condensed Matter (1984) (S = χ''(n + 1)/π).
    """
    T, J, delta, pts, kT, S_abs, chi = _prepare(q, q_a, q_b, omega, T, J, delta, line_shape,
                                                thermal_edge, method)
    a = np.abs(pts[3])
    if kT > 0:                         # detailed balance, exactly as spinon_density has it
        S = np.where(pts[3] < 0, S_abs * np.exp(-a / kT), S_abs)
    else:
        S = np.where(pts[3] < 0, 0.0, S_abs)
    out = 0.0
    for mult, f, g in _couplings(pts[0], pts[1], pts[2], J, J_perp, delta, z_perp).values():
        out = out + mult * f * S / np.abs(1.0 + g * f * chi) ** 2
    return out


_N_POLE = 18              # Illinois steps on ln(ω_edge − ω)


def illinois_root(F, a, b, fa, fb, steps, live=None):
    """The root of F between a and b (F(a) > 0 > F(b), elementwise) by the Illinois
    false-position method (Dowell & Jarratt, BIT 11, 168 (1971)): ``steps`` steps, the end
    kept twice in a row halved; where ``live`` is False the arrays are left alone.  Returns
    the end with the smaller |F|."""
    side = np.zeros(np.shape(a))
    for _ in range(steps):
        if live is None:
            c = b - fb * (b - a) / (fb - fa)
        else:
            c = np.where(live, b - fb * (b - a) / np.where(live, fb - fa, 1.0), a)
        fc = F(c)
        to_b = fc < 0
        fa = np.where(to_b & (side > 0), 0.5 * fa, fa)
        fb = np.where(~to_b & (side < 0), 0.5 * fb, fb)
        a, fa = np.where(to_b, a, c), np.where(to_b, fa, fc)
        b, fb = np.where(to_b, c, b), np.where(to_b, fc, fb)
        side = np.where(to_b, 1.0, -1.0)
    return np.where(np.abs(fa) < np.abs(fb), a, b)


def rpa_poles(q, q_a, q_b, T, J, J_perp, delta, *, z_perp=4, line_shape="exact",
              thermal_edge="near_pi", method="table"):
    """Poles of the dressed response below the chain's lower edge, per spin component.

    Where κ_a J_⊥(Q_⊥) < 0 (around the ordering vector) the real part of
    D_a(ω) = 1 + κ_a J_⊥(Q_⊥) f_a χ_1D(q, ω) vanishes at one ω_p between 0 and the lower
    edge ω_e of the continuum (or the Δ > 1 bottom line), since χ'_1D grows there towards
    the edge; the dressed component then carries the mode

        χ''_a = π Z [δ(ω − ω_p) − δ(ω + ω_p)],   Z = 1/(κ_a² J_⊥(Q_⊥)² f_a ∂χ'_1D/∂ω),

    S_a = Z [(n + 1) δ(ω − ω_p) + n δ(ω + ω_p)].  Where the thermal tail of the line shape
    reaches below the edge (χ''_1D(ω_p) > 0) the pole is a Lorentzian of weight Z and half
    width Γ = χ''_1D(ω_p)/∂χ'_1D/∂ω (the linearised denominator) that is already part of
    :func:`rpa_spectrum` (a resolution convolution must resolve it or take it analytically);
    where Γ = 0 it is a δ-function that the pointwise spectrum does not contain.  Found per
    distinct (q, q_a, q_b) by the Illinois false-position method for asinh(χ'/χ'_p − 1),
    χ'_p = −1/(κ_a J_⊥ f_a), on ln(ω_e − ω) (18 steps, both components at once; within
    e^{−30} ω_e of the edge a pole is not resolved); ∂χ'/∂ω by a centred difference.  Above
    T_N only (D_a(0) > 0); no pole where D_a stays positive up to ω_e (a thermally rounded
    edge can keep χ' finite).  The antibound states above the top of the continuum
    (κJ_⊥ > 0) are found by the resolution-convolved spectrum
    (:mod:`evidence1d.physics.coupled_chain_spectrum`), not here.

    Parameters
    ----------
    q, q_a, q_b : array_like, shape (n,)
        Chain and interchain phases in radians.
    T : float
        Temperature in K.
    J, J_perp, delta : array_like, shape (n_sets, 1)
        Exchanges in meV and anisotropy Δ (module notes for H).
    z_perp : {4, 2}, optional
        Interchain geometry.
    line_shape, thermal_edge, method : str, optional
        As :func:`chain_susceptibility`.

    Returns
    -------
    dict
        For 'zz' and 'xx' (the weight of one component; 'xx' counts once for x and once for
        y): ``omega`` (meV, NaN where no pole), ``weight`` Z (dimensionless, 0 where no
        pole) and ``width`` Γ (meV), each (n_sets, n).

    References
    ----------
    Scalapino, Imry & Pincus, Phys. Rev. B 11, 2042 (1975); Schulz, Phys. Rev. Lett. 77,
    2790 (1996) (the bound state below the continuum); Lovesey (1984) (S = χ''(n + 1)/π);
    M. Dowell & P. Jarratt, BIT 11, 168 (1971) (the Illinois method).
    """
    T, J, delta = _check(T, J, delta, line_shape, thermal_edge, method)
    pts = np.stack(np.broadcast_arrays(*(np.asarray(x, float) for x in (q, q_a, q_b))), -1)
    rows, back = np.unique(pts.reshape(-1, 3), axis=0, return_inverse=True)
    kT = K_B_MEV * T
    sh = _Sheets(rows[:, 0], J, delta, kT, line_shape, thermal_edge, method)
    n = rows.shape[0]
    cols = np.concatenate([sh.iq, sh.iq])
    edge = sh.edge[:, sh.iq]
    edge = np.concatenate([edge, edge], axis=1)
    ok = np.isfinite(edge) & (edge > 0)
    e = np.where(ok, edge, 1.0)
    coup = _couplings(rows[:, 0], rows[:, 1], rows[:, 2], J, J_perp, delta, z_perp)
    gf = np.concatenate([coup["zz"][1] * coup["zz"][2], coup["xx"][1] * coup["xx"][2]], 1)
    live = ok & (gf < 0)
    target = -1.0 / np.where(live, gf, -1.0)                  # the level χ'_1D = −1/(κJf)

    def F(s):               # asinh((χ' − t)/t): the same root, the divergence compressed
        return np.arcsinh(sh.real(np.where(live, e - np.exp(s), 0.0), cols) / target - 1.0)

    a, b = np.log(e) - 30.0, np.log(e)                         # near the edge; ω = 0
    fa, fb = F(a), F(b)
    live &= (fa > 0) & (fb < 0)
    d = np.exp(illinois_root(F, a, b, fa, fb, _N_POLE, live))
    wp = np.where(live, e - d, 1.0)
    h = np.maximum(1e-5 * np.minimum(d, wp), 1e-12 * e)
    slope = (sh.real(wp + h, cols) - sh.real(wp - h, cols)) / (2.0 * h)
    live &= slope > 0
    slope = np.where(live, slope, 1.0)
    S = spinon_density(rows[:, 0], np.ascontiguousarray(wp[:, :n]), T, J, delta,
                       line_shape=line_shape, thermal_edge=thermal_edge)
    S = np.concatenate([S, S], axis=1)
    g = np.concatenate([coup["zz"][2], coup["xx"][2]], 1)
    f = np.concatenate([coup["zz"][1], coup["xx"][1]], 1)
    res = {"omega": np.where(live, wp, np.nan),
           "weight": np.where(live, 1.0 / np.where(live, g * g * f * slope, 1.0), 0.0),
           "width": np.where(live, _chi2(S, wp, kT) / slope, 0.0)}
    back = back.reshape(np.shape(pts)[:-1])
    return {key: {k: v[:, j * n:(j + 1) * n][:, back] for k, v in res.items()}
            for j, key in enumerate(("zz", "xx"))}
