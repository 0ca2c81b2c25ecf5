"""Bayesian evidence ln Z from a tempered sequence from the prior (β = 0) to the posterior (β = 1).

Method: sequential Monte Carlo (SMC) samplers with adaptive tempering
-----------------------------------------------------------------------
The targets π_β(θ) ∝ π(θ) L(θ)^β bridge the prior and the posterior.  A population of N
particles drawn from the prior is reweighted, resampled and moved through them, with the
temperature steps chosen from the particles themselves; the evidence gains the log mean
incremental weight at every step (Del Moral, Doucet & Jasra 2006, eq. 14).  One population
is an *island*, run by :mod:`evidence1d.inference.tempering` (the steps and moves are
described there).

Why SMC rather than stepping-stone chains: the temperature ladder is chosen on the fly from
the particles themselves, every temperature is visited by a whole population in vectorised
likelihood calls (the cost of a physics model is dominated by the number of parameter sets,
not the number of calls), multimodal posteriors are handled by the resampling weights rather
than by chains that must cross between modes, and the result keeps a sample of every
tempered distribution for prior-sensitivity and per-dataset analyses.

Error bar: R independent populations ("islands") are run with independent random streams.
Each gives an unbiased estimate Ẑ_r of Z (Del Moral et al. 2006, Prop. 1; after the final
importance stage of :mod:`evidence1d.inference.importance`, Robert & Casella 2004, §3.3,
which is also unbiased when the moves lag); they are combined as
ln Z = ln[(1/R) Σ Ẑ_r] (log-mean-exp).  The standard error is s/√R with s the sample standard
deviation of ln Ẑ_r (delta method), times √((R − 1)/(R − 3)) so that the z-score, which
follows a Student t with R − 1 degrees of freedom, has unit variance (for R ≥ 4).  The test
suite checks the calibration on repeated runs.  The factor is 1.73 at R = 4 and 1.18 at
R = 8, so at a fixed cost the error bar is smaller with more islands, as long as each island
keeps enough particles: on the flagship case study the spread of the tempered ln Ẑ_r grew
from about 0.5 to 1.0 nat when N was halved from 200 to 100, faster than 1/√N.  With the
final importance stage the spread on the same case is about 0.04 nat (measured 2026-12-03);
the importance weights' own error, added in quadrature over the islands, is a floor under
the error bar.  The importance estimate needs the population only to shape its proposal, so
the default is N = 64 with R = 8 (:data:`~evidence1d.inference.tempering.DEFAULT_PARTICLES`,
where the measurement is): ln Z errors of 0.02–0.03 nat on the flagship at a third of the
evaluations of N = 200.

References
----------
.. [1] P. Del Moral, A. Doucet and A. Jasra, "Sequential Monte Carlo samplers", J. R. Stat.
   Soc. B 68, 411 (2006).
.. [2] Y. Zhou, A. M. Johansen and J. A. D. Aston, "Toward automatic model comparison: an
   adaptive sequential Monte Carlo approach", J. Comput. Graph. Stat. 25, 701 (2016).
"""
from __future__ import annotations

import math
import time
from dataclasses import dataclass, field

import numpy as np

from evidence1d.errors import InputError
from evidence1d.schema import Field, Spec, check_mapping, integer, real

from .progress import stage_bar
from .records import frozen_array
from .tempering import (DEFAULT_PARTICLES, IMPORTANCE_MIN_ESS, IslandRun,
                        importance_draws_of, log_mean_exp, run_island)

# IslandRun, run_island and log_mean_exp are defined in .tempering and used here
__all__ = ["EvidenceResult", "tempered_evidence", "island_seeds", "combine_islands",
           "island_error", "importance_error",
           "evidence_settings", "check_evidence_settings", "IslandRun", "run_island",
           "log_mean_exp"]


@dataclass(frozen=True)
class EvidenceResult:
    """Evidence from :func:`tempered_evidence`.

    Attributes
    ----------
    log_z, log_z_err : float
        ln Z and its standard error (nats).
    island_log_z : ndarray, shape (R,)
        ln Ẑ of each independent population.
    islands : tuple of IslandRun
        Every tempered population, schedule and log-likelihood.
    names : tuple of str
        Free-parameter names (columns of the samples).
    n_evaluations : int
        Parameter sets passed to the log-likelihood, all islands.
    wall_time : float
        Seconds.
    settings : dict
        Particles, islands, ρ and the move settings used.
    method : str
        One-line description of the estimator.
    warnings : tuple of str
    """

    log_z: float
    log_z_err: float
    island_log_z: np.ndarray
    islands: tuple
    names: tuple
    n_evaluations: int
    wall_time: float
    settings: dict
    method: str = ("sequential Monte Carlo with adaptive tempering (conditional ESS), "
                   "independent-t and random-walk moves fitted to the other half, then "
                   "importance sampling from a defensive t mixture fitted to the final "
                   "population; error from independent islands")
    warnings: tuple = field(default_factory=tuple)

    @property
    def posterior_samples(self) -> np.ndarray:
        """Equally weighted posterior samples (β = 1) of all islands, (R N, m)."""
        return np.concatenate([isl.samples[-1] for isl in self.islands])

    @property
    def efficiency(self) -> float:
        """1 / (wall time × error²), in 1/(s nat²); larger is better."""
        return 1.0 / max(self.wall_time * self.log_z_err**2, 1e-300)


