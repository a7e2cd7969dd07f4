"""Numba kernel of avalanches in electrode gaps: every electron followed in time through a non-uniform field.

One call advances every avalanche (one row per primary electron) from its current time to the slice end
``t_end``: each electron, and every secondary it creates, is followed until it reaches ``t_end`` (it is then kept,
compacted to the front of its row), is absorbed by an electrode or leaves a field map, or is attached. The
collisions are those of the swarm engine: the trial events of the null-collision method (constant trial frequency
ν*, so the flight time does not depend on the path), process selection and kinematics come from
:mod:`avalanche.kernels.collisions`, so every mode shares one physics.

Field and geometry
------------------
``geometry`` = (code, params, field, weight, potential, mask). The applied field is V(t) E₁(x), E₁ the field for
+1 V on the *driven* electrode with the other grounded (analytic closed forms, or a map on a regular grid), and
the electron's acceleration is −(e/m) V(t) E₁(x). The weighting field of the driven electrode (Shockley–Ramo) is
E₁ itself for the analytic geometries, and the map's own weighting arrays for a map. Codes and params:

* PLATES: grounded plane z = 0, driven plane z = d; params (d,).
* COAXIAL: driven wire of radius a along the z axis, grounded tube of radius b; params (a, b).
* SPHERES: driven sphere of radius a, grounded sphere b, centred at the origin; params (a, b).
* POINT_PLANE: grounded plane z = 0 and a driven hyperboloid tip of apex radius R at z = d. In prolate spheroidal
  coordinates with foci (0, 0, ±c), c = √(d(d + R)), η = (r₋ − r₊)/(2c) (r± the distances to the foci) is
  constant on confocal hyperboloids: η = 0 is the plane, η₀ = d/c the tip, and φ = V artanh η / artanh η₀
  solves Laplace's equation (Eyring C F, Mackeown S S & Millikan R A 1928, Phys. Rev. 31 900; Coelho R &
  Debeau J 1971, J. Phys. D 4 1266 — from memory); params (d, R, c, η₀, artanh η₀).
* MAP_RZ (axisymmetric, axes r, z; arrays (·, n_r, n_z, 1), components E_r, E_z) and MAP_XYZ (3D, arrays
  (3, n_x, n_y, n_z)): bilinear / trilinear interpolation; params (origin₀, origin₁, origin₂, spacing₀, spacing₁,
  spacing₂); ``mask`` holds 0 in the gas, 1 in the driven electrode, 2 in a grounded one (nearest node).

Free flight (integrator)
------------------------
Velocity Verlet (kick–drift–kick; Verlet L 1967, Phys. Rev. 159 98): v½ = v + a(x, t) h/2, x' = x + v½ h,
v' = v½ + a(x', t + h) h/2. It is exact for a constant acceleration (the closed-form uniform flight x + v h +
a h²/2, v + a h), time reversible and second order: the local error is O(h³ |v| |a| / L) with L the gradient length
of the field, so the energy error of a flight across the gap scales as κ², κ the step control below. The step
is h = min(remaining flight, h_κ, h_max) with h_κ the time in which |v| h + |a| h²/2 reaches κ L (L: ∞ between
plates, r for the coaxial field, r/2 for the spherical one, half the distance to the tip's focus for the point,
the grid spacing for a map) and h_max a fraction of a drive period for AC. The trial events stay Poisson in time
at rate ν*, so splitting a flight into steps, or stopping it at ``t_end``, changes nothing in the statistics.

Shockley–Ramo
-------------
The current induced on the driven electrode by one electron (charge −e) is I = −e E_w · v = e dφ_w/dt (positive
when the electron moves towards the electrode); the grounded electrode sees −I. Each step adds
−e (E_w(x) + E_w(x'))/2 · (x' − x) (trapezoid rule, second order) to the time bin of its midpoint
(Shockley W 1938, J. Appl. Phys. 9 635, doi:10.1063/1.1710367; Ramo S 1939, Proc. IRE 27 584,
doi:10.1109/JRPROC.1939.228757). Space charge is neglected: the field is the vacuum field of the electrodes.

References
----------
Skullerud H R (1968) J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423 (null-collision method).
"""

