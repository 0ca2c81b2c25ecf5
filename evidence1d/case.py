"""The case file: one sample, its datasets, the model families to compare, the settings.

A case file is YAML (see README, "The case file").  :func:`load_case` reads and validates it
into a :class:`Case`; every mistake is an :class:`~evidence1d.errors.InputError` naming the
file, line and key.  Relative paths resolve against the case file's folder.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from pathlib import Path

from .cards import ModelCard, card_path, load_card
from .data import KINDS, SPECTRUM_KINDS, load_dataset
from .data.geometry import make_geometry
from .errors import InputError, closest_key
from .figure_settings import figure_settings
from .inference.tempering import DEFAULT_PARTICLES, IMPORTANCE_DRAWS_PER_PARTICLE
from .physics.powder_settings import SETTINGS_FIELDS as _POWDER_FIELDS
from .schema import (Field, Spec, as_any, as_bool, as_float_list, as_int, as_mapping,
                     as_positive_float, as_positive_int, as_str, check_mapping, integer,
                     load_yaml, one_of, real)

__all__ = ["Sample", "ModelChoice", "Case", "load_case"]


# lengths of real crystals lie well inside 0.5–1000 Å (common practice); outside it the
# reciprocal lattice under- or overflows in double precision
_LENGTH = real(0.5, 1000.0, note="Å, a crystal's length")
_LATTICE = Spec({"a": Field(_LENGTH, required=True, help="Å"),
                 "b": Field(_LENGTH, required=True, help="Å"),
                 "c": Field(_LENGTH, required=True, help="Å"),
                 "alpha": Field(as_positive_float, default=90.0, help="degrees, b to c"),
                 "beta": Field(as_positive_float, default=90.0, help="degrees, a to c"),
                 "gamma": Field(as_positive_float, default=90.0, help="degrees, a to b")},
                what="lattice (a, b, c in Å; alpha, beta, gamma in degrees, default 90)")

_SAMPLE = Spec({
    "name": Field(as_str, default="sample", help="sample name"),
    "ion": Field(as_str, required=True, help="magnetic ion element, e.g. Cu"),
    "charge": Field(as_int, required=True, help="ionic charge, e.g. 2 for Cu2+"),
    "spin": Field(as_positive_float, default=0.5, help="spin quantum number S"),
    "g": Field(as_mapping, default=None, help="prior of the g factor {kind: normal, ...}"),
    "spin_spacing": Field(_LENGTH, required=True, help="spin spacing d along the chain in Å"),
    "lattice": Field(as_any, required=True, help="{a, b, c} in Å, {alpha, beta, gamma} in °"),
    "chain": Field(as_any, default="c", help="chain direction: a crystal axis (a, b, c) or a "
                                           "real-space vector [u, v, w]"),
    "ions_per_formula_unit": Field(as_positive_float, default=None,
                                   help="magnetic ions per formula unit (per-formula-unit data)"),
    "formula_units_per_ion": Field(as_positive_float, default=None,
                                   help="older spelling: formula units per magnetic ion, the "
                                        "inverse of ions_per_formula_unit"),
}, what="the sample block")

_RESOLUTION = Spec({"fwhm": Field(as_float_list, required=True,
                                  help="FWHM polynomial coefficients c0 + c1 E + ... in meV"),
                    "q_fwhm": Field(as_float_list, default=None,
                                    help="momentum-resolution FWHM [along the chain, across "
                                         "it] in the dataset's wavevector unit")},
                   what="resolution")

_DATASET = Spec({
    "name": Field(as_str, default=None, help="dataset name (default: file name)"),
    "kind": Field(one_of(*KINDS), required=True, help=f"one of {', '.join(KINDS)}"),
    "file": Field(as_str, required=True, help="data file path"),
    "units": Field(as_mapping, default={}, help="units of the columns (or in the headers)"),
    "columns": Field(as_mapping, default={}, help="column of the kind -> header in the file"),
    "masked": Field(one_of("error", "drop"), default="error",
                    help="points with non-finite values or errors <= 0: error or drop"),
    "entry": Field(as_str, default=None, help="HDF5/NeXus files: the NXentry or NXdata group"),
    "temperature": Field(as_positive_float, default=None, help="sample temperature in K"),
    "resolution": Field(as_any, default=None, help="{fwhm: [c0, c1, ...]} in meV"),
    "background": Field(one_of("none", "flat", "linear"), default="linear"),
    "elastic": Field(as_bool, default=False, help="fit an elastic line"),
    "powder_average": Field(as_any, default=None),
    "per": Field(one_of("magnetic_ion", "formula_unit"), default="magnetic_ion"),
    "field": Field(one_of("powder", "z", "xy"), default="powder"),
    "chi0": Field(as_bool, default=True), "impurity": Field(as_bool, default=True),
    "electronic": Field(as_bool, default=True), "lattice": Field(as_bool, default=True),
    "noise": Field(one_of("gaussian", "student_t"), default="gaussian"),
    "nu": Field(as_positive_float, default=4.0, help="Student-t degrees of freedom"),
    "inflate_errors": Field(as_bool, default=False),
    "priors": Field(as_mapping, default={}, help="nuisance prior overrides"),
    "absolute_scale": Field(as_any, default=None,
                            help="true or {uncertainty: u}: intensities in mb/sr/meV (or "
                                 "b/sr/meV) per magnetic ion, checked against each family"),
}, what="a dataset block")

_ABSOLUTE = Spec({"uncertainty": Field(real(0.0, 1.0, lower_open=True), default=None,
                                       help="fractional calibration uncertainty (default "
                                            "0.2)")},
                 what="absolute_scale")

_MODEL = Spec({"name": Field(as_str, default=None, help="bundled model name"),
               "card": Field(as_str, default=None, help="path of a model card of your own"),
               "priors": Field(as_mapping, default={}, help="prior overrides"),
               "options": Field(as_mapping, default={},
                                help="family options overriding the card's (e.g. interchain)")},
              what="a model entry")

#: the powder-average settings a case file may give (None: the default of
#: :class:`evidence1d.physics.powder_settings.PowderSettings`)
_POWDER = Spec({k: Field(_POWDER_FIELDS[k].convert, help=_POWDER_FIELDS[k].help)
                for k in ("tolerance", "phase_step", "max_grid")}, what="powder_average")

#: the sampler settings and their defaults (``--quick`` scales them down)
_SAMPLER = Spec({
    "walkers": Field(integer(0), default=0, help="emcee walkers (0: automatic)"),
    "steps": Field(as_positive_int, default=1000,
                   help="most emcee steps per walker (fewer once posterior_ess is reached)"),
    "posterior_ess": Field(integer(0), default=2000,
                           help="stop the posterior once every convergence check passes and "
                                "each parameter's bulk and tail ESS reach this (0: run every "
                                "step)"),
    "particles": Field(as_positive_int, default=DEFAULT_PARTICLES,
                       help="particles per evidence island"),
    "islands": Field(as_positive_int, default=8, help="independent evidence runs"),
    "importance_draws": Field(integer(0), default=IMPORTANCE_DRAWS_PER_PARTICLE,
                              help="draws of each island's final importance stage, per "
                                   "particle (0: the tempered estimate alone)"),
    "mcmc_steps": Field(integer(0), default=0,
                        help="rejuvenation steps per temperature (0: auto)"),
    "ess_fraction": Field(real(0.0, 1.0, lower_open=True, upper_open=True), default=0.5,
                          help="target conditional ESS fraction"),
    "checkpoint_every": Field(as_positive_int, default=200, help="steps between checkpoints"),
    "marginalise": Field(as_bool, default=True,
                         help="integrate linear nuisances out analytically"),
}, what="the sampler block")

_CASE = Spec({
    "title": Field(as_str, default=None),
    "sample": Field(as_any, required=True, help="the sample block"),
    "datasets": Field(as_any, required=True, help="list of datasets"),
    "models": Field(as_any, required=True, help="list of model families to compare"),
    "extras": Field(as_mapping, default={}, help="prior overrides of chi0, c_imp, gamma_e, "
                                               "beta_lattice"),
    "sampler": Field(as_any, default={}),
    "prior_odds": Field(as_mapping, default=None, help="prior model odds {model: weight}"),
    "seed": Field(as_int, default=20261201),
    "output": Field(as_str, default=None, help="output folder"),
    "figures": Field(as_mapping, default=None, help="figure choices: cuts, temperature_axis, "
                                                  "map_scale, map_percentiles, titles, truths"),
    "one_dimensional_limits": Field(one_of("exclude", "include",
                                           what="one_dimensional_limits choice"),
                                    default="exclude",
                                    help="whether P(1D) counts the nested one-dimensional "
                                         "limits of other families (Savage–Dickey)"),
}, what="the case file")


@dataclass(frozen=True)
class Sample:
    """The sample block.

    Attributes
    ----------
    name, ion : str
    charge : int
    spin : float
    g_prior : Prior or None
    spin_spacing : float
        d in Å.
    lattice : dict
        a, b, c in Å; alpha, beta, gamma in degrees.
    formula_units_per_ion : float
        1 / ions_per_formula_unit (1 if undeclared).
    ions_per_formula_unit : float or None
        Magnetic ions per formula unit, None if the case file does not say.
    geometry : evidence1d.data.geometry.Geometry or None
        Reciprocal lattice and chain direction (Q_∥, Q_⊥ from H, K, L).
    """

    name: str
    ion: str
    charge: int
    spin: float
    g_prior: object
    spin_spacing: float
    lattice: dict
    formula_units_per_ion: float
    ions_per_formula_unit: float | None = None
    geometry: object = None


@dataclass(frozen=True)
class ModelChoice:
    """A model family chosen in the case file: its card and the prior overrides."""

    card: ModelCard
    priors: dict = field(default_factory=dict)

    @property
    def name(self) -> str:
        return self.card.name


class Case:
    """A validated case: sample, datasets, model families, priors, settings.

    Use :func:`load_case` to build one.  The methods expose exactly the problem the sampler
    sees, so that any external sampler gets the same answer.
    """

    def __init__(self, *, path, title, sample, datasets, models, extras, sampler, prior_odds,
                 seed, output, figures=None, one_dimensional_limits="exclude"):
        self.path = Path(path)
        self.title = title
        self.sample = sample
        self.datasets = list(datasets)
        self.models = dict(models)
        self.extras = dict(extras)
        self.sampler = dict(sampler)
        self.prior_odds = prior_odds
        self.seed = seed
        self.output = Path(output)
        self.figures = figures
        self.one_dimensional_limits = one_dimensional_limits
        self._problems = {}

    def __repr__(self):
        return (f"Case({self.path.name!r}, datasets={[d.name for d in self.datasets]}, "
                f"models={list(self.models)})")

    def __getstate__(self):
        state = self.__dict__.copy()
        state["_problems"] = {}
        return state

    def problem(self, model: str):
        """The :class:`~evidence1d.problem.JointProblem` of one model family (cached)."""
        from .problem import JointProblem
        if model not in self.models:
            hint = closest_key(model, self.models).replace("valid keys", "models in this case")
            raise InputError(f"unknown model '{model}'; {hint}")
        if model not in self._problems:
            self._problems[model] = JointProblem(
                self, self.models[model], marginalise=self.sampler.get("marginalise", True))
        return self._problems[model]

    def parameter_names(self, model: str) -> list:
        """Every sampled parameter of ``model``, physical then nuisance, in sampling order.

        Linear nuisances that are integrated out analytically (``sampler: {marginalise:
        true}``, the default) are not sampled; :meth:`marginalised_names` lists them.
        """
        return list(self.problem(model).names)

    def marginalised_names(self, model: str) -> list:
        """Linear nuisances of ``model`` integrated out analytically (not sampled)."""
        return list(self.problem(model).marginalised)

    def log_likelihood(self, model: str, theta):
        """Joint log-likelihood of all datasets.

        Parameters
        ----------
        model : str
        theta : array_like, shape (n,) or (k, n)
            Values of :meth:`parameter_names` in their units.

        Returns
        -------
        float or ndarray (k,)
            −inf outside the prior support.
        """
        return self.problem(model).log_likelihood(theta)

    def log_prior(self, model: str, theta):
        """Log prior density (same shapes as :meth:`log_likelihood`)."""
        return self.problem(model).log_prior(theta)

    def prior_transform(self, model: str, u):
        """Map points of the unit cube to parameters (shape (n,) or (k, n))."""
        return self.problem(model).prior_transform(u)

    def replace(self, *, data=None, priors=None, sampler=None, models=None, seed=None,
                title=None) -> "Case":
        """A variant of this case made in memory (no file read or written): other data
        ``{dataset: (y, err)}`` in internal units, prior overrides ``{model: {parameter:
        prior or declaration}}``, sampler settings laid over the case's, a subset of the
        models, another seed or title.  See :func:`evidence1d.variant.variant_parts`.

        Raises
        ------
        InputError
            An unknown dataset, model or parameter, bad values or a bad sampler setting.
        """
        from .variant import variant_parts
        datasets, chosen, odds = variant_parts(self, data=data, priors=priors, models=models)
        settings = check_mapping({**self.sampler, **(sampler or {})}, _SAMPLER, "sampler")
        return Case(path=self.path, title=self.title if title is None else title,
                    sample=self.sample, datasets=datasets, models=chosen,
                    extras=self.extras, sampler=settings, prior_odds=odds,
                    seed=self.seed if seed is None else int(seed), output=self.output,
                    figures=self.figures, one_dimensional_limits=self.one_dimensional_limits)


def _resolve(base: Path, p: str) -> Path:
    q = Path(p).expanduser()
    return q if q.is_absolute() else (base / q)


def _check_resolution(ds, doc, where) -> None:
    """The resolution FWHM polynomial must be positive at every energy of the dataset
    (and at the elastic line, E = 0, when one is fitted)."""
    import numpy as np
    E = np.asarray(ds.x["energy"], dtype=float)
    if ds.options.get("elastic"):
        E = np.append(E, 0.0)
    fwhm = np.polynomial.polynomial.polyval(E, ds.options["resolution"]["fwhm"])
    bad = np.flatnonzero(~(fwhm > 0))
    if bad.size:
        raise doc.error(f"the resolution FWHM c0 + c1 E + ... is {fwhm[bad[0]]:g} meV at "
                        f"E = {E[bad[0]]:g} meV; expected a width > 0 over the dataset's "
                        "energies", f"{where}.resolution.fwhm")


def _check_q_resolution(b, doc, where) -> None:
    """A momentum resolution is two non-negative widths, for single-crystal data only."""
    qf = b["resolution"].get("q_fwhm")
    if qf is None:
        return
    key = f"{where}.resolution.q_fwhm"
    if b["kind"] != "crystal_spectrum":
        raise doc.error("a momentum resolution applies to single-crystal spectra only; for a "
                        "powder spectrum remove 'q_fwhm'", key)
    if len(qf) != 2 or not all(v >= 0 for v in qf):
        raise doc.error(f"expected two widths >= 0 [along the chain, across it] in the "
                        f"dataset's wavevector unit; got {list(qf)!r} instead", key)


def _check_absolute_scale(ds, b, doc, where) -> None:
    """``absolute_scale: true | {uncertainty: u}`` for spectra whose intensity unit is an
    absolute one (:mod:`evidence1d.analysis.absolute`); stored as a mapping or None."""
    from .units import ABSOLUTE_UNCERTAINTY, absolute_intensity_factor
    raw = b.get("absolute_scale")
    key = f"{where}.absolute_scale"
    if raw is None or raw is False:
        ds.options["absolute_scale"] = None
        return
    if b["kind"] not in SPECTRUM_KINDS:
        raise doc.error(f"an absolute scale applies to neutron spectra only; remove "
                        f"'absolute_scale' from this {b['kind']} dataset", key)
    if raw is True:
        opt = {"uncertainty": ABSOLUTE_UNCERTAINTY}
    elif isinstance(raw, dict):
        opt = check_mapping(raw, _ABSOLUTE, key, doc)
        if opt["uncertainty"] is None:
            opt["uncertainty"] = ABSOLUTE_UNCERTAINTY
    else:
        raise doc.error(f"expected true or {{uncertainty: u}} (u a fraction, e.g. 0.15); got "
                        f"{raw!r} instead", key)
    unit = ds.units.get("intensity")
    if absolute_intensity_factor(unit) is None:
        raise doc.error(f"an absolute scale needs the intensity in mb/sr/meV or b/sr/meV per "
                        f"magnetic ion; the intensity unit is {unit!r}",
                        f"{where}.units.intensity")
    ds.options["absolute_scale"] = opt


def _check_spin(card, sample, doc, where) -> None:
    """A family whose physics holds for certain spins only rejects any other sample spin."""
    from .families import FAMILY_CLASSES
    spins = getattr(FAMILY_CLASSES[card.family], "spins", None)
    if spins is not None and not any(abs(sample.spin - s) < 1e-9 for s in spins):
        allowed = " or ".join(f"{s:g}" for s in spins)
        raise doc.error(f"model '{card.name}' describes spin {allowed} only, but the sample's "
                        f"spin is {sample.spin:g}; remove the model from 'models' or correct "
                        "sample.spin", where)


def _check_kinds(card, datasets, doc, where) -> None:
    """A family predicts the dataset kinds it declares only; a case with others is rejected."""
    from .families import FAMILY_CLASSES
    family = FAMILY_CLASSES[card.family]
    for ds in datasets:
        if not family.supports(ds.kind):
            raise doc.error(family.unsupported_message(ds.kind, ds.name), where)


def _with_options(card, options, sample, doc, where):
    """The card with the case file's family options laid over its own, checked by building
    the family once (unknown options and bad values are one-line errors at ``where``)."""
    import dataclasses

    from .families import FAMILY_CLASSES
    from .problem import _make_family
    new = dataclasses.replace(card, options={**card.options, **options})
    try:
        _make_family(FAMILY_CLASSES[card.family], new, sample)
    except InputError as exc:
        key = exc.key.split(".", 1)[-1] if exc.key and exc.key.startswith("options.") else None
        raise doc.error(exc.message, f"{where}.{key}" if key else where) from None
    return new


def load_case(path) -> Case:
    """Read and validate a case file.

    Parameters
    ----------
    path : str or pathlib.Path
        The case file (YAML).

    Returns
    -------
    Case

    Raises
    ------
    InputError
        Any problem in the case file, the data files or the model cards, in one line.
    """
    from .inference.prior_specs import prior_from_spec

    doc = load_yaml(path)
    base = doc.path.resolve().parent
    top = check_mapping(doc.data, _CASE, "", doc)

    def prior(spec, where):
        return prior_from_spec(spec, where, doc)

    s = check_mapping(top["sample"], _SAMPLE, "sample", doc)
    lattice = check_mapping(s["lattice"], _LATTICE, "sample.lattice", doc)
    try:
        geometry = make_geometry(lattice, s["chain"])
    except InputError as exc:
        raise doc.error(exc.message, exc.key) from None
    ions = s["ions_per_formula_unit"]
    if s["formula_units_per_ion"] is not None:
        if ions is not None:
            raise doc.error("give ions_per_formula_unit or the older formula_units_per_ion, "
                            "not both", "sample.formula_units_per_ion")
        ions = 1.0 / s["formula_units_per_ion"]
    sample = Sample(name=s["name"], ion=s["ion"], charge=s["charge"], spin=s["spin"],
                    g_prior=None if s["g"] is None else prior(s["g"], "sample.g"),
                    spin_spacing=s["spin_spacing"], lattice=lattice,
                    formula_units_per_ion=1.0 / ions if ions else 1.0,
                    ions_per_formula_unit=ions, geometry=geometry)
    from .physics.neutron import magnetic_form_factor
    try:
        magnetic_form_factor(1.0, sample.ion, sample.charge, 2.0)
    except InputError as exc:
        raise doc.error(exc.message, "sample.ion") from None

    if not isinstance(top["datasets"], list) or not top["datasets"]:
        raise doc.error("expected a non-empty list of datasets", "datasets")
    datasets, names = [], {}
    for i, block in enumerate(top["datasets"]):
        where = f"datasets[{i}]"
        b = check_mapping(block, _DATASET, where, doc)
        b["_where"] = where
        if b["kind"] in SPECTRUM_KINDS:
            for req in ("temperature", "resolution"):
                if b[req] is None:
                    raise doc.error(f"a {b['kind']} dataset needs '{req}'"
                                    + (" in K" if req == "temperature" else
                                       " {fwhm: [c0, c1, ...]} in meV"), where)
            b["resolution"] = check_mapping(b["resolution"], _RESOLUTION,
                                            f"{where}.resolution", doc)
            _check_q_resolution(b, doc, where)
            if b["powder_average"] is not None:
                b["powder_average"] = check_mapping(b["powder_average"], _POWDER,
                                                    f"{where}.powder_average", doc)
        fpath = _resolve(base, b["file"])
        name = b["name"] or Path(b["file"]).stem
        if not name.replace("_", "").replace("-", "").isalnum():
            raise doc.error(f"dataset name {name!r} may hold only letters, digits, '_' and '-'",
                            f"{where}.name")
        if name in names:
            raise doc.error(f"duplicated dataset name '{name}' (also datasets[{names[name]}]); "
                            "give each dataset its own 'name'", f"{where}.name")
        names[name] = i
        try:
            ds = load_dataset(b, fpath, name=name, sample=sample)
        except InputError as exc:
            if exc.file is None:
                raise doc.error(exc.message, exc.key or where) from None
            raise
        if b["kind"] in SPECTRUM_KINDS:
            _check_resolution(ds, doc, where)
        _check_absolute_scale(ds, b, doc, where)
        for pk, spec in (b["priors"] or {}).items():
            ds.options["priors"][pk] = prior(spec, f"{where}.priors.{pk}")
        datasets.append(ds)

    if not isinstance(top["models"], list) or not top["models"]:
        raise doc.error("expected a non-empty list of models, e.g. "
                        "[spinon_continuum, gapped_spin_wave]", "models")
    models = {}
    for i, entry in enumerate(top["models"]):
        where = f"models[{i}]"
        if isinstance(entry, str):
            entry = {"name": entry}
        m = check_mapping(entry, _MODEL, where, doc)
        if (m["name"] is None) == (m["card"] is None):
            raise doc.error("give exactly one of 'name' (a bundled model) or 'card' (a card "
                            "file)", where)
        if m["card"] is not None:
            card = load_card(_resolve(base, m["card"]))
        else:
            try:
                cpath = card_path(m["name"])
            except InputError as exc:
                raise doc.error(exc.message, f"{where}.name") from None
            card = load_card(cpath)
        if card.name in models:
            raise doc.error(f"model '{card.name}' is listed twice", where)
        _check_spin(card, sample, doc, where)
        _check_kinds(card, datasets, doc, where)
        if m["options"]:
            card = _with_options(card, m["options"], sample, doc, f"{where}.options")
        overrides = {}
        for pk, spec in (m["priors"] or {}).items():
            if pk not in card.parameters:
                raise doc.error(f"'{pk}' is not a parameter of model '{card.name}'; "
                                f"{closest_key(str(pk), card.parameters)}",
                                f"{where}.priors.{pk}")
            overrides[pk] = prior(spec, f"{where}.priors.{pk}")
        models[card.name] = ModelChoice(card=card, priors=overrides)

    extras = {}
    from .families.predict import SAMPLE_EXTRAS
    for k, spec in top["extras"].items():
        if k not in SAMPLE_EXTRAS:
            raise doc.error(f"unknown extra '{k}'; {closest_key(str(k), SAMPLE_EXTRAS)}",
                            f"extras.{k}")
        extras[k] = prior(spec, f"extras.{k}")
    sampler = check_mapping(top["sampler"] or {}, _SAMPLER, "sampler", doc)
    if top["prior_odds"] is not None:
        for k, v in top["prior_odds"].items():
            if k not in models:
                raise doc.error(f"prior_odds names '{k}', which is not a model of this case; "
                                f"{closest_key(str(k), models)}", f"prior_odds.{k}")
            check_mapping({k: v}, Spec({k: Field(as_positive_float)}, what="prior_odds"),
                          "prior_odds", doc)
    output = _resolve(base, top["output"]) if top["output"] else base / "results"
    if top["figures"] is not None:
        try:
            figure_settings(top["figures"], datasets=[d.name for d in datasets],
                            models=list(models))
        except InputError as exc:
            raise doc.error(exc.message, exc.key or "figures") from None
    return Case(path=doc.path, title=top["title"] or doc.path.stem, sample=sample,
                datasets=datasets, models=models, extras=extras, sampler=sampler,
                prior_odds=top["prior_odds"], seed=top["seed"], output=output,
                figures=top["figures"], one_dimensional_limits=top["one_dimensional_limits"])
