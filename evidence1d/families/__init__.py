"""Model families: the contract, the registry and the generic prediction layer.

``FAMILY_CLASSES`` maps the ``family:`` name a model card gives to the class that computes
its predictions.  Classes are imported lazily on first access so that importing
evidence1d stays cheap.
"""
from __future__ import annotations

import importlib
from collections.abc import Mapping

from .base import DIRECTIONS, Family, SpectralPoints

__all__ = ["FAMILY_CLASSES", "Family", "SpectralPoints", "DIRECTIONS"]

_REGISTRY = {
    "spinon_continuum": ("evidence1d.families.spinon", "SpinonFamily"),
    "gapped_spin_wave": ("evidence1d.families.spin_wave", "SpinWaveFamily"),
    "paramagnon": ("evidence1d.families.paramagnon", "ParamagnonFamily"),
    "paramagnon_incommensurate": ("evidence1d.families.paramagnon",
                                  "IncommensurateParamagnonFamily"),
}


class _LazyRegistry(Mapping):
    """Read-only mapping name -> Family subclass, importing each module on first use."""

    def __getitem__(self, name):
        module, attr = _REGISTRY[name]
        return getattr(importlib.import_module(module), attr)

    def __iter__(self):
        return iter(_REGISTRY)

    def __len__(self):
        return len(_REGISTRY)


FAMILY_CLASSES = _LazyRegistry()
