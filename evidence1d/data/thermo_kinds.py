"""Thermodynamic dataset kinds: susceptibility χ(T), heat capacity C(T), entropy S_mag(T).

y(T) = y_model(T) + Σ a_j T^p_j: the kinds own their extras a_j (χ₀ + C_imp/T, γ_e T + β T³),
the conversion of their values between the data's units and emu/mol or J/(mol K) of
magnetic ion, per formula unit or per ion, and the temperature column.

References
----------
C. Kittel, *Introduction to Solid State Physics*, 8th ed. (Wiley, 2005), Ch. 5 (C = γT + βT³
of electrons and Debye phonons at low T), Ch. 11 (Curie law of free spins, C/T) and Ch. 14
(magnetic entropy R ln(2S + 1)).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import units as U
from ..errors import InputError
from .kind_base import DatasetKind

__all__ = ["Extra", "CEILINGS", "ThermoKind", "SUSCEPTIBILITY", "HEAT_CAPACITY", "ENTROPY"]


@dataclass(frozen=True)
class Extra:
    """A sample-level extra term a ≥ 0 (or ±) times T^power added to a thermodynamic model.

    χ₀ (power 0) and C_imp/T (power −1) for the susceptibility (Curie law of free-spin
    impurities, Kittel Ch. 11); γ_e T (power 1) and β T³ (power 3) for the heat capacity
    (electrons and Debye phonons at low T, Kittel Ch. 5).

    Attributes
    ----------
    name : str
        Parameter name (``chi0``, ``c_imp``, ``gamma_e``, ``beta_lattice``).
    unit : str
        Unit of the coefficient a.
    description : str
    option : str
        The dataset option that switches the term off (``chi0: false``); on by default.
    power : int
        The term is a · T^power (T in K).
    symmetric : bool
        Default prior uniform on ±:attr:`ceiling` (else uniform on [0, :attr:`ceiling`]).
    part, part_label : str
        Key and legend label of the part of the model figures draw it in (terms with one
        key are drawn summed).
    ceiling : float
        The largest |a| the default prior allows, in :attr:`unit` (per mole of magnetic
        ion); fixed before any data are seen (see :data:`CEILINGS` for the sources).
    """

    name: str
    unit: str
    description: str
    option: str
    power: int
    symmetric: bool
    part: str
    part_label: str
    ceiling: float = 1.0

    def column(self, T: np.ndarray) -> np.ndarray:
        """T^power at the points (the design column of the coefficient), shape (n,)."""
        if self.power == 0:
            return np.ones(np.shape(T)[0])
        return 1.0 / T ** -self.power if self.power < 0 else T ** self.power

    def term(self, a, T: np.ndarray):
        """a · T^power: coefficients a (n_sets, 1) at temperatures T (n,) K, (n_sets, n)."""
        if self.power == 0:
            return a
        return a / T ** -self.power if self.power < 0 else a * T ** self.power

    def default_prior(self) -> dict:
        """Uniform prior on ``[-ceiling, ceiling]`` if :attr:`symmetric`, else on
        ``[0, ceiling]``: physical bounds fixed in advance, never from the data values."""
        if self.symmetric:
            return {"kind": "uniform", "lower": -self.ceiling, "upper": self.ceiling}
        return {"kind": "uniform", "lower": 0.0, "upper": self.ceiling}


#: Default prior bounds of the extras, per mole of magnetic ion (fixed before the data):
#:
#: * χ₀: ±0.05 emu/mol, above the core diamagnetism (~1e-4 emu/mol; G. A. Bain &
#:   J. F. Berry, J. Chem. Educ. 85, 532 (2008)), Pauli and Van Vleck terms of ordinary
#:   metals and ions (1e-5–1e-3 emu/mol; Kittel Ch. 11 and 14) and the enhanced Pauli
#:   susceptibility of heavy-fermion metals (~1e-2 emu/mol; G. R. Stewart, Rev. Mod. Phys.
#:   56, 755 (1984), from memory);
#: * C_imp: [0, 1] emu K/mol, the Curie constant 0.125 g² S(S + 1) emu K/mol (Kittel Ch. 11)
#:   of a whole mole of free S = 1, g = 2 spins per mole of magnetic ion, far above any
#:   impurity fraction;
#: * γ_e: [0, 2] J/(mol K²), above the largest Sommerfeld coefficients of heavy-fermion
#:   compounds (~1 J/(mol K²); Stewart 1984, from memory);
#: * β: [0, 0.5] J/(mol K⁴), the Debye T³ coefficient 12π⁴ n R/(5 θ_D³) (Kittel Ch. 5) of
#:   n = 32 atoms per magnetic ion with θ_D = 50 K.
CEILINGS = {"chi0": 0.05, "c_imp": 1.0, "gamma_e": 2.0, "beta_lattice": 0.5}


@dataclass(frozen=True, eq=False, repr=False, kw_only=True)
class ThermoKind(DatasetKind):
    """A thermodynamic curve y(T) per mole of magnetic ion: model part plus the kind's
    :attr:`extras`.

    Attributes
    ----------
    unit_table : dict of str to float
        Accepted units of the value and their factors to internal units
        (:mod:`evidence1d.units`).
    unit_quantity : str
        Quantity named in unit errors.
    takes_direction : bool
        The family method takes the field direction (the dataset's ``field`` option).
    noise_floor : float
        Default absolute error floor of simulated values, internal units (common practice).
    magnetic_label : str or None
        Legend label of the model's magnetic part in figures (None: not drawn apart).
    derived_panel : tuple of (str, str) or None
        A second view figures draw under the data: ``("inverse", label)`` for 1/y (Curie
        law), ``("over_T", label)`` for y/T.
    entropy_by_integration : bool
        S_mag = ∫ y_mag/T dT (a heat capacity): figures compare it with R ln(2S + 1).
    free_spin_ceiling : bool
        The value is bounded by R ln(2S + 1) (a magnetic entropy; Kittel Ch. 14).
    """

    unit_table: dict = None
    unit_quantity: str = ""
    takes_direction: bool = False
    noise_floor: float = 0.0
    magnetic_label: str | None = None
    derived_panel: tuple | None = None
    entropy_by_integration: bool = False
    free_spin_ceiling: bool = False

    def value_factor(self, units: dict) -> float:
        """emu/mol or J/(mol K) per unit of the data's value (:mod:`evidence1d.units`)."""
        return self.unit_table[units[self.value_unit]]

    def to_internal(self, values, units: dict, fu: float = 1.0) -> np.ndarray:
        """The value in emu/mol or J/(mol K) of magnetic ion: value × factor × ``fu``."""
        # a molar quantity per formula unit divided by the ions per formula unit is per ion
        return U.convert(values, units[self.value_unit], self.unit_table,
                         self.unit_quantity) * fu

    def from_internal(self, values, units: dict, fu: float = 1.0) -> np.ndarray:
        """Internal units back to the data's: value / (factor × ``fu``)."""
        return np.asarray(values, dtype=float) / (self.value_factor(units) * fu)

    def model_part(self, family, p: dict, T: np.ndarray, options: dict) -> np.ndarray:
        """The family's prediction of this kind at temperatures ``T`` (K), (n_sets, n)."""
        method = getattr(family, self.family_method)
        if self.takes_direction:
            return method(p, T, options.get("field", "powder"))
        return method(p, T)

    def per_formula_unit(self, block, sample) -> float:
        """``sample.formula_units_per_ion`` for ``per: formula_unit`` (else 1).

        Raises
        ------
        InputError
            ``per: formula_unit`` without the sample's ions per formula unit.
        """
        if block.get("per", "magnetic_ion") != "formula_unit":
            return 1.0
        if getattr(sample, "ions_per_formula_unit", 1.0) is None:
            raise InputError("'per: formula_unit' needs the number of magnetic ions per "
                             "formula unit: set sample.ions_per_formula_unit",
                             key=f"{block['_where']}.per")
        return sample.formula_units_per_ion

    def read(self, cols, units, sample, block, loc) -> tuple:
        """T (K) > 0 without repeats; value and error per mole of magnetic ion."""
        T = U.temperature_to_k(cols["T"], units["temperature"])
        i_bad = np.flatnonzero(T <= 0)
        if i_bad.size:
            raise InputError("temperature must be > 0 K", **loc(i_bad[0], "T"))
        order = np.argsort(T, kind="stable")
        dup = np.flatnonzero(np.diff(T[order]) == 0)
        if dup.size:
            a, b = order[dup[0]], order[dup[0] + 1]
            first = loc(a, "T")
            also = (f"line {first['line']}" if first.get("line") is not None
                    else f"{first.get('key')}")
            raise InputError(f"duplicated temperature {T[a]:g} K (also at {also}); average "
                             "the repeats or remove one", **loc(b, "T"))
        fu = self.per_formula_unit(block, sample)
        return ({"T": T}, self.to_internal(cols[self.value], units, fu),
                self.to_internal(cols["error"], units, fu))



# ---------------------------------------------------------------------- the three kinds
_TEMPERATURE = ("t", "temperature", "temp", "t_sample")
_T_LABEL = "$T$ (K)"
_CONSTANT = r"$\chi_0 + C_\mathrm{imp}/T$"

SUSCEPTIBILITY = ThermoKind(
    name="susceptibility", is_spectrum=False, family_method="susceptibility",
    value_unit="chi", value_label=r"$\chi$ (emu mol$^{-1}$)", x_label=_T_LABEL,
    unit_table=U.CHI_UNITS, unit_quantity="susceptibility", takes_direction=True,
    noise_floor=1e-5, magnetic_label="model χ (magnetic)",
    derived_panel=("inverse", r"$1/\chi$ (mol emu$^{-1}$)"),
    extras=(Extra("chi0", "emu/mol", "temperature-independent susceptibility χ₀", "chi0", 0,
                  True, "constant", _CONSTANT, CEILINGS["chi0"]),
            Extra("c_imp", "emu K/mol", "Curie constant of free-spin impurities C_imp",
                  "impurity", -1, False, "constant", _CONSTANT, CEILINGS["c_imp"])),
    columns={"T": _TEMPERATURE, "chi": ("chi", "x", "susceptibility", "χ", "m/h"),
             "error": ("error", "dchi", "err", "sigma")},
    units={"temperature": U.TEMPERATURE_UNITS, "chi": U.CHI_UNITS},
    min_points=5, description="bulk magnetic susceptibility chi(T)", value="chi",
    column_units={"T": "temperature", "chi": "chi", "error": "chi"},
    error_stems=("chi", "susceptibility", "χ", "m/h"))

HEAT_CAPACITY = ThermoKind(
    name="heat_capacity", is_spectrum=False, family_method="heat_capacity",
    value_unit="heat_capacity", value_label=r"$C$ (J mol$^{-1}$ K$^{-1}$)",
    x_label=_T_LABEL, unit_table=U.HEAT_UNITS, unit_quantity="heat capacity",
    noise_floor=1e-3, magnetic_label="magnetic",
    derived_panel=("over_T", r"$C/T$ (J mol$^{-1}$ K$^{-2}$)"), entropy_by_integration=True,
    extras=(Extra("gamma_e", "J/(mol K^2)", "electronic heat-capacity coefficient γ_e",
                  "electronic", 1, False, "electronic", r"electronic $\gamma_e T$",
                  CEILINGS["gamma_e"]),
            Extra("beta_lattice", "J/(mol K^4)", "lattice (Debye) T³ coefficient β",
                  "lattice", 3, False, "lattice", r"lattice $\beta T^3$",
                  CEILINGS["beta_lattice"])),
    columns={"T": _TEMPERATURE, "C": ("c", "cp", "c_p", "heat_capacity"),
             "error": ("error", "dc", "err", "sigma")},
    units={"temperature": U.TEMPERATURE_UNITS, "heat_capacity": U.HEAT_UNITS},
    min_points=5, description="heat capacity C(T)", value="C",
    column_units={"T": "temperature", "C": "heat_capacity", "error": "heat_capacity"})

ENTROPY = ThermoKind(
    name="entropy", is_spectrum=False, family_method="entropy",
    value_unit="entropy", value_label=r"$S_\mathrm{mag}$ (J mol$^{-1}$ K$^{-1}$)",
    x_label=_T_LABEL, unit_table=U.ENTROPY_UNITS, unit_quantity="heat capacity",
    noise_floor=1e-3, free_spin_ceiling=True,
    columns={"T": _TEMPERATURE, "S": ("s", "entropy", "s_mag", "smag"),
             "error": ("error", "ds", "err", "sigma")},
    units={"temperature": U.TEMPERATURE_UNITS, "entropy": U.ENTROPY_UNITS},
    min_points=5, description="magnetic entropy S_mag(T)", value="S",
    column_units={"T": "temperature", "S": "entropy", "error": "entropy"})
