"""Speed harness of evidence1d: kernels, likelihood, evidence against dynesty, a full run.

Run by hand from the repository root (not a test)::

    python benchmarks/run.py            # full run, about 10-20 minutes on 2 cores
    python benchmarks/run.py --quick    # smoke run, a minute or two
    python benchmarks/run.py --profile spinon_continuum   # cProfile of one evidence run

It prints a table and writes ``benchmarks/results.json`` (``--out`` to write elsewhere) with
the machine, the package versions and the date: (1) kernel throughput on a 3000-point
single-crystal map, batch of 32; (2) flagship log-likelihood evaluations per second; (3) the
evidence of each flagship family with the case's settings and :func:`evidence1d.run`'s seeds;
(4) the same by dynesty's static nested sampler with its defaults on ``Case.log_likelihood``
/ ``Case.prior_transform``, and the efficiency ratio 1/(time × error²) ours/dynesty; (5) wall
time and peak memory of a full flagship run in a fresh process.  ``benchmarks/README.md``
gives the details and the targets.  Every ratio is measured within one run, so that it stays
meaningful on a noisy shared machine.

References
----------
.. [1] J. S. Speagle, "dynesty: a dynamic nested sampling package for estimating Bayesian
   posteriors and evidences", MNRAS 493, 3132 (2020).
.. [2] J. Skilling, "Nested sampling for general Bayesian computation", Bayesian Analysis 1,
   833 (2006).
.. [3] P. Del Moral, A. Doucet and A. Jasra, "Sequential Monte Carlo samplers", J. R. Stat.
   Soc. B 68, 411 (2006).
"""
from __future__ import annotations

import argparse
import datetime as _dt
import json
import os
import platform
import subprocess
import sys
import tempfile
import textwrap
import time
import warnings
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

import evidence1d  # noqa: E402
from evidence1d.inference.evidence import tempered_evidence  # noqa: E402
from evidence1d.runner import effective_settings  # noqa: E402
from evidence1d.simulate import write_template  # noqa: E402

FLAGSHIP = ROOT / "case_studies" / "flagship" / "case.yaml"
FAMILIES = ("spinon_continuum", "gapped_spin_wave", "coupled_chains", "paramagnon")

#: speed targets (seconds); they live here, never in unit tests
TARGETS = {"kernel_ms_per_set": 0.2, "flagship_run_s": 180.0, "flagship_run_goal_s": 60.0,
           "evidence_one_family_s": 60.0, "efficiency_ratio_goal": 5.0}

_VERSIONED = ("evidence1d", "numpy", "scipy", "emcee", "dynesty", "arviz", "periodictable")

# A single-crystal map along the chain: sample and resolution as in the flagship case.
_MAP_CASE = """\
title: kernel benchmark map (placeholder values)
sample: {ion: Cu, charge: 2, spin: 0.5, g: {kind: normal, mean: 2.1, sd: 0.05},
         spin_spacing: 3.1, lattice: {a: 7.4, b: 7.9, c: 6.2}}
datasets:
  - {name: map, kind: crystal_spectrum, file: map.csv, temperature: 1.5,
     units: {energy: meV, wavevector: rlu, intensity: arb},
     resolution: {fwhm: [0.08, 0.02]}, background: linear}
models: [spinon_continuum, gapped_spin_wave, coupled_chains, paramagnon]
"""


# ----------------------------------------------------------------------------- helpers
def machine_info() -> dict:
    """Where and when the benchmark ran: CPU, cores, load, Python and package versions.

    Returns
    -------
    dict
        ``date`` (ISO 8601, UTC), ``platform``, ``cpu``, ``cores``, ``load_average`` (1, 5,
        15 min, at the call), ``python`` and ``versions`` of the packages that matter.

    References
    ----------
    .. [1] Python standard library, :mod:`platform` and :func:`os.getloadavg`.
    """
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                cpu = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    from evidence1d.provenance import package_versions
    versions = package_versions(_VERSIONED)
    versions.pop("python", None)
    load = list(os.getloadavg()) if hasattr(os, "getloadavg") else None
    return {"date": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
            "platform": platform.platform(), "cpu": cpu, "cores": os.cpu_count(),
            "load_average": load, "python": platform.python_version(), "versions": versions}


