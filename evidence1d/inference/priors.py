"""Prior distributions of single parameters and their joint product.

Every prior gives a vectorised log density, the inverse cumulative distribution function
(the map from the unit interval to the parameter, used by nested samplers and to draw
samples), its support and, for the Savage–Dickey density ratio, its density at one value.
Model cards and case files declare priors as small mappings
(:mod:`evidence1d.inference.prior_specs` reads them into these objects).

References
----------
.. [1] N. L. Johnson, S. Kotz and N. Balakrishnan, *Continuous Univariate Distributions*,
   Vol. 1, 2nd ed. (Wiley, 1994): densities and quantile functions of the uniform,
   log-uniform (reciprocal), normal and truncated normal laws.
.. [2] J. Skilling, "Nested sampling for general Bayesian computation", Bayesian Analysis 1,
   833 (2006): the prior as a map from the unit hypercube.
"""
from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np
from scipy import special

from evidence1d.errors import InputError, closest_key
from evidence1d.schema import unique_names

__all__ = ["Prior", "Uniform", "LogUniform", "Normal", "TruncatedNormal", "Fixed",
           "JointPrior", "log_normal_mass"]

_LN_SQRT_2PI = 0.5 * math.log(2.0 * math.pi)
# Unit-interval values are clipped to [_U_MIN, _U_MAX] so that the inverse CDF of an
# unbounded prior stays finite (ndtri(_U_MIN) is about -37.5, ndtri(_U_MAX) about 8.3).
_U_MIN = np.finfo(float).tiny
_U_MAX = 1.0 - np.finfo(float).epsneg

def _clip_unit(u):
    return np.clip(np.asarray(u, dtype=float), _U_MIN, _U_MAX)


def log_normal_mass(alpha: float, beta: float) -> float:
    """ln(Φ(β) − Φ(α)) for α < β, stable in both tails (Φ: standard normal CDF).

    Parameters
    ----------
    alpha, beta : float
        Standardised bounds (x − mean)/sd, α < β.

    Returns
    -------
    float
        The log probability of [α, β] under the standard normal (−inf if it underflows).

    References
    ----------
    Johnson, Kotz & Balakrishnan (1994), §10.1; scipy.special.log_ndtr.
    """
    if alpha > 0.0:                        # upper tail: use the mirror image
        alpha, beta = -beta, -alpha
    lb, la = special.log_ndtr(beta), special.log_ndtr(alpha)
    return float(lb + np.log1p(-np.exp(la - lb)))


class Prior:
    """Base class of one-parameter priors.

    Subclasses are frozen dataclasses that implement :meth:`log_pdf`, :meth:`transform`,
    :attr:`support`, :meth:`describe` and :meth:`to_spec`.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions* (1994).
    """

    kind = "prior"

    def log_pdf(self, x):
        """Log density at ``x`` (array of any shape, parameter units); −inf outside."""
        raise NotImplementedError

    def transform(self, u):
        """Inverse CDF: unit-interval values ``u`` to parameter values (same shape)."""
        raise NotImplementedError

    @property
    def support(self) -> tuple[float, float]:
        """(lower, upper) bounds of the support, in parameter units (±inf if unbounded)."""
        raise NotImplementedError

    def describe(self) -> str:
        """One-line human description, e.g. ``"uniform on [0, 3]"``."""
        raise NotImplementedError

    def to_spec(self) -> dict:
        """The declaration mapping that
        :func:`~evidence1d.inference.prior_specs.prior_from_spec` reads back."""
        raise NotImplementedError

    def sample(self, rng: np.random.Generator, size=None):
        """Draw independent values.

        Parameters
        ----------
        rng : numpy.random.Generator
            Source of randomness.
        size : int or tuple, optional
            Output shape.

        Returns
        -------
        ndarray
            Values in parameter units, drawn by inverse-CDF sampling [1]_.

        References
        ----------
        .. [1] L. Devroye, *Non-Uniform Random Variate Generation* (Springer, 1986), ch. 2.
        """
        return self.transform(rng.random(size))

    def pdf_at(self, value: float) -> float:
        """Prior density at one value (1 / parameter unit), for the Savage–Dickey ratio.

        References
        ----------
        .. [1] J. M. Dickey, Ann. Math. Stat. 42, 204 (1971).
        """
        return float(np.exp(self.log_pdf(np.float64(value))))


@dataclass(frozen=True)
class Uniform(Prior):
    """Uniform prior on [lower, upper] (parameter units).

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions*, Vol. 2 (1995),
       ch. 26.
    """

    lower: float
    upper: float
    kind = "uniform"

    def log_pdf(self, x):
        x = np.asarray(x, dtype=float)
        inside = (x >= self.lower) & (x <= self.upper)
        return np.where(inside, -math.log(self.upper - self.lower), -np.inf)

    def transform(self, u):
        return self.lower + _clip_unit(u) * (self.upper - self.lower)

    @property
    def support(self):
        return (self.lower, self.upper)

    def describe(self):
        return f"uniform on [{self.lower:g}, {self.upper:g}]"

    def to_spec(self):
        return {"kind": self.kind, "lower": self.lower, "upper": self.upper}


