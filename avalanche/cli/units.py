"""Numbers with units as users type them on the command line (``10torr``, ``1 atm``, ``5kPa``, ``2mm``) and the one
syntax of E/N lists and ranges shared by every command.

Conversions come from :mod:`scipy.constants` (CODATA; torr = 101325/760 Pa, atm = 101325 Pa, bar = 1e5 Pa).
"""

from __future__ import annotations

import math
import re

import numpy as np
import scipy.constants as sc

from ..errors import ConfigError

PRESSURE_UNITS_Pa = {"pa": 1.0, "hpa": 1e2, "kpa": 1e3, "mpa": 1e6, "bar": sc.bar, "mbar": 1e-3 * sc.bar,
                     "torr": sc.torr, "mtorr": 1e-3 * sc.torr, "atm": sc.atm, "psi": sc.psi}
"""Pressure units accepted after a number (case-insensitive) → their value in Pa; a bare number is in Pa."""
LENGTH_UNITS_m = {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "um": 1e-6, "µm": 1e-6, "μm": 1e-6, "nm": 1e-9}
"""Length units accepted after a number → their value in m; a bare number is in m."""

_NUMBER_UNIT = re.compile(r"\s*([-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?)\s*([^\d\s].*?)?\s*")


def _with_unit(text: str, option: str, units: dict[str, float], example: str) -> float:
    match = _NUMBER_UNIT.fullmatch(str(text))
    if not match:
        raise ConfigError(f"{option} {text!r}: not a number with an optional unit; give e.g. {example}")
    value, unit = float(match.group(1)), (match.group(2) or "").strip()
    key = unit.lower() if unit not in units else unit
    if unit and key not in units:
        raise ConfigError(f"{option} {text!r}: unknown unit {unit!r}; use one of {', '.join(units)} "
                          f"(or a bare number in {next(iter(units))}), e.g. {example}")
    result = value * (units[key] if unit else 1.0)
    if not (math.isfinite(result) and result > 0):
        raise ConfigError(f"{option} {text!r}: must be positive and finite")
    return result


def pressure_Pa(text: str, option: str = "--pressure") -> float:
    """A pressure [Pa] from ``text``: a number in Pa, or a number with a unit of :data:`PRESSURE_UNITS_Pa`.

    Raises
    ------
    ConfigError
        For text that is not a positive number with a known unit (naming the option and the units).
    """
    return _with_unit(text, option, PRESSURE_UNITS_Pa, "1000, 10torr, 1atm or 5kPa")


TEMPERATURE_UNITS_K = {"K": 1.0}
"""Temperature units accepted after a number; a bare number is in K."""


def temperature_K(text: str, option: str = "--vibrational-temperature") -> float:
    """A temperature [K] from ``text``: a number, optionally followed by ``K`` (``2000``, ``2000K``, ``2000 K``).

    Raises
    ------
    ConfigError
        For text that is not a positive number with an optional ``K`` (naming the option).
    """
    return _with_unit(text, option, TEMPERATURE_UNITS_K, "2000 or 2000K")


def length_m(text: str, option: str = "--length") -> float:
    """A length [m] from ``text``: a number in m, or a number with a unit of :data:`LENGTH_UNITS_m`."""
    return _with_unit(text, option, LENGTH_UNITS_m, "0.01, 2mm or 25um")


def reduced_fields_Td(text: str, option: str = "--en") -> np.ndarray:
    """Reduced fields [Td] in the one syntax of every command: a value (``100``), a comma list (``10,20,50``)
    or a range ``LOW:HIGH:COUNT`` (COUNT values spaced evenly in ln E/N, both ends included), or several of these
    separated by commas (``1,10:100:3``). Values keep the order given.

    Raises
    ------
    ConfigError
        For an empty, non-numeric, non-positive or malformed item (naming the option and the item).
    """
    values: list[float] = []
    items = [item.strip() for item in str(text).split(",")]
    if not any(items):
        raise ConfigError(f"{option} {text!r}: give E/N in Td, e.g. 100, 10,20,50 or 10:1000:5")
    for item in items:
        parts = item.split(":")
        try:
            if len(parts) == 1:
                values.append(float(parts[0]))
            elif len(parts) == 3:
                low, high, count = float(parts[0]), float(parts[1]), int(parts[2])
                if count < 1 or (count == 1 and low != high):
                    raise ValueError
                if low <= 0 or high <= 0:
                    raise ConfigError(f"{option} {text!r}: range {item!r} must have positive ends (E/N in Td)")
                values.extend(np.geomspace(low, high, count).tolist())
            else:
                raise ValueError
        except ValueError:
            raise ConfigError(f"{option} {text!r}: {item!r} is neither a number nor a range LOW:HIGH:COUNT "
                              "(COUNT ≥ 2 values spaced evenly in ln E/N); e.g. 100, 10,20,50 or 10:1000:5") from None
    fields = np.array(values, dtype=float)
    bad = fields[~(np.isfinite(fields) & (fields > 0))]
    if bad.size:
        raise ConfigError(f"{option} {text!r}: E/N {bad[0]:g} Td must be positive and finite")
    return fields


def one_reduced_field_Td(text: str, option: str = "--en") -> float:
    """Exactly one reduced field [Td] in the E/N syntax of :func:`reduced_fields_Td` (commands of one point)."""
    values = reduced_fields_Td(text, option)
    if values.size != 1:
        raise ConfigError(f"{option} {text!r}: this command computes one point; give one E/N, or run a sweep "
                          "(avalanche sweep) for several")
    return float(values[0])
