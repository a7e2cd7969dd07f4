"""Numba kernels of the null-collision Monte Carlo: random numbers, collision kinematics and the tally layout.

Everything here works on plain float64/int64/uint64 arrays and scalars, writes into preallocated outputs and never
raises: anomalies (an electron above the energy grid, a full particle store, a collision frequency above the trial
frequency) are counted in an output array that Python checks after each chunk. The jit options come from
:mod:`avalanche.kernels.jit` (one place for every kernel), the free flight in uniform, sinusoidal and tabulated
fields from :mod:`avalanche.kernels.flight` and the time-of-flight chunk from
:mod:`avalanche.kernels.time_of_flight`; every function is a plain Python function underneath,
so the same source runs with ``NUMBA_DISABLE_JIT=1`` (slowly) in a test.

Conventions
-----------
The electric field points along −z, so the electric force on an electron, and its drift, point along +z: the
acceleration passed to the kernels is ``e E / m`` along +z and every reported drift velocity is positive.
Velocities are in m s⁻¹, positions in m, times in s, energies in eV.

Random numbers come from xoshiro256** (Blackman & Vigna 2021, ACM Trans. Math. Softw. 47 36), one generator per
replica, held in four local uint64 scalars inside the loop (state in and out through a ``(R, 4)`` array).

References
----------
Skullerud H R (1968) J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423 (null-collision method).
Okhrimovskyy A, Bogaerts A & Gijbels R (2002) Phys. Rev. E 65 037402, doi:10.1103/PhysRevE.65.037402
(screened-Coulomb angular distribution, their eq. (9) for cos χ and eq. (11) for σ_m/σ_T; from memory).
Opal C B, Peterson W K & Beaty E C (1971) J. Chem. Phys. 55 4100, doi:10.1063/1.1676707 (secondary energies).
"""

from __future__ import annotations

import math

import numpy as np

from ..constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg
from .jit import jit

ENERGY_PER_SPEED2_eV = 0.5 * ELECTRON_MASS_kg / ELEMENTARY_CHARGE_C
"""ε [eV] = ENERGY_PER_SPEED2_eV · v² [m² s⁻²]."""
TWO_PI = 2.0 * math.pi
UNIT_53 = 1.0 / 9007199254740992.0  # 2**-53

# Process action codes (the kernel's process table is generic: a new action is a new code here).
ACTION_ELASTIC = 0
ACTION_EXCITATION = 1
ACTION_IONIZATION = 2
ACTION_ATTACHMENT = 3
ACTION_PENNING = 4      # a pseudo-process row with zero frequency (never selected): its count slot tallies Penning
# Angular distributions.
SCATTER_ISOTROPIC = 0
SCATTER_SCREENED_COULOMB = 1
# Energy sharing rules of ionization.
SHARING_EQUAL = 0
SHARING_UNIFORM = 1
SHARING_OPB = 2

