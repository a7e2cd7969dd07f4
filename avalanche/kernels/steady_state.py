"""Numba kernel of the steady-state Townsend (SST) simulation: electrons followed in space, not in time.

One call advances every replica's electrons through one *pass*: each electron (and every secondary it creates)
is followed from its start until it reaches the pass's forward plane ``z_next`` (it is then stored in the bank,
with its velocity at that plane, and the next pass starts from the bank), returns to the electrode z = 0 (it is
absorbed), or is attached. Flights, null collisions and collision kinematics are those of the time-of-flight
engine: the functions of :mod:`avalanche.kernels` are imported and reused, so both modes share one physics.

Tallies (per replica, overwritten by each call; conventions of :mod:`avalanche.kernels`: the force, and the
drift, point along +z; energies in eV, positions in m):

* ``crossings[r, j]``: net crossings of plane j (z_j = j Δz): +1 for each crossing towards +z, −1 towards −z.
  For a flight from z_a to z_b this is H(z_b − z_j) − H(z_a − z_j), H(x) = [x ≥ 0], whatever the flight does in
  between: a flight that dips below a plane and climbs back crosses it twice, with opposite signs and the same
  speed, and the two crossings cancel in both tallies.
* ``energy_flux[r, j]``: the same sum weighted by the kinetic energy at the crossing, ε(z_j) = ε_a + E (z_j − z_a)
  (energy conservation in the uniform field, E in V/m gives eV per m).
* ``ionizations[r, i]``, ``attachments[r, i]``: real ionization and attachment collisions in slab
  i = [z_i, z_{i+1}).
* ``path[r, i]``: the signed z-path length travelled inside slab i, Σ over flights of clip(z_b) − clip(z_a) with
  clip to the slab (exact for any continuous path); its expectation is ∫_slab Γ(z) dz, Γ the net flux, so
  ionizations / path is the local ionization coefficient per unit flux and length.

References
----------
Skullerud H R (1968) J. Phys. D 1 1567 (null collisions). Tagashira H, Sakai Y & Sakamoto S (1977) J. Phys. D 10
1051 (steady-state Townsend Monte Carlo and the relation of its coefficients to time-of-flight ones; from memory).
"""

from __future__ import annotations

import math

from numba import prange

from .collisions import (
    ACTION_ATTACHMENT,
    ACTION_ELASTIC,
    ACTION_EXCITATION,
    ACTION_IONIZATION,
    CHILD_NONE,
    CHILD_PENNING,
    ENERGY_PER_SPEED2_eV,
    collide,
    next_uniform,
    trial_event,
)
from .jit import jit, jit_parallel

# Columns of the per-replica integer counters of one pass.
COUNT_EVENTS = 0          # trial events (real and null)
COUNT_REAL = 1            # real collisions
COUNT_CREATED = 2         # electrons created (ionization, Penning transfer)
COUNT_ATTACHED = 3        # electrons removed by attachment
COUNT_ABSORBED = 4        # electrons absorbed by the electrode (returned to z = 0)
COUNT_BANKED = 5          # electrons that reached the forward plane
COUNT_ABOVE_BOUND = 6     # interpolated collision frequency above the trial frequency (must stay 0)
COUNT_ABOVE_GRID = 7      # 1 if an electron left the energy grid: the pass must be redone on a larger grid
COUNT_OVERFLOW = 8        # 1 if the store or the bank was full: the pass must be redone with larger arrays
COUNT_UNKNOWN_ACTION = 9  # 1 if a process has an action code this kernel does not handle (pass aborted)
N_COUNTS = 10


@jit
def first_plane_above(position_m, spacing_m):
    """The smallest index j ≥ 0 with j Δz > ``position_m`` (planes at j ``spacing_m``), exact in floating point."""
    j = int(math.floor(position_m / spacing_m)) + 1
    if j < 0:
        j = 0
    while j > 0 and (j - 1) * spacing_m > position_m:
        j -= 1
    while j * spacing_m <= position_m:
        j += 1
    return j


@jit
def tally_flight(r, z_a, z_b, energy_a_eV, field_V_m, spacing_m, crossings, energy_flux, path):
    """Add the net crossings, energy-weighted crossings and slab path lengths of one flight from z_a to z_b [m].

    Planes z_j = j ``spacing_m`` with z_a < z_j ≤ z_b count +1, with z_b < z_j ≤ z_a count −1 (H(x) = [x ≥ 0]);
    the kinetic energy at plane j is ``energy_a_eV`` + ``field_V_m`` (z_j − z_a). Slab i gets
    clip(z_b) − clip(z_a), clipped to [z_i, z_{i+1}].
    """
    if z_b == z_a:
        return
    n_planes = crossings.shape[1]
    n_slabs = path.shape[1]
    if z_b > z_a:
        low = z_a
        high = z_b
        sign = 1
    else:
        low = z_b
        high = z_a
        sign = -1
    j1 = first_plane_above(high, spacing_m)
    if j1 > n_planes:
        j1 = n_planes
    for j in range(first_plane_above(low, spacing_m), j1):
        crossings[r, j] += sign
        energy_flux[r, j] += sign * (energy_a_eV + field_V_m * (j * spacing_m - z_a))
    i0 = int(math.floor(low / spacing_m)) - 1
    if i0 < 0:
        i0 = 0
    i1 = int(math.floor(high / spacing_m)) + 1
    if i1 > n_slabs - 1:
        i1 = n_slabs - 1
    for i in range(i0, i1 + 1):
        lower = i * spacing_m
        upper = (i + 1) * spacing_m
        path[r, i] += min(max(z_b, lower), upper) - min(max(z_a, lower), upper)