from __future__ import annotations

import math

from numba import prange

from ..constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg
from .collisions import (
    ACTION_ATTACHMENT,
    ACTION_ELASTIC,
    ACTION_EXCITATION,
    ACTION_IONIZATION,
    CHILD_NONE,
    CHILD_PENNING,
    ENERGY_PER_SPEED2_eV,
    next_uniform,
    scatter_electron,
    select_process,
)
from .flight import instantaneous_accel
from .jit import jit, jit_parallel

CHARGE_PER_MASS = ELEMENTARY_CHARGE_C / ELECTRON_MASS_kg
"""e/m [C/kg]."""

PLATES = 0
COAXIAL = 1
SPHERES = 2
POINT_PLANE = 3
MAP_RZ = 4
MAP_XYZ = 5

GAS = 0
DRIVEN = 1
GROUNDED = 2
OUTSIDE = 3

# Columns of the per-avalanche integer counters of one slice (overwritten by each call).
COUNT_EVENTS = 0          # trial events (real and null)
COUNT_REAL = 1            # real collisions
COUNT_CREATED = 2         # electrons created (ionization, Penning transfer)
COUNT_ATTACHED = 3        # electrons removed by attachment
COUNT_DRIVEN = 4          # electrons absorbed by the driven electrode
COUNT_GROUNDED = 5        # electrons absorbed by the grounded electrode
COUNT_OUTSIDE = 6         # electrons that left a field map
COUNT_STEPS = 7           # integrator steps
COUNT_ABOVE_BOUND = 8     # interpolated collision frequency above the trial frequency (must stay 0)
COUNT_ABOVE_GRID = 9      # 1 if an electron left the energy grid: the slice must be redone on a larger grid
COUNT_OVERFLOW = 10       # 1 if the electron store was full: the slice must be redone with a larger store
COUNT_UNKNOWN_ACTION = 11  # 1 if a process has an action code this kernel does not handle
N_COUNTS = 12
# Columns of the per-avalanche float sums of one slice (unweighted; overwritten by each call).
SUM_PHI_BIRTH = 0         # Σ φ_w at the birth of created electrons
SUM_PHI_END = 1           # Σ φ_w where electrons were attached or left a map
SUM_MAX_ENERGY = 2        # largest energy met [eV] (a maximum)
N_SUMS = 3
# Entries of ``control``.
CONTROL_T_END = 0         # slice end [s]
CONTROL_KAPPA = 1         # step control κ (displacement per step / gradient length)
CONTROL_MAX_STEP = 2      # h_max [s] (inf for DC)
CONTROL_BIN_WIDTH = 3     # width of the time bins of the current and arrival tallies [s]
CONTROL_RHO_MAX = 4       # maps: largest ρ = √(x² + y²) [m]
CONTROL_Z_MIN = 5         # maps: z range [m]
CONTROL_Z_MAX = 6
CONTROL_T_ORIGIN = 7      # time of the first current bin's start [s]
N_CONTROL = 8
# Columns of the arrival samples (x, y, z, t, electrode).
N_SAMPLE = 5


# ----------------------------------------------------------------------------------------------- fields

@jit
def _bracket(u, n):
    """Cell index and fraction of the fractional grid index u on n nodes (clamped to the grid)."""
    if n == 1:
        return 0, 0.0
    i = int(math.floor(u))
    if i < 0:
        return 0, 0.0
    if i >= n - 1:
        return n - 2, 1.0
    return i, u - i