# Columns of the per-replica float tallies of one chunk (sums over trial events, each weighted by ν*/ν*(t), unless
# noted; the weight is 1 for a constant trial frequency).
SUM_ENERGY = 0          # Σ ε [eV]
SUM_VZ = 1              # Σ v_z [m/s]
SUM_ZVZ = 2             # Σ (z − z_ref) v_z [m²/s]
SUM_Z = 3               # Σ (z − z_ref) [m]
SUM_XYV = 4             # Σ (x − x_ref) v_x + (y − y_ref) v_y [m²/s]
SUM_EXPOSURE = 5        # ∫ n dt over the chunk [s] (electron-seconds, unweighted)
SUM_MAX_ENERGY = 6      # largest energy met at an event or a chunk end [eV] (a maximum, not a sum)
# Magnetic field only (left 0 without one): the other velocity components and the full position–velocity moments.
SUM_VX = 7              # Σ v_x [m/s]
SUM_VY = 8              # Σ v_y [m/s]
SUM_X = 9               # Σ (x − x_ref) [m]          (this and the following: position tallies only)
SUM_Y = 10              # Σ (y − y_ref) [m]
SUM_XVX = 11            # Σ (x − x_ref) v_x [m²/s]
SUM_XVY = 12            # Σ (x − x_ref) v_y [m²/s]
SUM_XVZ = 13            # Σ (x − x_ref) v_z [m²/s]
SUM_YVX = 14            # Σ (y − y_ref) v_x [m²/s]
SUM_YVY = 15            # Σ (y − y_ref) v_y [m²/s]
SUM_YVZ = 16            # Σ (y − y_ref) v_z [m²/s]
SUM_ZVX = 17            # Σ (z − z_ref) v_x [m²/s]
SUM_ZVY = 18            # Σ (z − z_ref) v_y [m²/s]
SUM_WEIGHTS = 19        # Σ ν*/ν*(t) over trial events (their count for a constant trial frequency) [1]
N_SUMS = 20
SUM_VELOCITY = (SUM_VX, SUM_VY, SUM_VZ)
"""Columns of Σ (v_x, v_y, v_z)."""
SUM_POSITION = (SUM_X, SUM_Y, SUM_Z)
"""Columns of Σ (x, y, z) − r_ref."""
SUM_POSITION_VELOCITY = ((SUM_XVX, SUM_XVY, SUM_XVZ), (SUM_YVX, SUM_YVY, SUM_YVZ), (SUM_ZVX, SUM_ZVY, SUM_ZVZ))
"""Columns of Σ (r_i − r_ref,i) v_j, row i, column j (x, y, z)."""
# Columns of the per-replica integer counters of one chunk.
COUNT_EVENTS = 0        # trial events (real and null)
COUNT_REAL = 1          # real collisions
COUNT_CREATED = 2       # electrons created (ionization, Penning transfer)
COUNT_REMOVED = 3       # electrons removed (attachment)
COUNT_EEDF_OVERFLOW = 4  # trial events above the last histogram bin
COUNT_ABOVE_BOUND = 5   # interpolated collision frequency above the trial frequency (must stay 0)
COUNT_ABOVE_GRID = 6    # 1 if an electron left the energy grid: the chunk must be redone on a larger grid
COUNT_OVERFLOW = 7      # 1 if the particle store was full: the chunk must be redone with a larger store
N_COUNTS = 8
# AC: columns of the per-replica, per-phase-bin tallies (``phase_sums`` (R, B_φ, N_PHASE_SUMS) and
# ``phase_counts`` (R, B_φ, N_PHASE_COUNTS)); real collisions per bin and process go to ``phase_process``.
PHASE_ENERGY = 0        # Σ ε at trial events in the bin [eV]
PHASE_VZ = 1            # Σ v_z [m/s]
PHASE_EXPOSURE = 2      # ∫ n dt inside the bin [s], estimated as (trial events in the bin) / ν* (advance_chunk)
PHASE_POWER = 3         # Σ a(t) v_z [m² s⁻³] (× m/e: power per electron from the field [eV/s])
N_PHASE_SUMS = 4
PHASE_EVENTS = 0        # trial events in the bin
PHASE_CREATED = 1       # electrons created (ionization, Penning transfer)
PHASE_REMOVED = 2       # electrons removed (attachment)
N_PHASE_COUNTS = 3


# ------------------------------------------------------------------------------------------- random numbers

@jit
def _rotl(x, k):
    return (x << np.uint64(k)) | (x >> np.uint64(64 - k))


@jit
def next_uniform(s0, s1, s2, s3):
    """One xoshiro256** step: a uniform double in [0, 1) from the top 53 bits, and the new state."""
    result = _rotl(s1 * np.uint64(5), 7) * np.uint64(9)
    t = s1 << np.uint64(17)
    s2 ^= s0
    s3 ^= s1
    s1 ^= s2
    s0 ^= s3
    s2 ^= t
    s3 = _rotl(s3, 45)
    return (result >> np.uint64(11)) * UNIT_53, s0, s1, s2, s3


# Free flight (uniform, sine and tabulated fields) lives in _flight_kernels; re-exported here.

# ----------------------------------------------------------------------------------- collision kinematics

