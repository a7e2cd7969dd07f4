"""First harmonic of phase-resolved AC results (avalanche.analysis.phase): exact synthetic signals and the Maxwell
model gas at low frequency against its exact drift velocity."""

from __future__ import annotations

import math

import numpy as np
import pytest
import scipy.constants as sc

from avalanche import ConfigError, Mixture, make_set, model_gas
from avalanche.analysis.phase import first_harmonic
from avalanche.engine.time_of_flight import swarm


def _bin_averages(bins, mean, amplitude, lag, third=0.0):
    """Exact averages over B equal bins of mean + A sin(θ − φ) + c sin 3θ (∫ sin(kθ + c) dθ = −cos(kθ + c)/k)."""
    lo, hi = 2 * np.pi * np.arange(bins) / bins, 2 * np.pi * np.arange(1, bins + 1) / bins
    width = hi - lo
    first = (np.cos(lo - lag) - np.cos(hi - lag)) / width
    third_avg = (np.cos(3 * lo) - np.cos(3 * hi)) / (3 * width)
    return mean + amplitude * first + third * third_avg, 0.5 * (lo + hi)


@pytest.mark.parametrize("bins, lag", [(8, 0.3), (16, -1.2), (32, 2.9), (5, 0.0)])
def test_first_harmonic_of_exact_bin_averages(bins, lag):
    # Bin averages of a known signal (exact integrals, above): the standard Fourier coefficient of the first
    # harmonic (common practice) with the sinc(π/B) bin-average factor recovers A and φ to rounding; the third
    # harmonic is orthogonal to the first over B ≥ 5 bins (it aliases only at order B − 1).
    values, centres = _bin_averages(bins, 0.7, 2.5e5, lag, third=4e4)
    h = first_harmonic(centres, values)
    assert h.amplitude == pytest.approx(2.5e5, rel=1e-12)
    assert h.lag_rad == pytest.approx(lag, abs=1e-12)
    assert h.mean == pytest.approx(0.7, rel=1e-9)
    sampled = first_harmonic(centres, 2.5e5 * np.sin(centres - lag), bin_averaged=False)
    assert sampled.amplitude == pytest.approx(2.5e5, rel=1e-12) and sampled.lag_rad == pytest.approx(lag, abs=1e-12)


def test_first_harmonic_errors_match_the_scatter_of_noisy_signals():
    # Linear error propagation for independent bins: the propagated standard errors agree with the scatter of
    # A and φ over 4000 noisy copies of the signal (fixed seed); the scatter's own relative error is
    # 1/√(2·3999) ≈ 1.1 %, so 5 % is > 4 σ.
    rng = np.random.default_rng(5)
    values, centres = _bin_averages(16, 0.0, 1.0, 0.4)
    sigma = np.full(16, 0.05)
    fits = [first_harmonic(centres, values + rng.normal(0.0, sigma), sigma) for _ in range(4000)]
    amplitudes = np.array([f.amplitude for f in fits])
    lags = np.array([f.lag_rad for f in fits])
    assert np.std(amplitudes, ddof=1) == pytest.approx(fits[0].amplitude_stderr, rel=0.05)
    assert np.std(lags, ddof=1) == pytest.approx(fits[0].lag_stderr, rel=0.05)
    assert np.mean(amplitudes) == pytest.approx(1.0, abs=4 * fits[0].amplitude_stderr / math.sqrt(4000) + 2e-3)


def test_first_harmonic_refuses_bad_input():
    with pytest.raises(ConfigError, match="at least 3"):
        first_harmonic([0.5, 2.0], [1.0, 2.0])
    with pytest.raises(ConfigError, match="finite"):
        first_harmonic([0.5, 2.0, 4.0], [1.0, math.nan, 2.0])


N_m3 = 1e23
MAXWELL_RATE_m3_s = 1e-19 * math.sqrt(2 * sc.e / sc.m_e)
"""σ_m v of the Maxwell model gas, σ_m = 10 ε^-1/2 Å² (ε in eV): 1e-19 m² √(2e/m) [m³/s] (analytic)."""


def test_low_frequency_drift_amplitude_is_the_dc_drift_at_the_peak_field():
    # Maxwell model gas (constant collision frequency ν, so constant mobility), cold, light target (M = 20 m_e, as
    # in tests/engine/test_ac.py, so the energy relaxes in ~10 collisions). Momentum balance is exact for constant
    # ν: m dW/dt = eE(t) − μ ν W (μ the reduced mass; Robson R E 2006, Introductory Transport Theory for Charged
    # Particles in Gases, World Scientific, the Maxwell model; from memory), so in E_0 sin ωt
    #   W = W_1 sin(ωt − φ),  W_1 = a_0/√((qν)² + ω²),  tan φ = ω/(qν),  q = M/(m + M),  a_0 = eE_0/m,
    # and as ω → 0 the amplitude tends to the DC drift velocity at the peak field, a_0/(qν). At ω = 0.05 qν it is
    # within 0.13 % of that limit. ac_method="exact" follows the electrons through every period (not the
    # quasi-static route from DC points), so the lag is measured too.
    mass_amu = 20 * sc.m_e / sc.atomic_mass
    light = make_set("maxwell", mass_amu=mass_amu, processes=model_gas("maxwell").processes)
    q = 20.0 / 21.0
    nu = N_m3 * MAXWELL_RATE_m3_s
    omega = 0.05 * q * nu
    amplitude_Td = 5.0
    a0 = sc.e * amplitude_Td * 1e-21 * N_m3 / sc.m_e
    dc_at_peak = a0 / (q * nu)
    exact = a0 / math.hypot(q * nu, omega)
    r = swarm(Mixture("maxwell", temperature_K=0.0, number_density_m3=N_m3, sets={"maxwell": light}), amplitude_Td,
              seed=4, electrons=512, max_events=2_000_000, precision=1e-9, initial_energy_eV=1.0,
              frequency_Hz=omega / (2 * np.pi), phase_bins=16, ac_method="exact")
    drift = r.phase_resolved["drift_velocity_flux"]
    h = first_harmonic(r.phase, drift.value, drift.stderr)
    # Tolerance: 3 standard errors of the run plus 0.2 % for the bins' correlation (not in the propagated error).
    assert h.amplitude_stderr < 0.01 * h.amplitude
    assert h.amplitude == pytest.approx(exact, rel=3 * h.amplitude_stderr / h.amplitude + 0.002)
    assert h.amplitude == pytest.approx(dc_at_peak, rel=3 * h.amplitude_stderr / h.amplitude + 0.004)
    assert h.lag_rad == pytest.approx(math.atan2(omega, q * nu), abs=3 * h.lag_stderr + 0.005)
    assert abs(h.mean) < 0.02 * h.amplitude  # the cycle average is ~0: why the amplitude is reported
