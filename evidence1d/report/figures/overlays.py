"""Characteristic energies drawn over a map: continuum bounds, magnon dispersion, Γ_Q.

A family may offer them itself through a method ::

    overlays(p, pts) -> list of (label, energies)

with ``p`` the physical parameters as (n_sets, 1) arrays, ``pts`` the
:class:`~evidence1d.families.base.SpectralPoints` along the map's wavevector line and
``energies`` of shape (n_sets, n) in meV.  Until the families carry that hook, this module
supplies the curves of the bundled families from their own formulas:

* spinon continuum (S = 1/2 XXZ chain, H = J Σ [SˣSˣ + SʸSʸ + Δ SᶻSᶻ], J > 0): the exact
  lower and upper bounds of the two-spinon continuum (des Cloizeaux & Pearson 1962;
  Johnson, Krinsky & McCoy 1973);
* ordered coupled chains: the renormalised transverse magnon energy ħω_Q of the family's
  spectrum (des Cloizeaux & Pearson 1962; Schulz 1996);
* paramagnon: the relaxation rate Γ_Q, the half width of the quasi-elastic response
  (Moriya 1985).

A family with neither gets no overlay.  Curves are evaluated at the posterior medians.

References
----------
.. [1] J. des Cloizeaux and J. J. Pearson, Phys. Rev. 128, 2131 (1962).
.. [2] J. D. Johnson, S. Krinsky and B. M. McCoy, Phys. Rev. A 8, 2526 (1973).
.. [3] H. J. Schulz, Phys. Rev. Lett. 77, 2790 (1996).
.. [4] T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, 1985),
   Ch. 3.
"""
from __future__ import annotations

import numpy as np

__all__ = ["family_overlays"]


def _spinon(family, p, pts):
    from ...physics.chain import spinon_bounds
    lo, hi = spinon_bounds(pts.q_par, p["J"], p["delta"])
    return [("two-spinon lower bound", lo), ("two-spinon upper bound", hi)]


def _ordered(family, p, pts):
    from ...physics.ordered_magnon import magnon_modes
    omega = magnon_modes(pts.q_par, pts.q_a, pts.q_b, p["J"], p["J_perp"], p["delta"],
                         getattr(family, "z_perp", 4))[0]
    return [("magnon dispersion ħω$_Q$", omega)]


def _paramagnon(family, p, pts):
    return [("relaxation rate Γ$_Q$", family.relaxation_rate(p, pts))]


#: family class name -> curves, for families without their own ``overlays`` method
_BUILT_IN = {"SpinonFamily": _spinon, "SpinWaveFamily": _ordered,
             "ParamagnonFamily": _paramagnon, "IncommensurateParamagnonFamily": _paramagnon}


def family_overlays(family, p: dict, pts) -> list:
    """Curves E(Q) to draw over a map of one family at one parameter set.

    Parameters
    ----------
    family : Family
        The model family (its ``overlays`` method is used when it has one).
    p : dict of str to ndarray (1, 1)
        Physical parameters (posterior medians), energies in meV.
    pts : SpectralPoints
        Points along the map's wavevector line (energies are not used).

    Returns
    -------
    list of (str, ndarray (n,))
        Label and energy in meV of every curve; finite values only are drawn.  Empty when
        the family offers none or its parameters are outside the formulas' domain.

    References
    ----------
    .. [1] des Cloizeaux & Pearson, Phys. Rev. 128, 2131 (1962); Moriya (1985), Ch. 3.
    """
    from ...errors import InputError
    hook = getattr(family, "overlays", None)
    fn = (lambda f, pp, pt: hook(pp, pt)) if callable(hook) else \
        _BUILT_IN.get(type(family).__name__)
    if fn is None:
        return []
    try:
        with np.errstate(all="ignore"):
            curves = fn(family, p, pts)
    except (InputError, KeyError, ValueError, NotImplementedError):
        return []
    out = []
    for label, e in curves:
        e = np.asarray(e, dtype=float).reshape(-1, np.size(pts.q_par))[0]
        if np.any(np.isfinite(e)):
            out.append((str(label), e))
    return out