@jit
def _interpolate(arr, comp, i0, f0, i1, f1, i2, f2):
    """Trilinear interpolation of arr[comp] (the third axis may have a single node)."""
    n2 = arr.shape[3]
    j2 = i2 + 1 if n2 > 1 else i2
    a00 = arr[comp, i0, i1, i2] + f2 * (arr[comp, i0, i1, j2] - arr[comp, i0, i1, i2])
    a01 = arr[comp, i0, i1 + 1, i2] + f2 * (arr[comp, i0, i1 + 1, j2] - arr[comp, i0, i1 + 1, i2])
    a10 = arr[comp, i0 + 1, i1, i2] + f2 * (arr[comp, i0 + 1, i1, j2] - arr[comp, i0 + 1, i1, i2])
    a11 = arr[comp, i0 + 1, i1 + 1, i2] + f2 * (arr[comp, i0 + 1, i1 + 1, j2] - arr[comp, i0 + 1, i1 + 1, i2])
    a0 = a00 + f1 * (a01 - a00)
    a1 = a10 + f1 * (a11 - a10)
    return a0 + f0 * (a1 - a0)


@jit
def _map_coordinates(code, params, x, y, z):
    """The map's coordinates (u₀, u₁, u₂) of a point and ρ (RZ maps: u₀ = r, u₁ = z)."""
    if code == MAP_RZ:
        rho = math.sqrt(x * x + y * y)
        return rho, z, 0.0, rho
    return x, y, z, 0.0


@jit
def _map_cells(arr, params, c0, c1, c2):
    n0 = arr.shape[1]
    n1 = arr.shape[2]
    n2 = arr.shape[3]
    i0, f0 = _bracket((c0 - params[0]) / params[3], n0)
    i1, f1 = _bracket((c1 - params[1]) / params[4], n1)
    i2, f2 = _bracket((c2 - params[2]) / params[5], n2)
    return i0, f0, i1, f1, i2, f2


@jit
def _map_vector(code, params, arr, x, y, z):
    c0, c1, c2, rho = _map_coordinates(code, params, x, y, z)
    i0, f0, i1, f1, i2, f2 = _map_cells(arr, params, c0, c1, c2)
    if code == MAP_RZ:
        er = _interpolate(arr, 0, i0, f0, i1, f1, i2, f2)
        ez = _interpolate(arr, 1, i0, f0, i1, f1, i2, f2)
        if rho > 0.0:
            return er * x / rho, er * y / rho, ez
        return 0.0, 0.0, ez
    return (_interpolate(arr, 0, i0, f0, i1, f1, i2, f2), _interpolate(arr, 1, i0, f0, i1, f1, i2, f2),
            _interpolate(arr, 2, i0, f0, i1, f1, i2, f2))


@jit
def analytic_field(code, params, x, y, z):
    """E₁ [V/m per V] and the gradient length [m] of an analytic geometry (code < MAP_RZ) at (x, y, z) [m]."""
    if code == PLATES:
        return 0.0, 0.0, -1.0 / params[0], math.inf
    if code == COAXIAL:
        r2 = x * x + y * y
        s = 1.0 / (r2 * math.log(params[1] / params[0]))
        return s * x, s * y, 0.0, math.sqrt(r2)
    if code == SPHERES:
        r2 = x * x + y * y + z * z
        r = math.sqrt(r2)
        s = params[0] * params[1] / ((params[1] - params[0]) * r2 * r)
        return s * x, s * y, s * z, 0.5 * r
    c = params[2]
    rho2 = x * x + y * y
    r_minus = math.sqrt(rho2 + (z + c) * (z + c))
    r_plus = math.sqrt(rho2 + (z - c) * (z - c))
    eta = (r_minus - r_plus) / (2.0 * c)
    # E = −∇φ = −∇η / ((1 − η²) artanh η₀), ∇η = (∇r₋ − ∇r₊)/(2c)
    s = -1.0 / ((1.0 - eta * eta) * params[4] * 2.0 * c)
    gx = x / r_minus - x / r_plus
    gy = y / r_minus - y / r_plus
    gz = (z + c) / r_minus - (z - c) / r_plus
    return s * gx, s * gy, s * gz, 0.5 * r_plus


@jit
def map_field(geometry, x, y, z):
    """E₁ [V/m per V] interpolated from a field map, and the gradient length (the smallest grid spacing) [m]."""
    code, params, field, weight, potential, mask = geometry
    ex, ey, ez = _map_vector(code, params, field, x, y, z)
    return ex, ey, ez, min(params[3], params[4]) if code == MAP_RZ else min(params[3], min(params[4], params[5]))


