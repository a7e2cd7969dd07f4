"""Humid air: the composition of dry air with water vapour from a relative humidity and a temperature."""

from __future__ import annotations

import math
import warnings

from ..constants import STANDARD_ATMOSPHERE_Pa
from ..errors import ConfigError, PhysicsWarning
from .library import named_mixture

ZERO_CELSIUS_K = 273.15
BUCK_RANGE_C = (-20.0, 50.0)
"""Temperatures [°C] over which Buck's formula was fitted (Buck 1981, table 2, from memory)."""


def saturation_vapour_pressure_Pa(temperature_K: float) -> float:
    """Saturation vapour pressure of water over a plane liquid surface [Pa].

    Notes
    -----
    Buck's formula e_s = 611.21 exp(17.502 t/(240.97 + t)) Pa, t in °C, fitted between −20 and +50 °C to within
    about 0.05 % of the reference values (outside, a :class:`~avalanche.errors.PhysicsWarning`). The enhancement
    factor of moist air (about 1.004 at 1 atm) is left out: it is below the accuracy that swarm data need.

    References
    ----------
    Buck A L (1981) J. Appl. Meteorol. 20 1527, doi:10.1175/1520-0450(1981)020<1527:NEFCVP>2.0.CO;2, eq. (8)
    (from memory).
    """
    t_C = float(temperature_K) - ZERO_CELSIUS_K
    if not BUCK_RANGE_C[0] <= t_C <= BUCK_RANGE_C[1]:
        warnings.warn(f"temperature {temperature_K} K ({t_C:.1f} °C) is outside {BUCK_RANGE_C} °C, where Buck's "
                      "saturation vapour pressure formula was fitted", PhysicsWarning, stacklevel=2)
    return 611.21 * math.exp(17.502 * t_C / (240.97 + t_C))


def humid_air_composition(relative_humidity: float, temperature_K: float = 293.15,
                          pressure_Pa: float = STANDARD_ATMOSPHERE_Pa) -> dict[str, float]:
    """Mole fractions of humid air: the named dry ``air`` diluted by water vapour.

    Parameters
    ----------
    relative_humidity : float
        0 to 1 (not per cent): the partial pressure of water over its saturation pressure.
    temperature_K, pressure_Pa : float
        Temperature [K] and total pressure [Pa] of the air.

    Returns
    -------
    dict
        Species → mole fraction: x_H2O = RH e_s(T)/p (:func:`saturation_vapour_pressure_Pa`), the dry-air
        fractions times 1 − x_H2O.

    Raises
    ------
    ConfigError
        A relative humidity outside [0, 1], a non-positive temperature or pressure, or more vapour than gas.
    """
    if not 0.0 <= relative_humidity <= 1.0:
        raise ConfigError(f"relative_humidity = {relative_humidity!r} must lie in [0, 1] (a fraction, not per cent)")
    if not (temperature_K > 0 and pressure_Pa > 0):
        raise ConfigError(f"humid air needs a positive temperature and pressure, got {temperature_K} K, "
                          f"{pressure_Pa} Pa")
    water = relative_humidity * saturation_vapour_pressure_Pa(temperature_K) / pressure_Pa
    if water >= 1.0:
        raise ConfigError(f"at {temperature_K} K and {pressure_Pa} Pa the water vapour would exceed the total "
                          "pressure; raise the pressure or lower the temperature")
    out = {name: fraction * (1.0 - water) for name, fraction in named_mixture("air").items()}
    if water > 0:
        out["H2O"] = water
    return out
