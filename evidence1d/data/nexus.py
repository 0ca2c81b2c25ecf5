"""HDF5/NeXus data files (``.nxs``, ``.nx5``, ``.h5``, ``.hdf5``) read as tables of points.

An NXdata group holds a signal array and its axes (NeXus conventions):

- the group attribute ``signal`` names the signal field (older files: the field carrying the
  attribute ``signal = 1``, whose ``axes`` attribute lists the axes as ``"L:E"``);
- the group attribute ``axes`` names one axis field per dimension of the signal (``"."`` for
  none); an ``<axis>_indices`` attribute says which dimension(s) an axis spans;
- the uncertainties of the signal are the field ``errors`` or ``<signal>_errors``;
- every field may carry a ``units`` attribute (read as a unit written in a column header).

Each point of the signal becomes a row: the axes are broadcast over the signal's shape (bin
edges, one longer than their dimension, are replaced by bin centres), a field of the
signal's own shape is flattened, a scalar field is a constant column (e.g. a fixed ``H`` of a
cut).  The signal is the kind's measured value and ``errors`` its error, whatever their
names; other columns are matched by name as in text files.

The case file's dataset ``entry`` names the group to read: an NXentry (its ``default``
attribute, or its only NXdata, is used) or an NXdata group.  Without it the file's
``default`` attribute, the only NXentry or the only NXdata group is used.

References
----------
NeXus International Advisory Committee, NeXus Manual, base class NXdata (signal, axes,
AXISNAME_indices, FIELDNAME_errors, units) and the ``default`` attribute chain;
Könnecke et al., J. Appl. Cryst. 48, 301 (2015).
"""
from __future__ import annotations

from pathlib import Path

import numpy as np

from ..errors import InputError
from .table import Table

__all__ = ["read_nexus", "find_nxdata"]


def _text(v):
    """An HDF5 attribute as a str (bytes, numpy scalars and one-element arrays included)."""
    if isinstance(v, np.ndarray):
        v = v.ravel()[0] if v.size == 1 else v
    if isinstance(v, bytes):
        return v.decode("utf-8", "replace")
    if isinstance(v, np.generic):
        v = v.item()
        return v.decode("utf-8", "replace") if isinstance(v, bytes) else str(v)
    return v if isinstance(v, str) else str(v)


def _text_list(v) -> list:
    if isinstance(v, np.ndarray) and v.size > 1:
        return [_text(x) for x in v.ravel()]
    s = _text(v)
    for sep in (":", ","):
        if sep in s:
            return [p.strip() for p in s.split(sep)]
    return [s.strip()]


def _nx_class(obj) -> str:
    return _text(obj.attrs.get("NX_class", "")) if "NX_class" in obj.attrs else ""


def _is_nxdata(obj) -> bool:
    import h5py
    return isinstance(obj, h5py.Group) and (_nx_class(obj) == "NXdata" or "signal" in obj.attrs
                                            or any("signal" in d.attrs for d in obj.values()
                                                   if isinstance(d, h5py.Dataset)))


def _groups(h5, predicate) -> list:
    import h5py
    out = []
    h5.visititems(lambda name, obj: out.append(obj) if isinstance(obj, h5py.Group)
                  and predicate(obj) else None)
    return out


def _in_entry(entry, path):
    """The NXdata group of an NXentry: its ``default``, else its only NXdata."""
    if "default" in entry.attrs:
        name = _text(entry.attrs["default"])
        if name in entry and _is_nxdata(entry[name]):
            return entry[name]
        raise InputError(f"the 'default' attribute names '{name}', which is not an NXdata "
                         "group of this entry", file=path, key=entry.name)
    found = [g for g in entry.values() if _is_nxdata(g)] or _groups(entry, _is_nxdata)
    if len(found) == 1:
        return found[0]
    if not found:
        raise InputError("no NXdata group (a group with a 'signal' attribute) in this entry",
                         file=path, key=entry.name)
    raise InputError(f"several NXdata groups ({', '.join(g.name for g in found)}); name one "
                     "with 'entry:' in the dataset block", file=path, key=entry.name)


def find_nxdata(h5, path, entry=None):
    """The NXdata group to read.

    Parameters
    ----------
    h5 : h5py.File
    path : pathlib.Path
        For messages.
    entry : str, optional
        Path of an NXentry or NXdata group inside the file.

    Returns
    -------
    h5py.Group

    Raises
    ------
    InputError
        The named group is missing or holds no NXdata; no NXdata group at all; several and
        none named.
    """
    import h5py
    if entry is not None:
        key = "/" + entry.strip("/")
        if key not in h5 or not isinstance(h5[key], h5py.Group):
            groups = [g.name for g in _groups(h5, lambda g: _nx_class(g) in ("NXentry",
                                                                             "NXdata"))]
            raise InputError(f"no group '{key}' in the file; groups: "
                             f"{', '.join(groups) or '(none)'}", file=path, key=key)
        g = h5[key]
        return g if _is_nxdata(g) else _in_entry(g, path)
    if "default" in h5.attrs:
        name = _text(h5.attrs["default"])
        if name not in h5:
            raise InputError(f"the file's 'default' attribute names '{name}', which is not "
                             "in the file", file=path, key="/")
        g = h5[name]
        return g if _is_nxdata(g) else _in_entry(g, path)
    entries = [g for g in h5.values() if _nx_class(g) == "NXentry"]
    if len(entries) == 1:
        return _in_entry(entries[0], path)
    found = _groups(h5, _is_nxdata)
    if len(found) == 1:
        return found[0]
    if not found:
        raise InputError("no NXdata group (a group with a 'signal' attribute) in the file",
                         file=path, key="/")
    raise InputError(f"several NXdata groups ({', '.join(g.name for g in found)}); name one "
                     "with 'entry:' in the dataset block", file=path, key="/")