@jit
def unit_field(geometry, x, y, z):
    """The field E₁ [V/m per V] at (x, y, z) [m] for +1 V on the driven electrode, and the gradient length [m]."""
    if geometry[0] < MAP_RZ:
        return analytic_field(geometry[0], geometry[1], x, y, z)
    return map_field(geometry, x, y, z)


@jit
def weighting_field(geometry, x, y, z):
    """Weighting field of the driven electrode [1/m] at (x, y, z): E₁ for analytic geometries, the map's array."""
    code = geometry[0]
    if code < MAP_RZ:
        ex, ey, ez, length = unit_field(geometry, x, y, z)
        return ex, ey, ez
    return _map_vector(code, geometry[1], geometry[3], x, y, z)


@jit
def weighting_potential(geometry, x, y, z):
    """Weighting potential φ_w of the driven electrode (1 on it, 0 on the grounded one) at (x, y, z)."""
    code, params, field, weight, potential, mask = geometry
    if code == PLATES:
        return z / params[0]
    if code == COAXIAL:
        return math.log(math.sqrt(x * x + y * y) / params[1]) / math.log(params[0] / params[1])
    if code == SPHERES:
        r = math.sqrt(x * x + y * y + z * z)
        return params[0] * (params[1] - r) / (r * (params[1] - params[0]))
    if code == POINT_PLANE:
        c = params[2]
        rho2 = x * x + y * y
        eta = (math.sqrt(rho2 + (z + c) * (z + c)) - math.sqrt(rho2 + (z - c) * (z - c))) / (2.0 * c)
        eta = min(max(eta, -0.999999999999), 0.999999999999)
        return math.atanh(eta) / params[4]
    c0, c1, c2, rho = _map_coordinates(code, params, x, y, z)
    i0, f0, i1, f1, i2, f2 = _map_cells(potential, params, c0, c1, c2)
    return _interpolate(potential, 0, i0, f0, i1, f1, i2, f2)


@jit
def analytic_region(code, params, x, y, z):
    """GAS, DRIVEN or GROUNDED for the point (x, y, z) of an analytic geometry."""
    if code == PLATES:
        if z <= 0.0:
            return GROUNDED
        return DRIVEN if z >= params[0] else GAS
    if code == COAXIAL or code == SPHERES:
        r2 = x * x + y * y if code == COAXIAL else x * x + y * y + z * z
        if r2 <= params[0] * params[0]:
            return DRIVEN
        return GROUNDED if r2 >= params[1] * params[1] else GAS
    if z <= 0.0:
        return GROUNDED
    c = params[2]
    rho2 = x * x + y * y
    eta = (math.sqrt(rho2 + (z + c) * (z + c)) - math.sqrt(rho2 + (z - c) * (z - c))) / (2.0 * c)
    return DRIVEN if eta >= params[3] else GAS


@jit
def map_region(geometry, x, y, z):
    """GAS, DRIVEN, GROUNDED (nearest node of the mask) or OUTSIDE the map, for the point (x, y, z)."""
    code, params, field, weight, potential, mask = geometry
    c0, c1, c2, rho = _map_coordinates(code, params, x, y, z)
    u0 = (c0 - params[0]) / params[3]
    u1 = (c1 - params[1]) / params[4]
    u2 = (c2 - params[2]) / params[5]
    n0 = mask.shape[0]
    n1 = mask.shape[1]
    n2 = mask.shape[2]
    if u0 < 0.0 or u1 < 0.0 or u0 > n0 - 1 or u1 > n1 - 1 or u2 < 0.0 or u2 > n2 - 1:
        return OUTSIDE
    label = mask[int(u0 + 0.5), int(u1 + 0.5), int(u2 + 0.5)]
    return GAS if label == 0 else (DRIVEN if label == 1 else GROUNDED)


@jit
def region(geometry, x, y, z):
    """GAS, DRIVEN or GROUNDED (inside that electrode), or OUTSIDE a map, for the point (x, y, z)."""
    if geometry[0] < MAP_RZ:
        return analytic_region(geometry[0], geometry[1], x, y, z)
    return map_region(geometry, x, y, z)


