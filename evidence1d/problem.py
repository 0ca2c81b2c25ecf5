"""The joint inference problem of one model family on one case.

ln p(d | θ) = Σ_datasets ln p(d_i | θ_phys, θ_nuisance,i): physical parameters shared by
every dataset, nuisances per dataset.  :class:`JointProblem` is a picklable object whose
methods are vectorised over parameter sets: it is what the samplers (emcee, the tempered
evidence, or any external sampler through :class:`~evidence1d.case.Case`) see.
"""
from __future__ import annotations

import numpy as np

from .families import FAMILY_CLASSES
from .families.predict import SAMPLE_EXTRAS, DatasetPredictor
from .inference.likelihood import gaussian_loglike, student_t_loglike
from .inference.likelihood import gaussian_loglike_pointwise as gaussian_pointwise
from .inference.likelihood import student_t_loglike_pointwise as student_t_pointwise
from .inference.priors import JointPrior, prior_from_spec

__all__ = ["JointProblem"]


class JointProblem:
    """One family's joint likelihood and prior over all datasets of a case.

    Parameters
    ----------
    case : Case
    choice : ModelChoice
        The model card and the case's prior overrides.

    Attributes
    ----------
    names : list of str
        Sampled parameters in order: physical (card order), sample extras, per-dataset
        nuisances (dataset order).
    all_names : list of str
        The same plus fixed parameters.
    prior : JointPrior
    units : dict of str to str
        Unit of every parameter.
    one_dimensional : bool
    """

    #: parameter sets evaluated at once (bounds memory for powder data)
    chunk = 256

    def __init__(self, case, choice):
        card = choice.card
        cls = FAMILY_CLASSES[card.family]
        self.card = card
        self.model = card.name
        self.one_dimensional = card.one_dimensional
        self.family = _make_family(cls, card, case.sample)
        self.predictors = [DatasetPredictor(self.family, ds, case.sample)
                           for ds in case.datasets]
        priors, units = {}, {}
        for pname, pinfo in card.parameters.items():
            pr = pinfo["prior"]
            if pname == "g" and case.sample.g_prior is not None:
                pr = case.sample.g_prior
            priors[pname] = choice.priors.get(pname, pr)
            units[pname] = pinfo["unit"]
        extras = []
        for pr_ in self.predictors:
            extras += [e for e in pr_.extras if e not in extras]
        defaults = {}
        for pr_ in self.predictors:
            defaults.update(pr_.default_priors())
        for e in (x for x in SAMPLE_EXTRAS if x in extras):
            priors[e] = case.extras.get(e) or prior_from_spec(defaults[e], e)
            units[e] = SAMPLE_EXTRAS[e][0]
        for pr_ in self.predictors:
            ds = pr_.dataset
            own = ds.options.get("priors") or {}
            for nname in pr_.nuisance:
                short = nname.split(":", 1)[1]
                priors[nname] = own.get(short) or prior_from_spec(defaults[nname], nname)
                units[nname] = _nuisance_unit(short, ds)
        self.prior = JointPrior(list(priors), list(priors.values()))
        self.names = list(self.prior.free_names)
        self.all_names = list(priors)
        self.units = units

    # ----------------------------------------------------------------- helpers
    def __getstate__(self):
        return self.__dict__.copy()

    @staticmethod
    def _as_batch(theta):
        theta = np.asarray(theta, dtype=float)
        single = theta.ndim == 1
        return np.atleast_2d(theta), single

    def params(self, theta) -> dict:
        """Dict of every parameter (fixed included) as (k, 1) arrays."""
        theta, _ = self._as_batch(theta)
        return self.prior.expand(theta)

    def _per_dataset(self, theta, pointwise=False):
        theta, _ = self._as_batch(theta)
        k = theta.shape[0]
        ok = self.prior.in_support(theta) & np.all(np.isfinite(theta), axis=1)
        out = {}
        for pr in self.predictors:
            n = pr.dataset.n
            out[pr.dataset.name] = np.full((k, n) if pointwise else k, -np.inf)
        idx = np.flatnonzero(ok)
        for start in range(0, idx.size, self.chunk):
            sel = idx[start:start + self.chunk]
            p = self.prior.expand(theta[sel])
            for pr in self.predictors:
                ds = pr.dataset
                with np.errstate(all="ignore"):
                    model = pr.predict(p)
                infl = p.get(f"{ds.name}:inflate")
                if ds.options.get("noise") == "student_t":
                    f = student_t_pointwise if pointwise else student_t_loglike
                    ll = f(model, ds.y, ds.err, ds.options.get("nu", 4.0), inflation=infl)
                else:
                    f = gaussian_pointwise if pointwise else gaussian_loglike
                    ll = f(model, ds.y, ds.err, inflation=infl)
                ll = np.where(np.isfinite(ll), ll, -np.inf)
                out[ds.name][sel] = ll
        return out

    # ----------------------------------------------------------------- public API
    def log_likelihood(self, theta):
        """Joint log-likelihood; theta (n,) -> float, (k, n) -> (k,); −inf off support."""
        theta, single = self._as_batch(theta)
        terms = self._per_dataset(theta)
        total = np.sum(np.stack(list(terms.values())), axis=0)
        return float(total[0]) if single else total

    def __call__(self, theta):
        return self.log_likelihood(theta)

    def log_likelihood_terms(self, theta) -> dict:
        """Per-dataset log-likelihoods {dataset name: (k,)} (evidence budgets)."""
        return self._per_dataset(theta)

    def log_likelihood_pointwise(self, theta) -> dict:
        """Per-point log-likelihoods {dataset name: (k, n_points)} (for PSIS-LOO)."""
        return self._per_dataset(theta, pointwise=True)

    def log_prior(self, theta):
        """Log prior density; same shapes as :meth:`log_likelihood`."""
        theta, single = self._as_batch(theta)
        lp = self.prior.log_prob(theta)
        return float(lp[0]) if single else lp

    def log_posterior(self, theta):
        """Unnormalised log posterior, vectorised (for emcee)."""
        theta, single = self._as_batch(theta)
        lp = self.prior.log_prob(theta)
        out = np.full(theta.shape[0], -np.inf)
        ok = np.isfinite(lp)
        if ok.any():
            out[ok] = lp[ok] + self.log_likelihood(theta[ok])
        return float(out[0]) if single else out

    def prior_transform(self, u):
        """Unit cube -> parameters; u (n,) or (k, n)."""
        u, single = self._as_batch(u)
        th = self.prior.transform(u)
        return th[0] if single else th

    def predict(self, theta) -> dict:
        """Predictions {dataset name: (k, n_points)} in the datasets' internal units."""
        p = self.params(theta)
        with np.errstate(all="ignore"):
            return {pr.dataset.name: pr.predict(p) for pr in self.predictors}

    def magnetic_part(self, theta) -> dict:
        """The families' model parts {dataset name: (k, n_points)} (no nuisances)."""
        p = self.params(theta)
        with np.errstate(all="ignore"):
            return {pr.dataset.name: pr.magnetic(p) for pr in self.predictors}


def _make_family(cls, card, sample):
    """Instantiate a family with the sample's spin (and spacings, if it takes them)."""
    import inspect

    from .errors import InputError
    kwargs = dict(card.options)
    sig = inspect.signature(cls)
    if "lattice" in sig.parameters and "lattice" not in kwargs:
        kwargs["lattice"] = (sample.spin_spacing, sample.lattice["a"], sample.lattice["b"])
    unknown = [k for k in kwargs if k not in sig.parameters]
    if unknown:
        raise InputError(f"model card option '{unknown[0]}' is not an option of family "
                         f"'{card.family}' (options: "
                         f"{', '.join(p for p in sig.parameters if p != 'spin')})",
                         file=card.path, key=f"options.{unknown[0]}")
    return cls(spin=sample.spin, **kwargs)


def _nuisance_unit(short: str, ds) -> str:
    lab = ds.units.get("intensity", "arb") if ds.kind.endswith("spectrum") else ""
    return {"scale": f"{lab}·meV", "background": lab, "slope": f"{lab}/meV",
            "elastic": f"{lab}·meV", "inflate": "1"}.get(short, "")
