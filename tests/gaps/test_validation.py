"""Avalanches in gaps against outside references: the Townsend growth law, the Furry distribution, the
Shockley–Ramo charge balance and the quasi-static AC limit.

The model gas is the Lucas–Saelee ionization model (Lucas J & Saelee H T 1975, J. Phys. D 8 640; constant elastic
collision frequency, linear excitation and ionization ramps from 15.6 eV; cold gas), where every check is exact in
its limit and runs in seconds.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import stats

import avalanche as av
from avalanche import Mixture, model_gas
from avalanche.constants import ELEMENTARY_CHARGE_C, TOWNSEND_V_m2

N_m3 = 1e25


def lucas_saelee(F=0.5):
    return Mixture({"lucas-saelee": 1.0}, number_density_m3=N_m3, temperature_K=0,
                   sets={"lucas-saelee": model_gas("lucas-saelee", F=F)})


def plate_voltage(reduced_field_Td, gap_m):
    return reduced_field_Td * TOWNSEND_V_m2 * N_m3 * gap_m


@pytest.mark.slow
def test_townsend_growth_law_between_plates():
    # Townsend J S (1910) The Theory of Ionization of Gases by Collision (Constable): between plates at fixed E/N
    # the mean number of electrons grows as exp((α − η) d) once the electrons have relaxed, so the slope of
    # ln(mean gain) against d is the steady-state Townsend α − η of the same gas and E/N (avalanche.townsend,
    # standard error ~0.3 %). Tolerance 3 % (the issue's), about 3 standard errors of the fitted slope here.
    en = 200.0
    mixture = lucas_saelee()
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", av.PhysicsWarning)
        reference = av.townsend(mixture, en, precision=0.005, sharing="uniform", seed=3)
    alpha_eff = reference.effective_alpha_N.value * N_m3
    gaps = np.array([60e-6, 110e-6, 160e-6])
    primaries = (1500, 1000, 700)
    means, errors = [], []
    for k, (d, n) in enumerate(zip(gaps, primaries, strict=True)):
        r = av.gap(av.ParallelPlates(d), mixture, plate_voltage(en, d), primaries=n, seed=k, sharing="uniform",
                   local_field=False)
        means.append(r.mean_gain.value)
        errors.append(r.mean_gain.relative_stderr)
    y, w = np.log(means), 1.0 / np.square(errors)
    slope, offset = np.polyfit(gaps, y, 1, w=np.sqrt(w))
    equilibration_m = -offset / slope  # where the fitted line crosses ln(gain) = 0: the relaxation offset
    print(f"slope {slope:.5g} /m vs SST alpha_eff {alpha_eff:.5g} /m; equilibration offset {equilibration_m:.3g} m")
    assert slope == pytest.approx(alpha_eff, rel=0.03)
    assert 0 < equilibration_m < gaps[0]


def furry_chi2(gains, minimum_expected=5.0):
    """χ² of integer gains against the geometric law P(n) = (1/n̄)(1 − 1/n̄)^(n−1) with n̄ the sample mean (bins
    n = 1, 2, ... merged from the top so that each expects at least ``minimum_expected``); returns (χ², dof)."""
    n = np.rint(gains).astype(int)
    mean = n.mean()
    p = 1.0 / mean
    top = int(math.floor(math.log(minimum_expected / (n.size * p)) / math.log(1 - p))) + 1
    edges = np.arange(1, top + 1)
    expected = n.size * p * (1 - p) ** (edges - 1)
    observed = np.array([np.sum(n == k) for k in edges], float)
    expected = np.append(expected, n.size * (1 - p) ** top)
    observed = np.append(observed, np.sum(n > top))
    return float(np.sum((observed - expected) ** 2 / expected)), expected.size - 2


def plate_avalanche_sizes(F, mean_energy_eV, alpha_N, primaries, seed, en=200.0, z0=20e-6, mean_gain=6.0):
    """Gains of avalanches between plates in the Lucas–Saelee gas with parameter F at E/N = ``en``, primaries
    started isotropic with the swarm's mean energy at z0, the gap set for a mean gain ``mean_gain``."""
    d = z0 + math.log(mean_gain) / (alpha_N * N_m3)
    r = av.gap(av.ParallelPlates(d), lucas_saelee(F), plate_voltage(en, d), primaries=primaries, seed=seed,
               sharing="uniform", local_field=False, initial_energy_eV=mean_energy_eV,
               initial_direction="isotropic", start_position_m=(0.0, 0.0, z0))
    assert not r.gain_distribution.controlled.any()
    return r.gain_distribution.per_primary


