"""The quasi-static route of AC drives: when the electron energy follows the field (ω much below the energy
relaxation frequency ν_ε), the cycle is computed from DC points at the instantaneous field instead of tracking
every period, which at low frequency or high pressure would take 1e8–1e12 collisions per period.

Method
------
1. A short DC probe at the r.m.s. field gives ν_ε = e E W / (⟨ε⟩ − 3kT/2) (power per electron over the excess
   energy, as in :func:`avalanche.engine.ac.finish`); ω/ν_ε < :data:`avalanche.engine.ac.QUASI_STATIC_BELOW` (0.1)
   is the quasi-static verdict of :func:`avalanche.engine.ac.classify`. Otherwise the caller tracks the drive
   exactly.
2. Quadrature over the phase: the period is cut into the drive's B equal phase bins; in bin b the field is the bin
   average E_b/N (:meth:`avalanche.engine.drive.Drive.bin_field_Td`), and a DC point is computed at each distinct
   |E_b|/N with the same engine and settings (its own seed, an equal share of the event budget and of the wall-clock
   limit). A quantity's value in bin b is the DC value at |E_b|/N (velocities carry the sign of E_b); its cycle
   average is the mean over the bins (the midpoint rule of (1/T)∫ q(|E(t)|/N) dt, with error O(1/B²) for a smooth
   q). Standard errors are propagated: with w_j the weight of DC point j in the mean (its bins' count over B, signed
   for velocities), σ² = Σ_j w_j² σ_j² (the DC points are independent).
3. The result says so: ``regime["method"] = "quasi-static"`` and ``inputs["method"]``, with the DC fields in
   ``inputs["quasi_static_fields_Td"]``; it is marked not converged when any DC point is.

References
----------
Raizer Y P (1991) Gas Discharge Physics, Springer, ch. 2 (quasi-static limit of electrons in slowly varying fields:
the energy distribution is that of the DC field at each instant; from memory).
Davis P J & Rabinowitz P (1984) Methods of Numerical Integration, 2nd ed., Academic Press, sec. 2.2 (midpoint rule
and its error; from memory).
"""

from __future__ import annotations

import dataclasses
import math
import time
from collections.abc import Callable

import numpy as np

from .. import kernels as K
from ..constants import TOWNSEND_V_m2
from . import ac
from .drive import Drive
from .results import EnergyDistribution, Estimate, PhaseResolved, SwarmResult
from .tables import EnergyGrid, ProcessTable, momentum_transfer_fraction

PROBE_BUDGET_FRACTION = 0.1
"""Share of ``max_events`` (and of the wall-clock limit) given to the DC probe that decides the regime."""
PROBE_PRECISION = 0.05
"""Target relative error of the probe's drift velocity (ν_ε needs only its order of magnitude near the limit)."""
LOWEST_NODE_FRACTION = 1e-2
"""Phase bins whose |E|/N is below this fraction of the largest (a pulse resting at zero) use the DC point at this
fraction (a swarm near thermal energy; DC runs need E/N > 0); the result lists the floor in
``inputs["quasi_static_floor_Td"]``."""
SIGNED = ("drift_velocity_flux", "drift_velocity_bulk")
"""Estimates that follow the sign of the field."""

RunDC = Callable[[float, object], SwarmResult]
"""``run_dc(reduced_field_Td, settings) -> SwarmResult``: one DC point with the engine."""


def _with_seed(settings, extra: int, **changes):
    seed = settings.seed if isinstance(settings.seed, tuple) else (settings.seed,)
    return dataclasses.replace(settings, seed=(*seed, extra), **changes)


def _left(settings, started: float, share: float) -> float | None:
    if settings.max_wall_seconds is None:
        return None
    return max(1e-3, share * (settings.max_wall_seconds - (time.perf_counter() - started)))


def energy_relaxation_frequency(result: SwarmResult, kT_eV: float, number_density_m3: float) -> float:
    """ν_ε = e E W_flux / (⟨ε⟩ − 3kT/2) [s⁻¹] of a DC ``result`` (NaN where the excess energy is not positive)."""
    field_V_m = result.reduced_field_Td * TOWNSEND_V_m2 * number_density_m3
    excess = result.mean_energy_eV.value - 1.5 * kT_eV
    power_eV_s = field_V_m * result.drift_velocity_flux.value
    return power_eV_s / excess if excess > 0 and math.isfinite(power_eV_s) else math.nan


def collision_frequency_bound(mixture, settings, energy_max_eV: float = 1000.0) -> float:
    """The largest total collision frequency N Σ σ_k(ε) v over 0–``energy_max_eV`` [s⁻¹]: an upper bound of the
    momentum-transfer and the energy relaxation frequencies of swarms below that energy."""
    table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
    return EnergyGrid.build(table, energy_max_eV, settings.energy_cells).nu_star