@jit
def surface_time(geometry, x, y, z, ux, uy, uz, ax, ay, az, h):
    """The time s ∈ (0, h] [s] at which the path x + u s + a s²/2 (velocity u [m/s], acceleration a [m/s²] at the
    step's start) from a gas point enters an electrode it reaches within h (bisection to 2⁻⁴⁰ h)."""
    low = 0.0
    high = h
    for _ in range(40):
        mid = 0.5 * (low + high)
        q = 0.5 * mid * mid
        if region(geometry, x + ux * mid + ax * q, y + uy * mid + ay * q, z + uz * mid + az * q) == GAS:
            low = mid
        else:
            high = mid
    return high


@jit
def step_limit(speed, accel, length, kappa):
    """The time h [s] in which |v| h + |a| h²/2 reaches κ L (``speed`` [m/s], ``accel`` [m/s²], ``length`` L [m])."""
    s = kappa * length
    return 2.0 * s / (speed + math.sqrt(speed * speed + 2.0 * accel * s))


@jit
def voltage(drive, t):
    """V(t) [V] of the drive tuple (V_dc, V_ac, ω, phase, period, wave_time, wave_volt)."""
    v_dc, v_ac, omega, phase, period, wave_time, wave_volt = drive
    return instantaneous_accel(t, v_dc, v_ac, omega, phase, period, wave_time, wave_volt)


@jit
def acceleration(geometry, drive, x, y, z, t):
    """Electron acceleration −(e/m) V(t) E₁(x) [m/s²] and the gradient length [m]."""
    ex, ey, ez, length = unit_field(geometry, x, y, z)
    s = -CHARGE_PER_MASS * voltage(drive, t)
    return s * ex, s * ey, s * ez, length


# -------------------------------------------------------------------------------------------- one slice

@jit
def _time_bin(t, origin, width, n_bins):
    b = int(math.floor((t - origin) / width))
    return n_bins - 1 if b >= n_bins else (0 if b < 0 else b)


@jit
def _map_add(maps, r, slot, x, y, z, control, w):
    if slot < 0:
        return
    n_rho = maps.shape[2]
    n_z = maps.shape[3]
    rho = math.sqrt(x * x + y * y)
    i = int(rho / control[CONTROL_RHO_MAX] * n_rho)
    j = int(math.floor((z - control[CONTROL_Z_MIN]) / (control[CONTROL_Z_MAX] - control[CONTROL_Z_MIN]) * n_z))
    if 0 <= i < n_rho and 0 <= j < n_z:
        maps[r, slot, i, j] += w


