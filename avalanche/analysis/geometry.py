"""Analytic electrostatic fields of simple electrode gaps, for breakdown estimates in non-uniform fields.

Every gap has one field line coordinate (``position_m``): the distance ``x`` from the driven electrode for the
plane gap, the radius ``r`` for the radial gaps. The driven (inner) electrode is at ``voltage_V``, the other
(outer) electrode is grounded; for :class:`IsolatedSphere` the grounded electrode is at infinity. The field
returned is the component along the coordinate, so it has the sign of the voltage; breakdown code uses its
magnitude (polarity effects are outside this electrostatic model).

The closed forms are the textbook vacuum fields without space charge (Kuffel, Zaengl & Kuffel, *High Voltage
Engineering Fundamentals*, 2nd ed., Newnes 2000, ch. 4 — from memory):

=====================  =================================  ====================================
gap                    potential φ(r)                     field E(r)
=====================  =================================  ====================================
plane, gap d           V (1 − x/d)                        V / d
coaxial, radii a < b   V ln(b/r) / ln(b/a)                V / (r ln(b/a))
concentric spheres     V a (b − r) / (r (b − a))          V a b / (r² (b − a))
isolated sphere        V a / r                            V a / r²
=====================  =================================  ====================================
"""

from __future__ import annotations

import math
from abc import ABC, abstractmethod

import numpy as np

from ..errors import ConfigError
from .coefficients import _finite_number

__all__ = ["PlaneGap", "CoaxialGap", "ConcentricSpheres", "IsolatedSphere"]


def _check_length(name: str, value: float, owner: str) -> float:
    return _finite_number(name, value, owner)


def _check_voltage(voltage_V: float, owner: str) -> float:
    return _finite_number("voltage_V", voltage_V, owner, positive=False)


class _Gap(ABC):
    """Shared position validation; subclasses define the range and the closed forms."""

    @property
    @abstractmethod
    def field_line_range_m(self) -> tuple[float, float]:
        """(start, end) of the field-line coordinate [m]: driven electrode to grounded electrode."""

    def _positions(self, position_m) -> np.ndarray:
        position = np.asarray(position_m, dtype=float)
        start, end = self.field_line_range_m
        bad = np.isnan(position) | (position < start) | (position > end)
        if np.any(bad):
            value = float(position[bad].flat[0])
            raise ConfigError(
                f"{type(self).__name__}: position_m={value!r} is outside the gap [{start!r}, {end!r}] m; "
                "give positions between the electrodes"
            )
        return position


class PlaneGap(_Gap):
    """Plane-parallel gap of width ``d_m`` [m]: uniform field V/d.

    The coordinate ``x`` runs from the driven electrode (x = 0, potential V) to the grounded one (x = d).
    """

    def __init__(self, d_m: float):
        self.d_m = _check_length("d_m", d_m, "PlaneGap")

    def __repr__(self) -> str:
        return f"PlaneGap(d_m={self.d_m!r})"

    @property
    def field_line_range_m(self) -> tuple[float, float]:
        return (0.0, self.d_m)

    def field_V_m(self, position_m, voltage_V: float) -> np.ndarray:
        """Field E(x) = V/d [V m⁻¹] at ``position_m`` [m] for ``voltage_V`` [V]."""
        position = self._positions(position_m)
        return np.full(position.shape, _check_voltage(voltage_V, "PlaneGap") / self.d_m)

    def potential_V(self, position_m, voltage_V: float) -> np.ndarray:
        """Potential φ(x) = V (1 − x/d) [V]."""
        position = self._positions(position_m)
        return _check_voltage(voltage_V, "PlaneGap") * (1.0 - position / self.d_m)

    def field_crossings_m(self, field_levels_V_m, voltage_V: float) -> np.ndarray:
        """Interior positions where |E| equals one of ``field_levels_V_m``: none, the field being uniform."""
        _check_voltage(voltage_V, "PlaneGap")
        return np.empty(0)


