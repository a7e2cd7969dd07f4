"""The swarm engine: analytic Maxwell-model results, argument checks, determinism, population control, grid
adaptation."""

from __future__ import annotations

import math
import warnings

import numba
import numpy as np
import pytest
import scipy.constants as sc

from avalanche import ConfigError, Mixture, model_gas
from avalanche.engine.time_of_flight import swarm

N_m3 = 1e23
MAXWELL_RATE_m3_s = 1e-19 * math.sqrt(2 * sc.e / sc.m_e)
"""σ_m v of the Maxwell model gas, σ_m = 10 ε^-1/2 Å² (ε in eV): 1e-19 m² √(2e/m) [m³/s] (analytic)."""


def maxwell_exact(reduced_field_Td: float, temperature_K: float, mass_amu: float = 4.0) -> dict:
    """Exact swarm parameters of the Maxwell model (constant collision frequency ν, isotropic elastic scattering).

    With ν independent of speed, the moment equations close (momentum-transfer theory is exact; e.g. Robson R E
    2006, Introductory Transport Theory for Charged Particles in Gases, World Scientific, ch. on the Maxwell
    model; Wannier G H 1953, Bell Syst. Tech. J. 32 170 — from memory). With p = m/(m+M), q = M/(m+M),
    s = kT/M and a target Maxwellian, the stationary moments are
      W = eE/(m q ν)  (= eE/(μν)),        ⟨v²⟩ = W²/p + 3 q s/p  (Wannier: ⟨ε⟩ = 3kT/2 + (m + M) W²/2),
      ⟨v_x²⟩ (1 − p²) = q² (2 s + ⟨v²⟩/3),  ⟨v_z²⟩ = ⟨v²⟩ − 2 ⟨v_x²⟩,
    and the equation for ⟨z v_z⟩ − ⟨z⟩W gives D_T = ⟨v_x²⟩/(q ν), D_L = (⟨v_z²⟩ − W²)/(q ν).
    """
    m, M = sc.m_e, mass_amu * sc.atomic_mass
    p, q, s = m / (m + M), M / (m + M), sc.k * temperature_K / M
    nu = N_m3 * MAXWELL_RATE_m3_s
    field = reduced_field_Td * 1e-21 * N_m3
    w = sc.e * field / (m * q * nu)
    v2 = w * w / p + 3 * q * s / p
    vx2 = q * q * (2 * s + v2 / 3) / (1 - p * p)
    vz2 = v2 - 2 * vx2
    return {"drift_velocity_flux": w, "drift_velocity_bulk": w, "mean_energy_eV": 0.5 * m * v2 / sc.e,
            "N_D_T_flux": N_m3 * vx2 / (q * nu), "N_D_T_bulk": N_m3 * vx2 / (q * nu),
            "N_D_L_flux": N_m3 * (vz2 - w * w) / (q * nu),
            "N_D_L_bulk": N_m3 * (vz2 - w * w) / (q * nu)}


def test_maxwell_exact_reproduces_wannier():
    # Self-consistency of the formulas above: ⟨ε⟩ = 3kT/2 + (m + M) W²/2 (Wannier 1953, from memory).
    ex = maxwell_exact(1.0, 300.0)
    w = ex["drift_velocity_flux"]
    wannier = 1.5 * sc.k * 300.0 / sc.e + 0.5 * (sc.m_e + 4 * sc.atomic_mass) * w * w / sc.e
    assert ex["mean_energy_eV"] == pytest.approx(wannier, rel=1e-12, abs=0)


def _maxwell_run(reduced_field_Td, temperature_K, max_events, electrons, **kw):
    mixture = Mixture("maxwell", temperature_K=temperature_K, number_density_m3=N_m3)
    # diffusion_skip: for the Maxwell model ⟨z v_z⟩ − ⟨z⟩W relaxes at the momentum-transfer rate qν ≈ ν (its
    # moment equation closes, see maxwell_exact), so 0.02 energy relaxation times (~70 collisions) suffice.
    return swarm(mixture, reduced_field_Td, seed=kw.pop("seed", 1), precision=1e-9, electrons=electrons,
                 max_events=max_events, diffusion_skip=0.02, **{"initial_energy_eV": 0.2, **kw})


def test_maxwell_model_drift_and_energy_quick():
    result = _maxwell_run(1.0, 0.0, 3e7, 1024)
    exact = maxwell_exact(1.0, 0.0)
    for name in ("drift_velocity_flux", "mean_energy_eV"):
        est = getattr(result, name)
        assert abs(est.value - exact[name]) < 3 * est.stderr, (name, est, exact[name])
    # Rate coefficient of the only process: σ_m v, exact and energy independent (analytic).
    k = result.rate_coefficients["momentum transfer"]
    assert abs(k.value - MAXWELL_RATE_m3_s) < 3 * k.stderr + 1e-9 * MAXWELL_RATE_m3_s
    assert result.anomalies["frequency_above_bound"] == 0
    assert result.inputs["settings"]["precision_on"] == "all"  # DC "auto": the stop rule tests every quantity