@jit
def _slice_row(r, state, rng, weights, geometry, drive, gas, control, tallies):
    px, py, pz, vx, vy, vz, pt, count = state
    (inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, action_args, table_max_eV, penning_slot,
     map_slot) = gas
    counts, sums, process_counts, extrapolated, current, arrival_time, maps, samples, sample_count = tallies
    loss_eV = action_args[0]
    s0 = rng[r, 0]
    s1 = rng[r, 1]
    s2 = rng[r, 2]
    s3 = rng[r, 3]
    capacity = px.shape[1]
    n_proc = action.shape[0]
    n_bins = current.shape[1]
    for c in range(N_COUNTS):
        counts[r, c] = 0
    for c in range(N_SUMS):
        sums[r, c] = 0.0
    for k in range(n_proc):
        process_counts[r, k] = 0
        extrapolated[r, k] = 0
    for b in range(n_bins):
        current[r, b] = 0.0
        arrival_time[r, 0, b] = 0.0
        arrival_time[r, 1, b] = 0.0
    for s in range(maps.shape[1]):
        for i in range(maps.shape[2]):
            for j in range(maps.shape[3]):
                maps[r, s, i, j] = 0.0
    t_end = control[CONTROL_T_END]
    kappa = control[CONTROL_KAPPA]
    max_step = control[CONTROL_MAX_STEP]
    bin_width = control[CONTROL_BIN_WIDTH]
    t_origin = control[CONTROL_T_ORIGIN]
    code = geometry[0]
    params = geometry[1]
    const_voltage = drive[1] == 0.0 and drive[5].shape[0] == 0
    v_const = drive[0]
    steps = 0
    events = 0
    w = weights[r]
    inv_nu_star = 1.0 / nu_star
    top_energy = 0.0
    status = 0  # 0 fine, 1 above the energy grid, 2 store full, 3 unknown action code
    n = count[r]
    alive = 0
    i = 0
    while i < n and status == 0:
        x = px[r, i]
        y = py[r, i]
        z = pz[r, i]
        ux = vx[r, i]
        uy = vy[r, i]
        uz = vz[r, i]
        t = pt[r, i]
        volts = v_const if const_voltage else voltage(drive, t)
        if code < MAP_RZ:
            ex, ey, ez, length = analytic_field(code, params, x, y, z)
        else:
            ex, ey, ez, length = map_field(geometry, x, y, z)
        ax = -CHARGE_PER_MASS * volts * ex
        ay = -CHARGE_PER_MASS * volts * ey
        az = -CHARGE_PER_MASS * volts * ez
        if code < MAP_RZ:
            wx = ex
            wy = ey
            wz = ez
        else:
            wx, wy, wz = weighting_field(geometry, x, y, z)
        # induced charge [C/weight] gathered in a local sum for the time bin of the current step (flushed when the
        # bin changes and when the electron's slice ends)
        b = _time_bin(t, t_origin, bin_width, n_bins)
        bin_end = t_origin + (b + 1) * bin_width
        charge = 0.0
        fate = GAS
        while True:
            u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            t_flight = t - math.log(1.0 - u) * inv_nu_star
            at_end = False
            if t_flight >= t_end:
                t_flight = t_end
                at_end = True
            # ---- velocity Verlet through the non-uniform field up to t_flight
            while t < t_flight:
                h = t_flight - t
                if length < math.inf:
                    speed = math.sqrt(ux * ux + uy * uy + uz * uz)
                    a_abs = math.sqrt(ax * ax + ay * ay + az * az)
                    h = min(h, step_limit(speed, a_abs, length, kappa))
                if h > max_step:
                    h = max_step
                hx = ux + 0.5 * h * ax
                hy = uy + 0.5 * h * ay
                hz = uz + 0.5 * h * az
                nx = x + h * hx
                ny = y + h * hy
                nz = z + h * hz
                t_new = t_flight if h == t_flight - t else t + h
                steps += 1
                if t >= bin_end:
                    current[r, b] -= w * ELEMENTARY_CHARGE_C * charge
                    charge = 0.0
                    b = _time_bin(t, t_origin, bin_width, n_bins)
                    bin_end = t_origin + (b + 1) * bin_width if b < n_bins - 1 else math.inf
                where = analytic_region(code, params, nx, ny, nz) if code < MAP_RZ else map_region(geometry, nx, ny,
                                                                                                  nz)
                if where != GAS:
                    # the step ends inside an electrode: the crossing by bisection on the step's parabola, and the
                    # left-point rule for the induced charge of the part in the gas
                    h = surface_time(geometry, x, y, z, ux, uy, uz, ax, ay, az, h)
                    nx = x + h * (ux + 0.5 * h * ax)
                    ny = y + h * (uy + 0.5 * h * ay)
                    nz = z + h * (uz + 0.5 * h * az)
                    charge += wx * (nx - x) + wy * (ny - y) + wz * (nz - z)
                    fate = where
                    x = nx
                    y = ny
                    z = nz
                    t = t + h
                    break
                volts = v_const if const_voltage else voltage(drive, t_new)
                if code < MAP_RZ:
                    ex, ey, ez, length = analytic_field(code, params, nx, ny, nz)
                else:
                    ex, ey, ez, length = map_field(geometry, nx, ny, nz)
                ax1 = -CHARGE_PER_MASS * volts * ex
                ay1 = -CHARGE_PER_MASS * volts * ey
                az1 = -CHARGE_PER_MASS * volts * ez
                if code < MAP_RZ:
                    wx1 = ex
                    wy1 = ey
                    wz1 = ez
                else:
                    wx1, wy1, wz1 = weighting_field(geometry, nx, ny, nz)
                charge += 0.5 * ((wx + wx1) * (nx - x) + (wy + wy1) * (ny - y) + (wz + wz1) * (nz - z))
                ux = hx + 0.5 * h * ax1
                uy = hy + 0.5 * h * ay1
                uz = hz + 0.5 * h * az1
                x = nx
                y = ny
                z = nz
                t = t_new
                ax = ax1
                ay = ay1
                az = az1
                wx = wx1
                wy = wy1
                wz = wz1
            if fate != GAS:
                break
            if at_end:
                break
            # ---- a trial event at (x, t)
            energy = ENERGY_PER_SPEED2_eV * (ux * ux + uy * uy + uz * uz)
            if energy > top_energy:
                top_energy = energy
            e_cell = energy * inv_cell_eV
            if e_cell >= n_cells:
                status = 1
                break
            events += 1
            u, s0, s1, s2, s3 = next_uniform(s0, s1, s2, s3)
            level = u * nu_star
            c = int(e_cell)
            f = e_cell - c
            low = nu_total[c]
            nu = low + f * (nu_total[c + 1] - low)
            if nu > nu_star:
                counts[r, COUNT_ABOVE_BOUND] += 1
            if level >= nu:
                continue  # null collision
            k = select_process(level, c, f, nu_cumulative, n_proc)
            if energy < loss_eV[k]:
                continue  # below the threshold inside its grid cell: rejected like a null event
            counts[r, COUNT_REAL] += 1
            process_counts[r, k] += 1
            if energy > table_max_eV[k]:
                extrapolated[r, k] += 1
            kind = action[k]
            if kind == ACTION_ATTACHMENT:
                counts[r, COUNT_ATTACHED] += 1
                sums[r, SUM_PHI_END] += weighting_potential(geometry, x, y, z)
                fate = -1
                break
            if kind != ACTION_ELASTIC and kind != ACTION_EXCITATION and kind != ACTION_IONIZATION:
                status = 3
                break
            _map_add(maps, r, map_slot[k], x, y, z, control, w)
            ux, uy, uz, child, cx, cy, cz, s0, s1, s2, s3 = scatter_electron(kind, k, ux, uy, uz, energy,
                                                                            action_args, s0, s1, s2, s3)
            if child != CHILD_NONE:
                if n >= capacity:
                    status = 2
                    break
                px[r, n] = x
                py[r, n] = y
                pz[r, n] = z
                vx[r, n] = cx
                vy[r, n] = cy
                vz[r, n] = cz
                pt[r, n] = t
                n += 1
                counts[r, COUNT_CREATED] += 1
                sums[r, SUM_PHI_BIRTH] += weighting_potential(geometry, x, y, z)
                _map_add(maps, r, 0, x, y, z, control, w)
                if child == CHILD_PENNING:
                    process_counts[r, penning_slot[k]] += 1
        current[r, b] -= w * ELEMENTARY_CHARGE_C * charge
        if status != 0:
            break
        if fate == GAS:
            px[r, alive] = x
            py[r, alive] = y
            pz[r, alive] = z
            vx[r, alive] = ux
            vy[r, alive] = uy
            vz[r, alive] = uz
            pt[r, alive] = t
            alive += 1
        elif fate == DRIVEN or fate == GROUNDED or fate == OUTSIDE:
            counts[r, COUNT_DRIVEN + fate - DRIVEN] += 1
            if fate == OUTSIDE:
                sums[r, SUM_PHI_END] += weighting_potential(geometry, x, y, z)
            else:
                arrival_time[r, fate - DRIVEN, _time_bin(t, t_origin, bin_width, n_bins)] += w
                m = sample_count[r]
                if m < samples.shape[1]:
                    samples[r, m, 0] = x
                    samples[r, m, 1] = y
                    samples[r, m, 2] = z
                    samples[r, m, 3] = t
                    samples[r, m, 4] = fate
                    sample_count[r] = m + 1
        i += 1
    count[r] = alive
    counts[r, COUNT_EVENTS] = events
    counts[r, COUNT_STEPS] = steps
    counts[r, COUNT_ABOVE_GRID] = 1 if status == 1 else 0
    counts[r, COUNT_OVERFLOW] = 1 if status == 2 else 0
    counts[r, COUNT_UNKNOWN_ACTION] = 1 if status == 3 else 0
    sums[r, SUM_MAX_ENERGY] = top_energy
    rng[r, 0] = s0
    rng[r, 1] = s1
    rng[r, 2] = s2
    rng[r, 3] = s3


