"""Townsend ionization coefficients of the shipped rare-gas sets against the empirical Townsend formula.

α/p = A exp(−B p/E), p reduced to 0 °C, with the handbook constants of Raizer Yu P (1991), Gas Discharge Physics,
Springer, table 4.1 (from memory): Ne A = 4, B = 100 (valid 100–400 V cm⁻¹ Torr⁻¹); Ar A = 12, B = 180
(100–600); Xe A = 26, B = 350 (200–800); [cm⁻¹ Torr⁻¹], [V cm⁻¹ Torr⁻¹]. The formula is a fit to measurements
good to a few tens of percent over its range (common practice), hence the 35 % tolerance of the issue; the Monte
Carlo error (2 % requested) is negligible beside it.

Helium (A = 3, B = 34) is left out: its set documents that old Townsend data for 'helium' include associative
ionization and impurity (Penning) ionization, which a pure-helium cross-section set does not have; this engine gives
ratios 0.33 and 0.67 at E/p = 50 and 100.
"""

from __future__ import annotations

import math

import pytest
import scipy.constants as sc

from avalanche import Mixture, available_gases
from avalanche.engine.time_of_flight import swarm

DENSITY_1_TORR_0C_m3 = sc.torr / (sc.k * 273.15)
"""N at 1 Torr and 0 °C, the reference state of α/p (ideal gas)."""
RAIZER = {"Ne": (4.0, 100.0), "Ar": (12.0, 180.0), "Xe": (26.0, 350.0)}
POINTS = [("Ne", 150.0), ("Ne", 300.0), ("Ar", 150.0), ("Ar", 400.0), ("Xe", 300.0), ("Xe", 600.0)]


def townsend_formula_alpha_N_m2(gas: str, e_over_p: float) -> float:
    """α/N [m²] of the Townsend formula at E/p [V cm⁻¹ Torr⁻¹] (p at 0 °C)."""
    a, b = RAIZER[gas]
    alpha_over_p = a * math.exp(-b / e_over_p)          # [cm⁻¹ Torr⁻¹]
    return alpha_over_p * 100.0 / DENSITY_1_TORR_0C_m3  # 1 Torr at 0 °C is N = DENSITY_1_TORR_0C_m3


@pytest.mark.parametrize("gas, e_over_p", POINTS)
def test_ionization_coefficient_follows_the_townsend_formula(gas, e_over_p):
    if gas not in available_gases():
        pytest.skip(f"no shipped cross sections for {gas}")
    reduced_field_Td = e_over_p * 100.0 / DENSITY_1_TORR_0C_m3 / 1e-21  # E/p [V/(cm Torr)] → E/N [Td]
    mixture = Mixture(gas, temperature_K=273.15, number_density_m3=DENSITY_1_TORR_0C_m3)
    result = swarm(mixture, reduced_field_Td, seed=17, electrons=4096, precision=0.02, max_events=6e7)
    reference = townsend_formula_alpha_N_m2(gas, e_over_p)
    assert result.alpha_N.relative_stderr < 0.05
    assert abs(result.alpha_N.value / reference - 1) < 0.35, (gas, e_over_p, result.alpha_N, reference)