@dataclass(frozen=True)
class LogUniform(Prior):
    """Log-uniform (reciprocal) prior, density ∝ 1/x on [lower, upper], 0 < lower < upper.

    References
    ----------
    .. [1] R. W. Hamming, Bell Syst. Tech. J. 49, 1609 (1970): the reciprocal distribution.
    .. [2] H. Jeffreys, *Theory of Probability*, 3rd ed. (Oxford, 1961), §3.1: scale prior.
    """

    lower: float
    upper: float
    kind = "log_uniform"

    def log_pdf(self, x):
        x = np.asarray(x, dtype=float)
        inside = (x >= self.lower) & (x <= self.upper)
        width = math.log(self.upper) - math.log(self.lower)
        safe = np.where(inside, x, self.lower)
        return np.where(inside, -np.log(safe) - math.log(width), -np.inf)

    def transform(self, u):
        la, lb = math.log(self.lower), math.log(self.upper)
        x = np.exp(la + _clip_unit(u) * (lb - la))
        return np.clip(x, self.lower, self.upper)

    @property
    def support(self):
        return (self.lower, self.upper)

    def describe(self):
        return f"log-uniform on [{self.lower:g}, {self.upper:g}]"

    def to_spec(self):
        return {"kind": self.kind, "lower": self.lower, "upper": self.upper}


@dataclass(frozen=True)
class Normal(Prior):
    """Normal prior N(mean, sd²) on the whole real line.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions*, Vol. 1 (1994),
       ch. 13; quantile through the inverse of Φ (scipy.special.ndtri).
    """

    mean: float
    sd: float
    kind = "normal"

    def log_pdf(self, x):
        z = (np.asarray(x, dtype=float) - self.mean) / self.sd
        return -0.5 * z * z - math.log(self.sd) - _LN_SQRT_2PI

    def transform(self, u):
        return self.mean + self.sd * special.ndtri(_clip_unit(u))

    @property
    def support(self):
        return (-math.inf, math.inf)

    def describe(self):
        return f"normal with mean {self.mean:g} and sd {self.sd:g}"

    def to_spec(self):
        return {"kind": self.kind, "mean": self.mean, "sd": self.sd}


@dataclass(frozen=True)
class TruncatedNormal(Prior):
    """Normal N(mean, sd²) restricted to [lower, upper] and renormalised.

    The quantile function inverts Φ between Φ(α) and Φ(β), α = (lower − mean)/sd,
    β = (upper − mean)/sd, mirrored into the lower tail when α > 0 for accuracy.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan, *Continuous Univariate Distributions*, Vol. 1 (1994),
       §10.1 (truncated normal).
    """

    mean: float
    sd: float
    lower: float
    upper: float
    kind = "truncated_normal"

    @property
    def _ab(self):
        return (self.lower - self.mean) / self.sd, (self.upper - self.mean) / self.sd

    def log_pdf(self, x):
        x = np.asarray(x, dtype=float)
        alpha, beta = self._ab
        z = (x - self.mean) / self.sd
        inside = (x >= self.lower) & (x <= self.upper)
        val = -0.5 * z * z - math.log(self.sd) - _LN_SQRT_2PI - log_normal_mass(alpha, beta)
        return np.where(inside, val, -np.inf)

    def transform(self, u):
        u = _clip_unit(u)
        alpha, beta = self._ab
        if alpha > 0.0:                    # mirror: X = mean − sd·Z', Z' on [−β, −α]
            pa, pb = special.ndtr(-beta), special.ndtr(-alpha)
            z = -special.ndtri(pa + (1.0 - u) * (pb - pa))
        else:
            pa, pb = special.ndtr(alpha), special.ndtr(beta)
            z = special.ndtri(pa + u * (pb - pa))
        return np.clip(self.mean + self.sd * z, self.lower, self.upper)

    @property
    def support(self):
        return (self.lower, self.upper)

    def describe(self):
        return (f"normal with mean {self.mean:g} and sd {self.sd:g}, truncated to "
                f"[{self.lower:g}, {self.upper:g}]")

    def to_spec(self):
        return {"kind": self.kind, "mean": self.mean, "sd": self.sd,
                "lower": self.lower, "upper": self.upper}


