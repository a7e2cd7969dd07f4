"""Numba kernel of the time-of-flight swarm: one chunk of free flights and collisions for every replica.

Conventions and references as in :mod:`avalanche.kernels.collisions`; the free flight comes from
:mod:`avalanche.kernels.flight`.
"""

from __future__ import annotations

import math

import numpy as np
from numba import prange

from .collisions import (
    ACTION_ATTACHMENT,
    CHILD_NONE,
    CHILD_PENNING,
    COUNT_ABOVE_BOUND,
    COUNT_ABOVE_GRID,
    COUNT_CREATED,
    COUNT_EEDF_OVERFLOW,
    COUNT_EVENTS,
    COUNT_OVERFLOW,
    COUNT_REAL,
    COUNT_REMOVED,
    N_PHASE_COUNTS,
    N_PHASE_SUMS,
    PHASE_CREATED,
    PHASE_ENERGY,
    PHASE_EVENTS,
    PHASE_EXPOSURE,
    PHASE_POWER,
    PHASE_REMOVED,
    PHASE_VZ,
    SUM_ENERGY,
    SUM_EXPOSURE,
    SUM_MAX_ENERGY,
    SUM_VX,
    SUM_VY,
    SUM_VZ,
    SUM_WEIGHTS,
    SUM_X,
    SUM_XVX,
    SUM_XVY,
    SUM_XVZ,
    SUM_XYV,
    SUM_Y,
    SUM_YVX,
    SUM_YVY,
    SUM_YVZ,
    SUM_Z,
    SUM_ZVX,
    SUM_ZVY,
    SUM_ZVZ,
    ENERGY_PER_SPEED2_eV,
    collide,
    next_uniform,
    trial_event,
)
from .flight import (
    field_flight,
    field_frame_flight,
    instantaneous_accel,
    interval_exit,
    magnetic_field_flight,
    phase_bin,
    sine_flight,
    table_flight,
)
from .jit import jit, jit_parallel

# ---------------------------------------------------------------------------------------------- one chunk

@jit
def _store(x, y, z, vx, vy, vz, r, i, px, py, pz, ux, uy, uz):
    """Write one electron's position and velocity at slot i of replica r."""
    x[r, i] = px
    y[r, i] = py
    z[r, i] = pz
    vx[r, i] = ux
    vy[r, i] = uy
    vz[r, i] = uz


@jit
def _to_frame(a_x, a_z, bx, bz):
    """(ê₁, b̂) components of a vector with laboratory components (a_x, a_z) (B = |B| (b_x, 0, b_z); ê₂ = ŷ)."""
    return bz * a_x - bx * a_z, bx * a_x + bz * a_z


@jit
def _from_frame(a_1, a_par, bx, bz):
    """Laboratory (x, z) components of a vector with frame components (a₁, a∥): the inverse of :func:`_to_frame`."""
    return bz * a_1 + bx * a_par, bz * a_par - bx * a_1


@jit
def _store_from_frame(x, y, z, vx, vy, vz, r, i, p1, p2, p_par, u1, u2, u_par, bx, bz):
    """:func:`_store` of an electron whose coordinates are in the frame of B."""
    px, pz = _from_frame(p1, p_par, bx, bz)
    ux, uz = _from_frame(u1, u_par, bx, bz)
    _store(x, y, z, vx, vy, vz, r, i, px, p2, pz, ux, u2, uz)


@jit
def _moments_from_frame(m11, m12, m1p, m21, m22, m2p, mp1, mp2, mpp, bx, bz):
    """The moments Σ r_i v_j in the laboratory, R M Rᵀ, from those in the frame (rows, columns ê₁, ê₂, b̂)."""
    # columns first (v_j), then rows (r_i)
    c11, c1p = _from_frame(m11, m1p, bx, bz)
    cp1, cpp = _from_frame(mp1, mpp, bx, bz)
    c21, c2p = _from_frame(m21, m2p, bx, bz)
    xx, zx = _from_frame(c11, cp1, bx, bz)
    xz, zz = _from_frame(c1p, cpp, bx, bz)
    xy, zy = _from_frame(m12, mp2, bx, bz)
    return xx, xy, xz, c21, m22, c2p, zx, zy, zz