def check_evidence_settings(prior, n_particles, n_islands, target_cess=0.5, moved=0.9) -> dict:
    """Check the settings of an evidence run (see :func:`tempered_evidence` for their
    meaning) with the schema engine.

    Returns
    -------
    dict
        ``n_particles``, ``n_islands`` (int), ``target_cess``, ``moved`` (float).

    Raises
    ------
    InputError
        No free parameter; a setting no evidence run can use, naming its key.
    """
    m = prior.n_free
    if m < 1:
        raise InputError("there is no free parameter to integrate over")
    fraction = real(0.0, 1.0, lower_open=True, upper_open=True)
    spec = Spec({"n_particles": Field(integer(2 * m + 4, note=f"2 m + 4 for m = {m}"),
                                      required=True, help="particles per island"),
                 "n_islands": Field(integer(2, note="two for an error bar"), required=True),
                 "target_cess": Field(fraction, default=0.5,
                                      help="conditional ESS fraction per temperature step"),
                 "moved": Field(fraction, default=0.9,
                                help="fraction of particles moved per temperature")},
                what="the evidence settings")
    return check_mapping({"n_particles": n_particles, "n_islands": n_islands,
                          "target_cess": target_cess, "moved": moved}, spec, "")


def island_seeds(rng, n_islands: int) -> list:
    """The independent random streams of the islands of one evidence run.

    :func:`tempered_evidence` draws its islands' streams with this function, so a caller
    that runs the islands itself (:func:`run_island`, e.g. on several processes) and
    combines them (:func:`combine_islands`) gets exactly the same numbers.

    Parameters
    ----------
    rng : numpy.random.Generator
        Parent stream (one integer is drawn from it).
    n_islands : int

    Returns
    -------
    list of numpy.random.SeedSequence
    """
    return np.random.SeedSequence(int(rng.integers(0, 2**63 - 1))).spawn(int(n_islands))


def combine_islands(islands, names, settings: dict, warnings=(), wall_time=None):
    """The evidence and its error bar from independent islands (see the module notes).

    Parameters
    ----------
    islands : sequence of IslandRun
        R ≥ 2 independent populations of the same problem.
    names : sequence of str
        Free-parameter names.
    settings : dict
        Recorded with the result.
    warnings : sequence of str
    wall_time : float, optional
        Seconds; default the sum of the islands' times (the time of one process running
        them one after the other).

    Returns
    -------
    EvidenceResult

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006), Prop. 1: unbiased Ẑ_r.
    """
    islands = tuple(islands)
    warnings = list(warnings)
    lz = np.array([isl.log_z for isl in islands])
    r = lz.size
    if r < 4:
        warnings.append(f"only {r} islands: the error bar is itself very uncertain; use ≥ 4")
    imp = [isl.importance for isl in islands if getattr(isl, "importance", None)]
    used = [d for d in imp if d.get("used")]
    err = island_error(lz, [importance_error(isl) for isl in islands])
    if imp and len(used) < len(imp):
        warnings.append(f"the final importance stage covered the posterior poorly on "
                        f"{len(imp) - len(used)} of {len(imp)} islands (effective sample size "
                        f"below {IMPORTANCE_MIN_ESS:.0%} of its draws): those islands keep the "
                        "tempered estimate, which is biased low when the moves did not "
                        "equilibrate (run more particles)")
    if used:
        shift = float(np.mean([isl.log_z - isl.log_z_tempered for isl in islands
                               if isl.importance and isl.importance.get("used")]))
        if abs(shift) > max(1.0, 3.0 * err):
            warnings.append(f"the tempered sequence alone gives ln Z {-shift:+.2f} nats from "
                            "the final importance estimate: its moves did not equilibrate "
                            "the population (the importance estimate is quoted)")
    if wall_time is None:
        wall_time = float(sum(isl.wall_time for isl in islands))
    return EvidenceResult(log_z=float(log_mean_exp(lz)), log_z_err=err,
                          island_log_z=frozen_array(lz), islands=islands, names=tuple(names),
                          n_evaluations=int(sum(isl.n_evaluations for isl in islands)),
                          wall_time=float(wall_time), settings=dict(settings),
                          warnings=tuple(dict.fromkeys(warnings)))


