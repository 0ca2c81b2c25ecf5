"""The results record of a run, and its one on-disk format.

:class:`ModelResult` (one family) and :class:`RunResults` (the comparison) are immutable
records.  Their dataclass fields are the one field table: :func:`to_tree` turns a record
(and the records it holds: evidence, posterior, diagnostics, Laplace, comparison) into a
JSON tree plus a dictionary of numpy arrays, :func:`from_tree` rebuilds it, and
:func:`save_record` / :func:`load_record` write and read both in one ``.npz`` file (the
tree as a JSON string entry), atomically.  The same format holds the saved results of a
run (``saved/results.npz``) and the finished evidences kept for ``--resume``.

This module sits below both the runner (which fills the records) and the report (which
renders them): it imports only the record classes of :mod:`evidence1d.inference`.

References
----------
.. [1] numpy ``savez_compressed`` (NPZ: a zip of ``.npy`` arrays, exact float64).
.. [2] RFC 8259 (IETF, 2017): JSON; NaN and infinity are kept with Python's extension
   because only this module reads the tree back.
"""
from __future__ import annotations

import dataclasses
import io
import json
import math
import os
import tempfile
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .errors import InputError
from .inference.records import frozen_array

__all__ = ["ModelResult", "RunResults", "to_tree", "from_tree", "save_record",
           "load_record", "save_results", "load_results", "atomic_path", "atomic_write",
           "new_file_mode",
           "json_ready", "frozen_array", "RESULTS_FILE", "SAVED_FORMAT"]

#: version of the saved layout (3: one record file written from the dataclass fields)
SAVED_FORMAT = 3
#: the saved results of a run folder
RESULTS_FILE = Path("saved") / "results.npz"
_TREE = "__tree__"


@dataclass(frozen=True)
class ModelResult:
    """Everything computed for one model family.

    Attributes
    ----------
    name, title : str
        Model name in the case and the card's title.
    one_dimensional : bool
    names : list of str
        Sampled parameters.
    units : dict of str to str
    evidence : EvidenceResult
    posterior : PosteriorResult
    diagnostics : Diagnostics
    laplace : LaplaceResult or None
    savage_dickey, loo : dict or None
    run_time : float
        Seconds.
    nuisance_names : list of str
        Analytically marginalised nuisances.
    nuisance_samples : ndarray or None
        Their draws from the conditional posterior, one row per posterior sample listed in
        ``nuisance_rows``.
    nuisance_rows : ndarray of int or None
        The posterior samples (row indices) that have nuisance draws; None: every sample
        (:data:`evidence1d.runner.MARGINAL_DRAWS` limits them).
    analysis : dict
        The analyses of :mod:`evidence1d.analysis` (goodness of fit, bounds, the parameter
        table with priors, dataset constraints, figure data, ...).
    """

    name: str
    title: str
    one_dimensional: bool
    names: list
    units: dict
    evidence: object
    posterior: object
    diagnostics: object
    laplace: object = None
    savage_dickey: dict | None = None
    loo: dict | None = None
    run_time: float = 0.0
    nuisance_names: list = field(default_factory=list)
    nuisance_samples: object = None
    nuisance_rows: object = None
    analysis: dict = field(default_factory=dict)

    @property
    def full_names(self) -> list:
        """Sampled parameters followed by the analytically marginalised nuisances."""
        return list(self.names) + list(self.nuisance_names)

    @property
    def full_samples(self):
        """Posterior samples of :attr:`full_names` (marginalised nuisances drawn from their
        conditional posterior given each sample): the samples of :attr:`nuisance_rows`."""
        if not self.nuisance_names:
            return np.asarray(self.posterior.samples)
        samples = np.asarray(self.posterior.samples)
        rows = getattr(self, "nuisance_rows", None)
        if rows is not None:
            samples = samples[np.asarray(rows, dtype=int)]
        return np.hstack([samples, np.asarray(self.nuisance_samples)])


@dataclass(frozen=True)
class RunResults:
    """The results of :func:`evidence1d.runner.run`.

    Attributes
    ----------
    models : dict of str to ModelResult
    comparison : Comparison
    reliable : bool
        Whether the verdict can be trusted (evidence errors and island agreement against
        ln K, the winner's diagnostics; see
        :func:`~evidence1d.inference.compare.verdict_reliability`).
    seed : int
    settings : dict
        The sampler settings used.
    provenance : dict
    budget, sensitivity : dict or None
        The evidence budget and the prior sensitivity (:mod:`evidence1d.analysis`).
    context : dict
        What the report states besides the numbers, taken from the case when the run
        was made: ``title``, ``quick``, ``datasets`` (name, kind, points, units),
        ``cards`` (per model: assumptions, limitations, references, LaTeX symbols),
        ``figure_settings``.
    out : pathlib.Path or None
        The run folder, when the results were written or read from one.
    case_path : pathlib.Path or None
        The case file the run was made from (the copy in ``out/inputs`` once saved).
    """

    models: dict
    comparison: object
    reliable: bool
    seed: int
    settings: dict
    provenance: dict = field(default_factory=dict)
    budget: dict | None = None
    sensitivity: dict | None = None
    context: dict = field(default_factory=dict)
    out: Path | None = None
    case_path: Path | None = None


