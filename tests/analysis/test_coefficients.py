"""Tests of avalanche.analysis.coefficients: log-log interpolation, table validation, the Townsend formula."""

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.analysis.coefficients import (
    HANDBOOK_TEMPERATURE_K,
    HANDBOOK_TOWNSEND,
    CoefficientTable,
    handbook_alpha_N,
    handbook_table,
    handbook_validity_range_Td,
    loglog_interpolate,
    townsend_formula,
    townsend_formula_constants,
)
from avalanche.errors import ConfigError, PhysicsWarning


def test_loglog_interpolation_reproduces_a_power_law_exactly():
    # Analytic: ln f is linear in ln x for f = c x^k, so the interpolant equals it everywhere, also on the
    # extrapolated end segments (which warn). Tolerance: float64 rounding of exp/log.
    xp = np.geomspace(0.3, 3e3, 9)
    fp = 2.5e-21 * xp**2.7
    x = np.geomspace(0.31, 2.9e3, 101)
    np.testing.assert_allclose(loglog_interpolate(x, xp, fp, quantity="k_ion"), 2.5e-21 * x**2.7, rtol=1e-12)
    with pytest.warns(PhysicsWarning, match=r"k_ion.*2 point\(s\) outside"):
        outside = loglog_interpolate([0.1, 1e4], xp, fp, quantity="k_ion")
    np.testing.assert_allclose(outside, 2.5e-21 * np.array([0.1, 1e4]) ** 2.7, rtol=1e-12)


def test_loglog_interpolation_on_a_segment_with_a_zero_is_linear_in_log_x():
    # Documented rule (Notes of loglog_interpolate): next to a zero table value the value itself is interpolated
    # linearly in ln x, so at the geometric midpoint of (1, 100) it is the mean of 0 and 4; extrapolated values
    # are clipped at zero.
    assert loglog_interpolate(10.0, [1.0, 100.0, 1e4], [0.0, 4.0, 8.0]) == pytest.approx(2.0, rel=1e-14, abs=0)
    with pytest.warns(PhysicsWarning):
        assert loglog_interpolate(0.5, [1.0, 100.0, 1e4], [0.0, 4.0, 8.0]) == 0.0


def test_loglog_interpolate_rejects_bad_tables():
    with pytest.raises(ConfigError, match=r"xp must be strictly increasing, but xp\[2\]=2.0"):
        loglog_interpolate(1.0, [1.0, 3.0, 2.0], [1.0, 2.0, 3.0])
    with pytest.raises(ConfigError, match=r"fp=-1.0 is negative"):
        loglog_interpolate(1.0, [1.0, 2.0], [1.0, -1.0])
    with pytest.raises(ConfigError, match=r"x=0.0 must be positive"):
        loglog_interpolate(0.0, [1.0, 2.0], [1.0, 2.0])


def test_table_sorts_and_interpolates_its_points():
    # The table returns its own values at its points (an interpolant passes through its nodes), whatever the
    # input order, and (α − η)/N is the difference of the two.
    field = [300.0, 100.0, 1000.0]
    alpha = [3e-21, 1e-22, 2e-20]
    eta = [1e-22, 5e-22, 1e-23]
    table = CoefficientTable(field, alpha, eta, gas_label="demo")
    np.testing.assert_array_equal(table.reduced_field_Td, [100.0, 300.0, 1000.0])
    np.testing.assert_allclose(table.alpha_N([100.0, 300.0, 1000.0]), [1e-22, 3e-21, 2e-20], rtol=1e-13)
    np.testing.assert_allclose(table.eta_N([100.0, 300.0, 1000.0]), [5e-22, 1e-22, 1e-23], rtol=1e-13)
    assert table.effective_N(200.0) == pytest.approx(table.alpha_N(200.0) - table.eta_N(200.0), rel=1e-14, abs=0)
    with pytest.warns(PhysicsWarning, match=r"demo.*outside the table range \[100, 1000\] Td"):
        table.alpha_N(2000.0)


