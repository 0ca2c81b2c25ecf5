"""Accuracy settings of the powder average (the case file's ``powder_average`` block).

The averages themselves are in :mod:`evidence1d.physics.powder`; this module holds what a
user may set, with its range and default, checked by the schema engine
(:mod:`evidence1d.schema`), so that a bad setting is a one-line error naming its key.
The measured accuracy of the defaults is stated in :mod:`evidence1d.physics.powder`.

References
----------
C. W. Clenshaw & A. R. Curtis, Numer. Math. 2, 197 (1960) (the θ rule the grid sizes refer
to); L. N. Trefethen & J. A. C. Weideman, SIAM Rev. 56, 385 (2014) (the trapezoidal φ rule).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from ..errors import InputError
from ..schema import Field, Spec, check_mapping, integer, real

__all__ = ["PowderSettings", "SETTINGS_FIELDS"]


def _chain_nodes(v, where):
    """Two powers of two >= 4, the smaller first."""
    if not isinstance(v, (list, tuple)) or len(v) != 2:
        raise InputError(f"expected two powers of two [smallest, largest]; got {v!r}", key=where)
    lo, hi = (integer(4, note="a power of two")(x, f"{where}[{i}]") for i, x in enumerate(v))
    if lo & (lo - 1) or hi & (hi - 1) or lo > hi:
        raise InputError(f"expected two powers of two >= 4, the smaller first; got {v!r}",
                         key=where)
    return (lo, hi)


#: every setting of the powder average with its check and default (the case file's
#: ``powder_average`` block may set tolerance, phase_step and max_grid)
SETTINGS_FIELDS = {
    "tolerance": Field(real(0.0, 1.0, lower_open=True, upper_open=True), default=1e-2,
                       help="relative accuracy of the average (default 0.01)"),
    "floor": Field(real(0.0, 1.0, lower_open=True, upper_open=True), default=1e-2,
                   help="fraction of the largest value below which points are judged on "
                        "that absolute scale"),
    "phase_step": Field(real(0.0, 2.0 * np.pi, lower_open=True), default=1.5,
                        help="largest phase step of the first direction grid in rad "
                             "(default 1.5)"),
    "max_grid": Field(integer(2, 4096), default=64,
                      help="largest number of θ and of φ intervals (default 64)"),
    "chain_nodes": Field(_chain_nodes, default=(32, 8192),
                         help="smallest and largest n of the chain-phase grid"),
}


@dataclass(frozen=True)
class PowderSettings:
    """Accuracy settings of the powder average (the case file's ``powder_average`` block).

    Attributes
    ----------
    tolerance : float
        A point is converged when its change between two nested levels is at most
        ``tolerance`` × (|value| + ``floor`` × the largest |value| of the dataset).
    floor : float
        Fraction of the dataset's largest value below which points are judged on that
        absolute scale (dimensionless).
    phase_step : float
        Largest phase step in rad between neighbouring directions of the first grid of the
        sphere average, along every lattice direction (|Q| × spacing × angle step): a
        feature of the spectrum narrower than about this many radians of phase can be
        missed by the first two grids.
    max_grid : int
        Largest number of intervals in θ and in φ over the symmetric part of the sphere.
    chain_nodes : tuple of int
        Smallest and largest n of the chain-phase grid q_j = π j / n (powers of two).

    Raises
    ------
    InputError
        A setting outside its range (:data:`SETTINGS_FIELDS`), naming
        ``powder_average.<key>``.
    """

    tolerance: float = 1e-2
    floor: float = 1e-2
    phase_step: float = 1.5
    max_grid: int = 64
    chain_nodes: tuple = (32, 8192)

    def __post_init__(self):
        checked = check_mapping({k: getattr(self, k) for k in SETTINGS_FIELDS},
                                Spec(SETTINGS_FIELDS, what="powder_average"),
                                "powder_average")
        for k, v in checked.items():
            object.__setattr__(self, k, v)
