"""Plain delimited text tables: a header line naming the columns, ``#`` comments.

The header is the first line that is not a comment, unless that line holds numbers only: then
the last comment line before the data whose fields are known column names is the header
(exports often write ``# T chi err``).  A column name may carry its unit in brackets or
parentheses (``T(K)``, ``chi [emu/mol]``, ``E (meV)``); the unit is kept apart from the name.
The delimiter (comma, semicolon, tab or white space) is detected from the header and from the
first data row.  Every cell is checked; a problem is reported with the file, the line and the
column name.
"""
from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["Table", "read_table", "parse_column_name", "split_header"]


@dataclass(frozen=True)
class Table:
    """Columns of a table read from a file.

    Attributes
    ----------
    path : pathlib.Path
    columns : dict of str to ndarray
        Column name as written in the header (stripped, unit included) to float values.
    lines : ndarray of int
        The 1-based file line of each row (text files), or the flat index of each point in
        the signal array (HDF5 files); for error messages.
    names : dict of str to str
        Column to its bare name (the unit in brackets removed).
    units : dict of str to str or None
        Column to the unit written in its header (None if none).
    header_line : int or None
        Line of the header (text files).
    keys : dict of str to str
        HDF5 files: column to the HDF5 path of its array.
    shape : tuple of int or None
        HDF5 files: shape of the signal array (to name a point by its index).
    roles : dict of str to str
        HDF5 files: the columns that are the signal (``value``) and its errors (``error``).
    """

    path: Path
    columns: dict
    lines: np.ndarray
    names: dict = field(default_factory=dict)
    units: dict = field(default_factory=dict)
    header_line: int | None = None
    keys: dict = field(default_factory=dict)
    shape: tuple | None = None
    roles: dict = field(default_factory=dict)

    def __len__(self) -> int:
        return len(self.lines)

    def where(self, row=None, column=None) -> dict:
        """Keyword arguments of :class:`InputError` that locate a row and column.

        Text files give ``file:line`` and the column; HDF5 files give the file and the HDF5
        path of the array with the point's index.
        """
        if self.keys:
            key = self.keys.get(column, self.keys.get(None))
            if key is not None and row is not None and self.shape is not None:
                idx = np.unravel_index(int(self.lines[row]), self.shape)
                key = f"{key}[{', '.join(str(int(i)) for i in idx)}]"
            return {"file": self.path, "column": column, "key": key}
        line = self.header_line if row is None else int(self.lines[row])
        return {"file": self.path, "line": line, "column": column}


_UNIT_RE = re.compile(r"^(?P<name>.*?)\s*(?:\[(?P<u1>[^\[\]]*)\]|\((?P<u2>.*)\))\s*$")
#: bracket contents that are a function's arguments, not a unit: chi(T), S(Q,E), I(Q,w)
_ARGUMENTS = {"t", "q", "|q|", "e", "w", "ω", "omega", "q,e", "q,w", "q,ω", "q,omega"}


def parse_column_name(text: str):
    """Split a header cell into its bare name and the unit in brackets.

    Parameters
    ----------
    text : str
        A header cell, e.g. ``"T(K)"``, ``"chi [emu/mol]"``, ``"E (meV)"``, ``"chi(T)"``.

    Returns
    -------
    name : str
        The name without the unit (``"T"``, ``"chi"``, ``"E"``, ``"chi"``).
    unit : str or None
        The unit written in brackets (``"K"``, ``"emu/mol"``, ``"meV"``), or None when there
        is none or the brackets hold a function's arguments (``chi(T)``, ``S(Q,E)``).
    """
    text = text.strip()
    m = _UNIT_RE.match(text)
    if not m or not m.group("name").strip():
        return text, None
    unit = (m.group("u1") if m.group("u1") is not None else m.group("u2")).strip()
    name = m.group("name").strip()
    if unit.replace(" ", "").lower() in _ARGUMENTS:
        return name, None
    return name, (unit or None)


def _delimiter(text: str):
    for d in (",", ";", "\t"):
        if d in text:
            return d
    return None


def split_header(text: str, delim=None, attach_units: bool = True) -> list:
    """Split a header line into column names.

    With white space as the delimiter a bracketed unit stays with its name (``E (meV)``,
    ``C [J/(mol K)]``; ``attach_units=False`` keeps a cell that starts with a bracket on its
    own, for a row of units); surrounding quotes are removed.
    """
    if delim is not None:
        parts = [p.strip() for p in text.split(delim)]
    else:
        parts = []
        for tok in text.split():
            open_ = sum(parts[-1].count(c) for c in "([") - sum(parts[-1].count(c)
                                                                 for c in ")]") if parts else 0
            if parts and (open_ > 0 or (attach_units and tok[0] in "([")):
                parts[-1] += " " + tok
            else:
                parts.append(tok)
    return [p.strip().strip('"').strip("'").strip() for p in parts]


def _split(line: str, delim):
    parts = line.split(delim) if delim is not None else line.split()
    return [p.strip() for p in parts]


def _is_number(cell: str) -> bool:
    try:
        float(cell)
    except ValueError:
        return False
    return True