def _median_time(fn, repeat: int) -> float:
    fn(0)                                   # warm-up: tables, caches, imports
    times = []
    for i in range(repeat):
        t0 = time.perf_counter()
        fn(i + 1)
        times.append(time.perf_counter() - t0)
    return float(np.median(times))


def map_case(folder: Path, n_q: int = 60, n_e: int = 50):
    """Write and load a case with one single-crystal map of ``n_q × n_e`` points.

    Parameters
    ----------
    folder : pathlib.Path
        Where the case file and its data file are written.
    n_q, n_e : int
        Wavevectors along the chain (0.02–1 rlu) and energies (0.1–5 meV).

    Returns
    -------
    Case
        Placeholder intensities: only the points, resolution and sample matter here.

    References
    ----------
    .. [1] evidence1d's README, "Input formats" (crystal_spectrum columns).
    """
    folder.mkdir(parents=True, exist_ok=True)
    q = np.repeat(np.linspace(0.02, 1.0, n_q), n_e)
    e = np.tile(np.linspace(0.1, 5.0, n_e), n_q)
    write_template(folder / "map.csv", {"q_par": q, "q_perp": np.zeros_like(q), "energy": e})
    text = (folder / "map.csv").read_text().replace("value, error", "intensity, error", 1)
    (folder / "map.csv").write_text(text)
    (folder / "case.yaml").write_text(_MAP_CASE)
    return evidence1d.load_case(folder / "case.yaml")


# ----------------------------------------------------------------------------- measurements
def kernel_throughput(case, family: str, *, batch: int = 32, repeat: int = 10,
                      seed: int = 0) -> dict:
    """Speed of one family's model part on the map of ``case`` for a batch of parameter sets.

    Times :meth:`DatasetPredictor.magnetic` (the family's resolution-convolved S(Q, E) times
    the squared dipole form factor), a fresh prior draw per repeat so that no memo helps.

    Parameters
    ----------
    case : Case
        A case with one spectrum dataset (see :func:`map_case`).
    family : str
    batch : int
        Parameter sets per call.
    repeat : int
        Timed calls; the median is reported.
    seed : int

    Returns
    -------
    dict
        ``n_points``, ``batch``, ``seconds_per_batch``, ``sets_per_second``,
        ``points_per_second``, ``ms_per_set`` and ``ratio_to_target`` (ms per set / 0.2 ms;
        below 1 meets the target).

    References
    ----------
    .. [1] G. L. Squires, Introduction to the Theory of Thermal Neutron Scattering (CUP,
       1978), ch. 7: the magnetic cross-section being evaluated.
    """
    problem = case.problem(family)
    pred = problem.predictors[0]
    rng = np.random.default_rng(seed)
    draws = [problem.prior.expand(problem.prior.sample(rng, batch)) for _ in range(repeat + 1)]

    def call(i):
        out = pred.magnetic(draws[i])
        if not np.all(np.isfinite(out)):
            raise RuntimeError(f"{family}: non-finite prediction inside the prior support")

    t = _median_time(call, repeat)
    n = pred.dataset.n
    ms = 1e3 * t / batch
    return {"family": family, "n_points": int(n), "batch": batch, "seconds_per_batch": t,
            "sets_per_second": batch / t, "points_per_second": batch * n / t,
            "ms_per_set": ms, "ratio_to_target": ms / TARGETS["kernel_ms_per_set"]}