@jit
def _interval_rate(speed2, inv_cell_eV, n_cells, cell_interval, trial_rates, nu_star):
    """The trial-frequency interval of an electron of squared speed ``speed2`` [m²/s²] (from its energy cell) and
    that interval's (rate ν*(t) [s⁻¹], 1/ν*(t) [s], weight ν*/ν*(t))."""
    interval = cell_interval[min(int(ENERGY_PER_SPEED2_eV * speed2 * inv_cell_eV), n_cells - 1)]
    rate, inv_rate, weight = _rate_of(interval, trial_rates, nu_star)
    return interval, rate, inv_rate, weight


@jit
def _rate_of(interval, trial_rates, nu_star):
    """Interval ``interval``'s trial frequency ν*(t) [s⁻¹], its inverse [s] and the weight ν*/ν*(t)."""
    rate = trial_rates[interval]
    inv_rate = 1.0 / rate
    return rate, inv_rate, nu_star * inv_rate


@jit
def _advance_replica(r, x, y, z, vx, vy, vz, birth, count, rng, t0, t1, accel_dc, accel_ac, omega, phase,
                     inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV, electron_fraction,
                     target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV, reference,
                     tally_positions, hist_inv_width_eV, sums, counts, hist, process_counts, extrapolated,
                     penning_probability, penning_energy_eV, penning_slot, period_s, wave_time, wave_accel,
                     wave_F, wave_G, phase_sums, phase_counts, phase_process, thermal_groups, magnetic, trial,
                     expected, node_time, below_threshold):
    s0 = rng[r, 0]
    s1 = rng[r, 1]
    s2 = rng[r, 2]
    s3 = rng[r, 3]
    capacity = x.shape[1]
    n_bins = hist.shape[1]
    n_proc = action.shape[0]
    for b in range(n_bins):
        hist[r, b] = 0
    for k in range(n_proc):
        process_counts[r, k] = 0
        extrapolated[r, k] = 0
        below_threshold[r, k, 0] = 0.0
        below_threshold[r, k, 1] = 0.0
    for c in range(node_time.shape[1]):
        node_time[r, c, 0] = 0.0
        node_time[r, c, 1] = 0.0
    # -- trial frequency: constant (one interval) or piecewise constant over energy intervals (DC without B) --
    trial_rates, speed2_edges, cell_interval = trial
    variable = trial_rates.shape[0] > 1
    cell_start, entry_process, entry_threshold_eV = expected
    # -- AC block: phase-resolved tallies (period_s > 0 only) --
    ac = period_s > 0.0
    table = wave_time.shape[0] > 0
    sine = ac and not table
    cos_theta = 1.0
    sin_theta = 0.0
    n_phase = phase_sums.shape[1]
    inv_period = 1.0 / period_s if ac else 0.0
    pb = 0
    # local (contiguous, unaliased) tallies per phase bin, copied to the outputs at the end; empty for DC
    bin_sums = np.zeros((n_phase if ac else 0, N_PHASE_SUMS))
    bin_counts = np.zeros((n_phase if ac else 0, N_PHASE_COUNTS), dtype=np.int64)
    bin_process = np.zeros((n_phase if ac else 0, n_proc), dtype=np.int64)
    # -- end AC block --
    # -- magnetic block: B ≠ 0 only (magnetic = (b_x, b_z, ω_c)); ω_c = 0 takes the field-free flights --
    bx = magnetic[0]
    bz = magnetic[1]
    omega_c = magnetic[2]
    has_b = omega_c > 0.0
    a_par = accel_dc * bz  # the electric acceleration in the frame of B (a₁, 0, a∥), see field_frame_flight
    a_1 = -accel_dc * bx
    # DC with B: every electron lives in the frame (ê₁, ê₂, b̂) of B, its coordinates held in the x, y, z variables
    # (x ← ê₁, y ← ê₂, z ← b̂) from its start to its store; collisions are the same in any frame (isotropic targets
    # and scattering about the incident direction), so no conversion happens per flight, and the sums, taken in the
    # frame, are rotated to the laboratory once, at the end
    frame = has_b and not ac
    sum_vx = 0.0
    sum_vy = 0.0
    sum_x = 0.0
    sum_y = 0.0
    sum_xvx = 0.0
    sum_xvy = 0.0
    sum_xvz = 0.0
    sum_yvx = 0.0
    sum_yvy = 0.0
    sum_yvz = 0.0
    sum_zvx = 0.0
    sum_zvy = 0.0
    # -- end magnetic block --
    x_ref = reference[r, 0]
    y_ref = reference[r, 1]
    z_ref = reference[r, 2]
    if frame:
        x_ref, z_ref = _to_frame(x_ref, z_ref, bx, bz)
    sum_energy = 0.0
    sum_vz = 0.0
    sum_zvz = 0.0
    sum_z = 0.0
    sum_xyv = 0.0
    sum_weights = 0.0
    exposure = 0.0
    max_energy = 0.0
    events = 0
    real = 0
    created = 0
    removed = 0
    eedf_overflow = 0
    above_bound = 0
    status = 0  # 0: fine, 1: above the energy grid, 2: particle store full
    inv_nu_star = 1.0 / nu_star
    rate = nu_star
    inv_rate = inv_nu_star
    weight = 1.0
    interval = 0
    depth = 0.0
    thermal = thermal_groups[0].shape[0] > 0  # T > 0: collisions sampled at the relative speed (thermal_trial)
    action_args = (loss_eV, electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV,
                   penning_probability, penning_energy_eV)
    n = count[r]
    n_initial = n
    write = 0
    i = 0
    while i < n:
        px = x[r, i]
        py = y[r, i]
        pz = z[r, i]
        ux = vx[r, i]
        uy = vy[r, i]
        uz = vz[r, i]
        t = t0 if i < n_initial else birth[r, i]
        if frame:
            px, pz = _to_frame(px, pz, bx, bz)
            ux, uz = _to_frame(ux, uz, bx, bz)
        vperp2 = ux * ux + uy * uy  # v_x² + v_y² changes only in collisions
        alive = True
        if sine:  # AC: cos, sin of the drive's phase at the electron's start, then carried from flight to flight
            cos_theta = math.cos(omega * t + phase)
            sin_theta = math.sin(omega * t + phase)
        if variable:
            interval, rate, inv_rate, weight = _interval_rate(vperp2 + uz * uz, inv_cell_eV, n_cells, cell_interval,
                                                              trial_rates, nu_star)
        draw = True
        while True:
            if draw:  # the flight's optical depth at unit rate: exponential (Poisson trial events)
                u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
                depth = -math.log(1.0 - u)
            draw = True
            tau = depth * inv_rate
            step = 0
            if variable:  # the flight ends early where the electron leaves its interval (no event there)
                t_exit, exit_step = interval_exit(vperp2, uz, accel_dc, speed2_edges[interval],
                                                  speed2_edges[interval + 1])
                if t_exit < tau:
                    tau = t_exit
                    step = exit_step
            last = t + tau >= t1
            if last:
                tau = t1 - t
                step = 0
            if has_b:  # magnetic: exact gyration (AC drives: tangent field over the flight, see the function)
                if ac:
                    ux, uy, uz, dx, dy, dz = magnetic_field_flight(t, tau, ux, uy, uz, accel_dc, accel_ac, omega,
                                                                   phase, period_s, wave_time, wave_accel, bx, bz,
                                                                   omega_c)
                    px += dx
                    py += dy
                    pz += dz
                else:  # DC: the electron's coordinates are those of the frame of B (see ``frame``)
                    uz, ux, uy, r_par, r_1, r_2 = field_frame_flight(tau, uz, ux, uy, a_par, a_1, omega_c)
                    px += r_1
                    py += r_2
                    pz += r_par
                t += tau
                vperp2 = ux * ux + uy * uy
                if sine:
                    cos_theta = math.cos(omega * t + phase)
                    sin_theta = math.sin(omega * t + phase)
            else:
                if sine:
                    dvz, dz, cos_theta, sin_theta = sine_flight(tau, accel_dc, accel_ac, omega, cos_theta,
                                                                sin_theta)
                elif table:  # AC: tabulated waveform
                    dvz, dz = table_flight(t, tau, accel_dc, period_s, wave_time, wave_accel, wave_F, wave_G)
                else:
                    dvz, dz = field_flight(t, tau, accel_dc, accel_ac, omega, phase)
                px += ux * tau
                py += uy * tau
                pz += uz * tau + dz
                uz += dvz
                t += tau
            exposure += tau
            energy = ENERGY_PER_SPEED2_eV * (vperp2 + uz * uz)
            if energy > max_energy:
                max_energy = energy
            e_cell = energy * inv_cell_eV
            if e_cell >= n_cells:
                status = 1
                break
            if last:
                break
            if step != 0:  # the electron reached an interval edge: the rest of the depth at the next rate
                depth = max(depth - rate * tau, 0.0)
                interval += step
                rate, inv_rate, weight = _rate_of(interval, trial_rates, nu_star)
                draw = False
                continue
            # A trial event. Trial events are a Poisson process of rate ν*(t) (the rate in force) in time, so sums
            # of the pre-collision state over them, each weighted by ν*/ν*(t) (1 for a constant trial frequency),
            # are time integrals of the swarm times ν*.
            events += 1
            sum_weights += weight
            sum_energy += energy * weight
            sum_vz += uz * weight
            if tally_positions:
                dzr = pz - z_ref
                sum_zvz += dzr * uz * weight
                sum_z += dzr * weight
                sum_xyv += ((px - x_ref) * ux + (py - y_ref) * uy) * weight
            if has_b:  # magnetic (constant trial frequency): the transverse drift and the full moments
                sum_vx += ux
                sum_vy += uy
                if tally_positions:
                    dxr = px - x_ref
                    dyr = py - y_ref
                    dzr = pz - z_ref
                    sum_x += dxr
                    sum_y += dyr
                    sum_xvx += dxr * ux
                    sum_xvy += dxr * uy
                    sum_xvz += dxr * uz
                    sum_yvx += dyr * ux
                    sum_yvy += dyr * uy
                    sum_yvz += dyr * uz
                    sum_zvx += dzr * ux
                    sum_zvy += dzr * uy
            if ac:  # AC: the event's phase bin
                pb = phase_bin(t, inv_period, n_phase)
                bin_counts[pb, PHASE_EVENTS] += 1
                bin_sums[pb, PHASE_ENERGY] += energy
                bin_sums[pb, PHASE_VZ] += uz
                if sine:
                    bin_sums[pb, PHASE_POWER] += uz * (accel_dc + accel_ac * sin_theta)
                else:
                    bin_sums[pb, PHASE_POWER] += uz * instantaneous_accel(t, accel_dc, accel_ac, omega, phase,
                                                                          period_s, wave_time, wave_accel)
            # expected-value tallies: the event's 1/ν*(t) shared between the two nodes of its cell (linear
            # weights), so Σ_c node_time[c] ν_k(ε_c) = Σ_events ν_k(ε)/ν*(t), the kernel's own interpolation; a
            # threshold's cell also tallies its events below the threshold (collisions there are rejected)
            c = int(e_cell)
            f = e_cell - c
            node_time[r, c, 0] += inv_rate  # one cache line per event: the cell's two sums side by side
            node_time[r, c, 1] += f * inv_rate
            for q in range(cell_start[c], cell_start[c + 1]):
                if energy < entry_threshold_eV[q]:
                    p = entry_process[q]
                    below_threshold[r, p, 0] += (1.0 - f) * inv_rate
                    below_threshold[r, p, 1] += f * inv_rate
            b = int(energy * hist_inv_width_eV)
            if b < n_bins:
                hist[r, b] += weight
            else:
                eedf_overflow += 1
            u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            level = u * rate
            # T > 0: a Maxwellian target drawn for this event, frequencies at the relative energy (trial_event)
            k, tx, ty, tz, collision_energy, above, s0, s1, s2, s3 = trial_event(
                level, energy, e_cell, ux, uy, uz, inv_cell_eV, rate, nu_total, nu_cumulative, thermal_groups,
                interval, s0, s1, s2, s3)
            above_bound += above
            if k < 0:
                continue  # null collision
            if collision_energy < loss_eV[k]:
                continue  # inside the threshold's grid cell but below the threshold: rejected like a null event
            real += 1
            process_counts[r, k] += 1
            if ac:
                bin_process[pb, k] += 1
            if collision_energy > table_max_eV[k]:
                extrapolated[r, k] += 1
            kind = action[k]
            if kind == ACTION_ATTACHMENT:
                alive = False
                removed += 1
                if ac:
                    bin_counts[pb, PHASE_REMOVED] += 1
                break
            ux, uy, uz, child, wx, wy, wz, s0, s1, s2, s3 = collide(kind, k, ux, uy, uz, tx, ty, tz, collision_energy,
                                                                   thermal, action_args, s0, s1, s2, s3)
            if child != CHILD_NONE:
                if n >= capacity:
                    status = 2
                    break
                if frame:
                    _store_from_frame(x, y, z, vx, vy, vz, r, n, px, py, pz, wx, wy, wz, bx, bz)
                else:
                    _store(x, y, z, vx, vy, vz, r, n, px, py, pz, wx, wy, wz)
                birth[r, n] = t
                n += 1
                created += 1
                if child == CHILD_PENNING:
                    process_counts[r, penning_slot[k]] += 1
                if ac:
                    bin_counts[pb, PHASE_CREATED] += 1
                    if child == CHILD_PENNING:
                        bin_process[pb, penning_slot[k]] += 1
            vperp2 = ux * ux + uy * uy
            if variable:
                interval, rate, inv_rate, weight = _interval_rate(vperp2 + uz * uz, inv_cell_eV, n_cells,
                                                                  cell_interval, trial_rates, nu_star)
        if status != 0:
            break
        if alive:
            if frame:
                _store_from_frame(x, y, z, vx, vy, vz, r, write, px, py, pz, ux, uy, uz, bx, bz)
            else:
                _store(x, y, z, vx, vy, vz, r, write, px, py, pz, ux, uy, uz)
            write += 1
        i += 1
    if status == 0:
        count[r] = write
    if ac:  # AC: the exposure of a phase bin from its trial events (see advance_chunk)
        for b in range(n_phase):
            bin_sums[b, PHASE_EXPOSURE] = bin_counts[b, PHASE_EVENTS] * inv_nu_star
            for j in range(N_PHASE_SUMS):
                phase_sums[r, b, j] = bin_sums[b, j]
            for j in range(N_PHASE_COUNTS):
                phase_counts[r, b, j] = bin_counts[b, j]
            for k in range(n_proc):
                phase_process[r, b, k] = bin_process[b, k]
    rng[r, 0] = s0
    rng[r, 1] = s1
    rng[r, 2] = s2
    rng[r, 3] = s3
    if frame:  # the frame sums to the laboratory: vectors turn by R, the moments Σ r_i v_j by R · Rᵀ
        sum_xvx, sum_xvy, sum_xvz, sum_yvx, sum_yvy, sum_yvz, sum_zvx, sum_zvy, sum_zvz = _moments_from_frame(
            sum_xvx, sum_xvy, sum_xvz, sum_yvx, sum_yvy, sum_yvz, sum_zvx, sum_zvy, sum_zvz, bx, bz)
        sum_xyv = sum_xvx + sum_yvy
        sum_vx, sum_vz = _from_frame(sum_vx, sum_vz, bx, bz)
        sum_x, sum_z = _from_frame(sum_x, sum_z, bx, bz)
    sums[r, SUM_ENERGY] = sum_energy
    sums[r, SUM_VZ] = sum_vz
    sums[r, SUM_ZVZ] = sum_zvz
    sums[r, SUM_Z] = sum_z
    sums[r, SUM_XYV] = sum_xyv
    sums[r, SUM_EXPOSURE] = exposure
    sums[r, SUM_MAX_ENERGY] = max_energy
    sums[r, SUM_VX] = sum_vx
    sums[r, SUM_VY] = sum_vy
    sums[r, SUM_X] = sum_x
    sums[r, SUM_Y] = sum_y
    sums[r, SUM_XVX] = sum_xvx
    sums[r, SUM_XVY] = sum_xvy
    sums[r, SUM_XVZ] = sum_xvz
    sums[r, SUM_YVX] = sum_yvx
    sums[r, SUM_YVY] = sum_yvy
    sums[r, SUM_YVZ] = sum_yvz
    sums[r, SUM_ZVX] = sum_zvx
    sums[r, SUM_ZVY] = sum_zvy
    sums[r, SUM_WEIGHTS] = sum_weights
    counts[r, COUNT_EVENTS] = events
    counts[r, COUNT_REAL] = real
    counts[r, COUNT_CREATED] = created
    counts[r, COUNT_REMOVED] = removed
    counts[r, COUNT_EEDF_OVERFLOW] = eedf_overflow
    counts[r, COUNT_ABOVE_BOUND] = above_bound
    counts[r, COUNT_ABOVE_GRID] = 1 if status == 1 else 0
    counts[r, COUNT_OVERFLOW] = 1 if status == 2 else 0