# ------------------------------------------------------------------ one format
def _record_types() -> dict:
    """Record classes by name: the ones :func:`from_tree` may rebuild."""
    from .inference.compare import Comparison, PairComparison
    from .inference.diagnostics import Diagnostics
    from .inference.evidence import EvidenceResult, IslandRun
    from .inference.laplace import LaplaceResult
    from .inference.posterior import PosteriorResult
    return {c.__name__: c for c in (ModelResult, RunResults, Comparison, PairComparison,
                                    Diagnostics, EvidenceResult, IslandRun, LaplaceResult,
                                    PosteriorResult)}


def to_tree(obj, arrays: dict):
    """A JSON-able tree of ``obj``; its numpy arrays are moved into ``arrays``.

    Parameters
    ----------
    obj : object
        A record (dataclass), dict (string keys), list, tuple, array, Path or scalar.
    arrays : dict
        Filled with ``"a<k>" -> ndarray``; the tree refers to them by key.

    Returns
    -------
    object
        Dataclasses as ``{"__type__": name, "fields": {...}}`` (every field of the
        dataclass), arrays as ``{"__array__": key}``, tuples as ``{"__tuple__": [...]}``,
        paths as ``{"__path__": str}``.

    References
    ----------
    .. [1] Python ``dataclasses.fields``: the field table of a record.
    """
    if dataclasses.is_dataclass(obj) and not isinstance(obj, type):
        return {"__type__": type(obj).__name__,
                "fields": {f.name: to_tree(getattr(obj, f.name), arrays)
                           for f in dataclasses.fields(obj)}}
    if isinstance(obj, np.ndarray):
        key = f"a{len(arrays)}"
        arrays[key] = obj
        return {"__array__": key}
    if isinstance(obj, dict):
        for k in obj:
            if not isinstance(k, str):
                raise TypeError(f"record keys must be strings; got {k!r}")
        return {k: to_tree(v, arrays) for k, v in obj.items()}
    if isinstance(obj, tuple):
        return {"__tuple__": [to_tree(v, arrays) for v in obj]}
    if isinstance(obj, list):
        return [to_tree(v, arrays) for v in obj]
    if isinstance(obj, Path):
        return {"__path__": str(obj)}
    if isinstance(obj, np.generic):
        return obj.item()
    if obj is None or isinstance(obj, (bool, int, float, str)):
        return obj
    raise TypeError(f"cannot save an object of type {type(obj).__name__} in a record")


def from_tree(tree, arrays: dict, types: dict | None = None):
    """Rebuild what :func:`to_tree` wrote (arrays read-only).

    Parameters
    ----------
    tree : object
    arrays : dict of str to ndarray
    types : dict, optional
        Record classes by name (default: :func:`_record_types`).

    Returns
    -------
    object

    Raises
    ------
    KeyError
        An unknown record type or a missing array.
    """
    types = _record_types() if types is None else types
    if isinstance(tree, list):
        return [from_tree(v, arrays, types) for v in tree]
    if not isinstance(tree, dict):
        return tree
    if "__type__" in tree and set(tree) == {"__type__", "fields"}:
        cls = types[tree["__type__"]]
        known = {f.name for f in dataclasses.fields(cls)}
        kw = {k: from_tree(v, arrays, types) for k, v in tree["fields"].items() if k in known}
        return cls(**kw)
    if set(tree) == {"__array__"}:
        return frozen_array(arrays[tree["__array__"]])
    if set(tree) == {"__tuple__"}:
        return tuple(from_tree(v, arrays, types) for v in tree["__tuple__"])
    if set(tree) == {"__path__"}:
        return Path(tree["__path__"])
    return {k: from_tree(v, arrays, types) for k, v in tree.items()}


def new_file_mode() -> int:
    """Permission bits of a new file under the process umask (0o644 under umask 022).

    ``tempfile.mkstemp`` creates files readable by the owner only (0o600); the files of a
    run get the mode an ordinary ``open`` would give them.

    References
    ----------
    .. [1] POSIX ``umask()`` and ``open()`` (IEEE Std 1003.1): mode 0o666 & ~umask.
    """
    try:                                       # Linux: read without changing the umask
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return 0o666 & ~int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o666 & ~mask


