"""Neutron-spectrum dataset kinds: a single-crystal spectrum and a powder spectrum.

I(Q, E) = s |F(Q)|² S(Q, E) + b₀ + b₁ E + e G(E; σ): the kinds own the nuisances s, b₀, b₁,
e (names, default priors, units) and how a file's columns become energies (meV) and
wavevectors (Å⁻¹).

References
----------
G. L. Squires, *Introduction to the Theory of Thermal Neutron Scattering* (CUP, 1978), Ch. 7
(magnetic cross-section).
"""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .. import units as U
from ..errors import InputError
from .columns import known_names
from .geometry import crystal_wavevectors, make_geometry
from .kind_base import ColumnLayout, DatasetKind

__all__ = ["INTENSITY_CEILING", "SpectrumKind", "CrystalSpectrumKind", "PowderSpectrumKind",
           "CRYSTAL_HKL", "CRYSTAL_SPECTRUM", "POWDER_SPECTRUM"]


def _energy_lines(opt_background: str) -> list:
    """Background nuisances of a spectrum: b₀ for ``flat``, b₀ + b₁ E for ``linear``."""
    return {"flat": ["background"], "linear": ["background", "slope"]}.get(opt_background, [])


#: the largest intensity a default prior allows, in the data's own intensity unit
INTENSITY_CEILING = 1.0e9


@dataclass(frozen=True, eq=False, repr=False, kw_only=True)
class SpectrumKind(DatasetKind):
    """A neutron spectrum: I(Q, E) = s |F(Q)|² S(Q, E) + b₀ + b₁ E + e G(E; σ).

    Squires (1978), Ch. 7: the magnetic cross-section; s the intensity scale, b₀ + b₁ E the
    background (``background: flat | linear | none``), e the elastic-line area
    (``elastic: true``).
    """

    def own_nuisances(self, options: dict) -> list:
        """``scale``, the background of ``background`` (flat: b₀, linear: b₀ + b₁ E) and
        ``elastic`` if the dataset asks for it."""
        out = ["scale"] + _energy_lines(options.get("background", "linear"))
        if options.get("elastic", False):
            out.append("elastic")
        return out

    def own_priors(self, dataset, nuisance, sigma) -> dict:
        """Default priors that never look at the measured intensities.

        With I_max = :data:`INTENSITY_CEILING` = 10⁹ in the data's intensity unit (a count
        or normalised intensity per point well beyond any instrument's; common practice: a
        bound wide enough never to be reached) and W the energy window of the points
        (meV, an independent variable): scale uniform on [0, I_max W] (S(Q, E) is per meV,
        so an intensity up to I_max); background uniform on [−I_max, I_max]; slope uniform
        on ±I_max/W; elastic area uniform on [0, I_max √(2π) max σ] (a peak up to I_max,
        σ the declared resolution).  The bounds are kept exactly in the evidence
        (:mod:`evidence1d.inference.linear`); the widths enter every family's evidence
        alike.
        """
        out, name = {}, dataset.name
        E = dataset.x["energy"]
        width = float(max(np.ptp(E), np.max(np.abs(E)), 1e-3))
        top = INTENSITY_CEILING
        out[f"{name}:scale"] = {"kind": "uniform", "lower": 0.0, "upper": top * width}
        if f"{name}:background" in nuisance:
            out[f"{name}:background"] = {"kind": "uniform", "lower": -top, "upper": top}
        if f"{name}:slope" in nuisance:
            out[f"{name}:slope"] = {"kind": "uniform", "lower": -top / width,
                                    "upper": top / width}
        if f"{name}:elastic" in nuisance:
            sig = float(np.max(sigma)) if sigma is not None else width
            out[f"{name}:elastic"] = {"kind": "uniform", "lower": 0.0,
                                      "upper": top * np.sqrt(2 * np.pi) * sig}
        return out

    def nuisance_unit(self, short: str, units: dict) -> str:
        """Units of s (intensity·meV, since S is per meV), b₀, b₁ (per meV) and e."""
        lab = units.get("intensity", "arb")
        return {"scale": f"{lab}·meV", "background": lab, "slope": f"{lab}/meV",
                "elastic": f"{lab}·meV", "inflate": "1"}.get(short, "")

    def read(self, cols, units, sample, block, loc) -> tuple:
        """Energies in meV, the kind's wavevectors in Å⁻¹, intensity and error as given."""
        if block.get("per", "magnetic_ion") == "formula_unit":
            raise InputError("'per: formula_unit' applies to susceptibility, heat capacity and "
                             "entropy; spectra are per magnetic ion",
                             key=f"{block['_where']}.per")
        x = {"energy": U.energy_to_mev(cols["energy"], units["energy"])}
        x.update(self.wavevectors(cols, units, sample, block, loc))
        return (x, self.to_internal(cols[self.value], units),
                self.to_internal(cols["error"], units))

    def wavevectors(self, cols, units, sample, block, loc) -> dict:
        """The wavevector variables of the points in Å⁻¹."""
        raise NotImplementedError


