"""Kernel rows of derived processes: superelastic pairs (detailed balance in the swarm), population weights and
named third bodies of three-body attachment (:class:`avalanche.engine.tables.ProcessTable`)."""

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy import constants as sc

from avalanche import Mixture
from avalanche import kernels as K
from avalanche.engine.tables import ProcessTable
from avalanche.engine.time_of_flight import swarm
from avalanche.gas.crosssections import make_set, process_from_table
from avalanche.gas.library import _gas_process

DELTA_eV = 0.1


def _excitation_m2(energy_eV):
    # sigma_exc = 50 (e - Δ)/e Å²: zero at the threshold, so sigma_sup = (g0/g1) 50 Å² is finite at 0 eV
    energy = np.asarray(energy_eV, dtype=float)
    return np.where(energy > DELTA_eV, 5e-19 * (energy - DELTA_eV) / np.maximum(energy, 1e-300), 0.0)


def two_level_gas(superelastic: bool = True):
    """Elastic with a constant collision frequency (σ ∝ 1/v: exact with any target sampling) and one level pair."""
    elastic = _gas_process("elastic", "momentum transfer", 0.0,
                           lambda e: 3e-20 / np.sqrt(np.maximum(np.asarray(e, float), 1e-300)), "model")
    pair = replace(_gas_process("excitation", "pair", DELTA_eV, _excitation_m2, "model", extrapolation="constant"),
                   superelastic=superelastic, statistical_weights=(1.0, 3.0), level_type="vibrational",
                   initial_state="lower", final_state="upper")
    return make_set("two-level", mass_amu=4.0, processes=(elastic, pair), provenance={"sources": ["model"]})


def test_superelastic_row_gains_the_level_energy():
    mixture = Mixture({"two-level": 1.0}, sets={"two-level": two_level_gas()}, temperature_K=1000.0,
                      number_density_m3=1e24)
    table = ProcessTable.build(mixture, "equal", "isotropic")
    assert table.kinds == ("elastic", "excitation", "superelastic")
    assert table.action[2] == K.ACTION_EXCITATION and table.loss_eV[2] == -DELTA_eV
    # Boltzmann populations of the pair (g1/g0 = 3): the rows' density factors
    ratio = 3.0 * math.exp(-DELTA_eV * sc.e / (sc.k * 1000.0))
    assert table.density_factor[1] == pytest.approx(1.0 / (1.0 + ratio), rel=1e-12)
    assert table.density_factor[2] == pytest.approx(ratio / (1.0 + ratio), rel=1e-12)


@pytest.mark.parametrize("superelastic", [True, False])
def test_two_level_gas_relaxes_to_the_gas_temperature(superelastic):
    # Detailed balance (Klein & Rosseland 1921): with elastic collisions and one excitation/de-excitation pair, the
    # field-free stationary EEDF is the Maxwellian at the gas temperature, mean energy 3/2 kT exactly. 1e-4 Td
    # heats by M W²/2 ~ 1e-8 eV, negligible. Without the de-excitation the electrons cool well below 3/2 kT,
    # so the check has power to fail.
    temperature = 1000.0
    mixture = Mixture({"two-level": 1.0}, sets={"two-level": two_level_gas(superelastic)},
                      temperature_K=temperature, number_density_m3=1e24)
    result = swarm(mixture, 1e-4, seed=3, electrons=2048, precision=0.006, max_events=6e6)
    expected = 1.5 * sc.k * temperature / sc.e
    mean = result.mean_energy_eV
    if superelastic:
        assert mean.relative_stderr < 0.01
        assert mean.value == pytest.approx(expected, abs=4 * mean.stderr)
    else:
        assert mean.value < 0.5 * expected


def test_three_body_partner_is_named():
    elastic = process_from_table([[0.0, 1.0], [10.0, 1.0]], kind="elastic", label="m", threshold_eV=0.0,
                                 cross_section_unit="A2")
    attach = process_from_table([[0.0, 1.0], [10.0, 1.0]], kind="attachment", label="3b", threshold_eV=0.0,
                                cross_section_unit="A2", three_body=True, reference_density_m3=1e6)
    sets = {}
    for partner in ("", "*", "B", "C"):
        proc = replace(attach, third_body=partner)
        sets[partner or "self"] = make_set("A", mass_amu=4.0, processes=(elastic, proc))
    b = make_set("B", mass_amu=4.0, processes=(elastic,))
    density = 1e24
    factors = {}
    for key, xs in sets.items():
        mixture = Mixture({"A": 0.25, "B": 0.75}, sets={"A": xs, "B": b}, number_density_m3=density)
        table = ProcessTable.build(mixture, "equal", "isotropic")
        factors[key] = table.density_factor[table.keys.index("A:3b")]
    assert factors["self"] == pytest.approx(0.25 * density / 1e6)   # the species itself (default)
    assert factors["*"] == pytest.approx(density / 1e6)             # the whole gas
    assert factors["B"] == pytest.approx(0.75 * density / 1e6)      # a named species of the mixture
    assert factors["C"] == 0.0                                      # a partner absent from the mixture


def test_vibrationally_hot_nitrogen_heats_the_electrons():
    # Superelastic collisions with vibrationally excited N2 raise the mean energy at low E/N (common practice:
    # electrons in a vibrationally excited nitrogen plasma gain energy from the vibrations). Same seed, 30 Td, where
    # the 2Pi_g resonance of v=0-1 lies inside the EEDF.
    budget = dict(seed=5, electrons=1024, precision=0.01, max_events=4e6)
    cold = swarm(Mixture("N2", pressure_Pa=1000.0), 30.0, **budget).mean_energy_eV
    hot = swarm(Mixture("N2", pressure_Pa=1000.0, vibrational_temperature_K=3000.0), 30.0, **budget).mean_energy_eV
    assert hot.value - cold.value > 3 * math.hypot(hot.stderr, cold.stderr)