def likelihood_rate(case, family: str, *, batch: int = 100, repeat: int = 5,
                    singles: int = 50, seed: int = 1) -> dict:
    """Joint log-likelihood evaluations per second on ``case`` for one family.

    Parameters
    ----------
    case : Case
    family : str
    batch : int
        Parameter sets per vectorised call (half of a 200-particle population).
    repeat : int
        Timed vectorised calls (median reported).
    singles : int
        Calls with one parameter set each, as a nested sampler makes them.
    seed : int

    Returns
    -------
    dict
        ``n_params``, ``batched_per_second`` and ``single_per_second`` (parameter sets per
        second), and the speed-up of batching.

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006): populations evaluated at once.
    """
    problem = case.problem(family)
    rng = np.random.default_rng(seed)
    thetas = [problem.prior.sample(rng, batch) for _ in range(repeat + 1)]
    t_batch = _median_time(lambda i: case.log_likelihood(family, thetas[i]), repeat)
    ones = problem.prior.sample(rng, singles)
    case.log_likelihood(family, ones[0])
    t0 = time.perf_counter()
    for th in ones:
        case.log_likelihood(family, th)
    t_one = (time.perf_counter() - t0) / singles
    return {"family": family, "n_params": len(problem.names), "batch": batch,
            "batched_per_second": batch / t_batch, "single_per_second": 1.0 / t_one,
            "batching_speedup": (batch / t_batch) * t_one}


def our_evidence(case, family: str, settings: dict) -> dict:
    """ln Z of one family by tempered SMC with the case's settings and :func:`run`'s seed.

    Parameters
    ----------
    case : Case
    family : str
    settings : dict
        Effective sampler settings (:func:`evidence1d.runner.effective_settings`).

    Returns
    -------
    dict
        ``log_z``, ``log_z_err``, ``n_evaluations``, ``wall_time`` (s), ``efficiency``
        (1/(s nat²)), ``n_temperatures`` per island, ``n_params``.

    References
    ----------
    .. [1] Del Moral, Doucet & Jasra, JRSS B 68, 411 (2006).
    """
    names = list(case.models)
    # the seed stream evidence1d.run gives this family's evidence
    child = np.random.SeedSequence(case.seed).spawn(len(names))[names.index(family)]
    ev_seed = child.spawn(4)[0]
    problem = case.problem(family)
    sweeps = {"min_sweeps": settings["mcmc_steps"]} if settings["mcmc_steps"] else {}
    ev = tempered_evidence(problem.log_likelihood, problem.prior,
                           rng=np.random.default_rng(ev_seed),
                           n_particles=settings["particles"], n_islands=settings["islands"],
                           target_cess=settings["ess_fraction"], progress=False, **sweeps)
    return {"family": family, "method": "tempered SMC (evidence1d)",
            "n_params": len(problem.names), "log_z": ev.log_z, "log_z_err": ev.log_z_err,
            "n_evaluations": int(ev.n_evaluations), "wall_time": ev.wall_time,
            "efficiency": ev.efficiency,
            "n_temperatures": [int(isl.betas.size - 1) for isl in ev.islands],
            "settings": {k: settings[k] for k in ("particles", "islands", "ess_fraction")}}


