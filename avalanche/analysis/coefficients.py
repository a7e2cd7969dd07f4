"""Tabulated Townsend coefficients α/N and η/N against reduced field, and the empirical Townsend formula.

A :class:`CoefficientTable` holds the reduced ionization coefficient α/N and attachment coefficient η/N [m²] on a
grid of reduced fields E/N [Td], as a swarm run produces them, and evaluates them between the points by
log-log interpolation (:func:`loglog_interpolate`): swarm coefficients vary over many decades with E/N, and a
power law between neighbouring points is the common practice for such tables.

:data:`HANDBOOK_TOWNSEND` keeps the constants of the empirical Townsend formula α/p = A exp(−B p / E) for a few
gases; :func:`townsend_formula` converts the formula to reduced form, α/N = A' exp(−B' / (E/N)), and
:func:`handbook_alpha_N` evaluates it only inside the stated validity range.
"""

from __future__ import annotations

import difflib
import math
import warnings
from dataclasses import dataclass

import numpy as np

from ..constants import BOLTZMANN_J_K, TORR_Pa, TOWNSEND_V_m2
from ..errors import ConfigError, PhysicsWarning

__all__ = [
    "CoefficientTable", "loglog_interpolate", "TownsendConstants", "HANDBOOK_TOWNSEND",
    "HANDBOOK_TEMPERATURE_K", "townsend_formula_constants", "townsend_formula", "handbook_validity_range_Td",
    "handbook_alpha_N", "handbook_table",
]

_PER_CM_TORR_TO_PER_M_PA = 100.0 / TORR_Pa
"""1 cm⁻¹ Torr⁻¹ = (100 / 133.322) m⁻¹ Pa⁻¹; the same factor converts V cm⁻¹ Torr⁻¹ to V m⁻¹ Pa⁻¹."""


def _finite_number(name: str, value, owner: str, *, positive: bool = True) -> float:
    """``value`` as a float, or a :class:`ConfigError` naming ``owner``, ``name`` and the value."""
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise ConfigError(f"{owner}: {name} must be a number, got {value!r}") from None
    if not math.isfinite(number) or (positive and number <= 0.0):
        raise ConfigError(f"{owner}: {name}={value!r} must be {'positive and ' if positive else ''}finite")
    return number


def _as_float_array(name: str, value, owner: str) -> np.ndarray:
    try:
        array = np.array(value, dtype=float)
    except (TypeError, ValueError):
        raise ConfigError(f"{owner}: {name} must be an array of numbers, got {value!r}") from None
    if array.ndim != 1 or array.size < 2:
        raise ConfigError(f"{owner}: {name} must be a 1-D array with at least two points, got shape {array.shape}")
    bad = ~np.isfinite(array)
    if np.any(bad):
        index = int(np.flatnonzero(bad)[0])
        raise ConfigError(f"{owner}: {name}[{index}]={float(array[index])!r} is not finite; give finite values")
    return array


class _LogLogTable:
    """Prepared arrays for log-log interpolation of nonnegative values ``fp`` on positive increasing ``xp``."""

    def __init__(self, xp: np.ndarray, fp: np.ndarray):
        self.xp = xp
        self.fp = fp
        self.log_xp = np.log(xp)
        positive = fp > 0.0
        self.log_fp = np.where(positive, np.log(np.where(positive, fp, 1.0)), 0.0)
        self.segment_positive = positive[:-1] & positive[1:]

    def __call__(self, x: np.ndarray) -> np.ndarray:
        """Interpolated values at positive ``x`` (end segments continue beyond the grid)."""
        log_x = np.log(x)
        index = np.clip(np.searchsorted(self.log_xp, log_x, side="right") - 1, 0, self.xp.size - 2)
        t = (log_x - self.log_xp[index]) / (self.log_xp[index + 1] - self.log_xp[index])
        power_law = np.exp(self.log_fp[index] + t * (self.log_fp[index + 1] - self.log_fp[index]))
        linear = np.maximum(self.fp[index] + t * (self.fp[index + 1] - self.fp[index]), 0.0)
        return np.where(self.segment_positive[index], power_law, linear)

    def outside(self, x: np.ndarray) -> np.ndarray:
        return (x < self.xp[0]) | (x > self.xp[-1])


