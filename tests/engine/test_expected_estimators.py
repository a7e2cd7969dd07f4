"""Expected-value (collision-frequency) estimators of the ionization and attachment frequencies agree with the
counted ones (both unbiased: the trial events are a Poisson process of rate ν* in time, Skullerud H R 1968,
J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423)."""

import math
import warnings

import numpy as np
import pytest
from scipy import stats

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


@pytest.mark.parametrize("gas, field_Td", [("Ar", 100.0), ("air", 120.0)])
def test_every_rate_coefficient_agrees_with_its_count_and_is_less_noisy(gas, field_Td):
    # Every process's expected-value rate coefficient (Σ ν_k(ε)/ν*(t) over the trial events, from the linear node
    # histogram) against the counted one, same run, at the false-alarm rate of 3σ after a Bonferroni correction over
    # the ~40 processes. The standard errors are estimated from the spread of R = 16 replicas, so the difference
    # over its estimated error follows Student's t with R − 1 degrees of freedom (Student 1908, Biometrika 6 1), not
    # a normal law: the bound is the t quantile (5.4), not 4.0, which let about one run in twenty fail by chance
    # (measured: |z| = 4.07 and 4.15 at 8e6 events for seeds 3 and 4, while at 4e7 events every |z| < 2.9 in both
    # trial-frequency modes). The two are positively correlated, so this is conservative. Processes with fewer
    # than 30 collisions have no Gaussian counted error and are left out. For the rare processes (counted error
    # above 5 %) the expected value is the main lever of issue 13: a smaller error for each, 2× smaller or better
    # for the median one (ionization gains least, see avalanche.engine.estimators).
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(gas, field_Td, seed=3, precision=1e-9, electrons=2048, max_events=8e6)
    counts = result.tallies["process_counts"].sum(axis=0)
    keys = list(result.rate_coefficients)
    replicas = result.tallies["process_counts"].shape[0]
    bound = stats.t.isf(stats.norm.sf(3.0) / len(keys), replicas - 1)  # two-sided 3σ rate, Bonferroni over keys
    compared, gains = 0, []
    for k, key in enumerate(keys):
        if counts[k] < 30 or key.startswith("Penning "):
            continue
        expected, counted = result.rate_coefficients[key], result.rate_coefficients_counted[key]
        assert abs(expected.value - counted.value) < bound * math.hypot(expected.stderr, counted.stderr), key
        compared += 1
        if counted.relative_stderr > 0.05:
            gains.append(expected.relative_stderr / counted.relative_stderr)
    assert compared >= 10 and gains
    assert max(gains) < 1.0 and float(np.median(gains)) < 0.5, gains
