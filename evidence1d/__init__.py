"""evidence1d: is it one-dimensional?  Joint Bayesian model comparison for quasi-1D magnets.

Fits competing model families (spinon continuum of a spin chain, gapped spin wave of a 3D
ordered magnet, quasi-elastic paramagnon of a metal) jointly to neutron spectra, χ(T) and
C(T)/S(T) with shared physical parameters; reports evidences, Bayes factors and posteriors.

Python API
----------
>>> import evidence1d
>>> case = evidence1d.load_case("case_studies/flagship/case.yaml")   # doctest: +SKIP
>>> case.parameter_names("spinon_continuum")                          # doctest: +SKIP
>>> results = evidence1d.run(case, quick=True)                        # doctest: +SKIP
"""
from __future__ import annotations

__version__ = "0.1.0"

__all__ = ["load_case", "run", "InputError", "__version__"]

from .errors import InputError


def load_case(path):
    """Read and validate a case file; see :func:`evidence1d.case.load_case`."""
    from .case import load_case as _load
    return _load(path)


def run(case, **kwargs):
    """Run the model comparison of a case; see :func:`evidence1d.runner.run`."""
    from .runner import run as _run
    return _run(case, **kwargs)
