"""``evidence1d init``: a starting case file written from data files.

Each data file's kind is detected from its column names (the spellings each kind accepts,
see :mod:`evidence1d.data.kinds`) and, when the names say nothing, from the units written in
its headers (a temperature column and one column in emu/mol or m³/mol is a susceptibility).
Units that the headers give are filled in; everything the files cannot tell (the sample's
ion, charge, spin spacing and lattice; each spectrum's temperature and resolution; units
without a header) is written as the placeholder ``TODO`` with a ``# TODO`` comment saying
what is needed and, for units, the range of the values.  ``evidence1d check`` refuses a
file that still holds a placeholder, naming its line and key.
"""
from __future__ import annotations

import json
import os
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError

__all__ = ["PLACEHOLDER", "DataFile", "detect", "write_case", "find_placeholders",
           "refuse_placeholders", "DATA_SUFFIXES"]

#: the value written where the user must fill something in
PLACEHOLDER = "TODO"
#: files taken from a folder given to ``init``
DATA_SUFFIXES = (".csv", ".txt", ".dat", ".tsv", ".xy", ".nxs", ".nx5", ".h5", ".hdf5")


def _unit_choices(ukey: str) -> tuple:
    """The units some dataset kind accepts for the unit key ``ukey``, in the kinds' order."""
    from .data.kinds import KINDS
    out = []
    for kind in KINDS.values():
        out += [u for u in (kind.units.get(ukey) or ()) if u not in out]
    return tuple(out)


@dataclass
class DataFile:
    """What ``init`` learned about one data file.

    Attributes
    ----------
    path : pathlib.Path
    kind : str or None
        The detected kind, None if no kind (or more than one) fits.
    candidates : list of str
        Kinds that fit (several: ambiguous).
    units : dict
        Unit key to unit read from the headers (None: unknown, a placeholder is written).
    ranges : dict
        Unit key to (min, max) of the values in that unit's columns, for the comments.
    columns : dict
        Explicit column mapping to write (kinds found from header units only).
    layout : str
        ``"hkl"`` for crystal spectra with H, K, L columns, else ``""``.
    note : str
        Why the kind is unknown, or what was skipped.
    """

    path: Path
    kind: str | None = None
    candidates: list = field(default_factory=list)
    units: dict = field(default_factory=dict)
    ranges: dict = field(default_factory=dict)
    columns: dict = field(default_factory=dict)
    layout: str = ""
    note: str = ""


def _read(path: Path):
    from .data.kinds import KINDS, NEXUS_SUFFIXES
    if path.suffix.lower() in NEXUS_SUFFIXES:
        from .data.nexus import read_nexus
        return read_nexus(path)
    from .data.table import read_table
    known = set().union(*(k.known_names() for k in KINDS.values()))
    return read_table(path, known=known, allow_nonfinite=True)


def _fit(table, kind, spec, mapping):
    """(found, header units) if ``spec`` fits the table, else None."""
    from .data.columns import match_columns, merge_header_units
    try:
        found, _ = match_columns(table, spec, mapping)
    except InputError:
        return None
    try:
        units = merge_header_units(table, spec, found, {}, where="")
    except InputError:
        units = {}
    return found, units


def _by_header_units(table):
    """Thermodynamic kind from the unit of the one value column (names unknown)."""
    from .data.columns import normalise_unit
    from .data.kinds import KINDS
    thermo = [k for k in KINDS.values() if not k.is_spectrum]
    t_names = {a for k in thermo for a in k.columns["T"]}
    t_cols = [c for c in table.columns if table.names.get(c, c).lower() in t_names]
    hits = {}
    for col, raw in table.units.items():
        if raw is None or col in t_cols:
            continue
        for kind in thermo:
            try:
                normalise_unit(raw, _unit_choices(kind.value_unit), kind.value_unit)
            except InputError:
                continue
            hits.setdefault(col, []).append(kind.name)
    if len(t_cols) != 1 or not hits:
        return None
    # the value column is the first with a unit; one later column in that unit is its error
    col = next(iter(hits))
    others = [c for c in hits if c != col and hits[c] == hits[col]]
    return col, hits[col], t_cols[0], (others[0] if len(others) == 1 else None)


