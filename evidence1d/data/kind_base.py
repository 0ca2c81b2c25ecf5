"""Dataset kinds as objects: the contract every kind fulfils, and the column layouts.

Every kind of :data:`KINDS` owns

* its column layout: canonical columns, the header spellings each accepts, the unit keys of
  the case file and the value column (a kind *is* a :class:`ColumnLayout`; a crystal
  spectrum also accepts the Miller-index layout :data:`CRYSTAL_HKL`);
* the conversion of its measured value between the data's units and internal units, both
  ways: :meth:`~DatasetKind.to_internal` when a file is loaded,
  :meth:`~DatasetKind.from_internal` when the simulator writes one;
* whether it is a neutron spectrum or a thermodynamic curve, and the
  :class:`~evidence1d.families.base.Family` method that predicts it
  (:attr:`~DatasetKind.family_method`);
* its nuisance parameters (per dataset: scale, backgrounds, elastic line, error inflation)
  and sample-level extras (χ₀, C_imp, γ_e, β), with their default priors;
* the labels of its figure axes.

Internal units: meV, K, Å⁻¹, emu/mol of magnetic ion, J/(mol K) of magnetic ion
(:mod:`evidence1d.units`, CODATA constants).

References
----------
C. Kittel, *Introduction to Solid State Physics*, 8th ed. (Wiley, 2005), Ch. 5 (C = γT + βT³
of electrons and Debye phonons at low T), Ch. 11 and 14 (Curie law C/T, magnetic entropy).
G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering* (CUP, 1978), Ch. 7.
"""
from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from .columns import known_names

__all__ = ["ColumnLayout", "KindSpec", "DatasetKind"]


@dataclass(frozen=True)
class ColumnLayout:
    """The columns of a data file of one kind and the units they carry.

    Attributes
    ----------
    columns : dict of str to tuple of str
        Canonical column name to accepted header spellings (case-insensitive; the error
        column also accepts the spellings of :func:`~evidence1d.data.columns.error_aliases`).
    units : dict of str to dict or tuple or None
        Unit key in the case file to the accepted units (``None``: any label, e.g. intensity).
    min_points : int
        Fewest rows that make a usable dataset.
    description : str
    value : str
        The column of the measured value (the error column is its standard deviation).
    column_units : dict of str to str
        Column to the unit key its header unit declares.
    error_stems : tuple of str or None
        Spellings of the value from which error headers are formed (``d<stem>``,
        ``<stem>_err``, ...); None: every spelling of the value column.
    optional : tuple of str
        Columns that may be absent.
    """

    columns: dict
    units: dict
    min_points: int
    description: str
    value: str = "intensity"
    column_units: dict = field(default_factory=dict)
    error_stems: tuple | None = None
    optional: tuple = ()


#: the former name of :class:`ColumnLayout`
KindSpec = ColumnLayout


