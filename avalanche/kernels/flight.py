"""Numba kernels of the free flight between collisions: uniform, sinusoidal and tabulated periodic fields, with or
without a uniform magnetic field.

An electron between two trial events moves ballistically in the field E(t) along z; these functions give its
velocity change and displacement exactly (closed forms for a constant and a sinusoidal field, piecewise
integration for a tabulated waveform) and the phase bookkeeping of periodic drives. They are plain functions of
floats and arrays, called from the time-of-flight chunk kernel of :mod:`avalanche.kernels` (which re-exports
them), with the jit options of :mod:`avalanche.kernels.jit`. (The steady-state Townsend kernel has its own DC flight.)

References
----------
Skullerud H R (1968) J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423 (null-collision method: free flights
with a constant trial frequency, exact motion between trial events).
"""

from __future__ import annotations

import math

import numpy as np

from .jit import jit

# ------------------------------------------------------------------------------------------ free flight

@jit
def field_flight(t, tau, accel_dc, accel_ac, omega, phase):
    """Velocity change and field-induced displacement along z during a free flight.

    The acceleration is a(t) = a_dc + a_ac sin(ω t + φ). With the impulse functions F(t) = ∫₀ᵗ a dt' and
    G(t) = ∫₀ᵗ F dt', a flight from t to t + τ gives Δv_z = F(t+τ) − F(t) and z(t+τ) = z(t) + v_z(t) τ + Δz with
    Δz = G(t+τ) − G(t) − F(t) τ. The DC branch (a_ac = 0) uses a τ and a τ²/2 directly (no cancellation).

    Parameters
    ----------
    t, tau : float
        Start time and duration of the flight [s].
    accel_dc, accel_ac : float
        Constant and oscillating parts of the acceleration e E / m along +z [m s⁻²].
    omega, phase : float
        Angular frequency [rad s⁻¹] and phase [rad] of the oscillating part.

    Returns
    -------
    (float, float)
        Δv_z [m s⁻¹] and Δz [m].
    """
    if accel_ac == 0.0:
        return accel_dc * tau, 0.5 * accel_dc * tau * tau
    if omega == 0.0:
        a = accel_dc + accel_ac * math.sin(phase)
        return a * tau, 0.5 * a * tau * tau
    theta0 = omega * t + phase
    theta1 = theta0 + omega * tau
    scale = accel_ac / omega
    dv = accel_dc * tau + scale * (math.cos(theta0) - math.cos(theta1))
    dz = 0.5 * accel_dc * tau * tau + scale * (tau * math.cos(theta0) - (math.sin(theta1) - math.sin(theta0)) / omega)
    return dv, dz


SINE_SERIES_LIMIT = 0.05
"""ωτ [rad] up to which :func:`sine_flight` takes 1 − cos ωτ and ωτ − sin ωτ from their Taylor series."""
GYRATION_SERIES_LIMIT = 0.25
"""ω_c τ [rad] up to which :func:`gyration_coefficients` takes its functions from their Taylor series."""


@jit
def interval_exit(vperp2, uz, accel, low2, high2):
    """When an electron in a uniform field leaves the energy interval v² ∈ [low2, high2) [m² s⁻²] it is in.

    Motion with constant acceleration ``accel`` [m s⁻²] along +z: v²(t) = vperp2 + (uz + a t)², a parabola in t
    with its minimum vperp2 at t = −uz/a. Moving down (uz < 0) the electron leaves through the lower edge at
    uz + a t = −√(low2 − vperp2) if the minimum lies below it; otherwise it leaves through the upper edge at
    uz + a t = +√(high2 − vperp2). Returns (t [s] ≥ 0, −1 or +1 for the lower or upper edge); (+inf, 0) when
    a ≤ 0 (no field: the energy stays constant in flight). ``high2`` may be +inf (the top interval).
    """
    if accel <= 0.0:
        return math.inf, 0
    if uz < 0.0 and low2 > vperp2:
        root = math.sqrt(low2 - vperp2)
        if uz < -root:
            return (-root - uz) / accel, -1
    root = math.sqrt(max(high2 - vperp2, 0.0))
    return max((root - uz) / accel, 0.0), 1


