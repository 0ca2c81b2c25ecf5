"""The one user-facing error type of evidence1d.

Every mistake a user can make in a case file, a data file or a model card is reported as an
:class:`InputError`: one line that names where (file, line, column or key), what is wrong and
what is expected.  The command line prints ``str(error)`` and exits with code 2; a traceback
is shown only with ``--debug``.
"""
from __future__ import annotations

import difflib
from pathlib import Path

__all__ = ["InputError", "closest_key"]


class InputError(Exception):
    """A problem with the user's input, reported in one line.

    Parameters
    ----------
    message : str
        What is wrong and what is expected, e.g. ``"unknown unit 'meV2'; expected one of
        meV, K, THz, cm-1"``.
    file : str or pathlib.Path, optional
        The file the problem is in.
    line : int, optional
        1-based line number in ``file``.
    column : str or int, optional
        Column name (data files) or 1-based column number (YAML files).
    key : str, optional
        Dotted key path in a YAML document, e.g. ``"datasets[2].units.energy"``.

    Attributes
    ----------
    file, line, column, key, message
        As given; kept so that callers and tests can inspect where the problem is.
    """

    def __init__(self, message: str, *, file: str | Path | None = None,
                 line: int | None = None, column: str | int | None = None,
                 key: str | None = None):
        self.message = message
        self.file = None if file is None else str(file)
        self.line = line
        self.column = column
        self.key = key
        super().__init__(self._format())

    def _format(self) -> str:
        where = []
        if self.file is not None:
            loc = self.file
            if self.line is not None:
                loc += f":{self.line}"
            where.append(loc)
        if self.column is not None:
            where.append(f"column {self.column!r}" if isinstance(self.column, str)
                         else f"column {self.column}")
        if self.key is not None:
            where.append(f"key '{self.key}'")
        text = " ".join(self.message.split())  # one line, always
        return (", ".join(where) + ": " + text) if where else text

    def located(self, *, file=None, line=None, column=None, key=None) -> "InputError":
        """Return a copy with missing location fields filled in."""
        return InputError(self.message,
                          file=self.file if self.file is not None else file,
                          line=self.line if self.line is not None else line,
                          column=self.column if self.column is not None else column,
                          key=self.key if self.key is not None else key)


def closest_key(word: str, valid) -> str:
    """Return a hint naming the valid key closest to ``word``.

    Parameters
    ----------
    word : str
        The unknown key the user wrote.
    valid : iterable of str
        The keys accepted at that place.

    Returns
    -------
    str
        ``"did you mean 'x'?"`` when a close match exists, else ``"valid keys: a, b, c"``.
    """
    valid = sorted(valid)
    match = difflib.get_close_matches(word, valid, n=1, cutoff=0.5)
    if match:
        return f"did you mean '{match[0]}'? (valid keys: {', '.join(valid)})"
    return f"valid keys: {', '.join(valid)}"
