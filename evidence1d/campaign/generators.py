"""Out-of-family generators for ``evidence1d calibrate --generators FILE.py``: the plug-in
interface and its loader.

A calibration draws its replicates from the case's own families; a generator file adds
truths that are *not* one of them (physics written elsewhere, for instance an independent
misspecification suite), so the calibration also says how the comparison treats data no
family makes exactly.  The package holds no such physics: it only defines the interface,
loads the file and applies the case's own noise to what a generator returns.

The file is plain Python.  It defines ``GENERATORS``, a list of mappings::

    GENERATORS = [
        {"name": "chain_exact",          # letters, digits, '_', '.', '+', '-'; not a model
         "one_dimensional": True,        # its class in the confusion matrix and 1D rates
         "simulate": chain_exact,        # simulate(design, rng) -> {dataset: values}
         "description": "..."},          # optional, copied to calibration.json
    ]

``simulate(design, rng)`` receives the case's design (:func:`case_design`: every dataset's
independent variables in internal units, its temperature and resolution FWHM per point,
its units, measured values and errors in the dataset's own units, and the sample's
geometry) and a ``numpy.random.Generator`` for the generator's own random choices (its
parameters); it returns ``{dataset name: noiseless values}`` with one finite value per
point in the dataset's own units (those of its file), or a pair ``(values, parameters)``
whose second element, ``{name: number}``, is recorded as the replicate's truth.  The
campaign converts the values to internal units and adds the case's noise exactly as for a
family's truth (:func:`evidence1d.campaign.replicate.add_noise`).

Every generator is called once on the case before the campaign starts (a dry run with a
fixed stream), so a bad file or a generator that cannot make the case's datasets stops the
command with one line naming the file.  The file is shipped to the workers as text and run
there (cached per process by its SHA-256), so a cluster needs no copy of it; whatever it
imports must be importable on the workers.

References
----------
.. [1] S. R. Cook, A. Gelman and D. B. Rubin, J. Comput. Graph. Stat. 15, 675 (2006):
   simulate from a known truth, fit, compare.
.. [2] Python Language Reference, §4.2 (``exec`` of a module's code in its namespace).
"""
from __future__ import annotations

import hashlib
import math
import re
import types
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..errors import InputError

__all__ = ["Generator", "GeneratorFile", "load_generator_file", "case_design",
           "generator_data"]

_NAME = re.compile(r"^[A-Za-z0-9_.+-]+$")
_KEYS = {"name", "one_dimensional", "simulate", "description"}
#: modules of loaded generator files, per process, by SHA-256 of their text
_LOADED: dict = {}


@dataclass(frozen=True)
class Generator:
    """One out-of-family generator of a generator file.

    Attributes
    ----------
    name : str
    one_dimensional : bool
        Whether its data count as one-dimensional (rows of the confusion matrix,
        ``false_1d_rate`` and ``missed_1d_rate``).
    simulate : callable
        ``simulate(design, rng)`` (see the module's description).
    description : str
    """

    name: str
    one_dimensional: bool
    simulate: object
    description: str = ""


@dataclass(frozen=True)
class GeneratorFile:
    """A generator file as text (what a campaign's tasks carry to the workers).

    Attributes
    ----------
    path : str
        Where it was read (its ``__file__`` when run; named in every error).
    text : str
    sha256 : str
    """

    path: str
    text: str
    sha256: str

    def generators(self) -> dict:
        """Name -> :class:`Generator`, from the file run once per process.

        Raises
        ------
        InputError
            The file does not run, or its ``GENERATORS`` is malformed.
        """
        if self.sha256 not in _LOADED:
            _LOADED[self.sha256] = _parse(self.path, self._module())
        return _LOADED[self.sha256]

    def _module(self):
        name = f"evidence1d_generators_{self.sha256[:16]}"
        mod = types.ModuleType(name)
        mod.__file__ = self.path
        try:
            code = compile(self.text, self.path, "exec")
            exec(code, mod.__dict__)                      # noqa: S102 (a user's plug-in)
        except SyntaxError as exc:
            raise InputError(f"generator file {self.path}, line {exc.lineno}: syntax "
                             f"error: {exc.msg}") from None
        except Exception as exc:                          # noqa: BLE001 (any error of a plug-in)
            raise InputError(f"generator file {self.path} fails when run: "
                             f"{exc.__class__.__name__}: {_one_line(exc)}") from None
        return mod


