"""Which column of a data file is which, and the units written in the column headers.

A dataset kind names its columns (``T``, ``chi``, ``error``, ...) and accepts common header
spellings of each (case-insensitive).  Errors are also found under ``d<name>``, ``<name>_err``,
``<name>err``, ``<name>_error``, ``sigma_<name>``, ``err``, ``error``, ``sigma``,
``uncertainty`` and ``std``, for every spelling ``<name>`` of the measured value.  A dataset
block may map columns explicitly (``columns: {chi: M/H}``); two headers that both fit one
column are an error that asks for such a mapping.  Columns that are present but not used are
listed (``evidence1d check`` prints them).

A unit in a header (``T (K)``, ``chi [emu/mol]``) counts as declared: it may stand in for the
case file's ``units`` entry, and it must agree with it when both are given.
"""
from __future__ import annotations

import re

from .. import units as U
from ..errors import InputError, closest_key

__all__ = ["error_aliases", "known_names", "match_columns", "merge_header_units",
           "normalise_unit"]

_GENERIC_ERRORS = ("error", "err", "sigma", "uncertainty", "std", "errors")


def error_aliases(value_aliases) -> tuple:
    """Header spellings of the error column, given the spellings of the measured value."""
    out = list(_GENERIC_ERRORS)
    for v in value_aliases:
        out += [f"d{v}", f"{v}_err", f"{v}err", f"{v}_error", f"sigma_{v}", f"err_{v}"]
    return tuple(dict.fromkeys(out))


def _aliases(spec) -> dict:
    out = dict(spec.columns)
    out["error"] = tuple(dict.fromkeys(spec.columns["error"]
                                       + error_aliases(spec.error_stems
                                                       or spec.columns[spec.value])))
    return out


def known_names(spec, overrides=None) -> set:
    """Lower-case column names a dataset of this kind recognises (for commented headers)."""
    names = {a for aliases in _aliases(spec).values() for a in aliases}
    names |= {str(v).lower() for v in (overrides or {}).values()}
    return names


def match_columns(table, spec, overrides=None, *, where=""):
    """Find each column of a kind in a table.

    Parameters
    ----------
    table : Table
    spec : KindSpec
        Its ``optional`` columns may be absent.
    overrides : dict, optional
        The dataset block's ``columns`` mapping: column of the kind to header name.
    where : str
        Dotted key of the dataset block (for messages about ``columns``).

    Returns
    -------
    found : dict of str to str
        Column of the kind to the table column (header as written).
    unused : list of str
        Table columns that no column of the kind uses.

    Raises
    ------
    InputError
        Unknown column in ``columns``, a mapped header that is not in the file, a missing
        column, or two headers that both fit one column.
    """
    aliases = _aliases(spec)
    by_bare, by_full = {}, {}
    for col in table.columns:
        by_bare.setdefault(table.names.get(col, col).lower(), []).append(col)
        by_full[col.lower()] = col
    found = {}
    for canon, header in (overrides or {}).items():
        if canon not in aliases:
            raise InputError(f"unknown column '{canon}' for this kind; "
                             f"{closest_key(str(canon), aliases)}", key=f"{where}.columns.{canon}")
        h = str(header).strip().lower()
        hit = by_full.get(h) or (by_bare.get(h) or [None])[0]
        if hit is None:
            raise InputError(f"columns.{canon} names '{header}', which is not a column of the "
                             f"file; the header has {', '.join(table.columns)}",
                             **{**table.where(), "key": f"{where}.columns.{canon}"})
        found[canon] = hit
    for canon, names in aliases.items():
        if canon in found:
            continue
        hits = list(dict.fromkeys(c for a in names for c in by_bare.get(a, [])
                                  if c not in found.values()))
        if not hits and canon in spec.optional:
            continue
        if not hits:
            raise InputError(f"missing column '{canon}' (accepted headers: "
                             f"{', '.join(names[:8])}{', ...' if len(names) > 8 else ''}); "
                             f"header has {', '.join(table.columns)}; or map it with "
                             f"columns: {{{canon}: <header>}}", **table.where())
        if len(hits) > 1:
            raise InputError(f"columns {', '.join(repr(h) for h in hits)} could all be "
                             f"'{canon}'; say which with columns: {{{canon}: <header>}} in the "
                             "dataset block", **table.where())
        found[canon] = hits[0]
    unused = [c for c in table.columns if c not in found.values()]
    return found, unused