@pytest.mark.slow
def test_furry_distribution_between_plates():
    # Furry W H (1937) Phys. Rev. 52 569: when each electron's chance to ionize per unit path does not depend on its
    # history, the avalanche of one electron has the geometric size distribution P(n) = (1/n̄)(1 − 1/n̄)^(n−1).
    # Legler W (1955) Z. Naturforsch. A 10 1; (1961) Z. Naturforsch. A 16 253 (from memory): real electrons have
    # memory — after an ionization both electrons must regain about U_i/(eE) of path before they ionize again —
    # and the distribution is narrower than Furry's by a relative amount of order α U_i/(eE). For the model of an
    # age-dependent branching process (a dead path δ before an exponential wait) the relative variance falls by
    # ≈ 4 α δ (common practice: second moment of the Bellman–Harris limit, W = e^{−rτ}(W₁ + W₂)). So the law is
    # tested where α U_i/(eE) is small: F = 0.005 (one inelastic event in 200 ionizes), α U_i/(eE) = 0.005.
    # Measured, 1200 primaries each (variance / Furry's n̄(n̄ − 1), whose sampling sd is 0.06; χ² p):
    #   F = 0.005, seeds 1, 2, 3, 11, 12, 13, 14: 0.90, 0.89, 0.98, 0.96, 0.91, 0.97, 0.99; p = 0.39, 0.28, 0.016,
    #     0.78, 0.72, 0.87, 0.84 (mean ratio 0.94 ± 0.02: 2 σ more deficit than the ≈ 2 % expected, not resolved);
    #   F = 0.02 (α U_i/eE = 0.020), the former setting of this test: 0.80, 1.02, 0.98, 0.91, 0.85 (mean 0.91 ±
    #     0.03; p down to 0.004), and 0.93 ± 0.045 with 4000 primaries whatever the start (fresh 0.5 eV forward,
    #     0.92; 100 µm from the cathode, 0.94): not a start-up transient, Legler's memory (≈ 4 α U_i/eE ≈ 8 %);
    #   F = 0.08 (α U_i/eE = 0.072): 0.79, 0.77, 0.92, 0.75, p = 2e-4 … 0.02 (test below).
    # Primaries start in equilibrium (isotropic, the swarm's mean energy, 20 µm into the gap); χ² at the 1 % level
    # with the seed of the former test (not chosen after the fact).
    # Mean energy 14.369 eV and α/N = 6.352e-23 m² (±0.2 %): avalanche.swarm of this gas at 200 Td, precision 1 %.
    gains = plate_avalanche_sizes(0.005, 14.369, 6.352e-23, primaries=1200, seed=11)
    chi2, dof = furry_chi2(gains)
    print(f"n_mean {gains.mean():.4g}, chi2 {chi2:.4g} for {dof} dof")
    assert stats.chi2.sf(chi2, dof) > 0.01


@pytest.mark.slow
def test_avalanches_with_memory_are_narrower_than_furry():
    # Legler (1961, above): with α U_i/(eE) = 0.072 (F = 0.08) the memory after each ionization narrows the size
    # distribution visibly: the variance lies below Furry's n̄(n̄ − 1) by more than 3 sampling standard deviations
    # (the sample variance of a geometric law has relative sd ≈ sqrt(8/N) for n̄ = 6; measured ratio ≈ 0.8), and
    # fewer avalanches stay single (P(1) < 1/n̄). Mean energy 13.986 eV, α/N = 9.23e-22 m²: avalanche.swarm at
    # 200 Td, precision 1 %.
    n = 3000
    gains = plate_avalanche_sizes(0.08, 13.986, 9.23e-22, primaries=n, seed=11)
    mean = gains.mean()
    ratio = gains.var(ddof=1) / (mean * (mean - 1.0))
    print(f"n_mean {mean:.4g}, variance / Furry {ratio:.4f}, P(1) n_mean {np.mean(gains == 1) * mean:.4f}")
    assert ratio < 1.0 - 3.0 * math.sqrt(8.0 / n)
    assert np.mean(gains == 1) * mean < 1.0 - 3.0 * math.sqrt((mean - 1.0) / n)