@jit
def rotate_direction(ux, uy, uz, cos_chi, phi):
    """The unit vector at polar angle χ (``cos_chi``) and azimuth φ [rad] about the unit vector (ux, uy, uz)."""
    sin_chi = math.sqrt(max(0.0, 1.0 - cos_chi * cos_chi))
    cos_phi = math.cos(phi)
    sin_phi = math.sin(phi)
    rho2 = ux * ux + uy * uy
    if rho2 < 1e-20:
        sign = 1.0 if uz >= 0.0 else -1.0
        return sin_chi * cos_phi, sin_chi * sin_phi, sign * cos_chi
    rho = math.sqrt(rho2)
    nx = ux * cos_chi + sin_chi * (ux * uz * cos_phi - uy * sin_phi) / rho
    ny = uy * cos_chi + sin_chi * (uy * uz * cos_phi + ux * sin_phi) / rho
    nz = uz * cos_chi - sin_chi * rho * cos_phi
    return nx, ny, nz


@jit
def scattering_cosine(model, energy_eV, u):
    """cos χ of one scattering event from a uniform number ``u`` in [0, 1).

    Isotropic: cos χ = 1 − 2u. Screened Coulomb (Okhrimovskyy et al. 2002, eq. (9), from memory):
    cos χ = 1 − 2u(1 − ξ)/(1 + ξ(1 − 2u)) with ξ(ε) = 4ε/(1 + 4ε), ε in eV.
    """
    if model == SCATTER_ISOTROPIC:
        return 1.0 - 2.0 * u
    xi = 4.0 * energy_eV / (1.0 + 4.0 * energy_eV)
    return 1.0 - 2.0 * u * (1.0 - xi) / (1.0 + xi * (1.0 - 2.0 * u))


@jit
def new_direction(model, ux, uy, uz, energy_eV, u, phi):
    """Direction after scattering from the unit vector (ux, uy, uz), at ``energy_eV`` [eV].

    Isotropic: uniform on the sphere (cos θ = 1 − 2u, azimuth φ), whatever the incident direction. Screened
    Coulomb: turned by χ from :func:`scattering_cosine` and azimuth φ about the incident direction.
    """
    if model == SCATTER_ISOTROPIC:
        cos_t = 1.0 - 2.0 * u
        sin_t = math.sqrt(max(0.0, 1.0 - cos_t * cos_t))
        return sin_t * math.cos(phi), sin_t * math.sin(phi), cos_t
    return rotate_direction(ux, uy, uz, scattering_cosine(model, energy_eV, u), phi)


@jit
def elastic_velocity(vx, vy, vz, tx, ty, tz, electron_fraction, target_fraction, model, energy_eV, u, phi):
    """Electron velocity after an elastic collision with a target of velocity (tx, ty, tz).

    Exact two-body kinematics: the relative velocity g = v − V turns in the centre-of-mass frame at constant |g|
    (direction from :func:`new_direction`), and v' = V_cm + M/(m + M) g'. ``electron_fraction`` = m/(m + M),
    ``target_fraction`` = M/(m + M). The target's velocity after the collision is V_cm − m/(m + M) g'.
    """
    gx = vx - tx
    gy = vy - ty
    gz = vz - tz
    g = math.sqrt(gx * gx + gy * gy + gz * gz)
    if g == 0.0:
        return vx, vy, vz
    nx, ny, nz = new_direction(model, gx / g, gy / g, gz / g, energy_eV, u, phi)
    scale = target_fraction * g
    return (electron_fraction * vx + target_fraction * tx + scale * nx,
            electron_fraction * vy + target_fraction * ty + scale * ny,
            electron_fraction * vz + target_fraction * tz + scale * nz)


@jit
def turned_velocity(vx, vy, vz, speed, model, energy_eV, u, phi):
    """A velocity of magnitude ``speed`` [m/s] scattered from the direction of (vx, vy, vz) at ``energy_eV``.

    Used for inelastic collisions in the laboratory frame with the target at rest (recoil neglected: an error of
    order m/M in the energy, common practice).
    """
    v = math.sqrt(vx * vx + vy * vy + vz * vz)
    if v == 0.0:
        nx, ny, nz = new_direction(model, 0.0, 0.0, 1.0, energy_eV, u, phi)
    else:
        nx, ny, nz = new_direction(model, vx / v, vy / v, vz / v, energy_eV, u, phi)
    return speed * nx, speed * ny, speed * nz