def _check_abscissa(x, name: str, owner: str) -> np.ndarray:
    values = np.asarray(x, dtype=float)
    bad = ~np.isfinite(values) | (values <= 0.0)
    if np.any(bad):
        raise ConfigError(f"{owner}: {name}={float(values[bad].flat[0])!r} must be positive and finite")
    return values


def _warn_outside(values: np.ndarray, outside: np.ndarray, low: float, high: float, what: str, unit: str,
                  stacklevel: int) -> None:
    if np.any(outside):
        example = values[outside].flat[0]
        unit = f" {unit}" if unit else ""
        warnings.warn(
            f"{what}: {int(np.count_nonzero(outside))} point(s) outside the table range [{low:g}, {high:g}]{unit} "
            f"(e.g. {example:g}{unit}); extrapolated log-log from the end segment — extend the table to cover them",
            PhysicsWarning, stacklevel=stacklevel + 1,
        )


def _scalar_or_array(values: np.ndarray):
    return float(values) if values.ndim == 0 else values


def loglog_interpolate(x, xp, fp, *, quantity: str = "value"):
    """Interpolate a positive swarm quantity ``fp(xp)`` at ``x``, linearly in (ln x, ln f).

    Parameters
    ----------
    x : float or array_like
        Points to evaluate at (> 0), in the units of ``xp``.
    xp : array_like
        Table abscissae (> 0), strictly increasing, at least two points.
    fp : array_like
        Table values (≥ 0), same length as ``xp``.
    quantity : str
        Name used in error and warning messages.

    Returns
    -------
    float or numpy.ndarray
        Interpolated values, shaped like ``x``.

    Raises
    ------
    ConfigError
        If the table or ``x`` is invalid (non-finite, non-positive abscissa, negative value, not increasing).

    Warns
    -----
    PhysicsWarning
        For ``x`` outside [xp[0], xp[-1]]: the end segment's power law is continued (extrapolation).

    Notes
    -----
    Between table points with positive values the interpolant is the power law through them,
    ln f = (1 − t) ln f_i + t ln f_{i+1} with t = ln(x/x_i) / ln(x_{i+1}/x_i); it reproduces any power law
    f = c x**k exactly. On a segment where a table value is zero (no ionization counted, say) the logarithm does
    not exist; there the value itself is interpolated linearly in ln x, f = (1 − t) f_i + t f_{i+1}, and
    clipped at zero when extrapolated. The interpolant is continuous and monotone on every segment.
    """
    owner = f"loglog_interpolate({quantity})"
    xp_array = _as_float_array("xp", xp, owner)
    fp_array = _as_float_array("fp", fp, owner)
    if xp_array.shape != fp_array.shape:
        raise ConfigError(f"{owner}: xp has {xp_array.size} points but fp has {fp_array.size}; give equal lengths")
    if np.any(xp_array <= 0.0):
        raise ConfigError(f"{owner}: xp={float(xp_array[xp_array <= 0.0][0])!r} must be positive for log interpolation")
    if np.any(np.diff(xp_array) <= 0.0):
        index = int(np.flatnonzero(np.diff(xp_array) <= 0.0)[0]) + 1
        raise ConfigError(f"{owner}: xp must be strictly increasing, but xp[{index}]={float(xp_array[index])!r} "
                          f"follows xp[{index - 1}]={float(xp_array[index - 1])!r}")
    if np.any(fp_array < 0.0):
        raise ConfigError(f"{owner}: fp={float(fp_array[fp_array < 0.0][0])!r} is negative; the quantity must be ≥ 0")
    values = _check_abscissa(x, "x", owner)
    table = _LogLogTable(xp_array, fp_array)
    _warn_outside(values, table.outside(values), xp_array[0], xp_array[-1], owner, "", stacklevel=2)
    return _scalar_or_array(table(values))