def quasi_static_swarm(mixture, drive: Drive, settings, run_dc: RunDC, kT_eV: float,
                       force: bool = False) -> tuple[SwarmResult | None, int]:
    """The AC result of ``drive`` from DC points, or None when the drive is not quasi-static (then track it), and
    the trial events the probe spent (to be counted in the exact run's budget).

    Parameters
    ----------
    mixture : Mixture
    drive : Drive
    settings : Settings
        The run's settings (:func:`avalanche.engine.time_of_flight.make_settings`).
    run_dc : callable
        ``run_dc(reduced_field_Td, settings)``: one DC point of the same engine.
    kT_eV : float
        Gas temperature as energy [eV].
    force : bool
        Skip the probe and use DC points whatever the regime (``ac_method="quasi-static"``).
    """
    started = time.perf_counter()
    fields = drive.bin_field_Td()
    magnitude = np.abs(fields)
    floor = LOWEST_NODE_FRACTION * magnitude.max()
    magnitude = np.maximum(magnitude, floor)
    probe_events = 0
    if not force:
        if drive.omega >= ac.QUASI_STATIC_BELOW * collision_frequency_bound(mixture, settings):
            return None, 0  # ν_ε ≤ ν_m ≤ the largest total collision frequency: no probe needed
        probe = run_dc(drive.rms_field_Td(), _with_seed(
            settings, 1 << 20, max_events=max(1, int(PROBE_BUDGET_FRACTION * settings.max_events)),
            precision=max(settings.precision, PROBE_PRECISION), precision_on="drift_velocity_flux",
            max_wall_seconds=_left(settings, started, PROBE_BUDGET_FRACTION)))
        nu_energy = energy_relaxation_frequency(probe, kT_eV, mixture.number_density_m3)
        probe_events = probe.events
        if ac.classify(drive.omega / nu_energy if nu_energy > 0 else math.nan) != "quasi-static":
            return None, probe_events
    nodes, which = np.unique(np.round(magnitude, 12), return_inverse=True)
    budget = max(1, int((settings.max_events - probe_events) / nodes.size))
    points = []
    for j, field in enumerate(nodes):
        share = 1.0 / (nodes.size - j)
        points.append(run_dc(float(field), _with_seed(settings, j, max_events=budget,
                                                      max_wall_seconds=_left(settings, started, share))))
    result = _assemble(mixture, drive, settings, points, which.ravel(), np.sign(fields), kT_eV, probe_events)
    if np.any(np.abs(fields) < floor):
        result.inputs["quasi_static_floor_Td"] = float(floor)
    return result, 0


def exact_settings(settings, probe_events: int, started: float):
    """The settings of the exact tracking after a probe: what is left of the event budget and of the wall-clock
    limit (measured from ``started``, a ``time.perf_counter()`` value), so that both hold for the whole call."""
    if not probe_events:
        return settings
    wall = settings.max_wall_seconds
    return dataclasses.replace(settings, max_events=max(1, settings.max_events - probe_events),
                               max_wall_seconds=None if wall is None else _left(settings, started, 1.0))


def _combine(values: np.ndarray, errors: np.ndarray, weights: np.ndarray) -> Estimate:
    return Estimate(float(np.dot(weights, values)), float(math.sqrt(np.dot(weights ** 2, errors ** 2))))


