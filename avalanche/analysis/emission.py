"""Emission estimate: relative photon emission rates of the radiating levels from excitation rate coefficients.

A level that radiates carries its wavelength in its cross-section file (``wavelength_nm`` of an excitation
process). In the direct-excitation approximation every electron-impact excitation of such a level yields one
photon at that wavelength, so the photon emission rate per unit volume is n_e N x_s k_j, with n_e the electron
density, N the gas density, x_s the mole fraction of the level's species and k_j the level's excitation rate
coefficient [m³/s] computed by the engine. Rates relative to the strongest line follow from x_s k_j alone.

What is left out (:data:`APPROXIMATION_NOTE`): cascades from higher levels, collisional quenching and
de-excitation, radiation trapping (imprisonment of resonance lines), and the branching of a level into several
lines. Resonance lines in particular are strongly trapped at all but the lowest pressures, so their relative
intensity here is an upper bound on what leaves the gas.

References
----------
Fujimoto, Plasma Spectroscopy, Oxford 2004, ch. 4 (corona model: population by direct electron-impact excitation
balanced by radiative decay) — from memory.
"""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping, Sequence
from dataclasses import dataclass

import numpy as np

from ..constants import photon_energy_eV, photon_wavelength_nm
from ..errors import ConfigError, PhysicsWarning

__all__ = [
    "APPROXIMATION_NOTE", "PHOTON_ENERGY_TOLERANCE", "RadiatingLevel", "radiating_levels", "EmissionEstimate",
    "emission_estimate", "PhaseResolvedEmission", "phase_resolved_emission",
]

APPROXIMATION_NOTE = (
    "Direct-excitation approximation: one photon per electron-impact excitation of a radiating level, at the "
    "wavelength_nm of its cross-section file; no cascades from higher levels, no collisional quenching, no "
    "radiation trapping, no branching into other lines."
)
"""Printed with every emission output."""

PHOTON_ENERGY_TOLERANCE = 0.01
"""Relative excess of the photon energy h c / λ over the level's excitation energy that is flagged.

A level excited from the ground state cannot emit a photon with more energy than its excitation energy
(h c / λ ≤ ε_th; equality for a resonance line). The 1 % margin covers thresholds rounded in the data files and
lumped levels given one representative threshold (common practice)."""


@dataclass(frozen=True)
class RadiatingLevel:
    """An excitation process with a radiating wavelength.

    Attributes
    ----------
    key : str
        The process key of the engine's rate coefficients: the label in a pure gas, ``<species>:<label>`` in a
        mixture.
    species, label : str
    fraction : float
        Mole fraction of the species in the mixture.
    wavelength_nm : float
        Radiating wavelength [nm] as given in the cross-section file.
    threshold_eV : float
        Excitation energy [eV].
    """

    key: str
    species: str
    label: str
    fraction: float
    wavelength_nm: float
    threshold_eV: float

    @property
    def photon_energy_eV(self) -> float:
        """h c / λ [eV] (scipy.constants)."""
        return float(photon_energy_eV(self.wavelength_nm))

    @property
    def name(self) -> str:
        """``"<species> <label>"``, for tables and plot labels."""
        return f"{self.species} {self.label}"


def radiating_levels(mixture) -> list[RadiatingLevel]:
    """The enabled excitation processes with a ``wavelength_nm`` of every species of ``mixture``.

    Parameters
    ----------
    mixture : avalanche.gas.mixture.Mixture

    Warns
    -----
    PhysicsWarning
        When a level's photon energy exceeds its excitation energy by more than :data:`PHOTON_ENERGY_TOLERANCE`
        (the wavelength metadata and the threshold contradict each other).
    """
    levels = []
    several = len(mixture.components) > 1
    for component in mixture.components:
        for process in component.cross_sections.processes:
            if process.kind != "excitation" or not process.wavelength_nm or not process.enabled:
                continue
            key = f"{component.name}:{process.label}" if several else process.label
            level = RadiatingLevel(key=key, species=component.name, label=process.label,
                                   fraction=float(component.fraction), wavelength_nm=float(process.wavelength_nm),
                                   threshold_eV=float(process.threshold_eV))
            shortest_nm = float(photon_wavelength_nm(level.threshold_eV)) if level.threshold_eV > 0 else 0.0
            if level.wavelength_nm < shortest_nm * (1.0 - PHOTON_ENERGY_TOLERANCE):
                source = component.cross_sections.path or component.name
                warnings.warn(
                    f"{source}: process {process.label!r} has wavelength_nm={level.wavelength_nm:g}, a photon of "
                    f"{level.photon_energy_eV:.4g} eV, more than its threshold_eV={level.threshold_eV:g} "
                    f"(shortest possible wavelength {shortest_nm:.4g} nm); check both fields",
                    PhysicsWarning, stacklevel=2)
            levels.append(level)
    return levels


