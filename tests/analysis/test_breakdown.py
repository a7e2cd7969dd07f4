"""Tests of avalanche.analysis.breakdown against closed-form breakdown laws.

References (all from memory): Raizer, Gas Discharge Physics, Springer 1991, sec. 7.2 (Paschen law, its minimum,
the limiting field of attaching gases); Lieberman & Lichtenberg, Principles of Plasma Discharges and Materials
Processing, 2nd ed., Wiley 2005, sec. 14.3 (Paschen law); Meek 1940, Phys. Rev. 57, 722 (streamer criterion).
"""

import json
import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc
from scipy.optimize import brentq
from scipy.special import erfc

from avalanche.analysis.breakdown import (
    STREAMER_THRESHOLD,
    breakdown_voltage,
    critical_reduced_field_Td,
    ionization_integral,
    paschen_curve,
)
from avalanche.analysis.coefficients import (
    CoefficientTable,
    handbook_table,
    townsend_formula,
    townsend_formula_constants,
)
from avalanche.analysis.geometry import CoaxialGap, IsolatedSphere, PlaneGap
from avalanche.errors import AvalancheError, ConfigError, PhysicsWarning

# Townsend-formula constants of N2 (Raizer 1991, table 4.1 — from memory), used as a smooth analytic α/N.
A_PER_CM_TORR, B_V_PER_CM_TORR = 12.0, 342.0
TEMPERATURE_K = 293.0
A_N_M2, B_N_TD = townsend_formula_constants(A_PER_CM_TORR, B_V_PER_CM_TORR, TEMPERATURE_K)
GAMMA = 0.01
THRESHOLD = math.log1p(1.0 / GAMMA)
CRITICAL_TD = 300.0  # demo scenario: where α/N equals a constant η/N


def _field_grid(points):
    return np.geomspace(B_N_TD / 40.0, 40.0 * B_N_TD, points)


def townsend_table(points=800, attaching=False):
    field = _field_grid(points)
    alpha = townsend_formula(A_PER_CM_TORR, B_V_PER_CM_TORR, field, TEMPERATURE_K)
    eta = np.full(points, A_N_M2 * math.exp(-B_N_TD / CRITICAL_TD)) if attaching else np.zeros(points)
    return CoefficientTable(field, alpha, eta, gas_label="Townsend N2", temperature_K=TEMPERATURE_K)


def column_density_m2(pd_Pa_m):
    return np.asarray(pd_Pa_m) / (sc.k * TEMPERATURE_K)


def paschen_law_V(pd_Pa_m):
    """Closed-form Paschen law V = B' N d / ln(A' N d / ln(1 + 1/γ)) (Raizer 1991, sec. 7.2 — from memory)."""
    nd = column_density_m2(pd_Pa_m)
    return B_N_TD * 1e-21 * nd / np.log(A_N_M2 * nd / THRESHOLD)


# Tolerances: log-log interpolation of exp(−B'/x) with node spacing h in ln x has an error in ln α of at most
# h²/8 · B'/x (common practice for linear interpolation of a smooth function). Along the curves below B'/x ≤ 10,
# so with 800 nodes (h = 9.2e-3) ln α is within 1.1e-4, and the breakdown field, which moves by δ ln α / (B'/x),
# within 3e-5: well inside the 1e-3 asked of the Paschen law.


def test_paschen_curve_equals_the_closed_form_paschen_law():
    table = townsend_table()
    pd = np.geomspace(0.6, 3e3, 40)  # from near the left asymptote (A' N d = ln(1+1/γ) at 0.56 Pa m) rightwards
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        curve = paschen_curve(table, GAMMA, pd)
    np.testing.assert_allclose(curve.breakdown_voltage_V, paschen_law_V(pd), rtol=1e-3)
    np.testing.assert_allclose(curve.pd_Torr_cm, pd / sc.torr * 100.0, rtol=1e-14)
    assert curve.critical_reduced_field_Td is None


