"""Steady-state Townsend (SST) coefficients from the raw per-replica tallies of :func:`avalanche.townsend`.

Every quantity is a function of sums over R independent replicas; its value is that function of the sums pooled
over all replicas and its standard error the leave-one-replica-out jackknife error (Efron B & Tibshirani R J
1993, An Introduction to the Bootstrap, ch. 11), as in :mod:`avalanche.engine.estimators`.

Definitions (planes z_j = j Δz, j = 0 … J; slab i between z_i and z_{i+1}; per emitted electron)

* net flux Γ(z_j) = (weighted net crossings of plane j) / (electrons emitted); Γ(0) is 1 minus the fraction
  that returned to the electrode.
* flux mean energy ε̄(z_j) = Σ ε sign / Σ sign over the crossings: the energy flux over the particle flux,
  ∫ ε v_z f d³v / ∫ v_z f d³v at the plane.
* local coefficients per slab: α_i = ionizations / L_i and η_i = attachments / L_i, L_i the signed path length
  travelled in the slab (its expectation is ∫_slab Γ dz, so these are collisions per unit flux and length).
* relaxation length: the equilibrium mean energy ε_eq is the flux mean energy pooled over the last third of the
  planes; the relaxation length is the smallest z_j from which every later plane m has
  |ε̄(z_m) − ε_eq| ≤ tolerance · ε_eq + 3 σ_m (σ_m the plane's standard error). The planes from there to z_J
  form the equilibrium region. Its standard error is the jackknife spread of that plane combined with the
  resolution Δz/√12 of the plane grid.
* effective_alpha_N: the least-squares slope of ln Γ(z_j) against z_j over the equilibrium region, over N.
  alpha_N, eta_N: ionizations (attachments) in the equilibrium region's slabs over their path length, over N.
  By particle conservation Γ(z_{i+1}) − Γ(z_i) = (ionizations − attachments)_i exactly, so the two agree.
* mean_energy_eV: ε_eq over the equilibrium region (not only its last third).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .results import Estimate

TALLY_FIELDS: dict[str, tuple[str, str, str]] = {
    "emitted": ("", "1", "electrons emitted by the electrode"),
    "flux": ("J+1", "1", "weighted net crossings per plane (+z crossings minus -z crossings)"),
    "energy_flux_eV": ("J+1", "eV", "weighted net crossings per plane times the energy at the crossing"),
    "ionizations": ("J", "1", "weighted ionizations per slab"),
    "attachments": ("J", "1", "weighted attachments per slab"),
    "path_m": ("J", "m", "weighted signed z-path length per slab"),
}
"""name: (trailing shape, units, description) of the per-replica SST sums (shape (R,), (R, J + 1) or (R, J))."""


@dataclass(frozen=True)
class Region:
    """The equilibrium region: planes ``first`` … J (and the slabs between them)."""

    first: int
    planes: int

    @property
    def plane_index(self) -> np.ndarray:
        return np.arange(self.first, self.planes)

    @property
    def slab_index(self) -> np.ndarray:
        return np.arange(self.first, self.planes - 1)


def _ratio(numerator, denominator):
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.asarray(numerator, dtype=float) / np.asarray(denominator, dtype=float)


def pooled(t: dict) -> dict:
    """The sums of all replicas as one set (arrays of shape (1, ...))."""
    return {k: v.sum(axis=0, keepdims=True) for k, v in t.items()}


def leave_one_out(t: dict) -> dict:
    """R sets of sums, set i without replica i (arrays of shape (R, ...))."""
    return {k: v.sum(axis=0, keepdims=True) - v for k, v in t.items()}


def jackknife(values_pooled: np.ndarray, values_loo: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Value and jackknife standard error from the pooled value (shape (1, ...)) and the leave-one-out values."""
    value = np.asarray(values_pooled, dtype=float)[0]
    loo = np.asarray(values_loo, dtype=float)
    if loo.shape[0] < 2:
        return value, np.full_like(value, np.nan)
    with np.errstate(invalid="ignore"):
        spread = np.sum((loo - loo.mean(axis=0)) ** 2, axis=0)
    return value, np.sqrt((loo.shape[0] - 1) / loo.shape[0] * spread)


def growth_rate(z_m: np.ndarray, flux: np.ndarray) -> np.ndarray:
    """Least-squares slope of ln(flux) against ``z_m`` [m⁻¹] for each row of ``flux`` (shape (S, n)).

    NaN for a row with a non-positive flux or fewer than two points.
    """
    z = np.asarray(z_m, dtype=float)
    flux = np.atleast_2d(np.asarray(flux, dtype=float))
    if z.size < 2:
        return np.full(flux.shape[0], np.nan)
    with np.errstate(invalid="ignore", divide="ignore"):
        log_flux = np.where(flux > 0, np.log(np.where(flux > 0, flux, 1.0)), np.nan)
    dz = z - z.mean()
    return (log_flux - log_flux.mean(axis=1, keepdims=True)) @ dz / (dz @ dz)