class _RadialGap(_Gap):
    """Gap whose field falls as E = V C / r**n between radii a and b (b may be infinite)."""

    _exponent: int
    _outer_at_infinity = False

    def __init__(self, inner_radius_m: float, outer_radius_m: float):
        name = type(self).__name__
        self.inner_radius_m = _check_length("inner_radius_m", inner_radius_m, name)
        if self._outer_at_infinity:
            self.outer_radius_m = math.inf
        else:
            if isinstance(outer_radius_m, (int, float)) and math.isinf(outer_radius_m):
                raise ConfigError(f"{name}: outer_radius_m must be finite, got {outer_radius_m!r}; use "
                                  "IsolatedSphere for a sphere whose grounded electrode is at infinity")
            self.outer_radius_m = _check_length("outer_radius_m", outer_radius_m, name)
        if self.outer_radius_m <= self.inner_radius_m:
            raise ConfigError(
                f"{name}: outer_radius_m={outer_radius_m!r} must exceed inner_radius_m={inner_radius_m!r}"
            )

    def __repr__(self) -> str:
        return (f"{type(self).__name__}(inner_radius_m={self.inner_radius_m!r}, "
                f"outer_radius_m={self.outer_radius_m!r})")

    @property
    @abstractmethod
    def _coefficient(self) -> float:
        """C in E = V C / r**n [m**(n-1)]."""

    @property
    def field_line_range_m(self) -> tuple[float, float]:
        return (self.inner_radius_m, self.outer_radius_m)

    def field_V_m(self, position_m, voltage_V: float) -> np.ndarray:
        """Radial field E(r) [V m⁻¹] at radius ``position_m`` [m] for ``voltage_V`` [V] on the inner electrode."""
        radius = self._positions(position_m)
        voltage = _check_voltage(voltage_V, type(self).__name__)
        return voltage * self._coefficient / radius**self._exponent

    def potential_V(self, position_m, voltage_V: float) -> np.ndarray:
        """Potential φ(r) [V] at radius ``position_m`` [m]; φ(a) = V, φ(b) = 0."""
        radius = self._positions(position_m)
        voltage = _check_voltage(voltage_V, type(self).__name__)
        if self._exponent == 1:
            return voltage * self._coefficient * np.log(self.outer_radius_m / radius)
        return voltage * self._coefficient * (1.0 / radius - 1.0 / self.outer_radius_m)

    def field_crossings_m(self, field_levels_V_m, voltage_V: float) -> np.ndarray:
        """Sorted interior radii [m] where |E| equals one of ``field_levels_V_m`` [V m⁻¹].

        Levels not reached strictly inside the gap are dropped. Uses r = (|V| C / E)**(1/n).
        """
        voltage = abs(_check_voltage(voltage_V, type(self).__name__))
        levels = np.asarray(field_levels_V_m, dtype=float).ravel()
        levels = levels[np.isfinite(levels) & (levels > 0.0)]
        if voltage == 0.0 or levels.size == 0:
            return np.empty(0)
        radius = (voltage * self._coefficient / levels) ** (1.0 / self._exponent)
        inside = (radius > self.inner_radius_m) & (radius < self.outer_radius_m)
        return np.unique(radius[inside])


class CoaxialGap(_RadialGap):
    """Coaxial cylinders, inner radius a and outer radius b [m]: E = V / (r ln(b/a))."""

    _exponent = 1

    @property
    def _coefficient(self) -> float:
        return 1.0 / math.log(self.outer_radius_m / self.inner_radius_m)


class ConcentricSpheres(_RadialGap):
    """Concentric spheres, inner radius a and outer radius b [m]: E = V a b / (r² (b − a))."""

    _exponent = 2

    @property
    def _coefficient(self) -> float:
        a, b = self.inner_radius_m, self.outer_radius_m
        return a * b / (b - a)


class IsolatedSphere(_RadialGap):
    """Sphere of radius a [m] with the grounded electrode at infinity: E = V a / r², φ = V a / r."""

    _exponent = 2
    _outer_at_infinity = True

    def __init__(self, radius_m: float):
        super().__init__(radius_m, math.inf)

    def __repr__(self) -> str:
        return f"IsolatedSphere(radius_m={self.inner_radius_m!r})"

    @property
    def radius_m(self) -> float:
        return self.inner_radius_m

    @property
    def _coefficient(self) -> float:
        return self.inner_radius_m
