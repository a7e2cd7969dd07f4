"""Tests of avalanche.analysis.geometry against textbook electrostatics.

Closed forms: Kuffel, Zaengl & Kuffel, High Voltage Engineering Fundamentals, 2nd ed., Newnes 2000, ch. 4
(from memory); that the potential difference is the line integral of the field is common practice.
"""

import math

import numpy as np
import pytest
from scipy.integrate import quad

from avalanche.analysis.geometry import CoaxialGap, ConcentricSpheres, IsolatedSphere, PlaneGap
from avalanche.errors import ConfigError


def test_isolated_sphere_surface_field_and_potential_drop():
    # Common practice: E = V a / r², φ = V a / r. 10 mm sphere at 20 kV: E(a) = 20e3 / 0.01 = 2 MV/m, and the
    # potential falls from 20 kV to 20 kV × 10/40 = 5 kV between r = 10 mm and 40 mm, i.e. by 15 kV.
    sphere = IsolatedSphere(0.010)
    assert sphere.field_V_m(0.010, 20e3) == pytest.approx(2.0e6, rel=1e-12, abs=0)
    drop = sphere.potential_V(0.010, 20e3) - sphere.potential_V(0.040, 20e3)
    assert drop == pytest.approx(15e3, rel=1e-12, abs=0)
    assert sphere.potential_V(math.inf, 20e3) == 0.0


def test_coaxial_field_matches_closed_form():
    # Kuffel, Zaengl & Kuffel 2000, ch. 4 (from memory): E(r) = V / (r ln(b/a)), φ = V ln(b/r) / ln(b/a).
    a, b, voltage = 1e-3, 25e-3, 30e3
    gap = CoaxialGap(a, b)
    radius = np.array([a, 2e-3, 7e-3, b])
    np.testing.assert_allclose(gap.field_V_m(radius, voltage), voltage / (radius * math.log(b / a)), rtol=1e-13)
    np.testing.assert_allclose(gap.potential_V([a, b], voltage), [voltage, 0.0], rtol=1e-13, atol=1e-9)


def test_concentric_spheres_field_matches_closed_form():
    # Kuffel, Zaengl & Kuffel 2000, ch. 4 (from memory): E(r) = V a b / (r² (b − a)).
    a, b, voltage = 5e-3, 40e-3, -12e3
    gap = ConcentricSpheres(a, b)
    radius = np.linspace(a, b, 7)
    np.testing.assert_allclose(gap.field_V_m(radius, voltage), voltage * a * b / (radius**2 * (b - a)), rtol=1e-13)
    np.testing.assert_allclose(gap.potential_V([a, b], voltage), [voltage, 0.0], rtol=1e-13, atol=1e-9)


def test_plane_gap_field_is_uniform():
    # Common practice: E = V / d between parallel planes.
    gap = PlaneGap(0.02)
    np.testing.assert_allclose(gap.field_V_m([0.0, 0.01, 0.02], 4e3), 2e5, rtol=1e-14)
    assert gap.field_crossings_m([1e5, 2e5], 4e3).size == 0


@pytest.mark.parametrize("gap", [PlaneGap(0.01), CoaxialGap(0.5e-3, 20e-3), ConcentricSpheres(2e-3, 30e-3),
                                 IsolatedSphere(3e-3)])
def test_potential_is_line_integral_of_field(gap):
    # Common practice: φ(r) − φ(end) = ∫_r^end E dr; the grounded end is at potential 0. Numerical quadrature
    # (relative accuracy ~1e-10) against the analytic potential.
    voltage = 7.5e3
    start, end = gap.field_line_range_m
    for position in np.linspace(start, min(end, 10 * start + 0.01), 5)[:-1]:
        integral, _ = quad(lambda r: float(gap.field_V_m(r, voltage)), position, end, epsabs=0, epsrel=1e-11)
        assert integral == pytest.approx(float(gap.potential_V(position, voltage)), rel=1e-9)


def test_field_crossings_invert_the_field():
    # Analytic inverse of E = V C / r^n: the field at the returned radii equals the requested levels, and levels
    # not reached inside the gap are dropped.
    gap = ConcentricSpheres(2e-3, 30e-3)
    levels = np.array([1e3, 1e5, 3e5, 1e6, 1e9])
    radii = gap.field_crossings_m(levels, 2e3)
    inside = levels[(levels > gap.field_V_m(30e-3, 2e3)) & (levels < gap.field_V_m(2e-3, 2e3))]
    np.testing.assert_allclose(np.sort(gap.field_V_m(radii, 2e3))[::-1], np.sort(inside)[::-1], rtol=1e-12)


def test_bad_radii_and_positions_are_rejected():
    with pytest.raises(ConfigError, match="outer_radius_m=0.001 must exceed inner_radius_m=0.002"):
        CoaxialGap(2e-3, 1e-3)
    with pytest.raises(ConfigError, match="inner_radius_m"):
        ConcentricSpheres(-1e-3, 1e-2)
    with pytest.raises(ConfigError, match="IsolatedSphere"):
        ConcentricSpheres(1e-3, math.inf)
    with pytest.raises(ConfigError, match="d_m"):
        PlaneGap(float("nan"))
    with pytest.raises(ConfigError, match=r"position_m=0\.05 is outside the gap"):
        CoaxialGap(1e-3, 2e-2).field_V_m([0.01, 0.05], 1e3)
    with pytest.raises(ConfigError, match="voltage_V"):
        PlaneGap(0.01).potential_V(0.0, float("inf"))
