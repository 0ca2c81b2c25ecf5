"""One tempered SMC population ("island") from the prior (β = 0) to the posterior (β = 1).

Method: sequential Monte Carlo (SMC) samplers with adaptive tempering
-----------------------------------------------------------------------
The targets π_β(θ) ∝ π(θ) L(θ)^β bridge the prior and the posterior.  A population of N
particles drawn from the prior is moved through them:

1. *Reweight.* The next temperature β' is found by bisection (Brent's method) so that the
   conditional effective sample size of the incremental weights w_i = L(θ_i)^(β'−β) is a fixed
   fraction ρ of the population (Zhou, Johansen & Aston 2016, eq. 3.9); the evidence gains
   ln[(1/N) Σ w_i] (Del Moral, Doucet & Jasra 2006, eq. 14).
2. *Resample* systematically (Kitagawa 1996), so the weights are equal again.
3. *Rejuvenate* with Metropolis–Hastings moves that leave π_β' invariant.  Each sweep splits
   the population in two halves and moves each half with proposals fitted to the *other*
   half (a red/blue split as in Goodman & Weare 2010: a particle never shapes its own
   proposal, which would break detailed balance at order 1/N and bias ln Z upwards): an
   independent proposal from a multivariate Student t (ν = 5) with the other half's mean
   and covariance (South, Pettitt & Drovandi 2019), then a random walk with that covariance
   scaled by a step adapted towards 25 % acceptance (Roberts, Gelman & Gilks 1997).  The
   number of sweeps per temperature is chosen so that a fraction ``moved`` of particles is
   expected to have moved at least once, ⌈ln(1 − moved)/ln(1 − acceptance)⌉ (Drovandi &
   Pettitt 2011, from memory), within [``min_sweeps``, ``max_sweeps``] (default [3, 20]).
4. After β = 1, a final importance stage (:mod:`evidence1d.inference.importance`) gives an
   estimate of Z that does not rely on the moves having equilibrated the population.  When
   its weights' effective sample size stays below :data:`IMPORTANCE_MIN_ESS` of the draws,
   the population is swept further at β = 1 (:data:`IMPORTANCE_SWEEPS` sweeps) and the proposal fitted
   again, up to :data:`IMPORTANCE_ROUNDS` times.  Measured on the coupled-chains family on
   chain data (J_⊥ piled at 0, 2 × 150 particles): the first proposals had ESS 13 and 28 of
   600 draws and the islands kept tempered estimates 1.5 nats low; after one round of 8
   sweeps ESS 54 and 31, direct ln K 7.95 ± 0.11 against the Savage–Dickey 8.05 ± 0.08.

Why at least 3 sweeps and not more: with the final importance stage the moves only have to
carry the population to the posterior, not equilibrate it for an unbiased tempered estimate.
Measured (2026-12-03, 8 islands × 200 particles, flagship case study, spinon family):
``min_sweeps`` = 5 gave ln Z = −1523.375 ± 0.015 with 160 000 likelihood evaluations, 2 gave
−1523.375 ± 0.014 with 107 000, the importance ESS 43–51 % of its draws in both.  On the
hard case of a coupled-chain posterior piled against J_⊥ = 0 (4 × 150 particles) the
``moved`` rule already asks for 6–7 sweeps per temperature, and 2 left one island of four
with an importance ESS of 1 % (a fallback to its tempered estimate); 3 keeps a margin there.

Parameters are moved in a working space where log-uniform parameters are replaced by their
logarithm (the Jacobian is included), so scale parameters spanning decades mix well.

The evidence of a model combines several independent islands
(:mod:`evidence1d.inference.evidence`).

References
----------
.. [1] P. Del Moral, A. Doucet and A. Jasra, "Sequential Monte Carlo samplers", J. R. Stat.
   Soc. B 68, 411 (2006).
.. [2] Y. Zhou, A. M. Johansen and J. A. D. Aston, "Toward automatic model comparison: an
   adaptive sequential Monte Carlo approach", J. Comput. Graph. Stat. 25, 701 (2016).
.. [3] L. F. South, A. N. Pettitt and C. C. Drovandi, "Sequential Monte Carlo samplers with
   independent Markov chain Monte Carlo proposals", Bayesian Analysis 14, 753 (2019).
.. [4] G. Kitagawa, "Monte Carlo filter and smoother for non-Gaussian nonlinear state space
   models", J. Comput. Graph. Stat. 5, 1 (1996): systematic resampling.
.. [5] C. C. Drovandi and A. N. Pettitt, "Estimation of parameters for macroparasite
   population evolution using approximate Bayesian computation", Biometrics 67, 225 (2011),
   from memory: number of MCMC repeats from the acceptance rate.
.. [6] J. Goodman and J. Weare, CAMCoS 5, 65 (2010): split-ensemble updates.
.. [7] G. O. Roberts, A. Gelman and W. R. Gilks, Ann. Appl. Probab. 7, 110 (1997).
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass

import numpy as np
from scipy import optimize, special

from evidence1d.errors import InputError
from evidence1d.inference.priors import LogUniform

from .importance import importance_evidence
from .records import frozen_array
from .target import LogTarget

__all__ = ["IslandRun", "run_island", "log_mean_exp", "systematic_resample",
           "DEFAULT_PARTICLES"]

#: Particles per island by default.  With the final importance stage the population only has
#: to carry the proposal to the posterior; measured on the flagship case study (full run,
#: 8 islands, 2026-12-04): 64 particles gave ln Z = −1162.769 ± 0.019, −2381.488 ± 0.025 and
#: −4317.610 ± 0.034 for the three families, against −1162.749 ± 0.009, −2381.479 ± 0.019
#: and −4317.627 ± 0.023 with 200, with 3 times fewer evaluations (38 800 against 114 700 for
#: the spinon family); the error-bar calibration test runs at this default
DEFAULT_PARTICLES = 64

#: Acceptance rate the random-walk step size is steered to (Roberts, Gelman & Gilks 1997).
_TARGET_ACC = 0.25

#: The final importance estimate replaces the tempered one when its effective sample size is
#: at least this fraction of its draws (common practice: below it the proposal missed part of
#: the posterior and the weights' variance estimate is itself unreliable)
IMPORTANCE_MIN_ESS = 0.05

#: Rounds of further equilibration at β = 1 (IMPORTANCE_SWEEPS sweeps of the population's own
#: moves) and a new proposal, at most, each only when the previous proposal's effective sample
#: size is below IMPORTANCE_MIN_ESS of its draws
IMPORTANCE_ROUNDS = 2
#: Sweeps of the population at β = 1 in each such round
IMPORTANCE_SWEEPS = 8

#: Draws of the final importance stage per particle.  The importance stage sets most of the
#: island-to-island spread of ln Z, so its draws buy precision cheaply: on the flagship at
#: 64 particles × 8 islands (2026-12-05, repeated runs, one core each), 24 draws per particle
#: instead of 6 cost 19 % more time for the ordered family and cut the spread of ln Z over
#: four seeds from 0.031 to 0.011 (own error 0.031 → 0.013); the spinon family took 22 % more
#: time for an error of 0.013 instead of 0.019.  64 draws gave no further gain (0.013, 0.011).
#: Earlier, 6 (coupled chains on chain data, 150 particles: ESS 10 % of the draws).
IMPORTANCE_DRAWS_PER_PARTICLE = 24
#: the same for a first look (``--quick``, campaign replicates): the spread of ln Z over seeds
#: is then 1.5–3.5 times larger (see above), still hundredths of a nat on the flagship
QUICK_IMPORTANCE_DRAWS_PER_PARTICLE = 6


def importance_draws_of(n_particles, importance_draws=None) -> int:
    """Draws of an island's final importance stage: ``importance_draws`` if given, else
    :data:`IMPORTANCE_DRAWS_PER_PARTICLE` × ``n_particles``."""
    return (IMPORTANCE_DRAWS_PER_PARTICLE * int(n_particles) if importance_draws is None
            else int(importance_draws))


def log_mean_exp(x, axis=None):
    """ln[(1/n) Σ exp(x_i)], computed stably.

    Parameters
    ----------
    x : array_like
        Log values (nats).
    axis : int, optional
        Axis to reduce.

    Returns
    -------
    float or ndarray

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006), eq. 14 (mean of weights).
    """
    x = np.asarray(x, dtype=float)
    n = x.size if axis is None else x.shape[axis]
    return special.logsumexp(x, axis=axis) - math.log(n)


def systematic_resample(rng, weights):
    """Indices drawn by systematic resampling from normalised ``weights`` (n,).

    References
    ----------
    .. [1] G. Kitagawa, J. Comput. Graph. Stat. 5, 1 (1996).
    """
    n = weights.shape[0]
    cdf = np.cumsum(weights)
    cdf[-1] = 1.0
    return np.searchsorted(cdf, (rng.random() + np.arange(n)) / n)


@dataclass(frozen=True)
class IslandRun:
    """One SMC population from β = 0 to 1 (arrays read-only).

    Attributes
    ----------
    log_z : float
        ln Ẑ of this population (nats).
    betas : ndarray, shape (T + 1,)
        Temperature schedule, 0 … 1.
    log_z_increments : ndarray, shape (T,)
        ln of the mean incremental weight at each step; they sum to ``log_z``.
    samples : ndarray, shape (T + 1, N, m)
        Equally weighted population at each β (after the moves), parameter units.
    log_likelihood : ndarray, shape (T + 1, N)
        ln L of those particles (nats).
    acceptance : ndarray, shape (T,)
        Mean Metropolis acceptance rate at each temperature.
    n_sweeps : ndarray, shape (T,)
        Move sweeps at each temperature.
    n_evaluations : int
        Parameter sets passed to the log-likelihood.
    wall_time : float
        Seconds.
    log_z_tempered : float
        ln Ẑ of the tempered sequence alone (nats); ``log_z`` is this unless the final
        importance stage was used.
    importance : dict or None
        The final importance stage (:func:`evidence1d.inference.importance.importance_evidence`:
        ``log_z``, ``log_z_err``, ``ess``, ``n_draws``, ``n_evaluations``) and ``used``
        (whether ``log_z`` is its estimate: its effective sample size reached
        :data:`IMPORTANCE_MIN_ESS` of its draws); None if not run.
    """

    log_z: float
    betas: np.ndarray
    log_z_increments: np.ndarray
    samples: np.ndarray
    log_likelihood: np.ndarray
    acceptance: np.ndarray
    n_sweeps: np.ndarray
    n_evaluations: int
    wall_time: float
    log_z_tempered: float = math.nan
    importance: dict | None = None


class _WorkSpace:
    """Working coordinates: log θ for log-uniform parameters, θ otherwise."""

    def __init__(self, prior):
        self.logged = np.array([isinstance(p, LogUniform) for p in prior.free_priors], bool)

    def to_work(self, theta):
        z = theta.copy()
        z[:, self.logged] = np.log(theta[:, self.logged])
        return z

    def from_work(self, z):
        """θ(z) and ln|dθ/dz| per row."""
        theta = z.copy()
        with np.errstate(over="ignore"):
            theta[:, self.logged] = np.exp(z[:, self.logged])
        return theta, z[:, self.logged].sum(axis=1)


def _next_beta(ll, beta, rho):
    """Largest β' ≤ 1 with conditional ESS fraction ≥ ρ (Zhou et al. 2016, eq. 3.9)."""
    finite = np.isfinite(ll)
    n_ok = max(int(finite.sum()), 1)
    top = np.max(ll[finite])
    d = np.where(finite, ll - top, 0.0)

    def frac(delta):
        w = np.where(finite, np.exp(delta * d), 0.0)
        return (w.sum() ** 2 / (w * w).sum()) / n_ok - rho

    if frac(1.0 - beta) >= 0.0:
        return 1.0
    delta = optimize.brentq(frac, 0.0, 1.0 - beta, xtol=1e-12, rtol=1e-10)
    return beta + max(delta, 1e-12)


