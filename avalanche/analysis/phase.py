"""The first harmonic of phase-resolved AC results: the amplitude and phase lag of the drift velocity over the cycle.

In a symmetric AC drive the drift velocity reverses every half period, so its cycle average is about zero and says
nothing about the transport; what a model needs is its oscillation, W(t) ≈ W_1 sin(ωt − φ) for a field
E(t)/N = (E_0/N) sin ωt. :func:`first_harmonic` takes the amplitude W_1 and the lag φ from the phase-resolved
values (a Fourier coefficient over the phase bins), :func:`drift_harmonic_quantities` does it for every point of a
table read from a results file, and :func:`with_drift_harmonic` adds them to the table as the quantities
:data:`DRIFT_AMPLITUDE` [m/s] and :data:`DRIFT_LAG` [rad], which the ``plot`` and ``table`` commands show for AC
sweeps.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, replace

import numpy as np

from ..errors import ConfigError
from ..quantities import QUANTITIES

__all__ = ["DRIFT_AMPLITUDE", "DRIFT_LAG", "HARMONIC_UNITS", "Harmonic", "first_harmonic",
           "drift_harmonic_quantities", "with_drift_harmonic"]

DRIFT_AMPLITUDE = "drift_velocity_amplitude"
"""Name of the first-harmonic amplitude W_1 of the flux drift velocity over the cycle [m/s]."""
DRIFT_LAG = "drift_velocity_phase_lag_rad"
"""Name of the phase lag φ of the drift velocity behind the field, W ≈ W_1 sin(ωt − φ) [rad]."""
HARMONIC_UNITS = {name: QUANTITIES[name].unit for name in (DRIFT_AMPLITUDE, DRIFT_LAG)}
"""Units of the first-harmonic quantities (from :mod:`avalanche.quantities`)."""


@dataclass(frozen=True)
class Harmonic:
    """The first harmonic of a periodic quantity, q(θ) ≈ mean + amplitude · sin(θ − lag_rad), θ = ωt.

    Attributes
    ----------
    amplitude, amplitude_stderr : float
        Amplitude of the first harmonic (≥ 0) and its standard error, in the quantity's unit.
    lag_rad, lag_stderr : float
        Phase lag behind sin ωt [rad], in (−π, π], and its standard error (NaN for a zero amplitude).
    mean : float
        The cycle average (the zeroth Fourier coefficient).
    """

    amplitude: float
    amplitude_stderr: float
    lag_rad: float
    lag_stderr: float
    mean: float


def first_harmonic(phase_rad, values, stderr=None, bin_averaged: bool = True) -> Harmonic:
    """Amplitude and phase lag of the first harmonic of a phase-resolved quantity.

    Parameters
    ----------
    phase_rad : array_like
        Centres of B equal phase bins covering one period, θ_b [rad] (e.g. ``SwarmResult.phase``).
    values : array_like
        The quantity in each bin (B values, all finite).
    stderr : array_like, optional
        Standard errors of ``values``; without them the returned errors are NaN.
    bin_averaged : bool
        Whether ``values`` are averages over the bins (as the engine's phase tallies are) rather than samples at
        the centres; if so the coefficients are divided by the bin-average factor sinc(π/B).

    Returns
    -------
    Harmonic

    Raises
    ------
    ConfigError
        For fewer than 3 bins (a first harmonic needs at least three), arrays of different lengths, or
        non-finite values.

    Notes
    -----
    With the Fourier coefficients of the first harmonic (the standard Fourier-series definition; common practice)

        a_1 = (2/B) Σ_b q_b cos θ_b,   b_1 = (2/B) Σ_b q_b sin θ_b,

    q(θ) ≈ q̄ + a_1 cos θ + b_1 sin θ = q̄ + A sin(θ − φ) with A = √(a_1² + b_1²) and φ = atan2(−a_1, b_1). For a
    field E_0 sin ωt, φ is the lag of the quantity behind the field. A bin average of sin(θ − φ) over a bin of
    width 2π/B is sinc(π/B) sin(θ_b − φ), hence the correction for bin averages (exact for the first harmonic;
    higher harmonics alias into it only at order B − 1 and above). Errors by linear propagation with the bins
    taken as independent (the covariance between bins is not stored in results files):
    σ_A² = (a_1² σ_a² + b_1² σ_b²)/A², σ_φ² = (b_1² σ_a² + a_1² σ_b²)/A⁴, with σ_a² = (2/B)² Σ cos² θ_b σ_b² and
    likewise for b_1.
    """
    theta = np.asarray(phase_rad, dtype=float).reshape(-1)
    q = np.asarray(values, dtype=float).reshape(-1)
    bins = theta.size
    if bins < 3 or q.size != bins:
        raise ConfigError(f"first_harmonic(): {bins} phase bins and {q.size} values; give the same number, at least "
                          "3 (a first harmonic needs three bins per period)")
    if not (np.all(np.isfinite(theta)) and np.all(np.isfinite(q))):
        raise ConfigError("first_harmonic(): phase_rad and values must be finite; a phase bin without samples has "
                          "no value (run longer or use fewer phase bins)")
    scale = (2.0 / bins) / (math.sin(math.pi / bins) / (math.pi / bins) if bin_averaged else 1.0)
    cos, sin = np.cos(theta), np.sin(theta)
    a1, b1 = scale * float(np.sum(q * cos)), scale * float(np.sum(q * sin))
    amplitude = math.hypot(a1, b1)
    lag = math.atan2(-a1, b1)
    if stderr is None:
        amp_err = lag_err = math.nan
    else:
        s = np.asarray(stderr, dtype=float).reshape(-1)
        if s.size != bins:
            raise ConfigError(f"first_harmonic(): {s.size} standard errors for {bins} phase bins")
        var_a, var_b = scale ** 2 * float(np.sum((cos * s) ** 2)), scale ** 2 * float(np.sum((sin * s) ** 2))
        if amplitude > 0.0:
            amp_err = math.sqrt(a1 ** 2 * var_a + b1 ** 2 * var_b) / amplitude
            lag_err = math.sqrt(b1 ** 2 * var_a + a1 ** 2 * var_b) / amplitude ** 2
        else:
            amp_err, lag_err = math.sqrt(max(var_a, var_b)), math.nan
    return Harmonic(amplitude, amp_err, lag if amplitude > 0.0 else math.nan, lag_err, float(np.mean(q)))


def _pair(entry):
    if hasattr(entry, "value") and hasattr(entry, "stderr"):
        return np.asarray(entry.value, dtype=float), np.asarray(entry.stderr, dtype=float)
    values, errors = entry
    return np.asarray(values, dtype=float), np.asarray(errors, dtype=float)


def drift_harmonic_quantities(results, point_index) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Amplitude and lag of the flux drift velocity at the given points of a results file.

    Parameters
    ----------
    results
        An open results file (:func:`avalanche.open_results`); ``results.point(i)`` must give a result with
        ``phase`` and ``phase_resolved`` (AC points) — DC points give NaN.
    point_index : array_like of int
        Indices of the points (e.g. :attr:`avalanche.analysis.tables.SwarmTable.point_index`).

    Returns
    -------
    dict
        :data:`DRIFT_AMPLITUDE` and :data:`DRIFT_LAG` → (values, stderr), one per point.
    """
    index = np.asarray(point_index, dtype=np.int64).reshape(-1)
    out = {name: (np.full(index.size, math.nan), np.full(index.size, math.nan)) for name in HARMONIC_UNITS}
    for k, i in enumerate(index):
        result = results.point(int(i))
        resolved = getattr(result, "phase_resolved", None)
        if not resolved or "drift_velocity_flux" not in resolved:
            continue
        values, errors = _pair(resolved["drift_velocity_flux"])
        if not np.all(np.isfinite(values)):
            continue
        h = first_harmonic(result.phase, values, errors)
        out[DRIFT_AMPLITUDE][0][k], out[DRIFT_AMPLITUDE][1][k] = h.amplitude, h.amplitude_stderr
        out[DRIFT_LAG][0][k], out[DRIFT_LAG][1][k] = h.lag_rad, h.lag_stderr
    return out


def with_drift_harmonic(table, results):
    """``table`` (a :class:`~avalanche.analysis.tables.SwarmTable` of AC points read from ``results``) with the
    drift velocity's first-harmonic amplitude and lag added (:func:`drift_harmonic_quantities`); the table itself
    when none of its points is phase-resolved.

    Raises
    ------
    ConfigError
        When the table does not know where its points are in a file (no ``point_index``).
    """
    if table.point_index is None:
        raise ConfigError(f"{table.source or 'swarm table'}: the table has no point_index; build it with "
                          "SwarmTable.from_results to add the AC drift amplitude")
    extra = drift_harmonic_quantities(results, table.point_index)
    if not np.any(np.isfinite(extra[DRIFT_AMPLITUDE][0])):
        return table
    return replace(table, quantities={**table.quantities, **extra}, units={**table.units, **HARMONIC_UNITS},
                   point_index=table.point_index, converged=table.converged)