@jit_parallel
def advance_chunk(x, y, z, vx, vy, vz, birth, count, rng, t0, t1, accel_dc, accel_ac, omega, phase,
                  inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV, electron_fraction,
                  target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV, reference,
                  tally_positions, hist_inv_width_eV, sums, counts, hist, process_counts, extrapolated,
                  penning_probability, penning_energy_eV, penning_slot, period_s, wave_time, wave_accel, wave_F,
                  wave_G, phase_sums, phase_counts, phase_process, thermal_groups, magnetic, trial, expected,
                  node_time, below_threshold):
    """Advance every replica's electrons from time ``t0`` to ``t1`` [s] (one chunk), in parallel over replicas.

    Each replica is a serial simulation with its own generator state, so the result does not depend on the
    number of threads. Within a replica the electrons are followed one by one to ``t1``; secondaries are
    appended to the replica's store and followed in the same pass from their birth time; survivors are written
    back compacted, and ``count[r]`` becomes their number.

    Parameters
    ----------
    x, y, z, vx, vy, vz : ndarray, shape (R, capacity)
        Positions [m] and velocities [m/s]; the first ``count[r]`` entries of row r are live. Updated in place.
    birth : ndarray, shape (R, capacity)
        Work space: birth times [s] of the secondaries created in the chunk.
    count : ndarray of int64, shape (R,)
        Live electrons per replica (in: at ``t0``; out: at ``t1``, unless the chunk was aborted).
    rng : ndarray of uint64, shape (R, 4)
        xoshiro256** states, advanced in place.
    t0, t1 : float
        Chunk start and end [s].
    accel_dc, accel_ac, omega, phase : float
        Field as an acceleration e E(t)/m along +z, see :func:`field_flight`.
    inv_cell_eV, n_cells : float, int
        The energy grid: node i is at i / inv_cell_eV [eV], i = 0 … n_cells.
    nu_star : float
        The largest trial collision frequency [s⁻¹] (that of a constant trial frequency, ≥ every value of
        ``nu_total``); the trial-event weights are ν*/ν*(t), see ``trial``.
    nu_total : ndarray, shape (n_nodes,)
        Total collision frequency at the nodes [s⁻¹] (n_nodes = n_cells + 1 for a cold gas).
    nu_cumulative : ndarray, shape (n_nodes, P)
        Cumulative collision frequencies of the P processes at the nodes [s⁻¹].
    action, loss_eV, electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV :
        Per-process tables: action code, energy loss [eV], m/(m+M), M/(m+M), target thermal speed √(kT/M)
        [m/s], angular distribution code, energy sharing code, OPB w [eV], last tabulated energy [eV].
    reference : ndarray, shape (R, 3)
        Reference position (x, y, z) [m] of each replica, subtracted in the position tallies.
    tally_positions : bool
        Whether to accumulate the position tallies (SUM_ZVZ, SUM_Z, SUM_XYV; left 0 otherwise).
    hist_inv_width_eV : float
        1 / width of the energy histogram's bins [eV⁻¹].
    sums, counts, hist, process_counts, extrapolated : ndarray
        Outputs, overwritten: float tallies (R, N_SUMS), counters (R, N_COUNTS), energy histogram (R, B) of trial
        events, real collisions per process (R, P), and those beyond the process's table (R, P).
    penning_probability, penning_energy_eV, penning_slot : ndarray, shape (P,)
        Penning transfer per process (see :mod:`avalanche.gas.penning`): the probability r_k that an excitation of
        process k creates an electron (0 for no transfer), the created electron's energy ε_level − I_B [eV], and
        the column of ``process_counts`` (a pseudo-process with zero frequency) that counts the transfers.
    period_s : float
        AC: the drive period T [s]; 0 for DC (no phase tallies, and the phase arrays are not touched).
    wave_time, wave_accel, wave_F, wave_G : ndarray, shape (M,)
        AC, tabulated waveform: node times in [0, T] (first 0, last T), the acceleration at the nodes (last =
        first) and the impulses F, G at the nodes (see :func:`table_flight`); empty arrays for DC or a sine
        (which uses ``accel_ac``, ``omega``, ``phase``).
    phase_sums, phase_counts, phase_process : ndarray, shapes (R, B_φ, N_PHASE_SUMS), (R, B_φ, N_PHASE_COUNTS),
        (R, B_φ, P)
        AC outputs, overwritten when ``period_s`` > 0: per phase bin of t mod T the columns PHASE_*, and the real
        collisions per process.
    thermal_groups : tuple of ndarray, each of shape (S,)
        Gas temperature T > 0: (band edges [s⁻¹], first row, one-past-last row, thermal speed √(kT/M) [m/s]) of the
        S target groups (species), see :func:`avalanche.kernels.thermal_trial`; each trial event then draws a
        target velocity and reads the tables at the relative energy, which may reach above the electron grid
        (``nu_total``, ``nu_cumulative`` then have more than n_cells + 1 rows). Empty arrays for a cold gas
        (targets at rest, tables read at the electron energy).
    magnetic : ndarray, shape (3,)
        Magnetic field: (b_x, b_z, ω_c), the unit vector (b_x, 0, b_z) of B (in the x–z plane, see
        :mod:`avalanche.engine.magnetic`) and the cyclotron frequency e|B|/m [rad s⁻¹]; ω_c = 0 (no field) runs
        exactly the field-free flights and leaves the columns SUM_VX … SUM_ZVY of ``sums`` at 0. With ω_c > 0
        every flight is :func:`magnetic_field_flight` (exact for a constant electric field) and those columns are
        filled (the position ones only with ``tally_positions``).
    trial : tuple of ndarray
        The trial frequency (rates (J,) [s⁻¹], speed2_edges (J + 1,) [m² s⁻²], cell_interval (n_cells,) int): a
        constant ν* bound of the collision frequency over each of J energy intervals ½ m v², v² in
        [speed2_edges[j], speed2_edges[j + 1]) (first edge 0, last +inf), and the interval of each grid cell.
        J = 1 (rates = [ν*]) is the constant trial frequency of Skullerud (1968). J > 1 is for a DC field without
        B only (the exit time from an interval is solved in closed form for the uniform acceleration, see
        :func:`avalanche.kernels.interval_exit`): a flight that reaches an interval edge stops there without an
        event and continues with the rest of its unit-rate optical depth at the next interval's rate (the
        exponential's memorylessness), so the trial events stay a Poisson process of rate ν*(t), the rate in force,
        and every frequency stays below it (thermal gas: ``thermal_groups[0]`` holds one row of band edges per
        interval). Sums over trial events then carry the weight ν*/ν*(t).
    expected : tuple of ndarray
        Threshold cells for the expected-value tallies: (cell_start (n_cells + 1,), entry_process (Q,),
        entry_threshold_eV (Q,)): entries cell_start[c] … cell_start[c + 1] − 1 are the processes whose threshold
        lies inside cell c, and their thresholds [eV].
    node_time : ndarray, shape (R, n_cells, 2)
        Out: expected-value tallies per cell c: the sums over its trial events of 1/ν*(t) [s] and of f/ν*(t), f the
        event's position in the cell, so that node c gets (1 − f)/ν*(t) and node c + 1 gets f/ν*(t) of every event
        (linear weights) and Σ_nodes ν_k(ε_node) × node share is the sum over trial events of
        ν_k(ε)/ν*(t) interpolated as the kernel interpolates: the expected number of collisions of process k
        (unbiased because the trial events are a Poisson process of rate ν*(t), Skullerud 1968), for every
        process at the cost of one histogram.
    below_threshold : ndarray, shape (R, P, 2)
        Out: per process, the node shares (columns: lower, upper node of the threshold's cell) from
        events inside the cell of its threshold but below it, where the kernel rejects the collision; subtracted
        from the expected-value sums.

    Notes
    -----
    AC: the exposure ∫ n dt of a phase bin is estimated as its trial events divided by ν*. With a constant trial
    frequency the trial events of each electron are a Poisson process of rate ν* in time (Skullerud 1968), so
    the count in a bin has the expectation ν* × the time electrons spent in it: the estimate is unbiased, as the
    sums over trial events that stand for time integrals are, and it costs nothing per flight (an exact split
    of every flight over the bins it crosses would). Its relative noise is 1/√(events in the bin), far below
    that of the real collisions divided by it. The DC exposure ``sums[:, SUM_EXPOSURE]`` stays exact.
    """
    for r in prange(x.shape[0]):
        _advance_replica(r, x, y, z, vx, vy, vz, birth, count, rng, t0, t1, accel_dc, accel_ac, omega, phase,
                         inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, loss_eV,
                         electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV, table_max_eV,
                         reference, tally_positions, hist_inv_width_eV, sums, counts, hist, process_counts,
                         extrapolated, penning_probability, penning_energy_eV, penning_slot, period_s, wave_time,
                         wave_accel, wave_F, wave_G, phase_sums, phase_counts, phase_process, thermal_groups, magnetic,
                         trial, expected, node_time, below_threshold)


