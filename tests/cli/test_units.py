"""Numbers with units on the command line and the one E/N syntax (avalanche.cli.units).

References: scipy.constants (CODATA 2018): torr = 101325/760 Pa, atm = 101325 Pa, bar = 1e5 Pa, psi.
"""

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.cli.units import length_m, pressure_Pa, reduced_fields_Td
from avalanche.errors import ConfigError


@pytest.mark.parametrize(("text", "expected"), [
    ("1333.22", 1333.22), ("10torr", 10 * sc.torr), ("10 Torr", 10 * sc.torr), ("1atm", sc.atm),
    ("5kPa", 5e3), ("2.5 bar", 2.5 * sc.bar), ("100mTorr", 0.1 * sc.torr), ("1e3 Pa", 1e3), ("14.7psi", 14.7 * sc.psi),
])
def test_pressures_with_units(text, expected):
    assert pressure_Pa(text) == pytest.approx(expected, rel=1e-15)


def test_ten_torr_is_1333_pascal():
    # 10 Torr = 1333.22 Pa to the six digits quoted (scipy.constants.torr = 133.322368... Pa): half a unit in the
    # last digit is 0.005 Pa, a relative 4e-6
    assert pressure_Pa("10torr") == pytest.approx(1333.22, rel=4e-6)


@pytest.mark.parametrize(("text", "expected"), [("0.01", 0.01), ("2mm", 2e-3), ("25um", 25e-6), ("1 cm", 0.01)])
def test_lengths_with_units(text, expected):
    assert length_m(text) == pytest.approx(expected, rel=1e-15)


@pytest.mark.parametrize(("text", "message"), [
    ("10 furlongs", "unknown unit 'furlongs'"), ("-5 torr", "positive"), ("torr", "not a number"), ("", "not a number"),
])
def test_bad_pressures_name_the_option_and_the_units(text, message):
    with pytest.raises(ConfigError, match=message) as info:
        pressure_Pa(text)
    assert "--pressure" in str(info.value)


def test_one_syntax_for_reduced_fields():
    np.testing.assert_array_equal(reduced_fields_Td("100"), [100.0])
    np.testing.assert_array_equal(reduced_fields_Td("10,20,50"), [10.0, 20.0, 50.0])
    np.testing.assert_allclose(reduced_fields_Td("10:1000:3"), [10.0, 100.0, 1000.0], rtol=1e-14)  # even in ln E/N
    np.testing.assert_allclose(reduced_fields_Td("1,10:100:2"), [1.0, 10.0, 100.0], rtol=1e-14)
    for bad in ("0", "10:1000", "a", "10:1000:0", "-1,2", ""):
        with pytest.raises(ConfigError, match="--en"):
            reduced_fields_Td(bad)


def test_the_command_line_reads_units_and_one_syntax():
    from avalanche.cli.main import build_parser

    parser = build_parser()
    torr = parser.parse_args(["swarm", "--en", "100", "--pressure", "10torr"])
    pascal = parser.parse_args(["swarm", "--en", "100", "--pressure", "1333.22"])
    assert torr.pressure == pytest.approx(pascal.pressure, rel=4e-6)  # 1333.22 is 10 Torr to six digits
    assert parser.parse_args(["plot", "r.h5", "--out-dir", "figs"]).out == "figs"
    assert parser.parse_args(["plot", "r.h5", "--out", "figs"]).out == "figs"  # the older spelling still works
    with pytest.raises(SystemExit):  # one point: one E/N
        parser.parse_args(["swarm", "--en", "10,20"])
