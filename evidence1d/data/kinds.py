"""Datasets: one measured dataset in internal units, and how a file of each kind is read.

Kinds
-----
``crystal_spectrum``  single-crystal neutron spectrum: ``energy``, ``intensity``, ``error`` and
                      the wavevector either as Miller indices ``H``, ``K``, ``L`` (r.l.u.,
                      converted with the sample's lattice and chain direction, see
                      :mod:`~evidence1d.data.geometry`) or as components ``q_par`` (along
                      the chain), ``q_perp`` (across it, along n₁) and optionally
                      ``q_perp2`` (along n₂) in Å⁻¹.  ``q_par``/``q_perp`` in r.l.u. are L
                      and H of a cell with the chain along c and right angles.
``powder_spectrum``   powder neutron spectrum: ``Q`` (|Q|, Å⁻¹), ``energy``, ``intensity``,
                      ``error``.
``susceptibility``    ``T``, ``chi``, ``error``; emu/mol or m³/mol.
``heat_capacity``     ``T``, ``C``, ``error``; J/mol/K or mJ/mol/K.
``entropy``           magnetic entropy ``T``, ``S``, ``error``; J/mol/K or mJ/mol/K.

Thermodynamic kinds take ``per: formula_unit`` (divided by the sample's
``ions_per_formula_unit``).  Points with a non-finite value or error, or an error <= 0, are
an error unless the dataset says ``masked: drop``.

Internal units: meV, K, Å⁻¹, emu/mol of magnetic ion, J/(mol K) of magnetic ion.  What
each kind reads, converts and adds is owned by its kind object
(:mod:`~evidence1d.data.kind_objects`, re-exported here).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path
from types import MappingProxyType

import numpy as np

from ..errors import InputError, closest_key
from .columns import match_columns, merge_header_units, normalise_unit
from .kind_base import ColumnLayout, DatasetKind, KindSpec
from .spectrum_kinds import CRYSTAL_HKL, CRYSTAL_SPECTRUM, POWDER_SPECTRUM
from .table import read_table
from .thermo_kinds import ENTROPY, HEAT_CAPACITY, SUSCEPTIBILITY

__all__ = ["KINDS", "CRYSTAL_HKL", "crystal_layout", "KindSpec", "ColumnLayout", "DatasetKind",
           "Dataset", "load_dataset", "SPECTRUM_KINDS", "THERMO_KINDS", "SAMPLE_EXTRAS",
           "MASK_RULES", "NEXUS_SUFFIXES", "kind_named"]

#: file suffixes read as HDF5/NeXus (everything else is delimited text)
NEXUS_SUFFIXES = (".nxs", ".nx5", ".h5", ".hdf5")

#: every dataset kind by the name case files give it (read-only)
KINDS = MappingProxyType({k.name: k for k in (CRYSTAL_SPECTRUM, POWDER_SPECTRUM, SUSCEPTIBILITY,
                                              HEAT_CAPACITY, ENTROPY)})
#: names of the spectrum kinds and of the thermodynamic kinds
SPECTRUM_KINDS = tuple(k for k, v in KINDS.items() if v.is_spectrum)
THERMO_KINDS = tuple(k for k, v in KINDS.items() if not v.is_spectrum)
#: sample-level extra parameters: name -> (unit, description, dataset kind that uses it)
SAMPLE_EXTRAS = MappingProxyType({e.name: (e.unit, e.description, k.name)
                                  for k in KINDS.values() for e in k.extras})


def kind_named(name: str) -> DatasetKind:
    """The dataset kind called ``name``.

    Raises
    ------
    InputError
        If no kind has that name.
    """
    try:
        return KINDS[name]
    except (KeyError, TypeError):
        raise InputError(f"unknown dataset kind {name!r}; "
                         f"{closest_key(str(name), KINDS)}") from None


@dataclass(frozen=True)
class Dataset:
    """One measured dataset in internal units.

    Attributes
    ----------
    name : str
        Name used in parameter names (``<name>:scale``) and reports.
    kind : str
        The kind's name, one of :data:`KINDS` (its object: :attr:`spec`).
    path : pathlib.Path
    x : dict of str to ndarray
        Independent variables in internal units: ``Q_par``, ``Q_perp``, ``Q_perp2`` (Å⁻¹;
        along the chain and the two directions n₁, n₂ across it, see
        :mod:`~evidence1d.data.geometry`) and ``energy`` (meV) for a crystal spectrum;
        ``Q``, ``energy`` for a powder; ``T`` (K) otherwise.
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
    def spec(self) -> DatasetKind:
        """The kind object of this dataset (columns, units, nuisances, labels)."""
        return KINDS[self.kind]

    @property
    def n(self) -> int:
        """Number of points."""
        return len(self.y)

    @property
    def n_masked(self) -> int:
        """Number of points dropped by ``masked: drop``."""
        return int(sum(self.masked.values()))

    def ranges(self) -> dict:
        """(min, max) of each independent variable, for the check table (a second Q⊥
        component that is zero everywhere is left out)."""
        return {k: (float(np.min(v)), float(np.max(v))) for k, v in self.x.items()
                if not (k == "Q_perp2" and not np.any(v))}


