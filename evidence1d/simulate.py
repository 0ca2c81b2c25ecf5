"""Synthetic datasets from a model card: the project's own simulator.

The points (wavevectors, energies, temperatures), units, resolution and sample come from a
case file whose data files act as templates; the values are the chosen family's prediction
at stated true parameters, with noise drawn from an explicit ``numpy.random.Generator``:

spectra   counting statistics: N ~ Poisson(I · exposure), I_obs = N / exposure,
          error = sqrt(max(N, 1)) / exposure  (``exposure`` in counts per intensity unit);
thermo    Gaussian: error = relative · |y| + floor, y_obs = y + error · z, z ~ N(0, 1).

Simulated data are not measurements; files written here say so in their header.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from .errors import InputError, closest_key

__all__ = ["NoiseModel", "simulate_case", "write_dataset", "NUISANCE_TRUTH_DEFAULTS"]

#: values a nuisance takes when the truth does not name it
NUISANCE_TRUTH_DEFAULTS = {"scale": 1.0, "background": 0.0, "slope": 0.0, "elastic": 0.0,
                           "inflate": 1.0, "chi0": 0.0, "c_imp": 0.0, "gamma_e": 0.0,
                           "beta_lattice": 0.0}


@dataclass(frozen=True)
class NoiseModel:
    """Noise of simulated data.

    Parameters
    ----------
    exposure : float
        Spectra: counts per unit of intensity (larger is less noisy).
    relative : float
        Thermodynamic data: relative error.
    floor : dict, optional
        Thermodynamic data: absolute error floor per kind name, in internal units
        (emu/mol, J/(mol K)); default the kind's ``noise_floor`` (1e-5 emu/mol,
        1e-3 J/(mol K)).
    """

    exposure: float = 50.0
    relative: float = 0.01
    floor: dict | None = None

    def thermo_floor(self, kind) -> float:
        """Absolute error floor (internal units) of a thermodynamic kind (object or name)."""
        from .data import kind_named
        kind = kind_named(getattr(kind, "name", kind))
        return (self.floor or {}).get(kind.name, kind.noise_floor)


def _truth_vector(problem, truth: dict) -> np.ndarray:
    unknown = [k for k in truth if k not in problem.all_names]
    if unknown:
        raise InputError(f"unknown parameter '{unknown[0]}' for model '{problem.model}'; "
                         f"{closest_key(unknown[0], problem.all_names)}")
    vec = []
    for name in problem.full_names:
        if name in truth:
            vec.append(float(truth[name]))
            continue
        short = name.split(":", 1)[-1]
        if name in problem.card.parameters:
            raise InputError(f"the truth must give the physical parameter '{name}' "
                             f"({problem.units[name]}); use --set {name}=VALUE")
        vec.append(NUISANCE_TRUTH_DEFAULTS.get(short, 0.0))
    return np.asarray(vec)


def simulate_case(case, model: str, truth: dict, noise: NoiseModel, rng) -> dict:
    """Simulate every dataset of ``case`` from ``model`` at the true parameters.

    Parameters
    ----------
    case : Case
        Its datasets give the points, units, temperatures and resolutions.
    model : str
        Name of a model of the case (the card to simulate from).
    truth : dict of str to float
        True parameter values in their units (physical ones required; nuisances default to
        :data:`NUISANCE_TRUTH_DEFAULTS`).
    noise : NoiseModel
    rng : numpy.random.Generator

    Returns
    -------
    dict of str to (y, err)
        Simulated values and errors per dataset, in internal units.
    """
    problem = case.problem(model)
    theta = _truth_vector(problem, truth)
    pred = problem.predict(theta[None, :])
    out = {}
    for ds in case.datasets:
        mu = pred[ds.name][0]
        if not np.all(np.isfinite(mu)):
            raise InputError(f"the model gives non-finite values for dataset '{ds.name}' at "
                             "these parameters; check the truth")
        if ds.spec.is_spectrum:
            lam = np.clip(mu, 0.0, None) * noise.exposure
            counts = rng.poisson(lam)
            y = counts / noise.exposure
            err = np.sqrt(np.maximum(counts, 1.0)) / noise.exposure
        else:
            err = noise.relative * np.abs(mu) + noise.thermo_floor(ds.spec)
            y = mu + err * rng.standard_normal(mu.shape)
        out[ds.name] = (y, err)
    return out


def write_dataset(ds, y, err, path, *, note: str, fu_per_ion: float = 1.0) -> None:
    """Write a simulated dataset as a comma-separated file in the dataset's own units.

    Parameters
    ----------
    ds : Dataset
        The template dataset (its independent columns are copied from its file).
    y, err : ndarray
        Simulated values and errors in internal units.
    path : str or pathlib.Path
    note : str
        Header comment (what was simulated, from which truth and seed).
    fu_per_ion : float
        The sample's formula units per magnetic ion (for per-formula-unit data).
    """
    from .data.table import parse_column_name
    spec = ds.spec
    fu = fu_per_ion if ds.options.get("per") == "formula_unit" else 1.0
    value_col = spec.value
    # the value's unit goes into the header when the template's header carried it
    vunit = spec.column_units.get(value_col)
    tag = (f" ({ds.units[vunit]})" if vunit and parse_column_name(
        ds.columns.get(value_col, value_col))[1] is not None else "")
    cols, header = [], []
    for canon in (ds.columns or spec.columns):  # the columns the template file supplied
        if canon == value_col:
            header.append(canon + tag)
            cols.append(spec.from_internal(y, ds.units, fu))
        elif canon == "error":
            header.append("error" + tag)
            cols.append(spec.from_internal(err, ds.units, fu))
        else:  # the template's points as read (masked points left out), header as written
            header.append(ds.columns[canon])
            cols.append(ds.raw[canon])
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    tmp = path.with_suffix(path.suffix + ".tmp")
    with open(tmp, "w", encoding="utf-8") as fh:
        for line in note.splitlines():
            fh.write(f"# {line}\n")
        fh.write(", ".join(header) + "\n")
        for row in zip(*cols):
            fh.write(", ".join(f"{v:.8g}" for v in row) + "\n")
    tmp.replace(path)


def write_template(path, columns: dict) -> None:
    """Write a grid of points as a data file with placeholder values (value 1, error 1).

    Parameters
    ----------
    path : str or pathlib.Path
    columns : dict of str to array_like
        Independent columns in the dataset's declared units, e.g. ``{"q_par": ...,
        "q_perp": ..., "energy": ...}`` or ``{"T": ...}``; the value and ``error`` columns
        are added.
    """
    cols = {k: np.asarray(v, dtype=float).ravel() for k, v in columns.items()}
    n = len(next(iter(cols.values())))
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    with open(path, "w", encoding="utf-8") as fh:
        fh.write(", ".join(list(cols) + ["value", "error"]) + "\n")
        for i in range(n):
            fh.write(", ".join(f"{cols[k][i]:.8g}" for k in cols) + ", 1, 1\n")


def regenerate(case_path, model: str, truth: dict, grids: dict, *, seed: int,
               noise: NoiseModel = NoiseModel(), scenario: str = "") -> dict:
    """Regenerate a case study's data files deterministically from a seed.

    Writes the grid of each dataset as a template, loads the case (which validates it),
    simulates every dataset from ``model`` at ``truth`` and overwrites the files with the
    simulated values, a header saying they are simulated, the truth and the seed.

    Parameters
    ----------
    case_path : str or pathlib.Path
        The case file; its ``datasets[*].file`` entries are the files written.
    model : str
        Model of the case to simulate from.
    truth : dict of str to float
        True parameter values (physical ones and any nuisances that are not neutral).
    grids : dict of str to dict
        Per data-file name (as in the case file), the independent columns
        (see :func:`write_template`).
    seed : int
        Seed of the noise.
    noise : NoiseModel
    scenario : str
        One line naming the invented scenario, written into each header.

    Returns
    -------
    dict of str to (y, err)
        What :func:`simulate_case` returned.
    """
    from .case import load_case
    from .schema import load_yaml
    case_path = Path(case_path)
    spec = load_yaml(case_path).data
    base = case_path.parent
    from .data import kind_named
    for block in spec["datasets"]:
        cols = grids[block["file"]]
        write_template(base / block["file"], cols)
        # the template's value column must carry the kind's name
        text = (base / block["file"]).read_text().replace(
            "value, error", f"{kind_named(block['kind']).value}, error", 1)
        (base / block["file"]).write_text(text)
    case = load_case(case_path)
    rng = np.random.default_rng(seed)
    sims = simulate_case(case, model, truth, noise, rng)
    note = (f"SIMULATED data (not a measurement): {scenario}\n"
            f"generated by evidence1d's simulator from model '{model}', seed {seed}\n"
            "truth: " + ", ".join(f"{k}={v:g}" for k, v in truth.items()))
    for ds in case.datasets:
        y, err = sims[ds.name]
        write_dataset(ds, y, err, ds.path, note=note,
                      fu_per_ion=case.sample.formula_units_per_ion)
    return sims