def test_paschen_curve_has_no_breakdown_left_of_the_asymptote():
    # Raizer 1991, sec. 7.2 (from memory): the Paschen law has no solution for A' N d ≤ ln(1 + 1/γ). This table
    # ends where α/N is still rising, so the module also warns that the root might lie above the table.
    table = townsend_table()
    pd_asymptote = THRESHOLD / A_N_M2 * sc.k * TEMPERATURE_K
    with pytest.warns(PhysicsWarning, match="still rising"):
        curve = paschen_curve(table, GAMMA, [0.5 * pd_asymptote, 0.9 * pd_asymptote])
    assert np.isnan(curve.breakdown_voltage_V).all()


def test_paschen_minimum_equals_the_closed_form_minimum():
    # Raizer 1991, sec. 7.2; Lieberman & Lichtenberg 2005, sec. 14.3 (from memory):
    # V_min = e (B/A) ln(1 + 1/γ) at (p d)_min = (e/A) ln(1 + 1/γ), e Euler's number. With log-log interpolation
    # the minimum of V sits at a table node, so (p d)_min is off by at most half the node spacing in ln x
    # (d ln(p d)/d ln x = B'/x = 1 there): 6000 nodes over ln 1600 give ≤ 6.2e-4. V_min is flat there: error ≤ h²/8.
    table = townsend_table(points=6000)
    curve = paschen_curve(table, GAMMA, [1.0])
    v_min = math.e * B_N_TD * 1e-21 / A_N_M2 * THRESHOLD
    pd_min = math.e / A_N_M2 * THRESHOLD * sc.k * TEMPERATURE_K
    assert curve.minimum_voltage_V == pytest.approx(v_min, rel=1e-3, abs=0)
    assert curve.minimum_pd_Pa_m == pytest.approx(pd_min, rel=1e-3, abs=0)
    assert curve.minimum_pd_Torr_cm == pytest.approx(curve.minimum_pd_Pa_m / sc.torr * 100.0, rel=1e-12, abs=0)


def test_handbook_nitrogen_minimum_in_laboratory_units():
    # Same closed form in the units of the handbook constants (Raizer 1991, table 4.1 and sec. 7.2 — from
    # memory): N2 with A = 12 /(cm Torr), B = 342 V/(cm Torr), γ = 0.01 has V_min = (B/A) e ln(101) = 357.6 V at
    # (p d)_min = (e/A) ln(101) = 1.045 Torr cm. 2000 nodes over E/p = 100–600: (p d)_min within 4.5e-4.
    curve = paschen_curve(handbook_table("N2", points=2000), GAMMA, [1.333])
    expected = B_V_PER_CM_TORR / A_PER_CM_TORR * math.e * THRESHOLD
    assert curve.minimum_voltage_V == pytest.approx(expected, rel=1e-3, abs=0)
    assert curve.minimum_pd_Torr_cm == pytest.approx(math.e / A_PER_CM_TORR * THRESHOLD, rel=1e-3, abs=0)


def test_paschen_curve_to_dict_is_json_with_the_public_keys():
    table = townsend_table(points=200)
    with pytest.warns(PhysicsWarning):
        curve = paschen_curve(table, GAMMA, [0.1, 1.0, 10.0])  # 0.1 Pa m is left of the asymptote → null
    data = json.loads(json.dumps(curve.to_dict(), allow_nan=False))
    assert set(data) == {"minimum_voltage_V", "minimum_pd_Pa_m", "pd_Pa_m", "pd_Torr_cm", "breakdown_voltage_V"}
    assert data["breakdown_voltage_V"][0] is None
    assert data["minimum_voltage_V"] == pytest.approx(curve.minimum_voltage_V)


