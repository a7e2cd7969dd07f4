"""One name per quantity on screen, in JSON, CSV, HDF5 and the Python API; point and steady-state files read by
every tool; xarray reads the files with named dimensions; a point re-runs from its file alone.

References: the names and units are those of avalanche.quantities (the project's own table); the checks compare
the writers with each other and with the in-memory result, so they need no outside data. xarray and h5netcdf are
general-purpose readers of netCDF-style HDF5 (dimension scales).
"""

from __future__ import annotations

import json
import warnings

import h5py
import numpy as np
import pandas
import pytest

import avalanche
from avalanche import quantities as Q
from avalanche.analysis.tables import read_table
from avalanche.cli.main import main

POINT = ["--gas", "Ar", "--en", "300", "--max-events", "2e6", "--electrons", "256", "--precision", "0.2",
         "--seed", "7"]
"""A tiny argon point (a fraction of a second)."""


def run(capsys, *argv):
    code = main([str(a) for a in argv])
    out, err = capsys.readouterr()
    return code, out, err


@pytest.fixture(scope="module")
def point_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("point") / "point.h5"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["swarm", *POINT, "--quiet", "--out", str(path)]) == 0
    return path


@pytest.fixture(scope="module")
def steady_state_file(tmp_path_factory):
    path = tmp_path_factory.mktemp("sst") / "sst.h5"
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        assert main(["townsend", "--gas", "Ar", "--en", "600", "--max-events", "2e6", "--electrons", "512",
                     "--precision", "0.2", "--out", str(path)]) == 0
    return path


def test_one_name_on_screen_in_json_csv_hdf5_and_the_api(point_file, tmp_path, capsys):
    code, out, _ = run(capsys, "swarm", *POINT, "--json")
    assert code == 0
    data = json.loads(out)
    code, screen, _ = run(capsys, "swarm", *POINT, "--quiet")
    assert code == 0
    csv_path = tmp_path / "point.csv"
    assert run(capsys, "table", point_file, "--out", csv_path)[0] == 0
    frame = pandas.read_csv(csv_path, comment="#")
    results = avalanche.open_results(point_file)
    result = results.point(0)
    process = next(iter(result.rate_coefficients))
    for name in ("N_mu", "N_D_L_bulk", "alpha_N", "ionization_rate_coefficient", Q.rate_name(process)):
        unit = Q.unit(name)
        value = data[name]["value"]  # JSON
        assert data["units"][name] == unit
        assert name in screen.split()  # screen
        assert frame[f"{name}[{unit}]"].iloc[0] == pytest.approx(value, rel=1e-6)  # CSV (7 digits)
        assert f"{name}_stderr[{unit}]" in frame.columns
        assert results.value(name)[0] == value and results.units[name] == unit  # HDF5 table
        with h5py.File(point_file, "r") as f:
            stored = f["points/000000/estimates"][name]
            assert stored[()] == value and stored.attrs["units"] == unit  # HDF5 point
            assert f["table"][name].attrs["units"] == unit
        assert getattr(result, name).value == value  # Python API
    assert data["processes"][Q.rate_name(process)] == process
    assert f"rate coefficient k of {process}" in screen
    # the old wording is gone from the screen
    for old in ("N mu", "N D_L", "total ionization frequency / N"):
        assert old not in screen


def test_a_point_file_goes_through_plot_table_and_open_results(point_file, tmp_path, capsys):
    results = avalanche.open_results(point_file)
    assert results.kind == "point" and len(results) == 1 and results.complete
    assert results.grid["reduced_field_Td"][0] == 300.0
    code, _, err = run(capsys, "plot", point_file, "--out-dir", tmp_path, "--format", "png")
    assert code == 0, err
    assert (tmp_path / "point_swarm.png").stat().st_size > 0 and (tmp_path / "point_eedf.png").exists()
    code, out, _ = run(capsys, "table", point_file, "--quantity", "alpha_N,N_mu")
    assert code == 0
    assert [line for line in out.splitlines() if not line.startswith("#")][0] == \
        "reduced_field_Td[Td],alpha_N[m^2],alpha_N_stderr[m^2],N_mu[1/(V m s)],N_mu_stderr[1/(V m s)]"


