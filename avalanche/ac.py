"""Periodic (AC/RF) drives of the swarm engine: the drive and its waveform, whole-period chunk scheduling, the
periodic-steady-state test, phase-resolved tallies and estimators, and the regime of the drive.

The field is E(t) = E_dc + E_0 w(t), repeated with period T = 1/f (f = ``frequency_Hz``, ω = 2πf):

* sine (default): w = sin ωt; the kernel integrates each free flight exactly, turning cos ωt, sin ωt from one
  flight to the next (:func:`avalanche._flight_kernels.sine_flight`).
* tabulated waveform: w piecewise linear through the table's nodes, periodically closed, scaled so that its peak
  |w| is 1, i.e. the peak |E_0 w|/N is ``reduced_field_Td``; flights are integrated exactly with node impulses
  F, G and whole-period sums (:func:`avalanche._flight_kernels.table_flight`).

Scheduling and sampling
-----------------------
Chunk boundaries lie on a grid that contains every period boundary: when a period spans many chunks
(f ≪ ν*/events_per_chunk) the period is split into an integer number of equal chunks; when a chunk spans many
periods it holds an integer number of them. The periodic steady state is tested at period boundaries by
:func:`periodic_stationary` (cycle averages of the mean energy, the real collision frequency and ν_eff over two
consecutive blocks of whole periods agree within two standard errors), sampling starts at a period boundary and
stops at one, so the sampled time is an integer number of periods and every phase is sampled equally often.

Estimators
----------
Phase bins are B equal intervals of ωt mod 2π; in bin b the kernel sums the energy, v_z and a(t)·v_z at trial
events, real collisions per process and the electrons created and removed; the exposure ∫ n dt spent in the bin
is the bin's trial events over ν* (unbiased: trial events are a Poisson process of rate ν* in time, Skullerud
1968; see :func:`avalanche._kernels.advance_chunk`). Per bin: ⟨ε⟩_b = Σε/n_b, W_b = Σv_z/n_b,
k_b = C_b/(N_k ∫_b n dt) and the growth frequencies from the counts over the exposure. Cycle averages are time
averages (mean over the equal bins): the effective ionization frequency per period,
(1/T) ∫ ν_eff dt = (1/T) ln(n(t+T)/n(t)), is exactly the mean of the bins' ν_eff, whatever the population's
weight. Errors are leave-one-replica-out jackknife errors (:mod:`avalanche.estimators`).

References
----------
Skullerud H R (1968) J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423 (null-collision method: trial events at a
constant rate ν*).
Raizer Y P (1991) Gas Discharge Physics, Springer, ch. 2 and 14 (electrons in HF fields, the effective field
E_eff = E_rms ν_m/√(ν_m² + ω²), the quasi-static and effective-field limits; from memory).
Lieberman M A & Lichtenberg A J (2005) Principles of Plasma Discharges and Materials Processing, 2nd ed., Wiley,
ch. 3 (ohmic heating in an RF field; from memory).
Robson R E (2006) Introductory Transport Theory for Charged Particles in Gases, World Scientific (momentum and
energy balance in time-dependent fields; from memory).
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from . import _kernels as K
from .constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg, TOWNSEND_V_m2
from .errors import ConfigError
from .estimators import jackknife
from .results import Estimate, PhaseResolved

MAX_FREQUENCY_Hz = 1e10
"""Highest drive frequency accepted [Hz] (10 GHz)."""
QUASI_STATIC_BELOW = 0.1
"""ω/ν_ε below this: the energy follows the field (quasi-static regime)."""
EFFECTIVE_FIELD_ABOVE = 10.0
"""ω/ν_ε above this: the energy does not follow the field; the effective field describes it."""
PHASE_QUANTITIES = ("reduced_field_Td", "mean_energy_eV", "drift_velocity_flux", "ionization_rate_coefficient",
                    "attachment_rate_coefficient", "excitation_rate_coefficient", "effective_ionization_frequency",
                    "collision_frequency", "power_absorbed_eV_s")
"""Phase-resolved quantities besides the per-process rate coefficients (names as in the DC result)."""
PHASE_UNITS = {"reduced_field_Td": "Td", "mean_energy_eV": "eV", "drift_velocity_flux": "m/s",
               "ionization_rate_coefficient": "m3/s", "attachment_rate_coefficient": "m3/s",
               "excitation_rate_coefficient": "m3/s", "effective_ionization_frequency": "1/s",
               "collision_frequency": "1/s", "power_absorbed_eV_s": "eV/s"}
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
                raise ConfigError(f"waveform file '{path}', line {number}: '{stripped}' is not two numbers "
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
    """Validate the AC arguments of :func:`avalanche.engine.swarm`; None for a DC run (no frequency).

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

