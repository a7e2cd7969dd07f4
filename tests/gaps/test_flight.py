"""The free flight of the gap kernel: exact in a uniform field, second order in a non-uniform one, and the
analytic fields and weighting potentials of the geometries.

References: closed-form motion under constant acceleration (common practice); velocity Verlet is second order
(Verlet L 1967, Phys. Rev. 159 98; Hairer E, Lubich C & Wanner G 2003, Acta Numerica 12 399, doi:
10.1017/S0962492902000144); the field of a hyperboloid point over a plane at its apex, 2V/(R ln(4d/R)) for R ≪ d
(Coelho R & Debeau J 1971, J. Phys. D 4 1266, eq. for the apex field — from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pytest

import avalanche as av
from avalanche.constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg
from avalanche.gas.crosssections import make_set, process_from_table
from avalanche.kernels import gap as KG

E_OVER_M = ELEMENTARY_CHARGE_C / ELECTRON_MASS_kg


def vacuum():
    """A gas with a negligible constant cross section (1e-30 m² at 1e18 m⁻³): flights cross the gap unhindered."""
    energy = np.array([0.0, 1.0, 1e5])
    elastic = process_from_table(np.column_stack((energy, np.full(3, 1e-30))), kind="elastic", label="el",
                                 threshold_eV=0.0)
    return av.Mixture({"tenuous": 1.0}, number_density_m3=1e18, temperature_K=0,
                      sets={"tenuous": make_set("tenuous", mass_amu=4.0, processes=(elastic,))})


def arrival_times(geometry, voltage_V, start, step_control=0.05, primaries=4):
    result = av.gap(geometry, vacuum(), voltage_V, primaries=primaries, local_field=False,
                    initial_energy_eV=1e-24, start_position_m=start, step_control=step_control)
    samples = result.arrivals["samples"]
    assert samples.shape[0] == primaries and np.all(samples[:, 4] == KG.DRIVEN)
    return samples


def test_uniform_flight_is_the_closed_form():
    # from (nearly) rest at z0 in the uniform field V/d: z(t) = z0 + a t²/2 with a = eV/(m d), exact for Verlet
    d, V, z0 = 1e-3, 100.0, 2e-4
    samples = arrival_times(av.ParallelPlates(d), V, (0.0, 0.0, z0))
    expected = math.sqrt(2.0 * (d - z0) / (E_OVER_M * V / d))
    assert np.allclose(samples[:, 3], expected, rtol=1e-6)
    assert np.allclose(samples[:, 2], d, rtol=1e-9)


def _coaxial_time(a, b, V, r0):
    # radial fall from rest at r0 to the wire: v(r) = √(k ln(r0/r)), k = 2 e V / (m ln(b/a)); with r = r0 exp(−u²),
    # t = ∫ dr / v = (r0 / √k) √π erf(√ln(r0/a)) (exact; energy conservation in the potential V ln(b/r)/ln(b/a))
    k = 2.0 * E_OVER_M * V / math.log(b / a)
    return r0 / math.sqrt(k) * math.sqrt(math.pi) * math.erf(math.sqrt(math.log(r0 / a)))


def test_verlet_flight_in_the_coaxial_field():
    # a fall from rest through a 50:1 range of radii (the field grows 50-fold): the arrival time is within 2e-4 of
    # the exact one at the default step control and below it (the stated accuracy of the integrator)
    a, b, V, r0 = 1e-5, 1e-3, 100.0, 5e-4
    exact = _coaxial_time(a, b, V, r0)
    for kappa in (0.05, 0.02):
        t = arrival_times(av.Coaxial(a, b), V, (r0, 0.0, 0.0), step_control=kappa, primaries=2)[:, 3]
        assert abs(t.mean() / exact - 1.0) < 2e-4


def test_point_plane_apex_field():
    R, d, V = 1e-5, 1e-2, 1000.0
    geometry = av.PointPlane(R, d)
    apex = geometry.field_V_m([0.0, 0.0, d * (1 - 1e-12)], V)
    expected = 2.0 * V / (R * math.log(4.0 * d / R))
    assert abs(np.linalg.norm(apex) / expected - 1.0) < 2 * R / d * math.log(4 * d / R)
    assert abs(np.linalg.norm(apex) - geometry.apex_field_V_m(V)) < 1e-6 * np.linalg.norm(apex)


@pytest.mark.parametrize("geometry, inside, driven_point, grounded_point", [
    (av.ParallelPlates(1e-3), (0, 0, 4e-4), (0, 0, 1e-3), (0, 0, 0.0)),
    (av.Coaxial(1e-5, 1e-3), (3e-4, 2e-4, 5.0), (1e-5, 0, 0), (0, 1e-3, 0)),
    (av.ConcentricSpheres(1e-3, 5e-3), (1e-3, 2e-3, 1e-3), (0, 1e-3, 0), (0, 0, 5e-3)),
    (av.PointPlane(1e-4, 1e-2), (1e-3, 0, 5e-3), (0, 0, 1e-2), (2e-3, 0, 0.0)),
])
def test_weighting_potential_and_field_agree(geometry, inside, driven_point, grounded_point):
    # the weighting potential is 1 on the driven electrode and 0 on the grounded one, and E₁ = −∇φ_w
    # (central differences, common practice)
    assert geometry.weighting_potential(np.array(driven_point, float)) == pytest.approx(1.0, abs=1e-9)
    assert geometry.weighting_potential(np.array(grounded_point, float)) == pytest.approx(0.0, abs=1e-9)
    p = np.array(inside, float)
    h = 1e-9
    grad = np.array([(geometry.weighting_potential(p + h * e) - geometry.weighting_potential(p - h * e)) / (2 * h)
                     for e in np.eye(3)])
    assert np.allclose(-grad, geometry.field_V_m(p, 1.0), rtol=1e-5, atol=1e-6 * np.abs(grad).max())
