"""Command line: plot, table, breakdown, emission (the small results file they share is in conftest.py).

References: scipy.constants (torr); Raizer, Gas Discharge Physics, Springer 1991, sec. 7.2 (Townsend criterion,
Paschen curve) — from memory.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.analysis.breakdown import CAUTION, paschen_curve
from avalanche.analysis.coefficients import CoefficientTable
from avalanche.analysis.emission import APPROXIMATION_NOTE
from avalanche.analysis.geometry import CoaxialGap, IsolatedSphere
from avalanche.analysis.tables import SwarmTable, read_table
from avalanche.cli.breakdown import parse_geometry, parse_pd
from avalanche.cli.main import main
from avalanche.errors import ConfigError
from avalanche.store.sweep_file import open_results


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


def _is_png(path) -> bool:
    return path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"


def _is_pdf(path) -> bool:
    return path.read_bytes()[:5] == b"%PDF-"


# --- plot -----------------------------------------------------------------------------------------------------------

def test_plot_writes_png_and_pdf(outputs_results, tmp_path, capsys):
    code, out, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--out", tmp_path)
    assert code == 0, err
    for name in ("outputs_swarm", "outputs_eedf"):
        png, pdf = tmp_path / f"{name}.png", tmp_path / f"{name}.pdf"
        assert png.stat().st_size > 0 and _is_png(png)
        assert pdf.stat().st_size > 0 and _is_pdf(pdf)
        assert str(png) in out


def test_plot_errors_name_the_problem(outputs_results, tmp_path, capsys):
    code, _, err = run(capsys, "plot", tmp_path / "absent.h5")
    assert code == 1 and "absent.h5" in err and "not found" in err and "Traceback" not in err
    code, _, err = run(capsys, "plot", outputs_results, "--out", tmp_path)
    assert code == 1 and "2 mixtures" in err and "--mixture" in err and "'Ar'" in err
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--quantity", "alpha_n", "--out", tmp_path)
    assert code == 1 and "unknown quantity 'alpha_n'" in err and "did you mean 'alpha_N'" in err
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar:0.5,N2:0.6", "--out", tmp_path)
    assert code == 1 and "did you mean 'Ar:0.5,N2:0.5'" in err
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar", "--format", "jpeg", "--out", tmp_path)
    assert code == 1 and "jpeg" in err


def test_plot_notes_a_gas_without_handbook_formula(outputs_results, tmp_path, capsys):
    code, _, err = run(capsys, "plot", outputs_results, "--mixture", "Ar:0.5,N2:0.5", "--eedf", "none",
                       "--out", tmp_path)
    assert code == 0 and "no handbook Townsend formula" in err


# --- table ----------------------------------------------------------------------------------------------------------

def test_table_csv_and_text_files(outputs_results, tmp_path, capsys):
    csv_path, text_path = tmp_path / "rates.csv", tmp_path / "rates.txt"
    assert run(capsys, "table", outputs_results, "--mixture", "Ar", "--out", csv_path)[0] == 0
    assert run(capsys, "table", outputs_results, "--mixture", "Ar", "--out", text_path)[0] == 0
    from_csv, from_text = read_table(csv_path), read_table(text_path)
    assert from_csv.units["alpha_N"] == "m^2" and from_csv.units["reduced_field_Td"] == "Td"
    assert from_text.units == from_csv.units and from_csv.units["N_D_L_bulk"] == "1/(m s)"
    np.testing.assert_array_equal(from_csv["mean_energy_eV"], from_text["mean_energy_eV"])
    loaded = np.loadtxt(text_path)  # the text variant is plain numpy.loadtxt input
    np.testing.assert_array_equal(loaded[:, 0], from_csv["reduced_field_Td"])


def test_table_to_stdout_against_mean_energy(outputs_results, capsys):
    code, out, _ = run(capsys, "table", outputs_results, "--mixture", "Ar", "--against", "mean-energy",
                       "--quantity", "alpha_N,drift_velocity_bulk")
    assert code == 0
    lines = [line for line in out.splitlines() if not line.startswith("#")]
    assert lines[0] == ("mean_energy_eV[eV],mean_energy_eV_stderr[eV],reduced_field_Td[Td],alpha_N[m^2],"
                        "alpha_N_stderr[m^2],drift_velocity_bulk[m/s],drift_velocity_bulk_stderr[m/s]")
    energy = np.array([float(line.split(",")[0]) for line in lines[1:]])
    assert np.all(np.diff(energy) > 0)


# --- breakdown ------------------------------------------------------------------------------------------------------

def test_parse_pd_units():
    # 1 Torr = 133.322 Pa (scipy.constants.torr), so 1 Torr cm = 1.33322 Pa m.
    np.testing.assert_allclose(parse_pd("0.1:100")[[0, -1]], [0.1 * sc.torr / 100, 100 * sc.torr / 100], rtol=1e-14)
    assert parse_pd("0.1:100").size == 30
    np.testing.assert_allclose(parse_pd("13:13000:4pam"), [13, 130, 1300, 13000], rtol=1e-12)
    np.testing.assert_allclose(parse_pd("1.5 Torr·cm"), [1.5 * sc.torr / 100], rtol=1e-14)
    np.testing.assert_allclose(parse_pd("2,3 Pa m"), [2.0, 3.0])
    with pytest.raises(ConfigError, match="did you mean 'pam'"):
        parse_pd("13:13000pa")
    with pytest.raises(ConfigError, match="LOW < HIGH"):
        parse_pd("100:1")


def test_parse_geometry():
    gap = parse_geometry("coaxial:1mm,2cm")
    assert isinstance(gap, CoaxialGap) and gap.inner_radius_m == pytest.approx(1e-3) \
        and gap.outer_radius_m == pytest.approx(0.02)
    assert isinstance(parse_geometry("sphere:0.01"), IsolatedSphere)
    with pytest.raises(ConfigError, match="did you mean 'coaxial'"):
        parse_geometry("coax:1,2")
    with pytest.raises(ConfigError, match="needs 2 length"):
        parse_geometry("spheres:1mm")


def test_breakdown_json_from_results(outputs_results, tmp_path, capsys):
    code, out, _ = run(capsys, "breakdown", "--results", outputs_results, "--mixture", "Ar", "--gamma", 0.01,
                       "--pd", "0.3:30", "--json", "--out", tmp_path)
    assert code == 0
    data = json.loads(out)
    for key in ("minimum_voltage_V", "minimum_pd_Pa_m", "pd_Pa_m", "pd_Torr_cm", "breakdown_voltage_V", "caution"):
        assert key in data
    assert data["caution"] == CAUTION
    # The curve is the Townsend criterion applied to the file's α/N and η/N (Raizer 1991, sec. 7.2).
    table = SwarmTable.from_results(open_results(outputs_results), mixture="Ar")
    with pytest.warns(Warning):
        expected = paschen_curve(table.coefficient_table(), 0.01, parse_pd("0.3:30"))
    got = np.array([math.nan if v is None else v for v in data["breakdown_voltage_V"]])
    np.testing.assert_allclose(got, expected.breakdown_voltage_V, rtol=1e-12, equal_nan=True)
    np.testing.assert_allclose(data["pd_Torr_cm"], np.geomspace(0.3, 30, 30), rtol=1e-12)
    for suffix in (".csv", ".png", ".pdf"):
        path = tmp_path / f"paschen_Ar{suffix}"
        assert path.stat().st_size > 0
    assert CAUTION in (tmp_path / "paschen_Ar.csv").read_text()


def test_breakdown_text_carries_the_caution_and_a_gap(outputs_results, tmp_path, capsys):
    code, out, _ = run(capsys, "breakdown", "--results", outputs_results, "--mixture", "Ar", "--gamma", 0.01,
                       "--geometry", "coaxial:1mm,10mm", "--pressure", 2000, "--out", tmp_path)
    assert code == 0
    assert f"Caution: {CAUTION}" in out and "Paschen curve of Ar" in out and "CoaxialGap" in out


def test_breakdown_computes_on_demand(tmp_path, capsys):
    code, out, err = run(capsys, "breakdown", "--gas", "Ar", "--gamma", 0.05, "--en", "150:600:3",
                         "--max-events", 2e6, "--electrons", 1000, "--precision", 0.2, "--json", "--out", tmp_path)
    assert code == 0, err
    assert "computing alpha_N and eta_N of Ar" in err and "may take" in err
    data = json.loads(out)
    assert data["source"].startswith("computed") and data["caution"] == CAUTION
    assert (tmp_path / "paschen_Ar_coefficients.csv").stat().st_size > 0


def test_breakdown_with_steady_state_townsend_coefficients(tmp_path, capsys):
    # --coefficients sst computes α/N with avalanche.townsend; the curve is the Townsend criterion applied to them
    # (Raizer 1991, Gas Discharge Physics, sec. 7.2 — from memory), checked here against the written table.
    code, out, err = run(capsys, "breakdown", "--gas", "Ar", "--gamma", 0.01, "--en", "300:1200:3",
                         "--coefficients", "sst", "--pd", "1:3", "--max-events", 2e6, "--electrons", 512,
                         "--precision", 0.2, "--json", "--out", tmp_path)
    assert code == 0, err
    data = json.loads(out)
    assert data["coefficients_used"] == "sst" and "avalanche.townsend" in data["source"]
    fields = np.array(data["coefficients"]["reduced_field_Td"])
    alpha = np.array(data["coefficients"]["alpha_N"])
    assert data["coefficients"]["units"]["alpha_N"] == "m^2"
    expected = paschen_curve(CoefficientTable(fields, alpha, np.zeros_like(alpha), temperature_K=300.0), 0.01,
                             parse_pd("1:3"))
    got = np.array([math.nan if v is None else v for v in data["breakdown_voltage_V"]])
    np.testing.assert_allclose(got, expected.breakdown_voltage_V, rtol=1e-12, equal_nan=True)


def test_breakdown_refuses_coefficients_that_do_not_fit_the_file(outputs_results, tmp_path, capsys):
    code, _, err = run(capsys, "breakdown", "--results", outputs_results, "--mixture", "Ar", "--gamma", 0.01,
                       "--coefficients", "sst", "--out", tmp_path)
    assert code == 1 and "time-of-flight sweep" in err and "leave --results out" in err


def test_breakdown_argument_errors(capsys, tmp_path):
    code, _, err = run(capsys, "breakdown", "--gamma", 0.01, "--out", tmp_path)
    assert code == 1 and "--gas" in err
    code, _, err = run(capsys, "breakdown", "--gas", "Ar", "--gamma", 0.01, "--pd", "1:10kpam", "--out", tmp_path)
    assert code == 1 and "unknown unit 'kpam'" in err


# --- emission -------------------------------------------------------------------------------------------------------

def test_emission_command(outputs_results, tmp_path, capsys):
    code, out, err = run(capsys, "emission", outputs_results, "--mixture", "Ar:0.5,N2:0.5", "--en", 230,
                         "--out", tmp_path)
    assert code == 0, err
    assert APPROXIMATION_NOTE in out and "E/N = 240 Td" in out  # nearest computed point
    for name in ("outputs_emission_240Td.png", "outputs_emission_240Td.pdf", "outputs_emission.csv"):
        assert (tmp_path / name).stat().st_size > 0
    rows = [line for line in (tmp_path / "outputs_emission.csv").read_text().splitlines() if not line.startswith("#")]
    assert rows[0] == ("reduced_field_Td[Td],species,level,wavelength_nm[nm],photon_energy_eV[eV],"
                       "emission_coefficient[m^3/s],emission_coefficient_stderr[m^3/s],relative_rate[1],"
                       "relative_power[1]")  # one header line, units in brackets
    assert len(rows) == 1 + 3  # Ar 1s2, Ar 1s4, N2 C state
    code, out, _ = run(capsys, "emission", outputs_results, "--mixture", "Ar", "--json", "--out", tmp_path)
    data = json.loads(out)
    assert code == 0 and len(data["estimates"]) == 4 and data["estimates"][0]["note"] == APPROXIMATION_NOTE


def test_phase_curves_from_ac_points():
    """AC points (frequency > 0) with phase-resolved data become one curve per frequency; DC points are skipped.

    The results object is a stand-in with the documented shapes (issue 4: phase bin centres, values, errors).
    """
    from types import SimpleNamespace

    from avalanche.cli.outputs import phase_curves

    phase = (np.arange(4) + 0.5) * np.pi / 2
    grid = np.zeros(4, dtype=[("index", np.int64), ("mixture_index", np.int64), ("reduced_field_Td", float),
                              ("frequency_Hz", float), ("status", "U7")])
    grid["index"] = np.arange(4)
    grid["reduced_field_Td"] = [100.0, 100.0, 300.0, 100.0]
    grid["frequency_Hz"] = [0.0, 1e6, 1e6, 13.56e6]
    grid["status"] = "ok"

    def point(i):
        if grid["frequency_Hz"][i] == 0:
            return SimpleNamespace()
        values = np.full(4, float(i))
        return SimpleNamespace(phase=phase, phase_resolved={
            "mean_energy_eV": (values, values / 10), "rate_coefficients": {},
            "drift_velocity_flux": SimpleNamespace(value=-values, stderr=values / 10)})

    curves = phase_curves(SimpleNamespace(grid=grid, point=point), 0, 110.0)
    assert [c.frequency_Hz for c in curves] == [1e6, 13.56e6]
    assert [c.reduced_field_Td for c in curves] == [100.0, 100.0]
    np.testing.assert_array_equal(curves[0].quantities["mean_energy_eV"][0], np.full(4, 1.0))
    np.testing.assert_array_equal(curves[1].quantities["drift_velocity_flux"][0], np.full(4, -3.0))
    assert "rate_coefficients" not in curves[0].quantities
