"""Humid air from relative humidity and temperature (:mod:`avalanche.gas.humid`)."""

import pytest

import avalanche
from avalanche.errors import ConfigError, PhysicsWarning
from avalanche.gas.humid import humid_air_composition, saturation_vapour_pressure_Pa
from avalanche.gas.library import named_mixture


@pytest.mark.parametrize(("temperature_C", "reference_Pa"), [
    (0.0, 611.2),     # IAPWS-95 (Wagner & Pruss 2002, J. Phys. Chem. Ref. Data 31, 387): 611.2 Pa (from memory)
    (20.0, 2339.2),   # same source: 2.3392 kPa at 20 °C (from memory)
    (30.0, 4246.9),   # same source: 4.2469 kPa at 30 °C (from memory)
])
def test_buck_saturation_pressure(temperature_C, reference_Pa):
    # Buck (1981) states his formula within about 0.05 % of the reference values between -20 and 50 °C; 0.2 %
    # allows for the recall of the reference values
    assert saturation_vapour_pressure_Pa(273.15 + temperature_C) == pytest.approx(reference_Pa, rel=2e-3)


def test_humid_air_composition():
    composition = humid_air_composition(0.5, 293.15, 101325.0)
    water = 0.5 * saturation_vapour_pressure_Pa(293.15) / 101325.0  # Dalton: x = p_H2O / p
    assert composition["H2O"] == pytest.approx(water, rel=1e-12)
    assert sum(composition.values()) == pytest.approx(1.0, abs=1e-12)
    dry = named_mixture("air")
    for name, fraction in dry.items():
        assert composition[name] == pytest.approx(fraction * (1 - water), rel=1e-12)
    assert "H2O" not in humid_air_composition(0.0)


def test_humid_air_mixture_and_errors():
    mixture = avalanche.humid_air(0.8, temperature_K=300.0)
    assert {c.name for c in mixture.components} == {"N2", "O2", "Ar", "H2O"}
    assert mixture.temperature_K == 300.0
    with pytest.raises(ConfigError, match="not per cent"):
        humid_air_composition(50.0)
    with pytest.warns(PhysicsWarning, match="outside"):
        saturation_vapour_pressure_Pa(373.15)
