"""Posterior sampling with the emcee ensemble sampler, HDF5 checkpoints and resume.

The sampler knows no physics: it receives a vectorised log-likelihood ``f(theta)`` with
``theta`` of shape (k, m) returning (k,), and a :class:`~evidence1d.inference.priors.JointPrior`
over the m free parameters.  The likelihood is only evaluated inside the prior support.

Choices, stated once:

* **Moves.** The mixtures of :mod:`evidence1d.inference.moves`: local ensemble moves,
  and independence proposals from a population of posterior draws when one is given.
* **Initialisation.** ``max(20 n_walkers, 200)`` prior draws; the best one is refined by a
  short Nelder–Mead optimisation; walkers start in a Gaussian ball around the optimum whose
  widths are half the conditional posterior widths from a finite-difference curvature along
  each axis.  Starting points outside the support or with −inf probability are redrawn.
* **Burn-in and thinning.** From the integrated autocorrelation time τ of each parameter
  (emcee's estimator, ``tol=0``; Sokal 1997, Goodman & Weare 2010): burn-in = 5 max τ
  (safety factor 5, common practice; capped at half the chain), thinning = max(1, ⌊τ_min/2⌋)
  (emcee documentation, common practice).
* **Length.** ``n_steps`` is the most steps.  With a target ``ess`` the chain stops at the
  first multiple of :data:`STOP_CHECK_EVERY` steps (from :data:`STOP_MIN_STEPS` on) where the
  post-burn-in chain passes every convergence check of
  :func:`evidence1d.inference.diagnostics.diagnose` (R-hat, length over τ, ESS > 400) and
  the bulk and tail ESS of every parameter reach ``ess``: the "run until converged" rule of
  the emcee documentation (check τ every 100 steps, stop when the chain is long enough for
  it; Foreman-Mackey, emcee documentation, "Saving & monitoring progress", common practice)
  with the ESS of Vehtari et al. (2021) as the measure of "enough".  The decision at a step
  depends only on the chain up to it, so a resumed run stops where an uninterrupted one does.
* **Randomness.** emcee draws from a ``numpy.random.RandomState``; it is seeded from a seed
  drawn from the caller's ``numpy.random.Generator``.  Its state is stored with every
  checkpoint, so a resumed run continues with exactly the numbers an uninterrupted run
  would have used.

References
----------
.. [1] D. Foreman-Mackey, D. W. Hogg, D. Lang and J. Goodman, "emcee: The MCMC Hammer",
   PASP 125, 306 (2013).
.. [2] J. Goodman and J. Weare, "Ensemble samplers with affine invariance", Commun. Appl.
   Math. Comput. Sci. 5, 65 (2010).
.. [3] A. D. Sokal, "Monte Carlo methods in statistical mechanics", in *Functional
   Integration* (Springer, 1997), pp. 131–192.
"""
from __future__ import annotations

import math
import os
from dataclasses import dataclass, field

import emcee
import numpy as np
from scipy import optimize

from evidence1d.errors import InputError
from evidence1d.schema import Field, Spec, check_mapping, integer

from .moves import (POPULATION_WEIGHT, PopulationProposal, Tallied, default_moves,
                    move_acceptance, population_moves)
from .progress import stage_bar
from .records import frozen_array
from .target import LogTarget

# the moves are defined in .moves; these names stay importable from here
__all__ = ["PosteriorResult", "sample_posterior", "converged_enough", "BURN_IN_FACTOR",
           "THIN_FACTOR", "STOP_CHECK_EVERY", "STOP_MIN_STEPS",
           "default_moves", "population_moves", "PopulationProposal", "POPULATION_WEIGHT",
           "LogTarget", "population_start"]

#: Burn-in = BURN_IN_FACTOR × max τ (common practice).
BURN_IN_FACTOR = 5.0
#: Thinning = max(1, ⌊THIN_FACTOR × min τ⌋) (common practice, emcee documentation).
THIN_FACTOR = 0.5
_GROUP = "mcmc"
#: steps between the checks of the stopping rule (module notes)
STOP_CHECK_EVERY = 100
#: no stop before this many steps
STOP_MIN_STEPS = 200