@pytest.mark.slow
def test_maxwell_model_is_exact_at_finite_temperature():
    # Issue acceptance test: drift velocity eE/(μν) and the Wannier mean energy within 3 standard errors and 1 %;
    # the four diffusion coefficients against the exact moment solution (maxwell_exact) likewise.
    result = _maxwell_run(1.0, 293.0, 4e8, 4096)
    exact = maxwell_exact(1.0, 293.0)
    for name, value in exact.items():
        est = getattr(result, name)
        diffusion = "diffusion" in name
        assert abs(est.value - value) < 3 * est.stderr, (name, est, value)
        assert abs(est.value - value) < (0.02 if diffusion else 0.01) * value, (name, est, value)
        # (the run is long enough that the percent tolerance is a real test: it exceeds two standard errors)
        assert est.stderr < (0.01 if diffusion else 0.005) * value, (name, est)


def test_screened_coulomb_preserves_momentum_transfer():
    # With σ_T = σ_m / <1 - cos χ> the momentum-transfer frequency of the Maxwell model stays constant, so
    # W = eE/(μν_m) and (T = 0) the Wannier energy stay exact for any angular distribution (momentum and energy
    # loss per collision are ∝ (1 - cos χ): Huxley & Crompton 1974, ch. 2, from memory). At 1 Td, ⟨ε⟩ ≈ 0.18 eV,
    # ξ ≈ 0.42 and σ_m/σ_T ≈ 0.71 at the mean energy, falling to ≈ 0.3 at the top of the grid.
    result = _maxwell_run(1.0, 0.0, 5e7, 512, scattering="screened-coulomb")
    assert result.anomalies["not_relaxed"] == 0
    exact = maxwell_exact(1.0, 0.0)
    for name in ("drift_velocity_flux", "mean_energy_eV"):
        est = getattr(result, name)
        assert abs(est.value - exact[name]) < 3 * est.stderr, (name, est, exact[name])
    # The real collision frequency is the total one, σ_T v > σ_m v.
    assert result.collision_frequency.value > 1.3 * N_m3 * MAXWELL_RATE_m3_s


# --------------------------------------------------------------------------------------------- arguments

REID = Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25)


@pytest.mark.parametrize("kwargs, word", [
    ({"sharing": "half"}, "sharing"), ({"scattering": "forward"}, "scattering"), ({"precision": -1}, "precision"),
    ({"electrons": 10}, "electrons"), ({"replicas": 1}, "replicas"), ({"max_events": 0}, "max_events"),
    ({"seed": -3}, "seed"), ({"precision_on": "alpha"}, "precision_on"), ({"electorns": 100}, "electrons"),
    ({"population_bounds": (1.2, 2.0)}, "population_bounds"), ({"energy_cells": 10}, "energy_cells"),
])
def test_bad_arguments_are_named(kwargs, word):
    with pytest.raises(ConfigError, match=word):
        swarm(REID, 12.0, **kwargs)


def test_bad_field_is_named():
    with pytest.raises(ConfigError, match="reduced_field_Td"):
        swarm(REID, -5.0)


def test_missing_opb_parameter_falls_back_with_a_warning():
    mixture = Mixture("lucas-saelee", temperature_K=0.0, number_density_m3=1e24)
    with pytest.warns(Warning, match="opb_w_eV"):
        swarm(mixture, 100.0, electrons=64, max_events=20000)


# ------------------------------------------------------------------------------------------- determinism

def _small(seed=4, **kw):
    mixture = Mixture("lucas-saelee", temperature_K=300.0, number_density_m3=1e24,
                      sets={"lucas-saelee": model_gas("lucas-saelee", F=1.0)})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return swarm(mixture, 300.0, seed=seed, electrons=kw.pop("electrons", 512), max_events=kw.pop("events", 3e6),
                     sharing="uniform", precision=1e-9, **kw)


def _same(a, b):
    for name in a.tallies.arrays:
        np.testing.assert_array_equal(a.tallies[name], b.tallies[name], err_msg=name)
    da, db = a.to_dict(), b.to_dict()
    for d in (da, db):
        d.pop("cpu_seconds"), d.pop("wall_seconds"), d["inputs"].pop("threads")
    assert da == db


def test_same_seed_gives_identical_results_for_any_thread_count():
    threads = numba.get_num_threads()
    try:
        numba.set_num_threads(1)
        one = _small()
        numba.set_num_threads(min(2, numba.config.NUMBA_NUM_THREADS))
        two = _small()
    finally:
        numba.set_num_threads(threads)
    _same(one, two)
    assert one.events == two.events > 0
    assert one.tallies["process_counts"][:, -1].sum() > 0  # it really ionized


