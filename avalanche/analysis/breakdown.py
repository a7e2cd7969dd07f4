"""Gas breakdown from tabulated Townsend coefficients: Paschen curves and non-uniform gaps.

Uniform gap (Townsend's self-sustainment criterion): a gap of width d at gas density N breaks down when
γ (exp((α − η) d) − 1) = 1, i.e. (α − η) d = ln(1 + 1/γ), with α = N (α/N)(E/N) and E/N = V / (N d). Solving
this for V at each N d gives the Paschen curve V(p d), p = N k T.

Non-uniform gap: the ionization integral K = ∫ (α − η) dx along the field line, over the region where α > η,
is compared with ln(1 + 1/γ) (Townsend) or with the critical avalanche size of the streamer (Raether–Meek)
criterion, K ≥ 18.

Every value here assumes an ideal gap; see :data:`CAUTION`.

References
----------
Raizer, Gas Discharge Physics, Springer 1991, sec. 7.1–7.2 (Townsend criterion, Paschen law) and sec. 12.2
(streamer criterion) — from memory. Raether, Electron Avalanches and Breakdown in Gases, Butterworths 1964 —
from memory. Meek, Phys. Rev. 57, 722 (1940), doi:10.1103/PhysRev.57.722 — from memory.
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass

import numpy as np
from scipy.integrate import quad
from scipy.optimize import brentq, minimize_scalar

from ..constants import BOLTZMANN_J_K, TORR_Pa, TOWNSEND_V_m2
from ..errors import AvalancheError, ConfigError, PhysicsWarning
from .coefficients import CoefficientTable
from .coefficients import _finite_number as _positive

__all__ = [
    "CAUTION", "STREAMER_THRESHOLD", "EXTRAPOLATION_WARNING_FRACTION", "PaschenCurve", "IonizationIntegral",
    "paschen_curve", "critical_reduced_field_Td", "ionization_integral", "breakdown_voltage",
]

CAUTION = (
    "These breakdown figures describe idealized gaps: smooth, clean electrodes with the analytic field of the "
    "chosen geometry, a uniform gas, and a textbook breakdown criterion. Real equipment can fail far below them "
    "(surface roughness, dust, humidity, insulator surfaces, voltage waveform, ageing). Do not use them as design "
    "values for anything that carries dangerous voltages: apply generous margins, follow the electrical codes "
    "that apply where you are, and leave high-voltage work to qualified, licensed people."
)
"""Text to show with every breakdown result."""

STREAMER_THRESHOLD = 18.0
"""Ionization integral K at which an avalanche turns into a streamer (Raether–Meek criterion).