def dynesty_evidence(case, family: str, *, seed: int, nlive: int | None = None) -> dict:
    """ln Z of one family by dynesty's static nested sampler on the case's public problem.

    dynesty's defaults (bounding by multiple ellipsoids, sampling method chosen from the
    dimension, default stopping ``dlogz``), ``nlive`` its default unless given; the
    likelihood and prior transform are ``Case.log_likelihood`` and ``Case.prior_transform``
    called one parameter set at a time.

    Parameters
    ----------
    case : Case
    family : str
    seed : int
        Seed of dynesty's ``rstate`` generator.
    nlive : int, optional
        Live points (default: dynesty's own).

    Returns
    -------
    dict
        As :func:`our_evidence`, with the error dynesty reports (``results.logzerr``),
        ``nlive`` and the warnings dynesty raised (message and count).

    References
    ----------
    .. [1] Speagle, MNRAS 493, 3132 (2020).
    .. [2] Skilling, Bayesian Analysis 1, 833 (2006).
    """
    import dynesty

    ndim = len(case.parameter_names(family))
    kwargs = {} if nlive is None else {"nlive": int(nlive)}
    t0 = time.perf_counter()
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        sampler = dynesty.NestedSampler(lambda x: case.log_likelihood(family, x),
                                        lambda u: case.prior_transform(family, u), ndim,
                                        rstate=np.random.default_rng(seed), **kwargs)
        sampler.run_nested(print_progress=False)
    wall = time.perf_counter() - t0
    said = {}
    for w in caught:
        msg = str(w.message).split(". ")[0]
        said[msg] = said.get(msg, 0) + 1
    res = sampler.results
    err = float(res.logzerr[-1])
    return {"family": family, "method": "dynesty static nested sampling",
            "n_params": ndim, "nlive": int(sampler.nlive), "log_z": float(res.logz[-1]),
            "log_z_err": err, "n_evaluations": int(np.sum(res.ncall)), "wall_time": wall,
            "efficiency": 1.0 / max(wall * err ** 2, 1e-300),
            "warnings": [f"{m} ({n}x)" for m, n in said.items()]}


_RUN_CHILD = textwrap.dedent("""\
    import json, os, resource, sys, tempfile, time
    sys.path.insert(0, {root!r})
    import evidence1d
    from evidence1d.parallel import worker_count
    case = evidence1d.load_case({case!r})
    t0 = time.perf_counter()
    with tempfile.TemporaryDirectory() as tmp:
        res = evidence1d.run_to_folder(case, out=os.path.join(tmp, "results"),
                                       progress=False, quick={quick!r})
    wall = time.perf_counter() - t0
    peak = max(resource.getrusage(who).ru_maxrss          # KiB on Linux
               for who in (resource.RUSAGE_SELF, resource.RUSAGE_CHILDREN))
    print(json.dumps({{"wall_time": wall, "peak_rss_mib": peak / 1024.0,
                      "workers": worker_count(None, 10 ** 6),
                      "reliable": bool(res.reliable),
                      "log_z": {{n: r.evidence.log_z for n, r in res.models.items()}},
                      "model_times": {{n: r.run_time for n, r in res.models.items()}},
                      "diagnostics_ok": {{n: bool(r.diagnostics.ok)
                                         for n, r in res.models.items()}},
                      "diagnostics_warnings": {{n: list(r.diagnostics.warnings)[:2]
                                               for n, r in res.models.items()}}}}))
""")


def flagship_run(quick: bool = False) -> dict:
    """Wall time and peak memory of a full flagship comparison, in a fresh process.

    The run is the one ``evidence1d run case_studies/flagship/case.yaml`` makes: default
    workers (the CPU count, or ``EVIDENCE1D_WORKERS``), report and figures written (to a
    temporary folder).  Peak memory is the largest resident set of the process or of any
    of its workers.

    Parameters
    ----------
    quick : bool
        Use ``run(..., quick=True)`` (smoke run).

    Returns
    -------
    dict
        ``wall_time`` (s), ``peak_rss_mib`` (peak resident set of the process or a worker,
        MiB), ``workers``,
        ``reliable``, ln Z, run time and diagnostics verdict (with the first warnings) per
        family, and the ratios to the 3-minute target and the 60 s goal.

    References
    ----------
    .. [1] POSIX ``getrusage`` (``ru_maxrss``), Python :mod:`resource`.
    """
    code = _RUN_CHILD.format(root=str(ROOT), case=str(FLAGSHIP), quick=quick)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                         check=False)
    if out.returncode != 0:
        raise RuntimeError(f"flagship run failed:\n{out.stderr[-2000:]}")
    rec = json.loads(out.stdout.strip().splitlines()[-1])
    rec["ratio_to_target"] = rec["wall_time"] / TARGETS["flagship_run_s"]
    rec["ratio_to_goal"] = rec["wall_time"] / TARGETS["flagship_run_goal_s"]
    rec["quick"] = quick
    return rec


