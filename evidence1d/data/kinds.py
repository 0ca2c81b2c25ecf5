"""Dataset kinds: which columns and units each needs, and how it is read into internal units.

Kinds
-----
``crystal_spectrum``  single-crystal neutron spectrum: ``q_par`` (along the chain, c axis),
                      ``q_perp`` (across the chain, a axis), ``energy``, ``intensity``,
                      ``error``; wavevectors in r.l.u. or Å⁻¹.
``powder_spectrum``   powder neutron spectrum: ``Q`` (|Q|, Å⁻¹), ``energy``, ``intensity``,
                      ``error``.
``susceptibility``    ``T``, ``chi``, ``error``; emu/mol or m³/mol.
``heat_capacity``     ``T``, ``C``, ``error``; J/mol/K or mJ/mol/K.
``entropy``           magnetic entropy ``T``, ``S``, ``error``; J/mol/K or mJ/mol/K.

Thermodynamic kinds take ``per: formula_unit`` (divided by the sample's
``ions_per_formula_unit``).  Points with a non-finite value or error, or an error <= 0, are
an error unless the dataset says ``masked: drop``.

Internal units: meV, K, Å⁻¹, emu/mol of magnetic ion, J/(mol K) of magnetic ion.
"""
from __future__ import annotations

import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import units as U
from ..errors import InputError, closest_key
from .columns import known_names, match_columns, merge_header_units, normalise_unit
from .table import read_table

__all__ = ["KINDS", "KindSpec", "Dataset", "load_dataset", "SPECTRUM_KINDS", "THERMO_KINDS",
           "MASK_RULES", "NEXUS_SUFFIXES"]

#: file suffixes read as HDF5/NeXus (everything else is delimited text)
NEXUS_SUFFIXES = (".nxs", ".nx5", ".h5", ".hdf5")


@dataclass(frozen=True)
class KindSpec:
    """What a dataset kind needs.

    Attributes
    ----------
    columns : dict of str to tuple of str
        Canonical column name to accepted header spellings (case-insensitive; the error
        column also accepts the spellings of :func:`~evidence1d.data.columns.error_aliases`).
    units : dict of str to dict or tuple or None
        Unit key in the case file to the accepted units (``None``: any label, e.g. intensity).
    min_points : int
        Fewest rows that make a usable dataset.
    description : str
    value : str
        The column of the measured value (the error column is its standard deviation).
    column_units : dict of str to str
        Column to the unit key its header unit declares.
    error_stems : tuple of str or None
        Spellings of the value from which error headers are formed (``d<stem>``,
        ``<stem>_err``, ...); None: every spelling of the value column.
    """

    columns: dict
    units: dict
    min_points: int
    description: str
    value: str = "intensity"
    column_units: dict = field(default_factory=dict)
    error_stems: tuple | None = None


_ENERGY = ("energy", "e", "en", "omega", "w", "hw", "energy_transfer", "deltae", "de_transfer")
_INTENSITY = ("intensity", "i", "counts", "s", "sqw", "signal")
_TEMPERATURE = ("t", "temperature", "temp", "t_sample")