def sorted_reduced_fields(field: np.ndarray, owner: str, *, repeat_hint: str) -> tuple[np.ndarray, np.ndarray]:
    """Check a grid of finite reduced fields [Td] (positive, each once) and sort it.

    Returns the sorted fields and the permutation that sorts them (to apply to the columns beside them).
    Raises :class:`ConfigError` naming ``owner``, the offending value and, for a repeat, ``repeat_hint``.
    """
    if np.any(field <= 0.0):
        index = int(np.flatnonzero(field <= 0.0)[0])
        raise ConfigError(f"{owner}: reduced_field_Td[{index}]={float(field[index])!r} must be positive")
    order = np.argsort(field, kind="stable")
    field = field[order]
    repeated = np.flatnonzero(np.diff(field) == 0.0)
    if repeated.size:
        raise ConfigError(f"{owner}: reduced_field_Td={float(field[repeated[0]])!r} Td appears more than once; "
                          f"give each reduced field once ({repeat_hint})")
    return field, order


class CoefficientTable:
    """Reduced Townsend ionization and attachment coefficients tabulated against E/N.

    Parameters
    ----------
    reduced_field_Td : array_like
        Reduced fields E/N [Td] (> 0, distinct; sorted on construction).
    alpha_N_m2, eta_N_m2 : array_like
        Reduced ionization coefficient α/N and attachment coefficient η/N [m²] (≥ 0) at those fields.
    alpha_N_stderr, eta_N_stderr : array_like, optional
        Standard errors of α/N and η/N [m²] (≥ 0), e.g. from a Monte Carlo run; stored for reporting.
    gas_label : str
        Name of the gas or mixture, used in messages.
    temperature_K : float
        Gas temperature [K] the table belongs to; converts pressure to number density (N = p / k T) in the
        breakdown functions.

    Raises
    ------
    ConfigError
        Naming the field and the offending value: non-finite or negative entries, E/N ≤ 0, repeated E/N,
        mismatched lengths, temperature ≤ 0.

    Notes
    -----
    Evaluation uses :func:`loglog_interpolate`'s rule (power law between positive points, linear in ln E/N on
    segments touching a zero). Outside the table the end segment is continued and a :class:`PhysicsWarning`
    is issued.
    """

    def __init__(self, reduced_field_Td, alpha_N_m2, eta_N_m2, alpha_N_stderr=None, eta_N_stderr=None,
                 gas_label: str = "", temperature_K: float = 300.0):
        self.gas_label = str(gas_label)
        owner = f"CoefficientTable({self.gas_label!r})" if self.gas_label else "CoefficientTable"
        self._owner = owner
        field = _as_float_array("reduced_field_Td", reduced_field_Td, owner)
        columns = {"alpha_N_m2": alpha_N_m2, "eta_N_m2": eta_N_m2,
                   "alpha_N_stderr": alpha_N_stderr, "eta_N_stderr": eta_N_stderr}
        arrays = {}
        for name, value in columns.items():
            if value is None:
                continue
            array = _as_float_array(name, value, owner)
            if array.shape != field.shape:
                raise ConfigError(f"{owner}: {name} has {array.size} points but reduced_field_Td has {field.size}; "
                                  "give one value per reduced field")
            if np.any(array < 0.0):
                index = int(np.flatnonzero(array < 0.0)[0])
                raise ConfigError(f"{owner}: {name}[{index}]={float(array[index])!r} is negative at "
                                  f"{float(field[index])!r} Td; coefficients and their errors must be ≥ 0")
            arrays[name] = array
        field, order = sorted_reduced_fields(field, owner, repeat_hint="average repeated runs first")
        self.temperature_K = _finite_number("temperature_K", temperature_K, owner)
        self.reduced_field_Td = field
        sorted_arrays = {name: array[order] for name, array in arrays.items()}
        for array in (field, *sorted_arrays.values()):
            array.setflags(write=False)
        self.alpha_N_m2 = sorted_arrays["alpha_N_m2"]
        self.eta_N_m2 = sorted_arrays["eta_N_m2"]
        self.alpha_N_stderr = sorted_arrays.get("alpha_N_stderr")
        self.eta_N_stderr = sorted_arrays.get("eta_N_stderr")
        self._alpha = _LogLogTable(field, self.alpha_N_m2)
        self._eta = _LogLogTable(field, self.eta_N_m2)

    def __repr__(self) -> str:
        low, high = self.reduced_field_range_Td
        return (f"CoefficientTable(gas_label={self.gas_label!r}, {self.reduced_field_Td.size} points, "
                f"{low:g}–{high:g} Td, temperature_K={self.temperature_K!r})")

    @property
    def reduced_field_range_Td(self) -> tuple[float, float]:
        """Lowest and highest tabulated E/N [Td]."""
        return float(self.reduced_field_Td[0]), float(self.reduced_field_Td[-1])

    def _fields(self, reduced_field_Td, what: str, warn: bool) -> np.ndarray:
        values = _check_abscissa(reduced_field_Td, "reduced_field_Td", f"{self._owner}.{what}")
        if warn:
            low, high = self.reduced_field_range_Td
            _warn_outside(values, self._alpha.outside(values), low, high, f"{self._owner}.{what}", "Td",
                          stacklevel=3)
        return values

    def coefficients_N_m2(self, reduced_field_Td, *, warn: bool = True) -> tuple[np.ndarray, np.ndarray]:
        """(α/N, η/N) [m²] at ``reduced_field_Td`` [Td] as arrays; ``warn=False`` silences the range warning
        for callers that check the range themselves."""
        values = self._fields(reduced_field_Td, "coefficients_N_m2", warn)
        return self._alpha(values), self._eta(values)

    def alpha_N(self, reduced_field_Td):
        """Reduced ionization coefficient α/N [m²] at ``reduced_field_Td`` [Td] (log-log interpolation)."""
        return _scalar_or_array(self._alpha(self._fields(reduced_field_Td, "alpha_N", True)))

    def eta_N(self, reduced_field_Td):
        """Reduced attachment coefficient η/N [m²] at ``reduced_field_Td`` [Td] (log-log interpolation)."""
        return _scalar_or_array(self._eta(self._fields(reduced_field_Td, "eta_N", True)))

    def effective_N(self, reduced_field_Td):
        """Reduced effective ionization coefficient (α − η)/N [m²] at ``reduced_field_Td`` [Td]."""
        values = self._fields(reduced_field_Td, "effective_N", True)
        return _scalar_or_array(self._alpha(values) - self._eta(values))