def _compact(unit: str) -> str:
    u = unit.strip().lower()
    for a, b in (("⁻¹", "-1"), ("⁻", "-"), ("¹", "1"), ("³", "3"), ("å", "a"), ("µ", "u"),
                 ("μ", "u"), ("−", "-")):
        u = u.replace(a, b)
    return re.sub(r"[\s·*^()_]", "", u)


_SPELLINGS = {
    "mev": "meV", "uev": "ueV", "k": "K", "thz": "THz", "cm-1": "cm-1", "1/cm": "cm-1",
    "mk": "mK",
    "emu/mol": "emu/mol", "emu/mol/oe": "emu/mol", "emu/moloe": "emu/mol",
    "emumol-1": "emu/mol", "emumol-1oe-1": "emu/mol", "cm3/mol": "emu/mol",
    "cm3mol-1": "emu/mol", "m3/mol": "m3/mol", "m3mol-1": "m3/mol",
    "1/a": "1/A", "a-1": "1/A", "rlu": "rlu", "r.l.u.": "rlu", "r.l.u": "rlu",
}
for _p, _c in (("j", "J/mol/K"), ("mj", "mJ/mol/K")):
    for _form in ("{}/mol/k", "{}/molk", "{}/kmol", "{}/k/mol", "{}mol-1k-1", "{}k-1mol-1",
                  "{}/mol-k", "{}/mol.k"):
        _SPELLINGS[_form.format(_p)] = _c


def normalise_unit(unit: str, table, what: str) -> str:
    """Canonical spelling of a unit, accepting the spellings of exported headers.

    ``emu/(mol Oe)``, ``cm^3/mol``, ``J/(mol·K)``, ``J mol^-1 K^-1``, ``Å^-1``, ``r.l.u.``
    and the like are read as the units of :mod:`evidence1d.units` (emu/(mol Oe) is the
    Gaussian-cgs molar susceptibility, numerically emu/mol).

    Raises
    ------
    InputError
        If the unit is not known for this quantity.
    """
    if isinstance(unit, str):
        hit = _SPELLINGS.get(_compact(unit))
        if hit is not None and hit in table:
            return hit
    return U.canonical_unit(unit, table, what)


def merge_header_units(table, spec, found, declared: dict, *, where: str) -> dict:
    """Units of a dataset from the case file and from the column headers.

    Parameters
    ----------
    table : Table
    spec : KindSpec
    found : dict
        From :func:`match_columns`.
    declared : dict
        Unit key to canonical unit, as declared in the case file (may lack keys).
    where : str
        Dotted key of the dataset block.

    Returns
    -------
    dict
        Unit key to canonical unit: the case file's declarations completed by the headers.
        For a free label (``intensity``) the case file's label wins.

    Raises
    ------
    InputError
        An unknown unit in a header, two headers that disagree (e.g. ``q_par (rlu)`` and
        ``q_perp (1/A)``, or value and error in different units), or a header that disagrees
        with the case file.
    """
    from_header = {}
    for canon, col in found.items():
        raw = table.units.get(col)
        ukey = spec.column_units.get(canon)
        if raw is None or ukey is None:
            continue
        accepted = spec.units[ukey]
        if accepted is None:
            unit = raw
        else:
            try:
                unit = normalise_unit(raw, accepted, ukey)
            except InputError as exc:
                raise InputError(exc.message + " (unit written in the header)",
                                 **table.where(column=col)) from None
        if ukey in from_header and from_header[ukey][0] != unit:
            other = from_header[ukey][1]
            raise InputError(f"the header gives '{other}' in {from_header[ukey][0]} but "
                             f"'{col}' in {unit}; columns of one {ukey} unit must agree",
                             **table.where(column=col))
        from_header.setdefault(ukey, (unit, col))
    units = dict(declared)
    for ukey, (unit, col) in from_header.items():
        if ukey not in units:
            units[ukey] = unit
        elif spec.units[ukey] is not None and units[ukey] != unit:
            raise InputError(f"unit clash: the header says {unit} but the case file declares "
                             f"{ukey}: {units[ukey]}; make them agree or remove one",
                             **{**table.where(column=col), "key": f"{where}.units.{ukey}"})
    return units
