"""The ``evidence1d`` command: init, check, run, report, simulate, calibrate, plan.

Only wiring lives here: argument parsing, calling the library, printing, exit codes.
User errors print one line and exit with code 2 (a traceback only with ``--debug``).
"""
from __future__ import annotations

import argparse
import sys
from pathlib import Path

from . import __version__
from .errors import InputError

__all__ = ["main"]

_EXAMPLES = {
    "init": "examples:\n  evidence1d init data/ --out case.yaml\n"
            "  evidence1d init map.csv chi.csv heat.csv --out mycase/case.yaml --force",
    "check": "example:\n  evidence1d check case_studies/flagship/case.yaml",
    "run": "examples:\n  evidence1d run case_studies/flagship/case.yaml\n"
           "  evidence1d run case.yaml --out results/try2 --seed 7 --quick\n"
           "  evidence1d run case.yaml --resume      # continue an interrupted run",
    "report": "examples:\n  evidence1d report case_studies/flagship/results\n"
              "  evidence1d report results --out results-v2      # leave results as it is\n"
              "  evidence1d report results --figures-only        # redraw the figures only",
    "simulate": "example:\n  evidence1d simulate spinon_continuum --case case.yaml "
                "--set J=1.1 --set delta=0.8 --set g=2.1 --out data/ --seed 3",
    "calibrate": "examples:\n  evidence1d calibrate case.yaml --replicates 50\n"
                 "  evidence1d calibrate case.yaml --from results --out calib-posterior\n"
                 "  evidence1d calibrate case.yaml --scheduler tcp://head-node:8786\n"
                 "  evidence1d calibrate case.yaml --generators my_generators.py\n"
                 "  (run the same command again to resume an interrupted campaign)",
    "plan": "examples:\n  evidence1d plan case.yaml --counting-times 0.5,1,2,4 --hours 6\n"
            "  evidence1d plan case.yaml --from results --per-dataset --replicates 20\n"
            "  evidence1d plan case.yaml --leave-one-out --counting-times 1",
}


def _parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="evidence1d",
        description="Decide whether neutron spectra, chi(T) and C(T) of a quasi-1D magnet "
                    "support one-dimensional (spinon) physics: joint Bayesian fits, "
                    "evidences and Bayes factors.",
        epilog="run 'evidence1d COMMAND --help' for each command's options and an example")
    p.add_argument("--debug", action="store_true", help="show tracebacks of errors")
    p.add_argument("--version", action="version", version=f"evidence1d {__version__}",
                   help="print the version and exit")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    fmt = argparse.RawDescriptionHelpFormatter

    i = sub.add_parser("init", help="write a starting case file from data files",
                       epilog=_EXAMPLES["init"], formatter_class=fmt,
                       description="Detect each data file's kind and units and write a case "
                                   "file with TODO placeholders for what the files cannot "
                                   "tell (sample, lattice, temperatures, resolution).")
    i.add_argument("data", nargs="+", help="data files, or folders holding them")
    i.add_argument("--out", default="case.yaml", help="case file to write (default: case.yaml)")
    i.add_argument("--force", action="store_true", help="replace an existing case file")

    c = sub.add_parser("check", help="validate a case file and print its datasets and models",
                       epilog=_EXAMPLES["check"], formatter_class=fmt)
    c.add_argument("case", help="case file (YAML)")

    r = sub.add_parser("run", help="sample posteriors, compute evidences, write the report",
                       epilog=_EXAMPLES["run"], formatter_class=fmt)
    r.add_argument("case", help="case file (YAML)")
    r.add_argument("--out", help="output folder (default: the case file's 'output')")
    r.add_argument("--seed", type=int, help="random seed (default: the case file's 'seed')")
    r.add_argument("--quick", action="store_true",
                   help="reduced settings for a fast first look (not for publication); "
                        "a spectrum of more than 1000 points is fitted on a regular subset")
    r.add_argument("--resume", action="store_true",
                   help="continue an interrupted run from its checkpoints")
    r.add_argument("--overwrite", action="store_true",
                   help="replace an existing output folder")
    r.add_argument("--no-figures", action="store_true", help="skip the figures")
    r.add_argument("--models", help="comma-separated subset of the case's models")
    r.add_argument("--workers", type=int, default=None,
                   help="processes for the model families (default: one per CPU core)")

    rp = sub.add_parser("report", help="rebuild the report from saved results",
                        epilog=_EXAMPLES["report"], formatter_class=fmt)
    rp.add_argument("folder", help="output folder of a finished run")
    rp.add_argument("--out", metavar="NEWDIR",
                    help="write the rebuilt report into NEWDIR (created) and leave the run "
                         "folder as it is")
    rf = rp.add_mutually_exclusive_group()
    rf.add_argument("--no-figures", action="store_true", help="skip the figures")
    rf.add_argument("--figures-only", action="store_true",
                    help="redraw only the figures (figures/ in the folder or in NEWDIR)")
    rp.add_argument("--workers", type=int, default=None,
                    help="processes drawing the figures (default: one per CPU core)")

    s = sub.add_parser("simulate", help="write synthetic datasets from a model card",
                       epilog=_EXAMPLES["simulate"], formatter_class=fmt,
                       description="Simulate every dataset of a case file (its files give "
                                   "the points) from a model at stated true parameters.")
    s.add_argument("card", help="model name of the case, or a model card file")
    s.add_argument("--case", required=True, help="case file whose datasets are the templates")
    s.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                   help="true parameter value (repeat); nuisances default to neutral values")
    s.add_argument("--out", required=True, help="folder for the simulated data files")
    s.add_argument("--seed", type=int, default=0, help="random seed")
    s.add_argument("--exposure", type=float, default=50.0,
                   help="spectra: counts per intensity unit (default 50)")
    s.add_argument("--relative", type=float, default=0.01,
                   help="thermodynamic data: relative error (default 0.01)")
    _campaign_parsers(sub, fmt)
    return p