@jit
def sine_flight(tau, accel_dc, accel_ac, omega, cos0, sin0):
    """:func:`field_flight` for a sinusoidal field, from cos θ₀, sin θ₀ of the flight's start (θ = ω t + φ).

    Returns Δv_z, Δz and cos θ₁, sin θ₁ at the end of the flight, which the caller keeps for the next flight and
    for the field at the event. With δ = ωτ, c = 1 − cos δ and q = δ − sin δ:

        Δv_z = a_dc τ + (a_ac/ω) (c cos θ₀ + sin δ sin θ₀),
        Δz = a_dc τ²/2 + (a_ac/ω²) (q cos θ₀ + c sin θ₀),
        cos θ₁ = cos θ₀ − (c cos θ₀ + sin δ sin θ₀),   sin θ₁ = sin θ₀ + (sin δ cos θ₀ − c sin θ₀),

    the closed form of :func:`field_flight` written without its cancelling differences (exact, to rounding, for
    any δ). For δ ≤ ``SINE_SERIES_LIMIT`` (nearly every flight when ν* ≫ ω) c and q come from their Taylor series
    in δ², four terms each (Estrin's scheme: the first omitted term is below 3e-17 of the sum), so such a flight
    costs no trigonometric call; a longer one takes c = 2 sin²(δ/2) and sin δ from the library. The rotated pair
    carries rounding errors of order √n ulp after n flights; the caller starts every electron from cos, sin of
    its start time.
    """
    delta = omega * tau
    if delta <= SINE_SERIES_LIMIT:
        d2 = delta * delta
        d4 = d2 * d2
        c = d2 * ((1.0 / 2.0 - d2 * (1.0 / 24.0)) + d4 * (1.0 / 720.0 - d2 * (1.0 / 40320.0)))
        q = delta * d2 * ((1.0 / 6.0 - d2 * (1.0 / 120.0)) + d4 * (1.0 / 5040.0 - d2 * (1.0 / 362880.0)))
        sin_delta = delta - q
    else:
        half = math.sin(0.5 * delta)
        c = 2.0 * half * half
        sin_delta = math.sin(delta)
        q = delta - sin_delta
    turn_cos = c * cos0 + sin_delta * sin0
    turn_sin = sin_delta * cos0 - c * sin0
    scale = accel_ac / omega
    dv = accel_dc * tau + scale * turn_cos
    dz = 0.5 * accel_dc * tau * tau + scale / omega * (q * cos0 + c * sin0)
    return dv, dz, cos0 - turn_cos, sin0 + turn_sin


# ------------------------------------------------------------------------------------- magnetic field

@jit
def gyration_coefficients(tau, omega_c):
    """The turn of a flight of τ [s] about a magnetic field of cyclotron frequency ω_c [rad s⁻¹].

    Returns cos δ, sin δ (δ = ω_c τ) and the integrals of the rotation k₁ + i k₂ = ∫₀^τ e^{iω_c u} du,
    k₃ + i k₄ = ∫₀^τ (τ − u) e^{iω_c u} du: k₁ = sin δ/ω_c, k₂ = (1 − cos δ)/ω_c, k₃ = (1 − cos δ)/ω_c²,
    k₄ = (δ − sin δ)/ω_c² (finite as ω_c → 0: τ, 0, τ²/2, 0). For δ ≤ ``GYRATION_SERIES_LIMIT`` they come from
    the Taylor series of f₁ = sin δ/δ, f₂ = (1 − cos δ)/δ², f₃ = (δ − sin δ)/δ³ in δ², six terms each (the first
    omitted term, δ¹²/13! of f₁ or less, is below 1e-17 of the sum), so such a flight costs no trigonometric call
    or division and δ = 0 is exact; above it, from sin and cos of δ/2 (1 − cos δ = 2 sin²(δ/2), sin δ =
    2 sin(δ/2) cos(δ/2)), where δ − sin δ loses at most 6/δ² < 100 ulp. The limit is high enough that, for
    ω_c up to about ν*/3, nearly every flight takes the series and the branch is predictable.
    """
    delta = omega_c * tau
    if delta <= GYRATION_SERIES_LIMIT:
        d2 = delta * delta
        f1 = 1.0 - d2 * (1.0 / 6.0 - d2 * (1.0 / 120.0 - d2 * (1.0 / 5040.0 - d2 * (
            1.0 / 362880.0 - d2 * (1.0 / 39916800.0)))))
        f2 = 0.5 - d2 * (1.0 / 24.0 - d2 * (1.0 / 720.0 - d2 * (1.0 / 40320.0 - d2 * (
            1.0 / 3628800.0 - d2 * (1.0 / 479001600.0)))))
        f3 = 1.0 / 6.0 - d2 * (1.0 / 120.0 - d2 * (1.0 / 5040.0 - d2 * (1.0 / 362880.0 - d2 * (
            1.0 / 39916800.0 - d2 * (1.0 / 6227020800.0)))))
        k1 = tau * f1
        k3 = tau * tau * f2
        return 1.0 - d2 * f2, delta * f1, k1, delta * tau * f2, k3, delta * tau * tau * f3
    half_sin = math.sin(0.5 * delta)
    c = 2.0 * half_sin * half_sin
    sin_d = 2.0 * half_sin * math.cos(0.5 * delta)
    inv = 1.0 / omega_c
    return 1.0 - c, sin_d, sin_d * inv, c * inv, c * inv * inv, (delta - sin_d) * inv * inv


