"""Exact quadrature of the coupled chains' dressed continuum next to its edges.

The pieces of :mod:`evidence1d.physics.coupled_chain_spectrum` that its shared energy grid
cannot resolve: the dressing's dip next to the lower edge, a band narrower than a few grid
steps, the chain's thermal weight below the edge and the steep χ'_1D below the top.  Each
strip is integrated by 4-point Gauss–Legendre quadrature in t = √|ω − ω_x| on panels graded
towards its edge ω_x (S_1D dω = 2t S_1D dt is finite at an inverse-square-root edge), with a
share φ (:func:`taper`) that the grid complements smoothly, and placed per group of panels
at the centroid of its integrand, resolution-broadened with detailed balance.  Energies in
meV.

References
----------
M. Abramowitz & I. A. Stegun, *Handbook of Mathematical Functions* (1964), 25.4.29
(Gauss–Legendre).
S. W. Lovesey, *Theory of Neutron Scattering from Condensed Matter* (Clarendon, 1984)
(detailed balance).
"""
from __future__ import annotations

import numpy as np

from ..gauss_rules import gauss_legendre
from .neutron import gaussian

__all__ = ["edge_integral", "edge_gaussians", "taper", "strip", "strip_gaussians",
           "upper_width", "BELOW", "TOP"]

_GL_T, _GL_W = gauss_legendre(4)
_GL_T, _GL_W = 0.5 * (_GL_T + 1.0), 0.5 * _GL_W          # on [0, 1]
#: width of the strip below the lower edge (T > 0), in grid steps h₀
BELOW = 3.0
#: width of the strip below the top of the continuum, in grid steps h₀
TOP = 3.0


#: graded panels in t = √(ω − ω_L) over the first step above the edge (fractions of √h)
_T_PANELS = np.array([0.0, 1e-4, 1e-3, 1e-2, 0.05, 0.2, 0.5, 1.0])


def _edge_nodes(upper):
    """Nodes t and weights of ∫₀^upper f(t) dt: 4-point Gauss–Legendre on each panel of
    :data:`_T_PANELS` (graded towards t = 0), shape (k, n_nodes) for k intervals."""
    t0, t1 = _T_PANELS[:-1, None], _T_PANELS[1:, None]
    x = (t0 + (t1 - t0) * _GL_T[None, :]).ravel()
    wx = ((t1 - t0) * _GL_W[None, :]).ravel()
    return upper[..., None] * x, upper[..., None] * wx


def edge_integral(edge, upper, live, integrand, side=1.0):
    """∫ S_1D(ω) w(ω) dω over [ω_L, ω_L + upper²] (``side`` = −1: over [ω_L − upper², ω_L])
    per set and row where ``live`` (else 0), in t = √|ω − ω_L|: S_1D dω = 2t S_1D dt is
    finite at the inverse-square-root edge, and the graded panels resolve a dressing that
    varies on any scale down to 10⁻⁸ of the step.  ``integrand`` gives S_1D w at flat
    energies (meV) of flat (set, row) pairs."""
    out = np.zeros(edge.shape)
    si, ci = np.nonzero(live)
    if si.size:
        t, wt = _edge_nodes(upper[si, ci])                  # (k, K)
        K = t.shape[-1]
        om = (edge[si, ci][:, None] + side * t * t).ravel()
        f = integrand(om, np.repeat(si, K), np.repeat(ci, K)).reshape(t.shape)
        out[si, ci] = (2.0 * t * wt * f).sum(-1)
    return out


#: graded panels in t = √|ω − ω_L| of the strips at the edge (fractions of √(length))
_T_STRIP = np.array([0.0, 1e-4, 1e-3, 1e-2, 0.05, 0.2, 0.4, 0.6, 0.8, 1.0])
#: the panels placed together (first node of each group): the five next to the edge
#: (within 0.25 % of the strip's length of it) as one, the others each on their own
_GROUP_START = np.array([0, 20, 24, 28, 32])


