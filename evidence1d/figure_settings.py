"""The case file's ``figures:`` block: the figure choices, checked with their defaults.

Keys: ``cuts`` ('auto', 'all', a list of Q values in the data's wavevector unit or E values
in meV, ``{Q: [...]}``, ``{E: [...]}``, or a mapping dataset -> one of these),
``temperature_axis`` ('linear' or 'log'), ``map_scale`` ('linear', 'sqrt' or 'log'),
``map_percentiles`` ([low, high], the colour limits of the maps), ``titles`` (bool),
``truths`` ({parameter: value} or {model: {parameter: value}}) and ``draws`` (posterior
draws for the predictive bands).  The case loader checks the block when it reads the case
file; the report reads the checked choices.  Checked by the schema engine
(:mod:`evidence1d.schema`): every mistake is one line naming ``figures.<key>``.

References
----------
.. [1] A. Gelman, X.-L. Meng and H. Stern, Statistica Sinica 6, 733 (1996): posterior
   predictive checks.
"""
from __future__ import annotations

from .errors import InputError, closest_key
from .schema import Field, Spec, as_bool, as_float, check_mapping, integer, one_of

__all__ = ["DEFAULT_SETTINGS", "DEFAULT_DRAWS", "figure_settings"]

#: posterior draws behind the predictive bands by default
DEFAULT_DRAWS = 200
#: defaults of the ``figures`` setting
DEFAULT_SETTINGS = {"cuts": "auto", "temperature_axis": "linear", "map_scale": "linear",
                    "map_percentiles": (1.0, 99.0), "titles": True, "truths": {},
                    "draws": DEFAULT_DRAWS}
_SCALES = ("linear", "sqrt", "log")
_CUT_FORMS = "'auto', 'all', a list of numbers or {Q: [...]} / {E: [...]}"


def _cut_spec(value, where: str):
    """('auto' | 'all' | 'values', direction 'Q' | 'E' | None, values tuple)."""
    if isinstance(value, str) and value.strip().lower() in ("auto", "all"):
        return (value.strip().lower(), None, ())
    if isinstance(value, (int, float)) and not isinstance(value, bool):
        value = [value]
    if isinstance(value, (list, tuple)):
        if not value:
            raise InputError("an empty list; expected values or 'all'", key=where)
        vals = tuple(as_float(v, f"{where}[{i}]") for i, v in enumerate(value))
        return ("values", None, vals)
    if isinstance(value, dict) and len(value) == 1 and next(iter(value)) in ("Q", "E"):
        d, v = next(iter(value.items()))
        kind, _, vals = _cut_spec(v, f"{where}.{d}")
        return (kind, d, vals)
    raise InputError(f"expected {_CUT_FORMS}; got {value!r}", key=where)


def _cuts(datasets):
    """Converter of ``cuts``: one choice for every dataset, or one per dataset."""
    def conv(cuts, where):
        per = {}
        if isinstance(cuts, dict) and not (len(cuts) == 1 and next(iter(cuts)) in ("Q", "E")):
            for name, v in cuts.items():
                if datasets and name not in datasets:
                    raise InputError("no dataset of that name; "
                                     + closest_key(str(name), datasets).replace(
                                         "valid keys", "datasets"), key=f"{where}.{name}")
                per[name] = _cut_spec(v, f"{where}.{name}")
            return {"default": ("auto", None, ()), "datasets": per}
        return {"default": _cut_spec(cuts, where), "datasets": per}
    return conv


def _percentiles(v, where):
    """Two numbers 0 <= low < high <= 100."""
    if not isinstance(v, (list, tuple)) or len(v) != 2:
        raise InputError(f"expected two numbers [low, high]; got {v!r}", key=where)
    lo, hi = (as_float(x, f"{where}[{i}]") for i, x in enumerate(v))
    if not 0.0 <= lo < hi <= 100.0:
        raise InputError(f"expected 0 <= low < high <= 100; got [{lo:g}, {hi:g}]", key=where)
    return (lo, hi)


def _truths(models):
    """Converter of ``truths``: {parameter: value} and/or {model: {parameter: value}}."""
    def conv(raw, where):
        if not isinstance(raw, dict):
            raise InputError("expected a mapping parameter -> value or model -> "
                             "{parameter: value}", key=where)
        out = {"*": {}}
        for k, v in raw.items():
            if isinstance(v, dict):
                if models and k not in models:
                    raise InputError("no model of that name; " + closest_key(
                        str(k), models).replace("valid keys", "models"), key=f"{where}.{k}")
                out[k] = {p: as_float(x, f"{where}.{k}.{p}") for p, x in v.items()}
            else:
                out["*"][k] = as_float(v, f"{where}.{k}")
        return out
    return conv


def figure_settings(raw=None, datasets=(), models=()) -> dict:
    """The checked ``figures`` setting with defaults filled in.

    Parameters
    ----------
    raw : dict or None
        The case file's ``figures:`` block: ``cuts`` ('auto', 'all', a list of Q values
        in the data's wavevector unit or E values in meV, ``{Q: [...]}``, ``{E: [...]}``, or
        a mapping dataset -> one of these), ``temperature_axis`` ('linear' or 'log'),
        ``map_scale`` ('linear', 'sqrt' or 'log'), ``map_percentiles`` ([low, high], the
        colour limits of the maps, in per cent), ``titles`` (bool), ``truths``
        ({parameter: value} or {model: {parameter: value}}, in the parameters' units),
        ``draws`` (posterior draws for the bands, >= 5).
    datasets, models : sequence of str
        Names in the case (to check the per-dataset and per-model entries).

    Returns
    -------
    dict
        ``cuts`` becomes ``{"default": spec, "datasets": {name: spec}}`` with each spec
        ``(mode, direction, values)``; ``truths`` becomes ``{"*": {...}, model: {...}}``.

    Raises
    ------
    InputError
        Unknown keys or values, naming ``figures.<key>``.

    References
    ----------
    .. [1] Gelman, Meng & Stern, Statistica Sinica 6, 733 (1996).
    """
    spec = Spec({
        "cuts": Field(_cuts(list(datasets)), default=_cuts(())("auto", "figures.cuts"),
                      help=f"{_CUT_FORMS}, or a mapping dataset -> one of these"),
        "temperature_axis": Field(one_of("linear", "log", what="temperature axis"),
                                  default="linear"),
        "map_scale": Field(one_of(*_SCALES, what="map scale"), default="linear"),
        "map_percentiles": Field(_percentiles, default=DEFAULT_SETTINGS["map_percentiles"],
                                 help="colour limits of the maps [low, high] in per cent"),
        "titles": Field(as_bool, default=True),
        "truths": Field(_truths(list(models)), default={"*": {}}),
        "draws": Field(integer(5), default=DEFAULT_DRAWS,
                       help="posterior draws for the predictive bands"),
    }, what="the figures block")
    return check_mapping(dict(raw or {}), spec, "figures")
