"""Drift in magnetic fields against E/N: the table and its figure hold exactly the results' numbers."""

from __future__ import annotations

import math

import numpy as np
import pytest

from avalanche import Mixture
from avalanche.analysis.magnetic import MagneticDriftTable
from avalanche.engine.time_of_flight import swarm
from avalanche.errors import ConfigError
from avalanche.plots import plot_magnetic_drift, save_figure


@pytest.fixture(scope="module")
def results():
    mixture = Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25)
    kw = dict(seed=4, precision=1e-9, electrons=128, max_events=2e5, initial_energy_eV=0.2)
    return [swarm(mixture, e, b, 90.0, **kw) for b in (0.0, 1.0) for e in (12.0, 6.0)]


def test_the_table_groups_by_field_and_sorts_by_reduced_field(results, tmp_path):
    table = MagneticDriftTable.from_swarm_results(results)
    assert list(table.curves) == [0.0, 1.0] and table.field_angle_deg == 90.0
    curve = table.curves[1.0]
    assert list(curve["reduced_field_Td"]) == [6.0, 12.0]
    at_6 = results[3]
    assert curve["drift_velocity_ExB"][0][0] == at_6.drift_velocity_vector[1].value
    assert curve["lorentz_angle_deg"][1][0] == at_6.lorentz_angle_deg.stderr
    # without a field the drift is along E and the Lorentz angle 0 (axial symmetry)
    assert np.all(table.curves[0.0]["lorentz_angle_deg"][0] == 0.0)
    # the Lorentz angle is the angle of the vector (definition)
    w = [curve[f"drift_velocity_{axis}"][0] for axis in ("E", "ExB", "third")]
    np.testing.assert_allclose(curve["lorentz_angle_deg"][0], np.degrees(np.arctan2(np.hypot(w[1], w[2]), w[0])),
                               rtol=1e-12)
    text = table.to_csv(tmp_path / "drift.csv")
    rows = [line for line in text.splitlines() if not line.startswith("#")]
    assert rows[0].startswith("magnetic_field_T,reduced_magnetic_field_Hx,reduced_field_Td,drift_velocity_E,")
    last = [float(v) for v in rows[-1].split(",")]
    # 1 Hx = 1e-27 T m³ (common practice): 1 T at 1e25 m⁻³ is 100 Hx
    assert last[:3] == [1.0, pytest.approx(100.0, rel=1e-7), 12.0]
    assert last[3] == pytest.approx(results[2].drift_velocity_vector[0].value, rel=1e-7)


def test_mixed_angles_are_refused(results):
    other = swarm(Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25), 6.0, 1.0, 45.0, seed=1,
                  precision=1e-9, electrons=128, max_events=2e5, initial_energy_eV=0.2)
    with pytest.raises(ConfigError, match="several angles"):
        MagneticDriftTable.from_swarm_results([*results, other])


def test_the_figure_draws_the_table(results, tmp_path):
    table = MagneticDriftTable.from_swarm_results(results)
    figure = plot_magnetic_drift(table)
    drawn = {c.lines[0].get_gid(): c.lines[0] for ax in figure.axes for c in ax.containers}
    line = drawn["lorentz_angle_deg:1T"]
    np.testing.assert_array_equal(line.get_xdata(), [6.0, 12.0])
    np.testing.assert_array_equal(line.get_ydata(), table.curves[1.0]["lorentz_angle_deg"][0])
    np.testing.assert_array_equal(drawn["drift_velocity_ExB:1T"].get_ydata(),
                                  table.curves[1.0]["drift_velocity_ExB"][0])
    assert math.isclose(drawn["drift_velocity_E:0T"].get_ydata()[1], results[0].drift_velocity_flux.value)
    assert all(p.exists() for p in save_figure(figure, tmp_path / "drift.png"))