def detect(path) -> DataFile:
    """Detect the kind, header units and value ranges of one data file.

    Parameters
    ----------
    path : str or pathlib.Path

    Returns
    -------
    DataFile
        ``kind`` is None when no kind or several kinds fit (``candidates``, ``note``).

    Raises
    ------
    InputError
        The file cannot be read as a table (no header, bad cells, not HDF5/NeXus...).
    """
    from .data.kinds import CRYSTAL_HKL, KINDS
    path = Path(path)
    table = _read(path)
    df = DataFile(path=path)
    roles = dict(table.roles)
    fits = {}
    for kind, obj in KINDS.items():
        spec, _ = obj.layout_for(table, {})
        mapping = {spec.value if r == "value" else r: c for r, c in roles.items()}
        got = _fit(table, kind, spec, mapping)
        if got is not None:
            fits[kind] = (spec, got)
    if not fits:
        guess = _by_header_units(table)
        if guess is not None:
            col, kinds, t_col, err_col = guess
            for kind in kinds:
                spec = KINDS[kind]
                mapping = {spec.value: col, "T": t_col}
                if err_col is not None:
                    mapping["error"] = err_col
                got = _fit(table, kind, spec, mapping)
                if got is not None:
                    fits[kind] = (spec, got)
                    df.columns = {k: v for k, v in mapping.items() if k != "T"}
    df.candidates = list(fits)
    if len(fits) != 1:
        cols = ", ".join(table.columns)
        df.note = (f"kinds {' or '.join(fits)} all fit the columns {cols}" if fits else
                   f"no kind fits the columns {cols}")
        return df
    (kind, (spec, (found, units))), = fits.items()
    df.kind = kind
    df.layout = "hkl" if spec is CRYSTAL_HKL else ""
    for ukey in spec.units:
        if spec.units[ukey] is None:          # a free label (the intensity): asked below
            continue
        cols = [c for c, uk in spec.column_units.items() if uk == ukey and c in found
                and c != "error"]
        vals = [np.asarray(table.columns[found[c]], float) for c in cols]
        vals = np.concatenate(vals) if vals else np.array([])
        vals = vals[np.isfinite(vals)]
        if vals.size:
            df.ranges[ukey] = (float(vals.min()), float(vals.max()))
        df.units[ukey] = units.get(ukey)
    if df.layout == "hkl":
        df.units["wavevector"] = "rlu"
    if KINDS[kind].is_spectrum:
        df.units["intensity"] = units.get("intensity", "arb")
    return df


# ------------------------------------------------------------------ writing
def _q(s) -> str:
    """A YAML scalar for a string (plain when safe, else a JSON-quoted string)."""
    s = str(s)
    if re.fullmatch(r"[A-Za-z_][A-Za-z0-9_./+-]*", s) and s.lower() not in (
            "true", "false", "yes", "no", "on", "off", "null", "y", "n"):
        return s
    return json.dumps(s, ensure_ascii=False)


def _name(stem: str, taken: set) -> str:
    base = re.sub(r"[^A-Za-z0-9_-]+", "_", stem).strip("_") or "data"
    name, i = base, 2
    while name in taken:
        name, i = f"{base}_{i}", i + 1
    taken.add(name)
    return name


def _expand(paths) -> list:
    out = []
    for p in map(Path, paths):
        if p.is_dir():
            out += sorted(q for q in p.iterdir() if q.is_file() and not q.name.startswith(".")
                          and q.suffix.lower() in DATA_SUFFIXES)
        elif p.is_file():
            out.append(p)
        else:
            raise InputError("data file not found; give data files or a folder holding them",
                             file=p)
    return out


def _line(text: str, comment: str = "", width: int = 40) -> str:
    return f"{text.ljust(width)} # {comment}" if comment else text


def _units_lines(df) -> list:
    lines = ["    units:"]
    for ukey, unit in df.units.items():
        if ukey == "intensity":
            lines.append(_line(f"      intensity: {_q(unit)}",
                               "check: a label of the intensity unit (any text)"))
        elif unit is not None:
            lines.append(_line(f"      {ukey}: {_q(unit)}", "from the column header"))
        else:
            rng = df.ranges.get(ukey)
            seen = f"; values {rng[0]:.4g} to {rng[1]:.4g}" if rng else ""
            lines.append(_line(f"      {ukey}: {PLACEHOLDER}",
                               f"TODO: one of {', '.join(_unit_choices(ukey))}{seen}"))
    return lines


def _models_lines() -> list:
    from .cards import bundled_cards, load_card
    lines = ["models:                                  # the families to compare; delete any "
             "you do not want"]
    rows = []
    for name, path in bundled_cards().items():
        try:
            card = load_card(path)
            rows.append((not card.one_dimensional, name,
                         f"{'1D' if card.one_dimensional else 'not 1D'}: {card.title}"))
        except InputError:
            rows.append((True, name, "bundled model"))
    return lines + [_line(f"  - {name}", what) for _, name, what in sorted(rows)]