def profile_evidence(family: str, *, top: int = 25) -> str:
    """cProfile summary of one flagship evidence run (the case's settings).

    Parameters
    ----------
    family : str
    top : int
        Rows printed per ordering.

    Returns
    -------
    str
        Rows sorted by own time and by cumulative time.

    References
    ----------
    .. [1] Python standard library, :mod:`cProfile` and :mod:`pstats`.
    """
    import cProfile
    import io
    import pstats

    case = evidence1d.load_case(FLAGSHIP)
    settings = effective_settings(case)
    prof = cProfile.Profile()
    prof.enable()
    rec = our_evidence(case, family, settings)
    prof.disable()
    buf = io.StringIO()
    buf.write(f"{family}: ln Z = {rec['log_z']:.3f} ± {rec['log_z_err']:.3f}, "
              f"{rec['n_evaluations']} evaluations, {rec['wall_time']:.1f} s\n")
    for order in ("tottime", "cumulative"):
        pstats.Stats(prof, stream=buf).strip_dirs().sort_stats(order).print_stats(top)
    return buf.getvalue()


# ----------------------------------------------------------------------------- driver
def _table(title, rows, cols):
    cells = [[fmt.format(r[key]) if key in r else "" for _, key, fmt in cols] for r in rows]
    widths = [max([len(h)] + [len(c[j]) for c in cells]) for j, (h, _, _) in enumerate(cols)]
    print(f"\n{title}")
    print("  ".join(h.ljust(w) if j == 0 else h.rjust(w)
                    for j, ((h, _, _), w) in enumerate(zip(cols, widths))))
    for c in cells:
        print("  ".join(v.ljust(w) if j == 0 else v.rjust(w)
                        for j, (v, w) in enumerate(zip(c, widths))))


