"""Periodic drives of the swarm: the drive E(t)/N = E_dc/N + E_0/N w(t) and its waveform (sine, or a tabulated
periodic waveform read from a table or a CSV file), with the kernel arrays of the exact free flight.

The sine flight turns cos ωt, sin ωt from one flight to the next (:func:`avalanche.kernels.flight.sine_flight`);
a tabulated waveform is piecewise linear through its nodes, periodically closed, scaled so that its peak |w| is 1,
and its flights are integrated exactly with node impulses (:func:`avalanche.kernels.flight.table_flight`).
Phase tallies, estimators and the regime verdict are in :mod:`avalanche.engine.ac`.
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from ..constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg, TOWNSEND_V_m2
from ..errors import ConfigError

MAX_FREQUENCY_Hz = 1e10
"""Highest drive frequency accepted [Hz] (10 GHz)."""

_FINE = 4096  # samples of a waveform for its Fourier coefficients


# ------------------------------------------------------------------------------------------------ the waveform

@dataclass(frozen=True, eq=False)
class Waveform:
    """A periodic piecewise-linear waveform w(x), x = t/T ∈ [0, 1], normalised to peak |w| = 1.

    Attributes
    ----------
    phase_fraction : ndarray, shape (M,)
        Node positions, strictly increasing, first 0 and last 1.
    value : ndarray, shape (M,)
        w at the nodes (last = first).
    source : str
        Where it came from (file name or "array"), for messages and the run's inputs.
    """

    phase_fraction: np.ndarray
    value: np.ndarray
    source: str = "array"

    def mean(self) -> float:
        """(1/T) ∫ w dt (exact for the piecewise-linear form)."""
        h = np.diff(self.phase_fraction)
        return float(np.sum(h * 0.5 * (self.value[1:] + self.value[:-1])))

    def mean_square(self) -> float:
        """(1/T) ∫ w² dt (exact: h (a² + ab + b²)/3 per interval)."""
        h = np.diff(self.phase_fraction)
        a, b = self.value[:-1], self.value[1:]
        return float(np.sum(h * (a * a + a * b + b * b) / 3.0))

    def __call__(self, fraction) -> np.ndarray:
        """w at phase fractions (taken mod 1)."""
        return np.interp(np.mod(np.asarray(fraction, dtype=float), 1.0), self.phase_fraction, self.value)

    def kernel_tables(self, accel_amplitude: float, period_s: float) -> tuple[np.ndarray, ...]:
        """Node times [s], accelerations [m/s²] and the impulses F(t_i) = ∫₀^t_i a, G(t_i) = ∫₀^t_i F at the nodes
        (exact trapezoid/Simpson-like sums of the linear pieces: ΔF = h(a_i + a_i+1)/2,
        ΔG = F_i h + h²(2a_i + a_i+1)/6)."""
        t = self.phase_fraction * period_s
        a = accel_amplitude * self.value
        h = np.diff(t)
        F = np.concatenate(([0.0], np.cumsum(0.5 * h * (a[:-1] + a[1:]))))
        dG = F[:-1] * h + h * h * (2.0 * a[:-1] + a[1:]) / 6.0
        G = np.concatenate(([0.0], np.cumsum(dG)))
        return (np.ascontiguousarray(t), np.ascontiguousarray(a), np.ascontiguousarray(F),
                np.ascontiguousarray(G))


def make_waveform(phase_or_time, value, *, frequency_Hz: float | None = None, time_s: bool = False,
                  source: str = "array") -> Waveform:
    """A :class:`Waveform` from node positions and relative amplitudes.

    Parameters
    ----------
    phase_or_time : array_like
        Phase fractions in [0, 1), or (``time_s=True``) times within the period [s], in [0, 1/f).
    value : array_like
        Relative amplitude at each node (any scale: the waveform is normalised to peak |w| = 1).
    frequency_Hz : float, optional
        Needed with ``time_s=True`` to turn times into phase fractions.
    source : str
        Name of the table's origin, used in error messages.

    Raises
    ------
    ConfigError
        Fewer than 2 nodes, non-finite values, positions out of range or not strictly increasing, or all zero.
    """
    x = np.asarray(phase_or_time, dtype=float).ravel()
    w = np.asarray(value, dtype=float).ravel()
    what = "time within the period [s]" if time_s else "phase fraction"
    if x.size != w.size or x.size < 2:
        raise ConfigError(f"waveform {source}: needs at least 2 nodes with one {what} and one value each "
                          f"(got {x.size} positions and {w.size} values)")
    if time_s:
        if not frequency_Hz:
            raise ConfigError(f"waveform {source}: times need frequency_Hz to convert them to phase")
        x = x * float(frequency_Hz)
    bad = np.flatnonzero(~np.isfinite(x) | ~np.isfinite(w))
    if bad.size:
        raise ConfigError(f"waveform {source}: node {bad[0] + 1} is not finite ({x[bad[0]]!r}, {w[bad[0]]!r})")
    out = np.flatnonzero((x < 0) | (x >= 1.0))
    if out.size:
        limit = "[0, 1/frequency_Hz)" if time_s else "[0, 1)"
        raise ConfigError(f"waveform {source}: node {out[0] + 1} has {what} {phase_or_time[out[0]]!r} outside "
                          f"{limit}; give one period, starting at 0")
    step = np.flatnonzero(np.diff(x) <= 0)
    if step.size:
        raise ConfigError(f"waveform {source}: node {step[0] + 2} ({what} {x[step[0] + 1]:g}) does not increase "
                          f"past node {step[0] + 1} ({x[step[0]]:g}); sort the table and remove repeats")
    peak = float(np.max(np.abs(w)))
    if peak == 0:
        raise ConfigError(f"waveform {source}: every value is zero; give a waveform with a nonzero peak")
    w = w / peak
    # Periodic closure: the interval from the last node to the first (+1) is linear too.
    span = x[0] + 1.0 - x[-1]
    if x[0] > 0:
        w0 = w[-1] + (w[0] - w[-1]) * (1.0 - x[-1]) / span
        x, w = np.concatenate(([0.0], x)), np.concatenate(([w0], w))
    return Waveform(phase_fraction=np.concatenate((x, [1.0])), value=np.concatenate((w, [w[0]])), source=source)


def load_waveform(source, frequency_Hz: float | None = None) -> Waveform:
    """A waveform from a two-column CSV file (path) or an array of shape (M, 2).

    The file's optional header names the first column: ``phase`` (phase fraction in [0, 1), the default) or
    ``time_s`` (time within the period [s], needs ``frequency_Hz``); the second column is the relative amplitude.
    Lines starting with ``#`` are comments. An array is read as (phase fraction, value) rows.

    Raises
    ------
    ConfigError
        A missing or unreadable file, a line without two numbers (file, line and text named), or a bad table.
    """
    if isinstance(source, Waveform):
        return source
    if isinstance(source, (str, Path)):
        path = Path(source)
        if not path.is_file():
            raise ConfigError(f"waveform file '{path}' not found; give a two-column CSV (phase, value)")
        rows, time_s = [], False
        try:
            text = path.read_text().splitlines()
        except (OSError, UnicodeDecodeError) as exc:
            raise ConfigError(f"waveform file '{path}': cannot read it ({exc})") from None
        for number, line in enumerate(text, start=1):
            stripped = line.strip()
            if not stripped or stripped.startswith("#"):
                continue
            cells = [c.strip() for c in next(csv.reader([stripped]))]
            if not rows and cells and cells[0].lower() in ("phase", "time_s"):
                time_s = cells[0].lower() == "time_s"
                continue
            try:
                if len(cells) != 2:
                    raise ValueError
                rows.append((float(cells[0]), float(cells[1])))
            except ValueError:
                raise ConfigError(f"waveform file '{path}', line {number}: not two numbers "
                                  "'position, value'; write one node per line (header 'phase,value' or "
                                  "'time_s,value')") from None
        table = np.array(rows, dtype=float).reshape(-1, 2)
        return make_waveform(table[:, 0], table[:, 1], frequency_Hz=frequency_Hz, time_s=time_s,
                             source=f"file '{path}'")
    table = np.asarray(source, dtype=float)
    if table.ndim != 2 or table.shape[1] != 2:
        raise ConfigError(f"waveform array of shape {table.shape} must have shape (M, 2): phase fraction, value")
    return make_waveform(table[:, 0], table[:, 1], source="array")


# --------------------------------------------------------------------------------------------------- the drive

@dataclass(frozen=True, eq=False)
class Drive:
    """A validated periodic drive: E(t)/N = dc_offset_Td + amplitude_Td · w(t), period 1/frequency_Hz."""

    frequency_Hz: float
    amplitude_Td: float
    dc_offset_Td: float
    phase_bins: int
    waveform: Waveform | None = None

    @property
    def period_s(self) -> float:
        return 1.0 / self.frequency_Hz

    @property
    def omega(self) -> float:
        """Angular frequency ω = 2πf of the fundamental [rad/s]."""
        return 2.0 * math.pi * self.frequency_Hz

    def shape(self, fraction) -> np.ndarray:
        """w at phase fractions: sin 2πx, or the table."""
        x = np.asarray(fraction, dtype=float)
        return np.sin(2.0 * math.pi * x) if self.waveform is None else self.waveform(x)

    def phase_centres(self) -> np.ndarray:
        """Centres of the phase bins of ωt mod 2π [rad]."""
        return 2.0 * math.pi * (np.arange(self.phase_bins) + 0.5) / self.phase_bins

    def bin_field_Td(self) -> np.ndarray:
        """E(t)/N averaged over each phase bin [Td] (exact for a sine; 64-point midpoint rule for a table)."""
        B = self.phase_bins
        if self.waveform is None:
            a, b = 2 * math.pi * np.arange(B) / B, 2 * math.pi * np.arange(1, B + 1) / B
            mean = (np.cos(a) - np.cos(b)) / (b - a)
        else:
            x = (np.arange(B)[:, None] + (np.arange(64)[None, :] + 0.5) / 64) / B
            mean = self.waveform(x).mean(axis=1)
        return self.dc_offset_Td + self.amplitude_Td * mean

    def harmonics(self) -> np.ndarray:
        """Mean squares of the harmonics of E(t)/N [Td²]: entry n is the power at n ω (entry 0 the DC part²)."""
        if self.waveform is None:
            return np.array([self.dc_offset_Td ** 2, 0.5 * self.amplitude_Td ** 2])
        x = np.arange(_FINE) / _FINE
        c = np.fft.rfft(self.dc_offset_Td + self.amplitude_Td * self.waveform(x)) / _FINE
        power = 2.0 * np.abs(c) ** 2
        power[0] = abs(c[0]) ** 2
        return power

    def rms_field_Td(self) -> float:
        """Root mean square of E(t)/N over a period [Td]."""
        return float(math.sqrt(self.harmonics().sum()))

    def effective_field_Td(self, nu_m: float) -> float:
        """E_eff/N [Td] with E_eff² = Σ_n E_n,rms² ν_m²/(ν_m² + (nω)²) over the harmonics (for a sine with no DC
        part E_eff = E_rms ν_m/√(ν_m² + ω²), Raizer 1991, ch. 2, from memory); NaN for an unknown ν_m."""
        if not (math.isfinite(nu_m) and nu_m > 0):
            return math.nan
        power = self.harmonics()
        n = np.arange(power.size)
        return float(math.sqrt(np.sum(power * nu_m ** 2 / (nu_m ** 2 + (n * self.omega) ** 2))))

    def kernel_field(self, number_density_m3: float) -> dict:
        """The kernel's field arguments: accel_dc, accel_ac, omega, period_s and the waveform tables."""
        per_Td = ELEMENTARY_CHARGE_C * TOWNSEND_V_m2 * number_density_m3 / ELECTRON_MASS_kg
        empty = np.zeros(0)
        out = {"accel_dc": self.dc_offset_Td * per_Td, "period_s": self.period_s}
        if self.waveform is None:
            out.update(accel_ac=self.amplitude_Td * per_Td, omega=self.omega, wave=(empty, empty, empty, empty))
        else:
            out.update(accel_ac=0.0, omega=0.0,
                       wave=self.waveform.kernel_tables(self.amplitude_Td * per_Td, self.period_s))
        return out

    def chunk_end(self, t: float, dt: float) -> float:
        """End of the chunk starting at t for a wanted length dt [s], on a grid containing every period boundary:
        T/n with n = ⌈T/dt⌉ when dt < T, else m = ⌊dt/T⌋ whole periods."""
        T = self.period_s
        if dt < T:
            step = T / math.ceil(T / dt)
        else:
            step = T * math.floor(dt / T)
        j = math.floor(t / step * (1.0 + 1e-12) + 1e-9) + 1
        return j * step

    def at_boundary(self, t: float) -> bool:
        """Whether t is a period boundary (to rounding)."""
        k = t / self.period_s
        return abs(k - round(k)) < 1e-6 and round(k) > 0

    def periods(self, t: float) -> int:
        return int(round(t / self.period_s))

    def describe(self) -> dict:
        return {"frequency_Hz": self.frequency_Hz, "amplitude_Td": self.amplitude_Td,
                "dc_offset_Td": self.dc_offset_Td, "phase_bins": self.phase_bins,
                "waveform": "sine" if self.waveform is None else self.waveform.source,
                "rms_field_Td": self.rms_field_Td()}