def island_error(log_z, floors=()) -> float:
    """Standard error of ln Z from independent islands (module notes).

    s/√R with s the sample standard deviation of the islands' ln Ẑ_r, times
    √((R − 1)/(R − 3)) for R ≥ 4 (unit-variance z-score of a Student t with R − 1 degrees of
    freedom), floored by the final importance weights' own error √(Σ e_r²)/R, since the
    spread of few islands can be small by chance.

    Parameters
    ----------
    log_z : array_like, shape (R,)
        ln Ẑ_r of each island (nats).
    floors : sequence of float
        Each island's importance error e_r (nats; 0 where it quotes its tempered estimate).

    Returns
    -------
    float
        Nats (∞ for one island).
    """
    v = np.asarray(log_z, dtype=float)
    r = v.size
    err = float(np.std(v, ddof=1) / math.sqrt(r)) if r > 1 else math.inf
    if r >= 4:
        err *= math.sqrt((r - 1.0) / (r - 3.0))
    if len(floors):
        err = max(err, float(math.sqrt(float(np.sum(np.square(floors))))) / r)
    return err


def importance_error(island) -> float:
    """The error e_r (nats) of an island's final importance estimate, 0 when the island
    quotes its tempered estimate (:func:`island_error`)."""
    imp = getattr(island, "importance", None) or {}
    return float(imp["log_z_err"]) if imp.get("used") else 0.0


def evidence_settings(n_particles=DEFAULT_PARTICLES, n_islands=8, target_cess=0.5, moved=0.9, min_sweeps=3,
                      max_sweeps=20, importance_draws=None) -> dict:
    """The settings record of an evidence run (as stored in :attr:`EvidenceResult.settings`);
    ``importance_draws`` per island (None: the default per particle of
    :data:`evidence1d.inference.tempering.IMPORTANCE_DRAWS_PER_PARTICLE`)."""
    return {"n_particles": int(n_particles), "n_islands": int(n_islands),
            "target_cess": target_cess, "moved": moved, "min_sweeps": int(min_sweeps),
            "max_sweeps": int(max_sweeps),
            "importance_draws": importance_draws_of(n_particles, importance_draws)}


def tempered_evidence(log_likelihood, prior, *, rng, n_particles=DEFAULT_PARTICLES, n_islands=8,
                      target_cess=0.5, moved=0.9, min_sweeps=3, max_sweeps=20,
                      max_temperatures=500, progress=True,
                      importance_draws=None) -> EvidenceResult:
    """Evidence ln Z = ln ∫ L(θ) π(θ) dθ by adaptive-tempering sequential Monte Carlo.

    See the module notes for the algorithm and the error estimate.  The islands run one
    after the other here; :func:`island_seeds`, :func:`run_island` and
    :func:`combine_islands` let a caller spread them over processes with the same result.

    Parameters
    ----------
    log_likelihood : callable
        Vectorised ``f(theta (k, m)) -> (k,)`` in nats, with the full normalisation; called
        only inside the prior support, on whole (half-)populations at a time.
    prior : JointPrior
        Prior over the m free parameters.
    rng : numpy.random.Generator
        Source of randomness; each island gets an independent child stream.
    n_particles : int
        Particles per island (N).
    n_islands : int
        Independent populations (R ≥ 2; ≥ 4 for the t-corrected error bar).
    target_cess : float
        Conditional-ESS fraction ρ in (0, 1) that sets the temperature steps.
    moved : float
        Fraction of particles expected to move at least once per temperature.
    min_sweeps, max_sweeps : int
        Bounds on the move sweeps per temperature.
    max_temperatures : int
        Safety limit on the schedule length.
    progress : bool or dict
        Show progress (in units of β per island; see :mod:`.progress`); a dict ``{"label": str,
        "position": int}`` names it and gives its line (for several runs at once).
    importance_draws : int, optional
        Draws of each island's final importance stage (default
        :data:`evidence1d.inference.tempering.IMPORTANCE_DRAWS_PER_PARTICLE` per particle;
        0 keeps the tempered estimate alone).

    Returns
    -------
    EvidenceResult

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006).
    .. [2] Zhou, Johansen & Aston, JCGS 25, 701 (2016).
    """
    checked = check_evidence_settings(prior, n_particles, n_islands, target_cess, moved)
    n_particles, n_islands = checked["n_particles"], checked["n_islands"]
    target_cess, moved = checked["target_cess"], checked["moved"]
    seeds = island_seeds(rng, n_islands)
    start = time.perf_counter()
    islands, warnings = [], []
    bar = stage_bar(float(n_islands), progress, "evidence", unit="β",
                    bar_format="{l_bar}{bar}| {n:.2f}/{total:.0f} [{elapsed}]")
    try:
        for seq in seeds:
            run, warn = run_island(log_likelihood, prior, seq, n_particles=n_particles,
                                   target_cess=target_cess, moved=moved,
                                   min_sweeps=min_sweeps, max_sweeps=max_sweeps,
                                   max_temperatures=max_temperatures, bar=bar,
                                   importance_draws=importance_draws)
            islands.append(run)
            if warn:
                warnings.append(warn)
    finally:
        bar.close()
    settings = evidence_settings(n_particles, n_islands, target_cess, moved, min_sweeps,
                                 max_sweeps, importance_draws)
    return combine_islands(islands, prior.free_names, settings, warnings,
                           wall_time=time.perf_counter() - start)