def _one_line(exc) -> str:
    return " ".join(str(exc).split()) or "(no message)"


def _parse(path: str, mod) -> dict:
    where = f"generator file {path}"
    gens = getattr(mod, "GENERATORS", None)
    if gens is None:
        raise InputError(f"{where} defines no GENERATORS; expected a list of "
                         "{name, one_dimensional, simulate[, description]} mappings")
    if not isinstance(gens, (list, tuple)) or not gens:
        raise InputError(f"{where}: GENERATORS must be a non-empty list; got "
                         f"{type(gens).__name__}")
    out = {}
    for i, g in enumerate(gens):
        at = f"{where}: GENERATORS[{i}]"
        if not isinstance(g, dict):
            raise InputError(f"{at} must be a mapping with keys name, one_dimensional, "
                             f"simulate; got {type(g).__name__}")
        missing = [k for k in ("name", "one_dimensional", "simulate") if k not in g]
        unknown = sorted(set(g) - _KEYS)
        if missing or unknown:
            raise InputError(f"{at}: " + ("missing " + ", ".join(missing) if missing
                                          else "unknown key(s) " + ", ".join(unknown))
                             + "; expected name, one_dimensional, simulate[, description]")
        name = g["name"]
        if not isinstance(name, str) or not _NAME.match(name):
            raise InputError(f"{at}: name must be letters, digits, '_', '.', '+' or '-'; "
                             f"got {name!r}")
        if name in out:
            raise InputError(f"{at}: the name '{name}' is used twice")
        if not isinstance(g["one_dimensional"], bool):
            raise InputError(f"{at} ('{name}'): one_dimensional must be true or false; got "
                             f"{g['one_dimensional']!r}")
        if not callable(g["simulate"]):
            raise InputError(f"{at} ('{name}'): simulate must be a function "
                             "simulate(design, rng); got "
                             f"{type(g['simulate']).__name__}")
        out[name] = Generator(name, g["one_dimensional"], g["simulate"],
                              " ".join(str(g.get("description", "")).split()))
    return out


def load_generator_file(path, case) -> tuple:
    """Read a generator file, check it, and try every generator once on ``case``.

    Parameters
    ----------
    path : str or pathlib.Path
        A ``.py`` file (see the module's description).
    case : Case
        Generator names must differ from its models.

    Returns
    -------
    (GeneratorFile, list of Generator)

    Raises
    ------
    InputError
        One line naming the file and what is wrong: missing or unreadable, not Python,
        failing when run, a malformed ``GENERATORS``, a name of a model of the case, or a
        generator whose dry run on the case's design fails or returns other datasets,
        another number of points or non-finite values.
    """
    p = Path(path)
    if p.suffix != ".py":
        raise InputError(f"generator file {p}: expected a Python file (.py)")
    try:
        text = p.read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError(f"cannot read generator file {p}: "
                         f"{getattr(exc, 'strerror', None) or exc}") from None
    gf = GeneratorFile(str(p.resolve()), text, hashlib.sha256(text.encode()).hexdigest())
    gens = gf.generators()
    for name in gens:
        if name in case.models:
            raise InputError(f"generator file {gf.path}: generator '{name}' has the name of "
                             "a model of the case; rename it")
    for g in gens.values():
        generator_data(case, gf, g.name, np.random.default_rng(0))
    return gf, list(gens.values())