#: the rules of ``masked: drop``, in the order a point is attributed to them
MASK_RULES = ("non-finite value", "non-finite error", "non-positive error")


def _declared_units(block, kind: DatasetKind):
    where = block["_where"]
    units = dict(block.get("units") or {})
    for ukey in units:
        if ukey not in kind.units:
            raise InputError(f"unknown unit key '{ukey}' for a {kind.name} dataset; "
                             f"{closest_key(ukey, kind.units)}", key=f"{where}.units.{ukey}")
        if kind.units[ukey] is not None:
            try:
                units[ukey] = normalise_unit(units[ukey], kind.units[ukey], ukey)
            except InputError as exc:
                raise exc.located(key=f"{where}.units.{ukey}") from None
        else:
            units[ukey] = str(units[ukey])
    return units


def _read_source(path, block, kind: DatasetKind):
    known = kind.known_names(block.get("columns"))
    if Path(path).suffix.lower() in NEXUS_SUFFIXES:
        from .nexus import read_nexus
        return read_nexus(path, entry=block.get("entry"))
    if block.get("entry") is not None:
        raise InputError("'entry' names a group of an HDF5/NeXus file, but the data file is "
                         f"text; remove 'entry' or use a {', '.join(NEXUS_SUFFIXES)} file",
                         key=f"{block['_where']}.entry")
    return read_table(path, known=known, allow_nonfinite=True)


def crystal_layout(table, block) -> tuple:
    """(layout, column mapping) of a crystal spectrum: Miller indices H, K, L when the
    dataset maps any of them or the file has columns named H, K and L; else the components
    q_par, q_perp (and q_perp2).  See :meth:`CrystalSpectrumKind.layout_for`."""
    return KINDS["crystal_spectrum"].layout_for(table, block)


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
        The case's sample (``geometry``, or the ``lattice`` a, b, c in Å, for wavevectors
        in r.l.u.; ``ions_per_formula_unit`` and ``formula_units_per_ion`` for
        per-formula-unit data).

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
    kind = kind_named(block["kind"])
    where = block["_where"]
    declared = _declared_units(block, kind)
    table = _read_source(path, block, kind)
    spec, columns = kind.layout_for(table, block)
    # HDF5: the signal is the measured value and its errors the error, whatever their names
    mapping = {spec.value if r == "value" else r: c for r, c in table.roles.items()}
    mapping.update(columns)
    found, unused = match_columns(table, spec, mapping, where=where)
    units = merge_header_units(table, spec, found, declared, where=where)
    kind.check_units(spec, units, where)
    for ukey, accepted in spec.units.items():
        if ukey not in units:
            raise InputError(f"missing unit '{ukey}' for a {kind.name} dataset; declare "
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
        raise InputError(f"too few points ({len(lines)}) for a {kind.name} dataset; at least "
                         f"{spec.min_points} are needed"
                         + (f" ({dropped} masked points were dropped)" if dropped else ""),
                         file=path)

    def loc(i, canon):
        return table.where(int(np.flatnonzero(keep)[i]), found[canon])

    x, y, e = kind.read(cols, units, sample, block, loc)
    return Dataset(name=name, kind=kind.name, path=path, x=x, y=np.asarray(y, float),
                   err=np.asarray(e, float), lines=lines,
                   options={k: v for k, v in block.items() if not k.startswith("_")},
                   units=units, masked=masked, unused_columns=tuple(unused),
                   columns=dict(found), raw=cols)