def test_turning_point_of_the_left_branch_gives_nan_without_warning():
    # Analytic demo: α/N = A' exp(−B'/x − x/(20 B')) peaks inside the table at x* = √20 B', where
    # α*/N = A' exp(−2/√20). A uniform gap with N d < ln(1 + 1/γ) / (α*/N) cannot break down at any voltage
    # (the turning point of the Paschen curve's left branch; Raizer 1991, sec. 7.2 — from memory).
    field = _field_grid(800)
    alpha = A_N_M2 * np.exp(-B_N_TD / field - field / (20.0 * B_N_TD))
    table = CoefficientTable(field, alpha, np.zeros_like(field), temperature_K=TEMPERATURE_K)
    pd_turn = THRESHOLD / (A_N_M2 * math.exp(-2.0 / math.sqrt(20.0))) * sc.k * TEMPERATURE_K
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        curve = paschen_curve(table, GAMMA, [0.99 * pd_turn, 1.01 * pd_turn])
    assert math.isnan(curve.breakdown_voltage_V[0]) and math.isfinite(curve.breakdown_voltage_V[1])


def test_attaching_gas_has_the_constructed_critical_field():
    # Demo scenario with an analytic answer: η/N is set to α/N at 300 Td. Interpolation error in ln α ≤ 3.7e-5
    # there (see the tolerance note), which moves the crossing by ≤ 1.1e-5 in ln x.
    assert critical_reduced_field_Td(townsend_table(attaching=True)) == pytest.approx(CRITICAL_TD, rel=2e-5, abs=0)
    assert critical_reduced_field_Td(townsend_table()) is None


def test_attaching_gas_paschen_curve_tends_to_the_critical_field():
    # Raizer 1991, sec. 7.2 (from memory): in an attaching gas the right branch approaches V = (E/N)_crit N d.
    # Linearizing α/N about x_c, V/(N d) − x_c ≈ ln(1 + 1/γ) / (N d · d(α/N)/dx) with d(α/N)/dx = (α_c/N) B'/x_c².
    table = townsend_table(attaching=True)
    pd = np.array([1e3, 1e4, 1e5])
    curve = paschen_curve(table, GAMMA, pd)
    assert curve.critical_reduced_field_Td == pytest.approx(CRITICAL_TD, rel=2e-5, abs=0)
    field_Td = curve.breakdown_voltage_V / column_density_m2(pd) / 1e-21
    alpha_c = A_N_M2 * math.exp(-B_N_TD / CRITICAL_TD)
    predicted = THRESHOLD / (column_density_m2(pd) * alpha_c * B_N_TD / CRITICAL_TD**2)
    assert abs(field_Td[1] / CRITICAL_TD - 1.0) < 1e-3
    assert np.all(np.diff(field_Td) < 0.0) and np.all(field_Td > CRITICAL_TD)
    # Second-order terms are ~ (δx/x)·B'/x ≈ 2e-3 of the deviation at 1e4 Pa m; interpolation adds 1e-5 x_c.
    np.testing.assert_allclose(field_Td[:2] - CRITICAL_TD, predicted[:2], rtol=2e-2)


def test_paschen_root_below_the_table_is_nan_with_a_warning():
    table = CoefficientTable(_field_grid(50)[25:], townsend_formula(12.0, 342.0, _field_grid(50)[25:]),
                             np.zeros(25), temperature_K=TEMPERATURE_K)
    with pytest.warns(PhysicsWarning) as record:
        curve = paschen_curve(table, GAMMA, [1e4])
    messages = " | ".join(str(w.message) for w in record)
    assert "below the table's lowest E/N" in messages and "Paschen minimum lies outside the table" in messages
    assert math.isnan(curve.breakdown_voltage_V[0]) and math.isnan(curve.minimum_voltage_V)


def test_uniform_gap_ionization_integral_is_alpha_minus_eta_times_d():
    # Definition: in a uniform field K = (α − η) d, α = N (α/N)(V/(N d)).
    table = townsend_table(attaching=True)
    pressure_Pa, gap_m, voltage_V = 2e4, 5e-3, 9e3
    density = pressure_Pa / (sc.k * TEMPERATURE_K)
    result = ionization_integral(table, PlaneGap(gap_m), voltage_V, pressure_Pa, gamma=GAMMA)
    expected = table.effective_N(voltage_V / gap_m / density / 1e-21) * density * gap_m
    assert result.value == pytest.approx(expected, rel=1e-13, abs=0)
    assert result.ionization_region_m == (0.0, gap_m) and result.extrapolated_fraction == 0.0