@jit_parallel
def advance_slice(state, rng, weights, geometry, drive, gas, control, tallies):
    """Follow every avalanche's electrons from their times to ``control[CONTROL_T_END]``.

    Each row is one avalanche (one primary electron) with its own xoshiro256** state, so results do not depend
    on the number of threads. Secondaries are appended to the row and followed in the same call; at the end the
    row's first ``count[r]`` entries are its electrons alive at ``t_end``.

    Parameters
    ----------
    state : tuple
        (x, y, z, vx, vy, vz, t, count): positions [m], velocities [m/s], times [s] of shape (R, capacity), and
        the electrons per row (int64, (R,)).
    rng : ndarray of uint64, shape (R, 4)
        xoshiro256** states, advanced in place.
    weights : ndarray, shape (R,)
        Statistical weight of each avalanche's electrons (population control), applied to the current, arrival
        and map tallies.
    geometry : tuple
        (code, params, field, weight, potential, mask), see the module notes.
    drive : tuple
        (V_dc [V], V_ac [V], ω [rad/s], phase [rad], period [s], wave_time [s], wave_volt [V]), read by
        :func:`avalanche.kernels.flight.instantaneous_accel`.
    gas : tuple
        (inv_cell_eV, n_cells, ν*, nu_total, nu_cumulative, action, action_args, table_max_eV, penning_slot,
        map_slot): the energy grid and process tables of the swarm engine; ``action_args`` as for
        :func:`avalanche.kernels.collisions.scatter_electron`; ``map_slot[k]`` the map of process k (−1: none;
        slot 0 is reserved for the electrons created).
    control : ndarray, shape (N_CONTROL,)
        Slice end, step control, bins (see the CONTROL_* entries).
    tallies : tuple
        (counts (R, N_COUNTS) int64, sums (R, N_SUMS), process_counts and extrapolated (R, P) int64, current
        (R, B) [C per bin], arrival_time (R, 2, B) (weighted arrivals at the driven and grounded electrode per
        bin), maps (R, S, n_ρ, n_z), samples (R, K, N_SAMPLE), sample_count (R,) int64). All but the samples are
        overwritten for the slice.
    """
    # the parallel loop takes arrays and scalars, not tuples of arrays: unpack here, repack in the loop
    px, py, pz, vx, vy, vz, pt, count = state
    code, params, field, weight, potential, mask = geometry
    v_dc, v_ac, omega, phase, period, wave_time, wave_volt = drive
    inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, action_args, table_max_eV, penning_slot, \
        map_slot = gas
    a0, a1, a2, a3, a4, a5, a6, a7, a8 = action_args
    counts, sums, process_counts, extrapolated, current, arrival_time, maps, samples, sample_count = tallies
    for r in prange(rng.shape[0]):
        _slice_row(r, (px, py, pz, vx, vy, vz, pt, count), rng, weights,
                   (code, params, field, weight, potential, mask),
                   (v_dc, v_ac, omega, phase, period, wave_time, wave_volt),
                   (inv_cell_eV, n_cells, nu_star, nu_total, nu_cumulative, action, (a0, a1, a2, a3, a4, a5, a6, a7,
                                                                                     a8),
                    table_max_eV, penning_slot, map_slot), control,
                   (counts, sums, process_counts, extrapolated, current, arrival_time, maps, samples, sample_count))
