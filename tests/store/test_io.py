"""HDF5 results: round trip, self-description, format-version check, clear errors."""

from __future__ import annotations

import json
import warnings

import h5py
import numpy as np
import pytest

from avalanche import AvalancheError, Mixture
from avalanche.engine.tallies import FIELDS
from avalanche.engine.time_of_flight import swarm
from avalanche.store.point import FILE_TYPE, FORMAT_VERSION, load_result, read_result, save_result, write_result


@pytest.fixture(scope="module")
def result():
    mixture = Mixture("lucas-saelee", temperature_K=0.0, number_density_m3=1e24)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return swarm(mixture, 200.0, seed=(3, 1), electrons=256, max_events=2e6, sharing="uniform")


def test_round_trip_keeps_every_number(result, tmp_path):
    path = save_result(tmp_path / "point.h5", result)
    back = load_result(path)
    assert back.to_dict() == result.to_dict()
    assert back.inputs["seed"] == (3, 1)
    for name in FIELDS:
        np.testing.assert_array_equal(back.tallies[name], result.tallies[name])
    for name, values in result.time_series.items():
        np.testing.assert_array_equal(back.time_series[name], values)
    np.testing.assert_array_equal(back.eedf.value, result.eedf.value)
    assert back.mean_energy_eV == result.mean_energy_eV


def test_file_describes_itself(result, tmp_path):
    path = save_result(tmp_path / "point.h5", result)
    with h5py.File(path, "r") as f:
        assert f.attrs["file_type"] == FILE_TYPE == "avalanche-results" and f.attrs["kind"] == "point"
        assert f.attrs["format_version"] == FORMAT_VERSION
        assert all(f.attrs[f"{name}_version"] for name in ("package", "python", "numpy", "numba", "h5py"))
        point = f["points/000000"]
        assert point.attrs["reduced_field_Td"] == 200.0
        checksums = json.loads(point.attrs["checksums_json"])
        assert checksums == result.inputs["mixture"]["checksums"] and len(checksums["lucas-saelee"]) == 64
        assert json.loads(point.attrs["inputs_json"])["settings"]["sharing"] == "uniform"
        assert point["inputs/settings"].attrs["sharing"] == "uniform"  # inputs as attributes of their own
        assert point["inputs/mixture"].attrs["number_density_m3"] == 1e24
        assert "Lucas" in point.attrs["provenance_json"]
        missing = []
        f.visititems(lambda name, obj: missing.append(name) if isinstance(obj, h5py.Dataset)
                     and obj.dtype.kind == "f" and "units" not in obj.attrs else None)
        assert missing == []
        assert point["estimates/drift_velocity_bulk"].attrs["units"] == "m/s"
        assert point["estimates/drift_velocity_bulk_stderr"].attrs["units"] == "m/s"
        assert point["estimates/N_D_L_bulk"].attrs["units"] == "1/(m s)"
        assert point["estimates/alpha_N"].attrs["long_name"] == "Townsend ionization coefficient α/N"
        stored = [f["crosssections"][k] for k in f["crosssections"]]
        assert [d.attrs["species"] for d in stored] == ["lucas-saelee"]
        assert stored[0].attrs["checksum"] == checksums["lucas-saelee"]


def test_several_points_in_one_file(result, tmp_path):
    with h5py.File(tmp_path / "sweep.h5", "w") as f:
        write_result(f.create_group("point_0"), result)
        write_result(f.create_group("point_1"), result)
    with h5py.File(tmp_path / "sweep.h5", "r") as f:
        assert read_result(f["point_1"]).alpha_N == result.alpha_N


def test_other_format_version_is_refused(result, tmp_path):
    path = save_result(tmp_path / "point.h5", result)
    with h5py.File(path, "a") as f:
        f.attrs["format_version"] = FORMAT_VERSION + 1
    with pytest.raises(AvalancheError, match="format version"):
        load_result(path)


def test_damaged_or_foreign_files_are_named(result, tmp_path):
    path = save_result(tmp_path / "point.h5", result)
    with h5py.File(path, "a") as f:
        del f["points/000000/eedf"]
    with pytest.raises(AvalancheError, match="point.h5.*eedf"):
        load_result(path)
    with h5py.File(tmp_path / "other.h5", "w") as f:
        f.attrs["file_type"] = "something else"
    with pytest.raises(AvalancheError, match="not an avalanche results file"):
        load_result(tmp_path / "other.h5")
    (tmp_path / "text.h5").write_text("hello")
    with pytest.raises(AvalancheError, match="not an HDF5 file"):
        load_result(tmp_path / "text.h5")
    with pytest.raises(AvalancheError, match="no such file"):
        load_result(tmp_path / "absent.h5")


def test_files_of_version_0_1_give_a_clear_message(tmp_path):
    for file_type in ("avalanche swarm point", "avalanche-sweep", "avalanche townsend point"):
        with h5py.File(tmp_path / "old.h5", "w") as f:
            f.attrs.update({"file_type": file_type, "format_version": 1, "package_version": "0.1.0"})
        with pytest.raises(AvalancheError, match="older avalanche version.*re-run"):
            load_result(tmp_path / "old.h5")
