"""Command line: gases, check, demo, error handling."""

from __future__ import annotations

import re

import numpy as np
import pytest

from avalanche.cli.main import main


def test_gases_lists_model_gases_with_provenance(capsys):
    assert main(["gases"]) == 0
    out = capsys.readouterr().out
    for name in ("maxwell", "reid-ramp", "lucas-saelee", "ness-robson"):
        assert name in out
    assert "Reid I D (1979)" in out
    assert "source:" in out


def test_check_accepts_valid_and_rejects_malformed(capsys, write_set, set_text):
    good = write_set(set_text, "good.toml")
    assert main(["check", str(good)]) == 0
    assert "OK" in capsys.readouterr().out
    bad = write_set(set_text.replace("threshold_eV = 11.5\n", ""), "bad.toml")
    assert main(["check", str(bad)]) == 1
    err = capsys.readouterr().err
    assert "bad.toml" in err and "threshold_eV" in err and "Traceback" not in err


def test_no_command_prints_help(capsys):
    assert main([]) == 2
    assert "COMMAND" in capsys.readouterr().out


def test_swarm_command_json_and_hdf5_agree(capsys, tmp_path):
    import json

    from avalanche.store.point import load_result

    out = tmp_path / "point.h5"
    code = main(["swarm", "--gas", "reid-ramp", "--temperature", "0", "--density", "1e25", "--en", "12",
                 "--max-events", "3e6", "--electrons", "1000", "--seed", "3", "--json", "--out", str(out)])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    for name in ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "N_D_L_flux",
                 "N_D_L_bulk", "N_D_T_flux", "N_D_T_bulk", "alpha_N", "eta_N"):
        assert set(data[name]) == {"value", "stderr"}, name
    # Reid ramp at 12 Td: mean energy 0.269 eV (Reid 1979, Aust. J. Phys. 32 231 — from memory); 1 % + 3 sigma
    energy = data["mean_energy_eV"]
    assert abs(energy["value"] - 0.269) < 0.01 * 0.269 + 3 * energy["stderr"]
    stored = load_result(out)
    assert stored.mean_energy_eV.value == energy["value"]
    assert stored.drift_velocity_bulk.stderr == data["drift_velocity_bulk"]["stderr"]


def test_swarm_command_reports_bad_input(capsys):
    assert main(["swarm", "--gas", "nonesuch", "--en", "100"]) == 1
    err = capsys.readouterr().err
    assert "unknown gas 'nonesuch'" in err and "Traceback" not in err


@pytest.mark.slow
def test_demo_runs_the_whole_job_and_says_where_each_output_went(capsys, tmp_path, monkeypatch):
    import h5py

    from avalanche.cli.demo import DEMO_FIELDS_Td

    assert main(["demo", "--out", str(tmp_path)]) == 0
    out, err = capsys.readouterr()
    for name in ("demo.toml", "demo.h5", "demo_rates.csv", "demo_plots/demo_swarm.png", "demo_plots/demo_eedf.png",
                 "demo_ac.h5", "demo_paschen/paschen_Ar.csv", "demo_paschen/paschen_Ar.png"):
        path = tmp_path / name
        assert path.stat().st_size > 0 and str(path) in out, name
    with h5py.File(tmp_path / "demo.h5", "r") as f:
        assert sorted(f["points"]) == [f"{k:06d}" for k in range(len(DEMO_FIELDS_Td))]
    rows = np.loadtxt(tmp_path / "demo_rates.csv", delimiter=",", skiprows=_header_lines(tmp_path / "demo_rates.csv"))
    names = _csv_names(tmp_path / "demo_rates.csv")
    assert list(rows[:, 0]) == list(DEMO_FIELDS_Td)
    # alpha/N rises with E/N in argon (Raizer 1991, Gas Discharge Physics, table 4.1 Townsend formula — from memory)
    alpha = rows[:, names.index("alpha_N[m^2]")]
    assert np.all(alpha > 0) and np.all(np.diff(alpha) > 0)
    assert "Caution" in out and "local electrical codes" in out
    assert re.search(r"regime: (quasi-static|effective-field|neither) \(omega/nu_m = ", out)
    # the Paschen minimum is found inside the sweep's range (its nu_iz/(N W) of argon)
    assert re.search(r"minimum: [0-9.]+ V at p d", out)
    # the sweep covers the p d range: no point computed by the Paschen step, the rate table the one coefficient file
    assert "the breakdown field lies" not in err and "no breakdown field was found" not in err
    assert list((tmp_path / "demo_paschen").glob("*coefficients*")) == []
    # a second demo resumes the finished file instead of recomputing it; its RF point (checked above, and computed
    # anew by every demo, 1e8 events at most) is the first run's file here, so the test pays for it once
    monkeypatch.setattr("avalanche.cli.demo.run_ac_point", lambda path: path)
    assert main(["demo", "--out", str(tmp_path)]) == 0
    assert "exists: finished points are kept" in capsys.readouterr().out


def _csv_names(path) -> list[str]:
    lines = [line for line in path.read_text().splitlines() if not line.startswith("#")]
    return lines[0].split(",")


def _header_lines(path) -> int:
    lines = path.read_text().splitlines()
    comments = sum(1 for line in lines if line.startswith("#"))
    return comments + 1  # one line of column names follows the comments
