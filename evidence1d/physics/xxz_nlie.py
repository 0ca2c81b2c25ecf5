"""Exact thermodynamics of the infinite S = 1/2 XXZ chain from a non-linear integral equation.

Convention: H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}] − h Σ_i S^z_i,
J > 0 antiferromagnetic, t = k_B T / J, h in units of J.

Method
------
The free energy per site of the infinite chain follows from one auxiliary function 𝔞 on a
closed contour C around the origin (quantum transfer matrix in the Trotter limit; the
single-function form of Göhmann, Klümper & Seel 2004, eqs. (5)-(8), written for
H' = J' Σ [σ^xσ^x + σ^yσ^y + Δ(σ^zσ^z − 1)] − (h/2) Σ σ^z, i.e. J' = J/4 and a constant
shift J'Δ per site):

    ln 𝔞(λ) = −h/T − (2J' sh η / T) e(λ) − ∮_C dω/(2πi) K(λ − ω) ln(1 + 𝔞(ω)),
    f = −h/2 − T ∮_C dω/(2πi) e(ω) ln(1 + 𝔞(ω)) + J'Δ,

with e(λ) = cth λ − cth(λ + η) and K(λ) = cth(λ − η) − cth(λ + η); Δ = ch η.

* 0 ≤ Δ < 1 (critical, η = iγ, Δ = cos γ): C is the pair of lines Im λ = ∓γ/4 (left to right
  below the real axis, back above it); the functions are hyperbolic in Re λ and decay like
  e^{−2|Re λ|}.
* Δ = 1: the rational limit λ = γ v, γ → 0: e(v) = 1/v − 1/(v + i), K(v) = 1/(v − i) −
  1/(v + i), 2J' sh η e → 2J' i e(v); lines Im v = ∓1/4; algebraic tails, so the grid is long.
* Δ > 1 (massive, η real): C is the rectangle Re λ = ±η/4, |Im λ| ≤ π/2, whose horizontal
  edges cancel by the period iπ; the integrals are periodic and the trapezoid rule converges
  exponentially.

The contour encloses the pole of e at 0 but neither −η nor the poles of K(λ − ω), so a
constant ln(1 + 𝔞) contributes nothing to the kernel integral; the asymptotic value
ln(1 + e^{−h/T}) is subtracted analytically (it gives the −T ln 2 of the free spins).
The equation is solved by damped fixed-point iteration with the kernels applied as
Toeplitz (or circulant) convolutions through the FFT.  Entropy, heat capacity and χ_zz come
from the exact first and second derivatives of f with respect to T and h (linearised
equations solved by GMRES), not from finite differences.

Checks (tests/reference/test_xxz_nlie.py): Δ = 0 equals free fermions to 1e-10; the
high-temperature series; Hulthén's ground-state energy; the Δ = 1 maxima of χ and C of
Eggert, Affleck & Takahashi (1994) and Klümper & Johnston (2000); exact diagonalisation of
rings where they have converged.  This module is used by ``scripts/build_xxz_table.py`` to
build the shipped table; at run time the table is interpolated
(:mod:`evidence1d.physics.chain_thermo`), since one evaluation here takes ~0.1-2 s.

References
----------
.. [1] A. Klümper, "Thermodynamics of the anisotropic spin-1/2 Heisenberg chain and related
   quantum chains", Z. Phys. B 91, 507 (1993).
.. [2] F. Göhmann, A. Klümper and A. Seel, "Integral representations for correlation
   functions of the XXZ chain at finite temperature", J. Phys. A 37, 7625 (2004) (the
   single-function equation, from memory; verified here against the checks above).
.. [3] A. Klümper and D. C. Johnston, Phys. Rev. Lett. 84, 4701 (2000).
.. [4] Y. Saad and M. H. Schultz, SIAM J. Sci. Stat. Comput. 7, 856 (1986) (GMRES).
"""
from __future__ import annotations

import math

import numpy as np
from scipy.sparse.linalg import LinearOperator, gmres

__all__ = ["NlieGrid", "nlie_thermodynamics"]

#: J' = J/4: the Pauli-matrix coupling of the equation in units of our J
_JP = 0.25


def _cth(z):
    return 1.0 / np.tanh(z)


def _rat(z):
    return 1.0 / z


def _log1p_exp(u):
    """ln(1 + e^u) for complex u without overflow (principal branch)."""
    out = np.empty_like(u)
    big = u.real > 0.0
    out[big] = u[big] + np.log1p(np.exp(-u[big]))
    out[~big] = np.log1p(np.exp(u[~big]))
    return out