@jit
def absorption_time(z_m, vz, accel):
    """Time [s] until an electron at height ``z_m`` > 0 with velocity ``vz`` reaches z = 0 under the constant
    acceleration ``accel`` > 0 along +z; infinite if it never does. The descending root of
    z + v t + a t²/2 = 0 in the cancellation-free form 2z / (−v + √(v² − 2 a z))."""
    if vz >= 0.0:
        return math.inf
    disc = vz * vz - 2.0 * accel * z_m
    if disc < 0.0:
        return math.inf
    return 2.0 * z_m / (-vz + math.sqrt(disc))


@jit
def _pass_replica(r, z, vx, vy, vz, count, bank_vx, bank_vy, bank_vz, bank_count, rng, z_next, spacing_m,
                  accel, field_V_m, inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV,
                  electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV,
                  crossings, energy_flux, ionizations, attachments, path, counts, process_counts, extrapolated,
                  max_energy, penning_probability, penning_energy_eV, penning_slot, thermal_groups):
    s0 = rng[r, 0]
    s1 = rng[r, 1]
    s2 = rng[r, 2]
    s3 = rng[r, 3]
    capacity = z.shape[1]
    bank_capacity = bank_vx.shape[1]
    n_proc = action.shape[0]
    n_slabs = path.shape[1]
    for j in range(crossings.shape[1]):
        crossings[r, j] = 0
        energy_flux[r, j] = 0.0
    for i in range(n_slabs):
        ionizations[r, i] = 0
        attachments[r, i] = 0
        path[r, i] = 0.0
    for k in range(n_proc):
        process_counts[r, k] = 0
        extrapolated[r, k] = 0
    for c in range(N_COUNTS):
        counts[r, c] = 0
    inv_nu_star = 1.0 / nu_star
    thermal = thermal_groups[0].shape[0] > 0  # T > 0: collisions sampled at the relative speed (thermal_trial)
    action_args = (loss_eV, electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV,
                   penning_probability, penning_energy_eV)
    top_energy = 0.0
    status = 0  # 0 fine, 1 above the energy grid, 2 store or bank full, 3 unknown action code
    n = count[r]
    banked = 0
    i = 0
    while i < n and status == 0:
        pz = z[r, i]
        ux = vx[r, i]
        uy = vy[r, i]
        uz = vz[r, i]
        vperp2 = ux * ux + uy * uy
        while True:
            u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            tau = -math.log(1.0 - u) * inv_nu_star
            energy_a = ENERGY_PER_SPEED2_eV * (vperp2 + uz * uz)
            if absorption_time(pz, uz, accel) <= tau:
                tally_flight(r, pz, -spacing_m, energy_a, field_V_m, spacing_m, crossings, energy_flux, path)
                counts[r, COUNT_ABSORBED] += 1
                break
            z_b = pz + uz * tau + 0.5 * accel * tau * tau
            if z_b >= z_next:
                tally_flight(r, pz, z_next, energy_a, field_V_m, spacing_m, crossings, energy_flux, path)
                if banked >= bank_capacity:
                    status = 2
                    break
                bank_vx[r, banked] = ux
                bank_vy[r, banked] = uy
                bank_vz[r, banked] = math.sqrt(uz * uz + 2.0 * accel * (z_next - pz))
                banked += 1
                break
            tally_flight(r, pz, z_b, energy_a, field_V_m, spacing_m, crossings, energy_flux, path)
            pz = z_b
            uz += accel * tau
            energy = ENERGY_PER_SPEED2_eV * (vperp2 + uz * uz)
            if energy > top_energy:
                top_energy = energy
            e_cell = energy * inv_cell_eV
            if e_cell >= n_cells:
                status = 1
                break
            counts[r, COUNT_EVENTS] += 1
            u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            level = u * nu_star
            # T > 0: a Maxwellian target drawn for this event, frequencies at the relative energy (trial_event)
            k, tx, ty, tz, collision_energy, above, s0, s1, s2, s3 = trial_event(
                level, energy, e_cell, ux, uy, uz, inv_cell_eV, nu_star, nu_total, nu_cumulative, thermal_groups, 0,
                s0, s1, s2, s3)
            counts[r, COUNT_ABOVE_BOUND] += above
            if k < 0:
                continue  # null collision
            if collision_energy < loss_eV[k]:
                continue  # below the threshold inside its grid cell: rejected like a null event
            counts[r, COUNT_REAL] += 1
            process_counts[r, k] += 1
            if collision_energy > table_max_eV[k]:
                extrapolated[r, k] += 1
            slab = int(math.floor(pz / spacing_m))
            kind = action[k]
            if kind == ACTION_ATTACHMENT:
                counts[r, COUNT_ATTACHED] += 1
                if 0 <= slab < n_slabs:
                    attachments[r, slab] += 1
                break
            if kind != ACTION_ELASTIC and kind != ACTION_EXCITATION and kind != ACTION_IONIZATION:
                status = 3
                break
            ux, uy, uz, child, wx, wy, wz, s0, s1, s2, s3 = collide(kind, k, ux, uy, uz, tx, ty, tz, collision_energy,
                                                                   thermal, action_args, s0, s1, s2, s3)
            if child != CHILD_NONE:
                if n >= capacity:
                    status = 2
                    break
                z[r, n] = pz
                vx[r, n] = wx
                vy[r, n] = wy
                vz[r, n] = wz
                n += 1
                counts[r, COUNT_CREATED] += 1
                if child == CHILD_PENNING:
                    process_counts[r, penning_slot[k]] += 1
                if 0 <= slab < n_slabs:
                    ionizations[r, slab] += 1
            vperp2 = ux * ux + uy * uy
        i += 1
    bank_count[r] = banked
    counts[r, COUNT_BANKED] = banked
    counts[r, COUNT_ABOVE_GRID] = 1 if status == 1 else 0
    counts[r, COUNT_OVERFLOW] = 1 if status == 2 else 0
    counts[r, COUNT_UNKNOWN_ACTION] = 1 if status == 3 else 0
    max_energy[r] = top_energy
    rng[r, 0] = s0
    rng[r, 1] = s1
    rng[r, 2] = s2
    rng[r, 3] = s3


