"""Dataset kinds: which columns and units each needs, and how it is read into internal units.

Kinds
-----
``crystal_spectrum``  single-crystal neutron spectrum: ``q_par`` (along the chain, c axis),
                      ``q_perp`` (across the chain, a axis), ``energy``, ``intensity``,
                      ``error``; wavevectors in r.l.u. or Å⁻¹.
``powder_spectrum``   powder neutron spectrum: ``Q`` (|Q|, Å⁻¹), ``energy``, ``intensity``,
                      ``error``.
``susceptibility``    ``T``, ``chi``, ``error``; emu/mol or m³/mol; per magnetic ion or per
                      formula unit.
``heat_capacity``     ``T``, ``C``, ``error``; J/mol/K or mJ/mol/K.
``entropy``           magnetic entropy ``T``, ``S``, ``error``; J/mol/K or mJ/mol/K.

Internal units: meV, K, Å⁻¹, emu/mol of magnetic ion, J/(mol K) of magnetic ion.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import units as U
from ..errors import InputError, closest_key
from .table import read_table

__all__ = ["KINDS", "KindSpec", "Dataset", "load_dataset", "SPECTRUM_KINDS", "THERMO_KINDS"]


@dataclass(frozen=True)
class KindSpec:
    """What a dataset kind needs.

    Attributes
    ----------
    columns : dict of str to tuple of str
        Canonical column name to accepted header spellings (case-insensitive).
    units : dict of str to dict or tuple or None
        Unit key in the case file to the accepted units (``None``: any label, e.g. intensity).
    min_points : int
        Fewest rows that make a usable dataset.
    description : str
    """

    columns: dict
    units: dict
    min_points: int
    description: str


KINDS = {
    "crystal_spectrum": KindSpec(
        columns={"q_par": ("q_par", "qpar", "q_l", "l"), "q_perp": ("q_perp", "qperp", "q_h", "h"),
                 "energy": ("energy", "e", "en", "omega"),
                 "intensity": ("intensity", "i", "counts", "s"),
                 "error": ("error", "di", "err", "sigma", "dintensity")},
        units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
        min_points=10, description="single-crystal neutron spectrum (cuts or maps)"),
    "powder_spectrum": KindSpec(
        columns={"Q": ("q", "|q|", "qmod", "q_abs"), "energy": ("energy", "e", "en", "omega"),
                 "intensity": ("intensity", "i", "counts", "s"),
                 "error": ("error", "di", "err", "sigma", "dintensity")},
        units={"energy": U.ENERGY_UNITS, "wavevector": ("1/A",), "intensity": None},
        min_points=10, description="powder neutron spectrum"),
    "susceptibility": KindSpec(
        columns={"T": ("t", "temperature"), "chi": ("chi", "x", "susceptibility"),
                 "error": ("error", "dchi", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "chi": U.CHI_UNITS},
        min_points=5, description="bulk magnetic susceptibility chi(T)"),
    "heat_capacity": KindSpec(
        columns={"T": ("t", "temperature"), "C": ("c", "cp", "heat_capacity"),
                 "error": ("error", "dc", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "heat_capacity": U.HEAT_UNITS},
        min_points=5, description="heat capacity C(T)"),
    "entropy": KindSpec(
        columns={"T": ("t", "temperature"), "S": ("s", "entropy", "s_mag"),
                 "error": ("error", "ds", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "entropy": U.ENTROPY_UNITS},
        min_points=5, description="magnetic entropy S_mag(T)"),
}
SPECTRUM_KINDS = ("crystal_spectrum", "powder_spectrum")
THERMO_KINDS = ("susceptibility", "heat_capacity", "entropy")


@dataclass(frozen=True)
class Dataset:
    """One measured dataset in internal units.

    Attributes
    ----------
    name : str
        Name used in parameter names (``<name>:scale``) and reports.
    kind : str
        One of :data:`KINDS`.
    path : pathlib.Path
    x : dict of str to ndarray
        Independent variables in internal units: ``Q_par``, ``Q_perp`` (Å⁻¹) and ``energy``
        (meV) for a crystal spectrum; ``Q``, ``energy`` for a powder; ``T`` (K) otherwise.
    y, err : ndarray
        Measured values and their one-standard-deviation errors (internal units; intensity
        as given).
    lines : ndarray of int
        File line of each point.
    options : dict
        The validated dataset block of the case file (temperature, resolution, nuisances...).
    units : dict
        Units as declared in the case file.
    """

    name: str
    kind: str
    path: Path
    x: dict
    y: np.ndarray
    err: np.ndarray
    lines: np.ndarray
    options: dict = field(default_factory=dict)
    units: dict = field(default_factory=dict)

    @property
    def n(self) -> int:
        """Number of points."""
        return len(self.y)

    def ranges(self) -> dict:
        """(min, max) of each independent variable, for the check table."""
        return {k: (float(np.min(v)), float(np.max(v))) for k, v in self.x.items()}


def _find_columns(table, spec: KindSpec):
    lower = {name.lower(): name for name in table.columns}
    found = {}
    for canon, aliases in spec.columns.items():
        hit = next((lower[a] for a in aliases if a in lower), None)
        if hit is None:
            raise InputError(f"missing column '{canon}' (accepted headers: "
                             f"{', '.join(aliases)}); header has {', '.join(table.columns)}",
                             file=table.path, line=None)
        found[canon] = table.columns[hit]
    return found


def load_dataset(block: dict, path: Path, *, name: str, sample) -> Dataset:
    """Read one dataset file into internal units.

    Parameters
    ----------
    block : dict
        The validated dataset block (``kind``, ``units``, options) of the case file.
    path : pathlib.Path
        Resolved path of the data file.
    name : str
        Dataset name.
    sample : object
        The case's sample (lattice parameters ``a``, ``c`` in Å for r.l.u. conversion,
        ``formula_units_per_ion`` for per-formula-unit data).

    Returns
    -------
    Dataset

    Raises
    ------
    InputError
        Unknown kind or unit, missing column, bad cells (see :func:`read_table`), errors
        <= 0, too few points, duplicated temperatures, temperatures <= 0.
    """
    kind = block["kind"]
    spec = KINDS[kind]
    units = dict(block.get("units") or {})
    for ukey, table_units in spec.units.items():
        if ukey not in units:
            raise InputError(f"missing unit '{ukey}' for a {kind} dataset; declare "
                             f"units: {{{ukey}: ...}}"
                             + (f" (one of {', '.join(table_units)})" if table_units else ""),
                             key=f"{block['_where']}.units")
        if table_units is not None:
            try:
                units[ukey] = U.canonical_unit(units[ukey], table_units, ukey)
            except InputError as exc:
                raise exc.located(key=f"{block['_where']}.units.{ukey}") from None
    for ukey in units:
        if ukey not in spec.units:
            raise InputError(f"unknown unit key '{ukey}' for a {kind} dataset; "
                             f"{closest_key(ukey, spec.units)}",
                             key=f"{block['_where']}.units.{ukey}")
    table = read_table(path)
    cols = _find_columns(table, spec)
    if len(table) < spec.min_points:
        raise InputError(f"too few points ({len(table)}) for a {kind} dataset; at least "
                         f"{spec.min_points} are needed", file=path)
    err = cols["error"]
    bad = np.flatnonzero(err <= 0)
    if bad.size:
        raise InputError(f"error {err[bad[0]]:g} is not positive; every point needs an error "
                         "> 0 (one standard deviation)", file=path, line=int(table.lines[bad[0]]),
                         column="error")
    x, y, e = {}, None, err.copy()
    if kind in SPECTRUM_KINDS:
        x["energy"] = U.energy_to_mev(cols["energy"], units["energy"])
        y = cols["intensity"]
        if kind == "crystal_spectrum":
            if units["wavevector"] == "rlu":
                # Q along the chain (c axis) = 2π L / c; across (a axis) = 2π H / a
                x["Q_par"] = 2.0 * math.pi * cols["q_par"] / sample.lattice["c"]
                x["Q_perp"] = 2.0 * math.pi * cols["q_perp"] / sample.lattice["a"]
            else:
                x["Q_par"], x["Q_perp"] = cols["q_par"].copy(), cols["q_perp"].copy()
        else:
            if np.any(cols["Q"] < 0):
                i = int(np.flatnonzero(cols["Q"] < 0)[0])
                raise InputError("|Q| must be >= 0", file=path, line=int(table.lines[i]),
                                 column="Q")
            x["Q"] = cols["Q"].copy()
    else:
        T = U.temperature_to_k(cols["T"], units["temperature"])
        i_bad = np.flatnonzero(T <= 0)
        if i_bad.size:
            raise InputError("temperature must be > 0 K", file=path,
                             line=int(table.lines[i_bad[0]]), column="T")
        order = np.argsort(T, kind="stable")
        dup = np.flatnonzero(np.diff(T[order]) == 0)
        if dup.size:
            a, b = order[dup[0]], order[dup[0] + 1]
            raise InputError(f"duplicated temperature {T[a]:g} K (also at line "
                             f"{int(table.lines[a])}); average the repeats or remove one",
                             file=path, line=int(table.lines[b]), column="T")
        x["T"] = T
        per_fu = block.get("per") == "formula_unit"
        fu = sample.formula_units_per_ion if per_fu else 1.0
        if kind == "susceptibility":
            y = U.chi_to_emu_per_mol(cols["chi"], units["chi"]) * fu
            e = U.chi_to_emu_per_mol(err, units["chi"]) * fu
        else:
            col = "C" if kind == "heat_capacity" else "S"
            ukey = "heat_capacity" if kind == "heat_capacity" else "entropy"
            y = U.heat_to_j_per_mol_k(cols[col], units[ukey]) * fu
            e = U.heat_to_j_per_mol_k(err, units[ukey]) * fu
    return Dataset(name=name, kind=kind, path=path, x=x, y=np.asarray(y, float),
                   err=np.asarray(e, float), lines=table.lines,
                   options={k: v for k, v in block.items() if not k.startswith("_")},
                   units=units)