@jit
def jerk_coefficients(tau, omega_c):
    """k₅ + i k₆ = ∫₀^τ (τ − u)²/2 e^{iω_c u} du of a flight of τ [s]: k₅ = (δ − sin δ)/ω_c³,
    k₆ = (δ²/2 − 1 + cos δ)/ω_c³ (δ = ω_c τ), the response to a linearly changing field; Taylor series of
    k₅/τ³ = 1/6 − δ²/120 + δ⁴/5040 and k₆/(τ³δ) = 1/24 − δ²/720 + δ⁴/40320 below ``SINE_SERIES_LIMIT``."""
    delta = omega_c * tau
    tau3 = tau * tau * tau
    if delta <= SINE_SERIES_LIMIT:
        d2 = delta * delta
        return (tau3 * (1.0 / 6.0 - d2 * (1.0 / 120.0 - d2 * (1.0 / 5040.0))),
                tau3 * delta * (1.0 / 24.0 - d2 * (1.0 / 720.0 - d2 * (1.0 / 40320.0))))
    half_sin = math.sin(0.5 * delta)
    inv3 = 1.0 / (omega_c * omega_c * omega_c)
    return (delta - math.sin(delta)) * inv3, (0.5 * delta * delta - 2.0 * half_sin * half_sin) * inv3


@jit
def magnetic_flight(tau, vx, vy, vz, accel, jerk, bx, bz, omega_c):
    """Exact free flight in a uniform magnetic field and the acceleration (accel + jerk s) along +z, s the time into
    the flight.

    The motion obeys dv/ds = a + j s + Ω × v with a = accel ẑ, j = jerk ẑ and Ω = ω_c b̂ (for an electron
    −e v × B / m = Ω × v with Ω = e B/m: ω_c = e|B|/m, b̂ the unit vector of B), b̂ = (b_x, 0, b_z) in the x–z
    plane (any direction reduces to this by a rotation about the field axis z). In the frame (ê₁, ê₂, b̂) with
    ê₁ = (b_z, 0, −b_x), ê₂ = ŷ (right-handed, ê₁ × ê₂ = b̂) the motion along b̂ is uniformly accelerated,
    v∥' = v∥ + a∥ τ + j∥ τ²/2, Δr∥ = v∥ τ + a∥ τ²/2 + j∥ τ³/6, and the perpendicular velocity w = w₁ + i w₂ obeys
    dw/ds = i ω_c w + a₁ + j₁ s (a₁ = a·ê₁, the force has no ê₂ part), so that

        w(τ) = w e^{iδ} + a₁ (k₁ + i k₂) + j₁ (k₃ + i k₄),
        Δr⊥ = w (k₁ + i k₂) + a₁ (k₃ + i k₄) + j₁ (k₅ + i k₆),

    with δ = ω_c τ and the integrals of :func:`gyration_coefficients` and :func:`jerk_coefficients`: the
    gyration, the E×B drift (a₁ k₂ → a₁ τ × the drift E×B/B² as δ grows) and the acceleration along B of the
    classical closed form (e.g. Jackson J D 1999, Classical Electrodynamics, 3rd ed., Wiley, §12.3; from memory).
    As ω_c → 0 it tends to the field-free flight without cancellation.

    Parameters
    ----------
    tau : float
        Flight duration [s], ≥ 0.
    vx, vy, vz : float
        Velocity at the start [m s⁻¹].
    accel, jerk : float
        Acceleration along +z at the start [m s⁻²] and its constant rate of change [m s⁻³] (0 for a constant field).
    bx, bz : float
        Unit vector b̂ = (b_x, 0, b_z) of Ω (for electrons, of B).
    omega_c : float
        Cyclotron frequency [rad s⁻¹], > 0.

    Returns
    -------
    (float, float, float, float, float, float)
        Velocity at the end [m s⁻¹] and displacement [m].
    """
    v_par, w1, w2 = bx * vx + bz * vz, bz * vx - bx * vz, vy
    new_par, new_w1, new_w2, r_par, r1, r2 = field_frame_flight(tau, v_par, w1, w2, accel * bz, -accel * bx,
                                                                omega_c)
    if jerk != 0.0:  # AC drives only
        k3, k4 = gyration_coefficients(tau, omega_c)[4:]
        k5, k6 = jerk_coefficients(tau, omega_c)
        j_par = jerk * bz
        j1 = -jerk * bx
        new_par += 0.5 * j_par * tau * tau
        r_par += j_par * tau * tau * tau / 6.0
        new_w1 += j1 * k3
        new_w2 += j1 * k4
        r1 += j1 * k5
        r2 += j1 * k6
    return (new_par * bx + new_w1 * bz, new_w2, new_par * bz - new_w1 * bx,
            r_par * bx + r1 * bz, r2, r_par * bz - r1 * bx)