@dataclass(eq=False)
class PhaseTallies:
    """Raw per-replica, per-phase-bin sums of the sampled chunks (columns as in :mod:`avalanche._kernels`):
    ``sums`` (R, B, N_PHASE_SUMS), ``counts`` (R, B, N_PHASE_COUNTS), ``process`` (R, B, P)."""

    sums: np.ndarray
    counts: np.ndarray
    process: np.ndarray

    @classmethod
    def zeros(cls, replicas: int, bins: int, processes: int) -> PhaseTallies:
        return cls(np.zeros((replicas, bins, K.N_PHASE_SUMS)),
                   np.zeros((replicas, bins, K.N_PHASE_COUNTS), dtype=np.int64),
                   np.zeros((replicas, bins, processes), dtype=np.int64))

    def add(self, chunk: PhaseTallies) -> None:
        self.sums += chunk.sums
        self.counts += chunk.counts
        self.process += chunk.process

    def _sets(self) -> tuple[PhaseTallies, PhaseTallies]:
        """The pooled sums (1 set) and the R leave-one-replica-out sets."""
        parts = (self.sums, self.counts, self.process)
        pooled = PhaseTallies(*(a.sum(axis=0, keepdims=True) for a in parts))
        loo = PhaseTallies(*(a.sum(axis=0, keepdims=True) - a for a in parts))
        return pooled, loo


def _ratio(a, b):
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.asarray(a, dtype=float) / np.asarray(b, dtype=float)


def _quantities(t: PhaseTallies, kinds: np.ndarray, target_density_m3: np.ndarray, number_density_m3: float
                ) -> dict[str, np.ndarray]:
    """Per set and bin (arrays (S, B)), the phase-resolved quantities; per-process rates as (S, B, P)."""
    events = t.counts[..., K.PHASE_EVENTS]
    exposure = t.sums[..., K.PHASE_EXPOSURE]
    proc = t.process.astype(float)
    N = number_density_m3
    ionizing = (kinds == "ionization") | (kinds == "penning")  # Penning transfers are ionizations of the receiver
    ionization = proc[..., ionizing].sum(axis=-1)
    attachment = proc[..., kinds == "attachment"].sum(axis=-1)
    q = {
        "mean_energy_eV": _ratio(t.sums[..., K.PHASE_ENERGY], events),
        "drift_velocity_flux": _ratio(t.sums[..., K.PHASE_VZ], events),
        "ionization_rate_coefficient": _ratio(ionization, exposure) / N,
        "attachment_rate_coefficient": _ratio(attachment, exposure) / N,
        "excitation_rate_coefficient": _ratio(proc[..., kinds == "excitation"].sum(axis=-1), exposure) / N,
        "effective_ionization_frequency": _ratio(ionization - attachment, exposure),
        "collision_frequency": _ratio(proc[..., kinds != "penning"].sum(axis=-1), exposure),  # real collisions
        "power_absorbed_eV_s": _ratio(t.sums[..., K.PHASE_POWER], events) * ELECTRON_MASS_kg / ELEMENTARY_CHARGE_C,
        "_rates": _ratio(proc, exposure[..., None] * target_density_m3[None, None, :]),
    }
    return q


@dataclass(frozen=True)
class PhaseEstimates:
    """Phase-resolved values and the cycle averages of an AC run."""

    phase_resolved: dict[str, PhaseResolved]
    cycle: dict[str, Estimate]
    cycle_rates: dict[str, Estimate]


def phase_estimates(t: PhaseTallies, drive: Drive, process_keys, process_kinds, target_density_m3,
                    number_density_m3: float) -> PhaseEstimates:
    """Phase-resolved quantities (jackknife errors) and their cycle averages (means over the equal-time bins).

    Parameters
    ----------
    t : PhaseTallies
    drive : Drive
    process_keys, process_kinds : sequence of str
        Result key and kind of every process.
    target_density_m3 : ndarray, shape (P,)
        Target density of every process [m⁻³].
    number_density_m3 : float
        Total gas density [m⁻³].
    """
    kinds = np.asarray(process_kinds)
    density = np.asarray(target_density_m3, dtype=float)
    pooled, loo = t._sets()
    with np.errstate(invalid="ignore", divide="ignore"):
        qp = _quantities(pooled, kinds, density, number_density_m3)
        ql = _quantities(loo, kinds, density, number_density_m3)
    field = drive.bin_field_Td()
    resolved = {"reduced_field_Td": PhaseResolved(field, np.zeros_like(field))}
    cycle: dict[str, Estimate] = {}
    for name in PHASE_QUANTITIES[1:]:
        value, error = jackknife(qp[name], ql[name])
        resolved[name] = PhaseResolved(value, error)
        c_value, c_error = jackknife(qp[name].mean(axis=-1), ql[name].mean(axis=-1))
        cycle[name] = Estimate(float(c_value), float(c_error))
    value, error = jackknife(qp["_rates"], ql["_rates"])
    c_value, c_error = jackknife(qp["_rates"].mean(axis=1), ql["_rates"].mean(axis=1))
    rates = {}
    for k, key in enumerate(process_keys):
        name = key if key not in resolved else f"rate_coefficient:{key}"
        resolved[name] = PhaseResolved(value[:, k], error[:, k])
        rates[key] = Estimate(float(c_value[k]), float(c_error[k]))
    return PhaseEstimates(resolved, cycle, rates)


