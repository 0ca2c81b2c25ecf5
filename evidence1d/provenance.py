"""Provenance stamped on every output: versions, seed, input hashes, times."""
from __future__ import annotations

import datetime as _dt
import hashlib
import platform
from importlib import metadata

__all__ = ["provenance", "file_hash", "package_versions"]

_PACKAGES = ("evidence1d", "numpy", "scipy", "emcee", "arviz", "corner", "matplotlib",
             "pyyaml", "h5py", "periodictable", "tqdm")


def file_hash(path) -> str:
    """SHA-256 of a file's bytes (hex)."""
    h = hashlib.sha256()
    with open(path, "rb") as fh:
        for chunk in iter(lambda: fh.read(1 << 20), b""):
            h.update(chunk)
    return h.hexdigest()


def package_versions(packages=_PACKAGES) -> dict:
    """Installed versions of ``packages`` (None where absent) and of Python."""
    versions = {}
    for p in packages:
        try:
            versions[p] = metadata.version(p)
        except metadata.PackageNotFoundError:
            versions[p] = None
    versions["python"] = platform.python_version()
    return versions


def provenance(case, *, seed: int, start: float, run_time: float, settings: dict) -> dict:
    """Provenance record of a run.

    Parameters
    ----------
    case : Case
    seed : int
    start : float
        Start time (seconds since the epoch).
    run_time : float
        Wall time in seconds.
    settings : dict
        Effective sampler settings.

    Returns
    -------
    dict
        ``versions`` (package versions and Python), ``seed``, ``case_file`` and its
        ``case_sha256``, ``data_sha256`` per data file, ``start`` (ISO 8601, UTC),
        ``run_time_s``, ``settings``.
    """
    versions = package_versions()
    return {
        "versions": versions,
        "seed": int(seed),
        "case_file": str(case.path),
        "case_sha256": file_hash(case.path),
        "data_sha256": {ds.name: file_hash(ds.path) for ds in case.datasets},
        "start": _dt.datetime.fromtimestamp(start, _dt.timezone.utc).isoformat(),
        "run_time_s": float(run_time),
        "settings": dict(settings),
    }
