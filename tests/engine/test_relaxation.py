"""Relaxation that cannot run away: the pilot relaxation of a few electrons per replica, cloned to the ensemble the
budget affords (avalanche.engine.time_of_flight._pilot_check, _leave_pilot; Ensemble.retarget)."""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from test_engine import N_m3, maxwell_exact

from avalanche import ConfigError, Mixture
from avalanche.engine.ensemble import Ensemble
from avalanche.engine.time_of_flight import PILOT_ELECTRONS_PER_REPLICA, make_settings, swarm


def test_retarget_thins_and_clones_with_unbiased_weights():
    ens = Ensemble(make_settings(seed=3, electrons=64, replicas=4))
    before = {tuple(v) for v in np.stack((ens.vx[0, :16], ens.vy[0, :16], ens.vz[0, :16]), axis=1)}
    ens.retarget(5)
    assert ens.count.tolist() == [5] * 4 and ens.lower <= 5 <= ens.upper
    # thinning 16 -> 5: the weight is multiplied by n/target (population control, common practice)
    np.testing.assert_allclose(ens.log_weight, math.log(16 / 5), rtol=1e-14)
    ens.retarget(40)
    assert ens.count.tolist() == [40] * 4 and ens.capacity >= 40
    np.testing.assert_allclose(ens.log_weight, math.log(16 / 5) + math.log(5 / 40), rtol=1e-14)
    # every clone is a copy of an electron the replica had (velocities are carried unchanged)
    after = {tuple(v) for v in np.stack((ens.vx[0, :40], ens.vy[0, :40], ens.vz[0, :40]), axis=1)}
    assert len(after) == 5 and after <= before


def test_pilot_relaxation_reaches_the_exact_maxwell_steady_state():
    # Maxwell model gas (constant collision frequency, M = 4 u, T = 0) started at 1 eV, far above its steady state
    # (about 0.18 eV at 1 Td): relaxing 4096 electrons takes ~3 M/(2m) ≈ 1e4 collisions each, more than the budget
    # allows (sampling would be forced at half of it), so the pilot runs once 20 % of the budget is spent. The
    # result must be the exact steady state: W = eE/(μν) and the Wannier energy ⟨ε⟩ = (m + M) W²/2 (Wannier G H
    # 1953, Bell Syst. Tech. J. 32 170, from memory; maxwell_exact), within 3 standard errors.
    mixture = Mixture("maxwell", temperature_K=0.0, number_density_m3=N_m3)
    result = swarm(mixture, 1.0, seed=4, precision=1e-9, electrons=4096, max_events=4e7, initial_energy_eV=1.0,
                   diffusion_skip=0.02)
    assert result.anomalies["pilot_electrons"] == PILOT_ELECTRONS_PER_REPLICA * 16
    assert result.anomalies["not_relaxed"] == 0 and result.converged, result.convergence_notes
    exact = maxwell_exact(1.0, 0.0)
    for name in ("drift_velocity_flux", "mean_energy_eV", "drift_velocity_bulk"):
        est = getattr(result, name)
        assert abs(est.value - exact[name]) < 3 * est.stderr, (name, est, exact[name])
        assert est.relative_stderr < 0.05, (name, est)  # so that 3 standard errors are a real test


def test_relaxation_pilot_is_a_checked_switch():
    with pytest.raises(ConfigError, match="relaxation_pilot"):
        make_settings(relaxation_pilot="yes")


def test_cheap_relaxation_takes_no_pilot():
    # A small ensemble (at most the pilot's size per replica) relaxes as before: no pilot, results unchanged.
    result = swarm(Mixture("maxwell", temperature_K=0.0, number_density_m3=N_m3), 1.0, seed=1, precision=1e-9,
                   electrons=256, max_events=2e6, initial_energy_eV=0.2, diffusion_skip=0.02)
    assert "pilot_electrons" not in result.anomalies


@pytest.mark.slow
def test_argon_at_1_Td_converges_within_the_default_budget():
    # Issue 13: argon at 1 Td (energy relaxation over ~M/(2m) ≈ 3.6e4 elastic collisions, common practice) used to
    # spend the whole default budget (1e9 events) relaxing and return NaN bulk and diffusion values. With the pilot
    # it relaxes, samples and gives every default quantity finite. To keep the test short: 3e8 events (relaxing the
    # 2048 electrons without the pilot would take ~3 τ_ε ≈ 100 ns, ~1.3e9 events), and the stop test on the mean
    # energy ends the run as soon as position moments exist.
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        result = swarm("Ar", 1.0, seed=2, electrons=2048, replicas=4, max_events=3e8, precision_on="mean_energy_eV",
                       precision=0.05)
    assert result.anomalies["pilot_electrons"] == 4 * PILOT_ELECTRONS_PER_REPLICA
    assert result.anomalies["not_relaxed"] == 0 and result.converged, result.convergence_notes
    assert result.stop_reason == "precision"
    for name in ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "N_D_L_bulk",
                 "N_D_T_bulk", "N_D_L_flux", "N_D_T_flux"):
        assert math.isfinite(result.estimates[name].value), name