@dataclass(frozen=True)
class PosteriorResult:
    """Outcome of :func:`sample_posterior` (arrays are read-only).

    Attributes
    ----------
    names : tuple of str
        Free-parameter names, the column order of every array.
    chain : ndarray, shape (n_steps, n_walkers, m)
        Every step of every walker, parameter units.
    log_prob : ndarray, shape (n_steps, n_walkers)
        Log posterior (up to the evidence) of each chain point, nats.
    samples : ndarray, shape (n_samples, m)
        ``chain[burn_in::thin]`` flattened over walkers.
    samples_log_prob : ndarray, shape (n_samples,)
        Their log posterior.
    burn_in, thin : int
        Discarded steps and thinning interval.
    tau : ndarray, shape (m,)
        Integrated autocorrelation time of each parameter, in steps.
    acceptance_fraction : ndarray, shape (n_walkers,)
        Fraction of accepted proposals per walker.
    n_evaluations : int
        Parameter sets passed to the log-likelihood in this session.
    resumed_from : int
        Steps read from the checkpoint (0 for a fresh run).
    warnings : tuple of str
        Problems noticed while choosing burn-in (chain too short for its τ).
    population_moves : bool
        Most moves were independence proposals from a population (:func:`population_moves`).
    move_acceptance : dict
        ``{"population": f, "local": f}``: acceptance fractions of the population proposals
        and of the local moves in this session's steps (empty for a chain read whole from
        its checkpoint).
    max_steps : int
        The most steps allowed (``n_steps`` of :func:`sample_posterior`).
    stop_rule : str
        Why the chain ended: the stopping rule met at its length, or "" (every step run).
    """

    names: tuple
    chain: np.ndarray
    log_prob: np.ndarray
    samples: np.ndarray
    samples_log_prob: np.ndarray
    burn_in: int
    thin: int
    tau: np.ndarray
    acceptance_fraction: np.ndarray
    n_evaluations: int
    resumed_from: int = 0
    warnings: tuple = field(default_factory=tuple)
    population_moves: bool = False
    move_acceptance: dict = field(default_factory=dict)
    max_steps: int = 0
    stop_rule: str = ""
    burn_in_rule: str = (f"burn-in = {BURN_IN_FACTOR:g} × max τ (capped at half the chain); "
                         f"thin = max(1, ⌊{THIN_FACTOR:g} × min τ⌋)")

    @property
    def n_steps(self) -> int:
        return int(self.chain.shape[0])

    @property
    def n_walkers(self) -> int:
        return int(self.chain.shape[1])


def _settings_spec(m: int) -> Spec:
    """The checks of the sampler settings for m free parameters."""
    return Spec({"n_steps": Field(integer(2), required=True, help="steps per walker"),
                 "n_walkers": Field(integer(2 * m + 2, note=f"2 m + 2 for m = {m}"),
                                    required=True, help="walkers"),
                 "checkpoint_every": Field(integer(1), default=100,
                                           help="steps between checkpoint writes")},
                what="the posterior sampler settings")


def _burn_thin(chain):
    """τ of each parameter, burn-in and thinning of a chain (module notes), and a warning
    when the chain is too short for its τ (or None)."""
    tau = np.atleast_1d(emcee.autocorr.integrated_time(chain, tol=0))
    tau = np.where(np.isfinite(tau), tau, chain.shape[0])
    burn_in = int(math.ceil(BURN_IN_FACTOR * float(np.max(tau))))
    warning = None
    if burn_in > chain.shape[0] // 2:
        warning = (f"the chain ({chain.shape[0]} steps) is shorter than 10 τ "
                   f"(τ_max = {np.max(tau):.1f} steps): burn-in capped at half the chain, "
                   "so the samples may still remember the start; run more steps")
        burn_in = chain.shape[0] // 2
    thin = max(1, int(THIN_FACTOR * float(np.min(tau))))
    return tau, burn_in, thin, warning


