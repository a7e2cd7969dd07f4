"""Numba kernels of the free flight between collisions: uniform, sinusoidal and tabulated periodic fields.

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
def instantaneous_accel(t, accel_dc, accel_ac, omega, phase, period, wave_time, wave_accel):
    """a(t) [m s⁻²]: a_dc + a_ac sin(ωt + φ), or a_dc + the tabulated waveform at t mod T when it is given."""
    if wave_time.shape[0] == 0:
        return accel_dc + accel_ac * math.sin(omega * t + phase)
    s = t - math.floor(t / period) * period
    i = np.searchsorted(wave_time, s, side="right") - 1
    if i >= wave_time.shape[0] - 1:
        i = wave_time.shape[0] - 2
    if i < 0:
        i = 0
    f = (s - wave_time[i]) / (wave_time[i + 1] - wave_time[i])
    return accel_dc + wave_accel[i] + f * (wave_accel[i + 1] - wave_accel[i])


@jit
def phase_bin(t, inv_period, n_bins):
    """Index of the phase bin of time t [s]: int(n_bins · frac(t / T))."""
    x = t * inv_period
    b = int((x - math.floor(x)) * n_bins)
    return n_bins - 1 if b >= n_bins else (0 if b < 0 else b)