@jit
def expected_counts(node_time, below_threshold, nu_nodes, cell_start, entry_process, out):
    """Expected collisions per replica and process from the expected-value tallies of :func:`advance_chunk`.

    out[r, k] = Σ_c [(node_time[r, c, 0] − node_time[r, c, 1]) ν_k(ε_c) + node_time[r, c, 1] ν_k(ε_c+1)]
    − (below_threshold[r, k, 0] ν_k(ε_c_k) + below_threshold[r, k, 1]
    ν_k(ε_c_k+1)), c_k the cell of process k's threshold: Σ over trial events of ν_k(ε)/ν*(t) with the kernel's
    linear interpolation and its rejection below the threshold. ``nu_nodes`` (n_cells + 1, P) [s⁻¹];
    ``cell_start``, ``entry_process`` as the ``expected`` argument of :func:`advance_chunk`; ``out`` (R, P) is
    overwritten. (A loop, not a matrix product: BLAS threads would compete with the kernels' own.)
    """
    n_proc = nu_nodes.shape[1]
    for r in range(node_time.shape[0]):
        for k in range(n_proc):
            out[r, k] = 0.0
        for c in range(node_time.shape[1]):
            upper = node_time[r, c, 1]
            lower = node_time[r, c, 0] - upper
            if node_time[r, c, 0] != 0.0:
                for k in range(n_proc):
                    out[r, k] += lower * nu_nodes[c, k] + upper * nu_nodes[c + 1, k]
        for c in range(cell_start.shape[0] - 1):
            for q in range(cell_start[c], cell_start[c + 1]):
                k = entry_process[q]
                out[r, k] -= below_threshold[r, k, 0] * nu_nodes[c, k] + below_threshold[r, k, 1] * nu_nodes[c + 1, k]

