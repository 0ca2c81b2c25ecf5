"""Prior declarations of model cards and case files, read into prior objects.

A declaration is a small mapping; :func:`prior_from_spec` checks it with the schema engine
(:mod:`evidence1d.schema`: one number parser, one message shape, the dotted key of every
mistake) and returns the :class:`~evidence1d.inference.priors.Prior` it declares.

Declared kinds (units are those of the parameter)::

    {kind: uniform,          lower: a, upper: b}
    {kind: log_uniform,      lower: a, upper: b}          0 < a < b
    {kind: normal,           mean: m, sd: s}              s > 0
    {kind: truncated_normal, mean: m, sd: s, lower: a, upper: b}
    {kind: fixed,            value: v}

References
----------
.. [1] N. L. Johnson, S. Kotz and N. Balakrishnan, *Continuous Univariate Distributions*,
   Vol. 1, 2nd ed. (Wiley, 1994): the uniform, log-uniform, normal and truncated normal laws.
"""
from __future__ import annotations

import math

from evidence1d.errors import InputError
from evidence1d.schema import Field, Spec, as_any, as_float, as_positive_float, check_tagged

from .priors import (Fixed, LogUniform, Normal, Prior, TruncatedNormal, Uniform,
                     log_normal_mass)

__all__ = ["prior_from_spec", "PRIOR_FIELDS", "PRIOR_SPECS"]

#: Required fields of every prior kind, in the order they are documented.
PRIOR_FIELDS = {
    "uniform": ("lower", "upper"),
    "log_uniform": ("lower", "upper"),
    "normal": ("mean", "sd"),
    "truncated_normal": ("mean", "sd", "lower", "upper"),
    "fixed": ("value",),
}



def _bounds_ordered(v: dict, where: str) -> None:
    if v["lower"] >= v["upper"]:
        raise InputError(f"lower ({v['lower']:g}) must be smaller than upper "
                         f"({v['upper']:g})", key=where)


def _log_range_positive(v: dict, where: str) -> None:
    if v["lower"] <= 0.0:
        raise InputError(f"a log_uniform prior needs 0 < lower < upper; got lower = "
                         f"{v['lower']:g} (use uniform for ranges that reach zero)", key=where)


def _truncation_holds_mass(v: dict, where: str) -> None:
    alpha = (v["lower"] - v["mean"]) / v["sd"]
    beta = (v["upper"] - v["mean"]) / v["sd"]
    if not math.isfinite(log_normal_mass(alpha, beta)):
        raise InputError("the truncation interval holds no probability of the normal "
                         "(it lies too many sd from the mean)", key=where)


_HELP = {"lower": "lower bound", "upper": "upper bound", "mean": "mean", "sd": "standard "
         "deviation > 0", "value": "the fixed value"}
_CHECKS = {"uniform": (_bounds_ordered,), "log_uniform": (_bounds_ordered, _log_range_positive),
           "truncated_normal": (_bounds_ordered, _truncation_holds_mass)}
#: the declaration of every prior kind, checked by the schema engine
PRIOR_SPECS = {
    kind: Spec({"kind": Field(as_any, required=True),
                **{f: Field(as_positive_float if f == "sd" else as_float, required=True,
                            help=f"{_HELP[f]}, in the parameter's unit") for f in fields}},
               what=f"a {kind} prior", checks=_CHECKS.get(kind, ()))
    for kind, fields in PRIOR_FIELDS.items()}
_CLASSES = {"uniform": Uniform, "log_uniform": LogUniform, "normal": Normal,
            "truncated_normal": TruncatedNormal, "fixed": Fixed}


def prior_from_spec(spec: dict, where: str, doc=None) -> Prior:
    """Build a prior from its declaration mapping.

    Parameters
    ----------
    spec : dict
        ``{kind: ..., <fields>}`` with the fields of :data:`PRIOR_FIELDS`; values in the units
        of the parameter (numbers, or strings that read as numbers: YAML 1.1 reads ``1e-3``
        as a string).
    where : str
        Dotted key of the declaration in its file (e.g. ``"parameters.J.prior"``); errors name
        it.
    doc : evidence1d.schema.YamlDoc, optional
        The file the declaration is in (errors then name its file and line).

    Returns
    -------
    Prior

    Raises
    ------
    InputError
        One line naming the key: not a mapping, missing or unknown kind (with the closest valid
        kind), missing or unknown field, non-numeric or non-finite value, lower >= upper,
        log-uniform range not positive, sd <= 0, truncation interval holding no probability.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions* (1994).
    """
    v = check_tagged(spec, "kind", PRIOR_SPECS, where, doc, what="prior")
    kind = v.pop("kind")
    return _CLASSES[kind](**v)