def converged_enough(chain, ess):
    """The stopping rule of the module notes on a chain so far: (met, reason).

    Parameters
    ----------
    chain : ndarray, shape (n_steps, n_walkers, m)
        Every step so far.
    ess : float
        Bulk and tail effective sample size that every parameter must reach.  The acceptance
        range of :func:`evidence1d.inference.diagnostics.diagnose` is not part of the rule
        (it does not measure mixing; the run's diagnostics report it).

    Returns
    -------
    (bool, str)
        Whether to stop, and the rule as met (for the record) or "".

    References
    ----------
    .. [1] Vehtari et al., Bayesian Analysis 16, 667 (2021).
    .. [2] Foreman-Mackey et al., PASP 125, 306 (2013); emcee documentation (common practice).
    """
    from .diagnostics import diagnose
    tau, burn_in, _, warning = _burn_thin(chain)
    if warning is not None:
        return False, ""
    d = diagnose(chain[burn_in:], [f"p{j}" for j in range(chain.shape[2])], tau=tau)
    worst = min(min(d.ess_bulk.values()), min(d.ess_tail.values()))
    if not d.ok or any(w.startswith("note:") for w in d.warnings) or worst < ess:
        return False, ""
    return True, (f"stopped after {chain.shape[0]} steps: every check passed and the "
                  f"smallest bulk or tail ESS, {worst:.0f}, reached the target {ess:.0f}")


def _initial_walkers(target, prior, rng, n_walkers, optimise):
    m = prior.n_free
    draws = prior.sample(rng, max(20 * n_walkers, 200))
    lp = target(draws)
    finite = np.isfinite(lp)
    if not finite.any():
        raise InputError(f"none of {draws.shape[0]} prior draws has a finite log-probability; "
                         "check that the data and the priors are compatible")
    best = draws[np.argmax(lp)]
    best_lp = float(np.max(lp))
    spread = np.std(draws[finite], axis=0) if finite.sum() > 1 else np.abs(best) + 1.0
    spread = np.where(spread > 0, spread, 1e-3 * (np.abs(best) + 1e-3))
    if optimise:
        def neg(x):
            v = target(x[None, :])[0]
            return -v if np.isfinite(v) else 1e300
        res = optimize.minimize(neg, best, method="Nelder-Mead",
                                options={"maxfev": 200 * m, "xatol": 1e-9, "fatol": 1e-9})
        if np.isfinite(res.fun) and -res.fun > best_lp:
            best, best_lp = res.x, -res.fun
    # Conditional widths from a central second difference along each axis (one batch call).
    h = 1e-4 * spread
    steps = np.concatenate([np.diag(h), -np.diag(h)])
    around = target(best[None, :] + steps)
    curv = (around[:m] + around[m:] - 2.0 * best_lp) / h**2
    width = np.where(np.isfinite(curv) & (curv < 0), 1.0 / np.sqrt(np.abs(curv)), 1e-3 * spread)
    width = np.minimum(width, spread)
    walkers = np.empty((0, m))
    for _ in range(200):
        cand = best + 0.5 * width * rng.standard_normal((n_walkers, m))
        good = cand[np.isfinite(target(cand))]
        walkers = np.concatenate([walkers, good])[:n_walkers]
        if walkers.shape[0] == n_walkers:
            return walkers
        width = 0.5 * width
    raise InputError("could not place the walkers inside the support around the optimum; "
                     "give starting points with initial=")


