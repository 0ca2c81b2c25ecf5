"""Saving and loading everything a report rebuild needs, and the exported posterior samples.

Layout of a run folder (``DIR``)::

    inputs/              copy of the case file and of every file it names (data, own cards)
    inputs/cards/        copy of the bundled model cards used (a record; not read back)
    chains/<model>.h5    emcee checkpoints, written by the sampler
    saved/run.json       scalars: settings, seed, provenance, comparison, per-model results
    saved/<model>.npz    arrays: evidence islands (schedules, particles, ln L), the posterior
                         chain (unless identical to the checkpoint), samples, Laplace mode
    samples/<model>.nc   post-burn-in chain as NetCDF (arviz InferenceData)
    samples/<model>.csv  thinned posterior samples, one column per parameter

Files are written atomically (a temporary file in the same folder, then ``os.replace``), so
a reader never sees half a file.  The case file is copied verbatim when every path it names
is relative and inside its folder; otherwise the copy names the copied files and the
verbatim original is kept as ``inputs/original-<name>``.

References
----------
.. [1] POSIX ``rename()`` (IEEE Std 1003.1): atomic replacement within a file system.
.. [2] D. Foreman-Mackey et al., PASP 125, 306 (2013): the emcee HDF5 backend.
"""
from __future__ import annotations

import json
import os
import shutil
import tempfile
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["atomic_write", "new_file_mode", "save_inputs", "save_results", "load_results",
           "export_samples", "SAVED_FORMAT", "saved_case_path"]

#: version of the saved/ layout (2: analyses, verdict reliability and evidence budget)
SAVED_FORMAT = 2
_ISLAND_ARRAYS = ("betas", "log_z_increments", "samples", "log_likelihood", "acceptance",
                  "n_sweeps")


def new_file_mode() -> int:
    """Permission bits of a new file under the process umask (0o644 under umask 022).

    ``tempfile.mkstemp`` creates files readable by the owner only (0o600); the files of a
    run get the mode an ordinary ``open`` would give them, so a group sharing a folder can
    read them.

    References
    ----------
    .. [1] POSIX ``umask()`` and ``open()`` (IEEE Std 1003.1): mode 0o666 & ~umask.
    """
    try:                                       # Linux: read without changing the umask
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return 0o666 & ~int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o666 & ~mask


