"""Dataset kinds: which columns and units each needs, and how it is read into internal units.

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

__all__ = ["KINDS", "CRYSTAL_HKL", "crystal_layout", "KindSpec", "Dataset", "load_dataset",
           "SPECTRUM_KINDS", "THERMO_KINDS", "MASK_RULES", "NEXUS_SUFFIXES"]

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
    optional : tuple of str
        Columns that may be absent.
    """

    columns: dict
    units: dict
    min_points: int
    description: str
    value: str = "intensity"
    column_units: dict = field(default_factory=dict)
    error_stems: tuple | None = None
    optional: tuple = ()


_ENERGY = ("energy", "e", "en", "omega", "w", "hw", "energy_transfer", "deltae", "de_transfer")
_INTENSITY = ("intensity", "i", "counts", "s", "sqw", "signal")
_TEMPERATURE = ("t", "temperature", "temp", "t_sample")
_CRYSTAL_ERROR = ("error", "di", "err", "sigma", "dintensity")

KINDS = {
    "crystal_spectrum": KindSpec(
        columns={"q_par": ("q_par", "qpar", "q_l", "ql", "l"),
                 "q_perp": ("q_perp", "qperp", "q_h", "qh", "h"),
                 "q_perp2": ("q_perp2", "qperp2"),
                 "energy": _ENERGY, "intensity": _INTENSITY,
                 "error": _CRYSTAL_ERROR},
        units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
        min_points=10, description="single-crystal neutron spectrum (cuts or maps)",
        value="intensity",
        column_units={"q_par": "wavevector", "q_perp": "wavevector", "q_perp2": "wavevector",
                      "energy": "energy", "intensity": "intensity", "error": "intensity"},
        optional=("q_perp2",)),
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
#: a crystal spectrum whose wavevectors are Miller indices H, K, L (r.l.u.)
CRYSTAL_HKL = KindSpec(
    columns={"H": ("h",), "K": ("k",), "L": ("l",), "energy": _ENERGY,
             "intensity": _INTENSITY, "error": _CRYSTAL_ERROR},
    units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
    min_points=10, description="single-crystal neutron spectrum with H, K, L",
    value="intensity",
    column_units={"H": "wavevector", "K": "wavevector", "L": "wavevector", "energy": "energy",
                  "intensity": "intensity", "error": "intensity"})
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
    known = known_names(spec, block.get("columns"))
    if spec is KINDS["crystal_spectrum"]:
        known |= known_names(CRYSTAL_HKL)
    if Path(path).suffix.lower() in NEXUS_SUFFIXES:
        from .nexus import read_nexus
        return read_nexus(path, entry=block.get("entry"))
    if block.get("entry") is not None:
        raise InputError("'entry' names a group of an HDF5/NeXus file, but the data file is "
                         f"text; remove 'entry' or use a {', '.join(NEXUS_SUFFIXES)} file",
                         key=f"{block['_where']}.entry")
    return read_table(path, known=known, allow_nonfinite=True)


def crystal_layout(table, block) -> tuple:
    """(spec, column mapping) of a crystal spectrum: Miller indices H, K, L when the
    dataset maps any of them or the file has columns named H, K and L; else the components
    q_par, q_perp (and q_perp2)."""
    mapping = dict(block.get("columns") or {})
    hkl = {k: k.upper() for k in mapping if str(k).lower() in ("h", "k", "l")}
    mapping = {hkl.get(k, k): v for k, v in mapping.items()}
    bare = {table.names.get(c, c).lower() for c in table.columns}
    comp = any(k in mapping for k in ("q_par", "q_perp", "q_perp2"))
    use_hkl = bool(hkl) or (not comp and {"h", "k", "l"} <= bare)
    return (CRYSTAL_HKL if use_hkl else KINDS["crystal_spectrum"]), mapping


def _crystal_wavevectors(cols, units, geometry, block) -> dict:
    """Q_par, Q_perp, Q_perp2 (Å⁻¹) of a crystal spectrum's points.

    Miller indices go through the reciprocal lattice (:meth:`Geometry.components`);
    ``q_par``/``q_perp`` in r.l.u. are L and H of the default geometry (2πL/c, 2πH/a, and
    ``q_perp2`` 2πK/b); in Å⁻¹ they are the components themselves (``q_perp2`` 0 if absent).
    """
    where = block["_where"]
    if "H" in cols:
        qp, q1, q2 = geometry.components(cols["H"], cols["K"], cols["L"])
        x = {"Q_par": qp, "Q_perp": q1, "Q_perp2": q2}
    elif units["wavevector"] == "rlu":
        if not geometry.is_default:
            raise InputError("q_par and q_perp in r.l.u. are L and H of a cell with the chain "
                             f"along c and right angles, but the sample has "
                             f"{geometry.describe()}; give the wavevectors as columns H, K, L "
                             "(r.l.u.) or as q_par, q_perp in 1/A",
                             key=f"{where}.units.wavevector")
        # Q along the chain (c axis) = 2π L / c; across (a axis) = 2π H / a
        x = {"Q_par": 2.0 * math.pi * cols["q_par"] / geometry.c,
             "Q_perp": 2.0 * math.pi * cols["q_perp"] / geometry.a}
        x["Q_perp2"] = (2.0 * math.pi * cols["q_perp2"] / geometry.b if "q_perp2" in cols
                        else np.zeros_like(x["Q_par"]))
    else:
        x = {"Q_par": cols["q_par"].copy(), "Q_perp": cols["q_perp"].copy(),
             "Q_perp2": (cols["q_perp2"].copy() if "q_perp2" in cols
                         else np.zeros_like(cols["q_par"]))}
    qf = (block.get("resolution") or {}).get("q_fwhm")
    if qf and units["wavevector"] == "rlu":
        want = geometry.rlu_width_factors()
        used = (2.0 * math.pi / geometry.c, 2.0 * math.pi / geometry.a)
        if not np.allclose(want, used, rtol=1e-9):
            raise InputError("resolution.q_fwhm in r.l.u. is converted with 2π/c along the "
                             "chain and 2π/a across it, but for a sample with "
                             f"{geometry.describe()} one r.l.u. is {want[0]:.4g} and "
                             f"{want[1]:.4g} 1/A; give the data in 1/A (q_par, q_perp) or "
                             "leave q_fwhm out", key=f"{where}.resolution.q_fwhm")
    return x


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
    kind = block["kind"]
    spec = KINDS[kind]
    where = block["_where"]
    declared = _declared_units(block, spec, kind)
    table = _read_source(path, block, spec)
    columns = block.get("columns") or {}
    if kind == "crystal_spectrum":
        spec, columns = crystal_layout(table, block)
    # HDF5: the signal is the measured value and its errors the error, whatever their names
    mapping = {spec.value if r == "value" else r: c for r, c in table.roles.items()}
    mapping.update(columns)
    found, unused = match_columns(table, spec, mapping, where=where)
    units = merge_header_units(table, spec, found, declared, where=where)
    if spec is CRYSTAL_HKL:
        if units.get("wavevector", "rlu") != "rlu":
            raise InputError(f"columns H, K, L are Miller indices in r.l.u., but the "
                             f"wavevector unit is {units['wavevector']}; declare rlu or leave "
                             "it out", key=f"{where}.units.wavevector")
        units["wavevector"] = "rlu"
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
            geometry = getattr(sample, "geometry", None)
            if geometry is None:
                from .geometry import make_geometry
                geometry = make_geometry(sample.lattice)
            x.update(_crystal_wavevectors(cols, units, geometry, block))
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