# --- the empirical Townsend formula -------------------------------------------------------------------------------

HANDBOOK_TEMPERATURE_K = 293.0
"""Gas temperature [K] assumed for the pressures in :data:`HANDBOOK_TOWNSEND`.

The source quotes the constants for room temperature without converting p to a density; we take 293 K. Had the
pressures been reduced to 273 K instead, α/N would change by 7 %, inside the formula's stated accuracy.
"""


@dataclass(frozen=True)
class TownsendConstants:
    """Constants of α/p = A exp(−B p / E) for one gas and the E/p range where the fit holds.

    Attributes
    ----------
    A_per_cm_Torr : float
        A [cm⁻¹ Torr⁻¹].
    B_V_per_cm_Torr : float
        B [V cm⁻¹ Torr⁻¹].
    E_over_p_range_V_per_cm_Torr : tuple of float
        Validity range of E/p [V cm⁻¹ Torr⁻¹].
    source : str
    """

    A_per_cm_Torr: float
    B_V_per_cm_Torr: float
    E_over_p_range_V_per_cm_Torr: tuple[float, float]
    source: str = "Raizer, Gas Discharge Physics, Springer 1991, table 4.1 (from memory)"


HANDBOOK_TOWNSEND: dict[str, TownsendConstants] = {
    # Raizer, Gas Discharge Physics, Springer 1991, table 4.1 — all values from memory.
    "He": TownsendConstants(3.0, 34.0, (20.0, 150.0)),
    "Ne": TownsendConstants(4.0, 100.0, (100.0, 400.0)),
    "Ar": TownsendConstants(12.0, 180.0, (100.0, 600.0)),
    "Kr": TownsendConstants(17.0, 240.0, (100.0, 1000.0)),
    "Xe": TownsendConstants(26.0, 350.0, (200.0, 800.0)),
    "N2": TownsendConstants(12.0, 342.0, (100.0, 600.0)),
    "air": TownsendConstants(15.0, 365.0, (100.0, 800.0)),
    "H2": TownsendConstants(5.0, 130.0, (150.0, 600.0)),
    "CO2": TownsendConstants(20.0, 466.0, (500.0, 1000.0)),
}
"""Townsend-formula constants by gas (units in :class:`TownsendConstants`), at :data:`HANDBOOK_TEMPERATURE_K`."""


