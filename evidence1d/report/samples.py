"""The exported posterior samples of a run: ``samples/<model>.nc`` (NetCDF, the
post-burn-in chain as arviz InferenceData) and ``samples/<model>.csv`` (thinned samples,
one column per parameter, marginalised nuisances included; when the nuisances were drawn
for an evenly spaced subset of the samples, :data:`evidence1d.runner.MARGINAL_DRAWS` at
most, the CSV holds that subset and the NetCDF file every sample).

References
----------
.. [1] R. Kumar et al., J. Open Source Softw. 4, 1143 (2019): ArviZ InferenceData.
.. [2] Y. Shafranovich, "Common Format and MIME Type for CSV Files", RFC 4180 (2005).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..results import atomic_path, atomic_write

__all__ = ["export_samples"]


def export_samples(results) -> list:
    """Write ``samples/<model>.nc`` (NetCDF, post-burn-in chain) and ``samples/<model>.csv``.

    Parameters
    ----------
    results : RunResults

    Returns
    -------
    list of pathlib.Path
        The files written.

    References
    ----------
    .. [1] R. Kumar et al., J. Open Source Softw. 4, 1143 (2019): ArviZ InferenceData.
    .. [2] Y. Shafranovich, "Common Format and MIME Type for CSV Files", RFC 4180 (2005).
    """
    from ..inference.diagnostics import to_inference_data
    folder = Path(results.out) / "samples"
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, mr in results.models.items():
        post = mr.posterior
        idata = to_inference_data(post.chain[post.burn_in:], list(mr.names))
        with atomic_path(folder / f"{name}.nc", suffix=".nc") as tmp:
            idata.to_netcdf(str(tmp))
        lines = [",".join(mr.full_names)]
        lines += [",".join(repr(float(v)) for v in row) for row in np.asarray(mr.full_samples)]
        atomic_write(folder / f"{name}.csv", "\n".join(lines) + "\n")
        written += [folder / f"{name}.nc", folder / f"{name}.csv"]
    return written
