"""The joint inference problem of one model family on one case.

ln p(d | θ) = Σ_datasets ln p(d_i | θ_phys, θ_nuisance,i): physical parameters shared by
every dataset, nuisances per dataset.  :class:`JointProblem` is a picklable object whose
methods are vectorised over parameter sets: it is what the samplers (emcee, the tempered
evidence, or any external sampler through :class:`~evidence1d.case.Case`) see.
"""
from __future__ import annotations

import numpy as np

from .errors import InputError
from .families import FAMILY_CLASSES
from .families.predict import SAMPLE_EXTRAS, DatasetPredictor
from .inference.likelihood import gaussian_loglike, student_t_loglike
from .inference.likelihood import gaussian_loglike_pointwise as gaussian_pointwise
from .inference.likelihood import student_t_loglike_pointwise as student_t_pointwise
from .inference.prior_specs import prior_from_spec
from .inference.priors import Fixed, JointPrior

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
    marginalised : list of str
        Linear nuisances integrated out analytically (see :class:`LinearBlock`); they are not
        sampled, and :meth:`draw_marginalised` draws them from their conditional posterior.
    """

    #: parameter sets evaluated at once (bounds memory for powder data)
    chunk = 256

    def __init__(self, case, choice, marginalise: bool = True):
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
        spectra = any(ds.kind.endswith("spectrum") for ds in case.datasets)
        for pname in cls.thermal_parameters:
            if not spectra and pname not in choice.priors:
                priors[pname] = Fixed(0.0)      # no dataset can see it
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
        self.all_names = list(priors)
        self.units = units
        self.declared_priors = dict(priors)
        self.blocks = _linear_blocks(self.predictors, priors) if marginalise else []
        self.marginalised = [nm for b in self.blocks for nm in b.names]
        sampled = [nm for nm in priors if nm not in self.marginalised]
        self.prior = JointPrior(sampled, [priors[nm] for nm in sampled])
        self.names = list(self.prior.free_names)
        # keyed by dataset name (unique in a case), not id(): ids change when the problem
        # is pickled to a worker
        self._in_block = {pr.dataset.name for b in self.blocks for pr in b.predictors}

    # ----------------------------------------------------------------- helpers
    def __getstate__(self):
        return self.__dict__.copy()

    @staticmethod
    def _as_batch(theta):
        theta = np.asarray(theta, dtype=float)
        single = theta.ndim == 1
        return np.atleast_2d(theta), single

    def params(self, theta) -> dict:
        """Dict of every parameter (fixed included) as (k, 1) arrays.

        ``theta`` holds the sampled parameters (:attr:`names`) or, with the marginalised
        nuisances appended, :attr:`full_names`; without them the marginalised nuisances are
        set to their conditional posterior modes inside their prior support (the means when
        no bound is reached).
        """
        theta, _ = self._as_batch(theta)
        m = len(self.names)
        p = self.prior.expand(theta[:, :m])
        if theta.shape[1] > m:
            for j, nm in enumerate(self.marginalised):
                p[nm] = theta[:, m + j:m + j + 1]
        else:
            with np.errstate(all="ignore"):
                for b in self.blocks:
                    p.update(b.conditional_mean(p))
        return p

    @staticmethod
    def _dataset_loglike(pr, p, pointwise: bool):
        """Log-likelihood of one dataset with every nuisance in ``p``: (k,) or (k, n)."""
        ds = pr.dataset
        model = pr.predict(p)
        infl = p.get(f"{ds.name}:inflate")
        if ds.options.get("noise") == "student_t":
            f = student_t_pointwise if pointwise else student_t_loglike
            ll = f(model, ds.y, ds.err, ds.options.get("nu", 4.0), inflation=infl)
        else:
            f = gaussian_pointwise if pointwise else gaussian_loglike
            ll = f(model, ds.y, ds.err, inflation=infl)
        return np.where(np.isfinite(ll), ll, -np.inf)

    def _valid(self, theta) -> np.ndarray:
        """Rows inside the prior support, finite and physical."""
        return (self.prior.in_support(theta) & np.all(np.isfinite(theta), axis=1)
                & self._physical(theta))

    def _per_dataset(self, theta, labels=None):
        theta, _ = self._as_batch(theta)
        k = theta.shape[0]
        wanted = list(self.term_sizes()) if labels is None else list(labels)
        out = {label: np.full(k, -np.inf) for label in wanted}
        idx = np.flatnonzero(self._valid(theta))
        for start in range(0, idx.size, self.chunk):
            sel = idx[start:start + self.chunk]
            p = self.prior.expand(theta[sel])
            with np.errstate(all="ignore"):
                for pr in self.predictors:
                    if pr.dataset.name not in self._in_block and pr.dataset.name in out:
                        out[pr.dataset.name][sel] = self._dataset_loglike(pr, p, False)
                for b in self.blocks:
                    if b.label not in out:
                        continue
                    ll = b.log_likelihood(p)
                    out[b.label][sel] = np.where(np.isfinite(ll), ll, -np.inf)
        return out

    def _physical(self, theta) -> np.ndarray:
        """False where a parameter leaves its physical range inside an unbounded prior
        (a normal prior on g can reach g <= 0, where the form factor is undefined)."""
        ok = np.ones(theta.shape[0], dtype=bool)
        if "g" in self.names:
            ok &= theta[:, self.names.index("g")] > 0.1
        return ok

    def _draw(self, p, rng):
        drawn = {}
        for b in self.blocks:
            drawn.update(b.draw(p, rng))
        return drawn

    def term_sizes(self) -> dict:
        """Labels of the log-likelihood terms and their number of points: one term per
        dataset whose nuisances are sampled, one per block of marginalised datasets."""
        sizes = {pr.dataset.name: pr.dataset.n for pr in self.predictors
                 if pr.dataset.name not in self._in_block}
        for b in self.blocks:
            sizes[b.label] = sum(pr.dataset.n for pr in b.predictors)
        return sizes

    def draw_marginalised(self, theta, rng) -> np.ndarray:
        """Draw the marginalised nuisances from their conditional posterior given theta.

        Parameters
        ----------
        theta : ndarray, shape (k, len(names))
        rng : numpy.random.Generator

        Returns
        -------
        ndarray, shape (k, len(marginalised)), columns in :attr:`marginalised` order.
        """
        theta, _ = self._as_batch(theta)
        if not self.marginalised:
            return np.zeros((theta.shape[0], 0))
        out = np.empty((theta.shape[0], len(self.marginalised)))
        for start in range(0, theta.shape[0], self.chunk):      # bounded memory
            p = self.prior.expand(theta[start:start + self.chunk])
            with np.errstate(all="ignore"):
                d = self._draw(p, rng)
            out[start:start + self.chunk] = np.column_stack([d[nm][:, 0]
                                                             for nm in self.marginalised])
        return out

    @property
    def full_names(self) -> list:
        """Sampled parameter names followed by the marginalised ones."""
        return list(self.names) + list(self.marginalised)

    # ----------------------------------------------------------------- public API
    def log_likelihood(self, theta):
        """Joint log-likelihood; theta (n,) -> float, (k, n) -> (k,); −inf off support."""
        theta, single = self._as_batch(theta)
        terms = self._per_dataset(theta)
        total = np.sum(np.stack(list(terms.values())), axis=0)
        return float(total[0]) if single else total

    def __call__(self, theta):
        return self.log_likelihood(theta)

    def log_likelihood_terms(self, theta, labels=None) -> dict:
        """Per-term log-likelihoods {term label: (k,)} (evidence budgets).

        Parameters
        ----------
        theta : ndarray, shape (k, len(names)) or (len(names),)
        labels : sequence of str, optional
            Only these terms (labels of :meth:`term_sizes`), the others not computed;
            default every term.
        """
        if labels is not None:
            unknown = sorted(set(labels) - set(self.term_sizes()))
            if unknown:
                raise InputError(f"unknown likelihood term(s) {', '.join(unknown)}; the "
                                 f"terms are {', '.join(self.term_sizes())}")
        return self._per_dataset(theta, labels)

    def log_likelihood_pointwise(self, theta, rng) -> dict:
        """Per-point log-likelihoods {dataset name: (k, n_points)} (for PSIS-LOO), with any
        marginalised nuisances drawn from their conditional posterior.

        Parameters
        ----------
        theta : ndarray, shape (k, len(names))
        rng : numpy.random.Generator
            Source of the nuisance draws.
        """
        theta, _ = self._as_batch(theta)
        out = {pr.dataset.name: np.full((theta.shape[0], pr.dataset.n), -np.inf)
               for pr in self.predictors}
        idx = np.flatnonzero(self._valid(theta))
        for start in range(0, idx.size, self.chunk):
            sel = idx[start:start + self.chunk]
            p = self.prior.expand(theta[sel])
            with np.errstate(all="ignore"):
                p.update(self._draw(p, rng))
                for pr in self.predictors:
                    out[pr.dataset.name][sel] = self._dataset_loglike(pr, p, True)
        return out

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


class LinearBlock:
    """Datasets whose linear nuisances are integrated out together, under their declared
    priors.

    A block holds the datasets that share linear parameters (all susceptibility datasets
    share χ₀ and C_imp; all heat-capacity datasets share γ_e and β; each spectrum has its own
    scale, background, slope and elastic line).  Normal, truncated-normal and uniform priors
    are integrated exactly, bounds included (:mod:`evidence1d.inference.linear`: the
    Gaussian marginal times the probability of the prior's box under the conditional
    posterior); nuisances with other priors (log-uniform, fixed) are left out of the block
    and sampled (or held) with the physical parameters.

    Parameters
    ----------
    predictors : list of DatasetPredictor
    names : list of str
        The linear parameters, in order.
    priors : dict of str to Prior
        Their declared priors.
    """

    def __init__(self, predictors, names, priors):
        from .inference.linear import linear_prior
        self.predictors = list(predictors)
        self.names = list(names)
        self.label = "+".join(pr.dataset.name for pr in self.predictors)
        self.linear_prior = linear_prior([priors[nm] for nm in self.names])
        self.mu = self.linear_prior.mu
        self.tau = self.linear_prior.tau
        self._y = np.concatenate([pr.dataset.y for pr in self.predictors])
        self._err = np.concatenate([pr.dataset.err for pr in self.predictors])
        self._inv_err = 1.0 / self._err
        ends = np.cumsum([0] + [pr.dataset.n for pr in self.predictors])
        self._rows = [slice(int(a), int(b)) for a, b in zip(ends[:-1], ends[1:])]
        # every dataset carries every block parameter: no zeros needed in the design
        self._dense = all(set(self.names) <= set(pr.linear) for pr in self.predictors)

    def _whitened(self, p):
        """Whitened residuals (k, n) at the prior means and whitened design (k, n, p).

        The design is written once, column by column, into one array already divided by
        the errors (zeros only where a dataset does not carry a block parameter).
        """
        resid, design = None, None
        for pr, rows in zip(self.predictors, self._rows):
            own = [nm for nm in self.names if nm in pr.linear]
            off, cols = pr.linear_design(p, own)
            if design is None:
                k = off.shape[0]
                resid = np.empty((k, self._y.size))
                design = (np.empty if self._dense else np.zeros)((k, self._y.size,
                                                                  len(self.names)))
            inv = self._inv_err[rows]
            r = np.subtract(self._y[rows], off, out=resid[:, rows])
            for nm, col in zip(own, cols):
                j = self.names.index(nm)
                np.multiply(col, inv, out=design[:, rows, j])
                r -= self.mu[j] * col
            r *= inv
        return resid, design

    def log_likelihood(self, p) -> np.ndarray:
        """Marginal log-likelihood of the block's data under the declared priors, (k,)."""
        from .inference.linear import marginal_loglike
        r, d = self._whitened(p)
        return marginal_loglike(r, d, self._err, self.tau, self.linear_prior)

    def draw(self, p, rng) -> dict:
        """Conditional-posterior draws {name: (k, 1)} of the block's linear parameters,
        inside their prior support."""
        from .inference.linear import conditional_draw
        r, d = self._whitened(p)
        a = conditional_draw(r, d, self.tau, self.mu, rng, self.linear_prior)
        return {nm: a[:, j:j + 1] for j, nm in enumerate(self.names)}

    def conditional_mean(self, p) -> dict:
        """Conditional-posterior modes within the prior support {name: (k, 1)} (the means
        when no bound is reached)."""
        from .inference.linear import conditional_mode
        r, d = self._whitened(p)
        a = conditional_mode(r, d, self.tau, self.mu, self.linear_prior)
        return {nm: a[:, j:j + 1] for j, nm in enumerate(self.names)}