@jit
def secondary_energy_eV(excess_eV, rule, w_eV, u):
    """Energy [eV] of the ejected electron when ``excess_eV`` = ε − I is shared; the primary keeps the rest.

    equal: half each. uniform: every split equally likely. Opal–Peterson–Beaty (1971): the slower electron's
    energy ε_s ∈ [0, excess/2] with density ∝ 1/(1 + (ε_s/w)²), sampled as ε_s = w tan(u atan(excess/(2w))).
    """
    if rule == SHARING_EQUAL:
        return 0.5 * excess_eV
    if rule == SHARING_UNIFORM:
        return u * excess_eV
    return w_eV * math.tan(u * math.atan(0.5 * excess_eV / w_eV))


@jit
def speed_from_energy(energy_eV):
    """Electron speed [m/s] of kinetic energy ``energy_eV`` [eV]."""
    return math.sqrt(energy_eV / ENERGY_PER_SPEED2_eV)


@jit
def normal_pair(s0, s1, s2, s3):
    """Two independent standard normal numbers (Marsaglia & Bray 1964, SIAM Rev. 6 260, polar method), and the new
    generator state."""
    while True:
        a, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
        b, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
        x = 2.0 * a - 1.0
        y = 2.0 * b - 1.0
        r2 = x * x + y * y
        if 0.0 < r2 < 1.0:
            scale = math.sqrt(-2.0 * math.log(r2) / r2)
            return x * scale, y * scale, s0, s1, s2, s3


@jit
def target_velocity(thermal_speed, s0, s1, s2, s3):
    """A target velocity from the Maxwellian of thermal speed √(kT/M) (three normal components from two polar
    pairs, :func:`normal_pair`), and the new generator state."""
    n1, n2, s0, s1, s2, s3 = normal_pair(s0, s1, s2, s3)
    n3, _, s0, s1, s2, s3 = normal_pair(s0, s1, s2, s3)
    return thermal_speed * n1, thermal_speed * n2, thermal_speed * n3, s0, s1, s2, s3


@jit
def select_process_between(level, c, f, nu_cumulative, first, last):
    """Index k in [first, last) of the first process whose cumulative frequency, interpolated at grid cell c,
    fraction f, lies above ``level`` [s⁻¹]; ``last`` − 1 when ``level`` lies above all the others."""
    k = first
    while k < last - 1:
        low = nu_cumulative[c, k]
        if level < low + f * (nu_cumulative[c + 1, k] - low):
            break
        k += 1
    return k


@jit
def select_process(level, c, f, nu_cumulative, n_proc):
    """Index of the process whose cumulative-frequency interval holds ``level`` [s⁻¹] at grid cell c, fraction f
    (linear interpolation inside the cell); the last process when ``level`` lies above all but it."""
    return select_process_between(level, c, f, nu_cumulative, 0, n_proc)


