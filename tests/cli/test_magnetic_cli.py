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


def test_plot_and_table_of_a_magnetic_sweep(capsys, tmp_path):
    from avalanche import run_sweep

    run = tmp_path / "reid-b.toml"
    run.write_text('[sweep]\nseed = 3\n[gas]\nmixture = "reid-ramp"\ntemperature_K = 0\nnumber_density_m3 = 1e25\n'
                   '[grid]\nreduced_field_Td = [6, 12]\nreduced_magnetic_field_Hx = [0, 100]\n'
                   '[engine]\nmax_events = 2e5\nelectrons = 256\nprecision = 0.05\n')
    out = tmp_path / "reid-b.h5"
    assert run_sweep(run, workers=1, out=out, quiet=True).complete
    assert main(["table", str(out), "--magnetic"]) == 0
    text = capsys.readouterr().out
    rows = [line for line in text.splitlines() if not line.startswith("#")]
    assert rows[0].split(",")[:4] == ["magnetic_field_T", "reduced_magnetic_field_Hx", "reduced_field_Td",
                                      "drift_velocity_E"] and len(rows) == 5
    # the scalar table needs one field when the sweep has several: the choices are named, one line, exit 1
    assert main(["table", str(out)]) == 1
    assert "several magnetic fields" in capsys.readouterr().err
    assert main(["table", str(out), "--magnetic-field", "100Hx"]) == 0
    capsys.readouterr()
    assert main(["plot", str(out), "--out", str(tmp_path / "fig"), "--format", "png", "--eedf", "none"]) == 0
    assert (tmp_path / "fig" / "reid-b_magnetic.png").exists()