def _find_header(raw, known):
    """(line number, text) of the header, and the delimiter of the data rows."""
    first = None
    for n, text in enumerate(raw, start=1):
        body = text.split("#", 1)[0].strip()
        if body:
            first = (n, body)
            break
    if first is None:
        return None, None, None
    n0, body = first
    cells = _split(body, _delimiter(body))
    if not all(_is_number(c) for c in cells):
        return n0, body, _delimiter(body)          # an ordinary header line
    # numbers only: the header may be the last matching comment line above the data
    data_delim = _delimiter(body)
    for n in range(n0 - 1, 0, -1):
        text = raw[n - 1].strip()
        if not text.startswith("#"):
            continue
        content = text.lstrip("#").strip()
        if not content:
            continue
        for delim in dict.fromkeys((data_delim, _delimiter(content))):
            fields = split_header(content, delim)
            if len(fields) != len(cells) or any(_is_number(f) for f in fields):
                continue
            bare = [parse_column_name(f)[0].lower() for f in fields]
            hits = sum(b in known for b in bare) if known is not None else len(bare)
            if hits >= min(2, len(bare)):
                return n, content, data_delim
    return None, None, None


def _units_row(raw, header_line, header, known, delim):
    """(line, cells) of a row of units right under the header (``K  emu/mol  emu/mol``,
    commented or not), or None: as many cells as columns, none a number or a column name."""
    for n in range(header_line + 1, len(raw) + 1):
        text = raw[n - 1].strip()
        if not text:
            continue
        content = text.lstrip("#").strip()
        if not content:
            continue
        cells = split_header(content, delim, attach_units=False)
        if (len(cells) != len(header) or any(_is_number(c) for c in cells)
                or any(parse_column_name(c)[0].lower() in known for c in cells)):
            return None
        return n, cells
    return None


def read_table(path, *, known=None, allow_nonfinite: bool = False) -> Table:
    """Read a delimited text table.

    Parameters
    ----------
    path : str or pathlib.Path
        Text file: optional ``#`` comment lines, a header line naming the columns, then one
        row per line. Comma, semicolon, tab or white space separate the cells.  If the first
        line that is not a comment holds numbers only, the last comment line above it whose
        fields are column names (at least two of them in ``known``) is the header.  A row of
        units right under the header (``K  emu/mol  emu/mol``) gives the units of columns
        whose names carry none.
    known : set of str, optional
        Lower-case column names recognised in a commented header (any names if omitted).
    allow_nonfinite : bool
        Accept NaN and infinite cells, and read empty cells as NaN (the caller decides what
        they mean); by default they are an error.

    Returns
    -------
    Table

    Raises
    ------
    InputError
        Missing file, no header, duplicated column name, a row with the wrong number of
        cells, a non-numeric cell, a NaN or infinite value (unless allowed), or no data rows.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("data file not found; check the path (relative paths are resolved "
                         "against the case file's folder)", file=path)
    try:
        raw = path.read_text(encoding="utf-8-sig").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the data file ({exc.__class__.__name__}); expected "
                         "UTF-8 text", file=path) from None
    header_line, header_text, delim = _find_header(raw, known)
    if header_line is None:
        raise InputError("no header line; expected a line naming the columns, e.g. "
                         "'T, chi, error' (it may start with '#')", file=path)
    header = split_header(header_text, _delimiter(header_text))
    if len(set(header)) != len(header):
        dup = sorted({h for h in header if header.count(h) > 1})
        raise InputError(f"duplicated column name(s) {', '.join(dup)} in the header; "
                         "each column needs its own name", file=path, line=header_line)
    if any(not h for h in header):
        raise InputError("empty column name in the header", file=path, line=header_line)
    names, units = {}, {}
    for h in header:
        names[h], units[h] = parse_column_name(h)
    units_line = None if known is None else _units_row(raw, header_line, header, known, delim)
    if units_line is not None:
        n_u, cells = units_line
        for h, cell in zip(header, cells):
            cell = cell.strip().strip("[]()").strip()
            if units[h] is None and cell not in ("", "-", "1"):
                units[h] = cell
    rows, lines = [], []
    for n, text in enumerate(raw, start=1):
        body = text.split("#", 1)[0].strip()
        if n <= header_line or not body or (units_line is not None and n == units_line[0]):
            continue
        cells = _split(body, delim)
        if len(cells) != len(header):
            raise InputError(f"row has {len(cells)} cells but the header (line {header_line}) "
                             f"names {len(header)} columns", file=path, line=n)
        values = []
        for name, cell in zip(header, cells):
            try:
                x = float(cell) if (cell or not allow_nonfinite) else math.nan  # empty: NaN
            except ValueError:
                hint = ("; decimal commas are not read: use a point" if "," in cell
                        else "")
                raise InputError(f"non-numeric value {cell!r}; expected a number{hint}",
                                 file=path, line=n, column=name) from None
            if not allow_nonfinite and not math.isfinite(x):
                raise InputError(f"value {cell!r} is not finite (NaN or inf); remove the row "
                                 "or give a number", file=path, line=n, column=name)
            values.append(x)
        rows.append(values)
        lines.append(n)
    if not rows:
        raise InputError("no data rows after the header", file=path)
    arr = np.asarray(rows, dtype=float)
    cols = {name: arr[:, i].copy() for i, name in enumerate(header)}
    return Table(path=path, columns=cols, lines=np.asarray(lines), names=names, units=units,
                 header_line=header_line)
