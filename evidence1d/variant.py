"""Variants of a case made in memory: other data, prior overrides, a subset of the models.

:meth:`evidence1d.case.Case.replace` builds the variant from the parts made here; the
campaigns of :mod:`evidence1d.campaign` fit every simulated replicate through it, so no
file is written per replicate.
"""
from __future__ import annotations

import dataclasses

import numpy as np

from .errors import InputError, closest_key

__all__ = ["variant_parts"]


def variant_parts(case, *, data=None, priors=None, models=None) -> tuple:
    """Datasets, model choices and prior odds of a variant of ``case``.

    Parameters
    ----------
    case : Case
    data : dict of str to (array_like, array_like), optional
        Per dataset name, new values and one-standard-deviation errors in internal units
        (emu/mol, J/(mol K), intensity as given), one per point of the dataset.
    priors : dict of str to dict, optional
        Per model, prior overrides laid over the case's: a prior object of
        :mod:`evidence1d.inference.priors` or a declaration ``{kind: ..., ...}`` (units of
        the parameter) per parameter.
    models : list of str, optional
        The models of the variant: a subset of the case's, in that order.

    Returns
    -------
    (list of Dataset, dict of str to ModelChoice, dict or None)
        The datasets (points, units, resolutions and options kept), the model choices, and
        the case's prior odds restricted to the chosen models.

    Raises
    ------
    InputError
        An unknown dataset, model or parameter; a wrong number of values; a non-finite
        value or an error <= 0.
    """
    from .inference.prior_specs import prior_from_spec
    datasets = list(case.datasets)
    for name, (y, err) in (data or {}).items():
        idx = [i for i, ds in enumerate(datasets) if ds.name == name]
        if not idx:
            raise InputError(f"unknown dataset '{name}'; "
                             + closest_key(str(name), [d.name for d in datasets]))
        ds = datasets[idx[0]]
        y, err = np.asarray(y, dtype=float), np.asarray(err, dtype=float)
        if y.shape != ds.y.shape or err.shape != ds.y.shape:
            raise InputError(f"dataset '{name}' has {ds.n} points; got values of shape "
                             f"{y.shape} and errors of shape {err.shape}")
        if not (np.all(np.isfinite(y)) and np.all(np.isfinite(err)) and np.all(err > 0)):
            raise InputError(f"dataset '{name}': expected finite values and errors > 0")
        datasets[idx[0]] = dataclasses.replace(ds, y=y, err=err)
    chosen = {}
    for name in (models if models is not None else list(case.models)):
        if name not in case.models:
            hint = closest_key(str(name), case.models).replace("valid keys",
                                                               "models in this case")
            raise InputError(f"unknown model '{name}'; {hint}")
        chosen[name] = case.models[name]
    for name, overrides in (priors or {}).items():
        if name not in chosen:
            raise InputError(f"priors given for '{name}', which is not a model of the "
                             f"variant; {closest_key(str(name), chosen)}")
        choice = chosen[name]
        new = dict(choice.priors)
        for pk, pr in overrides.items():
            if pk not in choice.card.parameters:
                raise InputError(f"'{pk}' is not a parameter of model '{name}'; "
                                 f"{closest_key(str(pk), choice.card.parameters)}")
            new[pk] = prior_from_spec(pr, f"priors.{name}.{pk}") if isinstance(pr, dict) \
                else pr
        chosen[name] = dataclasses.replace(choice, priors=new)
    odds = case.prior_odds
    if odds is not None:
        odds = {k: v for k, v in odds.items() if k in chosen}
    return datasets, chosen, odds