def test_townsend_verdict_switches_at_the_paschen_voltage():
    # Closed-form Paschen law (Raizer 1991, sec. 7.2 — from memory) at p d = 10 Pa m: the Townsend verdict on a
    # plane gap flips between 0.5 % below and above it; breakdown_voltage finds it within the 1e-3 of the law.
    table = townsend_table()
    pressure_Pa, gap_m = 1e3, 1e-2
    v_paschen = float(paschen_law_V(pressure_Pa * gap_m))
    low = ionization_integral(table, PlaneGap(gap_m), 0.995 * v_paschen, pressure_Pa, gamma=GAMMA)
    high = ionization_integral(table, PlaneGap(gap_m), 1.005 * v_paschen, pressure_Pa, gamma=GAMMA)
    assert low.townsend_met is False and high.townsend_met is True
    voltage = breakdown_voltage(table, PlaneGap(gap_m), pressure_Pa, gamma=GAMMA)
    assert voltage == pytest.approx(v_paschen, rel=1e-3, abs=0)


def _coaxial_K(voltage_V, density_m3, a_m, b_m, eta_N_m2=0.0):
    """Analytic ∫(α − η) dr over α > η for α = N A' exp(−B' N r ln(b/a) / V), constant η (common practice)."""
    log_ratio = math.log(b_m / a_m)
    beta = B_N_TD * 1e-21 * density_m3 * log_ratio / voltage_V
    end = b_m if eta_N_m2 == 0.0 else min(b_m, voltage_V / (density_m3 * log_ratio * CRITICAL_TD * 1e-21))
    if end <= a_m:
        return 0.0
    ionization = A_N_M2 * density_m3 / beta * (math.exp(-beta * a_m) - math.exp(-beta * end))
    return ionization - eta_N_m2 * density_m3 * (end - a_m)


def test_coaxial_ionization_integral_matches_the_analytic_integral():
    # Analytic: with E = V/(r ln(b/a)) the Townsend formula gives α(r) = N A' exp(−β r), integrable in closed
    # form. Tolerance 1e-3: interpolation error in ln α ≤ 1.1e-4 (tolerance note), quadrature error ≪ that.
    table = townsend_table()
    density = 1e4 / (sc.k * TEMPERATURE_K)
    result = ionization_integral(table, CoaxialGap(1e-3, 1e-2), 5e3, 1e4)
    assert result.value == pytest.approx(_coaxial_K(5e3, density, 1e-3, 1e-2), rel=1e-3, abs=0)


def test_isolated_sphere_ionization_integral_matches_the_analytic_integral():
    # Analytic: E = V a / r² gives α(r) = N A' exp(−B' N r² / (V a)) and
    # ∫_a^∞ α dr = N A' √(π V a / (4 B' N)) erfc(a √(B' N / (V a))) (Abramowitz & Stegun 1964, 7.1.2 — from
    # memory). The coefficients below the table's lowest field are extrapolated, but contribute nothing visible.
    table = townsend_table()
    density, voltage, radius = 1e4 / (sc.k * TEMPERATURE_K), 5e3, 1e-3
    b_n = B_N_TD * 1e-21 * density
    expected = A_N_M2 * density * math.sqrt(math.pi * voltage * radius / (4.0 * b_n)) * erfc(
        radius * math.sqrt(b_n / (voltage * radius)))
    result = ionization_integral(table, IsolatedSphere(radius), voltage, 1e4)
    assert result.value == pytest.approx(expected, rel=1e-3, abs=0)
    assert result.extrapolated_fraction < 1e-12