# --------------------------------------------------------------------------------------- stationarity, regime

def periodic_stationary(series, drive: Drive, now: float) -> tuple[bool, float, float, float]:
    """Periodic-steady-state test at a period boundary ``now`` [s].

    With P ≥ 2 periods elapsed and q = max(⌊P/4⌋, 1), the cycle averages of the mean energy, the real collision
    frequency and ν_eff (net electrons created per exposure) over periods (P − 2q, P − q] and (P − q, P] agree, per
    replica, within two standard errors of their difference. Returns (stationary, mean energy [eV], absorbed power per
    electron [eV/s], real collision frequency [s⁻¹]) of the last block.
    """
    periods = drive.periods(now)
    q = max(periods // 4, 1)
    if periods < 2:
        return False, math.nan, math.nan, math.nan
    T = drive.period_s
    end = series.array("time_s")
    a = (end > (periods - 2 * q + 0.5e-6) * T) & (end <= (periods - q + 0.5e-6) * T)
    b = end > (periods - q + 0.5e-6) * T
    if a.sum() < 1 or b.sum() < 1:
        return False, math.nan, math.nan, math.nan
    ok = True
    values = {}
    for num, den in (("energy_sum", "events"), ("real", "exposure"), ("net", "exposure"), ("power", "events")):
        n, d = series.array(num), series.array(den)
        qa = _ratio(n[a].sum(axis=0), d[a].sum(axis=0))
        qb = _ratio(n[b].sum(axis=0), d[b].sum(axis=0))
        values[num] = qb
        if num == "power":
            continue
        diff = qb - qa
        if not np.all(np.isfinite(diff)):
            return False, math.nan, math.nan, math.nan
        tol = 2.0 * diff.std(ddof=1) / math.sqrt(diff.size) + 1e-12 * abs(qb.mean())
        ok = ok and bool(abs(diff.mean()) <= tol)
    power = float(np.mean(values["power"])) * ELECTRON_MASS_kg / ELEMENTARY_CHARGE_C
    return ok, float(np.mean(values["energy_sum"])), power, float(np.mean(values["real"]))


def classify(omega_over_nu_energy: float) -> str:
    """The regime verdict from ω/ν_ε: 'quasi-static' below 0.1, 'effective-field' above 10, else 'neither'
    (limits of the two standard approximations; Raizer 1991, ch. 2, from memory)."""
    if not math.isfinite(omega_over_nu_energy):
        return "neither"
    if omega_over_nu_energy < QUASI_STATIC_BELOW:
        return "quasi-static"
    if omega_over_nu_energy > EFFECTIVE_FIELD_ABOVE:
        return "effective-field"
    return "neither"


def regime(drive: Drive, nu_m: float, nu_energy: float) -> dict:
    """The regime of the drive.

    Parameters
    ----------
    drive : Drive
    nu_m : float
        Momentum-transfer collision frequency of the swarm [s⁻¹].
    nu_energy : float
        Energy relaxation frequency of the swarm [s⁻¹].

    Returns
    -------
    dict
        ``omega_over_nu_m``, ``omega_over_nu_energy``, ``verdict`` (:func:`classify`), ``statement`` (a sentence),
        ``effective_field_Td`` (:meth:`Drive.effective_field_Td`), ``rms_field_Td``, ``nu_m_s``,
        ``nu_energy_s``, ``omega_rad_s``.
    """
    w = drive.omega
    r_m = w / nu_m if nu_m > 0 else math.inf
    r_e = w / nu_energy if nu_energy > 0 else math.nan
    verdict = classify(r_e)
    e_eff = drive.effective_field_Td(nu_m)
    text = {
        "quasi-static": ("the energy follows the field (omega/nu_energy < 0.1): rates are the phase average of DC "
                         "rates at the instantaneous |E|/N"),
        "effective-field": (f"the energy does not follow the field (omega/nu_energy > 10): it is that of a DC field "
                            f"E_eff/N = {e_eff:.4g} Td"),
        "neither": ("omega is comparable to the energy relaxation frequency: neither the quasi-static nor the "
                    "effective-field picture holds; use the phase-resolved results"),
    }[verdict]
    return {"omega_over_nu_m": float(r_m), "omega_over_nu_energy": float(r_e), "verdict": verdict,
            "statement": f"At {drive.frequency_Hz:.4g} Hz {text}.", "effective_field_Td": float(e_eff),
            "rms_field_Td": drive.rms_field_Td(), "nu_m_s": float(nu_m), "nu_energy_s": float(nu_energy),
            "omega_rad_s": float(w)}


def phase_average(fields_Td, values, drive: Drive, samples: int = 720) -> float:
    """The quasi-static (low-frequency) cycle average of a DC quantity: (1/T) ∫ q(|E(t)|/N) dt.

    ``values`` (> 0) is tabulated at DC reduced fields ``fields_Td`` (increasing) and interpolated linearly in
    (log |E|/N, log q); fields below the first node give 0 (use it for threshold processes), above the last
    node it is extrapolated along the last interval. Midpoint rule with ``samples`` points per period.
    """
    fields = np.asarray(fields_Td, dtype=float)
    q = np.asarray(values, dtype=float)
    if fields.size < 2 or np.any(np.diff(fields) <= 0) or np.any(fields <= 0) or np.any(q <= 0):
        raise ConfigError("phase_average(): fields_Td must increase and be > 0, values must be > 0 (>= 2 nodes)")
    x = (np.arange(samples) + 0.5) / samples
    e = np.abs(drive.dc_offset_Td + drive.amplitude_Td * drive.shape(x))
    le, lf, lq = np.log(np.maximum(e, 1e-300)), np.log(fields), np.log(q)
    i = np.clip(np.searchsorted(lf, le) - 1, 0, fields.size - 2)
    slope = (lq[i + 1] - lq[i]) / (lf[i + 1] - lf[i])
    out = np.where(e >= fields[0], np.exp(lq[i] + slope * (le - lf[i])), 0.0)
    return float(out.mean())


def dc_equivalent(mixture, result, **swarm_options):
    """A DC swarm run at the effective field E_eff/N of an AC ``result`` (``result.regime["effective_field_Td"]``)
    — the DC-equivalent numbers of the effective-field regime (for the quasi-static regime average DC runs over
    the phase with :func:`phase_average` instead). ``swarm_options`` go to :func:`avalanche.engine.swarm`."""
    from .engine import swarm

    if result.regime is None:
        raise ConfigError("dc_equivalent(): the result is not from an AC run (no regime)")
    field = result.regime["effective_field_Td"]
    if not (math.isfinite(field) and field > 0):
        raise ConfigError(f"dc_equivalent(): the result's effective field is {field!r} Td; nothing to run")
    return swarm(mixture, field, **swarm_options)


def finish(result, drive: Drive, est: PhaseEstimates, tallies: PhaseTallies, target_density_m3, screened,
           kT_eV: float) -> None:
    """Complete an AC ``result`` in place: cycle averages replace the scalar estimates of the phase-resolved
    quantities and the rate coefficients; ``phase``, ``phase_resolved``, ``regime`` and the drive are added.

    The regime uses ν_m = Σ_k ν_k f_k, the cycle-averaged collision frequency of every process (k_k N_k) times
    its momentum-transfer fraction f_k (1 for isotropic scattering, ⟨1 − cos χ⟩ at the cycle-averaged mean energy
    for screened-Coulomb scattering), and the energy relaxation frequency ν_ε = P̄/(⟨ε⟩ − 3kT/2) with P̄ the
    cycle-averaged power per electron taken from the field, Σ e E(t)·v_z over trial events (in the periodic
    steady state P̄ is the rate of energy loss in collisions, so ν_ε is the rate at which the swarm loses its
    excess energy).
    """
    from .swarm_tables import momentum_transfer_fraction

    result.estimates.update(est.cycle)
    result.rate_coefficients = est.cycle_rates
    energy = est.cycle["mean_energy_eV"].value
    fraction = np.where(np.asarray(screened), momentum_transfer_fraction(max(energy, 1e-9)), 1.0)
    frequencies = np.array([e.value for e in est.cycle_rates.values()]) * np.asarray(target_density_m3)
    nu_m = float(np.nansum(frequencies * fraction))
    excess = energy - 1.5 * kT_eV
    power = est.cycle["power_absorbed_eV_s"].value
    nu_energy = power / excess if excess > 0 and math.isfinite(power) else math.nan
    result.phase = drive.phase_centres()
    result.phase_resolved = est.phase_resolved
    result.regime = regime(drive, nu_m, nu_energy)
    result.phase_tallies = tallies
    result.inputs["drive"] = drive.describe()
    result.inputs["sampled_periods"] = result.sampled_time_s / drive.period_s
