"""The ``figures`` setting (the case file's ``figures:`` block) and the quick-run flag.

Keys: ``cuts`` ('auto', 'all', a list of Q values in the data's wavevector unit or E values
in meV, ``{Q: [...]}``, ``{E: [...]}``, or a mapping dataset -> one of these),
``temperature_axis`` ('linear' or 'log'), ``map_scale`` ('linear', 'sqrt' or 'log'),
``map_percentiles`` ([low, high], the colour limits of the maps), ``titles`` (bool),
``truths`` ({parameter: value} or {model: {parameter: value}}) and ``draws`` (posterior
draws for the predictive bands).

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
"""
from __future__ import annotations

import math

from ...errors import InputError, closest_key

__all__ = ["DEFAULT_SETTINGS", "MAX_DRAWS", "figure_settings"]

#: posterior draws behind the predictive bands of the figures (bounds the drawing time)
MAX_DRAWS = 200

#: defaults of the ``figures`` setting
DEFAULT_SETTINGS = {"cuts": "auto", "temperature_axis": "linear", "map_scale": "linear",
                    "map_percentiles": (1.0, 99.0), "titles": True, "truths": {},
                    "draws": MAX_DRAWS}
_SCALES = ("linear", "sqrt", "log")


def _cut_spec(value, where: str):
    """('auto' | 'all' | 'values', direction 'Q' | 'E' | None, values tuple)."""
    if isinstance(value, str) and value.strip().lower() in ("auto", "all"):
        return (value.strip().lower(), None, ())
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        value = [value]
    if isinstance(value, (list, tuple)):
        try:
            vals = tuple(float(v) for v in value)
        except (TypeError, ValueError):
            raise InputError(f"{where} must be 'auto', 'all', a list of numbers or "
                             f"{{Q: [...]}} / {{E: [...]}}; got {value!r}") from None
        if not vals:
            raise InputError(f"{where} is an empty list; give values or 'all'")
        return ("values", None, vals)
    if isinstance(value, dict) and len(value) == 1 and next(iter(value)) in ("Q", "E"):
        d, v = next(iter(value.items()))
        kind, _, vals = _cut_spec(v, f"{where}.{d}")
        return (kind, d, vals)
    raise InputError(f"{where} must be 'auto', 'all', a list of numbers or {{Q: [...]}} / "
                     f"{{E: [...]}}; got {value!r}")


def figure_settings(raw=None, datasets=(), models=()) -> dict:
    """The checked ``figures`` setting with defaults filled in.

    Parameters
    ----------
    raw : dict or None
        The case file's ``figures:`` block: ``cuts`` ('auto', 'all', a list of Q values
        in the data's wavevector unit or E values in meV, ``{Q: [...]}``, ``{E: [...]}``, or
        a mapping dataset -> one of these), ``temperature_axis`` ('linear' or 'log'),
        ``map_scale`` ('linear', 'sqrt' or 'log'), ``map_percentiles`` ([low, high], the
        colour limits of the maps), ``titles`` (bool), ``truths`` ({parameter: value} or
        {model: {parameter: value}}), ``draws`` (posterior draws for the bands).
    datasets, models : sequence of str
        Names in the case (to check the per-dataset and per-model entries).

    Returns
    -------
    dict

    Raises
    ------
    InputError
        Unknown keys or values, naming ``figures.<key>``.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    raw = dict(raw or {})
    unknown = [k for k in raw if k not in DEFAULT_SETTINGS]
    if unknown:
        raise InputError(f"unknown key figures.{unknown[0]}; "
                         f"{closest_key(unknown[0], DEFAULT_SETTINGS)}")
    s = {**DEFAULT_SETTINGS, **raw}
    cuts = s["cuts"]
    per = {}
    if isinstance(cuts, dict) and not (len(cuts) == 1 and next(iter(cuts)) in ("Q", "E")):
        for name, v in cuts.items():
            if datasets and name not in datasets:
                raise InputError(f"figures.cuts.{name}: no dataset of that name; "
                                 f"{closest_key(name, datasets)}")
            per[name] = _cut_spec(v, f"figures.cuts.{name}")
        default = ("auto", None, ())
    else:
        default = _cut_spec(cuts, "figures.cuts")
    s["cuts"] = {"default": default, "datasets": per}
    for key, allowed in (("temperature_axis", ("linear", "log")), ("map_scale", _SCALES)):
        if s[key] not in allowed:
            raise InputError(f"figures.{key} must be one of {', '.join(allowed)}; "
                             f"got {s[key]!r}")
    try:
        lo, hi = (float(v) for v in s["map_percentiles"])
    except (TypeError, ValueError):
        raise InputError("figures.map_percentiles must be two numbers [low, high]") from None
    if not 0.0 <= lo < hi <= 100.0:
        raise InputError(f"figures.map_percentiles must satisfy 0 <= low < high <= 100; "
                         f"got [{lo:g}, {hi:g}]")
    s["map_percentiles"] = (lo, hi)
    if not isinstance(s["titles"], bool):
        raise InputError(f"figures.titles must be true or false; got {s['titles']!r}")
    if not isinstance(s["draws"], int) or isinstance(s["draws"], bool) or s["draws"] < 5:
        raise InputError(f"figures.draws must be an integer >= 5; got {s['draws']!r}")
    s["truths"] = _truths(s["truths"], models)
    return s


def _truths(raw, models) -> dict:
    if not isinstance(raw, dict):
        raise InputError("figures.truths must map parameter -> value or model -> "
                         "{parameter: value}")
    out = {"*": {}}
    for k, v in raw.items():
        if isinstance(v, dict):
            if models and k not in models:
                raise InputError(f"figures.truths.{k}: no model of that name; "
                                 f"{closest_key(k, models)}")
            out[k] = {}
            for p, x in v.items():
                out[k][p] = _number(x, f"figures.truths.{k}.{p}")
        else:
            out["*"][k] = _number(v, f"figures.truths.{k}")
    return out


def _number(x, where):
    try:
        v = float(x)
    except (TypeError, ValueError):
        raise InputError(f"{where} must be a number; got {x!r}") from None
    if not math.isfinite(v):
        raise InputError(f"{where} must be finite; got {x!r}")
    return v