def population_start(population, n_walkers, rng):
    """Distinct starting walkers drawn from a population of posterior draws.

    A resampled population repeats points, and two walkers at the same point break the
    snooker move of differential evolution (its direction x − z is 0/0; ter Braak & Vrugt
    2008), so every walker starts at a distinct point.  Distinct rows are drawn without
    replacement; when there are fewer than ``n_walkers`` of them, the others are copies
    moved a random 10⁻⁴–10⁻³ of the way towards another distinct row (inside the convex
    hull of the population, so inside a box-shaped prior support).

    Parameters
    ----------
    population : ndarray, shape (n, m)
        Posterior draws in parameter units (e.g. the final tempered population).
    n_walkers : int
    rng : numpy.random.Generator

    Returns
    -------
    ndarray, shape (n_walkers, m)
        Pairwise distinct starting points (parameter units), unless the population holds a
        single distinct point.
    """
    pop = np.atleast_2d(np.asarray(population, dtype=float))
    distinct = np.unique(pop, axis=0)
    d = distinct.shape[0]
    if d >= n_walkers:
        return distinct[rng.choice(d, size=n_walkers, replace=False)]
    if d == 1:
        return np.repeat(distinct, n_walkers, axis=0)
    n_more = n_walkers - d
    src = rng.integers(0, d, size=n_more)
    other = (src + rng.integers(1, d, size=n_more)) % d          # a different distinct row
    step = rng.uniform(1e-4, 1e-3, size=(n_more, 1))
    moved = distinct[src] + step * (distinct[other] - distinct[src])
    return np.concatenate([distinct[rng.permutation(d)], moved])


def _write_block(backend, coords, log_prob, accepted_delta, random_state):
    """Append steps to an emcee HDFBackend file in its own layout (chain, log_prob, accepted)."""
    n = coords.shape[0]
    backend.grow(n, None)
    with backend.open("a") as f:
        g = f[backend.name]
        it = int(g.attrs["iteration"])
        g["chain"][it:it + n] = coords
        g["log_prob"][it:it + n] = log_prob
        g["accepted"][:] += accepted_delta
        for i, v in enumerate(random_state):
            g.attrs[f"random_state_{i}"] = v
        g.attrs["iteration"] = it + n


def _open_checkpoint(path, resume, names, n_walkers, m):
    backend = emcee.backends.HDFBackend(str(path), name=_GROUP)
    stored, iteration = None, 0
    if resume and os.path.exists(path):
        try:
            if backend.initialized:
                with backend.open() as f:
                    g = f[_GROUP]
                    stored = tuple(s.decode() if isinstance(s, bytes) else str(s)
                                   for s in g.attrs.get("parameter_names", ()))
                iteration = int(backend.iteration)
        except (OSError, KeyError, ValueError):
            # a file damaged by a kill in mid-write holds no usable step: start afresh
            os.remove(path)
            stored = None
        if stored is not None and not stored and iteration == 0:
            stored = None   # killed between creating the file and naming its parameters
    if stored is not None:
        if backend.shape != (n_walkers, m) or stored != tuple(names):
            raise InputError(f"the checkpoint holds {backend.shape[0]} walkers over "
                             f"({', '.join(stored)}), not {n_walkers} over "
                             f"({', '.join(names)}); start afresh without resume",
                             file=path)
        return backend, iteration
    if os.path.exists(path):
        os.remove(path)     # a fresh file: the HDF5 library may refuse to reopen a damaged one
    backend.reset(n_walkers, m)
    with backend.open("a") as f:
        f[_GROUP].attrs["parameter_names"] = np.array(names, dtype="S")
    return backend, 0