def main(argv=None) -> dict:
    """Run the benchmarks, print the tables and write the results file.

    Parameters
    ----------
    argv : list of str, optional
        Command-line arguments (``--quick``, ``--out PATH``, ``--profile FAMILY``,
        ``--families NAME ...``).

    Returns
    -------
    dict
        The record written to the results file.

    References
    ----------
    .. [1] Speagle, MNRAS 493, 3132 (2020) (the reference sampler).
    """
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--quick", action="store_true", help="smoke run (a minute or two)")
    ap.add_argument("--out", default=str(ROOT / "benchmarks" / "results.json"),
                    help="results file (default: benchmarks/results.json)")
    ap.add_argument("--profile", metavar="FAMILY", default=None,
                    help="print a cProfile summary of one flagship evidence run and stop")
    ap.add_argument("--families", nargs="+", default=None, choices=FAMILIES,
                    help="families to benchmark (default: all three; with --quick the "
                         "evidence comparison runs on spinon_continuum only)")
    args = ap.parse_args(argv)
    if args.profile:
        print(profile_evidence(args.profile))
        return {}
    quick = args.quick
    families = args.families or list(FAMILIES)
    ev_families = args.families or (["spinon_continuum"] if quick else list(FAMILIES))
    record = {"mode": "quick" if quick else "full", "machine": machine_info(),
              "targets": TARGETS}
    t_start = time.perf_counter()

    with tempfile.TemporaryDirectory() as tmp:
        mcase = map_case(Path(tmp) / "map")
        record["kernel"] = [kernel_throughput(mcase, f, repeat=3 if quick else 10)
                            for f in families]
    _table("1. kernel: model part on a 60 x 50 single-crystal map, batch of 32",
           record["kernel"],
           [("family", "family", "{}"), ("sets/s", "sets_per_second", "{:.0f}"),
            ("points/s", "points_per_second", "{:.3g}"), ("ms/set", "ms_per_set", "{:.3f}"),
            ("/0.2 ms", "ratio_to_target", "{:.2f}")])

    case = evidence1d.load_case(FLAGSHIP)
    # the flagship's own families only (the kernel table above has every family)
    in_case = [f for f in families if f in case.models]
    ev_families = [f for f in ev_families if f in case.models]
    record["likelihood"] = [likelihood_rate(case, f, repeat=2 if quick else 5,
                                            singles=10 if quick else 50)
                            for f in in_case]
    _table("2. flagship joint log-likelihood (linear nuisances integrated out)",
           record["likelihood"],
           [("family", "family", "{}"), ("params", "n_params", "{}"),
            ("batch/s", "batched_per_second", "{:.0f}"), ("single/s", "single_per_second",
                                                           "{:.0f}"),
            ("speed-up", "batching_speedup", "{:.1f}")])

    settings = effective_settings(case, quick)
    record["sampler_settings"] = {k: v for k, v in settings.items()}
    ours, theirs, ratios = [], [], []
    for f in ev_families:
        o = our_evidence(case, f, settings)
        d = dynesty_evidence(case, f, seed=case.seed + FAMILIES.index(f),
                             nlive=100 if quick else None)
        ours.append(o)
        theirs.append(d)
        ratios.append({"family": f, "efficiency_ratio": o["efficiency"] / d["efficiency"],
                       "time_ratio": d["wall_time"] / o["wall_time"],
                       "delta_log_z": o["log_z"] - d["log_z"],
                       "z_score": (o["log_z"] - d["log_z"])
                       / float(np.hypot(o["log_z_err"], d["log_z_err"]))})
        print(f"  evidence of {f}: done ({o['wall_time']:.0f} s ours, "
              f"{d['wall_time']:.0f} s dynesty)", flush=True)
    record["evidence"], record["dynesty"], record["ratios"] = ours, theirs, ratios
    cols = [("family", "family", "{}"), ("time s", "wall_time", "{:.1f}"),
            ("evals", "n_evaluations", "{}"), ("ln Z", "log_z", "{:.3f}"),
            ("err", "log_z_err", "{:.3f}"), ("1/(t err2)", "efficiency", "{:.3g}")]
    _table("3. evidence, tempered SMC (case settings)", ours, cols)
    _table("4. evidence, dynesty static nested sampling (defaults)", theirs, cols)
    _table("   ours / dynesty", ratios,
           [("family", "family", "{}"), ("efficiency", "efficiency_ratio", "{:.2f}"),
            ("speed", "time_ratio", "{:.2f}"), ("ΔlnZ", "delta_log_z", "{:+.3f}"),
            ("z", "z_score", "{:+.2f}")])

    record["flagship_run"] = fr = flagship_run(quick=quick)
    print(f"\n5. flagship run (evidence1d.run as the command runs it, "
          f"{fr['workers']} workers, quick={quick}): "
          f"{fr['wall_time']:.1f} s (/180 s target {fr['ratio_to_target']:.2f}, "
          f"/60 s goal {fr['ratio_to_goal']:.2f}), peak memory {fr['peak_rss_mib']:.0f} MiB, "
          f"reliable={fr['reliable']}")
    for n, ok in fr["diagnostics_ok"].items():
        if not ok:
            print(f"   {n}: diagnostics failed: {fr['diagnostics_warnings'][n][0]}")
    record["machine"]["load_average_end"] = (list(os.getloadavg())
                                             if hasattr(os, "getloadavg") else None)
    record["benchmark_wall_time"] = time.perf_counter() - t_start
    out = Path(args.out)
    out.parent.mkdir(parents=True, exist_ok=True)
    out.write_text(json.dumps(record, indent=2) + "\n")
    print(f"\nwritten {out} ({record['benchmark_wall_time']:.0f} s)")
    return record


if __name__ == "__main__":
    main()
