"""Swarm parameters from the raw tallies of independent replicas (plain numpy).

Every quantity is a function of sums over the R independent replicas (the replicas are independent
simulations). Its value is the function of the sums pooled over all replicas, and its standard error the
leave-one-replica-out jackknife error (Efron B & Tibshirani R J 1993, An Introduction to the Bootstrap, ch. 11):
σ² = (R − 1)/R Σ_i (θ_(i) − θ̄)², θ_(i) computed without replica i. For a plain mean of equal replicas this is
exactly std/√R; for the ratios and nonlinear functions here (drift and diffusion, α from the steady-state relation
near its limit 4 D_L ν → W²) it avoids the bias and the NaN that a mean of noisy per-replica values would give.

Definitions (field along −z, so the electrons drift along +z and W > 0; sums over trial events, each weighted by
w = ν*/ν*(t) where the trial frequency depends on energy, are time averages of the swarm because the trial events
are a Poisson process of rate ν*(t) in time)

* mean energy ⟨ε⟩ = Σ w ε / Σ w; flux drift velocity W_flux = ⟨v_z⟩ = Σ w v_z / Σ w, w = ν*/ν*(t).
* bulk drift velocity W_bulk = d⟨z⟩/dt and bulk diffusion N D_L = N ½ d var(z)/dt, N D_T = N ¼ d[var(x) +
  var(y)]/dt, from the changes of the ensemble's moments during each sampled chunk (between population-control
  steps) summed over the chunks and divided by their total time.
* flux diffusion N D_L = N (⟨z v_z⟩ − ⟨z⟩⟨v_z⟩), N D_T = N ½ ⟨x v_x + y v_y⟩ (⟨v_x⟩ = ⟨v_y⟩ = 0 by symmetry).
  Positions are taken relative to the replica's mean at the chunk start, which leaves these covariances
  unchanged and keeps the sums small.
* rate coefficient of process k: k_k = C_k / (N_k ∫ n dt) [m³ s⁻¹], C_k its expected collisions Σ ν_k(ε)/ν*(t)
  over the trial events (below) and N_k the density of its target species (per target molecule); the counted
  C_k (collisions that happened) gives ``rate_coefficients(..., counted=True)``; totals are frequencies divided by
  the total density N.
* ν_ion, ν_att: ionization and attachment frequencies per electron [s⁻¹]; ν_eff = ν_ion − ν_att. The direct
  parts are expected-value estimates, Σ ν_k(ε)/ν*(t) over the trial events divided by ∫ n dt (unbiased because the
  trial events are a Poisson process of rate ν* in time; Skullerud 1968, J. Phys. D 1 1567); the counted
  estimates (collisions that happened / ∫ n dt) are kept as ``*_rate_coefficient_counted``. ν_ion counts
  direct ionization and Penning transfer (the "penning" pseudo-processes, :mod:`avalanche.gas.penning`):
  ν_ion = ν_direct + ν_Penning. penning_ionization_rate_coefficient = ν_Penning / N, penning_fraction =
  ν_Penning / ν_ion; the per-channel rate coefficient of a "penning" row is per receiver molecule,
  C / (N_B ∫ n dt), like that of any process of B.
  The expected-value estimate is not always the less noisy one: the counted total is the expected-value sum plus
  a martingale M (each trial event adds 1{ionization} − ν_ion/ν*), Var(counted) = Var(expected) + Var(M) +
  2 Cov(expected, M), and an ionization takes the electron out of the tail, lowering the ν_ion/ν* it would
  have added later, so Cov < 0. Where ionization is the main loss of the tail (argon at ~1000 Td), that
  covariance outweighs Var(M) and the counted error is the smaller (measured: 0.08–0.15 % against 0.10–0.21 %
  at 1000 Td; below ~300 Td the expected value wins, e.g. 0.5–0.9 % against 1.0 % at 200 Td). This is the
  known behaviour of track-length against collision estimators in strongly absorbing media (Lux I &
  Koblinger L 1991, Monte Carlo Particle Transport Methods, CRC Press, ch. 5; from memory).
* Townsend coefficients (steady-state, with the longitudinal-diffusion correction; e.g. Robson R E 1991, Aust.
  J. Phys. 44 685, eq. for α from the time-of-flight coefficients, from memory):
  α(ν) = [W − √(W² − 4 D_L ν)] / (2 D_L) = 2ν / (W + √(W² − 4 D_L ν)), with W = W_bulk and D_L the bulk value.
  alpha_N = α(ν_ion)/N, eta_N = −α(−ν_att)/N (so η ≥ 0), effective_alpha_N = α(ν_eff)/N; because α(ν) is
  nonlinear, alpha_N − eta_N differs slightly from effective_alpha_N. The simple estimates beside them are
  alpha_N_simple = ν_ion/(N W_bulk) and eta_N_simple = ν_att/(N W_bulk).
* mobility N μ = N W_bulk / E [V⁻¹ m⁻¹ s⁻¹]; characteristic energy D_T/μ (bulk values) [eV].
* magnetic field (:mod:`avalanche.engine.magnetic`; frame ê_E, ê_E×B, ê_3): flux drift vector W = ⟨v⟩, bulk
  drift vector d⟨r⟩/dt; flux diffusion tensor D_ij = ⟨r_i v_j⟩ − ⟨r_i⟩⟨v_j⟩, symmetrised (only its symmetric
  part enters the diffusion equation ∂n/∂t = … + D_ij ∂_i ∂_j n; e.g. Robson R E 2006, Introductory Transport
  Theory for Charged Particles in Gases, World Scientific, ch. on transport in E×B fields, from memory); bulk
  tensor D_ij = ½ d cov(r_i, r_j)/dt; Lorentz angle θ_L = angle between W and ê_E, atan2(√(W_E×B² + W_3²), W_E);
  the transverse flux N D_T is then ½ (D_E×B,E×B + D_33) of the flux tensor (centred with ⟨v_⊥⟩ ≠ 0).
* EEDF f(ε) per bin: the weighted fraction of trial events in the bin divided by ∫_bin ε^½ dε, so that ∫ f ε^½ dε = 1
  over the histogram plus the overflow [eV^-3/2].
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .results import ArrayEstimate, EnergyDistribution, Estimate
from .tallies import SwarmTallies


@dataclass(frozen=True)
class EstimatorContext:
    """What the estimators need besides the tallies.

    Parameters
    ----------
    number_density_m3 : float
        Total gas density N [m⁻³].
    field_V_m : float
        Electric field strength E [V/m].
    process_keys : tuple of str
        Result key of each process (label, or "<species>:<label>").
    process_kinds : tuple of str
        Kind of each process ('elastic', 'excitation', 'ionization', 'attachment', or 'penning' for a Penning
        transfer pseudo-process).
    target_density_m3 : ndarray, shape (P,)
        Density of each process's target species [m⁻³].
    energy_edges_eV : ndarray, shape (B + 1,)
        Edges of the energy histogram [eV].
    """

    number_density_m3: float
    field_V_m: float
    process_keys: tuple[str, ...]
    process_kinds: tuple[str, ...]
    target_density_m3: np.ndarray
    energy_edges_eV: np.ndarray


def estimate(per_replica: np.ndarray) -> Estimate:
    """Mean and standard error (std with ddof = 1 over √R) of independent per-replica values."""
    values = np.asarray(per_replica, dtype=float)
    if values.size == 0 or not np.all(np.isfinite(values)):
        return Estimate(float("nan"), float("nan"))
    if values.size == 1:
        return Estimate(float(values[0]), float("nan"))
    return Estimate(float(values.mean()), float(values.std(ddof=1) / np.sqrt(values.size)))


def townsend_coefficient(drift_velocity: np.ndarray, long_diffusion: np.ndarray, frequency: np.ndarray):
    """Spatial growth rate α [m⁻¹] of a steady-state swarm with net production frequency ``frequency``.

    α = 2ν / (W + √(W² − 4 D_L ν)) — the root of D_L α² − W α + ν = 0 that tends to ν/W as D_L → 0, written so
    that it is exact at D_L = 0 and ν = 0. NaN where W² < 4 D_L ν (no steady-state solution).

    Parameters
    ----------
    drift_velocity : array_like
        Bulk drift velocity W [m/s].
    long_diffusion : array_like
        Bulk longitudinal diffusion coefficient D_L [m²/s].
    frequency : array_like
        ν [s⁻¹] (ν_ion for α, −ν_att for the attachment coefficient, ν_eff for α_eff).
    """
    w = np.asarray(drift_velocity, dtype=float)
    d = np.asarray(long_diffusion, dtype=float)
    nu = np.asarray(frequency, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        disc = w * w - 4.0 * d * nu
        root = np.sqrt(np.where(disc >= 0, disc, np.nan))
        return 2.0 * nu / (w + root)


def _ratio(numerator, denominator):
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.asarray(numerator, dtype=float) / np.asarray(denominator, dtype=float)


def pooled(t: SwarmTallies) -> SwarmTallies:
    """The sums of all replicas as one replica (arrays of shape (1, ...))."""
    return SwarmTallies({k: v.sum(axis=0, keepdims=True) for k, v in t.arrays.items()})


def leave_one_out(t: SwarmTallies) -> SwarmTallies:
    """R sets of sums, set i without replica i (arrays of shape (R, ...))."""
    return SwarmTallies({k: v.sum(axis=0, keepdims=True) - v for k, v in t.arrays.items()})


def jackknife(values_pooled: np.ndarray, values_loo: np.ndarray):
    """Value and jackknife standard error from the pooled value (shape (1, ...)) and the leave-one-out values
    (shape (R, ...)); NaN errors where fewer than two replicas exist."""
    value = np.asarray(values_pooled, dtype=float)[0]
    loo = np.asarray(values_loo, dtype=float)
    replicas = loo.shape[0]
    if replicas < 2:
        return value, np.full_like(value, np.nan)
    spread = np.sum((loo - loo.mean(axis=0)) ** 2, axis=0)
    return value, np.sqrt((replicas - 1) / replicas * spread)


def per_replica_quantities(t: SwarmTallies, ctx: EstimatorContext) -> dict[str, np.ndarray]:
    """Every scalar quantity of :data:`avalanche.engine.results.ESTIMATES` for each set of sums in ``t`` (each replica,
    or pooled / leave-one-out sets; arrays of shape (R,))."""
    N = ctx.number_density_m3
    kinds = np.asarray(ctx.process_kinds)
    counts = t["process_counts"].astype(float)
    exposure = t["exposure_s"]
    penning = counts[:, kinds == "penning"].sum(axis=1)
    ionization = counts[:, kinds == "ionization"].sum(axis=1) + penning
    attachment = counts[:, kinds == "attachment"].sum(axis=1)
    excitation = t["expected_process_counts"][:, kinds == "excitation"].sum(axis=1)
    # expected-value estimators (Σ ν(ε)/ν*(t) over trial events, Skullerud 1968) for the direct part; Penning counted
    expected = t["expected_process_counts"]
    nu_ion = _ratio(expected[:, kinds == "ionization"].sum(axis=1) + penning, exposure)
    nu_att = _ratio(expected[:, kinds == "attachment"].sum(axis=1), exposure)
    nu_eff = nu_ion - nu_att
    w_bulk = _ratio(t["z_mean_increment_m"], t["mature_time_s"])
    dl_bulk = 0.5 * _ratio(t["z_var_increment_m2"], t["mature_time_s"])
    dt_bulk = 0.25 * _ratio(t["xy_var_increment_m2"], t["mature_time_s"])
    w_mature = _ratio(t["mature_vz_sum"], t["mature_event_weights"])
    dl_flux = _ratio(t["mature_zvz_sum"] - w_mature * t["mature_z_sum"], t["mature_event_weights"])
    dt_flux = 0.5 * _ratio(t["mature_xyv_sum"], t["mature_event_weights"])
    if t.magnetic:  # the drift has transverse components: the centred tensor's transverse diagonal
        flux = _flux_tensor(t)
        dt_flux = 0.5 * (flux[:, 1, 1] + flux[:, 2, 2])
    mobility_N = w_bulk * N / ctx.field_V_m
    q = {
        "mean_energy_eV": _ratio(t["energy_sum_eV"], t["event_weights"]),
        "drift_velocity_flux": _ratio(t["vz_sum"], t["event_weights"]),
        "drift_velocity_bulk": w_bulk,
        "N_D_L_flux": N * dl_flux,
        "N_D_L_bulk": N * dl_bulk,
        "N_D_T_flux": N * dt_flux,
        "N_D_T_bulk": N * dt_bulk,
        "N_mu": mobility_N,
        "characteristic_energy_eV": _ratio(N * dt_bulk, mobility_N),
        "alpha_N": townsend_coefficient(w_bulk, dl_bulk, nu_ion) / N,
        "eta_N": -townsend_coefficient(w_bulk, dl_bulk, -nu_att) / N,
        "effective_alpha_N": townsend_coefficient(w_bulk, dl_bulk, nu_eff) / N,
        "alpha_N_simple": _ratio(nu_ion, N * w_bulk),
        "eta_N_simple": _ratio(nu_att, N * w_bulk),
        "ionization_rate_coefficient": nu_ion / N,
        "attachment_rate_coefficient": nu_att / N,
        "ionization_rate_coefficient_counted": _ratio(ionization, exposure) / N,
        "attachment_rate_coefficient_counted": _ratio(attachment, exposure) / N,
        "excitation_rate_coefficient": _ratio(excitation, exposure) / N,
        "penning_ionization_rate_coefficient": _ratio(penning, exposure) / N,
        "penning_fraction": _ratio(penning, ionization),
        "effective_ionization_frequency": nu_eff,
        "collision_frequency": _ratio(t["real_collisions"], exposure),
    }
    return q


def _flux_tensor(t: SwarmTallies) -> np.ndarray:
    """Symmetrised flux diffusion tensor D_ij = ⟨r_i v_j⟩ − ⟨r_i⟩⟨v_j⟩ [m²/s], (R, 3, 3), frame components."""
    n = t["mature_event_weights"][:, None, None]
    with np.errstate(invalid="ignore", divide="ignore"):
        mean_r = t["mature_position_sum"][:, :, None] / n
        mean_v = t["mature_velocity_sum"][:, None, :] / n
        d = t["mature_position_velocity_sum"] / n - mean_r * mean_v
    return 0.5 * (d + np.swapaxes(d, 1, 2))


def _magnetic_quantities(t: SwarmTallies, ctx: EstimatorContext) -> dict[str, np.ndarray]:
    """The vector and tensor quantities of a magnetic-field run for each set of sums in ``t``."""
    w = _ratio(t["velocity_sum"], t["event_weights"][:, None])
    magnitude = np.sqrt(np.sum(w * w, axis=1))
    return {
        "drift_velocity_vector": w,
        "drift_velocity_bulk_vector": _ratio(t["position_mean_increment_m"], t["mature_time_s"][:, None]),
        "drift_velocity_magnitude": magnitude,
        "lorentz_angle_deg": np.degrees(np.arctan2(np.hypot(w[:, 1], w[:, 2]), w[:, 0])),
        "N_D_tensor_flux": ctx.number_density_m3 * _flux_tensor(t),
        "N_D_tensor_bulk": ctx.number_density_m3 * 0.5 * _ratio(t["position_covariance_increment_m2"],
                                                                        t["mature_time_s"][:, None, None]),
    }


def magnetic_estimates(t: SwarmTallies, ctx: EstimatorContext) -> dict[str, ArrayEstimate | Estimate]:
    """Drift velocity vectors (flux, bulk) [m/s], |W| [m/s], Lorentz angle [deg] and diffusion tensors N D (flux,
    bulk) [m⁻¹ s⁻¹] of a magnetic-field run, with jackknife errors; frame (E, E×B, third)."""
    full = _magnetic_quantities(pooled(t), ctx)
    loo = _magnetic_quantities(leave_one_out(t), ctx)
    out: dict[str, ArrayEstimate | Estimate] = {}
    for name in full:
        value, error = jackknife(full[name], loo[name])
        out[name] = Estimate(float(value), float(error)) if np.ndim(value) == 0 else ArrayEstimate(value, error)
    return out


def _rates(t: SwarmTallies, ctx: EstimatorContext, counted: bool) -> np.ndarray:
    # expected-value sums, except for the Penning pseudo-processes (zero frequency: only their counts exist)
    penning = np.asarray(ctx.process_kinds) == "penning"
    events = (t["process_counts"].astype(float) if counted
              else np.where(penning[None, :], t["process_counts"], t["expected_process_counts"]))
    return _ratio(events, t["exposure_s"][:, None] * np.asarray(ctx.target_density_m3)[None, :])


def rate_coefficients(t: SwarmTallies, ctx: EstimatorContext, counted: bool = False) -> dict[str, Estimate]:
    """Rate coefficient per target molecule of every process [m³/s], keyed by ``ctx.process_keys``.

    Expected-value estimates (Σ ν_k(ε)/ν*(t) over trial events / (N_k ∫ n dt), Skullerud 1968) unless
    ``counted``: the collisions that happened / (N_k ∫ n dt). Both are unbiased; for a process with a small share of
    the collisions the expected value is far less noisy (every trial event in its energy range contributes, not only
    the rare ones that select it). Penning pseudo-processes are counted in both.
    """
    value, error = jackknife(_rates(pooled(t), ctx, counted), _rates(leave_one_out(t), ctx, counted))
    return {key: Estimate(float(value[k]), float(error[k])) for k, key in enumerate(ctx.process_keys)}


def _eedf(t: SwarmTallies, weight: np.ndarray) -> np.ndarray:
    return _ratio(t["eedf_counts"], t["event_weights"][:, None] * weight[None, :])


def energy_distribution(t: SwarmTallies, ctx: EstimatorContext) -> EnergyDistribution:
    """The EEDF (∫ f ε^½ dε = 1, [eV^-3/2]) with per-bin jackknife standard errors over replicas."""
    edges = np.asarray(ctx.energy_edges_eV, dtype=float)
    weight = (2.0 / 3.0) * (edges[1:] ** 1.5 - edges[:-1] ** 1.5)
    value, error = jackknife(_eedf(pooled(t), weight), _eedf(leave_one_out(t), weight))
    weights = float(t["event_weights"].sum())  # every weighted trial event is in a bin or above the last one
    overflow = max(weights - float(t["eedf_counts"].sum()), 0.0) / weights if weights > 0 else 0.0
    return EnergyDistribution(energy_edges_eV=edges, value=value, stderr=error, overflow_fraction=overflow)


def swarm_estimates(t: SwarmTallies, ctx: EstimatorContext) -> dict[str, Estimate]:
    """Every scalar estimate (see :data:`avalanche.engine.results.ESTIMATES`) from the tallies."""
    full = per_replica_quantities(pooled(t), ctx)
    loo = per_replica_quantities(leave_one_out(t), ctx)
    out = {}
    for name in full:
        value, error = jackknife(full[name], loo[name])
        out[name] = Estimate(float(value), float(error))
    return out


def extrapolated_fraction(t: SwarmTallies) -> float:
    """Fraction of the sampled real collisions at energies beyond their process's table (pooled)."""
    real = float(t["process_counts"].sum())
    return float(t["extrapolated_counts"].sum()) / real if real > 0 else 0.0
