"""The published alternative data sets against the handbook Townsend formula (a data-set comparison of the kind a
sweep makes with ``mixtures = ["Ar", "Ar@phelps", "Ar@hayashi"]``).

Reference: Townsend formula α/p = A exp(−B p/E) of Raizer Yu P (1991), Gas Discharge Physics, Springer, table 4.1
(from memory): Ar A = 12 cm⁻¹ Torr⁻¹, B = 180 V cm⁻¹ Torr⁻¹, valid 100–600 V cm⁻¹ Torr⁻¹ (300–1800 Td at 293 K),
a two-parameter fit good to some tens of per cent (common practice): 25 %, the issue's tolerance for α/N against
this formula, with 3 standard errors of the run in quadrature.
"""

import math
import warnings

import pytest

from avalanche import Mixture
from avalanche.analysis.coefficients import HANDBOOK_TEMPERATURE_K, handbook_alpha_N
from avalanche.engine.time_of_flight import swarm


@pytest.mark.slow
@pytest.mark.parametrize("gas", ["Ar@phelps", "Ar@hayashi"])
def test_argon_data_sets_follow_the_townsend_formula(gas):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(Mixture(gas, temperature_K=HANDBOOK_TEMPERATURE_K), 500.0, seed=11, electrons=2048,
                       precision=0.03, max_events=20_000_000)
    alpha = result.alpha_N
    assert alpha.relative_stderr < 0.05
    reference = handbook_alpha_N("Ar", 500.0)
    assert alpha.value == pytest.approx(reference, rel=math.hypot(0.25, 3 * alpha.relative_stderr), abs=0)
