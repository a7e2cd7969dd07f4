"""Validation on the analytic model gases of the swarm benchmark literature.

Only relations that are exact, or published values recalled with confidence, are asserted (each cited, "from
memory" where recalled). Published Reid-ramp transport coefficients and Lucas–Saelee / Ness–Robson tables beyond
these could not be recalled reliably, so they are not asserted here (see the engine report).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc
from test_engine import N_m3, maxwell_exact

from avalanche import Mixture, model_gas
from avalanche.engine.estimators import townsend_coefficient
from avalanche.engine.time_of_flight import swarm

REID_MEAN_ENERGY_12TD_eV = 0.269
"""Reid ramp at 12 Td: 0.269 eV (from memory; Reid I D 1979, Aust. J. Phys. 32 231, Monte Carlo table; Ness K F &
Robson R E 1986, Phys. Rev. A 34 2185, multi-term). Recalled to three figures (±0.2 %) and the published
results agree to a few tenths of a percent (from memory): tolerance 1 % plus three standard errors."""


def _quiet_swarm(mixture, reduced_field_Td, **kw):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return swarm(mixture, reduced_field_Td, precision=1e-9, **kw)


def _agree(a, b, sigmas=3.0):
    """|a − b| within ``sigmas`` combined standard errors (hypot: conservative for positively correlated a, b)."""
    return abs(a.value - b.value) <= sigmas * math.hypot(a.stderr, b.stderr)


def _reid(reduced_field_Td, events):
    mixture = Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25)
    return _quiet_swarm(mixture, reduced_field_Td, seed=11, electrons=16384, max_events=events)


def _assert_flux_equals_bulk(result):
    # Without ionization or attachment flux and bulk transport coefficients are equal (Robson R E 1991, Aust. J.
    # Phys. 44 685: they differ only through non-conservative collisions; from memory).
    for flux, bulk in (("drift_velocity_flux", "drift_velocity_bulk"),
                       ("N_D_L_flux", "N_D_L_bulk"),
                       ("N_D_T_flux", "N_D_T_bulk")):
        assert _agree(getattr(result, flux), getattr(result, bulk)), (flux, getattr(result, flux),
                                                                      getattr(result, bulk))
        assert getattr(result, bulk).relative_stderr < 0.03


def test_reid_ramp_mean_energy_at_12_Td():
    result = _reid(12.0, 1e8)
    est = result.mean_energy_eV
    assert abs(est.value - REID_MEAN_ENERGY_12TD_eV) < 0.01 * REID_MEAN_ENERGY_12TD_eV + 3 * est.stderr
    _assert_flux_equals_bulk(result)
    assert result.anomalies["frequency_above_bound"] == 0
    assert result.inputs["settings"]["precision_on"] == "all"  # the stop rule covers every reported quantity


@pytest.mark.slow
@pytest.mark.parametrize("reduced_field_Td", [1.0, 24.0])
def test_reid_ramp_conservative_relations(reduced_field_Td):
    result = _reid(reduced_field_Td, 1.2e8)
    _assert_flux_equals_bulk(result)
    # The ramp's rate coefficient equals the excitation total (one inelastic process).
    ramp, total = result.rate_coefficients["ramp"], result.excitation_rate_coefficient
    assert ramp.value == pytest.approx(total.value, rel=1e-12, abs=0)


# ---------------------------------------------------------------------------------------- Lucas–Saelee

def _lucas_saelee(F, electrons=2048, events=1.5e8, seed=5, **kw):
    mixture = Mixture("lucas-saelee", temperature_K=0.0, number_density_m3=1e24,
                      sets={"lucas-saelee": model_gas("lucas-saelee", F=F)})
    # Uniform sharing of ε − I between the two electrons, as in the benchmark definition (Ness & Robson 1986,
    # from memory).
    return _quiet_swarm(mixture, 10.0, seed=seed, electrons=electrons, max_events=events, sharing="uniform", **kw)


def test_lucas_saelee_ionization_makes_bulk_drift_faster():
    # Ionization happens at the energetic front of the swarm, so W_bulk > W_flux (Ness K F & Robson R E 1986,
    # Phys. Rev. A 34 2185, Lucas–Saelee tables: the bulk drift exceeds the flux drift, increasingly with F; from
    # memory). At F = 1, 10 Td the difference is ~30 % (this engine), far beyond the errors.
    result = _lucas_saelee(1.0, electrons=1024, events=6e7)
    flux, bulk = result.drift_velocity_flux, result.drift_velocity_bulk
    assert bulk.value - flux.value > 10 * math.hypot(flux.stderr, bulk.stderr)
    assert result.stop_reason == "max_events" and result.inputs["settings"]["precision_on"] == "all"
    # The steady-state Townsend relation with the bulk coefficients exceeds the simple ν/W (D_L α² − W α + ν = 0).
    assert result.alpha_N.value > result.alpha_N_simple.value > 0
    k = result.rate_coefficients_counted["ionization"]
    # the counted per-process rate sums to the counted total; the expected-value estimates (Skullerud 1968: trial
    # events are a Poisson process in time), total and per process, equal the counted ones within the errors
    assert k.value == pytest.approx(result.ionization_rate_coefficient_counted.value, rel=1e-12, abs=0)
    for expected in (result.ionization_rate_coefficient, result.rate_coefficients["ionization"]):
        assert abs(expected.value - k.value) < 3 * math.hypot(expected.stderr, k.stderr)


@pytest.mark.slow
def test_lucas_saelee_trends_with_F(validation_budget):
    # Reduced budget: F = 0 keeps 1e8 events, where the relative standard error of N D_L bulk is ~2.5 %, inside
    # the 3 % that _assert_flux_equals_bulk requires (3.5 % at 5e7); F = 0.5 and 1 run 5e7, where every trend
    # below exceeds its errors many times (measured, seed 5: bulk − flux drift 14 300 ± 860 and 22 800 ± 990 m/s,
    # their difference 6.5 σ; mean energies 5.93, 5.44, 5.13 eV ± 0.017; ionization rates 1.88e-17, 3.40e-17
    # ± 4e-19 m³/s).
    events = {0.0: validation_budget.pick(1.5e8, 1e8), 0.5: validation_budget.pick(1.5e8, 5e7),
              1.0: validation_budget.pick(1.5e8, 5e7)}
    results = {F: _lucas_saelee(F, events=events[F]) for F in (0.0, 0.5, 1.0)}
    # F = 0 is conservative: flux = bulk (Robson 1991).
    _assert_flux_equals_bulk(results[0.0])
    gaps = [results[F].drift_velocity_bulk.value - results[F].drift_velocity_flux.value for F in (0.5, 1.0)]
    assert 0 < gaps[0] < gaps[1]
    # Secondaries start slow: the mean energy falls and the ionization rate grows with F (Ness & Robson 1986,
    # from memory: the trends of their table).
    energies = [results[F].mean_energy_eV.value for F in (0.0, 0.5, 1.0)]
    rates = [results[F].ionization_rate_coefficient.value for F in (0.0, 0.5, 1.0)]
    assert energies[0] > energies[1] > energies[2]
    assert rates[0] == 0 < rates[1] < rates[2]


@pytest.mark.slow
def test_population_control_does_not_bias_a_growing_swarm(validation_budget):
    # Reduced budget 4e7 events per run (measured, seeds 21 and 22: |z| ≤ 2.4 for every quantity below, the
    # growth slopes within 0.2 % of ν_ion − ν_att; 2.3 times more population controls in the tight run).
    events = validation_budget.pick(8e7, 4e7)
    wide = _lucas_saelee(1.0, electrons=1024, events=events, seed=21)
    tight = _lucas_saelee(1.0, electrons=1024, events=events, seed=22, population_bounds=(0.9, 1.12))
    assert tight.anomalies["population_controls"] > 2 * wide.anomalies["population_controls"]
    for name in ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "ionization_rate_coefficient",
                 "N_D_L_bulk", "N_D_T_bulk", "alpha_N"):
        assert _agree(getattr(wide, name), getattr(tight, name), 3.5), name
    # The weights carry the growth: ln(n w) grows at the counted ν_ion − ν_att (exact bookkeeping identity).
    for result in (wide, tight):
        ts = result.time_series
        on = ts["sampling"] == 1
        log_total = ts["log_weight"][on] + np.log(ts["electrons"][on] / 16)
        slope = np.polyfit(ts["time_s"][on], log_total, 1)[0]
        assert slope == pytest.approx(result.effective_ionization_frequency.value, rel=0.02, abs=0)


@pytest.mark.slow
def test_diffusion_windows_do_not_depend_on_the_skip(validation_budget):
    # The position moments are sampled a few energy relaxation times after each reset; doubling that skip must
    # not change the bulk coefficients (the position–energy correlations have built up).
    events = validation_budget.pick(8e7, 4e7)
    short = _lucas_saelee(1.0, electrons=1024, events=events, seed=31)
    long = _lucas_saelee(1.0, electrons=1024, events=events, seed=32, diffusion_skip=8.0, diffusion_segment=2.0)
    for name in ("drift_velocity_bulk", "N_D_L_bulk", "N_D_T_bulk",
                 "N_D_L_flux"):
        assert _agree(getattr(short, name), getattr(long, name), 3.5), name


# ---------------------------------------------------------------------------------------- Ness–Robson

def _ness_robson(a_A2, p, events, electrons=1024, seed=3, **kw):
    mixture = Mixture("ness-robson", temperature_K=0.0, number_density_m3=N_m3,
                      sets={"ness-robson": model_gas("ness-robson", a_A2=a_A2, p=p)})
    return _quiet_swarm(mixture, 1.0, seed=seed, electrons=electrons, max_events=events, initial_energy_eV=0.2, **kw)


def test_constant_attachment_frequency_is_exact():
    # p = −1/2: ν_a = N a √(2e/m) is the same for every electron, so the swarm is the conservative Maxwell swarm
    # times exp(−ν_a t) (Ness K F & Robson R E 1985, Phys. Rev. A 32 2278, from memory; exact): flux = bulk,
    # W, ⟨ε⟩, D_L of the Maxwell model (maxwell_exact), k_att = a √(2e/m), η/N = ν_a/(N W) in the simple form and
    # the steady-state relation with the exact W, D_L in the corrected form. diffusion_skip as for the Maxwell
    # model (test_engine: the position moments relax at the momentum-transfer rate).
    a_A2 = 1e-3
    result = _ness_robson(a_A2, -0.5, 4e7, diffusion_skip=0.02)
    exact = maxwell_exact(1.0, 0.0)
    k_exact = a_A2 * 1e-20 * math.sqrt(2 * sc.e / sc.m_e)
    w, d_l = exact["drift_velocity_bulk"], exact["N_D_L_bulk"] / N_m3
    expected = {"attachment_rate_coefficient": k_exact, "drift_velocity_flux": w, "drift_velocity_bulk": w,
                "mean_energy_eV": exact["mean_energy_eV"], "N_D_L_bulk": exact["N_D_L_bulk"],
                "eta_N_simple": k_exact / w,
                "eta_N": -float(townsend_coefficient(w, d_l, -N_m3 * k_exact)) / N_m3}
    for name, value in expected.items():
        est = getattr(result, name)
        assert abs(est.value - value) < 3 * est.stderr, (name, est, value)
    assert result.anomalies["population_controls"] > 0
    assert result.alpha_N.value == 0.0


@pytest.mark.slow
def test_attachment_growing_with_energy_cools_and_slows_the_bulk(validation_budget):
    # p = +1/2: attachment removes the fast electrons at the front, so the mean energy falls below the
    # conservative value ("attachment cooling") and W_bulk < W_flux (Ness & Robson 1985, Phys. Rev. A 32 2278,
    # from memory: the signs of their attachment-induced differences for p > −1/2).
    # Reduced budget 6e7 events per run: the two differences stand 22 and 17 standard errors out (measured, seed
    # 3), still above the 10 required (3e7 events gave 9.8 and 8.6: the relaxation is a fixed cost).
    events = validation_budget.pick(1e8, 6e7)
    result = _ness_robson(5e-3, 0.5, events)
    conservative = maxwell_exact(1.0, 0.0)
    energy = result.mean_energy_eV
    assert conservative["mean_energy_eV"] - energy.value > 10 * energy.stderr
    flux, bulk = result.drift_velocity_flux, result.drift_velocity_bulk
    assert flux.value - bulk.value > 10 * math.hypot(flux.stderr, bulk.stderr)
    assert result.N_D_L_bulk.value < result.N_D_L_flux.value
    # Population control keeps a decaying swarm alive and does not bias it.
    tight = _ness_robson(5e-3, 0.5, events, seed=4, population_bounds=(0.9, 1.12))
    for name in ("mean_energy_eV", "drift_velocity_bulk", "attachment_rate_coefficient"):
        assert _agree(getattr(result, name), getattr(tight, name), 3.5), name