@pytest.mark.parametrize(("kwargs", "message"), [
    ({"alpha_N_m2": [1e-21, -2e-21, 1e-20]}, r"alpha_N_m2\[1\]=-2e-21 is negative at 200.0 Td"),
    ({"eta_N_m2": [0.0, np.nan, 0.0]}, r"eta_N_m2\[1\]=nan is not finite"),
    ({"reduced_field_Td": [100.0, 200.0, 100.0]}, r"reduced_field_Td=100.0 Td appears more than once"),
    ({"reduced_field_Td": [0.0, 200.0, 300.0]}, r"reduced_field_Td\[0\]=0.0 must be positive"),
    ({"alpha_N_m2": [1e-21, 2e-21]}, r"alpha_N_m2 has 2 points but reduced_field_Td has 3"),
    ({"alpha_N_stderr": [1e-22, 1e-22, -1e-22]}, r"alpha_N_stderr\[2\]=-1e-22 is negative"),
    ({"temperature_K": -5.0}, r"temperature_K=-5.0 must be positive and finite"),
])
def test_table_rejects_bad_input_naming_field_and_value(kwargs, message):
    arguments = {"reduced_field_Td": [100.0, 200.0, 300.0], "alpha_N_m2": [1e-21, 2e-21, 3e-21],
                 "eta_N_m2": [0.0, 0.0, 0.0]}
    arguments.update(kwargs)
    with pytest.raises(ConfigError, match=message):
        CoefficientTable(**arguments)


def test_reduced_field_conversion_uses_the_loschmidt_density():
    # CODATA Loschmidt constant n0 (scipy.constants, 273.15 K and 101.325 kPa): at 273.15 K, 1 Torr holds
    # n0 / 760 molecules per m³, so E/p = 1 V cm⁻¹ Torr⁻¹ is E/N = 100 V/m / (n0/760); B' = B k T in Td for
    # B = 1 V cm⁻¹ Torr⁻¹ is exactly that conversion.
    loschmidt_m3 = sc.physical_constants["Loschmidt constant (273.15 K, 101.325 kPa)"][0]
    _, one_V_per_cm_Torr_Td = townsend_formula_constants(1.0, 1.0, 273.15)
    assert one_V_per_cm_Torr_Td == pytest.approx(100.0 / (loschmidt_m3 / 760.0) / 1e-21, rel=1e-9, abs=0)


def test_townsend_formula_in_reduced_form_equals_the_pressure_form():
    # Raizer 1991, sec. 4.1 (from memory): α/p = A exp(−B p/E). Independent route in laboratory units: p = 1 Torr,
    # E = 200 V/cm gives α = A exp(−B/200) cm⁻¹; N = p / (k T) (scipy.constants), so α/N and E/N follow.
    constants = HANDBOOK_TOWNSEND["N2"]
    alpha_per_m = 100.0 * constants.A_per_cm_Torr * math.exp(-constants.B_V_per_cm_Torr / 200.0)
    density_m3 = sc.torr / (sc.k * HANDBOOK_TEMPERATURE_K)
    field_Td = 200.0 * 100.0 / density_m3 / 1e-21
    expected_m2 = alpha_per_m / density_m3
    assert townsend_formula(constants.A_per_cm_Torr, constants.B_V_per_cm_Torr, field_Td) == pytest.approx(
        expected_m2, rel=1e-12, abs=0)
    assert handbook_alpha_N("n2", field_Td) == pytest.approx(expected_m2, rel=1e-12, abs=0)


def test_handbook_alpha_N_only_inside_the_validity_range():
    # Raizer 1991, table 4.1 (from memory): the N2 fit holds for E/p = 100–600 V cm⁻¹ Torr⁻¹.
    low, high = handbook_validity_range_Td("N2")
    assert low == pytest.approx(100.0 * townsend_formula_constants(1.0, 1.0)[1], rel=1e-12, abs=0)
    with pytest.raises(ConfigError, match=r"outside the Townsend-formula range.*E/p 100–600 V/\(cm Torr\)"):
        handbook_alpha_N("N2", 0.9 * low)
    with pytest.warns(PhysicsWarning, match="returning NaN"):
        values = handbook_alpha_N("N2", [0.5 * low, low, high, 2.0 * high], outside="nan")
    assert np.isnan(values[[0, 3]]).all() and np.isfinite(values[[1, 2]]).all()
    with pytest.raises(ConfigError, match="did you mean 'Xe'"):
        handbook_alpha_N("Xen", 1000.0)


def test_handbook_table_samples_the_formula_without_warnings():
    table = handbook_table("Ar", points=50)
    low, high = handbook_validity_range_Td("Ar")
    assert table.reduced_field_range_Td == pytest.approx((low, high), rel=1e-14, abs=0)
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        middle = math.sqrt(low * high)
        # Log-log interpolation of exp(−B'/x): error in ln α ≤ h²/8 · B'/x (h the node spacing in ln x;
        # common practice for linear interpolation); here h = ln(6)/49 and B'/x ≤ 1.8 → ≤ 2e-4.
        assert table.alpha_N(middle) == pytest.approx(handbook_alpha_N("Ar", middle), rel=2e-4, abs=0)
