"""Read-only arrays of the inference results.

The result records of the samplers (:class:`~evidence1d.inference.posterior.PosteriorResult`,
:class:`~evidence1d.inference.tempering.IslandRun`,
:class:`~evidence1d.inference.evidence.EvidenceResult`) are frozen dataclasses; their arrays
are made read-only here, so that no later stage can change a result in place.

References
----------
.. [1] NumPy reference, ``ndarray.setflags`` (the ``WRITEABLE`` flag).
"""
from __future__ import annotations

import numpy as np

__all__ = ["frozen_array"]


def frozen_array(a) -> np.ndarray:
    """A read-only copy of ``a``.

    Parameters
    ----------
    a : array_like
        Any array (units unchanged).

    Returns
    -------
    ndarray
        A copy whose ``WRITEABLE`` flag is off.
    """
    a = np.array(a)
    a.setflags(write=False)
    return a