@dataclass(frozen=True, eq=False, repr=False, kw_only=True)
class DatasetKind(ColumnLayout):
    """A dataset kind: its columns (it is a :class:`ColumnLayout`) and its behaviour.

    Attributes
    ----------
    name : str
        What case files call it (``kind: susceptibility``).
    is_spectrum : bool
        A neutron spectrum (else a thermodynamic curve against temperature).
    family_method : str
        The :class:`~evidence1d.families.base.Family` method that predicts it; a family
        supporting the kind must implement it.
    value_unit : str
        The unit key of the measured value (``intensity``, ``chi``, ...).
    value_label : str
        Axis label of the value in internal units (matplotlib mathtext).
    x_label : str
        Axis label of the independent variable drawn along x.
    extras : tuple of Extra
        Sample-level extras the model adds to this kind, in order
        (:class:`~evidence1d.data.thermo_kinds.Extra`; none for spectra).
    powder : bool
        A powder spectrum: its points are |Q| (the family's spectrum is averaged over the
        directions of Q).
    """

    name: str
    is_spectrum: bool
    family_method: str
    value_unit: str
    value_label: str
    x_label: str
    extras: tuple = ()
    powder: bool = False

    # kinds are singletons: compared and hashed by identity, unpickled as the registry's own
    __eq__ = object.__eq__
    __hash__ = object.__hash__

    def __reduce__(self):
        from .kinds import kind_named
        return kind_named, (self.name,)

    def __repr__(self) -> str:
        return f"<dataset kind {self.name}>"

    @property
    def single_crystal(self) -> bool:
        """A single-crystal spectrum: points with wavevector components Q_par, Q_perp,
        Q_perp2 (Å⁻¹) and energies."""
        return self.is_spectrum and not self.powder

    # ------------------------------------------------------------------ reading
    def layout_for(self, table, block) -> tuple:
        """(column layout, column mapping) that reads ``table`` (the kind's own layout)."""
        return self, dict(block.get("columns") or {})

    def known_names(self, overrides=None) -> set:
        """Lower-case column names a file of this kind may use (for commented headers)."""
        return known_names(self, overrides)

    def check_units(self, layout, units: dict, where: str) -> None:
        """Complete or check ``units`` for ``layout`` in place (nothing by default)."""

    def read(self, cols, units, sample, block, loc) -> tuple:
        """Independent variables, values and errors of the kept points in internal units.

        Parameters
        ----------
        cols : dict of str to ndarray
            Column of the kind to its values, in the data's units.
        units : dict
            The data's units (unit key to canonical unit).
        sample : object
            The case's sample (geometry or lattice; ions per formula unit).
        block : dict
            The validated dataset block.
        loc : callable
            ``loc(i, column)`` -> the location keywords of point ``i`` for an error.

        Returns
        -------
        x : dict of str to ndarray
        y, err : ndarray

        Raises
        ------
        InputError
        """
        raise NotImplementedError

    # ------------------------------------------------------------------ units
    def value_factor(self, units: dict) -> float:
        """Internal units per unit of the data's value (1 for a free label)."""
        return 1.0

    def to_internal(self, values, units: dict, fu: float = 1.0) -> np.ndarray:
        """The measured value (or its error) in internal units.

        Parameters
        ----------
        values : array_like
            In the data's unit ``units[self.value_unit]``.
        units : dict
            The data's units.
        fu : float
            Formula units per magnetic ion for data per mole of formula unit (1 otherwise).
        """
        return np.array(values, dtype=float)

    def from_internal(self, values, units: dict, fu: float = 1.0) -> np.ndarray:
        """Inverse of :meth:`to_internal`: internal units back to the data's units.

        Parameters
        ----------
        values : array_like
            In internal units.
        units : dict
            The data's units.
        fu : float
            Formula units per magnetic ion for data per mole of formula unit (1 otherwise).
        """
        return np.asarray(values, dtype=float) / 1.0

    # ------------------------------------------------------------------ nuisances
    def own_nuisances(self, options: dict) -> list:
        """Short names of the dataset's own linear nuisances, given its options."""
        return []

    def nuisance_names(self, name: str, options: dict) -> tuple:
        """(own nuisances ``<name>:<what>``, sample extras) a dataset of this kind uses."""
        own = [f"{name}:{s}" for s in self.own_nuisances(options)]
        if options.get("inflate_errors", False):
            own.append(f"{name}:inflate")
        extras = [e.name for e in self.extras if options.get(e.option, True)]
        return own, extras

    def extra(self, name: str):
        """The :class:`~evidence1d.data.thermo_kinds.Extra` called ``name`` of this kind."""
        return next(e for e in self.extras if e.name == name)

    def own_priors(self, dataset, nuisance, sigma) -> dict:
        """Default priors of the dataset's own linear nuisances (none by default)."""
        return {}

    def default_priors(self, dataset, nuisance, extras, sigma=None) -> dict:
        """Default prior specs of a dataset's nuisances and extras.

        They never look at the measured values (only at the data's declared units and the
        ranges of the independent variables), so the data are not used twice.

        Parameters
        ----------
        dataset : Dataset
        nuisance, extras : list of str
            From :meth:`nuisance_names`.
        sigma : ndarray, optional
            Energy-resolution standard deviations (meV) of a spectrum's points.

        Returns
        -------
        dict of str to dict
            Prior specs; error inflation is log-uniform on [1, 10] (common practice).
        """
        out = self.own_priors(dataset, nuisance, sigma)
        for e in extras:
            out[e] = self.extra(e).default_prior()
        if f"{dataset.name}:inflate" in nuisance:
            out[f"{dataset.name}:inflate"] = {"kind": "log_uniform", "lower": 1.0,
                                              "upper": 10.0}
        return out

    def nuisance_unit(self, short: str, units: dict) -> str:
        """Unit of the nuisance ``<dataset>:<short>`` of a dataset with data units ``units``."""
        return {"inflate": "1"}.get(short, "")

    # ------------------------------------------------------------------ formula units
    def per_formula_unit(self, block, sample) -> float:
        """Formula units per magnetic ion the value is divided by (``per: formula_unit``)."""
        return 1.0