def _lookup(rates: Mapping, level: RadiatingLevel):
    for key in (level.key, f"{level.species}:{level.label}", level.label):
        if key in rates:
            return rates[key]
    return None


def _relative(values: np.ndarray) -> np.ndarray:
    finite = values[np.isfinite(values)]
    top = float(finite.max()) if finite.size else 0.0
    return values / top if top > 0.0 else np.full_like(values, math.nan)


@dataclass
class EmissionEstimate:
    """Photon emission of the radiating levels at one reduced field.

    Attributes
    ----------
    levels : list of RadiatingLevel
        Sorted by wavelength.
    emission_coefficient_m3_s, emission_coefficient_stderr : numpy.ndarray
        x_s k_j and its standard error [m³/s]: photons per second per electron per unit gas density
        (multiply by n_e N for the emission rate density [m⁻³ s⁻¹]).
    relative_rate : numpy.ndarray
        Photon emission rate relative to the strongest line (NaN when no excitation was counted).
    relative_power : numpy.ndarray
        Radiated power x_s k_j h c / λ relative to the strongest.
    reduced_field_Td : float or None
    """

    levels: list[RadiatingLevel]
    emission_coefficient_m3_s: np.ndarray
    emission_coefficient_stderr: np.ndarray
    relative_rate: np.ndarray
    relative_power: np.ndarray
    reduced_field_Td: float | None = None

    @property
    def wavelength_nm(self) -> np.ndarray:
        return np.array([level.wavelength_nm for level in self.levels])

    @property
    def photon_energy_eV(self) -> np.ndarray:
        return np.array([level.photon_energy_eV for level in self.levels])

    def format_table(self) -> str:
        """Readable table with units, and :data:`APPROXIMATION_NOTE`."""
        field = "" if self.reduced_field_Td is None else f" at E/N = {self.reduced_field_Td:g} Td"
        width = max([len("level"), *(len(level.name) for level in self.levels)])
        lines = [f"Emission estimate{field}", APPROXIMATION_NOTE,
                 f"{'level':<{width}}  {'wavelength':>10}  {'photon':>7}  {'x k (photons/s per electron per m^-3)':>39}"
                 f"  {'relative':>8}  {'relative':>8}",
                 f"{'':<{width}}  {'[nm]':>10}  {'[eV]':>7}  {'[m^3/s]':>39}  {'rate':>8}  {'power':>8}"]
        for k, level in enumerate(self.levels):
            coefficient = f"{self.emission_coefficient_m3_s[k]:.4e} ± {self.emission_coefficient_stderr[k]:.2e}"
            lines.append(f"{level.name:<{width}}  {level.wavelength_nm:>10.5g}  {level.photon_energy_eV:>7.4g}  "
                         f"{coefficient:>39}  {self.relative_rate[k]:>8.4f}  {self.relative_power[k]:>8.4f}")
        if not self.levels:
            lines.append("(no radiating levels: no excitation process of the mixture has wavelength_nm)")
        return "\n".join(lines)

    def to_dict(self) -> dict:
        """JSON-ready: the note, the field, and one entry per level."""
        def plain(value):
            return float(value) if math.isfinite(value) else None

        return {
            "note": APPROXIMATION_NOTE, "reduced_field_Td": self.reduced_field_Td,
            "levels": [{"species": level.species, "label": level.label, "wavelength_nm": level.wavelength_nm,
                        "photon_energy_eV": level.photon_energy_eV,
                        "emission_coefficient_m3_s": plain(self.emission_coefficient_m3_s[k]),
                        "emission_coefficient_stderr": plain(self.emission_coefficient_stderr[k]),
                        "relative_rate": plain(self.relative_rate[k]),
                        "relative_power": plain(self.relative_power[k])}
                       for k, level in enumerate(self.levels)],
        }


def _matched(levels: Sequence[RadiatingLevel], rates: Mapping, where: str) -> list[tuple[RadiatingLevel, object]]:
    matched, missing = [], []
    for level in sorted(levels, key=lambda lv: lv.wavelength_nm):
        rate = _lookup(rates, level)
        (missing if rate is None else matched).append(level if rate is None else (level, rate))
    if missing:
        raise ConfigError(f"{where}: no rate coefficient for radiating level(s) {[lv.key for lv in missing]}; "
                          f"the results have {sorted(rates)} — were they computed with the same cross sections?")
    return matched