def test_attaching_coaxial_integral_stops_at_the_critical_radius():
    # Analytic (as above) with constant η: α > η only inside r_c = V / (N ln(b/a) x_c).
    table = townsend_table(attaching=True)
    pressure_Pa, voltage_V, a_m, b_m = 1e5, 6e4, 1e-3, 2e-2
    density = pressure_Pa / (sc.k * TEMPERATURE_K)
    eta = A_N_M2 * math.exp(-B_N_TD / CRITICAL_TD)
    result = ionization_integral(table, CoaxialGap(a_m, b_m), voltage_V, pressure_Pa, gamma=GAMMA)
    assert result.value == pytest.approx(_coaxial_K(voltage_V, density, a_m, b_m, eta), rel=1e-3, abs=0)
    r_c = voltage_V / (density * math.log(b_m / a_m) * CRITICAL_TD * 1e-21)
    assert result.ionization_region_m[0] == a_m
    assert result.ionization_region_m[1] == pytest.approx(r_c, rel=2e-5, abs=0)


def test_streamer_breakdown_voltage_of_an_attaching_coaxial_gap():
    # Raether–Meek criterion K = 18 (Meek 1940; Raether 1964 — from memory), solved independently on the analytic
    # integral; the two voltages agree within the 1e-3 the coefficients' interpolation allows.
    table = townsend_table(attaching=True)
    pressure_Pa, a_m, b_m = 1e5, 1e-3, 2e-2
    density = pressure_Pa / (sc.k * TEMPERATURE_K)
    eta = A_N_M2 * math.exp(-B_N_TD / CRITICAL_TD)
    voltage = breakdown_voltage(table, CoaxialGap(a_m, b_m), pressure_Pa, criterion="streamer")
    expected = brentq(lambda v: _coaxial_K(v, density, a_m, b_m, eta) - STREAMER_THRESHOLD, 1e3, 1e6, rtol=1e-12)
    assert voltage == pytest.approx(expected, rel=1e-3, abs=0)


def test_fields_beyond_the_table_are_reported():
    table = townsend_table(points=100)
    with pytest.warns(PhysicsWarning, match="outside the table"):
        result = ionization_integral(table, PlaneGap(1e-3), 1e5, 10.0)  # E/N far above 40 B'
    assert result.extrapolated_fraction == 1.0
    with pytest.warns(PhysicsWarning, match="root lies above the table"):
        assert math.isnan(breakdown_voltage(table, PlaneGap(1e-4), 10.0, gamma=GAMMA))


def test_divergent_tail_of_an_isolated_sphere_is_an_error():
    # Analytic: extrapolating α/N ∝ (E/N)^k below the table with E ∝ 1/r² gives α ∝ r^(−2k), whose integral to
    # infinity diverges for k ≤ 1/2; here k = log10(2) ≈ 0.30 on the first segment.
    table = CoefficientTable([10.0, 100.0, 1000.0], [1e-22, 2e-22, 1e-20], [0.0, 0.0, 0.0])
    with pytest.raises(AvalancheError, match="did not converge.*down to fields where α/N is zero"):
        ionization_integral(table, IsolatedSphere(1e-3), 1e4, 1e5)


def test_bad_arguments_are_rejected():
    table = townsend_table(points=100)
    with pytest.raises(ConfigError, match="gamma=0.0 must be positive"):
        paschen_curve(table, 0.0, [1.0])
    with pytest.raises(ConfigError, match=r"pd_Pa_m.*got -1.0"):
        paschen_curve(table, GAMMA, [1.0, -1.0])
    with pytest.raises(ConfigError, match="needs gamma"):
        breakdown_voltage(table, PlaneGap(1e-2), 1e3)
    with pytest.raises(ConfigError, match="choose 'townsend' or 'streamer'"):
        breakdown_voltage(table, PlaneGap(1e-2), 1e3, criterion="meek")
    with pytest.raises(ConfigError, match="must be a CoefficientTable"):
        paschen_curve({"alpha": 1}, GAMMA, [1.0])