def taper(x):
    """The share φ(x) of the exact integral of a strip at x = |ω − ω_L|/U ≥ 0: 1 up to
    x = 1/3, then down to 0 at x = 1 by the quintic smoothstep 1 − s(y), s = y³(10 − 15y +
    6y²), y = (x − 1/3)/(2/3) (φ and its first two derivatives continuous), 0 beyond."""
    y = np.clip((np.asarray(x, float) - 1.0 / 3.0) * 1.5, 0.0, 1.0)
    return 1.0 - y * y * y * (10.0 - 15.0 * y + 6.0 * y * y)


def strip(edge, width, length, live, integrand, side):
    """∫ φ S_1D w dω over the strip from ω_L to ω_L + side × ``length`` (meV; ``side`` ±1),
    φ = :func:`taper` (|ω − ω_L|/``width``), per group of panels of :data:`_T_STRIP`
    (:data:`_GROUP_START`), and where each group's part is placed: the centroid of φ|S_1D w|
    over it (its nodes' mean where that vanishes).

    In t = √|ω − ω_L| (S_1D dω = 2t S_1D dt, finite at an inverse-square-root edge), 4-point
    Gauss–Legendre on each panel, graded towards the edge down to 10⁻⁸ of the strip, so a
    dressing that dips on any scale next to the edge is resolved.  ``integrand`` gives S_1D w
    at flat energies of flat (set, row) pairs.

    Returns
    -------
    weight, where : ndarray, shape (n_sets, n_rows, n_groups)
        Zero weight where not ``live``.
    """
    weight = np.zeros(edge.shape + (_GROUP_START.size,))
    where = np.broadcast_to(edge[..., None], weight.shape).copy()
    si, ci = np.nonzero(live)
    if si.size:
        t0, t1 = _T_STRIP[:-1, None], _T_STRIP[1:, None]
        x = (t0 + (t1 - t0) * _GL_T[None, :]).ravel()             # (n_p × 4,)
        wx = ((t1 - t0) * _GL_W[None, :]).ravel()
        root = np.sqrt(length[si, ci])[:, None]
        t, wt = root * x, root * wx                               # (k, n_p × 4)
        om = edge[si, ci][:, None] + side * t * t
        f = integrand(om.ravel(), np.repeat(si, x.size), np.repeat(ci, x.size)).reshape(t.shape)
        w = 2.0 * t * wt * taper(t * t / width[si, ci][:, None])
        weight[si, ci] = np.add.reduceat(w * f, _GROUP_START, axis=-1)
        a = w * np.abs(f)
        norm = np.add.reduceat(a, _GROUP_START, axis=-1)
        mid = np.add.reduceat(om, _GROUP_START, axis=-1) / np.diff(_GROUP_START,
                                                                    append=x.size)
        where[si, ci] = np.where(norm > 0, np.add.reduceat(a * om, _GROUP_START, axis=-1)
                                 / np.where(norm > 0, norm, 1.0), mid)
    return weight, where


def strip_gaussians(grid, where, weight, kT):
    """The strips' panel weights at their places (loss side, and the gain side with detailed
    balance), resolution-broadened at the points; (n_sets, n)."""
    pr, E, s = grid.point_row, grid.point_energy[:, None], grid.point_sigma[:, None]
    e, d = where[:, pr], weight[:, pr]                            # (n_sets, n, n_p)
    out = d * gaussian(E - e, s)
    if kT > 0:
        out = out + d * np.exp(-e / kT) * gaussian(E + e, s)
    return out.sum(-1)


def upper_width(band, h):
    """Width U of the strip above the edge (meV): 3h₀ for bands wider than 5h₀, 3 × the band
    (so that its plateau holds the whole band) for bands up to 3h₀, and linear between
    (continuous in the band's width, so the spectrum is continuous in the parameters)."""
    b = band / h
    return 3.0 * h * np.maximum(1.0, np.minimum(b, 6.0 - b))


def edge_gaussians(grid, edge, D, kT):
    """The edge term D at ±ω_L (gain side with detailed balance), resolution-broadened."""
    pr, E, s = grid.point_row, grid.point_energy, grid.point_sigma
    e, d = edge[:, pr], D[:, pr]
    out = d * gaussian(E - e, s)
    if kT > 0:
        out = out + d * np.exp(-e / kT) * gaussian(E + e, s)
    return out