def _metropolis(z, ll, lbase, beta, prop, log_q_ratio, call, prior, space, rng):
    """Metropolis–Hastings accept/reject of ``prop`` at temperature β, in place."""
    theta, logjac = space.from_work(prop)
    lp = prior.log_prob(theta) + logjac
    ok = np.isfinite(lp)
    ll_new = np.full(z.shape[0], -np.inf)
    ll_new[ok] = call(theta[ok])
    with np.errstate(invalid="ignore"):
        log_a = (lp + beta * ll_new) - (lbase + beta * ll) + log_q_ratio
    log_a = np.where(ok & np.isfinite(ll_new), log_a, -np.inf)
    acc = np.log(rng.random(z.shape[0])) < log_a
    z[acc], ll[acc], lbase[acc] = prop[acc], ll_new[acc], lp[acc]
    return float(acc.mean())


class _Proposals:
    """Moves fitted to the population at one temperature.

    * independent Metropolis–Hastings from a multivariate Student t (ν = 5) with the
      population mean and covariance (South, Pettitt & Drovandi 2019): near-independent
      draws when the tempered posterior is close to Gaussian;
    * random-walk Metropolis with the population covariance scaled by ``scale``
      (Chopin 2002; Roberts, Gelman & Gilks 1997): local moves for everything else.
    """

    nu = 5.0

    def __init__(self, z, scale):
        m = z.shape[1]
        self.mean = z.mean(axis=0)
        cov = np.atleast_2d(np.cov(z, rowvar=False))
        sd = np.sqrt(np.maximum(np.diag(cov), 0.0))
        sd = np.maximum(sd, 1e-12 * (np.abs(z).max(axis=0) + 1.0))
        corr = cov / np.outer(sd, sd)
        corr = 0.999 * corr + 0.001 * np.eye(m)      # keep it positive definite
        self.chol = sd[:, None] * np.linalg.cholesky(corr)
        self.scale = scale

    def _log_q(self, x):
        w = np.linalg.solve(self.chol, (x - self.mean).T)
        m = x.shape[1]
        return -0.5 * (self.nu + m) * np.log1p(np.sum(w * w, axis=0) / self.nu)

    def independent(self, z, rng):
        n, m = z.shape
        g = rng.standard_normal((n, m)) @ self.chol.T
        chi = rng.chisquare(self.nu, n) / self.nu
        prop = self.mean + g / np.sqrt(chi)[:, None]
        return prop, self._log_q(z) - self._log_q(prop)

    def local(self, z, rng):
        prop = z + self.scale * rng.standard_normal(z.shape) @ self.chol.T
        return prop, np.zeros(z.shape[0])


