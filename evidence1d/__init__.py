"""evidence1d: is it one-dimensional?  Joint Bayesian model comparison for quasi-1D magnets.

Fits competing model families (spinon continuum of a spin chain, gapped spin wave of a 3D
ordered magnet, quasi-elastic paramagnon of a metal) jointly to neutron spectra, χ(T) and
C(T)/S(T) with shared physical parameters; reports evidences, Bayes factors and posteriors.

Python API
----------
>>> import evidence1d
>>> case = evidence1d.load_case("case_studies/flagship/case.yaml")   # doctest: +SKIP
>>> case.parameter_names("spinon_continuum")                          # doctest: +SKIP
>>> results = evidence1d.run(case, quick=True)          # computes only  # doctest: +SKIP
>>> evidence1d.run_to_folder(case, out="results")     # folder + report  # doctest: +SKIP
"""
from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["load_case", "run", "run_to_folder", "InputError", "__version__"]

from .errors import InputError


def load_case(path):
    """Read and validate a case file; see :func:`evidence1d.case.load_case`."""
    from .case import load_case as _load
    return _load(path)


def run(case, **kwargs):
    """Compute the model comparison of a case (no files); see
    :func:`evidence1d.runner.run`."""
    from .runner import run as _run
    return _run(case, **kwargs)


def run_to_folder(case, **kwargs):
    """Run a case and write its output folder and report; see
    :func:`evidence1d.outputs.run_to_folder`."""
    from .outputs import run_to_folder as _run
    return _run(case, **kwargs)
