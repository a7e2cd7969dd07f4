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
from avalanche.store.point import FORMAT_VERSION, load_result, read_result, save_result, write_result


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
        assert f.attrs["file_type"] == "avalanche swarm point"
        assert f.attrs["format_version"] == FORMAT_VERSION
        assert f.attrs["reduced_field_Td"] == 200.0
        checksums = json.loads(f.attrs["checksums_json"])
        assert checksums == result.inputs["mixture"]["checksums"] and len(checksums["lucas-saelee"]) == 64
        assert json.loads(f.attrs["inputs_json"])["settings"]["sharing"] == "uniform"
        assert "Lucas" in f.attrs["provenance_json"]
        missing = []
        f.visititems(lambda name, obj: missing.append(name) if isinstance(obj, h5py.Dataset)
                     and "units" not in obj.attrs and not name.endswith("keys") else None)
        assert missing == []
        assert f["estimates/drift_velocity_bulk"].attrs["units"] == "m/s"


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
    with pytest.raises(AvalancheError, match="format_version"):
        load_result(path)


def test_damaged_or_foreign_files_are_named(result, tmp_path):
    path = save_result(tmp_path / "point.h5", result)
    with h5py.File(path, "a") as f:
        del f["eedf"]
    with pytest.raises(AvalancheError, match="point.h5.*eedf"):
        load_result(path)
    with h5py.File(tmp_path / "other.h5", "w") as f:
        f.attrs["file_type"] = "something else"
    with pytest.raises(AvalancheError, match="not an avalanche swarm point"):
        load_result(tmp_path / "other.h5")
    (tmp_path / "text.h5").write_text("hello")
    with pytest.raises(AvalancheError, match="not an HDF5 file"):
        load_result(tmp_path / "text.h5")
    with pytest.raises(AvalancheError, match="no such file"):
        load_result(tmp_path / "absent.h5")
