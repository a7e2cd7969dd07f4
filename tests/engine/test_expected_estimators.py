"""Expected-value (collision-frequency) estimators of the ionization and attachment frequencies agree with the
counted ones (both unbiased: the trial events are a Poisson process of rate ν* in time, Skullerud H R 1968,
J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423)."""

import math
import warnings

from avalanche import swarm
from avalanche.gas.library import model_gas
from avalanche.gas.mixture import Mixture


def _agree(result, name):
    expected, counted = result.estimates[name], result.estimates[f"{name}_counted"]
    assert expected.value > 0 and counted.value > 0
    # 3 combined standard errors (the two share the replicas' energy distributions, so this is conservative)
    assert abs(expected.value - counted.value) < 3 * math.hypot(expected.stderr, counted.stderr), (expected, counted)


def test_attachment_estimators_agree_on_the_ness_robson_model():
    mixture = Mixture("ness-robson", temperature_K=0.0, number_density_m3=1e25,
                      sets={"ness-robson": model_gas("ness-robson")})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(mixture, 10.0, seed=1, precision=0.05, electrons=1024, max_events=1e7)
    _agree(result, "attachment_rate_coefficient")


def test_ionization_estimators_agree_on_argon():
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm("Ar", 200.0, seed=2, precision=0.05, electrons=1024, max_events=1e7)
    _agree(result, "ionization_rate_coefficient")
    # alpha_N_simple = nu_ion / (N W_bulk) uses the expected-value frequency
    ratio = result.alpha_N_simple.value / (result.ionization_rate_coefficient.value / result.drift_velocity_bulk.value)
    assert ratio == 1.0 or abs(ratio - 1.0) < 1e-12