@jit
def field_frame_flight(tau, v_par, w1, w2, a_par, a1, omega_c):
    """:func:`magnetic_flight` for a constant field in the frame (ê₁, ê₂, b̂) of B: velocity (w₁, w₂, v∥) and
    acceleration (a₁, 0, a∥) in, the velocity at the end and the displacement (r∥, r₁, r₂) out (returned as v∥, w₁,
    w₂, r∥, r₁, r₂). The time-of-flight kernel keeps an electron's velocity in this frame from flight to flight
    (each flight is then a rotation and a shift of w, whose chain of dependent operations is short) and converts it
    only after a real collision."""
    cos_d, sin_d, k1, k2, k3, k4 = gyration_coefficients(tau, omega_c)
    return (v_par + a_par * tau, (w1 * cos_d - w2 * sin_d) + a1 * k1, (w2 * cos_d + w1 * sin_d) + a1 * k2,
            (v_par + 0.5 * a_par * tau) * tau, (w1 * k1 - w2 * k2) + a1 * k3, (w2 * k1 + w1 * k2) + a1 * k4)


@jit
def accel_and_slope(t, accel_dc, accel_ac, omega, phase, period, wave_time, wave_accel):
    """a(t) [m s⁻²] of :func:`instantaneous_accel` and its time derivative da/dt [m s⁻³] (for a tabulated
    waveform, the slope of the node interval holding t)."""
    if wave_time.shape[0] == 0:
        theta = omega * t + phase
        return accel_dc + accel_ac * math.sin(theta), accel_ac * omega * math.cos(theta)
    s, i = wave_interval(t, period, wave_time)
    slope = (wave_accel[i + 1] - wave_accel[i]) / (wave_time[i + 1] - wave_time[i])
    return accel_dc + wave_accel[i] + slope * (s - wave_time[i]), slope


@jit
def magnetic_field_flight(t, tau, vx, vy, vz, accel_dc, accel_ac, omega, phase, period, wave_time, wave_accel,
                          bx, bz, omega_c):
    """A free flight from t to t + τ [s] in the magnetic field (b̂, ω_c) and the electric acceleration a(t) along +z.

    A constant field (``accel_ac`` = 0, no waveform) is exact (:func:`magnetic_flight` with j = 0). A periodic
    drive is replaced over the flight by its tangent at mid-flight m = t + τ/2, a(m) + a'(m)(s − m), flown exactly.
    The neglected rest a''(m)(s − m)²/2 + … gives, to leading order in τ, a velocity error a'' τ³/24 and a
    displacement error a'' τ⁴/48 (the integrals of (s − m)²/2 over the flight, once and twice); for a sine of
    amplitude a_ac and angular frequency Ω: |δv| ≤ a_ac Ω² τ³/24 and |δr| ≤ a_ac Ω² τ⁴/48, a fraction (Ωτ)²/24 of
    the field's impulse a_ac τ. With a null-collision trial frequency ν* ≫ Ω, (Ωτ)² is 2 (Ω/ν*)² on average.
    A tabulated waveform is exact for a flight inside one node interval (a(s) is linear there); a flight across
    a node has an error of order |Δa'| τ² (Δa' the change of slope at the node).
    """
    if accel_ac == 0.0 and wave_time.shape[0] == 0:
        return magnetic_flight(tau, vx, vy, vz, accel_dc, 0.0, bx, bz, omega_c)
    a_mid, slope = accel_and_slope(t + 0.5 * tau, accel_dc, accel_ac, omega, phase, period, wave_time, wave_accel)
    return magnetic_flight(tau, vx, vy, vz, a_mid - 0.5 * tau * slope, slope, bx, bz, omega_c)


# ------------------------------------------------------------------------- AC: tabulated waveform, phases
# (AC block: everything between here and "collision kinematics" serves periodic drives; DC runs never enter it.)

