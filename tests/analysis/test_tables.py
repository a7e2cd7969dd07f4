"""Swarm tables and fluid-model tables: sorting, monotone coordinate, units header, round trips, interpolation.

References: the log-log interpolant reproduces any power law f = c x**k exactly (analytic); units of the swarm
quantities are the SI units of their definitions (common practice).
"""

from __future__ import annotations

import re

import numpy as np
import pytest

from avalanche.analysis.tables import QUANTITY_UNITS, SwarmTable, fluid_table, read_table
from avalanche.errors import ConfigError, PhysicsWarning
from avalanche.quantities import rate_name
from avalanche.store.sweep_file import open_results


def test_fluid_table_equals_the_results_file(outputs_results, tmp_path):  # noqa: F811
    results = open_results(outputs_results)
    table = SwarmTable.from_results(results, mixture="Ar")
    fluid = fluid_table(table)
    rows = results.grid["mixture_index"] == 0
    order = np.argsort(results.grid["reduced_field_Td"][rows])
    assert fluid.coordinate == "reduced_field_Td" and fluid.names[0] == "reduced_field_Td"
    assert np.all(np.diff(fluid["reduced_field_Td"]) > 0)
    for name in ("mean_energy_eV", "alpha_N", "rate_coefficient_1s4_3p5_4s_3_2_1_resonant"):
        np.testing.assert_array_equal(fluid[name], results.value(name)[rows][order])
        np.testing.assert_array_equal(fluid[f"{name}_stderr"], results.stderr(name)[rows][order])
        assert fluid.units[name] == fluid.units[f"{name}_stderr"] == results.units[name]
    assert not any(name.startswith("rate_coefficient_N2_") for name in fluid.names)  # the other mixture's processes
    for writer in (fluid.to_csv, fluid.to_text):
        for digits in (None, 7):
            back = read_table(writer(tmp_path / f"t.{writer.__name__}", digits))
            assert back.coordinate == fluid.coordinate and back.metadata["gas"] == "Ar"
            assert back.names == fluid.names
            assert [back.units[n] for n in back.names] == [fluid.units[n] for n in fluid.names]
            for (name, values), other in zip(fluid.columns.items(), back.columns.values(), strict=True):
                if digits is None:  # shortest round-trip floats: exact
                    np.testing.assert_array_equal(values, other, err_msg=name)
                else:  # rounding to 7 significant digits: relative error at most 5e-7 (arithmetic)
                    np.testing.assert_allclose(other, values, rtol=5e-7, atol=0, err_msg=name)


def test_csv_reads_as_numbers_in_pandas(outputs_results, tmp_path):  # noqa: F811
    # one header line of safe names, numeric columns: what a general-purpose reader (pandas) expects of a CSV
    pandas = pytest.importorskip("pandas")
    fluid = fluid_table(SwarmTable.from_results(open_results(outputs_results), mixture="Ar"))
    frame = pandas.read_csv(fluid.to_csv(tmp_path / "rates.csv"), comment="#")
    assert list(frame.columns) == list(fluid.column_labels().values())
    assert all(dtype.kind in "fi" for dtype in frame.dtypes)  # numbers, not strings
    # safe column names: letters, digits and _, then the unit in brackets
    assert all(re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*(\[[^\]]+\])?", name) for name in frame.columns)
    np.testing.assert_allclose(frame["alpha_N[m^2]"], fluid["alpha_N"], rtol=5e-7)


def test_csv_header_is_one_line_of_names_with_units_in_brackets(tmp_path):
    table = SwarmTable([20.0, 10.0], {"drift_velocity_bulk": ([2.0, 1.0], [0.1, 0.1]),
                                      "N_D_L_bulk": ([4.0, 3.0], [0.2, 0.2])})
    text = fluid_table(table).format_csv()
    lines = [line for line in text.splitlines() if not line.startswith("#")]
    # SI units of the definitions: W in m/s, N·D in 1/(m s) (common practice).
    assert lines[0] == ("reduced_field_Td[Td],drift_velocity_bulk[m/s],drift_velocity_bulk_stderr[m/s],"
                        "N_D_L_bulk[1/(m s)],N_D_L_bulk_stderr[1/(m s)]")
    assert lines[1] == "10,1,0.1,3,0.2"  # sorted by E/N, 7 significant digits
    text = fluid_table(table).format_text()
    assert ("# units: reduced_field_Td = Td; drift_velocity_bulk = m/s; drift_velocity_bulk_stderr = m/s; "
            "N_D_L_bulk = 1/(m s); N_D_L_bulk_stderr = 1/(m s)") in text.splitlines()