def test_a_steady_state_file_goes_through_plot_table_and_open_results(steady_state_file, tmp_path, capsys):
    results = avalanche.open_results(steady_state_file)
    assert results.kind == "steady-state" and results.attrs["mode"] == "steady-state-townsend"
    point = results.point(0)
    assert results.value("alpha_N")[0] == point.alpha_N.value and results.units["relaxation_length_m"] == "m"
    code, _, err = run(capsys, "plot", steady_state_file, "--out-dir", tmp_path, "--format", "png",
                       "--quantity", "alpha_N,mean_energy_eV")
    assert code == 0, err
    assert (tmp_path / "sst_swarm.png").exists() and (tmp_path / "sst_sst_profiles.png").exists()
    out_path = tmp_path / "sst.csv"
    assert run(capsys, "table", steady_state_file, "--out", out_path)[0] == 0
    table = read_table(out_path)
    assert table["alpha_N"][0] == pytest.approx(point.alpha_N.value, rel=1e-6) and table.units["alpha_N"] == "m^2"


def test_xarray_opens_a_sweep_with_named_dimensions_and_units(outputs_results):
    xarray = pytest.importorskip("xarray")
    pytest.importorskip("h5netcdf")
    results = avalanche.open_results(outputs_results)
    with xarray.open_dataset(outputs_results, engine="h5netcdf", group="table") as ds:
        assert ds["alpha_N"].dims == ("point",) and ds.sizes["point"] == len(results)
        assert "reduced_field_Td" in ds.coords and ds["reduced_field_Td"].attrs["units"] == "Td"
        assert ds["alpha_N"].attrs["units"] == "m^2" and ds["alpha_N_stderr"].attrs["units"] == "m^2"
        np.testing.assert_array_equal(ds["alpha_N"].values, results.value("alpha_N"))
    with xarray.open_dataset(outputs_results, engine="h5netcdf", group="points/000000/eedf") as ds:
        assert ds["eedf"].dims == ("energy_eV",) and ds["energy_eV"].attrs["units"] == "eV"
    with xarray.open_dataset(outputs_results, engine="h5netcdf", group="points/000000/estimates") as ds:
        assert ds["N_D_T_flux"].attrs["units"] == "1/(m s)"
    in_memory = results.to_xarray()
    assert in_memory["alpha_N"].dims == ("point",) and in_memory["alpha_N"].attrs["units"] == "m^2"
    np.testing.assert_array_equal(in_memory["reduced_field_Td"].values, results.grid["reduced_field_Td"])
    frame = results.to_pandas()
    np.testing.assert_array_equal(frame["alpha_N"].values, in_memory["alpha_N"].values)


def test_every_group_of_a_point_file_opens_in_xarray(point_file, steady_state_file):
    # netCDF readers need every dimension of a variable named (h5netcdf refuses a mix of named and unnamed ones)
    xarray = pytest.importorskip("xarray")
    pytest.importorskip("h5netcdf")
    for path in (point_file, steady_state_file):
        with h5py.File(path, "r") as f:
            groups = ["/", *_groups(f)]
        for group in groups:
            with xarray.open_dataset(path, engine="h5netcdf", group=group) as ds:
                assert not any(dim.startswith("phony_dim") for dim in ds.sizes), (path, group, dict(ds.sizes))
    with xarray.open_dataset(point_file, engine="h5netcdf", group="points/000000/tallies") as ds:
        assert ds["eedf_counts"].dims == ("replica", "energy_bin")


def _groups(f: h5py.File) -> list[str]:
    found = []
    f.visititems(lambda name, obj: found.append(name) if isinstance(obj, h5py.Group) else None)
    return found


def test_a_point_reruns_from_its_file_alone(point_file):
    # The stored cross sections, composition, state, seed and settings give back the stored point bit for bit
    # (fixed-seed determinism, common practice for the Monte Carlo streams of numpy.random.SeedSequence).
    results = avalanche.open_results(point_file)
    stored = results.point(0)
    mixture = results.mixture()
    assert mixture.checksums() == stored.inputs["mixture"]["checksums"]
    settings = stored.inputs["settings"]
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        again = avalanche.swarm(mixture, float(results.grid["reduced_field_Td"][0]), seed=stored.inputs["seed"],
                                precision=settings["precision"], electrons=settings["electrons"],
                                max_events=settings["max_events"])
    for name, estimate in stored.estimates.items():
        assert again.estimates[name].value == estimate.value or np.isnan(estimate.value), name


def test_software_versions_and_inputs_are_recorded(point_file):
    with h5py.File(point_file, "r") as f:
        assert f.attrs["file_type"] == "avalanche-results" and f.attrs["kind"] == "point"
        for name in ("package_version", "python_version", "numpy_version", "numba_version", "h5py_version"):
            assert f.attrs[name]
        inputs = f["points/000000/inputs"]
        assert inputs.attrs["reduced_field_Td"] == 300.0 and inputs["settings"].attrs["electrons"] == 256
