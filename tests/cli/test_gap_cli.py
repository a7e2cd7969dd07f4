"""The ``avalanche gap`` command: JSON with the public names, the caution, one-line errors."""

from __future__ import annotations

import json

from avalanche.cli.main import main


def test_gap_json(capsys, tmp_path):
    out = tmp_path / "g.h5"
    code = main(["gap", "--gas", "Ar", "--geometry", "plates", "--gap", "1e-4", "--voltage", "400", "--primaries",
                 "20", "--no-local-field", "--json", "--out", str(out)])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    for name in ("mean_gain", "gain_distribution", "local_field_gain", "polya_theta"):
        assert name in data
    assert data["mean_gain"]["value"] >= 1
    assert any("High voltages kill" in note for note in data["notes"])
    assert out.is_file()


def test_gap_text_and_errors(capsys):
    assert main(["gap", "--geometry", "plates", "--gap", "1e-4", "--voltage", "300", "--primaries", "5",
                 "--no-local-field"]) == 0
    text = capsys.readouterr().out
    assert "mean gain" in text and "Caution" in text and "space charge" in text
    assert main(["gap", "--geometry", "coaxial", "--inner", "1e-5", "--voltage", "500"]) == 1
    assert "needs --outer" in capsys.readouterr().err
    assert main(["gap", "--geometry", "plates", "--gap", "1e-4", "--voltage", "300", "--start", "0,0"]) == 1
    assert "start_position_m" in capsys.readouterr().err