def _linear_blocks(predictors, priors) -> list:
    """Group datasets sharing linear nuisances; keep only blocks that can be marginalised
    (Gaussian noise without error inflation).  Only nuisances whose declared prior the
    marginalisation integrates exactly (normal, truncated normal, uniform) join a block;
    the others stay sampled (or fixed) and enter through the offset."""
    from .inference.linear import linear_prior

    def exact(nm):
        return linear_prior([priors[nm]]) is not None

    groups = []                       # list of (set of predictor ids, set of names)
    for pr in predictors:
        ids, names = {id(pr)}, {nm for nm in pr.linear if exact(nm)}
        for g in [g for g in groups if g[1] & names]:
            groups.remove(g)
            ids |= g[0]
            names |= g[1]
        groups.append((ids, names))
    blocks = []
    for ids, names in groups:
        members = [pr for pr in predictors if id(pr) in ids]
        ok = all(pr.dataset.options.get("noise", "gaussian") == "gaussian"
                 and not pr.dataset.options.get("inflate_errors", False) for pr in members)
        if ok and names:
            order = [nm for nm in priors if nm in names]
            blocks.append(LinearBlock(members, order, priors))
    return blocks


def _make_family(cls, card, sample):
    """Instantiate a family with the sample's spin and the options it takes from the sample
    (:meth:`Family.sample_options`), the card's options over them."""
    import inspect

    from .errors import InputError
    kwargs = {**cls.sample_options(sample), **card.options}
    sig = inspect.signature(cls)
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
