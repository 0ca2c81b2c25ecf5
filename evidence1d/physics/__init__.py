"""Physics kernels: pure numpy functions vectorised over a batch of parameter sets.

Submodules are imported on first attribute access, so ``import evidence1d`` stays cheap.
"""
from __future__ import annotations

import importlib

__all__ = ["spinon_bounds", "spinon_gap", "spinon_spectrum", "xxz_thermodynamics",
           "nlie_thermodynamics", "magnetic_form_factor", "chain", "neutron", "chain_thermo", "magnon",
           "paramagnon", "bose_thermo", "chain_spectrum", "spin_wave_table", "xxz_nlie"]

_WHERE = {"spinon_bounds": "chain", "spinon_gap": "chain",
          "spinon_spectrum": "chain_spectrum", "xxz_thermodynamics": "chain_thermo",
          "nlie_thermodynamics": "xxz_nlie", "magnetic_form_factor": "neutron"}
_MODULES = {"chain", "chain_spectrum", "neutron", "chain_thermo", "magnon", "paramagnon",
            "bose_thermo", "spin_wave_table", "xxz_nlie"}


def __getattr__(name):
    if name in _MODULES:
        return importlib.import_module(f"{__name__}.{name}")
    if name in _WHERE:
        return getattr(importlib.import_module(f"{__name__}.{_WHERE[name]}"), name)
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