@jit
def thermal_trial(level, ux, uy, uz, electron_cell, inv_cell_eV, nu_cumulative, thermal_groups, interval,
                  s0, s1, s2, s3):
    """One trial event of an electron of velocity (ux, uy, uz) [m/s] in a gas of Maxwellian targets.

    The trial frequency is split into one band per target group (the processes of one species, rows
    ``first[s]`` … ``last[s]`` − 1 of the tables): ν* = Σ_s ν*_s, with ν*_s ≥ N_s σ_s(g) g for every relative
    speed g the electron grid and the thermal spread allow (:class:`avalanche.engine.tables.EnergyGrid`). The
    level u ν* picks the band s (probability ν*_s/ν*); a target velocity V is drawn from the Maxwellian of group
    s (:func:`target_velocity`), g = |v − V|, and the event is a real collision with group s when the level's
    position inside the band lies below ν_s(ε_rel) = Σ_{k∈s} N_k σ_k(g) g, the tables read at the relative
    energy ε_rel = ½ m_e g² (σ as a function of the relative speed, the tables' own convention for a target at
    rest); the process is selected at the same ε_rel. Each band is an independent thinned Poisson process of
    rate ν*_s, so the real collisions with species s have the exact rate N_s ⟨σ_s(g) g⟩ over the Maxwellian, and
    the partner's velocity has the collision-weighted density f_s(V) σ_k(g) g, used unchanged in the
    kinematics (:func:`scatter_moving_target`). Before V is drawn, a level above the group's local bound (the
    largest ν_s over the relative energies reachable from the electron's grid cell) is a null event at once: most
    null events then cost what they cost in a cold gas.

    Parameters
    ----------
    level : float
        u ν* [s⁻¹], u uniform in [0, 1).
    ux, uy, uz : float
        Electron velocity [m/s].
    electron_cell : int
        Grid cell of the electron's energy, int(ε / Δε) < n_cells.
    inv_cell_eV : float
        1 / node spacing of the tables [eV⁻¹].
    nu_cumulative : ndarray, shape (n_nodes, P)
        Cumulative process frequencies at the nodes [s⁻¹] (extended above the electron grid by the thermal
        margin).
    thermal_groups : tuple of ndarray
        (upper, first, last, thermal_speed, local): ``upper`` (J, S), per trial-frequency interval (see
        :func:`avalanche.kernels.advance_chunk`; J = 1 for a constant trial frequency) the cumulative band edges
        Σ_{j≤s} ν*_j [s⁻¹] (the last is that interval's ν*); of shape (S,) the first and one-past-last process row
        of each group and its thermal speed √(kT/M) [m/s]; ``local`` (n_cells, S): per electron cell the bound of
        ν_s over the reachable relative energies [s⁻¹] (≤ the band of every interval holding the cell).
    interval : int
        Row of ``upper`` in force (the electron's trial-frequency interval; 0 for a constant trial frequency).
    s0, s1, s2, s3 : uint64
        Generator state.

    Returns
    -------
    k, tx, ty, tz, energy_rel_eV, above, s0, s1, s2, s3
        The selected process (−1 for a null event), the target velocity [m/s] (zero for a null event decided
        before it was drawn), ε_rel [eV], 1 if the frequency exceeded its local bound or ε_rel left the tables (an
        anomaly; the last node is then used), else 0, and the generator state.

    References
    ----------
    Skullerud H R (1968) J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423 (null collisions with the trial
    frequency bounding N σ(g) g over the relative speed of thermal targets). Lin S L & Bardsley J N (1977)
    J. Chem. Phys. 66 435, doi:10.1063/1.433988 (target velocity sampled from the gas Maxwellian at each trial
    event; from memory). Lewis P A W & Shedler G S (1979) Nav. Res. Logist. Q. 26 403 (superposition and thinning
    of Poisson processes; from memory).
    """
    edges, group_first, group_last, group_thermal_speed, local = thermal_groups
    upper = edges[interval]
    s = 0
    while s < upper.shape[0] - 1 and level >= upper[s]:
        s += 1
    below = upper[s - 1] if s > 0 else 0.0
    inside = level - below
    bound = local[electron_cell, s]
    if inside >= bound:
        return -1, 0.0, 0.0, 0.0, 0.0, 0, s0, s1, s2, s3
    tx, ty, tz, s0, s1, s2, s3 = target_velocity(group_thermal_speed[s], s0, s1, s2, s3)
    gx = ux - tx
    gy = uy - ty
    gz = uz - tz
    energy_rel = ENERGY_PER_SPEED2_eV * (gx * gx + gy * gy + gz * gz)
    above = 0
    e_cell = energy_rel * inv_cell_eV
    last_cell = nu_cumulative.shape[0] - 2
    if e_cell < last_cell + 1:
        c = int(e_cell)
        f = e_cell - c
    else:
        above = 1
        c = last_cell
        f = 1.0
    first = group_first[s]
    last = group_last[s]
    base = 0.0
    if first > 0:
        low = nu_cumulative[c, first - 1]
        base = low + f * (nu_cumulative[c + 1, first - 1] - low)
    low = nu_cumulative[c, last - 1]
    nu = low + f * (nu_cumulative[c + 1, last - 1] - low) - base
    if nu > bound:
        above = 1
    if inside >= nu:
        return -1, tx, ty, tz, energy_rel, above, s0, s1, s2, s3
    k = select_process_between(base + inside, c, f, nu_cumulative, first, last)
    return k, tx, ty, tz, energy_rel, above, s0, s1, s2, s3