def _split_sweep(z, ll, lbase, beta, scale, call, prior, space, rng):
    """One sweep: each half of the population is moved by proposals fitted to the other half.

    Fitting the moves to the other half keeps a particle from shaping its own proposal, which
    would otherwise break detailed balance at order 1/N (the red/blue split of Goodman & Weare
    2010).  Returns the acceptance rates of the independent and the local moves.
    """
    n = z.shape[0]
    order = rng.permutation(n)
    halves = (np.sort(order[: n // 2]), np.sort(order[n // 2:]))
    acc_i = acc_l = 0.0
    for move, fit in (halves, halves[::-1]):
        props = _Proposals(z[fit], scale)
        zm, lm, bm = z[move], ll[move], lbase[move]
        prop, lq = props.independent(zm, rng)
        acc_i += _metropolis(zm, lm, bm, beta, prop, lq, call, prior, space, rng) * move.size
        prop, lq = props.local(zm, rng)
        acc_l += _metropolis(zm, lm, bm, beta, prop, lq, call, prior, space, rng) * move.size
        z[move], ll[move], lbase[move] = zm, lm, bm
    return acc_i / n, acc_l / n


def _run_island(call, prior, rng, n, rho, moved, min_sweeps, max_sweeps, max_temps, bar,
                importance_draws=0):
    start = time.perf_counter()
    n0 = call.n_evaluations
    m = prior.n_free
    space = _WorkSpace(prior)
    theta = prior.sample(rng, n)
    ll = call(theta)
    if not np.isfinite(ll).any():
        raise InputError(f"the likelihood is zero at all {n} prior draws; check the data, "
                         "the model and the priors")
    z = space.to_work(theta)
    lbase = prior.log_prob(theta) + space.from_work(z)[1]
    beta, log_z = 0.0, 0.0
    scale, acc = 2.38 / math.sqrt(m), 0.3
    betas, incs, samples, lls, accs, sweeps = [0.0], [], [theta], [ll.copy()], [], []
    warn = None
    while beta < 1.0:
        new = _next_beta(ll, beta, rho) if len(betas) < max_temps else 1.0
        if len(betas) >= max_temps and warn is None:
            warn = f"reached {max_temps} temperatures; jumped to β = 1 (raise max_temperatures)"
        logw = np.where(np.isfinite(ll), (new - beta) * ll, -np.inf)
        inc = log_mean_exp(logw)
        log_z += inc
        w = np.exp(logw - special.logsumexp(logw))
        idx = systematic_resample(rng, w)
        z, ll, lbase = z[idx], ll[idx], lbase[idx]
        if bar is not None:
            bar.update(new - beta)
        beta = new
        k_sweeps = int(np.clip(math.ceil(math.log(1.0 - moved) / math.log(max(1.0 - acc, 1e-9))),
                               min_sweeps, max_sweeps))
        rates_i, rates_l = [], []
        for _ in range(k_sweeps):
            ri, rl = _split_sweep(z, ll, lbase, beta, scale, call, prior, space, rng)
            rates_i.append(ri)
            rates_l.append(rl)
        acc_l = max(float(np.mean(rates_l)), 1e-3)
        # A particle moves in a sweep unless both of its proposals are rejected.
        acc = 1.0 - (1.0 - float(np.mean(rates_i))) * (1.0 - acc_l)
        scale = float(np.clip(scale * math.exp(acc_l - _TARGET_ACC), 0.01, 3.0))
        betas.append(beta)
        incs.append(inc)
        samples.append(space.from_work(z)[0])
        lls.append(ll.copy())
        accs.append(acc)
        sweeps.append(k_sweeps)
    imp, final = None, float(log_z)
    if importance_draws:
        imp = importance_evidence(call, prior, space, z, rng, int(importance_draws))
        for _ in range(IMPORTANCE_ROUNDS):
            if not (imp["ess"] < IMPORTANCE_MIN_ESS * imp["n_draws"]
                    and math.isfinite(imp["log_z"])):
                break
            # the proposal covered the posterior poorly: the population lags behind the
            # posterior (typically one piled at a bound), so it is equilibrated further at
            # β = 1 by the same moves and the proposal fitted again; only the new round's
            # fresh draws make the estimate, so it stays unbiased
            spent, rounds = imp["n_evaluations"], imp.get("adapted", 0)
            n_before = call.n_evaluations
            for _ in range(IMPORTANCE_SWEEPS):
                _split_sweep(z, ll, lbase, 1.0, scale, call, prior, space, rng)
            samples[-1], lls[-1] = space.from_work(z)[0], ll.copy()
            imp = importance_evidence(call, prior, space, z, rng, int(importance_draws))
            imp["n_evaluations"] = spent + call.n_evaluations - n_before   # sweeps and draws
            imp["adapted"] = rounds + 1
        imp["used"] = bool(imp["ess"] >= IMPORTANCE_MIN_ESS * imp["n_draws"]
                           and math.isfinite(imp["log_z"]))
        if imp["used"]:
            final = imp["log_z"]
    run = IslandRun(log_z=final, betas=frozen_array(betas), log_z_increments=frozen_array(incs),
                    samples=frozen_array(np.stack(samples)), log_likelihood=frozen_array(np.stack(lls)),
                    acceptance=frozen_array(accs), n_sweeps=frozen_array(sweeps),
                    n_evaluations=call.n_evaluations - n0, wall_time=time.perf_counter() - start,
                    log_z_tempered=float(log_z), importance=imp)
    return run, warn


def run_island(log_likelihood, prior, seed, *, n_particles=DEFAULT_PARTICLES, target_cess=0.5, moved=0.9,
               min_sweeps=3, max_sweeps=20, max_temperatures=500, bar=None,
               importance_draws=None):
    """One tempered population from the prior (β = 0) to the posterior (β = 1), then a
    final importance estimate of Z from a proposal fitted to it
    (:mod:`evidence1d.inference.importance`).

    Parameters
    ----------
    log_likelihood : callable
        Vectorised ``f(theta (k, m)) -> (k,)`` in nats.
    prior : JointPrior
    seed : numpy.random.SeedSequence
        This island's stream (from :func:`evidence1d.inference.evidence.island_seeds`).
    n_particles, target_cess, moved, min_sweeps, max_sweeps, max_temperatures
        As in :func:`evidence1d.inference.evidence.tempered_evidence`.
    bar : progress display, optional
        Advanced by the β steps.
    importance_draws : int, optional
        Draws of the final importance stage (default
        :data:`IMPORTANCE_DRAWS_PER_PARTICLE` × ``n_particles``; 0: none, the tempered
        estimate alone).

    Returns
    -------
    IslandRun
    warning : str or None
        Set if the schedule hit ``max_temperatures``.

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006).
    .. [2] Hesterberg, Technometrics 37, 185 (1995): the defensive importance stage.
    """
    draws = importance_draws_of(n_particles, importance_draws)
    return _run_island(LogTarget(log_likelihood), prior, np.random.default_rng(seed),
                       int(n_particles), target_cess, moved, int(min_sweeps),
                       int(max_sweeps), int(max_temperatures), bar, importance_draws=draws)
