"""Gas mixtures: composition forms, density from pressure, validation."""

from __future__ import annotations

import pytest
import scipy.constants as sc

from avalanche import Mixture
from avalanche.errors import ConfigError
from avalanche.gas.mixture import parse_composition


def test_default_is_300K_and_one_atmosphere():
    mix = Mixture({"maxwell": 1.0})
    assert mix.temperature_K == 300.0
    # ideal gas N = p/(kT) with p = 1 atm (scipy.constants: CODATA)
    assert mix.number_density_m3 == pytest.approx(sc.atm / (sc.k * 300.0), rel=1e-12, abs=0)


def test_string_form_and_pressure():
    assert parse_composition("maxwell:0.99,reid-ramp:0.01") == {"maxwell": 0.99, "reid-ramp": 0.01}
    mix = Mixture("maxwell:0.25, reid-ramp:0.75", temperature_K=293.15, pressure_Pa=133.322)
    assert [c.name for c in mix.components] == ["maxwell", "reid-ramp"]
    assert mix.number_density_m3 == pytest.approx(133.322 / (sc.k * 293.15))
    assert mix.label == "maxwell:0.25,reid-ramp:0.75"


def test_cold_gas_needs_number_density():
    mix = Mixture("reid-ramp", temperature_K=0, number_density_m3=1e25)
    assert mix.number_density_m3 == 1e25
    with pytest.raises(ConfigError, match="needs an explicit number_density_m3"):
        Mixture("reid-ramp", temperature_K=0)


@pytest.mark.parametrize("composition,fragment", [
    ({"maxwell": 0.5, "reid-ramp": 0.4}, "sum to 0.9"),
    ({"maxwell": 1.2, "reid-ramp": -0.2}, "must be >= 0"),
    ({"nonesuch": 1.0}, "unknown gas 'nonesuch'"),
    ("maxwell:abc", "not a number"),
    ("maxwell=1", "unknown gas"),
])
def test_bad_mixtures(composition, fragment):
    with pytest.raises(ConfigError, match=fragment):
        Mixture(composition)


def test_fractions_within_1e_6_are_used_as_given_within_1e_3_normalised_beyond_refused():
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("error")  # no note within 1e-6
        Mixture({"maxwell": 0.5, "reid-ramp": 0.5 + 5e-7})
    with pytest.warns(UserWarning, match="normalised to 1"):
        normalised = Mixture({"maxwell": 0.5, "reid-ramp": 0.5 + 5e-4})
    assert sum(c.fraction for c in normalised.components) == pytest.approx(1.0, abs=1e-12)
    with pytest.raises(ConfigError, match="named mixture"):
        Mixture({"maxwell": 0.5, "reid-ramp": 0.5 + 5e-3})