@jit
def ionization_velocities(ux, uy, uz, energy_eV, loss_eV, sharing, w_eV, scatter, u, phi, s0, s1, s2, s3):
    """Velocities of the scattered and of the ejected electron of an ionization at ``energy_eV`` [eV] (the excess
    ε − I shared by :func:`secondary_energy_eV`), and the new generator state."""
    excess = energy_eV - loss_eV
    a1, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    a2, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    a3, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    ejected = secondary_energy_eV(excess, sharing, w_eV, a1)
    kept = excess - ejected
    wx, wy, wz = turned_velocity(ux, uy, uz, speed_from_energy(ejected), scatter, ejected, a2, TWO_PI * a3)
    ux, uy, uz = turned_velocity(ux, uy, uz, speed_from_energy(kept), scatter, kept, u, phi)
    return ux, uy, uz, wx, wy, wz, s0, s1, s2, s3


@jit
def penning_velocity(energy_eV, s0, s1, s2, s3):
    """Velocity of the electron a Penning transfer creates: energy ε_level − I_B [eV], isotropic direction."""
    a2, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    a3, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    speed = speed_from_energy(energy_eV)
    wx, wy, wz = new_direction(SCATTER_ISOTROPIC, 0.0, 0.0, 1.0, 0.0, a2, TWO_PI * a3)
    return speed * wx, speed * wy, speed * wz, s0, s1, s2, s3


CHILD_NONE = 0
CHILD_IONIZATION = 1
CHILD_PENNING = 2


@jit
def scatter_electron(kind, k, ux, uy, uz, energy_eV, action_args, s0, s1, s2, s3):
    """A real, non-attaching collision with process k and a target at rest: the electron's new velocity and the
    electron it creates.

    ``action_args`` = (loss_eV, electron_fraction, target_fraction, thermal_speed, scatter, sharing, w_eV,
    penning_probability, penning_energy_eV), the per-process tables (``thermal_speed`` is read by
    :func:`thermal_trial`, not here). Elastic: two-body kinematics (:func:`elastic_velocity`); excitation: the
    threshold is lost, then with probability r_k a Penning transfer creates an electron of ε_level − I_B
    (:func:`penning_velocity`); ionization: the excess is shared (:func:`ionization_velocities`). Returns (ux, uy,
    uz, child, wx, wy, wz, s0, s1, s2, s3) with child one of CHILD_NONE, CHILD_IONIZATION, CHILD_PENNING and (wx,
    wy, wz) the created electron's velocity. The caller stores the child (or aborts its chunk when its store is
    full: the chunk is then redone from its saved state). A moving target: :func:`scatter_moving_target`.
    """
    (loss, electron_fraction, target_fraction, _, scatter, sharing, w_eV, penning_probability,
     penning_energy_eV) = action_args
    u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    u_phi, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
    phi = TWO_PI * u_phi
    if kind == ACTION_ELASTIC:
        ux, uy, uz = elastic_velocity(ux, uy, uz, 0.0, 0.0, 0.0, electron_fraction[k], target_fraction[k], scatter[k],
                                      energy_eV, u, phi)
        return ux, uy, uz, CHILD_NONE, 0.0, 0.0, 0.0, s0, s1, s2, s3
    if kind == ACTION_EXCITATION:
        new_energy = energy_eV - loss[k]
        ux, uy, uz = turned_velocity(ux, uy, uz, speed_from_energy(new_energy), scatter[k], new_energy, u, phi)
        # Penning transfer (avalanche.gas.penning): the excited atom ionizes the receiver with probability r_k.
        if penning_probability[k] > 0.0:
            a1, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            if a1 < penning_probability[k]:
                wx, wy, wz, s0, s1, s2, s3 = penning_velocity(penning_energy_eV[k], s0, s1, s2, s3)
                return ux, uy, uz, CHILD_PENNING, wx, wy, wz, s0, s1, s2, s3
        return ux, uy, uz, CHILD_NONE, 0.0, 0.0, 0.0, s0, s1, s2, s3
    ux, uy, uz, wx, wy, wz, s0, s1, s2, s3 = ionization_velocities(
        ux, uy, uz, energy_eV, loss[k], sharing[k], w_eV[k], scatter[k], u, phi, s0, s1, s2, s3)
    return ux, uy, uz, CHILD_IONIZATION, wx, wy, wz, s0, s1, s2, s3