def _reduced_field_Td(E_over_p_V_per_cm_Torr, temperature_K: float):
    """E/N [Td] of E/p [V cm⁻¹ Torr⁻¹] at T: E/N = (E/p) k T with p = N k T."""
    return np.asarray(E_over_p_V_per_cm_Torr, dtype=float) * _PER_CM_TORR_TO_PER_M_PA * BOLTZMANN_J_K \
        * temperature_K / TOWNSEND_V_m2


def townsend_formula_constants(A_per_cm_Torr: float, B_V_per_cm_Torr: float,
                               temperature_K: float = HANDBOOK_TEMPERATURE_K) -> tuple[float, float]:
    """Convert the constants of α/p = A exp(−B p/E) to those of α/N = A' exp(−B' / (E/N)).

    Parameters
    ----------
    A_per_cm_Torr : float
        A [cm⁻¹ Torr⁻¹] (> 0).
    B_V_per_cm_Torr : float
        B [V cm⁻¹ Torr⁻¹] (> 0).
    temperature_K : float
        Gas temperature [K] at which the pressures of the fit were measured.

    Returns
    -------
    A_N_m2 : float
        A' = A k T [m²] (A in m⁻¹ Pa⁻¹).
    B_N_Td : float
        B' = B k T [Td] (B in V m⁻¹ Pa⁻¹).

    Notes
    -----
    With p = N k T, α/N = (α/p) k T and B p / E = B k T / (E/N) (ideal gas; common practice).
    """
    A = _finite_number("A_per_cm_Torr", A_per_cm_Torr, "townsend_formula")
    B = _finite_number("B_V_per_cm_Torr", B_V_per_cm_Torr, "townsend_formula")
    kT = BOLTZMANN_J_K * _finite_number("temperature_K", temperature_K, "townsend_formula")
    return A * _PER_CM_TORR_TO_PER_M_PA * kT, B * _PER_CM_TORR_TO_PER_M_PA * kT / TOWNSEND_V_m2


def townsend_formula(A_per_cm_Torr: float, B_V_per_cm_Torr: float, reduced_field_Td,
                     temperature_K: float = HANDBOOK_TEMPERATURE_K):
    """Reduced ionization coefficient α/N [m²] of the empirical Townsend formula at ``reduced_field_Td`` [Td].

    α/N = A' exp(−B' / (E/N)), with A', B' from :func:`townsend_formula_constants`. No range check: use
    :func:`handbook_alpha_N` for a gas of :data:`HANDBOOK_TOWNSEND`.

    References
    ----------
    Raizer, Gas Discharge Physics, Springer 1991, sec. 4.1, eq. (4.4) α/p = A exp(−B p/E) — from memory.
    """
    A_N_m2, B_N_Td = townsend_formula_constants(A_per_cm_Torr, B_V_per_cm_Torr, temperature_K)
    field = _check_abscissa(reduced_field_Td, "reduced_field_Td", "townsend_formula")
    return _scalar_or_array(A_N_m2 * np.exp(-B_N_Td / field))


