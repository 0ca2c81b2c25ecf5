"""Model families: the contract, the registry and the generic prediction layer.

``FAMILY_CLASSES`` maps the ``family:`` name a model card gives to the class that computes
its predictions.  The registry is discovered, not listed: every module of this package
is imported on first use, and each :class:`Family` subclass defined there with a
``family_name`` is registered under it.  A new family is therefore a kernel, a module here
and a card — no edit elsewhere.
"""
from __future__ import annotations

import importlib
import pkgutil
from collections.abc import Mapping

from .base import DIRECTIONS, Family, SpectralPoints

__all__ = ["FAMILY_CLASSES", "Family", "SpectralPoints", "DIRECTIONS"]


class _Registry(Mapping):
    """Read-only mapping family name -> Family subclass, discovered on first use."""

    def __init__(self):
        self._found = None

    def _classes(self) -> dict:
        if self._found is None:
            found = {}
            for info in pkgutil.iter_modules(__path__):
                module = importlib.import_module(f"{__name__}.{info.name}")
                for obj in vars(module).values():
                    if (isinstance(obj, type) and issubclass(obj, Family)
                            and obj.__module__ == module.__name__ and obj.family_name):
                        if obj.family_name in found and found[obj.family_name] is not obj:
                            raise RuntimeError(f"two families are named "
                                               f"'{obj.family_name}'")
                        found[obj.family_name] = obj
            self._found = dict(sorted(found.items()))
        return self._found

    def __getitem__(self, name):
        return self._classes()[name]

    def __iter__(self):
        return iter(self._classes())

    def __len__(self):
        return len(self._classes())


FAMILY_CLASSES = _Registry()