def atomic_write(path, data) -> Path:
    """Write text or bytes to ``path`` through a temporary file and ``os.replace``.

    Parameters
    ----------
    path : str or pathlib.Path
    data : str or bytes

    Returns
    -------
    pathlib.Path

    References
    ----------
    .. [1] POSIX ``rename()``: the replacement is atomic on one file system.
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        os.chmod(tmp, new_file_mode())
        with os.fdopen(fd, "wb") as fh:
            fh.write(data.encode("utf-8") if isinstance(data, str) else data)
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def _copy(src: Path, dst: Path):
    dst.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=dst.parent, prefix=f".{dst.name}.", suffix=".tmp")
    os.close(fd)
    os.chmod(tmp, new_file_mode())
    shutil.copyfile(src, tmp)
    os.replace(tmp, dst)


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

    from ..cards import CARD_DIRS
    inputs = Path(out) / "inputs"
    base = case.path.resolve().parent
    raw = yaml.safe_load(case.path.read_text(encoding="utf-8"))
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


def saved_case_path(out) -> Path:
    """The copied case file of a saved run (``out/inputs/...``), from ``saved/run.json``.

    Raises
    ------
    InputError
        ``out`` holds no saved results of this version.

    References
    ----------
    .. [1] The layout in the module notes.
    """
    return Path(out) / _read_run_json(out)["case_file"]


def _read_run_json(out) -> dict:
    p = Path(out) / "saved" / "run.json"
    if not p.is_file():
        raise InputError(f"{Path(out)} holds no saved results (saved/run.json is missing); "
                         "give the output folder of a finished 'evidence1d run'", file=p)
    doc = json.loads(p.read_text(encoding="utf-8"))
    if doc.get("format") != SAVED_FORMAT:
        raise InputError(f"saved results of format {doc.get('format')!r}; this version "
                         f"reads format {SAVED_FORMAT}; run the case again", file=p)
    return doc


def _checkpoint_matches(path: Path, post) -> bool:
    if not path.is_file():
        return False
    import emcee
    try:
        b = emcee.backends.HDFBackend(str(path), name="mcmc", read_only=True)
        return (np.array_equal(b.get_chain(), post.chain)
                and np.array_equal(b.get_log_prob(), post.log_prob))
    except (OSError, KeyError, AttributeError, ValueError):
        return False


def save_results(results, case_file: Path) -> None:
    """Write ``saved/run.json`` and ``saved/<model>.npz`` for :func:`load_results`.

    Parameters
    ----------
    results : RunResults
    case_file : pathlib.Path
        The copied case file (from :func:`save_inputs`).

    References
    ----------
    .. [1] numpy ``savez_compressed`` (NPZ: a zip of ``.npy`` arrays, exact float64).
    """
    out = Path(results.out)
    saved = out / "saved"
    doc = {"format": SAVED_FORMAT, "case_file": str(Path(case_file).relative_to(out)),
           "seed": int(results.seed), "settings": dict(results.settings),
           "reliable": bool(results.reliable), "provenance": dict(results.provenance),
           "comparison": results.comparison.to_dict(), "budget": results.budget,
           "sensitivity": results.sensitivity,
           "models": {}}
    for name, mr in results.models.items():
        ev, post = mr.evidence, mr.posterior
        arrays = {"island_log_z": ev.island_log_z, "tau": post.tau,
                  "acceptance_fraction": post.acceptance_fraction, "samples": post.samples,
                  "samples_log_prob": post.samples_log_prob}
        if mr.nuisance_names:
            arrays["nuisance_samples"] = mr.nuisance_samples
        for i, isl in enumerate(ev.islands):
            for k in _ISLAND_ARRAYS:
                arrays[f"island{i}_{k}"] = getattr(isl, k)
        ckpt = out / "chains" / f"{name}.h5"
        in_ckpt = _checkpoint_matches(ckpt, post)
        if not in_ckpt:
            arrays.update(chain=post.chain, log_prob=post.log_prob)
        if mr.laplace is not None:
            arrays.update(laplace_map=mr.laplace.map_point,
                          laplace_covariance=mr.laplace.covariance)
        buf = _npz_bytes(arrays)
        atomic_write(saved / f"{name}.npz", buf)
        doc["models"][name] = {
            "title": mr.title, "one_dimensional": bool(mr.one_dimensional),
            "names": list(mr.names), "units": dict(mr.units), "run_time": mr.run_time,
            "nuisance_names": list(mr.nuisance_names),
            "chain_file": str(ckpt.relative_to(out)) if in_ckpt else None,
            "evidence": {"log_z": ev.log_z, "log_z_err": ev.log_z_err,
                         "names": list(ev.names), "n_evaluations": ev.n_evaluations,
                         "wall_time": ev.wall_time, "settings": dict(ev.settings),
                         "method": ev.method, "warnings": list(ev.warnings),
                         "islands": [{"log_z": isl.log_z, "n_evaluations": isl.n_evaluations,
                                      "wall_time": isl.wall_time} for isl in ev.islands]},
            "posterior": {"names": list(post.names), "burn_in": post.burn_in,
                          "thin": post.thin, "n_evaluations": post.n_evaluations,
                          "resumed_from": post.resumed_from, "warnings": list(post.warnings),
                          "burn_in_rule": post.burn_in_rule,
                          "population_moves": post.population_moves,
                          "move_acceptance": dict(post.move_acceptance)},
            "diagnostics": mr.diagnostics.to_dict(),
            "laplace": None if mr.laplace is None else
            {"log_z": mr.laplace.log_z, "method": mr.laplace.method, "label": mr.laplace.label},
            "savage_dickey": mr.savage_dickey, "loo": mr.loo, "analysis": mr.analysis,
        }
    atomic_write(saved / "run.json", json.dumps(_plain(doc), indent=1, allow_nan=True))


def _npz_bytes(arrays: dict) -> bytes:
    import io
    buf = io.BytesIO()
    np.savez_compressed(buf, **{k: np.asarray(v) for k, v in arrays.items()})
    return buf.getvalue()


def _plain(obj):
    """numpy scalars to Python (NaN and infinity kept: run.json is read only by us)."""
    if isinstance(obj, dict):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_plain(v) for v in obj]
    if isinstance(obj, np.ndarray):
        return obj.tolist()
    if isinstance(obj, np.generic):
        return obj.item()
    return obj


def _frozen(a):
    a = np.array(a)
    a.setflags(write=False)
    return a


def load_results(out):
    """Rebuild the :class:`~evidence1d.runner.RunResults` of a saved run.

    Parameters
    ----------
    out : str or pathlib.Path
        The run folder.

    Returns
    -------
    RunResults
        With the evidence, posterior, diagnostics, Laplace and comparison objects of the run
        (arrays read-only).

    Raises
    ------
    InputError
        Not a run folder, a saved layout of another version, or a missing array file.

    References
    ----------
    .. [1] Foreman-Mackey et al., PASP 125, 306 (2013): the emcee HDF5 backend.
    """
    from ..inference.compare import Comparison, PairComparison
    from ..inference.diagnostics import Diagnostics
    from ..inference.evidence import EvidenceResult, IslandRun
    from ..inference.laplace import LaplaceResult
    from ..inference.posterior import PosteriorResult
    from ..runner import ModelResult, RunResults

    out = Path(out)
    doc = _read_run_json(out)
    models = {}
    for name, m in doc["models"].items():
        npz = out / "saved" / f"{name}.npz"
        if not npz.is_file():
            raise InputError("saved arrays are missing; run the case again", file=npz)
        with np.load(npz, allow_pickle=False) as z:
            a = {k: z[k] for k in z.files}
        e = m["evidence"]
        islands = tuple(IslandRun(log_z=isl["log_z"], n_evaluations=isl["n_evaluations"],
                                  wall_time=isl["wall_time"],
                                  **{k: _frozen(a[f"island{i}_{k}"]) for k in _ISLAND_ARRAYS})
                        for i, isl in enumerate(e["islands"]))
        ev = EvidenceResult(log_z=e["log_z"], log_z_err=e["log_z_err"],
                            island_log_z=_frozen(a["island_log_z"]), islands=islands,
                            names=tuple(e["names"]), n_evaluations=e["n_evaluations"],
                            wall_time=e["wall_time"], settings=e["settings"],
                            method=e["method"], warnings=tuple(e["warnings"]))
        if m["chain_file"] is not None:
            import emcee
            b = emcee.backends.HDFBackend(str(out / m["chain_file"]), name="mcmc",
                                          read_only=True)
            chain, log_prob = b.get_chain(), b.get_log_prob()
        else:
            chain, log_prob = a["chain"], a["log_prob"]
        p = m["posterior"]
        post = PosteriorResult(names=tuple(p["names"]), chain=_frozen(chain),
                               log_prob=_frozen(log_prob), samples=_frozen(a["samples"]),
                               samples_log_prob=_frozen(a["samples_log_prob"]),
                               burn_in=p["burn_in"], thin=p["thin"], tau=_frozen(a["tau"]),
                               acceptance_fraction=_frozen(a["acceptance_fraction"]),
                               n_evaluations=p["n_evaluations"],
                               resumed_from=p["resumed_from"], warnings=tuple(p["warnings"]),
                               burn_in_rule=p["burn_in_rule"],
                               population_moves=p.get("population_moves", False),
                               move_acceptance=p.get("move_acceptance", {}))
        d = dict(m["diagnostics"])
        d["names"] = tuple(d["names"])
        d["warnings"] = tuple(d["warnings"])
        d["thresholds"] = {k: tuple(v) if isinstance(v, list) else v
                           for k, v in d["thresholds"].items()}
        diag = Diagnostics(**d)
        lap = None
        if m["laplace"] is not None:
            lap = LaplaceResult(log_z=m["laplace"]["log_z"], map_point=a["laplace_map"],
                                covariance=a["laplace_covariance"],
                                method=m["laplace"]["method"], label=m["laplace"]["label"])
        models[name] = ModelResult(name=name, title=m["title"],
                                   one_dimensional=m["one_dimensional"], names=m["names"],
                                   units=m["units"], evidence=ev, posterior=post,
                                   diagnostics=diag, laplace=lap,
                                   savage_dickey=m["savage_dickey"], loo=m["loo"],
                                   run_time=m["run_time"],
                                   nuisance_names=list(m.get("nuisance_names", [])),
                                   nuisance_samples=a["nuisance_samples"]
                                   if "nuisance_samples" in a else None,
                                   analysis=m["analysis"])
    c = doc["comparison"]
    cmp_ = Comparison(names=tuple(c["names"]), log_z=c["log_z"], log_z_err=c["log_z_err"],
                      one_dimensional=c["one_dimensional"],
                      prior_probability=c["prior_probability"],
                      posterior_probability=c["posterior_probability"],
                      pairs=tuple(PairComparison(p["a"], p["b"], p["ln_k"], p["ln_k_err"],
                                                 p["wording"]) for p in c["pairs"]),
                      p_one_dimensional=c["p_one_dimensional"],
                      p_one_dimensional_err=c["p_one_dimensional_err"], best=c["best"],
                      verdict=c["verdict"], prior_odds_stated=c["prior_odds"],
                      unreliable=tuple(c["unreliable"]), reliability=c["reliability"])
    return RunResults(models=models, comparison=cmp_, reliable=doc["reliable"], out=out,
                      seed=doc["seed"], settings=doc["settings"],
                      provenance=doc["provenance"], case_path=out / doc["case_file"],
                      budget=doc["budget"], sensitivity=doc["sensitivity"])


def export_samples(results) -> list:
    """Write ``samples/<model>.nc`` (NetCDF, post-burn-in chain) and ``samples/<model>.csv``.

    Parameters
    ----------
    results : RunResults

    Returns
    -------
    list of pathlib.Path
        The files written.

    References
    ----------
    .. [1] R. Kumar et al., J. Open Source Softw. 4, 1143 (2019): ArviZ InferenceData.
    .. [2] Y. Shafranovich, "Common Format and MIME Type for CSV Files", RFC 4180 (2005).
    """
    from ..inference.diagnostics import to_inference_data
    folder = Path(results.out) / "samples"
    folder.mkdir(parents=True, exist_ok=True)
    written = []
    for name, mr in results.models.items():
        post = mr.posterior
        idata = to_inference_data(post.chain[post.burn_in:], list(mr.names))
        fd, tmp = tempfile.mkstemp(dir=folder, prefix=f".{name}.", suffix=".nc")
        os.close(fd)
        os.chmod(tmp, new_file_mode())
        try:
            idata.to_netcdf(tmp)
            os.replace(tmp, folder / f"{name}.nc")
        except BaseException:
            Path(tmp).unlink(missing_ok=True)
            raise
        lines = [",".join(mr.full_names)]
        lines += [",".join(repr(float(v)) for v in row) for row in np.asarray(mr.full_samples)]
        atomic_write(folder / f"{name}.csv", "\n".join(lines) + "\n")
        written += [folder / f"{name}.nc", folder / f"{name}.csv"]
    return written
