"""The gap results file: every public quantity survives the HDF5 round trip, with units, provenance and the
cautions in the metadata (the layout of avalanche/store/gap.py; h5py as the reference reader)."""

from __future__ import annotations

import math

import h5py
import numpy as np
import pytest

import avalanche as av
from avalanche import AvalancheError, Mixture, model_gas
from avalanche.constants import TOWNSEND_V_m2
from avalanche.store.gap import read_gap, write_gap

N_m3 = 1e25


@pytest.fixture(scope="module")
def run():
    mixture = Mixture({"lucas-saelee": 1.0}, number_density_m3=N_m3, temperature_K=0,
                      sets={"lucas-saelee": model_gas("lucas-saelee", F=0.5)})
    a, b = 50e-6, 1e-3
    V = 200 * TOWNSEND_V_m2 * N_m3 * a * math.log(b / a)
    return av.gap(av.Coaxial(a, b), mixture, V, primaries=20, seed=1, sharing="uniform",
                  start_position_m=(3 * a, 0, 0), alpha_table=([50.0, 100.0, 300.0], [7e-22, 2.2e-21, 5.8e-21]))


def test_round_trip(tmp_path, run):
    path = write_gap(tmp_path / "gap.h5", run)
    data = read_gap(path)
    assert data["estimates"]["mean_gain"].value == run.mean_gain.value
    assert data["estimates"]["polya_theta"].stderr == run.polya_theta.stderr
    assert data["attrs"]["local_field_gain"] == run.local_field_gain
    assert np.array_equal(data["gain"]["per_primary"], run.gain_distribution.per_primary)
    assert np.array_equal(data["current"]["driven_A"], run.current["driven_A"])
    assert np.array_equal(data["maps"]["created"], run.maps["created"])
    assert data["attrs"]["inputs"]["geometry"]["kind"] == "coaxial"
    assert "lucas-saelee" in data["attrs"]["provenance"]
    assert "space charge is neglected" in data["attrs"]["space_charge"]
    assert "High voltages kill" in data["attrs"]["caution"]
    with h5py.File(path) as f:
        assert f["current/driven_A"].attrs["units"] == "A"
        assert f["estimates/mean_gain"].attrs["units"] == "1"


def test_reading_another_file_fails_clearly(tmp_path):
    path = tmp_path / "other.h5"
    with h5py.File(path, "w") as f:
        f.attrs["file_type"] = "something else"
    with pytest.raises(AvalancheError, match="not an avalanche gap file"):
        read_gap(path)