def test_furry_chi2_rejects_a_narrow_distribution():
    # the χ² check can fail: Pólya gains with θ = 1 (half the relative variance of Furry's) are rejected
    gen = np.random.default_rng(5)
    gains = np.maximum(1, np.rint(gen.gamma(2.0, 3.0, 1200)))
    chi2, dof = furry_chi2(gains)
    assert stats.chi2.sf(chi2, dof) < 1e-3
    geometric = gen.geometric(1 / 6.0, 1200)
    chi2, dof = furry_chi2(geometric)
    assert stats.chi2.sf(chi2, dof) > 0.01


@pytest.mark.parametrize("geometry, start", [
    (av.ConcentricSpheres(100e-6, 2e-3), (0.0, 0.0, 250e-6)),
    (av.PointPlane(50e-6, 2e-3), (0.0, 0.0, 1.85e-3)),
])
def test_induced_charge_balance_in_spheres_and_point_plane(geometry, start):
    # Shockley–Ramo balance as below, for the spherical field and the prolate-spheroidal point–plane field
    mixture = lucas_saelee()
    if isinstance(geometry, av.ConcentricSpheres):
        V = 220 * TOWNSEND_V_m2 * N_m3 * 100e-6 * (1 - 100e-6 / 2e-3)
    else:
        V = 220 * TOWNSEND_V_m2 * N_m3 / geometry.apex_field_V_m(1.0)
    r = av.gap(geometry, mixture, V, primaries=30, seed=2, sharing="uniform", local_field=False,
               start_position_m=start)
    balance = r.charge_balance
    assert r.mean_collected["driven"].value > 1.5
    assert balance["induced_driven_C"] == pytest.approx(balance["expected_driven_C"], rel=1e-3)


def test_induced_charge_balance_in_the_coaxial_gap():
    # Shockley W (1938) J. Appl. Phys. 9 635; Ramo S (1939) Proc. IRE 27 584: the charge induced on an electrode by
    # a moving charge q is −q φ_w, so ∫ I dt over the run equals e Σ (φ_w(end) − φ_w(start)) over the electrons
    # (arrival at the wire counts φ_w = 1, at the tube 0; created electrons start where they are born), and the
    # tube carries the opposite. The current is a quadrature of E_w · dx along the Verlet steps, the balance an
    # exact difference of potentials: they agree to the integrator's accuracy.
    mixture = lucas_saelee()
    a, b = 50e-6, 2e-3
    V = 200 * TOWNSEND_V_m2 * N_m3 * a * math.log(b / a)
    r = av.gap(av.Coaxial(a, b), mixture, V, primaries=40, seed=2, sharing="uniform", local_field=False,
               start_position_m=(3.0 * a, 0.0, 0.0))
    balance = r.charge_balance
    assert r.mean_gain.value > 2
    assert balance["induced_driven_C"] == pytest.approx(balance["expected_driven_C"], rel=1e-3)
    assert balance["induced_grounded_C"] == pytest.approx(balance["expected_grounded_C"], rel=1e-3)
    # and the whole charge reaches the wire: expected ≈ e × (electrons collected − Σ φ_w at birth) > 0
    assert 0 < balance["expected_driven_C"] < ELEMENTARY_CHARGE_C * r.mean_collected["driven"].value
    assert np.sum(r.current["charge_C"]) == pytest.approx(balance["induced_driven_C"], rel=1e-12)


