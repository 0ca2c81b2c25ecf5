"""Progress output of the samplers: one line per stage on a terminal, plain lines in a log.

On a terminal (the stream is a TTY) a stage shows a tqdm bar on its own line, and the line
stays when the stage ends.  Anywhere else (standard error redirected to a file, a pipe, a
batch system's log) the stage writes plain lines instead: when it starts, at 25, 50 and
75 %, and when it ends, with the elapsed time; no carriage returns and no cursor-movement
codes, so a log reads as text.

References
----------
.. [1] C. da Costa-Luis et al., tqdm: a fast, extensible progress bar for Python and CLI,
   Zenodo (2023), doi:10.5281/zenodo.595120.
.. [2] ECMA-48, *Control Functions for Coded Character Sets*, 5th ed. (1991): the cursor
   codes a log must not contain.
"""
from __future__ import annotations

import sys
import time

__all__ = ["bar_options", "stage_bar", "PlainProgress"]


def bar_options(progress, default_label: str):
    """Label and line of a progress bar from a sampler's ``progress`` argument.

    Parameters
    ----------
    progress : bool or dict
        ``True``/``False``, or ``{"label": str, "position": int}``.
    default_label : str

    Returns
    -------
    (str, int or None)

    References
    ----------
    .. [1] tqdm documentation (``desc``, ``position``).
    """
    if isinstance(progress, dict):
        return (f"{progress.get('label', '')} {default_label}".strip(),
                progress.get("position"))
    return default_label, None


def _is_terminal(stream) -> bool:
    try:
        return bool(stream.isatty())
    except (AttributeError, ValueError, OSError):
        return False


def _number(x) -> str:
    return f"{x:.2f}" if isinstance(x, float) and not float(x).is_integer() else f"{x:g}"


class PlainProgress:
    """Progress of one stage as plain lines (for logs and pipes).

    Parameters
    ----------
    total : int or float
        Work of the stage, in ``unit``.
    label : str
    unit : str
    initial : int or float
        Work already done (a resumed stage).
    stream : file-like
        Where the lines go.

    References
    ----------
    .. [1] ECMA-48 (1991): plain lines, no control functions.
    """

    #: fractions of the total at which a line is written
    MILESTONES = (0.25, 0.5, 0.75)

    def __init__(self, total, label: str, unit: str = "it", initial=0, stream=None):
        self.total, self.label, self.unit = total, label, unit
        self.n = initial
        self.stream = stream if stream is not None else sys.stderr
        self._start = time.perf_counter()
        self._next = 0
        self._closed = False
        self._skip_passed()
        resumed = f", {_number(initial)} done before" if initial else ""
        self._write(f"started ({_number(total)} {unit}{resumed})")

    def _write(self, text: str) -> None:
        self.stream.write(f"{self.label}: {text}\n")
        self.stream.flush()

    def _skip_passed(self) -> None:
        while (self._next < len(self.MILESTONES) and self.total
               and self.n >= self.MILESTONES[self._next] * self.total):
            self._next += 1

    def update(self, n=1) -> None:
        """Advance by ``n``; write a line when a milestone is passed."""
        self.n += n
        passed = None
        while (self._next < len(self.MILESTONES) and self.total
               and self.n >= self.MILESTONES[self._next] * self.total):
            passed = self.MILESTONES[self._next]
            self._next += 1
        if passed is not None and self.n < self.total:
            self._write(f"{passed:.0%} ({_number(self.n)}/{_number(self.total)} {self.unit}, "
                        f"{time.perf_counter() - self._start:.0f} s)")

    def close(self) -> None:
        """Write the closing line (once)."""
        if self._closed:
            return
        self._closed = True
        self._write(f"done, {_number(self.n)}/{_number(self.total)} {self.unit} in "
                    f"{time.perf_counter() - self._start:.1f} s")

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()
        return False


class _Silent:
    """No progress output (``progress=False``)."""

    n = 0

    def update(self, n=1) -> None:
        self.n += n

    def close(self) -> None:
        pass


def stage_bar(total, progress, default_label: str, unit: str = "it", initial=0,
              bar_format: str | None = None, stream=None):
    """The progress display of one stage.

    Parameters
    ----------
    total : int or float
        Work of the stage.
    progress : bool or dict
        A sampler's ``progress`` argument (see :func:`bar_options`); False: silent.
    default_label : str
        Name of the stage (``evidence``, ``posterior``).
    unit : str
    initial : int or float
        Work already done.
    bar_format : str, optional
        tqdm bar format on a terminal.
    stream : file-like, optional
        Default: standard error.

    Returns
    -------
    object with ``update(n)`` and ``close()``
        A tqdm bar (terminal; its line is kept when the stage ends), a
        :class:`PlainProgress` (anything else) or a silent stand-in.

    References
    ----------
    .. [1] tqdm documentation (``position``, ``leave``, ``file``).
    """
    if not progress:
        return _Silent()
    label, position = bar_options(progress, default_label)
    stream = stream if stream is not None else sys.stderr
    if not _is_terminal(stream):
        return PlainProgress(total, label, unit, initial, stream)
    from tqdm import tqdm
    kwargs = {"bar_format": bar_format} if bar_format else {}
    return tqdm(total=total, initial=initial, desc=label, unit=unit, position=position,
                leave=True, file=stream, dynamic_ncols=True, mininterval=0.5, **kwargs)
