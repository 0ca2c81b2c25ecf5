"""Plain delimited text tables: a header line naming the columns, ``#`` comments.

The delimiter (comma, tab or white space) is detected from the header line.  Every cell is
checked; a problem is reported with the file, the line and the column name.
"""
from __future__ import annotations

import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["Table", "read_table"]


@dataclass(frozen=True)
class Table:
    """Columns of a text table.

    Attributes
    ----------
    path : pathlib.Path
    columns : dict of str to ndarray
        Column name (as written in the header, stripped) to float values.
    lines : ndarray of int
        The 1-based file line of each row (for error messages).
    """

    path: Path
    columns: dict
    lines: np.ndarray

    def __len__(self) -> int:
        return len(self.lines)


def _split(line: str, delim):
    parts = line.split(delim) if delim is not None else line.split()
    return [p.strip() for p in parts]


def read_table(path) -> Table:
    """Read a delimited text table.

    Parameters
    ----------
    path : str or pathlib.Path
        Text file: optional ``#`` comment lines, a header line naming the columns, then one
        row per line. Comma, tab or white space separate the cells (detected from the
        header).

    Returns
    -------
    Table

    Raises
    ------
    InputError
        Missing file, no header, duplicated column name, a row with the wrong number of
        cells, a non-numeric cell, a NaN or infinite value, or no data rows.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("data file not found; check the path (relative paths are resolved "
                         "against the case file's folder)", file=path)
    try:
        raw = path.read_text(encoding="utf-8").splitlines()
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read the data file ({exc.__class__.__name__}); expected "
                         "UTF-8 text", file=path) from None
    header, delim, rows, lines = None, None, [], []
    for n, text in enumerate(raw, start=1):
        body = text.split("#", 1)[0].strip()
        if not body:
            continue
        if header is None:
            delim = "," if "," in body else ("\t" if "\t" in body else None)
            header = _split(body, delim)
            if len(set(header)) != len(header):
                dup = sorted({h for h in header if header.count(h) > 1})
                raise InputError(f"duplicated column name(s) {', '.join(dup)} in the header; "
                                 "each column needs its own name", file=path, line=n)
            if any(not h for h in header):
                raise InputError("empty column name in the header", file=path, line=n)
            header_line = n
            continue
        cells = _split(body, delim)
        if len(cells) != len(header):
            raise InputError(f"row has {len(cells)} cells but the header (line {header_line}) "
                             f"names {len(header)} columns", file=path, line=n)
        values = []
        for name, cell in zip(header, cells):
            try:
                x = float(cell)
            except ValueError:
                raise InputError(f"non-numeric value {cell!r}; expected a number",
                                 file=path, line=n, column=name) from None
            if not math.isfinite(x):
                raise InputError(f"value {cell!r} is not finite (NaN or inf); remove the row "
                                 "or give a number", file=path, line=n, column=name)
            values.append(x)
        rows.append(values)
        lines.append(n)
    if header is None:
        raise InputError("no header line; expected a line naming the columns, e.g. "
                         "'T, chi, error'", file=path)
    if not rows:
        raise InputError("no data rows after the header", file=path)
    arr = np.asarray(rows, dtype=float)
    cols = {name: arr[:, i].copy() for i, name in enumerate(header)}
    return Table(path=path, columns=cols, lines=np.asarray(lines))