def test_ac_gain_at_a_phase_equals_the_dc_gain():
    # Quasi-static limit (common practice): when the transit time (~0.1 ns here) is a tiny fraction of the period
    # (1 µs), electrons released at phase φ see the constant voltage V0 sin φ, so the mean gain equals the DC gain
    # at that voltage within the runs' standard errors (3 σ).
    mixture = lucas_saelee()
    d = 60e-6
    peak = plate_voltage(250.0, d)
    f = 1e6
    phase = math.radians(53.0)
    ac = av.gap(av.ParallelPlates(d), mixture, peak, primaries=400, seed=4, sharing="uniform", local_field=False,
                frequency_Hz=f, start_time_s=phase / (2 * math.pi * f))
    dc = av.gap(av.ParallelPlates(d), mixture, peak * math.sin(phase), primaries=400, seed=5, sharing="uniform",
                local_field=False)
    full = av.gap(av.ParallelPlates(d), mixture, peak, primaries=400, seed=6, sharing="uniform", local_field=False)
    sigma = math.hypot(ac.mean_gain.stderr, dc.mean_gain.stderr)
    assert abs(ac.mean_gain.value - dc.mean_gain.value) < 3 * sigma
    assert full.mean_gain.value > dc.mean_gain.value + 3 * math.hypot(full.mean_gain.stderr, dc.mean_gain.stderr)


@pytest.mark.slow
def test_coaxial_gain_against_the_local_field_integral():
    # Local-field approximation (Townsend 1910 growth law along the field line, common practice for counters, e.g.
    # Raizer Y P 1991 Gas Discharge Physics §4 — from memory): with a thick wire (gradient length r ≳ 0.5 mm, far
    # above the ~20 µm energy relaxation length of argon at 100–150 Td) the gain is exp(∫ α dr) within 10 % (the
    # issue's tolerance; the α table of avalanche.swarm at 1 % precision adds ~3 % to exp(∫ α dr) here). With a
    # thin wire (a = 10 µm, the same E/N at the wire and at the start) the ratio departs from 1; non-local theory
    # expects it below 1 (electrons lag a rising field). Electrons start isotropic with 5 eV where E/N = 75 Td,
    # below the ionization region, and relax on the way in.
    mixture = av.Mixture("Ar")
    N = mixture.number_density_m3
    en_wire, en_start = 120.0, 75.0
    # α/N [m²] of argon (300 K, 1 atm) from avalanche.swarm at 1 % precision: the package's own table, made by
    # avalanche.gaps.local_field.alpha_table_from_swarm(Mixture("Ar"), (75.0, 120.0), seed=1,
    # precision={"alpha_N": 0.01, "default": 1.0}, max_events=1_000_000_000) with the default argon set (Yanguas-Gil
    # et al. 2005) (several minutes, so stored here; η/N = 0 in argon)
    table = ([62.44897959183675, 87.42857142857144, 122.4], [2.21134093e-22, 5.48549641e-22, 1.17166079e-21])
    ratios = {}
    for name, a, b, primaries in (("thick", 0.5e-3, 5e-3, 150), ("thin", 10e-6, 5e-3, 300)):
        V = en_wire * TOWNSEND_V_m2 * N * a * math.log(b / a)
        r0 = a * en_wire / en_start
        r = av.gap(av.Coaxial(a, b), mixture, V, primaries=primaries, seed=7, start_position_m=(r0, 0.0, 0.0),
                   initial_energy_eV=5.0, initial_direction="isotropic", alpha_table=table)
        ratios[name] = r.local_field_ratio
        print(f"{name} wire: gain {r.mean_gain}, local-field gain {r.local_field_gain:.4g}, ratio "
              f"{r.local_field_ratio}")
    # measured (seed 7): thick 0.980 ± 0.071; thin 0.965 ± 0.008 (gain 1.023 against 1.061), 4.3 σ below 1
    thick, thin = ratios["thick"], ratios["thin"]
    assert abs(thick.value - 1.0) < 0.10 + 2 * thick.stderr
    # the thin wire departs from 1 in the direction non-local theory expects: the electrons running into the
    # steeply rising field lag it (their energy, hence α, stays below the local-field value), so the gain is below
    # exp(∫ α dr) (the non-local, energy-relaxation picture; Raizer 1991 §4 — from memory). A ratio above 1 fails
    # here and must be investigated, not hidden.
    assert thin.value < 1.0 - 3 * thin.stderr