@jit_parallel
def advance_pass(z, vx, vy, vz, count, bank_vx, bank_vy, bank_vz, bank_count, rng, z_next, spacing_m, accel,
                 field_V_m, inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV,
                 electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV,
                 crossings, energy_flux, ionizations, attachments, path, counts, process_counts, extrapolated,
                 max_energy, penning_probability, penning_energy_eV, penning_slot, thermal_groups):
    """Follow every replica's electrons until each is banked at ``z_next``, absorbed at z = 0 or attached.

    Each replica is a serial simulation with its own xoshiro256** state (results do not depend on the number of
    threads). Secondaries are appended to the replica's store and followed in the same pass.

    Parameters
    ----------
    z, vx, vy, vz : ndarray, shape (R, capacity)
        Start heights [m] (0 ≤ z ≤ z_next) and velocities [m/s] of the electrons; the first ``count[r]`` entries
        of row r are live. Secondaries are written after them (work space).
    count : ndarray of int64, shape (R,)
        Electrons per replica at the start.
    bank_vx, bank_vy, bank_vz : ndarray, shape (R, bank_capacity)
        Out: velocities [m/s] at ``z_next`` of the electrons that reached it (v_z > 0).
    bank_count : ndarray of int64, shape (R,)
        Out: how many reached ``z_next``.
    rng : ndarray of uint64, shape (R, 4)
        xoshiro256** states, advanced in place.
    z_next : float
        The pass's forward plane [m].
    spacing_m : float
        Tally plane spacing Δz [m]: planes at j Δz, j = 0 … J (J + 1 = ``crossings.shape[1]``), slabs between.
    accel, field_V_m : float
        e E / m [m s⁻²] and E [V/m] (the force points along +z).
    inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative :
        The energy grid and trial frequency, as for :func:`avalanche.kernels.advance_chunk`.
    action, loss_eV, electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV :
        Per-process tables, as for :func:`avalanche.kernels.advance_chunk`.
    crossings, energy_flux : ndarray, shape (R, J + 1)
        Out: net crossings (int64) and energy-weighted net crossings [eV] per plane.
    ionizations, attachments, path : ndarray, shape (R, J)
        Out: ionizations and attachments (int64) and signed path length [m] per slab.
    counts : ndarray of int64, shape (R, N_COUNTS)
        Out: counters (see the COUNT_* columns).
    process_counts, extrapolated : ndarray of int64, shape (R, P)
        Out: real collisions per process, and those beyond the process's table.
    max_energy : ndarray, shape (R,)
        Out: the largest energy met at a trial event [eV].
    penning_probability, penning_energy_eV, penning_slot : ndarray, shape (P,)
        Penning transfer per process, as for :func:`avalanche.kernels.advance_chunk`.
    thermal_groups : tuple of ndarray
        The target groups of a gas at T > 0 (empty arrays for a cold gas), as for
        :func:`avalanche.kernels.advance_chunk`.
    """
    for r in prange(z.shape[0]):
        _pass_replica(r, z, vx, vy, vz, count, bank_vx, bank_vy, bank_vz, bank_count, rng, z_next, spacing_m,
                      accel, field_V_m, inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV,
                      electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV,
                      crossings, energy_flux, ionizations, attachments, path, counts, process_counts,
                      extrapolated, max_energy, penning_probability, penning_energy_eV, penning_slot, thermal_groups)