@dataclass(frozen=True)
class Fixed(Prior):
    """A parameter held at one value (a point mass); it is not sampled.

    References
    ----------
    .. [1] Johnson, Kotz & Balakrishnan (1994): the degenerate distribution.
    """

    value: float
    kind = "fixed"

    def log_pdf(self, x):
        x = np.asarray(x, dtype=float)
        return np.where(x == self.value, 0.0, -np.inf)

    def transform(self, u):
        return np.full(np.shape(u), self.value, dtype=float)

    @property
    def support(self):
        return (self.value, self.value)

    def pdf_at(self, value):
        raise InputError(f"a fixed parameter (value {self.value:g}) has no prior density; "
                         "the Savage–Dickey ratio needs a free parameter")

    def describe(self):
        return f"fixed at {self.value:g}"

    def to_spec(self):
        return {"kind": self.kind, "value": self.value}


class JointPrior:
    """Product of independent one-parameter priors.

    Arrays passed to and returned by the vectorised methods hold only the free (non-fixed)
    parameters, in the order of :attr:`free_names`; :meth:`expand` adds the fixed ones back.

    Parameters
    ----------
    names : sequence of str
        Parameter names, unique.
    priors : sequence of Prior
        One prior per name.

    References
    ----------
    .. [1] Skilling, Bayesian Analysis 1, 833 (2006): product prior and unit-cube map.
    """

    def __init__(self, names, priors):
        names, priors = tuple(names), tuple(priors)
        unique_names(names, "names")
        if len(names) != len(priors):
            raise InputError(f"expected one prior per name; got {len(names)} names and "
                             f"{len(priors)} priors", key="priors")
        for name, prior in zip(names, priors):
            if not isinstance(prior, Prior):
                raise InputError(f"expected a Prior; got {prior!r}", key=f"priors.{name}")
        self.names = names
        self.priors = priors
        self._free = tuple(i for i, p in enumerate(priors) if not isinstance(p, Fixed))
        self.free_names = tuple(names[i] for i in self._free)
        self.free_priors = tuple(priors[i] for i in self._free)

    def __repr__(self):
        return f"JointPrior({', '.join(f'{n}: {p.describe()}' for n, p in zip(self.names, self.priors))})"

    def __len__(self):
        return len(self.free_names)

    @property
    def n_free(self) -> int:
        """Number of free parameters (the sampler's dimension)."""
        return len(self.free_names)

    def _check(self, theta):
        theta = np.asarray(theta, dtype=float)
        if theta.ndim != 2 or theta.shape[1] != self.n_free:
            raise ValueError(f"expected an array of shape (k, {self.n_free}) over "
                             f"{', '.join(self.free_names)}; got shape {theta.shape}")
        return theta

    def log_prob(self, theta):
        """Joint log prior density of each row of ``theta`` (k, m_free) -> (k,); −inf outside."""
        theta = self._check(theta)
        out = np.zeros(theta.shape[0])
        for j, prior in enumerate(self.free_priors):
            out += prior.log_pdf(theta[:, j])
        return np.where(np.isnan(out), -np.inf, out)        # NaN input: outside the support

    def transform(self, u):
        """Map unit-cube points (k, m_free) to parameter values (k, m_free)."""
        u = self._check(u)
        return np.stack([p.transform(u[:, j]) for j, p in enumerate(self.free_priors)],
                        axis=1) if self.n_free else np.empty_like(u)

    def sample(self, rng: np.random.Generator, k: int):
        """Draw ``k`` independent parameter sets, shape (k, m_free)."""
        return self.transform(rng.random((int(k), self.n_free)))

    def in_support(self, theta):
        """Whether each row of ``theta`` (k, m_free) lies in the support, bool (k,)."""
        theta = self._check(theta)
        ok = np.all(np.isfinite(theta), axis=1)
        for j, p in enumerate(self.free_priors):
            lo, hi = p.support
            ok &= (theta[:, j] >= lo) & (theta[:, j] <= hi)
        return ok

    def expand(self, theta) -> dict:
        """Mapping name -> (k, 1) array for every parameter, fixed ones included."""
        theta = self._check(theta)
        k = theta.shape[0]
        out = {}
        j = 0
        for i, (name, prior) in enumerate(zip(self.names, self.priors)):
            if i in self._free:
                out[name] = theta[:, j:j + 1].copy()
                j += 1
            else:
                out[name] = np.full((k, 1), prior.value)
        return out

    def prior_of(self, name: str) -> Prior:
        """The prior of the parameter ``name`` (free or fixed).

        Raises
        ------
        InputError
            No parameter of that name (the closest name is suggested).
        """
        if name not in self.names:
            raise InputError(f"unknown parameter '{name}'; "
                             + closest_key(name, self.names).replace("valid keys",
                                                                     "parameters"))
        return self.priors[self.names.index(name)]

    def bounds(self):
        """Support of each free parameter, a list of (lower, upper)."""
        return [p.support for p in self.free_priors]

    def to_spec(self) -> dict:
        """Mapping name -> declaration of every parameter."""
        return {n: p.to_spec() for n, p in zip(self.names, self.priors)}