@jit
def scatter_moving_target(kind, k, ux, uy, uz, tx, ty, tz, energy_rel_eV, action_args, s0, s1, s2, s3):
    """:func:`scatter_electron` with a target of velocity (tx, ty, tz) [m/s]: the collision is done in the target's
    rest frame, where the electron moves at g = v − V with the relative energy ``energy_rel_eV`` = ½ m_e g², and the
    velocities of the electron and of an ionization's ejected electron are shifted back by V (Galilean
    invariance). Elastic: the exact two-body result v' = m/(m+M) v + M/(m+M) V + M/(m+M) |g| n̂; inelastic: the
    threshold is lost from the relative energy (the tables' convention for a target at rest). A Penning
    electron, created by a later transfer, keeps its isotropic velocity. Same returns as :func:`scatter_electron`.
    """
    ux, uy, uz, child, wx, wy, wz, s0, s1, s2, s3 = scatter_electron(kind, k, ux - tx, uy - ty, uz - tz,
                                                                    energy_rel_eV, action_args, s0, s1, s2, s3)
    if child == CHILD_IONIZATION:
        wx += tx
        wy += ty
        wz += tz
    return ux + tx, uy + ty, uz + tz, child, wx, wy, wz, s0, s1, s2, s3


@jit
def trial_event(level, energy_eV, e_cell, ux, uy, uz, inv_cell_eV, nu_star, nu_total, nu_cumulative, thermal_groups,
                interval, s0, s1, s2, s3):
    """One trial event of the null-collision method at ``level`` = u ν* [s⁻¹] for an electron of energy
    ``energy_eV`` (grid coordinate ``e_cell`` = ε/Δε < n_cells) and velocity (ux, uy, uz) [m/s]; ``nu_star`` is
    the trial frequency in force and ``interval`` its row of the thermal band edges (0 for a constant one).

    Cold gas (``thermal_groups`` empty): the total frequency interpolated at ε decides real or null and the
    process is selected at ε (Skullerud 1968), targets at rest. Gas at T > 0: :func:`thermal_trial`. Returns
    (k, tx, ty, tz, collision_energy_eV, above, s0, s1, s2, s3): the process (−1 for a null event), the target
    velocity [m/s], the energy the tables were read at [eV] (ε, or the relative energy), 1 if a frequency exceeded
    its bound, and the generator state.
    """
    if thermal_groups[0].shape[0] > 0:
        return thermal_trial(level, ux, uy, uz, int(e_cell), inv_cell_eV, nu_cumulative, thermal_groups, interval,
                             s0, s1, s2, s3)
    c = int(e_cell)
    f = e_cell - c
    low = nu_total[c]
    nu = low + f * (nu_total[c + 1] - low)
    above = 1 if nu > nu_star else 0
    if level >= nu:
        return -1, 0.0, 0.0, 0.0, energy_eV, above, s0, s1, s2, s3
    k = select_process(level, c, f, nu_cumulative, nu_cumulative.shape[1])
    return k, 0.0, 0.0, 0.0, energy_eV, above, s0, s1, s2, s3


@jit
def collide(kind, k, ux, uy, uz, tx, ty, tz, collision_energy_eV, thermal, action_args, s0, s1, s2, s3):
    """A real, non-attaching collision decided by :func:`trial_event`: with the target (tx, ty, tz) at T > 0
    (``thermal``, :func:`scatter_moving_target`), else with a target at rest (:func:`scatter_electron`). Same
    returns as :func:`scatter_electron`."""
    if thermal:
        return scatter_moving_target(kind, k, ux, uy, uz, tx, ty, tz, collision_energy_eV, action_args,
                                     s0, s1, s2, s3)
    return scatter_electron(kind, k, ux, uy, uz, collision_energy_eV, action_args, s0, s1, s2, s3)