def _sigma(u):
    """d ln(1 + e^u)/du = 1/(1 + e^{−u}), stable for complex u."""
    out = np.empty_like(u)
    big = u.real > 0.0
    out[big] = 1.0 / (1.0 + np.exp(-u[big]))
    eu = np.exp(u[~big])
    out[~big] = eu / (1.0 + eu)
    return out


class NlieGrid:
    """Discretised contour, driving function and kernel operator for one anisotropy Δ.

    Parameters
    ----------
    delta : float
        Anisotropy Δ ≥ 0.
    spacing : float, optional
        Node spacing along each line (in the variable of the regime: Re λ for Δ < 1, v for
        Δ = 1, Im λ for Δ > 1). Defaults resolve t ≥ 10⁻³.
    half_length : float, optional
        Lines run over [−half_length, half_length] (ignored for Δ > 1, where the period is π).

    Notes
    -----
    The kernel matrices are Toeplitz (critical and rational regimes) or circulant (massive
    regime); they are applied by FFT in O(n log n).
    """

    def __init__(self, delta, spacing=None, half_length=None):
        self.delta = float(delta)
        if self.delta < 0.0:
            raise ValueError("the NLIE here is written for Δ ≥ 0")
        if self.delta <= 1.0:
            # two lines Im = ∓α, run left to right below the axis and back above it
            if self.delta < 1.0:
                self.regime = "critical"
                gam = math.acos(self.delta)
                f, self.shift, alpha = _cth, 1j * gam, gam / 4.0
                h, half = spacing or min(0.02, alpha / 6.0), half_length or 20.0
                self.drive_coef = 2.0 * _JP * 1j * math.sin(gam)
            else:
                self.regime = "rational"
                f, self.shift, alpha = _rat, 1j, 0.25
                h, half = spacing or 0.05, half_length or 120.0
                self.drive_coef = 2.0 * _JP * 1j
            x = np.arange(-half, half + h / 2, h)
            self.line_a, self.line_b = x - 1j * alpha, x + 1j * alpha
            self.weight = h / (2j * math.pi)            # dλ = dx on line a, −dx on line b
            self.offset = -2j * alpha                   # λ_a − λ_b at equal x
            self.periodic = False
        else:
            self.regime = "massive"
            eta = math.acosh(self.delta)
            f, self.shift = _cth, eta
            alpha = eta / 4.0
            n = int(2 ** math.ceil(math.log2(math.pi / (spacing or min(0.004, alpha / 12.0)))))
            h = math.pi / n
            y = -math.pi / 2 + h * (np.arange(n) + 0.5)
            self.drive_coef = 2.0 * _JP * math.sinh(eta)
            self.line_a, self.line_b = alpha + 1j * y, -alpha + 1j * y
            self.weight = h / (2.0 * math.pi)           # dλ = i dy (a, upwards), −i dy (b)
            self.offset = 2.0 * alpha
            self.periodic = True
        self._f = f
        self.n = self.line_a.size
        self._build(h)

    def e(self, lam):
        """Driving function e(λ) = cth λ − cth(λ + η) (rational: 1/v − 1/(v + i))."""
        return self._f(lam) - self._f(lam + self.shift)

    def kernel(self, lam):
        """Kernel K(λ) = cth(λ − η) − cth(λ + η) (rational: 1/(v − i) − 1/(v + i))."""
        return self._f(lam - self.shift) - self._f(lam + self.shift)

    def _build(self, h):
        n = self.n
        if self.periodic:
            k = np.arange(n)
            k = np.where(k <= n // 2, k, k - n)         # circulant: differences mod the period
            base = 1j * h * k
            size = n
        else:
            k = np.concatenate([np.arange(n), [0], -np.arange(n - 1, 0, -1)])
            base = h * k.astype(float)
            size = 2 * n
        spectra = {}
        for key, off in (("aa", 0.0), ("ab", self.offset), ("ba", -self.offset)):
            col = self.kernel(base + off)
            if not self.periodic:
                col[n] = 0.0
            spectra[key] = np.fft.fft(col)
        self._spec, self._size = spectra, size
        self.e_a, self.e_b = self.e(self.line_a), self.e(self.line_b)

    def _conv(self, key, v):
        z = np.fft.ifft(self._spec[key] * np.fft.fft(v, self._size))
        return z[: self.n]

    def apply(self, g):
        """The discretised ∮ dω/(2πi) K(λ_i − ω) g(ω) on both lines; g = (g_a, g_b)."""
        n, w = self.n, self.weight
        ga, gb = g[:n], g[n:]
        ra = w * (self._conv("aa", ga) - self._conv("ab", gb))
        rb = w * (self._conv("ba", ga) - self._conv("aa", gb))
        return np.concatenate([ra, rb])

    def contour_e(self, g):
        """∮ dω/(2πi) e(ω) g(ω) for g = (g_a, g_b) on the two lines."""
        n = self.n
        return self.weight * (np.sum(self.e_a * g[:n]) - np.sum(self.e_b * g[n:]))


def _linear_solve(grid, sig, rhs):
    """Solve x + M(σ x) = rhs by GMRES (M: :meth:`NlieGrid.apply`)."""
    n2 = rhs.size
    op = LinearOperator((n2, n2), matvec=lambda x: x + grid.apply(sig * x), dtype=complex)
    x, info = gmres(op, rhs, rtol=1e-13, atol=0.0, restart=60, maxiter=200)
    if info != 0:
        raise RuntimeError(f"GMRES did not converge (Δ = {grid.delta}, info = {info})")
    return x


def _solve(grid, t, u0=None, tol=1e-12, max_iter=4000):
    """Damped fixed-point solution of the NLIE at h = 0; returns ln 𝔞 on both lines."""
    drive = -(grid.drive_coef / t) * np.concatenate([grid.e_a, grid.e_b])
    g_inf = math.log(2.0)
    u = drive.copy() if u0 is None else u0.copy()
    damp = 0.5
    for _ in range(max_iter):
        new = drive - grid.apply(_log1p_exp(u) - g_inf)
        err = float(np.max(np.abs(new - u)))
        u = damp * u + (1.0 - damp) * new
        if err < tol * max(1.0, float(np.max(np.abs(u)))):
            return u, drive
    raise RuntimeError(f"the NLIE did not converge at t = {t}, Δ = {grid.delta}")


def nlie_thermodynamics(t, delta, grid=None):
    """χ*_zz, C/R and S/R of the infinite XXZ chain from the exact NLIE.

    H = J Σ_i [S^x_i S^x_{i+1} + S^y_i S^y_{i+1} + Δ S^z_i S^z_{i+1}], J > 0.

    Parameters
    ----------
    t : array_like
        Reduced temperatures k_B T / J, 10⁻³ ≤ t (1-D); solved from the highest down, each
        solution starting the next.
    delta : float
        Anisotropy Δ ≥ 0.
    grid : NlieGrid, optional
        Discretisation to use (built with the defaults if omitted).

    Returns
    -------
    dict of ndarray
        ``chi_star`` (χ_zz J/(N g² μ_B²), field along z), ``c_over_r`` and ``s_over_r``
        (per mole of spins, units of R), ``f_over_j`` (free energy per site / J), all of the
        shape of ``t``; ``imag`` the largest imaginary part met (a discretisation check).

    References
    ----------
    Klümper, Z. Phys. B 91, 507 (1993); Göhmann, Klümper & Seel, J. Phys. A 37, 7625 (2004).
    """
    t = np.atleast_1d(np.asarray(t, dtype=float))
    grid = grid or NlieGrid(delta)
    out = {k: np.empty(t.shape) for k in ("chi_star", "c_over_r", "s_over_r", "f_over_j")}
    worst = 0.0
    order = np.argsort(-t)
    u = None
    ln2 = math.log(2.0)
    for i in order:
        T = float(t[i])
        u, drive = _solve(grid, T, u)
        g = _log1p_exp(u) - ln2
        sig = _sigma(u)
        dsig = sig * (1.0 - sig)
        F = grid.contour_e(g)
        # T-derivatives: ∂d/∂T = −d/T, ∂²d/∂T² = 2d/T²
        u_t = _linear_solve(grid, sig, -drive / T)
        u_tt = _linear_solve(grid, sig, 2.0 * drive / T**2 - grid.apply(dsig * u_t**2))
        F_t = grid.contour_e(sig * u_t)
        F_tt = grid.contour_e(dsig * u_t**2 + sig * u_tt)
        f = -T * ln2 - T * F
        f_t = -ln2 - F - T * F_t
        f_tt = -2.0 * F_t - T * F_tt
        # h-derivatives at h = 0: ∂d/∂h = −1/T; g_inf(h) = ln(1 + e^{−h/T})
        g1, g2 = -0.5 / T, 0.25 / T**2
        ones = np.ones_like(u)
        u_h = _linear_solve(grid, sig, -ones / T + grid.apply(g1 * ones))
        u_hh = _linear_solve(grid, sig, -grid.apply(dsig * u_h**2 - g2 * ones))
        f_hh = -T * g2 - T * grid.contour_e(dsig * u_h**2 + sig * u_hh - g2)
        vals = {"f_over_j": f + _JP * grid.delta, "s_over_r": -f_t, "c_over_r": -T * f_tt,
                "chi_star": -f_hh}
        for k, v in vals.items():
            worst = max(worst, abs(complex(v).imag))
            out[k][i] = complex(v).real
    out["imag"] = worst
    return out