An avalanche of e^K electrons builds a space-charge field comparable with the applied one when it holds about
1e8 electrons (Raether 1964, ch. 5 — from memory), ln(1e8) ≈ 18.4; the values quoted for air lie between about
18 and 20 (Meek 1940; Raizer 1991, sec. 12.2 — from memory). We use 18, the usual engineering choice, and let
callers pass another.
"""

EXTRAPOLATION_WARNING_FRACTION = 1e-3
"""An ionization integral warns when more than this share of it comes from fields outside the table."""

_GRID_SUBDIVISIONS = 8
"""Each table segment is split into this many log-spaced cells when searching for roots and sign changes, so a
pair of roots inside one segment is not missed unless the cells are wider than their separation."""

_GAUSS_NODES, _GAUSS_WEIGHTS = np.polynomial.legendre.leggauss(8)


# --- shared checks and table scans --------------------------------------------------------------------------------

def _check_table(table, owner: str) -> CoefficientTable:
    if not isinstance(table, CoefficientTable):
        raise ConfigError(f"{owner}: table must be a CoefficientTable, got {type(table).__name__}; build one from "
                          "reduced_field_Td, alpha_N_m2 and eta_N_m2")
    return table


def _temperature_K(table: CoefficientTable, temperature_K, owner: str) -> float:
    return table.temperature_K if temperature_K is None else _positive("temperature_K", temperature_K, owner)


def _townsend_threshold(gamma, owner: str) -> float:
    """ln(1 + 1/γ), the value of (α − η) d (or of K) at Townsend breakdown for secondary yield ``gamma``."""
    return math.log1p(1.0 / _positive("gamma", gamma, owner))


def _grid_Td(table: CoefficientTable) -> np.ndarray:
    """Table fields with every segment split into :data:`_GRID_SUBDIVISIONS` log-spaced cells [Td]."""
    log_field = np.log(table.reduced_field_Td)
    fractions = np.arange(_GRID_SUBDIVISIONS) / _GRID_SUBDIVISIONS
    inner = (log_field[:-1, None] + fractions[None, :] * np.diff(log_field)[:, None]).ravel()
    grid = np.exp(np.append(inner, log_field[-1]))
    grid[::_GRID_SUBDIVISIONS] = table.reduced_field_Td
    return grid


def _effective_N_m2(table: CoefficientTable, reduced_field_Td):
    alpha, eta = table.coefficients_N_m2(reduced_field_Td, warn=False)
    return alpha - eta


def _root_in_log(function, low_Td: float, high_Td: float) -> float:
    """Root of ``function(E/N)`` between two fields where it changes sign, found in ln(E/N)."""
    root = brentq(lambda u: function(math.exp(u)), math.log(low_Td), math.log(high_Td), xtol=1e-13, rtol=1e-14)
    return math.exp(root)


def _sign_changes_Td(table: CoefficientTable, grid: np.ndarray, effective: np.ndarray) -> np.ndarray:
    """Fields [Td] where (α − η)/N changes sign between grid points."""
    change = np.flatnonzero(np.sign(effective[:-1]) * np.sign(effective[1:]) < 0)
    return np.array([_root_in_log(lambda x: float(_effective_N_m2(table, x)), grid[i], grid[i + 1])
                     for i in change])


def critical_reduced_field_Td(table: CoefficientTable) -> float | None:
    """Critical reduced field [Td] where α/N = η/N, rising from attachment- to ionization-dominated.

    Parameters
    ----------
    table : CoefficientTable

    Returns
    -------
    float or None
        The lowest E/N inside the table where (α − η)/N crosses from negative to nonnegative; None when there is
        no such crossing (a non-attaching gas, or a table that starts above or ends below the critical field).

    Notes
    -----
    Below this field no uniform gap breaks down however long it is: the right branch of the Paschen curve of an
    attaching gas approaches V = (E/N)_crit N d (Raizer 1991, sec. 7.2 — from memory).
    """
    table = _check_table(table, "critical_reduced_field_Td")
    grid = _grid_Td(table)
    effective = _effective_N_m2(table, grid)
    rising = np.flatnonzero((effective[:-1] < 0.0) & (effective[1:] >= 0.0))
    if rising.size == 0:
        return None
    i = int(rising[0])
    if effective[i + 1] == 0.0:
        return float(grid[i + 1])
    return _root_in_log(lambda x: float(_effective_N_m2(table, x)), grid[i], grid[i + 1])


# --- uniform gap: the Paschen curve -------------------------------------------------------------------------------

@dataclass(frozen=True)
class PaschenCurve:
    """Breakdown voltage of a uniform gap against p d, with the Paschen minimum.

    Attributes
    ----------
    pd_Pa_m, pd_Torr_cm : numpy.ndarray
        Pressure times gap [Pa m], [Torr cm].
    breakdown_voltage_V : numpy.ndarray
        Breakdown voltage [V]; NaN where no root lies inside the table (see :func:`paschen_curve`).
    minimum_voltage_V, minimum_pd_Pa_m, minimum_pd_Torr_cm : float
        The Paschen minimum [V], [Pa m], [Torr cm]; NaN if it lies outside the table.
    critical_reduced_field_Td : float or None
        E/N [Td] where α = η (attaching gases), else None.
    gamma : float
        Secondary-emission yield used.
    temperature_K : float
        Gas temperature [K] relating p to N.
    gas_label : str
    """

    pd_Pa_m: np.ndarray
    pd_Torr_cm: np.ndarray
    breakdown_voltage_V: np.ndarray
    minimum_voltage_V: float
    minimum_pd_Pa_m: float
    minimum_pd_Torr_cm: float
    critical_reduced_field_Td: float | None
    gamma: float
    temperature_K: float
    gas_label: str = ""

    def to_dict(self) -> dict:
        """JSON-ready dict: ``minimum_voltage_V``, ``minimum_pd_Pa_m`` and the arrays ``pd_Pa_m``,
        ``pd_Torr_cm``, ``breakdown_voltage_V`` as lists. NaN becomes None (JSON null)."""
        def plain(value):
            return None if not math.isfinite(value) else float(value)

        return {
            "minimum_voltage_V": plain(self.minimum_voltage_V),
            "minimum_pd_Pa_m": plain(self.minimum_pd_Pa_m),
            "pd_Pa_m": [plain(v) for v in self.pd_Pa_m],
            "pd_Torr_cm": [plain(v) for v in self.pd_Torr_cm],
            "breakdown_voltage_V": [plain(v) for v in self.breakdown_voltage_V],
        }


def _paschen_minimum(table: CoefficientTable, grid: np.ndarray, effective: np.ndarray) -> tuple[float, float]:
    """(E/N [Td], (α − η)/N [m²]) at the minimum of (E/N) / ((α − η)/N), or NaNs if it is at a table end."""
    with np.errstate(divide="ignore"):
        ratio = np.where(effective > 0.0, grid / np.where(effective > 0.0, effective, 1.0), np.inf)
    k = int(np.argmin(ratio))
    if not np.isfinite(ratio[k]) or k == 0 or k == grid.size - 1:
        return math.nan, math.nan

    def log_ratio(u: float) -> float:
        value = float(_effective_N_m2(table, math.exp(u)))
        return u - math.log(value) if value > 0.0 else math.inf

    result = minimize_scalar(log_ratio, bounds=(math.log(grid[k - 1]), math.log(grid[k + 1])), method="bounded",
                             options={"xatol": 1e-12})
    if result.fun < math.log(ratio[k]):
        field = math.exp(result.x)
        return field, float(_effective_N_m2(table, field))
    return float(grid[k]), float(effective[k])


def paschen_curve(table: CoefficientTable, gamma: float, pd_Pa_m, temperature_K: float | None = None
                  ) -> PaschenCurve:
    """Paschen curve of a uniform plane gap from tabulated α/N and η/N.

    Parameters
    ----------
    table : CoefficientTable
        Reduced Townsend coefficients.
    gamma : float
        Secondary-electron yield per ion at the cathode (> 0).
    pd_Pa_m : float or array_like
        Pressure times gap width [Pa m] (> 0).
    temperature_K : float, optional
        Gas temperature [K]; the table's temperature by default.

    Returns
    -------
    PaschenCurve

    Warns
    -----
    PhysicsWarning
        When the breakdown field for some p d lies outside the table (those voltages are NaN), or when the
        Paschen minimum does.

    Notes
    -----
    With N d = p d / (k T), the breakdown field x = E/N solves (α − η)/N (x) = ln(1 + 1/γ) / (N d), and
    V = x N d. At a given N d the breakdown voltage is the lowest such x: the root is bracketed on the table
    grid and refined with Brent's method in ln(E/N). No root is sought outside the table:

    * if the criterion is already met at the lowest tabulated E/N, the root lies below the table → NaN, warning;
    * if it is never met and (α − η)/N still rises at the table's top, the root may lie above it → NaN, warning;
    * if it is never met and (α − η)/N peaks inside the table, there is no breakdown at that N d (left of the
      turning point of the left branch, where even an infinite voltage cannot sustain the discharge) → NaN,
      no warning.

    The minimum is found from the whole table, not from the p d values given: V(x) = ln(1 + 1/γ) x / ((α − η)/N)
    along the curve, so V_min sits at the minimum of x / ((α − η)/N) — the Stoletov point, where α/E is
    largest. For α/N = A' exp(−B'/x) this gives the Paschen law V = B' N d / ln(A' N d / ln(1 + 1/γ)) with
    V_min = e (B'/A') ln(1 + 1/γ) at (N d)_min = (e/A') ln(1 + 1/γ) (Raizer 1991, sec. 7.2 — from memory).
    """
    owner = "paschen_curve"
    table = _check_table(table, owner)
    threshold = _townsend_threshold(gamma, owner)
    temperature = _temperature_K(table, temperature_K, owner)
    pd = np.atleast_1d(np.array(pd_Pa_m, dtype=float))
    if pd.ndim != 1 or np.any(~np.isfinite(pd) | (pd <= 0.0)):
        bad = pd[~np.isfinite(pd) | (pd <= 0.0)]
        raise ConfigError(f"{owner}: pd_Pa_m must be a 1-D array of positive finite values [Pa m]"
                          + (f", got {float(bad[0])!r}" if bad.size else f", got shape {pd.shape}"))
    column_density_m2 = pd / (BOLTZMANN_J_K * temperature)
    required_N_m2 = threshold / column_density_m2

    grid = _grid_Td(table)
    effective = _effective_N_m2(table, grid)
    reached = effective[None, :] >= required_N_m2[:, None]
    first = np.argmax(reached, axis=1)
    found = reached[np.arange(pd.size), first]
    below = found & (first == 0)
    voltage = np.full(pd.size, math.nan)
    for k in np.flatnonzero(found & ~below):
        j = int(first[k])
        field = _root_in_log(lambda x, r=required_N_m2[k]: float(_effective_N_m2(table, x)) - r,
                             grid[j - 1], grid[j])
        voltage[k] = field * TOWNSEND_V_m2 * column_density_m2[k]

    low, high = table.reduced_field_range_Td
    if np.any(below):
        warnings.warn(
            f"paschen_curve: for p d ≥ {pd[below].min():g} Pa m the breakdown field lies below the table's lowest "
            f"E/N ({low:g} Td); those voltages are NaN — extend the table to lower E/N", PhysicsWarning, stacklevel=2)
    beyond = ~found
    if np.any(beyond) and int(np.argmax(effective)) == grid.size - 1:
        warnings.warn(
            f"paschen_curve: for p d ≤ {pd[beyond].max():g} Pa m no breakdown field was found up to the table's "
            f"highest E/N ({high:g} Td), where (α − η)/N is still rising; those voltages are NaN — extend the table "
            "to higher E/N", PhysicsWarning, stacklevel=2)

    minimum_field_Td, minimum_effective_N_m2 = _paschen_minimum(table, grid, effective)
    if math.isnan(minimum_field_Td):
        warnings.warn(f"paschen_curve: the Paschen minimum lies outside the table ({low:g}–{high:g} Td); "
                      "minimum_voltage_V and minimum_pd_Pa_m are NaN", PhysicsWarning, stacklevel=2)
    minimum_column_density_m2 = threshold / minimum_effective_N_m2
    minimum_pd_Pa_m = minimum_column_density_m2 * BOLTZMANN_J_K * temperature
    return PaschenCurve(
        pd_Pa_m=pd,
        pd_Torr_cm=pd / TORR_Pa * 100.0,
        breakdown_voltage_V=voltage,
        minimum_voltage_V=minimum_field_Td * TOWNSEND_V_m2 * minimum_column_density_m2,
        minimum_pd_Pa_m=minimum_pd_Pa_m,
        minimum_pd_Torr_cm=minimum_pd_Pa_m / TORR_Pa * 100.0,
        critical_reduced_field_Td=critical_reduced_field_Td(table),
        gamma=float(gamma),
        temperature_K=temperature,
        gas_label=table.gas_label,
    )


# --- non-uniform gaps: the ionization integral --------------------------------------------------------------------

@dataclass(frozen=True)
class IonizationIntegral:
    """The ionization integral along a gap's field line and its breakdown verdicts.

    Attributes
    ----------
    value : float
        K = ∫ (α − η) dx over the region where α > η (dimensionless).
    townsend_threshold : float or None
        ln(1 + 1/γ), or None when no γ was given.
    townsend_met : bool or None
        K ≥ ln(1 + 1/γ), or None when no γ was given.
    streamer_threshold : float
        Critical K of the streamer criterion (:data:`STREAMER_THRESHOLD` by default).
    streamer_met : bool
        K ≥ streamer_threshold.
    ionization_region_m : tuple of float or None
        First and last position [m] of the region where α > η (None if there is none). Inside the table its ends
        are exact; an interval with extrapolated coefficients counts whole.
    extrapolated_fraction : float
        Share of K from fields outside the table's E/N range (coefficients extrapolated log-log).
    """

    value: float
    townsend_threshold: float | None
    townsend_met: bool | None
    streamer_threshold: float
    streamer_met: bool
    ionization_region_m: tuple[float, float] | None
    extrapolated_fraction: float


def _check_geometry(geometry, owner: str):
    if not all(hasattr(geometry, name) for name in ("field_line_range_m", "field_V_m", "field_crossings_m")):
        raise ConfigError(f"{owner}: geometry must be a gap from avalanche.analysis.geometry (PlaneGap, CoaxialGap, "
                          f"ConcentricSpheres, IsolatedSphere), got {type(geometry).__name__}")
    return geometry


class _Integrator:
    """K(V) for one table, gap and gas density; the table's breakpoints are found once."""

    def __init__(self, table: CoefficientTable, geometry, density_m3: float):
        self.table = table
        self.geometry = geometry
        self.density_m3 = density_m3
        grid = _grid_Td(table)
        self.breakpoints_Td = np.union1d(grid, _sign_changes_Td(table, grid, _effective_N_m2(table, grid)))
        self.low_Td, self.high_Td = table.reduced_field_range_Td

    def integrand_m(self, position_m, voltage_V: float):
        """N max((α − η)/N, 0) [m⁻¹] at ``position_m``."""
        field_Td = np.abs(self.geometry.field_V_m(position_m, voltage_V)) / (self.density_m3 * TOWNSEND_V_m2)
        positive = field_Td > 0.0
        effective = _effective_N_m2(self.table, np.where(positive, field_Td, self.low_Td))
        return np.where(positive, self.density_m3 * np.maximum(effective, 0.0), 0.0)

    def _quad(self, start_m: float, end_m: float, voltage_V: float) -> float:
        result = quad(lambda s: float(self.integrand_m(s, voltage_V)), start_m, end_m, limit=200, full_output=1)
        if len(result) > 3:
            raise AvalancheError(
                f"ionization integral: the integral from {start_m:g} m to {end_m:g} m, where the coefficients are "
                f"extrapolated beyond the table ({self.low_Td:g}–{self.high_Td:g} Td), did not converge "
                f"({result[3].splitlines()[0]}); extend the table to the fields of the gap — for an unbounded gap, "
                "down to fields where α/N is zero or falls steeply")
        return float(result[0])

    def __call__(self, voltage_V: float) -> tuple[float, float, tuple[float, float] | None]:
        """(K, extrapolated part of K, ionization region) at ``voltage_V``."""
        start, end = self.geometry.field_line_range_m
        if voltage_V == 0.0:
            return 0.0, 0.0, None
        levels_V_m = self.breakpoints_Td * TOWNSEND_V_m2 * self.density_m3
        knots = np.concatenate(([start], self.geometry.field_crossings_m(levels_V_m, voltage_V),
                                [end] if math.isfinite(end) else []))
        lower, upper = knots[:-1], knots[1:]
        middle = 0.5 * (lower + upper)
        middle_Td = np.abs(self.geometry.field_V_m(middle, voltage_V)) / (self.density_m3 * TOWNSEND_V_m2)
        inside = (middle_Td >= self.low_Td) & (middle_Td <= self.high_Td)

        half = 0.5 * (upper[inside] - lower[inside])
        points = middle[inside][:, None] + half[:, None] * _GAUSS_NODES[None, :]
        pieces = np.zeros(lower.size)
        pieces[inside] = half * (self.integrand_m(points, voltage_V) @ _GAUSS_WEIGHTS)
        for i in np.flatnonzero(~inside):
            pieces[i] = self._quad(lower[i], upper[i], voltage_V)
        extrapolated = float(pieces[~inside].sum())
        positive = pieces > 0.0
        region_ends = [(lower[i], upper[i]) for i in np.flatnonzero(positive)]
        if not math.isfinite(end):
            tail = self._quad(knots[-1], math.inf, voltage_V)
            extrapolated += tail
            if tail > 0.0:
                region_ends.append((knots[-1], math.inf))
        total = float(pieces[inside].sum()) + extrapolated
        region = (float(region_ends[0][0]), float(region_ends[-1][1])) if region_ends else None
        return total, extrapolated, region


def _density_m3(pressure_Pa, temperature_K: float, owner: str) -> float:
    return _positive("pressure_Pa", pressure_Pa, owner) / (BOLTZMANN_J_K * temperature_K)


def _warn_extrapolated(fraction: float, table: CoefficientTable, owner: str) -> None:
    if fraction > EXTRAPOLATION_WARNING_FRACTION:
        low, high = table.reduced_field_range_Td
        warnings.warn(f"{owner}: {100 * fraction:.3g} % of the ionization integral comes from fields outside the "
                      f"table ({low:g}–{high:g} Td), where α/N and η/N are extrapolated log-log; extend the table",
                      PhysicsWarning, stacklevel=3)


def ionization_integral(table: CoefficientTable, geometry, voltage_V: float, pressure_Pa: float,
                        temperature_K: float | None = None, gamma: float | None = None,
                        streamer_threshold: float = STREAMER_THRESHOLD) -> IonizationIntegral:
    """Ionization integral K = ∫ (α − η) dx along a gap's field line, with Townsend and streamer verdicts.

    Parameters
    ----------
    table : CoefficientTable
        Reduced Townsend coefficients.
    geometry : PlaneGap, CoaxialGap, ConcentricSpheres or IsolatedSphere
        The gap (:mod:`avalanche.analysis.geometry`).
    voltage_V : float
        Voltage of the driven electrode [V]; only |E| enters.
    pressure_Pa : float
        Gas pressure [Pa].
    temperature_K : float, optional
        Gas temperature [K]; the table's temperature by default.
    gamma : float, optional
        Secondary-electron yield for the Townsend verdict.
    streamer_threshold : float
        Critical K of the streamer criterion.

    Returns
    -------
    IonizationIntegral

    Raises
    ------
    AvalancheError
        If the integral over an unbounded gap does not converge with the extrapolated coefficients.

    Warns
    -----
    PhysicsWarning
        When more than :data:`EXTRAPOLATION_WARNING_FRACTION` of K comes from fields outside the table.

    Notes
    -----
    α = N (α/N)(|E(x)|/N) with N = p / (k T); the integrand is max(α − η, 0). The field line is cut where the
    field crosses a table point, a subdivision of it, or a zero of (α − η)/N, so each piece carries a smooth
    integrand and takes an 8-point Gauss–Legendre rule; pieces outside the table (and the unbounded tail of an
    isolated sphere) take adaptive quadrature. The Townsend criterion with the integral over the ionization
    region, γ (e^K − 1) ≥ 1, and the streamer criterion K ≥ 18 are the local-field approximations of Raizer 1991,
    sec. 7.1 and 12.2, and Meek 1940 (from memory); space charge, photoionization and ion transit are ignored.
    """
    owner = "ionization_integral"
    table = _check_table(table, owner)
    geometry = _check_geometry(geometry, owner)
    temperature = _temperature_K(table, temperature_K, owner)
    voltage = float(voltage_V)
    if not math.isfinite(voltage):
        raise ConfigError(f"{owner}: voltage_V={voltage_V!r} must be finite")
    streamer = _positive("streamer_threshold", streamer_threshold, owner)
    townsend = None if gamma is None else _townsend_threshold(gamma, owner)
    value, extrapolated, region = _Integrator(table, geometry, _density_m3(pressure_Pa, temperature, owner))(voltage)
    fraction = extrapolated / value if value > 0.0 else 0.0
    _warn_extrapolated(fraction, table, owner)
    return IonizationIntegral(
        value=value,
        townsend_threshold=townsend,
        townsend_met=None if townsend is None else bool(value >= townsend),
        streamer_threshold=streamer,
        streamer_met=bool(value >= streamer),
        ionization_region_m=region,
        extrapolated_fraction=fraction,
    )


def breakdown_voltage(table: CoefficientTable, geometry, pressure_Pa: float, temperature_K: float | None = None,
                      gamma: float | None = None, criterion: str = "townsend",
                      streamer_threshold: float = STREAMER_THRESHOLD) -> float:
    """Lowest voltage [V] at which the ionization integral of a gap reaches the breakdown threshold.

    Parameters
    ----------
    table, geometry, pressure_Pa, temperature_K :
        As in :func:`ionization_integral`.
    gamma : float, optional
        Secondary-electron yield; required for ``criterion='townsend'``.
    criterion : {'townsend', 'streamer'}
        Threshold ln(1 + 1/γ) or ``streamer_threshold``.
    streamer_threshold : float
        Critical K of the streamer criterion.

    Returns
    -------
    float
        Breakdown voltage [V] (positive), or NaN with a :class:`PhysicsWarning` when the root lies outside the
        table: breakdown would need a surface field above the table's highest E/N, or happens already when the
        strongest field is below its lowest E/N.

    Notes
    -----
    The field is strongest at the driven electrode for every gap of :mod:`avalanche.analysis.geometry`, so the voltages
    that put that field at the table's lowest and highest E/N bound the search. K(V) is scanned on 24
    log-spaced voltages there, and the first crossing of the threshold is refined with Brent's method.
    """
    owner = "breakdown_voltage"
    table = _check_table(table, owner)
    geometry = _check_geometry(geometry, owner)
    temperature = _temperature_K(table, temperature_K, owner)
    if criterion == "townsend":
        if gamma is None:
            raise ConfigError(f"{owner}: criterion='townsend' needs gamma, the secondary-electron yield (e.g. 0.01)")
        threshold = _townsend_threshold(gamma, owner)
    elif criterion == "streamer":
        threshold = _positive("streamer_threshold", streamer_threshold, owner)
    else:
        raise ConfigError(f"{owner}: criterion={criterion!r}; choose 'townsend' or 'streamer'")
    density = _density_m3(pressure_Pa, temperature, owner)
    integrator = _Integrator(table, geometry, density)
    surface_field_per_V = abs(float(geometry.field_V_m(geometry.field_line_range_m[0], 1.0)))
    low_Td, high_Td = table.reduced_field_range_Td
    voltages = np.geomspace(low_Td, high_Td, 24) * TOWNSEND_V_m2 * density / surface_field_per_V
    values = []
    for voltage in voltages:
        values.append(integrator(voltage)[0])
        if values[-1] >= threshold:
            break
    if values[0] >= threshold:
        warnings.warn(f"{owner}: the threshold K = {threshold:g} is reached already when the strongest field in the "
                      f"gap is at the table's lowest E/N ({low_Td:g} Td); the root lies below the table, "
                      "returning NaN — extend the table to lower E/N", PhysicsWarning, stacklevel=2)
        return math.nan
    if values[-1] < threshold:
        warnings.warn(f"{owner}: K stays below the threshold {threshold:g} up to a surface field at the table's "
                      f"highest E/N ({high_Td:g} Td, V = {voltages[-1]:.4g} V); the root lies above the table, "
                      "returning NaN — extend the table to higher E/N", PhysicsWarning, stacklevel=2)
        return math.nan
    j = len(values) - 1
    root = brentq(lambda v: integrator(v)[0] - threshold, voltages[j - 1], voltages[j], xtol=1e-12, rtol=1e-12)
    value, extrapolated, _ = integrator(root)
    _warn_extrapolated(extrapolated / value if value > 0.0 else 0.0, table, owner)
    return float(root)
