"""Periodic (AC/RF) drives of the swarm engine (the drive itself is in :mod:`avalanche.engine.drive`): whole-period
chunk scheduling, the periodic-steady-state test, phase-resolved tallies and estimators, and the regime of the drive.

The field is E(t) = E_dc + E_0 w(t), repeated with period T = 1/f (f = ``frequency_Hz``, ω = 2πf):

* sine (default): w = sin ωt; the kernel integrates each free flight exactly, turning cos ωt, sin ωt from one
  flight to the next (:func:`avalanche.kernels.flight.sine_flight`).
* tabulated waveform: w piecewise linear through the table's nodes, periodically closed, scaled so that its peak
  |w| is 1, i.e. the peak |E_0 w|/N is ``reduced_field_Td``; flights are integrated exactly with node impulses
  F, G and whole-period sums (:func:`avalanche.kernels.flight.table_flight`).

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
1968; see :func:`avalanche.kernels.advance_chunk`). Per bin: ⟨ε⟩_b = Σε/n_b, W_b = Σv_z/n_b,
k_b = C_b/(N_k ∫_b n dt) and the growth frequencies from the counts over the exposure. Cycle averages are time
averages (mean over the equal bins): the effective ionization frequency per period,
(1/T) ∫ ν_eff dt = (1/T) ln(n(t+T)/n(t)), is exactly the mean of the bins' ν_eff, whatever the population's
weight. Errors are leave-one-replica-out jackknife errors (:mod:`avalanche.engine.estimators`).

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

import math
from dataclasses import dataclass

import numpy as np

from .. import kernels as K
from ..constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg
from ..errors import ConfigError
from .drive import Drive
from .estimators import jackknife
from .results import Estimate, PhaseResolved
from .tables import momentum_transfer_fraction

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
               "ionization_rate_coefficient": "m^3/s", "attachment_rate_coefficient": "m^3/s",
               "excitation_rate_coefficient": "m^3/s", "effective_ionization_frequency": "1/s",
               "collision_frequency": "1/s", "power_absorbed_eV_s": "eV/s"}
@dataclass(eq=False)
class PhaseTallies:
    """Raw per-replica, per-phase-bin sums of the sampled chunks (columns as in :mod:`avalanche.kernels`):
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
    for num, den in (("energy_sum", "weights"), ("real", "exposure"), ("net", "exposure"), ("power", "weights")):
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