def make_drive(reduced_field_Td: float, frequency_Hz=None, phase_bins=32, dc_offset_Td=0.0,
               waveform=None) -> Drive | None:
    """Validate the AC arguments of :func:`avalanche.engine.time_of_flight.swarm`; None for a DC run (no frequency).

    Raises
    ------
    ConfigError
        Negative, non-finite or > 10 GHz frequency, phase_bins < 1, a non-finite DC offset, a waveform or DC
        offset without a frequency, or a bad waveform table.
    """
    if frequency_Hz is not None and (isinstance(frequency_Hz, bool) or not isinstance(
            frequency_Hz, (int, float, np.integer, np.floating)) or not math.isfinite(float(frequency_Hz))
            or frequency_Hz < 0):
        raise ConfigError(f"swarm(): argument frequency_Hz = {frequency_Hz!r} must be a finite number >= 0 "
                          "(0 or None for DC)")
    if frequency_Hz and frequency_Hz > MAX_FREQUENCY_Hz:
        raise ConfigError(f"swarm(): argument frequency_Hz = {frequency_Hz:g} is above the supported "
                          f"{MAX_FREQUENCY_Hz:g} Hz (10 GHz); lower it")
    if (isinstance(phase_bins, bool) or not isinstance(phase_bins, (int, np.integer)) or phase_bins < 1
            or phase_bins > 4096):
        raise ConfigError(f"swarm(): argument phase_bins = {phase_bins!r} must be an integer from 1 to 4096")
    if (isinstance(dc_offset_Td, bool) or not isinstance(dc_offset_Td, (int, float, np.integer, np.floating))
            or not math.isfinite(float(dc_offset_Td))):
        raise ConfigError(f"swarm(): argument dc_offset_Td = {dc_offset_Td!r} must be a finite number [Td]")
    if not frequency_Hz:
        if waveform is not None:
            raise ConfigError("swarm(): argument waveform needs a repetition frequency; give frequency_Hz > 0")
        if dc_offset_Td:
            raise ConfigError(f"swarm(): argument dc_offset_Td = {dc_offset_Td:g} needs frequency_Hz > 0 (for a DC "
                              "run give the field as reduced_field_Td)")
        return None
    wave = None if waveform is None else load_waveform(waveform, frequency_Hz=float(frequency_Hz))
    return Drive(frequency_Hz=float(frequency_Hz), amplitude_Td=float(reduced_field_Td),
                 dc_offset_Td=float(dc_offset_Td), phase_bins=int(phase_bins), waveform=wave)


# ---------------------------------------------------------------------------------------------------- tallies