def test_different_seeds_agree_within_errors():
    a, b = _small(seed=1), _small(seed=2)
    assert a.mean_energy_eV.value != b.mean_energy_eV.value
    for name in ("mean_energy_eV", "drift_velocity_flux", "ionization_rate_coefficient"):
        ea, eb = getattr(a, name), getattr(b, name)
        assert abs(ea.value - eb.value) < 3.5 * math.hypot(ea.stderr, eb.stderr), name


def test_tuple_seeds_give_independent_streams():
    a, b = _small(seed=(7, 0), events=3e5), _small(seed=(7, 1), events=3e5)
    assert a.tallies["energy_sum_eV"][0] != b.tallies["energy_sum_eV"][0]
    assert a.inputs["seed"] == (7, 0)


# ------------------------------------------------------------------------------------------ grid and store

def test_energy_grid_grows_without_losing_events():
    # A grid far too small at the start: chunks are redone on doubled grids, no event beyond the grid is kept,
    # and the result agrees with a run on the default grid.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        small = swarm(REID, 12.0, seed=2, electrons=2048, max_events=2e7, precision=1e-9, energy_max_eV=0.05,
                      initial_energy_eV=0.3)
        default = swarm(REID, 12.0, seed=3, electrons=2048, max_events=2e7, precision=1e-9)
    assert small.anomalies["energy_grid_doublings"] >= 3
    assert small.anomalies["redone_chunks"] >= small.anomalies["energy_grid_doublings"]
    assert small.anomalies["frequency_above_bound"] == 0
    for name in ("mean_energy_eV", "drift_velocity_flux"):
        a, b = getattr(small, name), getattr(default, name)
        assert abs(a.value - b.value) < 3.5 * math.hypot(a.stderr, b.stderr), name


def test_population_control_keeps_the_ensemble_bounded():
    result = _small(events=3e6)
    assert result.anomalies["population_controls"] > 0
    target = 512 // 16
    # (after the first chunks, whose length is set before the growth rate is known)
    electrons = result.time_series["electrons"][4:]
    assert electrons.max() <= 16 * 1.5 * 1.4 * target
    # The weights carry the growth: d ln(n × weight)/dt is the net production frequency ν_eff.
    assert result.time_series["log_weight"][-1] > 0


def test_threads_argument_is_checked_and_restored():
    before = numba.get_num_threads()
    result = swarm(REID, 12.0, electrons=256, max_events=2e5, threads=1)
    assert result.inputs["threads"] == 1
    assert numba.get_num_threads() == before
    with pytest.raises(ConfigError, match="threads"):
        swarm(REID, 12.0, threads=0)


def test_collisions_beyond_the_tables_are_warned_about():
    # A set whose tables stop at 2 eV, run where electrons reach tens of eV: the extrapolated fraction is
    # reported and warned about (STYLE: PhysicsWarning when a model is used outside its validity).
    from avalanche import PhysicsWarning, make_set, process_from_table

    elastic = process_from_table([[0.0, 5e-20], [2.0, 5e-20]], kind="elastic", label="elastic", threshold_eV=0.0)
    short = make_set("short", mass_amu=4.0, processes=[elastic])
    mixture = Mixture("short", temperature_K=0.0, number_density_m3=1e24, sets={"short": short})
    with pytest.warns(PhysicsWarning, match="beyond the end of their cross-section table"):
        result = swarm(mixture, 30.0, electrons=256, max_events=3e6)
    assert result.extrapolated_fraction > 0.5


def test_extrapolation_notice_counts_the_share_beyond_the_tables():
    # Arithmetic of the shared notice (time-of-flight and steady-state Townsend runs): 2 replicas, 3 processes;
    # 30 of 1000 real collisions (3 %) beyond their tables is above the 1 % bar, 5 of 1000 is not.
    from avalanche.engine.tables import EXTRAPOLATION_WARNING, extrapolation_notice

    counts = np.array([[400, 90, 10], [400, 90, 10]])
    beyond = np.array([[0, 5, 10], [0, 5, 10]])
    notice = extrapolation_notice("E/N = 50 Td", beyond, counts, ["elastic", "vib", "ion"])
    assert EXTRAPOLATION_WARNING == 0.01
    assert notice.startswith("E/N = 50 Td: 3 % of the collisions") and "'ion' (2 %), 'vib' (1 %)" in notice
    assert "'elastic'" not in notice
    assert extrapolation_notice("x", np.array([[0, 5, 0]]), np.array([[900, 90, 10]]), ["a", "b", "c"]) is None