def write_case(paths, out, *, force: bool = False):
    """Write a starting case file from data files.

    Parameters
    ----------
    paths : sequence of str or pathlib.Path
        Data files, or folders whose data files (``DATA_SUFFIXES``) are taken.
    out : str or pathlib.Path
        The case file to write; data paths in it are relative to its folder.
    force : bool
        Replace an existing file.

    Returns
    -------
    text : str
        What was written.
    messages : list of str
        What the user must fill in and check, one line each.

    Raises
    ------
    InputError
        ``out`` exists and ``force`` is false; a path that does not exist; no readable
        data file.
    """
    from .data.kinds import KINDS
    out = Path(out)
    if out.exists() and not force:
        raise InputError("the case file already exists; use --force to replace it or --out "
                         "to write another file", file=out)
    files, skipped = [], []
    for p in _expand(paths):
        try:
            files.append(detect(p))
        except InputError as exc:
            skipped.append(f"{p}: {exc.message}")
    if not files:
        raise InputError("no data file could be read"
                         + (f" ({skipped[0]})" if skipped else "")
                         + "; give delimited text or HDF5/NeXus data files")
    base = out.resolve().parent
    spectra = [f for f in files if f.kind and KINDS[f.kind].is_spectrum]
    lines = ["# Case file written by `evidence1d init`. Fill in every TODO (search for TODO),",
             "# check the lines marked 'check:', then run: evidence1d check "
             + _q(out.name), f"title: {_q(base.name or 'case')}", "sample:",
             _line("  name: sample", "check: the sample's name"),
             _line(f"  ion: {PLACEHOLDER}", "TODO: magnetic ion element, e.g. Cu"),
             _line(f"  charge: {PLACEHOLDER}", "TODO: ionic charge, e.g. 2 for Cu2+"),
             _line("  spin: 0.5", "check: spin S of the magnetic ion"),
             _line(f"  spin_spacing: {PLACEHOLDER}",
                   "TODO: spin spacing d along the chain, Å"),
             _line(f"  lattice: {{a: {PLACEHOLDER}, b: {PLACEHOLDER}, c: {PLACEHOLDER}}}",
                   "TODO: Å; add alpha, beta, gamma (degrees) if not 90"),
             _line("  chain: c", "check: chain direction: a, b, c or a vector [u, v, w]"),
             "  # g: {kind: normal, mean: 2.1, sd: 0.05}   # optional prior of the g factor",
             "datasets:"]
    taken = set()
    for df in files:
        rel = os.path.relpath(df.path.resolve(), base).replace(os.sep, "/")
        lines.append(f"  - name: {_name(df.path.stem, taken)}")
        if df.kind is None:
            lines.append(_line(f"    kind: {PLACEHOLDER}",
                               f"TODO: {df.note}; one of {', '.join(KINDS)}"))
            lines.append(f"    file: {_q(rel)}")
            continue
        lines.append(_line(f"    kind: {df.kind}", "check: detected from the column names"
                           if not df.columns else "check: detected from the header units"))
        lines.append(f"    file: {_q(rel)}")
        if df.columns:
            lines.append("    columns: {" + ", ".join(f"{k}: {_q(v)}"
                                                     for k, v in df.columns.items()) + "}")
        lines += _units_lines(df)
        if KINDS[df.kind].is_spectrum:
            lines.append(_line(f"    temperature: {PLACEHOLDER}",
                               "TODO: sample temperature in K"))
            lines.append(_line(f"    resolution: {{fwhm: {PLACEHOLDER}}}",
                               "TODO: energy-resolution FWHM c0 + c1 E + ... in meV: [c0, c1]"))
        else:
            lines.append(_line("    # per: formula_unit", "if the values are per mole of "
                               "formula unit (then set sample.ions_per_formula_unit)"))
    lines += _models_lines()
    lines += ["output: results", ""]
    text = "\n".join(lines)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(text, encoding="utf-8")
    msgs = [f"wrote {out}: {len(files)} dataset(s) "
            + ", ".join(f"{f.path.name} -> {f.kind or 'kind unknown'}" for f in files)]
    todo = len(find_placeholders(out))
    msgs.append(f"fill in the {todo} TODO placeholder(s): the sample's ion, charge, spin "
                "spacing and lattice"
                + ("; each spectrum's temperature and resolution FWHM" if spectra else "")
                + ("; units the headers do not give" if any(
                    v is None for f in files for v in f.units.values()) else "")
                + ("; the kind of files no kind fits" if any(f.kind is None for f in files)
                   else ""))
    msgs.append("check the lines marked 'check:': the detected kinds, the spin (0.5), the "
                "chain direction (c) and the list of models")
    msgs += [f"skipped {s}" for s in skipped]
    msgs.append(f"then run: evidence1d check {out}")
    return text, msgs


def find_placeholders(path) -> list:
    """(line, key) of every value still equal to :data:`PLACEHOLDER` in a case file."""
    from .schema import load_yaml
    doc = load_yaml(path)
    hits = []

    def walk(node, key):
        if isinstance(node, dict):
            for k, v in node.items():
                walk(v, f"{key}.{k}" if key else str(k))
        elif isinstance(node, list):
            for i, v in enumerate(node):
                walk(v, f"{key}[{i}]")
        elif node == PLACEHOLDER:
            hits.append(key)
    walk(doc.data, "")
    return [(doc.error("", k).line, k) for k in hits]


def refuse_placeholders(path) -> None:
    """Raise an :class:`InputError` at the first placeholder left in a case file.

    Raises
    ------
    InputError
        Naming the line and key of the first ``TODO`` and how many remain.
    """
    left = find_placeholders(path)
    if left:
        line, key = left[0]
        more = f" ({len(left) - 1} more)" if len(left) > 1 else ""
        raise InputError(f"still the placeholder {PLACEHOLDER} written by evidence1d "
                         f"init{more}; fill in every TODO", file=path, line=line, key=key)