def _assemble(mixture, drive: Drive, settings, points: list[SwarmResult], which: np.ndarray, sign: np.ndarray,
              kT_eV: float, probe_events: int) -> SwarmResult:
    """The AC result from the DC points: phase-resolved values, cycle averages with propagated errors, regime."""
    B, J = drive.phase_bins, len(points)
    count = np.bincount(which, minlength=J) / B
    signed = np.bincount(which, weights=sign, minlength=J) / B
    density = mixture.number_density_m3

    def node_arrays(get):
        return (np.array([get(p).value for p in points], dtype=float),
                np.array([get(p).stderr for p in points], dtype=float))

    estimates = {}
    for name in points[0].estimates:
        values, errors = node_arrays(lambda p, n=name: p.estimates[n])
        estimates[name] = _combine(values, errors, signed if name in SIGNED else count)
    rates = {}
    for key in points[0].rate_coefficients:
        values, errors = node_arrays(lambda p, k=key: p.rate_coefficients[k])
        rates[key] = _combine(values, errors, count)
    # phase-resolved: the DC value of each bin's node (velocities signed), and the absorbed power e E W [eV/s]
    field_V_m = np.abs(drive.bin_field_Td()) * TOWNSEND_V_m2 * density
    resolved = {"reduced_field_Td": PhaseResolved(drive.bin_field_Td(), np.zeros(B))}
    for name in ac.PHASE_QUANTITIES[1:]:
        if name == "power_absorbed_eV_s":
            values, errors = node_arrays(lambda p: p.estimates["drift_velocity_flux"])
            resolved[name] = PhaseResolved(field_V_m * values[which], field_V_m * errors[which])
            estimates[name] = Estimate(float(np.mean(field_V_m * values[which])),
                                       float(math.sqrt(np.sum(np.bincount(which, weights=field_V_m / B,
                                                                          minlength=J) ** 2 * errors ** 2))))
        elif name in points[0].estimates:
            values, errors = node_arrays(lambda p, n=name: p.estimates[n])
            factor = sign if name in SIGNED else np.ones(B)
            resolved[name] = PhaseResolved(factor * values[which], errors[which])
    for key in rates:
        values, errors = node_arrays(lambda p, k=key: p.rate_coefficients[k])
        resolved[key if key not in resolved else f"rate_coefficient:{key}"] = PhaseResolved(values[which],
                                                                                          errors[which])
    first = points[0]
    inputs = dict(first.inputs)
    inputs.update(reduced_field_Td=drive.amplitude_Td, drive=drive.describe(), method="quasi-static",
                  quasi_static_fields_Td=[float(p.reduced_field_Td) for p in points],
                  settings=dict(first.inputs.get("settings", {}), seed=settings.seed, max_events=settings.max_events),
                  seed=settings.seed)
    anomalies = {}
    for p in points:
        for key, value in p.anomalies.items():
            if isinstance(value, (int, float)):
                anomalies[key] = max(anomalies.get(key, 0), value) if key.startswith("final") else \
                    anomalies.get(key, 0) + value
    notes = [f"DC point at {p.reduced_field_Td:.4g} Td: {note}" for p in points for note in p.convergence_notes]
    result = SwarmResult(
        reduced_field_Td=drive.amplitude_Td, estimates=estimates, rate_coefficients=rates,
        eedf=_average_eedf(points, count), events=int(sum(p.events for p in points) + probe_events),
        cpu_seconds=float(sum(p.cpu_seconds for p in points)), wall_seconds=float(sum(p.wall_seconds for p in points)),
        stop_reason="precision" if all(p.stop_reason == "precision" for p in points) else
        next(p.stop_reason for p in points if p.stop_reason != "precision"),
        relaxation_time_s=float(max(p.relaxation_time_s for p in points)),
        sampled_time_s=float(sum(p.sampled_time_s for p in points)),
        extrapolated_fraction=float(max(p.extrapolated_fraction for p in points)), anomalies=anomalies,
        inputs=inputs, phase=drive.phase_centres(), phase_resolved=resolved,
        converged=not notes, convergence_notes=notes)
    result.regime = dict(_regime(mixture, drive, settings, result, kT_eV), method="quasi-static")
    return result


def _regime(mixture, drive: Drive, settings, result: SwarmResult, kT_eV: float) -> dict:
    """:func:`avalanche.engine.ac.regime` from the cycle averages, with ν_m from the rate coefficients as in
    :func:`avalanche.engine.ac.finish`."""
    table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
    energy = result.estimates["mean_energy_eV"].value
    screened = table.scatter == K.SCATTER_SCREENED_COULOMB
    fraction = np.where(screened, momentum_transfer_fraction(max(energy, 1e-9)), 1.0)
    frequencies = np.array([result.rate_coefficients[k].value for k in table.keys]) * table.target_density_m3
    nu_m = float(np.nansum(frequencies * fraction))
    excess = energy - 1.5 * kT_eV
    power = result.estimates["power_absorbed_eV_s"].value
    nu_energy = power / excess if excess > 0 and math.isfinite(power) else math.nan
    return ac.regime(drive, nu_m, nu_energy)


def _average_eedf(points: list[SwarmResult], weights: np.ndarray) -> EnergyDistribution:
    """The time average of the DC distributions on the widest point's bins (each histogram read at the bin
    centres, zero beyond its own range); errors propagated as for the estimates."""
    widest = max(points, key=lambda p: p.eedf.energy_edges_eV[-1])
    edges = widest.eedf.energy_edges_eV
    centres = 0.5 * (edges[1:] + edges[:-1])
    value = np.zeros(centres.size)
    variance = np.zeros(centres.size)
    overflow = 0.0
    for w, p in zip(weights, points, strict=True):
        e = p.eedf
        inside = centres < e.energy_edges_eV[-1]
        index = np.clip(np.searchsorted(e.energy_edges_eV, centres, side="right") - 1, 0, e.value.size - 1)
        value += w * np.where(inside, e.value[index], 0.0)
        variance += (w * np.where(inside, e.stderr[index], 0.0)) ** 2
        overflow += w * e.overflow_fraction
    return EnergyDistribution(energy_edges_eV=edges, value=value, stderr=np.sqrt(variance), overflow_fraction=overflow)