def _campaign_options(c, what: str) -> None:
    """Options shared by the campaign commands."""
    c.add_argument("case", help="case file (YAML)")
    c.add_argument("--replicates", type=int, default=None, metavar="N",
                   help=f"replicates {what}")
    c.add_argument("--quick", action="store_true",
                   help="smoke settings to try the command (numbers not for conclusions)")
    c.add_argument("--out", help="campaign folder (default: next to the case file)")
    c.add_argument("--from", dest="source", metavar="DIR",
                   help="draw true parameters from the posterior of this run folder "
                        "(default: from the priors)")
    c.add_argument("--seed", type=int, help="random seed (default: the case file's)")
    c.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on an existing Dask cluster (e.g. tcp://host:8786)")
    c.add_argument("--workers", type=int, default=None,
                   help="workers of the local cluster (default: one per CPU core)")
    c.add_argument("--processes", action="store_true",
                   help="use a process pool of this machine instead of a local Dask cluster")
    c.add_argument("--no-figures", action="store_true", help="skip the figures")


def _campaign_parsers(sub, fmt) -> None:
    c = sub.add_parser("calibrate", help="how often the comparison is wrong, on simulated "
                                         "replicates", epilog=_EXAMPLES["calibrate"],
                       formatter_class=fmt,
                       description="Simulate replicates of the case from every family (truths "
                                   "from the priors or a run's posterior), fit all families, "
                                   "and write calibration.json, calibration.md and figures.")
    _campaign_options(c, "per true family (default 20)")
    c.add_argument("--threshold", type=float, default=None, metavar="LNK",
                   help="ln K above which data are called one-dimensional (default 3, "
                        "i.e. 2 ln K > 6)")
    c.add_argument("--generators", metavar="FILE.py",
                   help="also draw replicates from the out-of-family generators of this "
                        "Python file (see README, 'Calibration and planning')")
    pl = sub.add_parser("plan", help="how long to count to separate the families",
                        epilog=_EXAMPLES["plan"], formatter_class=fmt,
                        description="Simulate replicates from one family at several counting "
                                    "times of the spectra, fit all families, and write "
                                    "plan.json, plan.md and a figure.")
    _campaign_options(pl, "per counting time (default 10)")
    pl.add_argument("--counting-times", metavar="F,F,...",
                    help="counting times as multiples of the case's (default 0.25,0.5,1,2,4)")
    pl.add_argument("--hours", type=float, default=None,
                    help="the counting time of the case's spectra in hours (answers in hours)")
    pl.add_argument("--truth", help="the true family (default: the --from run's winner, "
                                    "else the case's first model)")
    pl.add_argument("--target", type=float, default=10.0,
                    help="2 ln K to reach (default 10)")
    pl.add_argument("--fraction", type=float, default=0.9,
                    help="share of replicates that must reach it (default 0.9)")
    pl.add_argument("--per-dataset", action="store_true",
                    help="also count each spectrum longer on its own")
    pl.add_argument("--leave-one-out", action="store_true",
                    help="also fit every replicate without each dataset in turn: what each "
                         "dataset (or a planned one put in the case) adds to 2 ln K")


def _parse_sets(items):
    out = {}
    for it in items:
        if "=" not in it:
            raise InputError(f"--set expects NAME=VALUE; got {it!r}")
        k, v = it.split("=", 1)
        try:
            out[k.strip()] = float(v)
        except ValueError:
            raise InputError(f"--set {k}: {v!r} is not a number") from None
    return out


def _cmd_init(args):
    from .init_case import write_case
    _, messages = write_case(args.data, args.out, force=args.force)
    print("\n".join(messages))
    return 0


def _cmd_check(args):
    from .case import load_case
    from .init_case import refuse_placeholders
    from .report.console import case_table
    from .sanity import case_warnings
    refuse_placeholders(args.case)
    case = load_case(args.case)
    print(case_table(case))
    notes = _data_notes(case) + case_warnings(case)
    if notes:
        print("\n" + "\n".join(notes))
    print("\ncase is valid")
    return 0


def _data_notes(case):
    """Lines about the data files: masked points dropped, columns not used."""
    lines = []
    for ds in case.datasets:
        if ds.masked:
            rules = ", ".join(f"{k}: {v}" for k, v in ds.masked.items())
            lines.append(f"dataset '{ds.name}': dropped {ds.n_masked} masked point(s) "
                         f"({rules}); {ds.n} kept")
        absolute = ds.options.get("absolute_scale")
        if absolute:
            lines.append(f"dataset '{ds.name}': on an absolute scale ({ds.units['intensity']}, "
                         f"calibration ±{absolute['uncertainty']:.0%}); each family's intensity "
                         "scale will be checked against the magnetic cross-section")
        if ds.unused_columns:
            cols = ", ".join(repr(c) for c in ds.unused_columns)
            lines.append(f"warning: dataset '{ds.name}': column(s) {cols} of {ds.path.name} "
                         "not used")
    return lines


def _cmd_run(args):
    from .case import load_case
    from .outputs import replaces, run_to_folder
    from .report.console import verdict_lines
    case = load_case(args.case)
    models = args.models.split(",") if args.models else None
    target = Path(args.out) if args.out else case.output
    if replaces(target, overwrite=args.overwrite, resume=args.resume):
        print(f"evidence1d: replacing the existing output folder {target} (--overwrite)",
              file=sys.stderr)
    if args.quick:
        from .runner import quick_subset, quick_subset_text
        for name, kept in quick_subset(case)[1].items():
            print(f"evidence1d: quick look: {quick_subset_text(name, kept)}", file=sys.stderr)
    results = run_to_folder(case, seed=args.seed, out=args.out, quick=args.quick,
                            resume=args.resume, overwrite=args.overwrite,
                            figures=not args.no_figures, models=models, workers=args.workers)
    print(verdict_lines(results))
    print(f"\nreport: {results.out / 'report.md'}")
    return 0


def _cmd_report(args):
    from .report import rebuild_report
    from .report.console import report_lines
    out = rebuild_report(Path(args.folder), figures=not args.no_figures,
                         figures_only=args.figures_only, workers=args.workers,
                         out=Path(args.out) if args.out else None)
    print(report_lines(out, figures=not args.no_figures, figures_only=args.figures_only))
    return 0


def _cmd_simulate(args):
    import numpy as np

    from .case import load_case
    from .simulate import NoiseModel, simulate_case, write_dataset
    case = load_case(args.case)
    truth = _parse_sets(args.set)
    model = args.card
    if model not in case.models:
        from .cards import load_card
        from .case import ModelChoice
        if Path(model).is_file():
            card = load_card(model)
            case.models[card.name] = ModelChoice(card=card)
            model = card.name
        else:
            case.problem(model)  # raises the unknown-model error with a hint
    rng = np.random.default_rng(args.seed)
    sims = simulate_case(case, model, truth, NoiseModel(exposure=args.exposure,
                                                        relative=args.relative), rng)
    out = Path(args.out)
    note = (f"SIMULATED with evidence1d simulate from model '{model}', seed {args.seed}; "
            f"not a measurement.\ntruth: " + ", ".join(f"{k}={v:g}" for k, v in truth.items()))
    for ds in case.datasets:
        y, err = sims[ds.name]
        target = out / ds.path.name
        write_dataset(ds, y, err, target, note=note,
                      fu_per_ion=case.sample.formula_units_per_ion)
        print(f"wrote {target} ({ds.n} points)")
    return 0


def _parse_times(text):
    if text is None:
        return None
    try:
        return [float(v) for v in text.split(",") if v.strip()]
    except ValueError:
        raise InputError(f"--counting-times expects numbers separated by commas; got "
                         f"{text!r}") from None


def _cmd_calibrate(args):
    from .campaign import calibrate, campaign_executor
    from .campaign.calibration import DEFAULT_THRESHOLD
    from .case import load_case
    case = load_case(args.case)
    out = Path(args.out) if args.out else case.path.parent / "calibration"
    with campaign_executor(args.scheduler, args.workers,
                           local="processes" if args.processes else "dask") as ex:
        doc = calibrate(case, out=out, replicates=args.replicates or 20, quick=args.quick,
                        seed=args.seed, source=args.source, executor=ex, workers=args.workers,
                        threshold=DEFAULT_THRESHOLD if args.threshold is None
                        else args.threshold, figures=not args.no_figures,
                        generators=args.generators)
    fr, mr = doc["false_1d_rate"], doc["missed_1d_rate"]

    def pct(r):
        return "n/a" if r["rate"] is None else f"{100 * r['rate']:.1f} % ({r['count']}/{r['n']})"
    print(f"{doc['replicates']['finished']} replicates ({doc['replicates']['failed']} failed); "
          f"at 2 ln K > {doc['threshold']['two_ln_k']:g}: false 1D {pct(fr)}, "
          f"missed 1D {pct(mr)}; right family {pct(doc['accuracy'])}")
    print(f"calibration: {out / 'calibration.json'}  page: {out / 'calibration.md'}")
    return 0


def _cmd_plan(args):
    from .campaign import campaign_executor, plan
    from .case import load_case
    case = load_case(args.case)
    out = Path(args.out) if args.out else case.path.parent / "plan"
    kw = {}
    times = _parse_times(args.counting_times)
    if times is not None:
        kw["times"] = times
    with campaign_executor(args.scheduler, args.workers,
                           local="processes" if args.processes else "dask") as ex:
        doc = plan(case, out=out, replicates=args.replicates or 10, quick=args.quick,
                   seed=args.seed, source=args.source, truth=args.truth, hours=args.hours,
                   target=args.target, fraction=args.fraction, per_dataset=args.per_dataset,
                   leave_one_out=args.leave_one_out,
                   executor=ex, workers=args.workers, figures=not args.no_figures, **kw)
    for s in doc["scopes"].values():
        print(s["statement"])
    for s in (doc["leave_one_out"] or {}).values():
        print(s["statement"])
    print(f"plan: {out / 'plan.json'}  page: {out / 'plan.md'}")
    return 0


def main(argv=None) -> int:
    """Entry point of the ``evidence1d`` command; returns the exit code."""
    parser = _parser()
    args = parser.parse_args(argv)
    if args.command is None:
        parser.print_help()
        return 2
    handler = {"init": _cmd_init, "check": _cmd_check, "run": _cmd_run, "report": _cmd_report,
               "simulate": _cmd_simulate, "calibrate": _cmd_calibrate,
               "plan": _cmd_plan}[args.command]
    try:
        return handler(args)
    except InputError as exc:
        if args.debug:
            raise
        print(f"evidence1d: error: {exc}", file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        if args.command in ("calibrate", "plan"):
            print("evidence1d: interrupted; finished replicates are kept (run the same "
                  "command again to continue)", file=sys.stderr)
        else:
            print("evidence1d: interrupted; completed work is kept in the checkpoints "
                  "(continue with --resume)", file=sys.stderr)
        return 130


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