def emission_estimate(levels: Sequence[RadiatingLevel], rate_coefficients: Mapping,
                      reduced_field_Td: float | None = None) -> EmissionEstimate:
    """Emission of ``levels`` from per-process rate coefficients.

    Parameters
    ----------
    levels : sequence of RadiatingLevel
        From :func:`radiating_levels`.
    rate_coefficients : mapping
        Process key → ``(value, stderr)`` [m³/s] (or an object with ``.value`` and ``.stderr``), keyed as the
        engine keys them (label, or ``<species>:<label>`` in a mixture).
    reduced_field_Td : float, optional
        Recorded in the output.

    Raises
    ------
    ConfigError
        If a level has no rate coefficient.
    """
    matched = _matched(levels, rate_coefficients, "emission_estimate")
    values = np.array([_value_error(rate)[0] * level.fraction for level, rate in matched], dtype=float)
    errors = np.array([_value_error(rate)[1] * level.fraction for level, rate in matched], dtype=float)
    energy = np.array([level.photon_energy_eV for level, _ in matched], dtype=float)
    return EmissionEstimate([level for level, _ in matched], values, errors, _relative(values),
                            _relative(values * energy), reduced_field_Td)


def _value_error(rate):
    if hasattr(rate, "value") and hasattr(rate, "stderr"):
        return rate.value, rate.stderr
    value, error = rate
    return value, error


@dataclass
class PhaseResolvedEmission:
    """Photon emission of the radiating levels against the phase of an AC field.

    Attributes
    ----------
    phase_rad : numpy.ndarray
        Phase-bin centres of ωt [rad].
    levels : list of RadiatingLevel
    emission_coefficient_m3_s, emission_coefficient_stderr : numpy.ndarray
        x_s k_j(ωt) and errors [m³/s], shape (levels, phase bins).
    relative_rate : numpy.ndarray
        Relative to the largest value over all levels and phases.
    frequency_Hz : float or None
    """

    phase_rad: np.ndarray
    levels: list[RadiatingLevel]
    emission_coefficient_m3_s: np.ndarray
    emission_coefficient_stderr: np.ndarray
    relative_rate: np.ndarray
    frequency_Hz: float | None = None

    def cycle_average(self) -> EmissionEstimate:
        """The cycle-averaged emission (mean over equal phase bins; errors combined as independent bins)."""
        values = self.emission_coefficient_m3_s.mean(axis=1)
        errors = np.sqrt(np.sum(self.emission_coefficient_stderr**2, axis=1)) / self.phase_rad.size
        energy = np.array([level.photon_energy_eV for level in self.levels])
        return EmissionEstimate(self.levels, values, errors, _relative(values), _relative(values * energy))


def phase_resolved_emission(levels: Sequence[RadiatingLevel], phase_rad, rate_coefficients: Mapping,
                            frequency_Hz: float | None = None) -> PhaseResolvedEmission:
    """Emission against phase from phase-resolved rate coefficients.

    Parameters
    ----------
    levels : sequence of RadiatingLevel
    phase_rad : array_like
        Phase-bin centres [rad] (equal bins).
    rate_coefficients : mapping
        Process key → ``(values, stderr)``, arrays over the phase bins [m³/s].
    frequency_Hz : float, optional

    Raises
    ------
    ConfigError
        If a level has no rate coefficient, or an array's length differs from the number of phase bins.
    """
    phase = np.asarray(phase_rad, dtype=float)
    matched = _matched(levels, rate_coefficients, "phase_resolved_emission")
    values = np.zeros((len(matched), phase.size))
    errors = np.zeros_like(values)
    for k, (level, rate) in enumerate(matched):
        value, error = (np.asarray(a, dtype=float) for a in _value_error(rate))
        if value.shape != phase.shape or error.shape != phase.shape:
            raise ConfigError(f"phase_resolved_emission: rate coefficient of {level.key!r} has shape {value.shape}, "
                              f"expected {phase.shape} (one value per phase bin)")
        values[k], errors[k] = level.fraction * value, level.fraction * error
    top = np.nanmax(values) if values.size else 0.0
    relative = values / top if top > 0.0 else np.full_like(values, math.nan)
    return PhaseResolvedEmission(phase, [level for level, _ in matched], values, errors, relative, frequency_Hz)
