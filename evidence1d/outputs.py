"""The output folder of a run: create or replace it, resume it, save results, write the report.

:func:`run_to_folder` is what ``evidence1d run`` does: it prepares the folder (an existing
one is an error unless ``overwrite`` or ``resume``), runs :func:`evidence1d.runner.run`
with a :class:`RunFolder` as its store (emcee checkpoints, finished evidences for a resumed
run, ``run.log``), copies the inputs, saves the results record and writes the report.

Layout of a run folder (``DIR``)::

    settings.json        seed, --quick and the sampler settings of the run
    run.log              stages, settings, results, times
    inputs/              copy of the case file and of every file it names (data, own cards)
    inputs/cards/        copy of the bundled model cards used (a record; not read back)
    chains/<model>.h5    emcee checkpoints, written by the sampler
    chains/<model>.evidence.npz   finished evidences, for --resume
    saved/results.npz    the results record (:mod:`evidence1d.results`)
    summary.json, report.md, tables.tex, figures/, samples/   the report

Files are written atomically (a temporary file in the same folder, then ``os.replace``).
The case file is copied verbatim when every path it names is relative and inside its
folder; otherwise the copy names the copied files and the verbatim original is kept as
``inputs/original-<name>``.

References
----------
.. [1] POSIX ``rename()`` (IEEE Std 1003.1): atomic replacement within a file system.
.. [2] D. Foreman-Mackey et al., PASP 125, 306 (2013): the emcee HDF5 backend.
"""
from __future__ import annotations

import dataclasses
import json
import shutil
import time
from pathlib import Path

from .errors import InputError
from .results import atomic_path, atomic_write, load_record, save_record, save_results

__all__ = ["RunFolder", "run_to_folder", "save_inputs", "prepare_folder", "replaces"]


class RunFolder:
    """The store of a run writing into a folder (see :func:`evidence1d.runner.run`).

    Parameters
    ----------
    out : pathlib.Path
        The run folder (exists).
    resume : bool
        Continue from the checkpoints and saved evidences in it.
    """

    def __init__(self, out, resume: bool = False):
        self.out = Path(out)
        self.resume = bool(resume)

    def log(self, message: str) -> None:
        """Append a time-stamped line to ``run.log``."""
        stamp = time.strftime("%Y-%m-%d %H:%M:%S")
        with open(self.out / "run.log", "a", encoding="utf-8") as fh:
            fh.write(f"{stamp}  {message}\n")

    def checkpoint(self, name: str) -> Path:
        """The emcee checkpoint of a family (its folder is created)."""
        path = self.out / "chains" / f"{name}.h5"
        path.parent.mkdir(parents=True, exist_ok=True)
        return path

    def _evidence_path(self, name: str) -> Path:
        return self.out / "chains" / f"{name}.evidence.npz"

    def save_evidence(self, name: str, ev, settings) -> None:
        """Keep a finished evidence (in the results format) for a resumed run."""
        save_record(self._evidence_path(name), ev, meta={"settings": dict(settings)})

    def load_evidence(self, name: str, settings):
        """The saved evidence of a family if resuming and it was made with the same
        settings, else None (a damaged file is recomputed, never trusted)."""
        path = self._evidence_path(name)
        if not self.resume or not path.is_file():
            return None
        try:
            ev, meta = load_record(path)
        except InputError:
            return None
        return ev if meta.get("settings") == json.loads(json.dumps(dict(settings))) else None


def _copy(src: Path, dst: Path):
    with atomic_path(dst) as tmp:
        shutil.copyfile(src, tmp)


def _inside(raw: str) -> bool:
    p = Path(raw)
    return not p.is_absolute() and not raw.startswith("~") and ".." not in p.parts


