"""Estimators on synthetic tallies with known answers, and the result's JSON and table forms."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

from avalanche.engine.estimators import (
    EstimatorContext,
    energy_distribution,
    estimate,
    rate_coefficients,
    swarm_estimates,
    townsend_coefficient,
)
from avalanche.engine.results import ESTIMATES
from avalanche.engine.tallies import SwarmTallies, combine

R, P, B = 4, 3, 50
N = 2e24
FIELD = 100e-21 * N  # 100 Td


def _context():
    return EstimatorContext(number_density_m3=N, field_V_m=FIELD, process_keys=("el", "ion", "att"),
                            process_kinds=("elastic", "ionization", "attachment"),
                            target_density_m3=np.full(P, N), energy_edges_eV=np.linspace(0, 10, B + 1))


def _tallies():
    t = SwarmTallies.zeros(R, P, B)
    a = t.arrays
    a["events"][:] = 1000
    a["event_weights"][:] = 1000.0
    a["energy_sum_eV"][:] = [4000.0, 4100.0, 3900.0, 4000.0]
    a["vz_sum"][:] = 1e8
    a["exposure_s"][:] = 1e-6
    a["process_counts"][:] = [[5000, 30, 10]] * R
    a["expected_process_counts"][:] = [[5000.0, 30.0, 10.0]] * R  # equal to the counts: both estimators agree
    a["mature_events"][:] = 1000
    a["mature_event_weights"][:] = 1000.0
    a["mature_vz_sum"][:] = 1e8
    a["mature_time_s"][:] = 1e-7
    a["z_mean_increment_m"][:] = 1e5 * 1e-7          # W_bulk = 1e5 m/s
    a["z_var_increment_m2"][:] = 2 * 0.1 * 1e-7       # D_L = 0.1 m²/s
    a["xy_var_increment_m2"][:] = 4 * 0.2 * 1e-7      # D_T = 0.2 m²/s
    a["mature_zvz_sum"][:] = 1000 * 0.3               # flux D_L = 0.3 with <z> = 0
    a["mature_xyv_sum"][:] = 1000 * 2 * 0.4           # flux D_T = 0.4
    a["eedf_counts"][:, :] = 20
    return t


def test_estimate_is_mean_and_standard_error_of_replicas():
    e = estimate(np.array([1.0, 2.0, 3.0, 4.0]))
    assert e.value == 2.5
    assert e.stderr == pytest.approx(np.std([1, 2, 3, 4], ddof=1) / 2)
    assert math.isnan(estimate(np.array([1.0, np.nan])).value)


def test_townsend_coefficient_solves_the_steady_state_relation():
    # α is the root of D_L α² − W α + ν = 0 (the steady-state growth equation, e.g. Robson 1991 Aust. J. Phys. 44
    # 685, from memory) that tends to ν/W as D_L → 0.
    w, d, nu = 1e5, 0.1, 2e7
    alpha = float(townsend_coefficient(w, d, nu))
    assert d * alpha ** 2 - w * alpha + nu == pytest.approx(0.0, abs=1e-9 * nu)
    assert alpha == pytest.approx((w - math.sqrt(w * w - 4 * d * nu)) / (2 * d), rel=1e-12)
    assert float(townsend_coefficient(w, 0.0, nu)) == nu / w
    assert float(townsend_coefficient(w, d, 0.0)) == 0.0
    assert -nu / w < float(townsend_coefficient(w, d, -nu)) < 0  # attachment: |η| below ν/W
    assert math.isnan(float(townsend_coefficient(w, d, w * w / d)))  # no steady state


def test_swarm_estimates_of_synthetic_tallies():
    est = swarm_estimates(_tallies(), _context())
    assert set(est) == {name for name, _, _ in ESTIMATES}
    assert est["mean_energy_eV"].value == pytest.approx(4.0)
    assert est["mean_energy_eV"].stderr == pytest.approx(np.std([4.0, 4.1, 3.9, 4.0], ddof=1) / 2)
    assert est["drift_velocity_flux"].value == pytest.approx(1e5)
    assert est["drift_velocity_bulk"].value == pytest.approx(1e5)
    assert est["N_D_L_bulk"].value == pytest.approx(0.1 * N)
    assert est["N_D_T_bulk"].value == pytest.approx(0.2 * N)
    assert est["N_D_L_flux"].value == pytest.approx(0.3 * N)
    assert est["N_D_T_flux"].value == pytest.approx(0.4 * N)
    nu_ion, nu_att = 30 / 1e-6, 10 / 1e-6
    assert est["ionization_rate_coefficient"].value == pytest.approx(nu_ion / N)
    assert est["ionization_rate_coefficient_counted"].value == pytest.approx(nu_ion / N)
    assert est["attachment_rate_coefficient_counted"].value == pytest.approx(nu_att / N)
    assert est["effective_ionization_frequency"].value == pytest.approx(nu_ion - nu_att)
    assert est["alpha_N_simple"].value == pytest.approx(nu_ion / (N * 1e5))
    assert est["alpha_N"].value == pytest.approx(float(townsend_coefficient(1e5, 0.1, nu_ion)) / N)
    assert est["eta_N"].value == pytest.approx(-float(townsend_coefficient(1e5, 0.1, -nu_att)) / N)
    assert 0 < est["eta_N"].value < est["eta_N_simple"].value
    assert est["N_mu"].value == pytest.approx(1e5 * N / FIELD)
    # D_T/μ in volts is the characteristic energy in eV.
    assert est["characteristic_energy_eV"].value == pytest.approx(0.2 * FIELD / 1e5)
    k = rate_coefficients(_tallies(), _context())
    assert k["el"].value == pytest.approx(5000 / (N * 1e-6))


def test_eedf_is_normalised():
    t = _tallies()
    t.arrays["eedf_counts"][:, :] = np.arange(B)[None, :] + 1
    t.arrays["events"][:] = t.arrays["eedf_counts"].sum(axis=1)
    t.arrays["event_weights"][:] = t.arrays["eedf_counts"].sum(axis=1)
    f = energy_distribution(t, _context())
    edges = f.energy_edges_eV
    assert np.sum(f.value * (2 / 3) * (edges[1:] ** 1.5 - edges[:-1] ** 1.5)) == pytest.approx(1.0)
    assert f.overflow_fraction == 0.0
    assert f.energy_eV.shape == (B,)


def test_tallies_merge_by_addition_and_stacking():
    a, b = _tallies(), _tallies()
    both = combine([a, b])
    assert both.replicas == 2 * R
    a.accumulate(b)
    assert a["events"][0] == 2000
    assert swarm_estimates(a, _context())["mean_energy_eV"].value == pytest.approx(4.0)


def test_result_forms(tmp_path):
    from avalanche import Mixture
    from avalanche.engine.time_of_flight import swarm

    r = swarm(Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25), 12.0, electrons=512,
              max_events=3e6, seed=2)
    data = json.loads(json.dumps(r.to_dict()))
    assert data["mean_energy_eV"] == {"value": r.mean_energy_eV.value, "stderr": r.mean_energy_eV.stderr}
    assert data["processes"] == {"rate_coefficient_momentum_transfer": "momentum transfer",
                                 "rate_coefficient_ramp": "ramp"}
    assert data["rate_coefficient_ramp"]["value"] == r.rate_coefficients["ramp"].value
    assert data["units"]["alpha_N"] == "m^2" and data["units"]["rate_coefficient_ramp"] == "m^3/s"
    table = r.format_table()
    assert "mean energy" in table and "eV" in table and "±" in table and "rate coefficient k of ramp" in table
    assert "rate_coefficient_ramp" in table and "mean_energy_eV" in table
    assert r.stop_reason in ("precision", "max_events")