KINDS = {
    "crystal_spectrum": KindSpec(
        columns={"q_par": ("q_par", "qpar", "q_l", "ql", "l"),
                 "q_perp": ("q_perp", "qperp", "q_h", "qh", "h"),
                 "energy": _ENERGY, "intensity": _INTENSITY,
                 "error": ("error", "di", "err", "sigma", "dintensity")},
        units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
        min_points=10, description="single-crystal neutron spectrum (cuts or maps)",
        value="intensity",
        column_units={"q_par": "wavevector", "q_perp": "wavevector", "energy": "energy",
                      "intensity": "intensity", "error": "intensity"}),
    "powder_spectrum": KindSpec(
        columns={"Q": ("q", "|q|", "qmod", "q_abs", "modq", "absq"), "energy": _ENERGY,
                 "intensity": _INTENSITY,
                 "error": ("error", "di", "err", "sigma", "dintensity")},
        units={"energy": U.ENERGY_UNITS, "wavevector": ("1/A",), "intensity": None},
        min_points=10, description="powder neutron spectrum", value="intensity",
        column_units={"Q": "wavevector", "energy": "energy", "intensity": "intensity",
                      "error": "intensity"}),
    "susceptibility": KindSpec(
        columns={"T": _TEMPERATURE, "chi": ("chi", "x", "susceptibility", "χ", "m/h"),
                 "error": ("error", "dchi", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "chi": U.CHI_UNITS},
        min_points=5, description="bulk magnetic susceptibility chi(T)", value="chi",
        column_units={"T": "temperature", "chi": "chi", "error": "chi"},
        error_stems=("chi", "susceptibility", "χ", "m/h")),
    "heat_capacity": KindSpec(
        columns={"T": _TEMPERATURE, "C": ("c", "cp", "c_p", "heat_capacity"),
                 "error": ("error", "dc", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "heat_capacity": U.HEAT_UNITS},
        min_points=5, description="heat capacity C(T)", value="C",
        column_units={"T": "temperature", "C": "heat_capacity", "error": "heat_capacity"}),
    "entropy": KindSpec(
        columns={"T": _TEMPERATURE, "S": ("s", "entropy", "s_mag", "smag"),
                 "error": ("error", "ds", "err", "sigma")},
        units={"temperature": U.TEMPERATURE_UNITS, "entropy": U.ENTROPY_UNITS},
        min_points=5, description="magnetic entropy S_mag(T)", value="S",
        column_units={"T": "temperature", "S": "entropy", "error": "entropy"}),
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
        File line of each point (text files) or its flat index in the signal array (HDF5).
    options : dict
        The validated dataset block of the case file (temperature, resolution, nuisances...).
    units : dict
        Units of the data: the case file's declarations completed by the column headers.
    masked : dict of str to int
        With ``masked: drop``: points dropped per rule (``non-finite value``, ``non-finite
        error``, ``non-positive error``; a point counts under the first rule it meets).
    unused_columns : tuple of str
        Columns of the file that no column of the kind uses.
    columns : dict of str to str
        Column of the kind to the column (header) of the file that supplied it.
    raw : dict of str to ndarray
        Column of the kind to its values as read, in the data's units, for the points kept.
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
    masked: dict = field(default_factory=dict)
    unused_columns: tuple = ()
    columns: dict = field(default_factory=dict)
    raw: dict = field(default_factory=dict)

    @property
    def n(self) -> int:
        """Number of points."""
        return len(self.y)

    @property
    def n_masked(self) -> int:
        """Number of points dropped by ``masked: drop``."""
        return int(sum(self.masked.values()))

    def ranges(self) -> dict:
        """(min, max) of each independent variable, for the check table."""
        return {k: (float(np.min(v)), float(np.max(v))) for k, v in self.x.items()}


#: the rules of ``masked: drop``, in the order a point is attributed to them
MASK_RULES = ("non-finite value", "non-finite error", "non-positive error")


def _declared_units(block, spec, kind):
    where = block["_where"]
    units = dict(block.get("units") or {})
    for ukey in units:
        if ukey not in spec.units:
            raise InputError(f"unknown unit key '{ukey}' for a {kind} dataset; "
                             f"{closest_key(ukey, spec.units)}", key=f"{where}.units.{ukey}")
        if spec.units[ukey] is not None:
            try:
                units[ukey] = normalise_unit(units[ukey], spec.units[ukey], ukey)
            except InputError as exc:
                raise exc.located(key=f"{where}.units.{ukey}") from None
        else:
            units[ukey] = str(units[ukey])
    return units


def _read_source(path, block, spec):
    if Path(path).suffix.lower() in NEXUS_SUFFIXES:
        from .nexus import read_nexus
        return read_nexus(path, entry=block.get("entry"))
    if block.get("entry") is not None:
        raise InputError("'entry' names a group of an HDF5/NeXus file, but the data file is "
                         f"text; remove 'entry' or use a {', '.join(NEXUS_SUFFIXES)} file",
                         key=f"{block['_where']}.entry")
    return read_table(path, known=known_names(spec, block.get("columns")),
                      allow_nonfinite=True)


def _masked_points(table, spec, found, cols, mode):
    """Rows to keep and the count of dropped rows per rule; errors for hard failures."""
    for canon, col in found.items():
        if canon in (spec.value, "error"):
            continue
        bad = np.flatnonzero(~np.isfinite(cols[canon]))
        if bad.size:
            raise InputError(f"value {cols[canon][bad[0]]:g} is not finite (NaN or inf); "
                             "remove the row or give a number", **table.where(bad[0], col))
    y, err = cols[spec.value], cols["error"]
    rules = {MASK_RULES[0]: ~np.isfinite(y), MASK_RULES[1]: ~np.isfinite(err)}
    rules[MASK_RULES[2]] = np.isfinite(err) & (err <= 0)
    any_bad = rules[MASK_RULES[0]] | rules[MASK_RULES[1]] | rules[MASK_RULES[2]]
    if mode != "drop":
        if any_bad.any():
            i = int(np.flatnonzero(any_bad)[0])
            hint = ("; if such points mark masked or empty bins, set 'masked: drop' in the "
                    "dataset block to leave them out")
            if rules[MASK_RULES[0]][i]:
                raise InputError(f"value {y[i]:g} is not finite (NaN or inf); remove the row "
                                 f"or give a number{hint}",
                                 **table.where(i, found[spec.value]))
            if rules[MASK_RULES[1]][i]:
                raise InputError(f"error {err[i]:g} is not finite (NaN or inf); every point "
                                 f"needs an error > 0{hint}", **table.where(i, found["error"]))
            raise InputError(f"error {err[i]:g} is not positive; every point needs an error "
                             f"> 0 (one standard deviation){hint}",
                             **table.where(i, found["error"]))
        return np.ones(len(y), bool), {}
    counts, taken = {}, np.zeros(len(y), bool)
    for rule in MASK_RULES:
        hit = rules[rule] & ~taken
        counts[rule] = int(hit.sum())
        taken |= hit
    return ~any_bad, counts


def load_dataset(block: dict, path: Path, *, name: str, sample) -> Dataset:
    """Read one dataset file into internal units.

    Parameters
    ----------
    block : dict
        The validated dataset block (``kind``, ``units``, ``columns``, ``masked``, ``per``,
        ``entry``, options) of the case file.
    path : pathlib.Path
        Resolved path of the data file: delimited text, or HDF5/NeXus (``.nxs``, ``.nx5``,
        ``.h5``, ``.hdf5``).
    name : str
        Dataset name.
    sample : object
        The case's sample (lattice parameters ``a``, ``c`` in Å for r.l.u. conversion;
        ``ions_per_formula_unit`` and ``formula_units_per_ion`` for per-formula-unit data).

    Returns
    -------
    Dataset

    Raises
    ------
    InputError
        Unknown kind or unit, a unit clash between header and case file, missing or ambiguous
        column, bad cells (see :func:`read_table`), non-finite values or errors <= 0 (unless
        ``masked: drop``), too few points, duplicated temperatures, temperatures <= 0,
        ``per: formula_unit`` without the sample's ion count or on a spectrum.
    """
    kind = block["kind"]
    spec = KINDS[kind]
    where = block["_where"]
    declared = _declared_units(block, spec, kind)
    table = _read_source(path, block, spec)
    # HDF5: the signal is the measured value and its errors the error, whatever their names
    mapping = {spec.value if r == "value" else r: c for r, c in table.roles.items()}
    mapping.update(block.get("columns") or {})
    found, unused = match_columns(table, spec, mapping, where=where)
    units = merge_header_units(table, spec, found, declared, where=where)
    for ukey, accepted in spec.units.items():
        if ukey not in units:
            raise InputError(f"missing unit '{ukey}' for a {kind} dataset; declare "
                             f"units: {{{ukey}: ...}}"
                             + (f" (one of {', '.join(accepted)})" if accepted else "")
                             + " or write it in the column header, e.g. 'T (K)'",
                             key=f"{where}.units")
    cols = {c: np.asarray(table.columns[h], dtype=float) for c, h in found.items()}
    keep, masked = _masked_points(table, spec, found, cols, block.get("masked", "error"))
    cols = {c: v[keep] for c, v in cols.items()}
    lines = np.asarray(table.lines)[keep]
    dropped = int(np.count_nonzero(~keep))
    if len(lines) < spec.min_points:
        raise InputError(f"too few points ({len(lines)}) for a {kind} dataset; at least "
                         f"{spec.min_points} are needed"
                         + (f" ({dropped} masked points were dropped)" if dropped else ""),
                         file=path)

    def loc(i, canon):
        return table.where(int(np.flatnonzero(keep)[i]), found[canon])

    err = cols["error"]
    x, y, e = {}, None, err.copy()
    per = block.get("per", "magnetic_ion")
    if kind in SPECTRUM_KINDS:
        if per == "formula_unit":
            raise InputError("'per: formula_unit' applies to susceptibility, heat capacity and "
                             "entropy; spectra are per magnetic ion", key=f"{where}.per")
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
                raise InputError("|Q| must be >= 0", **loc(i, "Q"))
            x["Q"] = cols["Q"].copy()
    else:
        T = U.temperature_to_k(cols["T"], units["temperature"])
        i_bad = np.flatnonzero(T <= 0)
        if i_bad.size:
            raise InputError("temperature must be > 0 K", **loc(i_bad[0], "T"))
        order = np.argsort(T, kind="stable")
        dup = np.flatnonzero(np.diff(T[order]) == 0)
        if dup.size:
            a, b = order[dup[0]], order[dup[0] + 1]
            first = loc(a, "T")
            also = (f"line {first['line']}" if first.get("line") is not None
                    else f"{first.get('key')}")
            raise InputError(f"duplicated temperature {T[a]:g} K (also at {also}); average "
                             "the repeats or remove one", **loc(b, "T"))
        x["T"] = T
        fu = 1.0
        if per == "formula_unit":
            if getattr(sample, "ions_per_formula_unit", 1.0) is None:
                raise InputError("'per: formula_unit' needs the number of magnetic ions per "
                                 "formula unit: set sample.ions_per_formula_unit",
                                 key=f"{where}.per")
            fu = sample.formula_units_per_ion
        ukey = {"susceptibility": "chi", "heat_capacity": "heat_capacity",
                "entropy": "entropy"}[kind]
        conv = U.chi_to_emu_per_mol if kind == "susceptibility" else U.heat_to_j_per_mol_k
        # a molar quantity per formula unit divided by the ions per formula unit is per ion
        y = conv(cols[spec.value], units[ukey]) * fu
        e = conv(err, units[ukey]) * fu
    return Dataset(name=name, kind=kind, path=path, x=x, y=np.asarray(y, float),
                   err=np.asarray(e, float), lines=lines,
                   options={k: v for k, v in block.items() if not k.startswith("_")},
                   units=units, masked=masked, unused_columns=tuple(unused),
                   columns=dict(found), raw=cols)