@jit
def _table_impulses(x, period, wave_time, wave_accel, wave_F, wave_G):
    """F(x) = ∫₀ˣ a and G(x) = ∫₀ˣ F of the periodic piecewise-linear acceleration, x ≥ 0 from a period start.

    With x = k T + s (0 ≤ s < T), F_T = F(T) and G_T = G(T) the whole-period sums:
    F(x) = k F_T + F(s), G(x) = k G_T + F_T T k(k − 1)/2 + k F_T s + G(s); inside node interval i (u = s − t_i,
    slope c) F(s) = F_i + a_i u + c u²/2 and G(s) = G_i + F_i u + a_i u²/2 + c u³/6.
    """
    last = wave_time.shape[0] - 1
    k = math.floor(x / period)
    s = x - k * period
    if s >= period:
        s -= period
        k += 1
    if s < 0.0:
        s = 0.0
    i = np.searchsorted(wave_time, s, side="right") - 1
    if i >= last:
        i = last - 1
    u = s - wave_time[i]
    c = (wave_accel[i + 1] - wave_accel[i]) / (wave_time[i + 1] - wave_time[i])
    f_local = wave_F[i] + wave_accel[i] * u + 0.5 * c * u * u
    g_local = wave_G[i] + wave_F[i] * u + 0.5 * wave_accel[i] * u * u + c * u * u * u / 6.0
    f_period = wave_F[last]
    g = k * wave_G[last] + f_period * period * 0.5 * k * (k - 1.0) + k * f_period * s + g_local
    return k * f_period + f_local, g


@jit
def table_flight(t, tau, accel_dc, period, wave_time, wave_accel, wave_F, wave_G):
    """Δv_z [m/s] and Δz [m] of a free flight from t to t + τ [s] in a(t) = a_dc + a_w(t mod T), a_w piecewise
    linear through (``wave_time``, ``wave_accel``) with precomputed node impulses ``wave_F``, ``wave_G``.

    Exact (see :func:`field_flight` for Δv = F(t+τ) − F(t), Δz = G(t+τ) − G(t) − F(t) τ). Times are taken from
    the start of the flight's period, so k counts only the periods the flight spans; a flight inside one node
    interval uses Δv = a₀τ + cτ²/2, Δz = a₀τ²/2 + cτ³/6 directly (no cancellation).
    """
    s0 = t - math.floor(t / period) * period
    if s0 >= period or s0 < 0.0:
        s0 = 0.0
    i = np.searchsorted(wave_time, s0, side="right") - 1
    if i >= wave_time.shape[0] - 1:
        i = wave_time.shape[0] - 2
    dc_v = accel_dc * tau
    dc_z = 0.5 * accel_dc * tau * tau
    if s0 + tau <= wave_time[i + 1]:
        c = (wave_accel[i + 1] - wave_accel[i]) / (wave_time[i + 1] - wave_time[i])
        a0 = wave_accel[i] + c * (s0 - wave_time[i])
        return dc_v + a0 * tau + 0.5 * c * tau * tau, dc_z + 0.5 * a0 * tau * tau + c * tau * tau * tau / 6.0
    f0, g0 = _table_impulses(s0, period, wave_time, wave_accel, wave_F, wave_G)
    f1, g1 = _table_impulses(s0 + tau, period, wave_time, wave_accel, wave_F, wave_G)
    return dc_v + f1 - f0, dc_z + g1 - g0 - f0 * tau


@jit
def wave_interval(t, period, wave_time):
    """s = t mod T [s] and the index i of the waveform node interval [wave_time[i], wave_time[i + 1]) holding it."""
    s = t - math.floor(t / period) * period
    i = np.searchsorted(wave_time, s, side="right") - 1
    if i >= wave_time.shape[0] - 1:
        i = wave_time.shape[0] - 2
    if i < 0:
        i = 0
    return s, i


@jit
def instantaneous_accel(t, accel_dc, accel_ac, omega, phase, period, wave_time, wave_accel):
    """a(t) [m s⁻²]: a_dc + a_ac sin(ωt + φ), or a_dc + the tabulated waveform at t mod T when it is given."""
    if wave_time.shape[0] == 0:
        return accel_dc + accel_ac * math.sin(omega * t + phase)
    s, i = wave_interval(t, period, wave_time)
    f = (s - wave_time[i]) / (wave_time[i + 1] - wave_time[i])
    return accel_dc + wave_accel[i] + f * (wave_accel[i + 1] - wave_accel[i])


@jit
def phase_bin(t, inv_period, n_bins):
    """Index of the phase bin of time t [s]: int(n_bins · frac(t / T))."""
    x = t * inv_period
    b = int((x - math.floor(x)) * n_bins)
    return n_bins - 1 if b >= n_bins else (0 if b < 0 else b)
