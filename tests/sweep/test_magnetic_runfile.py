"""Run files with a magnetic grid: parsing, points and seeds, the sweep file's grid columns."""

from __future__ import annotations

import numpy as np
import pytest

from avalanche import open_results, run_sweep
from avalanche.analysis.magnetic import MagneticDriftTable
from avalanche.analysis.tables import SwarmTable
from avalanche.errors import ConfigError
from avalanche.sweep.runfile import parse_runfile, point_seed

BASE = '''
[sweep]
name = "reid-b"
seed = 5

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [6, 12]
{grid}

[engine]
precision = 0.05
max_events = 2e5
electrons = 256
'''


def test_a_magnetic_grid_expands_over_field_and_angle():
    rf = parse_runfile(BASE.format(grid="magnetic_field_T = [0, 0.5]\nfield_angle_deg = [90, 45]"), "b.toml")
    # B = 0 takes one angle only (the angle has no meaning without a field): 2 + 2 × 2 points
    coordinates = [(p.magnetic_field, p.field_angle_deg, p.reduced_field_Td) for p in rf.points]
    assert coordinates == [(0.0, 45.0, 6.0), (0.0, 45.0, 12.0), (0.5, 45.0, 6.0), (0.5, 45.0, 12.0),
                           (0.5, 90.0, 6.0), (0.5, 90.0, 12.0)]
    assert rf.points[2].magnetic_options("T") == {"magnetic_field_T": 0.5, "field_angle_deg": 45.0}
    assert rf.points[0].magnetic_options("T") == {}
    # a point without a field keeps the seed of a run file without a magnetic grid (results stay bitwise the same)
    plain = parse_runfile(BASE.format(grid=""), "plain.toml")
    assert [p.seed for p in rf.points[:2]] == [p.seed for p in plain.points]
    assert len({p.seed for p in rf.points}) == len(rf.points)
    assert rf.points[2].seed == point_seed(5, rf.mixtures[0].key, 6.0, 0.0, ("T", 0.5, 45.0))
    assert "magnetic" in rf.config() and "magnetic" not in plain.config()
    hx = parse_runfile(BASE.format(grid="reduced_magnetic_field_Hx = [100]"), "hx.toml")
    assert hx.magnetic_unit == "Hx" and hx.points[0].magnetic_options("Hx") == {
        "reduced_magnetic_field_Hx": 100.0, "field_angle_deg": 90.0}


@pytest.mark.parametrize("grid, message", [
    ("magnetic_field_T = [0.1]\nreduced_magnetic_field_Hx = [10]", "not both"),
    ("field_angle_deg = [30]", "needs a magnetic field"),
    ("magnetic_field_T = [0.1]\nfield_angle_deg = [200]", "0 ... 180"),
    ("magnetic_field_T = [-1]", "negative value"),
])
def test_bad_magnetic_grids_say_what_is_wrong(grid, message):
    with pytest.raises(ConfigError, match=message):
        parse_runfile(BASE.format(grid=grid), "bad.toml")


def test_a_magnetic_sweep_stores_its_grid_and_vector_results(tmp_path):
    path = tmp_path / "reid-b.toml"
    path.write_text(BASE.format(grid="reduced_magnetic_field_Hx = [0, 100]"))
    report = run_sweep(path, workers=1, out=tmp_path / "reid-b.h5", quiet=True)
    assert report.complete and report.failed == []
    res = open_results(tmp_path / "reid-b.h5")
    # 1 Hx = 1e-27 T m³ (common practice): 100 Hx at 1e25 m⁻³ is 1 T
    np.testing.assert_allclose(res.grid["magnetic_field_T"], [0.0, 0.0, 1.0, 1.0], rtol=1e-12)
    np.testing.assert_array_equal(res.grid["reduced_magnetic_field_Hx"], [0.0, 0.0, 100.0, 100.0])
    point = res.point(3)
    assert point.magnetic is not None and point.inputs["magnetic_field"]["reduced_magnetic_field_Hx"] == 100.0
    assert point.drift_velocity_vector[1].value > 0  # E×B drift (common practice)
    assert res.point(0).magnetic is None
    # the drift table of the file: one curve per B, the numbers of the points' payloads
    table = MagneticDriftTable.from_results(res)
    assert list(table.curves) == [0.0, pytest.approx(1.0, rel=1e-12)]
    assert table.curves[list(table.curves)[1]]["drift_velocity_ExB"][0][1] == point.drift_velocity_vector[1].value
    # the scalar table needs one field: the choices are named, and a chosen one gives its E/N curve
    with pytest.raises(ConfigError, match="several magnetic fields"):
        SwarmTable.from_results(res)
    scalar = SwarmTable.from_results(res, reduced_magnetic_field_Hx=100.0)
    assert list(scalar.point_index) == [2, 3]