def _numeric(ds, path):
    try:
        arr = np.asarray(ds[()], dtype=float)
    except (TypeError, ValueError):
        return None
    if np.iscomplexobj(arr):
        raise InputError("complex values; expected real numbers", file=path, key=ds.name)
    return arr


def _signal_and_axes(group, path):
    import h5py
    fields = {k: v for k, v in group.items() if isinstance(v, h5py.Dataset)}
    axes = None
    if "signal" in group.attrs:
        name = _text(group.attrs["signal"])
        if "axes" in group.attrs:
            axes = _text_list(group.attrs["axes"])
    else:
        named = [k for k, v in fields.items() if "signal" in v.attrs
                 and _text(v.attrs["signal"]).strip() in ("1", "True")]
        if len(named) != 1:
            raise InputError("NXdata group has no 'signal' attribute naming its signal field",
                             file=path, key=group.name)
        name = named[0]
        if "axes" in fields[name].attrs:
            axes = _text_list(fields[name].attrs["axes"])
    if name not in fields:
        raise InputError(f"the 'signal' attribute names '{name}', which is not a field of "
                         "the group", file=path, key=group.name)
    return name, axes or [], fields


def read_nexus(path, *, entry=None) -> Table:
    """Read the NXdata group of an HDF5/NeXus file as a table of points.

    Parameters
    ----------
    path : str or pathlib.Path
    entry : str, optional
        Path of the NXentry or NXdata group to read.

    Returns
    -------
    Table
        One row per point of the signal; ``lines`` holds the flat index of each point in the
        signal array, ``keys`` the HDF5 path of each column, ``shape`` the signal's shape and
        ``roles`` the fields of the signal (``value``) and of its errors (``error``).

    Raises
    ------
    InputError
        Missing or unreadable file, no NXdata group, no signal, an axis whose length fits no
        dimension, a field of another shape, non-numeric signal, axes or errors.
    """
    import h5py

    path = Path(path)
    if not path.is_file():
        raise InputError("data file not found; check the path (relative paths are resolved "
                         "against the case file's folder)", file=path)
    try:
        h5 = h5py.File(path, "r")
    except OSError as exc:
        raise InputError(f"cannot open as HDF5 ({' '.join(str(exc).split())[:120]}); expected "
                         "an HDF5/NeXus file", file=path) from None
    with h5:
        group = find_nxdata(h5, path, entry)
        sname, axes, fields = _signal_and_axes(group, path)
        signal = _numeric(fields[sname], path)
        if signal is None:
            raise InputError("the signal is not numeric", file=path, key=fields[sname].name)
        shape = signal.shape if signal.ndim else (1,)
        signal = signal.reshape(shape)
        axis_dims = {}
        for dim, a in enumerate(axes):
            if a and a != ".":
                if a not in fields:
                    raise InputError(f"the 'axes' attribute names '{a}', which is not a field "
                                     "of the group", file=path, key=group.name)
                axis_dims[a] = (dim,)
        for a in list(fields):
            attr = f"{a}_indices"
            if attr in group.attrs:
                axis_dims[a] = tuple(int(i) for i in np.atleast_1d(group.attrs[attr]))
        errors = next((e for e in (f"{sname}_errors", "errors") if e in fields), None)
        columns, units, keys = {}, {}, {None: group.name}
        for fname, ds in fields.items():
            arr = _numeric(ds, path)
            if arr is None:
                continue                       # text fields (titles, notes) are not columns
            if fname in (sname, errors):
                if arr.shape != signal.shape and arr.size != signal.size:
                    raise InputError(f"shape {arr.shape} differs from the signal's {shape}",
                                     file=path, key=ds.name)
                col = arr.reshape(shape)
            elif fname in axis_dims:
                col = _broadcast_axis(arr, axis_dims[fname], shape, path, ds.name)
            elif arr.size == 1:
                col = np.full(shape, float(arr.ravel()[0]))
            elif arr.shape == shape:
                col = arr
            else:
                continue                       # neither axis, point field nor constant
            columns[fname] = col.ravel()
            keys[fname] = ds.name
            units[fname] = _text(ds.attrs["units"]) if "units" in ds.attrs else None
    roles = {"value": sname}
    if errors is not None:
        roles["error"] = errors
    return Table(path=path, columns=columns, lines=np.arange(int(np.prod(shape))),
                 names={c: c for c in columns}, units=units, keys=keys,
                 shape=tuple(shape), roles=roles)


def _broadcast_axis(arr, dims, shape, path, key):
    """An axis field spread over the signal's shape (bin edges become bin centres)."""
    arr = np.asarray(arr, dtype=float)
    want = tuple(shape[d] for d in dims)
    if len(dims) == 1 and arr.ndim == 1 and arr.size == want[0] + 1:
        arr = 0.5 * (arr[1:] + arr[:-1])       # histogram bin edges -> centres
    if arr.shape != want:
        raise InputError(f"axis of shape {arr.shape} does not fit dimension(s) "
                         f"{', '.join(map(str, dims))} of the signal (shape {shape}); expected "
                         f"{want} values, or one more for bin edges", file=path, key=key)
    view = [1] * len(shape)
    for d, n in zip(dims, want):
        view[d] = n
    return np.broadcast_to(arr.reshape(view), shape)