def profiles(t: dict) -> dict[str, np.ndarray]:
    """Flux, flux mean energy and local coefficients [m⁻¹] for each set of sums in ``t``."""
    emitted = t["emitted"][:, None]
    return {"flux": _ratio(t["flux"], emitted),
            "mean_energy_eV": _ratio(t["energy_flux_eV"], t["flux"]),
            "ionization": _ratio(t["ionizations"], emitted),
            "attachment": _ratio(t["attachments"], emitted),
            "local_alpha": _ratio(t["ionizations"], t["path_m"]),
            "local_eta": _ratio(t["attachments"], t["path_m"])}


def relaxation_start(mean_energy_eV: np.ndarray, stderr_eV: np.ndarray, tolerance: float) -> tuple[int, float]:
    """Index of the first plane of the equilibrium region and the equilibrium energy used to find it.

    See the module docstring; returns the last plane's index when no earlier plane qualifies.
    """
    energy = np.asarray(mean_energy_eV, dtype=float)
    sigma = np.nan_to_num(np.asarray(stderr_eV, dtype=float), nan=0.0)
    planes = energy.size
    tail = energy[2 * planes // 3:]
    equilibrium = float(np.nanmean(tail)) if np.isfinite(tail).any() else float("nan")
    within = np.abs(energy - equilibrium) <= tolerance * abs(equilibrium) + 3.0 * sigma
    # first index from which every later plane is within the band
    outside = np.flatnonzero(~within)
    first = int(outside[-1]) + 1 if outside.size else 0
    return min(first, planes - 1), equilibrium


def _region_quantities(t: dict, z_m: np.ndarray, region: Region, density_m3: float) -> dict[str, np.ndarray]:
    p = profiles(t)
    planes, slabs = region.plane_index, region.slab_index
    ion = t["ionizations"][:, slabs].sum(axis=1)
    att = t["attachments"][:, slabs].sum(axis=1)
    path = t["path_m"][:, slabs].sum(axis=1)
    return {"effective_alpha_N": growth_rate(z_m[planes], p["flux"][:, planes]) / density_m3,
            "alpha_N": _ratio(ion, path) / density_m3,
            "eta_N": _ratio(att, path) / density_m3,
            "mean_energy_eV": _ratio(t["energy_flux_eV"][:, planes].sum(axis=1), t["flux"][:, planes].sum(axis=1))}


@dataclass(frozen=True)
class TownsendEstimates:
    """Estimates and profiles of one SST run (see the module docstring)."""

    estimates: dict[str, Estimate]
    profiles: dict[str, np.ndarray]
    region: Region
    equilibrium_energy_eV: float


def townsend_estimates(t: dict, z_m: np.ndarray, density_m3: float, tolerance: float) -> TownsendEstimates:
    """Every SST estimate and profile, with jackknife standard errors, from the per-replica sums ``t``.

    Parameters
    ----------
    t : dict
        Per-replica sums (:data:`TALLY_FIELDS`).
    z_m : ndarray, shape (J + 1,)
        Plane positions [m].
    density_m3 : float
        Gas density N [m⁻³].
    tolerance : float
        Relative energy band of the relaxation test.
    """
    z = np.asarray(z_m, dtype=float)
    full, loo = pooled(t), leave_one_out(t)
    profile_full, profile_loo = profiles(full), profiles(loo)
    out: dict[str, np.ndarray] = {"z_m": z, "slab_center_m": 0.5 * (z[1:] + z[:-1])}
    for name in profile_full:
        value, error = jackknife(profile_full[name], profile_loo[name])
        out[name], out[f"{name}_stderr"] = value, error
    for name in ("local_alpha", "local_eta"):
        out[f"{name}_N"], out[f"{name}_N_stderr"] = out.pop(name) / density_m3, out.pop(f"{name}_stderr") / density_m3
    first, equilibrium = relaxation_start(out["mean_energy_eV"], out["mean_energy_eV_stderr"], tolerance)
    region = Region(first, z.size)
    loo_first = np.array([relaxation_start(e, out["mean_energy_eV_stderr"], tolerance)[0]
                          for e in profile_loo["mean_energy_eV"]])
    relax_value, relax_error = jackknife(z[[first]][None, :], z[loo_first][:, None])
    # the jackknife spread of a plane index, combined with the plane spacing's resolution Δz/√12
    resolution = (z[1] - z[0]) / np.sqrt(12.0)
    estimates = {"relaxation_length_m": Estimate(float(relax_value[0]), float(np.hypot(relax_error[0], resolution)))}
    q_full = _region_quantities(full, z, region, density_m3)
    q_loo = _region_quantities(loo, z, region, density_m3)
    for name in ("alpha_N", "eta_N", "effective_alpha_N", "mean_energy_eV"):
        value, error = jackknife(q_full[name], q_loo[name])
        estimates[name] = Estimate(float(value), float(error))
    return TownsendEstimates(estimates=estimates, profiles=out, region=region, equilibrium_energy_eV=equilibrium)