def test_mean_energy_coordinate_sorted_or_refused():
    table = SwarmTable([1.0, 2.0, 4.0], {"mean_energy_eV": ([1.0, 1.5, 2.5], [0.01, 0.01, 0.01]),
                                         "alpha_N": ([0.0, 1.0, 2.0], [0.0, 0.1, 0.1])})
    fluid = fluid_table(table, against="mean-energy")
    assert fluid.names[:3] == ["mean_energy_eV", "mean_energy_eV_stderr", "reduced_field_Td"]
    assert np.all(np.diff(fluid["mean_energy_eV"]) > 0)
    noisy = SwarmTable([1.0, 2.0, 4.0], {"mean_energy_eV": ([1.0, 1.5, 1.49], [0.01, 0.01, 0.01])})
    with pytest.raises(ConfigError, match=r"not strictly increasing.*1\.5 ± 0\.01 eV at 2 Td.*1\.49 ± 0\.01 eV at "
                                          r"4 Td.*0\.71 combined standard errors, likely statistical noise"):
        fluid_table(noisy, against="mean-energy")
    with pytest.raises(ConfigError, match="did you mean 'mean-energy'"):
        fluid_table(table, against="mean_energy")


def test_interpolation_is_log_log():
    # A power law c x**k is reproduced exactly by log-log interpolation (analytic).
    fields = np.array([10.0, 30.0, 100.0, 300.0])
    table = SwarmTable(fields, {"alpha_N": (2e-22 * fields**1.7, 0.01 * fields)})
    fluid = fluid_table(table)
    x = np.array([12.0, 55.0, 250.0])
    np.testing.assert_allclose(fluid.interpolate("alpha_N", x), 2e-22 * x**1.7, rtol=1e-12)
    np.testing.assert_allclose(fluid.interpolate("alpha_N", fields), fluid["alpha_N"], rtol=1e-13)  # exp∘log
    with pytest.warns(PhysicsWarning, match="outside the table range"):
        fluid.interpolate("alpha_N", 1000.0)


def test_swarm_table_checks_its_input():
    with pytest.raises(ConfigError, match="appears more than once"):
        SwarmTable([1.0, 1.0], {"alpha_N": ([0, 0], [0, 0])})
    with pytest.raises(ConfigError, match="one per reduced field"):
        SwarmTable([1.0, 2.0], {"alpha_N": ([0, 0, 0], [0, 0, 0])})
    with pytest.raises(ConfigError, match="did you mean 'drift_velocity_bulk'"):
        SwarmTable([1.0], {"drift_velocity_bulk": ([1.0], [0.1])}).get("drift_velocity_blk")
    assert all(QUANTITY_UNITS[name] for name in QUANTITY_UNITS)


def test_from_results_selection(outputs_results):  # noqa: F811
    results = open_results(outputs_results)
    with pytest.raises(ConfigError, match="2 mixtures"):
        SwarmTable.from_results(results)
    with pytest.raises(ConfigError, match="frequency"):
        SwarmTable.from_results(results, mixture=1, frequency_Hz=13.56e6)
    mix = SwarmTable.from_results(results, mixture="Ar:0.5,N2:0.5")
    assert mix.composition == {"Ar": 0.5, "N2": 0.5} and mix.temperature_K == 300.0
    assert "rate_coefficient_N2_C3Pi_u" in mix.quantities and mix.processes["rate_coefficient_N2_C3Pi_u"] == \
        "N2:C3Pi_u"


def test_from_swarm_results_keeps_every_estimate():
    from avalanche.engine.time_of_flight import swarm
    from avalanche.gas.mixture import Mixture

    # Reid ramp model gas (Reid 1979, Aust. J. Phys. 32 231), tiny budget: only the bookkeeping is checked here.
    gas = Mixture("reid-ramp", temperature_K=0, number_density_m3=1e25)
    runs = [swarm(gas, field, seed=(5, k), precision=0.05, electrons=1000, max_events=3_000_000)
            for k, field in enumerate((24.0, 12.0))]
    table = SwarmTable.from_swarm_results(runs)
    np.testing.assert_array_equal(table.reduced_field_Td, [12.0, 24.0])
    for name, estimate in runs[1].estimates.items():
        assert table.get(name)[0][0] == estimate.value or np.isnan(estimate.value)
    for key, estimate in runs[0].rate_coefficients.items():
        assert table.rate(key)[0][1] == estimate.value == table.get(rate_name(key))[0][1]
    assert set(table.eedf) == {12.0, 24.0} and table.gas_label == "reid-ramp"


def test_a_table_of_the_first_format_still_reads(tmp_path):
    # tables written before the one-header-line CSV (names line, then units line) keep opening
    old = tmp_path / "old.csv"
    old.write_text("# avalanche fluid-model table (format 1), avalanche 0.1.0\n# gas: Ar\n"
                   "# coordinate: reduced_field_Td, sorted and strictly increasing\n"
                   "# next line: column names; the line after it: units\n"
                   "reduced_field_Td,alpha_N,alpha_N_stderr\nTd,m2,m2\n100.0,1e-21,2e-23\n200.0,3e-21,4e-23\n")
    back = read_table(old)
    assert back.units["alpha_N"] == "m2" and back.metadata["gas"] == "Ar"  # as the old file says
    np.testing.assert_array_equal(back["alpha_N"], [1e-21, 3e-21])
