"""Gas mixtures: species with mole fractions, gas temperature and number density."""

from __future__ import annotations

import math
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, replace

from ..constants import STANDARD_ATMOSPHERE_Pa
from ..constants import number_density_m3 as ideal_gas_density_m3
from ..errors import AvalancheError, ConfigError
from .crosssections import CrossSectionSet
from .humid import humid_air_composition
from .library import get_set, named_mixtures
from .penning import PenningChannel, penning_channels

FRACTION_TOLERANCE = 1e-6
"""Mole fractions summing to 1 within this are used as given."""
NORMALISE_TOLERANCE = 1e-3
"""Mole fractions summing to 1 within this (e.g. dry air typed from a table, 0.9996) are normalised, with a note."""


def parse_composition(text: str) -> dict[str, float]:
    """Parse the command-line form ``"Ne:0.99,Ar:0.01"`` (a single name means a pure gas; a named mixture such
    as ``"air"`` expands to its composition)."""
    text = text.strip()
    if not text:
        raise ConfigError("empty gas mixture; give e.g. \"Ar\" or \"Ne:0.99,Ar:0.01\"")
    if ":" not in text and "," not in text:
        if text in named_mixtures():
            return {k: float(v) for k, v in named_mixtures()[text]["composition"].items()}
        return {text: 1.0}
    out: dict[str, float] = {}
    for item in text.split(","):
        name, sep, value = item.strip().rpartition(":")
        if not sep or not name:
            raise ConfigError(f"gas mixture '{text}': entry '{item.strip()}' must be NAME:FRACTION, "
                              "e.g. \"Ne:0.99,Ar:0.01\"")
        try:
            out[name.strip()] = out.get(name.strip(), 0.0) + float(value)
        except ValueError:
            raise ConfigError(f"gas mixture '{text}': fraction '{value}' of '{name}' is not a number") from None
    return out


@dataclass(frozen=True)
class Component:
    """One species of a mixture."""

    name: str
    fraction: float
    cross_sections: CrossSectionSet


def humid_air(relative_humidity: float, temperature_K: float = 293.15, pressure_Pa: float | None = None,
              **options) -> Mixture:
    """Humid air at ``temperature_K`` [K] and ``pressure_Pa`` [Pa] (default 1 atm) with ``relative_humidity``
    (0 to 1): a :class:`Mixture` of the named dry ``air`` and H2O
    (:func:`~avalanche.gas.humid.humid_air_composition`); ``options`` go to :class:`Mixture`."""
    pressure = STANDARD_ATMOSPHERE_Pa if pressure_Pa is None else pressure_Pa
    composition = humid_air_composition(relative_humidity, temperature_K, pressure)
    return Mixture(composition, temperature_K=temperature_K, pressure_Pa=pressure, **options)


