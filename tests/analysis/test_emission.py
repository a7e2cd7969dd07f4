"""Emission estimate: photon energies from scipy.constants, direct-excitation rates, phase-resolved emission.

References: E = h c / λ with CODATA constants from scipy.constants; argon's resonance lines 1s4 → ground
(106.67 nm) and 1s2 → ground (104.82 nm) carry the whole excitation energy of their levels, 11.624 eV and
11.828 eV (NIST Atomic Spectra Database — from memory).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.analysis.emission import (
    APPROXIMATION_NOTE,
    emission_estimate,
    phase_resolved_emission,
    radiating_levels,
)
from avalanche.analysis.tables import SwarmTable
from avalanche.errors import ConfigError, PhysicsWarning
from avalanche.gas.crosssections import Process, make_set
from avalanche.gas.mixture import Mixture
from avalanche.store.sweep_file import open_results


def test_photon_energies_follow_scipy_constants():
    levels = radiating_levels(Mixture({"Ar": 0.5, "N2": 0.5}))
    assert {level.key for level in levels} >= {"N2:C3Pi_u", "Ar:1s4 (3p5 4s [3/2]1, resonant)"}
    for level in levels:
        expected = sc.h * sc.c / (level.wavelength_nm * 1e-9) / sc.e  # E = h c / λ, CODATA via scipy.constants
        assert level.photon_energy_eV == pytest.approx(expected, rel=1e-14)
        assert level.photon_energy_eV <= level.threshold_eV * 1.01


def test_argon_resonance_lines_carry_the_level_energy():
    # A resonance line ends on the ground state: h c / λ equals the level's energy (NIST ASD, from memory:
    # 1s4 11.624 eV at 106.67 nm, 1s2 11.828 eV at 104.82 nm; the data files give λ to 0.01 nm, i.e. 1e-4).
    for level in radiating_levels(Mixture("Ar")):
        assert "resonant" in level.label
        assert level.photon_energy_eV == pytest.approx(level.threshold_eV, rel=2e-4)


def _one_level_set(wavelength_nm: float):
    energy = np.array([0.0, 10.0, 100.0])
    processes = (
        Process("elastic", "momentum transfer", 0.0, energy, np.full(3, 1e-20), source="test data"),
        Process("excitation", "level", 10.0, energy, np.array([0.0, 0.0, 1e-21]), source="test data",
                wavelength_nm=wavelength_nm),
    )
    return make_set("testium", mass_amu=40.0, processes=processes, provenance={"sources": ["test data"]})


def test_a_photon_above_the_excitation_energy_is_flagged():
    # 10 eV excitation: h c / λ > 10 eV for λ < 123.98 nm (scipy.constants), so 100 nm contradicts the threshold.
    with pytest.warns(PhysicsWarning, match="wavelength_nm=100.*more than its threshold_eV=10"):
        radiating_levels(Mixture({"testium": 1.0}, sets={"testium": _one_level_set(100.0)}))
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        radiating_levels(Mixture({"testium": 1.0}, sets={"testium": _one_level_set(130.0)}))


def test_emission_is_fraction_times_rate(outputs_results):  # noqa: F811
    table = SwarmTable.from_results(open_results(outputs_results), mixture="Ar:0.5,N2:0.5")
    levels = radiating_levels(table.build_mixture())
    k = int(np.argmax(table.reduced_field_Td))
    rates = {key: (table.rate(key)[0][k], table.rate(key)[1][k]) for key in table.rate_keys}
    estimate = emission_estimate(levels, rates, float(table.reduced_field_Td[k]))
    assert np.all(np.diff(estimate.wavelength_nm) > 0)
    for j, level in enumerate(estimate.levels):
        value, error = rates[level.key]
        assert estimate.emission_coefficient_m3_s[j] == 0.5 * value
        assert estimate.emission_coefficient_stderr[j] == 0.5 * error
    assert np.nanmax(estimate.relative_rate) == 1.0
    power = estimate.emission_coefficient_m3_s * estimate.photon_energy_eV
    np.testing.assert_allclose(estimate.relative_power, power / power.max(), rtol=1e-14)
    text = estimate.format_table()
    assert APPROXIMATION_NOTE in text and "no cascades" in text and "no collisional quenching" in text
    assert estimate.to_dict()["note"] == APPROXIMATION_NOTE
    with pytest.raises(ConfigError, match="no rate coefficient for radiating level"):
        emission_estimate(levels, {}, 100.0)


def test_phase_resolved_emission():
    levels = radiating_levels(Mixture({"Ar": 0.25, "N2": 0.75}))
    phase = (np.arange(8) + 0.5) * 2 * math.pi / 8
    rates = {level.key: ((1.0 + j) * (1.0 + np.sin(phase)), np.full(8, 0.1)) for j, level in enumerate(levels)}
    resolved = phase_resolved_emission(levels, phase, rates, frequency_Hz=13.56e6)
    assert resolved.emission_coefficient_m3_s.shape == (len(levels), 8)
    assert np.nanmax(resolved.relative_rate) == 1.0
    average = resolved.cycle_average()
    for j, level in enumerate(resolved.levels):
        # the mean of 1 + sin over equal bins of a whole period is 1 (analytic)
        assert average.emission_coefficient_m3_s[j] == pytest.approx(level.fraction * (1.0 + levels.index(level)))
        assert average.emission_coefficient_stderr[j] == pytest.approx(level.fraction * 0.1 / math.sqrt(8))
    with pytest.raises(ConfigError, match="one value per phase bin"):
        phase_resolved_emission(levels, phase[:4], rates)