def _handbook_constants(gas: str) -> tuple[str, TownsendConstants]:
    for name, constants in HANDBOOK_TOWNSEND.items():
        if name.lower() == str(gas).lower():
            return name, constants
    close = difflib.get_close_matches(str(gas), list(HANDBOOK_TOWNSEND), n=1)
    hint = f" (did you mean '{close[0]}'?)" if close else ""
    raise ConfigError(f"handbook Townsend constants: unknown gas {gas!r}{hint}; choose one of "
                      f"{', '.join(HANDBOOK_TOWNSEND)}")


def handbook_validity_range_Td(gas: str) -> tuple[float, float]:
    """E/N range [Td] where the Townsend formula of ``gas`` holds: its E/p range at :data:`HANDBOOK_TEMPERATURE_K`."""
    _, constants = _handbook_constants(gas)
    low, high = _reduced_field_Td(constants.E_over_p_range_V_per_cm_Torr, HANDBOOK_TEMPERATURE_K)
    return float(low), float(high)


def handbook_alpha_N(gas: str, reduced_field_Td, outside: str = "raise"):
    """α/N [m²] of a gas from :data:`HANDBOOK_TOWNSEND`, only inside the formula's validity range.

    Parameters
    ----------
    gas : str
        A key of :data:`HANDBOOK_TOWNSEND` (case-insensitive).
    reduced_field_Td : float or array_like
        E/N [Td].
    outside : {'raise', 'nan'}
        Outside the validity range: raise :class:`ConfigError`, or return NaN there with a
        :class:`PhysicsWarning`.

    Notes
    -----
    The pressures of the fit are taken at :data:`HANDBOOK_TEMPERATURE_K`; the accuracy of the formula is
    that of a two-parameter fit, some tens of per cent at the ends of its range (common practice).
    """
    if outside not in ("raise", "nan"):
        raise ConfigError(f"handbook_alpha_N: outside={outside!r}; choose 'raise' or 'nan'")
    name, constants = _handbook_constants(gas)
    field = _check_abscissa(reduced_field_Td, "reduced_field_Td", "handbook_alpha_N")
    low, high = handbook_validity_range_Td(name)
    beyond = (field < low) | (field > high)
    if np.any(beyond):
        message = (f"handbook_alpha_N({name!r}): E/N={field[beyond].flat[0]:g} Td is outside the Townsend-formula "
                   f"range {low:.4g}–{high:.4g} Td (E/p {constants.E_over_p_range_V_per_cm_Torr[0]:g}–"
                   f"{constants.E_over_p_range_V_per_cm_Torr[1]:g} V/(cm Torr) at {HANDBOOK_TEMPERATURE_K:g} K)")
        if outside == "raise":
            raise ConfigError(message + "; stay inside it or pass outside='nan'")
        warnings.warn(message + "; returning NaN there", PhysicsWarning, stacklevel=2)
    alpha = townsend_formula(constants.A_per_cm_Torr, constants.B_V_per_cm_Torr, field)
    return _scalar_or_array(np.where(beyond, np.nan, alpha))


def handbook_table(gas: str, points: int = 200) -> CoefficientTable:
    """:class:`CoefficientTable` of α/N from the Townsend formula of ``gas`` over its validity range (η = 0).

    ``points`` reduced fields are spaced evenly in ln E/N; the table's temperature is
    :data:`HANDBOOK_TEMPERATURE_K`.
    """
    if not isinstance(points, int) or points < 2:
        raise ConfigError(f"handbook_table: points={points!r} must be an integer ≥ 2")
    name, _ = _handbook_constants(gas)
    low, high = handbook_validity_range_Td(name)
    field = np.geomspace(low, high, points)
    field[[0, -1]] = low, high
    return CoefficientTable(field, handbook_alpha_N(name, field), np.zeros(points), gas_label=name,
                            temperature_K=HANDBOOK_TEMPERATURE_K)