class Mixture:
    """A gas mixture at a given temperature and density.

    Parameters
    ----------
    composition : mapping or str
        Species → mole fraction (``{"Ne": 0.99, "Ar": 0.01}``), the string form ``"Ne:0.99,Ar:0.01"``, a single
        gas ``"Ar"`` or a named mixture ``"air"``. Species are library names or paths to ``.toml`` files; a
        :class:`~avalanche.gas.crosssections.CrossSectionSet` may be given as a key's value via ``sets``.
    temperature_K : float
        Gas temperature [K], default 300 K. ``0`` (a cold gas, as in the benchmark models) needs an explicit
        ``number_density_m3``.
    pressure_Pa : float, optional
        Pressure [Pa]; default 1 atm when no number density is given.
    number_density_m3 : float, optional
        Total number density N [m⁻³]; overrides the pressure.
    sets : mapping, optional
        Cross-section sets to use for some species instead of the library's default: a
        :class:`~avalanche.gas.crosssections.CrossSectionSet` (e.g. a model gas with parameters) or the name of a
        shipped alternative (``sets={"N2": "itikawa"}`` is the same as the species spelling ``"N2@itikawa"``).
    vibrational_temperature_K : float, optional
        Temperature [K] of the vibrational level populations of sets with superelastic vibrational pairs
        (a thermally excited gas); default the gas temperature. Rotational levels follow ``temperature_K``.
    penning : mapping, optional
        Penning transfer: level group → transfer probability r in [0, 1] (default none), e.g. ``{"Ne": 0.3}`` (every
        neon level above the receiver's ionization energy) or ``{"Ne:1s": 0.2, "Ne:2p->Ar": 0.5}`` (levels whose
        label starts with the pattern; ``-> B`` names the receiver, else the other component with the lowest
        ionization energy). See :mod:`avalanche.gas.penning` for the rules and the model. Groups with r = 0 are
        dropped after validation.

    Raises
    ------
    ConfigError
        Bad composition, state or Penning settings (the message names the field and the fix).
    """

    def __init__(self, composition, temperature_K: float = 300.0, pressure_Pa: float | None = None,
                 number_density_m3: float | None = None, sets: Mapping[str, CrossSectionSet | str] | None = None,
                 penning: Mapping[str, float] | None = None, vibrational_temperature_K: float | None = None):
        if isinstance(composition, str):
            composition = parse_composition(composition)
        if not isinstance(composition, Mapping) or not composition:
            raise ConfigError(f"mixture composition must be a non-empty mapping of species to mole fraction, "
                              f"got {composition!r}")
        sets = dict(sets or {})
        temperature_K = self._number("temperature_K", temperature_K)
        if temperature_K < 0:
            raise ConfigError(f"temperature_K = {temperature_K} is negative; give the gas temperature in kelvin")
        if number_density_m3 is not None:
            number_density_m3 = self._number("number_density_m3", number_density_m3)
            if number_density_m3 <= 0:
                raise ConfigError(f"number_density_m3 = {number_density_m3} must be positive")
            if pressure_Pa is not None:
                raise ConfigError("give either pressure_Pa or number_density_m3, not both")
            density = number_density_m3
        else:
            if temperature_K == 0:
                raise ConfigError("temperature_K = 0 (cold gas) needs an explicit number_density_m3, since the "
                                  "pressure of a gas at 0 K is zero")
            pressure_Pa = STANDARD_ATMOSPHERE_Pa if pressure_Pa is None else self._number("pressure_Pa", pressure_Pa)
            if pressure_Pa <= 0:
                raise ConfigError(f"pressure_Pa = {pressure_Pa} must be positive")
            density = ideal_gas_density_m3(pressure_Pa, temperature_K)
        components = []
        for name, fraction in composition.items():
            fraction = self._number(f"mole fraction of '{name}'", fraction)
            if fraction < 0:
                raise ConfigError(f"mole fraction of '{name}' is {fraction}; fractions must be >= 0")
            if fraction == 0:
                continue
            xs = sets.get(name) if name in sets else None
            if isinstance(xs, str):
                name, xs = f"{name}@{xs}", None
            if xs is None:
                try:
                    xs = get_set(str(name))
                except AvalancheError as exc:
                    raise ConfigError(f"mixture: {exc}") from None
            components.append(Component(name=str(name), fraction=fraction, cross_sections=xs))
        total = math.fsum(c.fraction for c in components)
        listing = ", ".join(f"{k}: {v}" for k, v in composition.items())
        if abs(total - 1.0) > NORMALISE_TOLERANCE:
            named = ", ".join(sorted(named_mixtures()))
            raise ConfigError(f"mole fractions ({listing}) sum to {total:.9g}, not 1 (within {NORMALISE_TOLERANCE:g} "
                              f"they are normalised); adjust them so they add up to 1, or use a named mixture "
                              f"({named})")
        if abs(total - 1.0) > FRACTION_TOLERANCE:
            warnings.warn(f"mole fractions ({listing}) sum to {total:.9g}; normalised to 1", UserWarning,
                          stacklevel=2)
            components = [replace(c, fraction=c.fraction / total) for c in components]
        self.components: tuple[Component, ...] = tuple(components)
        self.temperature_K = temperature_K
        if vibrational_temperature_K is not None:
            vibrational_temperature_K = self._number("vibrational_temperature_K", vibrational_temperature_K)
            if vibrational_temperature_K < 0:
                raise ConfigError(f"vibrational_temperature_K = {vibrational_temperature_K} is negative")
        self.vibrational_temperature_K = temperature_K if vibrational_temperature_K is None \
            else vibrational_temperature_K
        """Temperature [K] of the vibrational level populations (default: the gas temperature)."""
        self.number_density_m3 = density
        self.pressure_Pa = pressure_Pa if number_density_m3 is None else None
        self.penning_channels: tuple[PenningChannel, ...] = penning_channels(penning, self.components)
        groups = {c.group for c in self.penning_channels}
        self.penning: dict[str, float] = {k: float(v) for k, v in (penning or {}).items() if k in groups}
        """The Penning groups with r > 0 (group → r)."""

    @staticmethod
    def _number(name, value) -> float:
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(float(value)):
            raise ConfigError(f"{name} must be a finite number, got {value!r}")
        return float(value)

    @property
    def label(self) -> str:
        """The string form, e.g. ``"Ne:0.99,Ar:0.01"`` (or ``"Ar"`` for a pure gas)."""
        if len(self.components) == 1:
            return self.components[0].name
        return ",".join(f"{c.name}:{c.fraction:g}" for c in self.components)

    def checksums(self) -> dict[str, str]:
        """Species name → checksum of its cross-section set."""
        return {c.name: c.cross_sections.checksum() for c in self.components}

    def describe(self) -> dict:
        """Plain-data description (for results files and JSON); ``penning`` (groups and channels) only when some
        transfer probability is nonzero."""
        out = {"composition": {c.name: c.fraction for c in self.components},
               "temperature_K": self.temperature_K, "number_density_m3": self.number_density_m3,
               "pressure_Pa": self.pressure_Pa, "checksums": self.checksums()}
        if self.vibrational_temperature_K != self.temperature_K:
            out["vibrational_temperature_K"] = self.vibrational_temperature_K
        if self.penning_channels:
            out["penning"] = {"groups": dict(self.penning),
                              "channels": [c.describe() for c in self.penning_channels]}
        return out

    def __repr__(self) -> str:
        penning = f", penning={self.penning!r}" if self.penning else ""
        return (f"Mixture({self.label!r}, temperature_K={self.temperature_K:g}, "
                f"number_density_m3={self.number_density_m3:.4g}{penning})")