def case_design(case) -> dict:
    """What a generator receives about the case (copies; nothing of the case can change).

    Returns
    -------
    dict
        ``sample``: ``ion``, ``charge``, ``spin``, ``spin_spacing`` (Å), ``lattice``
        (a, b, c in Å; angles in degrees), ``ions_per_formula_unit``.
        ``datasets``: name -> ``kind``, ``spectrum`` (bool), ``powder`` (bool), ``n``,
        ``x`` (internal units: ``Q_par``, ``Q_perp``, ``Q_perp2`` in Å⁻¹ and ``energy`` in
        meV for a crystal spectrum, ``Q`` and ``energy`` for a powder, ``T`` in K
        otherwise), ``temperature`` (K; spectra), ``fwhm`` (meV per point: the case's
        resolution polynomial c0 + c1 E + ...; spectra), ``units`` (the dataset's units),
        ``per`` (``ion`` or ``formula_unit``), ``values`` and ``errors`` (as measured, in
        the dataset's units).
    """
    s = case.sample
    fu = s.formula_units_per_ion
    out = {"sample": {"ion": s.ion, "charge": s.charge, "spin": s.spin,
                      "spin_spacing": s.spin_spacing, "lattice": dict(s.lattice),
                      "ions_per_formula_unit": s.ions_per_formula_unit}, "datasets": {}}
    for ds in case.datasets:
        spec = ds.spec
        f = fu if ds.options.get("per") == "formula_unit" else 1.0
        entry = {"kind": ds.kind, "spectrum": bool(spec.is_spectrum),
                 "powder": bool(spec.powder), "n": ds.n,
                 "x": {k: np.array(v, dtype=float) for k, v in ds.x.items()},
                 "temperature": None, "fwhm": None, "units": dict(ds.units),
                 "per": "formula_unit" if ds.options.get("per") == "formula_unit" else "ion",
                 "values": spec.from_internal(ds.y, ds.units, f),
                 "errors": spec.from_internal(ds.err, ds.units, f)}
        if spec.is_spectrum:
            entry["temperature"] = float(ds.options["temperature"])
            entry["fwhm"] = np.polynomial.polynomial.polyval(
                np.asarray(ds.x["energy"], dtype=float), ds.options["resolution"]["fwhm"])
        out["datasets"][ds.name] = entry
    return out


def generator_data(case, gfile: GeneratorFile, name: str, rng) -> tuple:
    """The noiseless values of every dataset of ``case`` from generator ``name``.

    Parameters
    ----------
    case : Case
    gfile : GeneratorFile
    name : str
    rng : numpy.random.Generator
        The generator's own stream (its parameters).

    Returns
    -------
    (dict of str to ndarray, dict of str to float)
        Values per dataset in internal units, and the parameters the generator reported.

    Raises
    ------
    InputError
        The generator raised, or returned other datasets, another number of points or
        non-finite values (one line naming the file and the generator).
    """
    gen = gfile.generators()[name]
    where = f"generator '{name}' of {gfile.path}"
    try:
        out = gen.simulate(case_design(case), rng)
    except InputError:
        raise
    except Exception as exc:                              # noqa: BLE001 (a user's plug-in)
        raise InputError(f"{where} fails: {exc.__class__.__name__}: "
                         f"{_one_line(exc)}") from None
    params = {}
    if isinstance(out, tuple) and len(out) == 2:
        out, params = out
        if not isinstance(params, dict) or not all(
                isinstance(v, (int, float)) and math.isfinite(v) for v in params.values()):
            raise InputError(f"{where}: the parameters it returns must be a mapping of "
                             "names to finite numbers")
    if not isinstance(out, dict):
        raise InputError(f"{where}: expected {{dataset name: values}} (or (values, "
                         f"parameters)); got {type(out).__name__}")
    names = [ds.name for ds in case.datasets]
    if sorted(out) != sorted(names):
        raise InputError(f"{where} returned datasets {sorted(out)}; expected exactly "
                         f"{sorted(names)}")
    fu = case.sample.formula_units_per_ion
    values = {}
    for ds in case.datasets:
        v = np.asarray(out[ds.name], dtype=float)
        if v.shape != (ds.n,):
            raise InputError(f"{where}: dataset '{ds.name}' has {ds.n} points; got values "
                             f"of shape {v.shape}")
        if not np.all(np.isfinite(v)):
            raise InputError(f"{where}: non-finite values for dataset '{ds.name}'")
        f = fu if ds.options.get("per") == "formula_unit" else 1.0
        values[ds.name] = ds.spec.to_internal(v, ds.units, f)
    return values, {k: float(v) for k, v in params.items()}