@contextmanager
def atomic_path(path, suffix: str = ".tmp"):
    """A temporary file beside ``path`` that replaces it when the block ends without error.

    Yields the temporary path (mode of an ordinary new file, see :func:`new_file_mode`);
    on an error it is deleted and ``path`` is left as it was.  A killed writer leaves
    ``.<name>.<random><suffix>``.

    References
    ----------
    .. [1] POSIX ``rename()`` (IEEE Std 1003.1): the replacement is atomic on one file
       system.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=suffix)
    os.close(fd)
    try:
        os.chmod(tmp, new_file_mode())
        yield Path(tmp)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def atomic_write(path, data) -> Path:
    """Write text or bytes to ``path`` atomically (:func:`atomic_path`).

    Parameters
    ----------
    path : str or pathlib.Path
    data : str or bytes

    Returns
    -------
    pathlib.Path

    References
    ----------
    .. [1] POSIX ``rename()`` (IEEE Std 1003.1).
    """
    with atomic_path(path) as tmp:
        tmp.write_bytes(data.encode("utf-8") if isinstance(data, str) else data)
    return Path(path)


def save_record(path, obj, meta: dict | None = None) -> Path:
    """Write a record (anything :func:`to_tree` takes) to one ``.npz`` file, atomically.

    Parameters
    ----------
    path : str or pathlib.Path
    obj : object
    meta : dict, optional
        Plain JSON kept beside the tree (for example the settings a saved evidence was
        made with).

    Returns
    -------
    pathlib.Path

    References
    ----------
    .. [1] numpy ``savez_compressed``.
    """
    arrays = {}
    tree = {"format": SAVED_FORMAT, "meta": meta or {}, "record": to_tree(obj, arrays)}
    buf = io.BytesIO()
    np.savez_compressed(buf, **{_TREE: np.array(json.dumps(tree, allow_nan=True))},
                        **{k: np.asarray(v) for k, v in arrays.items()})
    return atomic_write(path, buf.getvalue())


def load_record(path):
    """Read a file of :func:`save_record`.

    Returns
    -------
    (object, dict)
        The record and its ``meta``.

    Raises
    ------
    InputError
        Missing or damaged file, or a file of another format version.
    """
    path = Path(path)
    if not path.is_file():
        raise InputError("no such file", file=path)
    try:
        with np.load(path, allow_pickle=False) as z:
            arrays = {k: z[k] for k in z.files}
        tree = json.loads(str(arrays.pop(_TREE)))
    except (OSError, ValueError, KeyError) as exc:
        raise InputError(f"damaged results file ({exc.__class__.__name__}); run the case "
                         "again", file=path) from None
    if tree.get("format") != SAVED_FORMAT:
        raise InputError(f"saved results of format {tree.get('format')!r}; this version "
                         f"reads format {SAVED_FORMAT}; run the case again", file=path)
    try:
        return from_tree(tree["record"], arrays), tree.get("meta", {})
    except (KeyError, TypeError) as exc:
        raise InputError(f"damaged results file ({exc}); run the case again",
                         file=path) from None


def save_results(results: RunResults, folder=None) -> Path:
    """Write ``saved/results.npz`` of a run folder (``results.out`` by default).

    ``out`` is not stored (it is the folder the file is read from); ``case_path`` is
    stored relative to the folder when it lies inside it.

    References
    ----------
    .. [1] numpy ``savez_compressed``.
    """
    folder = Path(folder if folder is not None else results.out)
    case_path = results.case_path
    if case_path is not None:
        try:
            case_path = Path(case_path).resolve().relative_to(folder.resolve())
        except ValueError:
            pass
    rec = dataclasses.replace(results, out=None, case_path=case_path)
    return save_record(folder / RESULTS_FILE, rec)


def load_results(folder) -> RunResults:
    """Read the results of a run folder written by :func:`save_results`.

    Raises
    ------
    InputError
        Not a run folder, or saved by another version.
    """
    folder = Path(folder)
    path = folder / RESULTS_FILE
    if not path.is_file():
        raise InputError(f"{folder} holds no saved results ({RESULTS_FILE} is missing); "
                         "give the output folder of a finished 'evidence1d run'", file=path)
    rec, _ = load_record(path)
    cp = rec.case_path
    if cp is not None and not Path(cp).is_absolute():
        cp = folder / cp
    return dataclasses.replace(rec, out=folder, case_path=cp)


def json_ready(obj):
    """A copy with numpy types as Python types and non-finite numbers as ``None``.

    Parameters
    ----------
    obj : object
        Nested dicts, lists, tuples, numpy scalars and arrays.

    Returns
    -------
    object
        Valid JSON content (RFC 8259 has no infinity or NaN).

    References
    ----------
    .. [1] RFC 8259 (IETF, 2017), §6.
    """
    if isinstance(obj, dict):
        return {str(k): json_ready(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [json_ready(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return json_ready(obj.tolist())
    if isinstance(obj, (bool, np.bool_)):
        return bool(obj)
    if isinstance(obj, (int, np.integer)):
        return int(obj)
    if isinstance(obj, (float, np.floating)):
        return float(obj) if math.isfinite(obj) else None
    return obj