def save_inputs(case, out) -> Path:
    """Copy the case file and every file it names into ``out/inputs/``.

    Parameters
    ----------
    case : Case
    out : pathlib.Path
        The run folder.

    Returns
    -------
    pathlib.Path
        The copied case file, whose relative paths resolve inside ``out/inputs/``.

    References
    ----------
    .. [1] POSIX ``rename()``: atomic copies.
    """
    import yaml

    from .cards import CARD_DIRS
    from .schema import load_yaml
    inputs = Path(out) / "inputs"
    base = case.path.resolve().parent
    raw = load_yaml(case.path).data
    named = []                                  # (container, key, raw path string)
    for block in raw.get("datasets") or []:
        named.append((block, "file", str(block["file"])))
    for entry in raw.get("models") or []:
        if isinstance(entry, dict) and entry.get("card"):
            named.append((entry, "card", str(entry["card"])))
    target = inputs / case.path.name
    if all(_inside(r) for _, _, r in named):
        for _, _, r in named:
            _copy(base / r, inputs / r)
        _copy(case.path, target)
    else:
        for i, (box, key, r) in enumerate(named):
            src = Path(r).expanduser()
            src = src if src.is_absolute() else base / src
            rel = f"files/{i:02d}-{src.name}"
            _copy(src, inputs / rel)
            box[key] = rel
        _copy(case.path, inputs / f"original-{case.path.name}")
        atomic_write(target, "# copy of the case file with the paths of the copied files\n"
                     + yaml.safe_dump(raw, sort_keys=False, allow_unicode=True))
    for choice in case.models.values():
        cp = choice.card.path
        if cp is not None and any(Path(cp).resolve().parent == d.resolve() for d in CARD_DIRS):
            _copy(Path(cp), inputs / "cards" / Path(cp).name)
    return target


def replaces(out: Path, *, overwrite: bool, resume: bool) -> bool:
    """Whether preparing ``out`` would delete an existing, non-empty folder."""
    out = Path(out)
    return bool(overwrite and not resume and out.is_dir() and any(out.iterdir()))


def prepare_folder(out: Path, *, overwrite: bool, resume: bool) -> bool:
    """Create the run folder; returns whether an existing folder was replaced.

    Raises
    ------
    InputError
        The folder exists and is not empty, without ``overwrite`` or ``resume``.
    """
    if out.exists() and not out.is_dir():
        raise InputError("the output folder is a file; give a folder", file=out)
    if out.exists() and any(out.iterdir()) and not (overwrite or resume):
        raise InputError(f"output folder {out} exists; use --overwrite to replace it or "
                         "--resume to continue it")
    replaced = replaces(out, overwrite=overwrite, resume=resume)
    if replaced:
        shutil.rmtree(out)
    out.mkdir(parents=True, exist_ok=True)
    if resume:        # temporaries of atomic writes that a killed run left behind
        for p in out.rglob(".*.tmp"):
            if p.is_file():
                p.unlink(missing_ok=True)
    return replaced


def run_to_folder(case, *, out=None, seed: int | None = None, quick: bool = False,
                  resume: bool = False, overwrite: bool = False, figures: bool = True,
                  models=None, progress: bool = True, workers: int | None = None,
                  budget: bool | None = None):
    """Run a case and write its output folder with the report (``evidence1d run``).

    Parameters
    ----------
    case : Case
    out : str or pathlib.Path, optional
        Output folder (default: the case's ``output``).
    seed, quick, models, progress, workers, budget
        As :func:`evidence1d.runner.run`.
    resume : bool
        Continue from the checkpoints and saved evidences in ``out``.
    overwrite : bool
        Replace an existing output folder.
    figures : bool
        Compute the figure data and draw the figures (PNG and PDF).

    Returns
    -------
    RunResults
        With ``out`` set to the folder and ``case_path`` to the copied case file.

    Raises
    ------
    InputError
        The output folder exists (without ``overwrite`` or ``resume``), or an unknown model.
    """
    from .report import write_report
    from .runner import effective_settings, model_names, run

    out = Path(out) if out is not None else case.output
    names = model_names(case, models)        # bad models fail before the folder is touched
    replaced = prepare_folder(out, overwrite=overwrite, resume=resume)
    seed_used = case.seed if seed is None else int(seed)
    atomic_write(out / "settings.json",
                 json.dumps({"seed": seed_used, "quick": quick,
                             "settings": effective_settings(case, quick)}, indent=2))
    store = RunFolder(out, resume=resume)
    store.log(f"evidence1d run of {case.path} (seed {seed_used}, quick={quick}, "
              f"resume={resume})")
    if replaced:
        store.log(f"replaced the existing output folder {out} (--overwrite)")
    t0 = time.time()
    res = run(case, seed=seed, quick=quick, models=names, progress=progress,
              workers=workers, budget=budget, figures=figures, store=store)
    (out / "summary.json").unlink(missing_ok=True)
    case_copy = save_inputs(case, out)
    res = dataclasses.replace(res, out=out, case_path=case_copy)
    save_results(res)
    write_report(res, figures=figures, workers=workers)
    store.log(f"report written to {out} ({time.time() - t0:.1f} s in all)")
    return res