@dataclass(frozen=True, eq=False, repr=False, kw_only=True)
class CrystalSpectrumKind(SpectrumKind):
    """A single-crystal spectrum: wavevectors as Miller indices H, K, L (r.l.u.,
    :data:`CRYSTAL_HKL`) or as components q_par, q_perp (and q_perp2)."""

    #: the Miller-index layout of the same kind
    hkl: ColumnLayout = None

    def layout_for(self, table, block) -> tuple:
        """Miller indices H, K, L when the dataset maps any of them or the file has columns
        named H, K and L; else the components q_par, q_perp (and q_perp2)."""
        mapping = dict(block.get("columns") or {})
        hkl = {k: k.upper() for k in mapping if str(k).lower() in ("h", "k", "l")}
        mapping = {hkl.get(k, k): v for k, v in mapping.items()}
        bare = {table.names.get(c, c).lower() for c in table.columns}
        comp = any(k in mapping for k in ("q_par", "q_perp", "q_perp2"))
        use_hkl = bool(hkl) or (not comp and {"h", "k", "l"} <= bare)
        return (self.hkl if use_hkl else self), mapping

    def known_names(self, overrides=None) -> set:
        """The names of both layouts (components and Miller indices)."""
        return known_names(self, overrides) | known_names(self.hkl)

    def check_units(self, layout, units: dict, where: str) -> None:
        """Miller indices are in r.l.u.: any other declared wavevector unit is an error."""
        if layout is self.hkl:
            if units.get("wavevector", "rlu") != "rlu":
                raise InputError(f"columns H, K, L are Miller indices in r.l.u., but the "
                                 f"wavevector unit is {units['wavevector']}; declare rlu or "
                                 "leave it out", key=f"{where}.units.wavevector")
            units["wavevector"] = "rlu"

    def wavevectors(self, cols, units, sample, block, loc) -> dict:
        """Q_par, Q_perp, Q_perp2 (Å⁻¹) through the sample's geometry
        (:func:`~evidence1d.data.geometry.crystal_wavevectors`)."""
        geometry = getattr(sample, "geometry", None)
        if geometry is None:
            geometry = make_geometry(sample.lattice)
        return crystal_wavevectors(cols, units, geometry, block)


@dataclass(frozen=True, eq=False, repr=False, kw_only=True)
class PowderSpectrumKind(SpectrumKind):
    """A powder spectrum: |Q| (Å⁻¹) and energy."""

    def wavevectors(self, cols, units, sample, block, loc) -> dict:
        """|Q| (Å⁻¹, >= 0) as given."""
        if np.any(cols["Q"] < 0):
            i = int(np.flatnonzero(cols["Q"] < 0)[0])
            raise InputError("|Q| must be >= 0", **loc(i, "Q"))
        return {"Q": cols["Q"].copy()}



# ---------------------------------------------------------------------- the two kinds
_ENERGY = ("energy", "e", "en", "omega", "w", "hw", "energy_transfer", "deltae", "de_transfer")
_INTENSITY = ("intensity", "i", "counts", "s", "sqw", "signal")
_CRYSTAL_ERROR = ("error", "di", "err", "sigma", "dintensity")
_ENERGY_LABEL = r"$\hbar\omega$ (meV)"

#: a crystal spectrum whose wavevectors are Miller indices H, K, L (r.l.u.)
CRYSTAL_HKL = ColumnLayout(
    columns={"H": ("h",), "K": ("k",), "L": ("l",), "energy": _ENERGY,
             "intensity": _INTENSITY, "error": _CRYSTAL_ERROR},
    units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
    min_points=10, description="single-crystal neutron spectrum with H, K, L",
    value="intensity",
    column_units={"H": "wavevector", "K": "wavevector", "L": "wavevector", "energy": "energy",
                  "intensity": "intensity", "error": "intensity"})

CRYSTAL_SPECTRUM = CrystalSpectrumKind(
    name="crystal_spectrum", is_spectrum=True, family_method="spectrum",
    value_unit="intensity", value_label="$I$", x_label=_ENERGY_LABEL, hkl=CRYSTAL_HKL,
    columns={"q_par": ("q_par", "qpar", "q_l", "ql", "l"),
             "q_perp": ("q_perp", "qperp", "q_h", "qh", "h"),
             "q_perp2": ("q_perp2", "qperp2"),
             "energy": _ENERGY, "intensity": _INTENSITY, "error": _CRYSTAL_ERROR},
    units={"energy": U.ENERGY_UNITS, "wavevector": U.WAVEVECTOR_UNITS, "intensity": None},
    min_points=10, description="single-crystal neutron spectrum (cuts or maps)",
    value="intensity",
    column_units={"q_par": "wavevector", "q_perp": "wavevector", "q_perp2": "wavevector",
                  "energy": "energy", "intensity": "intensity", "error": "intensity"},
    optional=("q_perp2",))

POWDER_SPECTRUM = PowderSpectrumKind(
    name="powder_spectrum", is_spectrum=True, family_method="spectrum", powder=True,
    value_unit="intensity", value_label="$I$", x_label=_ENERGY_LABEL,
    columns={"Q": ("q", "|q|", "qmod", "q_abs", "modq", "absq"), "energy": _ENERGY,
             "intensity": _INTENSITY, "error": ("error", "di", "err", "sigma", "dintensity")},
    units={"energy": U.ENERGY_UNITS, "wavevector": ("1/A",), "intensity": None},
    min_points=10, description="powder neutron spectrum", value="intensity",
    column_units={"Q": "wavevector", "energy": "energy", "intensity": "intensity",
                  "error": "intensity"})