def sample_posterior(log_prob, prior, *, rng, n_walkers=None, n_steps, initial=None,
                     moves=None, checkpoint=None, resume=False, progress=True,
                     checkpoint_every=100, add_prior=True, optimise=True,
                     population=None, ess=None) -> PosteriorResult:
    """Sample the posterior with emcee's ensemble sampler (vectorised).

    Parameters
    ----------
    log_prob : callable
        Vectorised log-likelihood ``f(theta (k, m)) -> (k,)`` in nats; the log prior is added
        (``add_prior=False`` if ``log_prob`` already includes it).
    prior : JointPrior
        Prior over the m free parameters (columns in ``prior.free_names`` order).
    rng : numpy.random.Generator
        Source of all randomness (initialisation and the seed of emcee's RandomState).
    n_walkers : int, optional
        Walkers; default ``max(32, 4 m)`` rounded up to even.
    n_steps : int
        Total steps (including any read from the checkpoint); the most steps when ``ess``
        is given.
    initial : ndarray, optional
        Starting walkers (n_walkers, m) inside the support, or one point (m,) to start a
        small ball around; default: optimised prior draws (see the module notes).
    moves : list, optional
        emcee moves with weights; default :func:`population_moves` if ``population`` is
        given, :func:`default_moves` otherwise.
    checkpoint : str or pathlib.Path, optional
        HDF5 file (emcee HDFBackend layout, group ``"mcmc"``) written every
        ``checkpoint_every`` steps with the random state.
    resume : bool
        Continue from ``checkpoint`` if it holds steps (a fresh start otherwise).
    progress : bool or dict
        Show progress (see :mod:`.progress`); a dict ``{"label": str, "position": int}``
        names it and gives its line (for several runs at once).
    checkpoint_every : int
        Steps between checkpoint writes.
    add_prior : bool
        Add ``prior.log_prob`` to ``log_prob``.
    optimise : bool
        Refine the best prior draw by Nelder–Mead before placing walkers.
    population : ndarray (n, m), optional
        Draws from (close to) the posterior, such as the final population of
        :func:`~evidence1d.inference.evidence.tempered_evidence`; they define the
        independence proposal of :func:`~evidence1d.inference.moves.population_moves`.
    ess : float, optional
        Stop early once every convergence check passes and the bulk and tail effective
        sample size of every parameter reach ``ess`` (checked every
        :data:`STOP_CHECK_EVERY` steps from :data:`STOP_MIN_STEPS` on; module notes).
        None or 0: run all ``n_steps``.

    Returns
    -------
    PosteriorResult

    Raises
    ------
    InputError
        Bad sizes, starting points outside the support, a checkpoint of another problem.

    References
    ----------
    .. [1] Foreman-Mackey et al., PASP 125, 306 (2013).
    .. [2] Goodman & Weare, CAMCoS 5, 65 (2010): integrated autocorrelation time.
    """
    m = prior.n_free
    if m < 1:
        raise InputError("there is no free parameter to sample")
    if n_walkers is None:
        n_walkers = max(32, 4 * m)
        n_walkers += n_walkers % 2
    checked = check_mapping({"n_steps": n_steps, "n_walkers": n_walkers,
                             "checkpoint_every": checkpoint_every}, _settings_spec(m), "")
    n_steps, n_walkers = checked["n_steps"], checked["n_walkers"]
    checkpoint_every = checked["checkpoint_every"]
    target = LogTarget(log_prob, prior, add_prior=add_prior)
    seed = int(rng.integers(0, 2**32 - 1))

    backend, start = (None, 0)
    if checkpoint is not None:
        backend, start = _open_checkpoint(checkpoint, resume, prior.free_names, n_walkers, m)
    if moves is None:
        moves = default_moves() if population is None else population_moves(population)
    tallied = [(Tallied(mv), w) for mv, w in moves]
    independence = any(t.is_population and w >= 0.5 * sum(wt for _, wt in tallied)
                       for t, w in tallied)
    sampler = emcee.EnsembleSampler(n_walkers, m, target, vectorize=True, moves=tallied)
    # call the target directly: emcee's wrapper prints a traceback of every exception it
    # sees (a Ctrl-C included) before re-raising it
    sampler.log_prob_fn = target
    if start > 0:
        rs = backend.random_state
        last = backend.get_last_sample()
        state = emcee.State(last.coords, log_prob=last.log_prob, random_state=tuple(rs))
    else:
        if initial is None:
            coords = _initial_walkers(target, prior, rng, n_walkers, optimise)
        else:
            coords = np.asarray(initial, dtype=float)
            if coords.ndim == 1:
                if coords.shape != (m,):
                    raise InputError(f"initial point must have {m} values; got {coords.shape}")
                width = 1e-4 * (np.abs(coords) + 1e-4)
                coords = coords + width * rng.standard_normal((n_walkers, m))
            if coords.shape != (n_walkers, m):
                raise InputError(f"initial walkers must have shape ({n_walkers}, {m}); "
                                 f"got {coords.shape}")
            repeats = n_walkers - np.unique(coords, axis=0).shape[0]
            if repeats:
                raise InputError(f"{repeats} initial walkers repeat another one; walkers must "
                                 "start at distinct points (population_start draws them)")
        lp0 = target(coords)
        if not np.all(np.isfinite(lp0)):
            raise InputError(f"{int(np.sum(~np.isfinite(lp0)))} starting walkers lie outside "
                             "the prior support or have zero likelihood")
        state = emcee.State(coords, log_prob=lp0,
                            random_state=np.random.RandomState(seed).get_state())
    remaining = n_steps - start
    warnings = []
    stop_rule = ""
    adaptive = bool(ess) and ess > 0

    def check(steps_so_far, chain_so_far):
        if not adaptive or steps_so_far < STOP_MIN_STEPS or steps_so_far % STOP_CHECK_EVERY:
            return False
        nonlocal stop_rule
        met, stop_rule = converged_enough(chain_so_far, float(ess))
        return met

    stored = backend.get_chain() if (adaptive and start > 0) else None   # steps before
    if remaining > 0 and stored is not None and check(start, stored):
        remaining = 0        # the stored chain already met the rule where it ended
    if remaining > 0:
        bar = stage_bar(n_steps, progress, "posterior", unit="step", initial=start)
        done = written = 0
        acc_saved = np.zeros(n_walkers)
        try:
            for st in sampler.sample(state, iterations=remaining, store=True,
                                     skip_initial_state_check=start > 0):
                done += 1
                bar.update(1)
                stop = False
                if adaptive and (start + done) % STOP_CHECK_EVERY == 0:
                    so_far = sampler.backend.chain[:done]
                    if stored is not None:
                        so_far = np.concatenate([stored, so_far])
                    stop = check(start + done, so_far)
                if backend is not None and (done % checkpoint_every == 0 or done == remaining
                                            or stop):
                    acc = sampler.backend.accepted.copy()
                    _write_block(backend, sampler.backend.chain[written:done],
                                 sampler.backend.log_prob[written:done], acc - acc_saved,
                                 st.random_state)
                    acc_saved, written = acc, done
                if stop:
                    break
        finally:
            bar.close()
    if backend is not None:
        chain, lps = backend.get_chain(), backend.get_log_prob()
        accepted = backend.accepted
    else:
        chain, lps = sampler.get_chain(), sampler.get_log_prob()
        accepted = sampler.backend.accepted
    accept = accepted / chain.shape[0]
    tau, burn_in, thin, warning = _burn_thin(chain)
    if warning is not None:
        warnings.append(warning)
    if target.n_nonfinite:
        warnings.append(f"{target.n_nonfinite} likelihood values inside the support were NaN "
                        "or +inf and were treated as zero likelihood; check the model")
    kept = chain[burn_in::thin]
    return PosteriorResult(
        names=tuple(prior.free_names), chain=frozen_array(chain), log_prob=frozen_array(lps),
        samples=frozen_array(kept.reshape(-1, m)),
        samples_log_prob=frozen_array(lps[burn_in::thin].reshape(-1)), burn_in=burn_in, thin=thin,
        tau=frozen_array(tau), acceptance_fraction=frozen_array(accept),
        n_evaluations=target.n_evaluations, resumed_from=start, warnings=tuple(warnings),
        population_moves=independence,
        move_acceptance=move_acceptance([t for t, _ in tallied]),
        max_steps=int(n_steps), stop_rule=stop_rule if chain.shape[0] < n_steps else "")
