"""Command line: ``avalanche swarm --magnetic-field --angle``."""

from __future__ import annotations

import json

import pytest

from avalanche.cli.main import main


def test_swarm_command_with_a_magnetic_field_writes_the_vector_results(capsys, tmp_path):
    from avalanche.store.point import load_result

    out = tmp_path / "point.h5"
    code = main(["swarm", "--gas", "maxwell", "--temperature", "0", "--density", "1e23", "--en", "1",
                 "--magnetic-field", "300Hx", "--angle", "60", "--max-events", "2e5", "--electrons", "64",
                 "--seed", "2", "--json", "--out", str(out)])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    # 1 Hx = 1e-27 T m³ (common practice): B = 300e-27 T m³ × 1e23 m⁻³
    assert data["magnetic_field_T"] == pytest.approx(3e-2, rel=1e-12)
    assert data["field_angle_deg"] == 60.0
    assert len(data["drift_velocity_vector"]) == 3 and set(data["lorentz_angle_deg"]) == {"value", "stderr"}
    stored = load_result(out)
    assert stored.lorentz_angle_deg.value == data["lorentz_angle_deg"]["value"]
    assert [e.value for e in stored.drift_velocity_vector] == [c["value"] for c in data["drift_velocity_vector"]]


def test_swarm_command_names_a_bad_magnetic_field(capsys):
    assert main(["swarm", "--gas", "maxwell", "--en", "1", "--magnetic-field", "0.1", "--angle", "270"]) == 1
    err = capsys.readouterr().err
    assert "field_angle_deg = 270" in err and "Traceback" not in err
    with pytest.raises(SystemExit) as exc:
        main(["swarm", "--gas", "maxwell", "--en", "1", "--magnetic-field", "lots"])
    assert exc.value.code == 2
    assert "--magnetic-field 'lots'" in capsys.readouterr().err
