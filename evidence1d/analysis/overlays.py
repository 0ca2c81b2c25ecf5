"""Characteristic energies drawn over a map: continuum bounds, magnon dispersion, Γ_Q.

Every family offers its own curves through the contract method
:meth:`evidence1d.families.base.Family.overlays` ::

    overlays(p, pts) -> list of (label, energies)

with ``p`` the physical parameters as (n_sets, 1) arrays, ``pts`` the
:class:`~evidence1d.families.base.SpectralPoints` along the map's wavevector line and
``energies`` of shape (n_sets, n) in meV (the bundled families: the two-spinon continuum
bounds, the renormalised magnon dispersion, the paramagnon relaxation rate).  This module
evaluates them at the posterior medians and keeps the finite ones; a family whose
parameters lie outside its formulas' domain gets no overlay.

References
----------
.. [1] J. des Cloizeaux and J. J. Pearson, Phys. Rev. 128, 2131 (1962).
.. [2] T. Moriya, *Spin Fluctuations in Itinerant Electron Magnetism* (Springer, 1985),
   Ch. 3.
"""
from __future__ import annotations

import numpy as np

__all__ = ["family_overlays"]


def family_overlays(family, p: dict, pts) -> list:
    """Curves E(Q) to draw over a map of one family at one parameter set.

    Parameters
    ----------
    family : Family
        The model family (its :meth:`~evidence1d.families.base.Family.overlays`).
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
    from ..errors import InputError
    hook = getattr(family, "overlays", None)
    if not callable(hook):
        return []
    try:
        with np.errstate(all="ignore"):
            curves = hook(p, pts)
    except (InputError, KeyError, ValueError, NotImplementedError):
        return []
    out = []
    for label, e in curves:
        e = np.asarray(e, dtype=float).reshape(-1, np.size(pts.q_par))[0]
        if np.any(np.isfinite(e)):
            out.append((str(label), e))
    return out
