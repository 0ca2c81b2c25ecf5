"""The folder of a campaign: its manifest, one result file per replicate, its log.

Layout (``DIR``)::

    campaign.json          what the campaign is (command, seed, settings, truths, ...)
    replicates/<id>.npz    one finished replicate each (:func:`evidence1d.results.save_record`)
    campaign.log           what ran, when, where

A replicate's file is written atomically by this process as soon as its result arrives,
so an interrupted campaign keeps every finished replicate and a second call of the same
command computes only the missing ones.  A folder holding another campaign (other
settings, seed or truths) is refused rather than mixed.

References
----------
.. [1] POSIX ``rename()`` (IEEE Std 1003.1): atomic replacement within a file system.
"""
from __future__ import annotations

import json
import re
import time
from pathlib import Path

from ..errors import InputError
from ..results import atomic_write, json_ready, load_record, save_record

__all__ = ["CampaignStore"]

_ID = re.compile(r"^[A-Za-z0-9_.+-]+$")


class CampaignStore:
    """The campaign folder ``out`` (created).

    Parameters
    ----------
    out : str or pathlib.Path
    manifest : dict
        What the campaign is; a folder whose ``campaign.json`` says otherwise is refused
        (``replicates`` may differ: a campaign may be extended).

    Raises
    ------
    InputError
        The folder holds another campaign.
    """

    def __init__(self, out, manifest: dict):
        self.out = Path(out)
        self.manifest = json_ready(manifest)
        path = self.out / "campaign.json"
        if path.is_file():
            try:
                old = json.loads(path.read_text(encoding="utf-8"))
            except (OSError, ValueError):
                old = None
            diff = self._differences(old)
            if diff:
                raise InputError(f"{self.out} holds another campaign ({diff} differs); give "
                                 "another --out, or remove the folder to start again")
        elif self.out.exists() and any(self.out.iterdir()):
            raise InputError(f"{self.out} exists and is not a campaign folder; give another "
                             "--out")
        (self.out / "replicates").mkdir(parents=True, exist_ok=True)
        atomic_write(path, json.dumps(self.manifest, indent=2) + "\n")

    def _differences(self, old) -> str:
        if not isinstance(old, dict):
            return "campaign.json"
        keys = sorted((set(old) | set(self.manifest)) - {"replicates"})
        bad = [k for k in keys if old.get(k) != self.manifest.get(k)]
        return ", ".join(bad)

    def path(self, rid: str) -> Path:
        """The result file of replicate ``rid``."""
        if not _ID.match(rid):
            raise ValueError(f"bad replicate id {rid!r}")
        return self.out / "replicates" / f"{rid}.npz"

    def done(self, rid: str) -> bool:
        """Whether replicate ``rid`` has a readable result file."""
        return self.load(rid) is not None

    def save(self, record: dict) -> Path:
        """Write one replicate's record (atomically)."""
        return save_record(self.path(record["id"]), record)

    def load(self, rid: str):
        """The record of replicate ``rid``, or None if missing or damaged (it is then
        computed again, never trusted)."""
        path = self.path(rid)
        if not path.is_file():
            return None
        try:
            rec, _ = load_record(path)
        except InputError:
            return None
        return rec if isinstance(rec, dict) and rec.get("id") == rid else None

    def log(self, message: str) -> None:
        """Append a time-stamped line to ``campaign.log``."""
        stamp = time.strftime("%Y-%m-%d %H:%M:%S")
        with open(self.out / "campaign.log", "a", encoding="utf-8") as fh:
            fh.write(f"{stamp}  {message}\n")
