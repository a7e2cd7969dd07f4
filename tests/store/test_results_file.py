"""The sweep results file: layout, table, provenance, crash-safe commits, resume guards, reading back.

These tests store a small stand-in payload per point (written by the test itself) so that the file's own rules are
checked independently of the engine; tests/test_sweep.py runs real engine points through the same file.
"""

from __future__ import annotations

import subprocess
import sys
from dataclasses import dataclass, field
from pathlib import Path

import h5py
import numpy as np
import pytest

from avalanche import __version__
from avalanche.engine.results import Estimate
from avalanche.errors import AvalancheError, ConfigError
from avalanche.store.sweep_file import FILE_TYPE, FORMAT_VERSION, ResultsWriter, headline_values, open_results
from avalanche.sweep.runfile import load_runfile, parse_runfile

ROOT = Path(__file__).resolve().parents[2]

RUN = '''
[sweep]
name = "file-test"
seed = 3

[gas]
mixtures = ["reid-ramp", "maxwell"]
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [1, 10, 100]
'''


@dataclass
class StandIn:
    """A stand-in for a point's result: two estimates, a rate coefficient and an array."""

    mean_energy_eV: Estimate
    drift_velocity_bulk: Estimate
    rate_coefficients: dict
    curve: np.ndarray = field(default_factory=lambda: np.zeros(3))


def stand_in(i: int) -> StandIn:
    return StandIn(mean_energy_eV=Estimate(1.0 + i, 0.01 * (i + 1)), drift_velocity_bulk=Estimate(1e4 * i, 5.0),
                   rate_coefficients={"ramp": Estimate(1e-14 * i, 1e-16), "a/b": Estimate(2e-15, 1e-17)},
                   curve=np.linspace(0, i, 5))


def write_stand_in(group, result):
    group.create_dataset("curve", data=result.curve).attrs["units"] = "1"
    group.attrs["mean_energy_eV"] = [result.mean_energy_eV.value, result.mean_energy_eV.stderr]
    group.attrs["drift_velocity_bulk"] = [result.drift_velocity_bulk.value, result.drift_velocity_bulk.stderr]
    for label, est in result.rate_coefficients.items():
        group.attrs[f"rate:{label}"] = [est.value, est.stderr]


def read_stand_in(group):
    rates = {k[5:]: Estimate(*v) for k, v in group.attrs.items() if k.startswith("rate:")}
    return StandIn(mean_energy_eV=Estimate(*group.attrs["mean_energy_eV"]),
                   drift_velocity_bulk=Estimate(*group.attrs["drift_velocity_bulk"]), rate_coefficients=rates,
                   curve=group["curve"][()])


IO = (write_stand_in, read_stand_in)


def make_file(path, rf, indices=(0, 1, 2, 3, 4, 5), failed=()):
    with ResultsWriter(path, rf, payload_io=IO) as writer:
        for i in indices:
            writer.commit(rf.points[i], stand_in(i), {"attempts": 1, "wall_seconds": 0.5, "worker": "here:1"})
        for i in failed:
            writer.commit_failure(rf.points[i], "worker process died (killed by SIGKILL) in each of 3 attempts",
                                  {"attempts": 3})


def test_headline_values_take_estimates_and_rate_coefficients():
    values = headline_values(stand_in(2))
    assert values["mean_energy_eV"] == (3.0, 0.03, "eV")
    assert values["drift_velocity_bulk"] == (2e4, 5.0, "m/s")
    assert values["rate_coefficient_ramp"] == (2e-14, 1e-16, "m^3/s")
    assert "alpha_N" not in values  # the stand-in has no such estimate


def test_a_complete_file_reads_back(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf)
    res = open_results(path, payload_io=IO)
    assert len(res) == 6 and res.complete
    assert res.mixtures == ["reid-ramp", "maxwell"]
    assert list(res.grid["mixture"]) == ["reid-ramp"] * 3 + ["maxwell"] * 3
    assert list(res.grid["reduced_field_Td"]) == [1.0, 10.0, 100.0] * 2
    assert list(res.grid["seed"]) == [p.seed for p in rf.points]
    assert list(res.grid["status"]) == ["ok"] * 6
    assert res.quantities[:2] == ["mean_energy_eV", "drift_velocity_bulk"]  # headline order, then rates
    assert res.quantities[2:] == ["rate_coefficient_a_b", "rate_coefficient_ramp"]
    assert res.units["mean_energy_eV"] == "eV" and res.units["rate_coefficient_ramp"] == "m^3/s"
    np.testing.assert_array_equal(res.value("mean_energy_eV"), 1.0 + np.arange(6))
    np.testing.assert_array_equal(res.stderr("mean_energy_eV"), 0.01 * (np.arange(6) + 1))
    table = res.table
    np.testing.assert_array_equal(table["rate_coefficient_ramp"], 1e-14 * np.arange(6))
    np.testing.assert_array_equal(table["reduced_field_Td"], res.grid["reduced_field_Td"])
    np.testing.assert_array_equal(res.point(4).curve, np.linspace(0, 4, 5))
    with pytest.raises(ConfigError, match="no quantity 'mean_energy' in the table \\(did you mean 'mean_energy_eV'"):
        res.value("mean_energy")


def test_the_file_describes_itself(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0,))
    res = open_results(path, payload_io=IO)
    assert res.attrs["file_type"] == FILE_TYPE and res.attrs["format_version"] == FORMAT_VERSION
    assert res.attrs["package_version"] == __version__
    assert res.attrs["runfile_sha256"] == rf.text_sha256 and res.attrs["config_sha256"] == rf.config_sha256
    assert res.attrs["master_seed"] == 3 and res.attrs["n_points"] == 6 and res.attrs["mode"] == "time-of-flight"
    assert res.runfile_text == RUN and res.config == rf.config()
    assert res.checksums == rf.checksums and set(res.checksums) == {"reid-ramp", "maxwell"}
    with h5py.File(path, "r") as f:
        assert f.attrs["kind"] == "sweep"
        assert f["table/reduced_field_Td"].attrs["units"] == "Td"
        assert f["table/frequency_Hz"].attrs["units"] == "Hz"
        columns = [c for c in f["table"].values() if "quantity" in c.attrs]
        assert {c.name.rsplit("/", 1)[1] for c in columns} == {
            "mean_energy_eV", "mean_energy_eV_stderr", "drift_velocity_bulk", "drift_velocity_bulk_stderr",
            "rate_coefficient_ramp", "rate_coefficient_ramp_stderr", "rate_coefficient_a_b",
            "rate_coefficient_a_b_stderr"}
        assert all(c.attrs["units"] for c in columns)
        assert f["table/rate_coefficient_a_b"].attrs["process"] == "a/b"
        stored = {d.attrs["species"] for d in f["crosssections"].values()}
        assert stored == {"reid-ramp", "maxwell"}  # the sets used, in the file
        point = f["points/000000"]
        assert point.attrs["sweep_status"] == "ok" and point.attrs["sweep_seed"] == rf.points[0].seed
        assert point.attrs["sweep_worker"] == "here:1" and point.attrs["sweep_wall_seconds"] == 0.5


def test_unfinished_and_failed_points(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0, 2), failed=(1,))
    res = open_results(path, payload_io=IO)
    assert list(res.grid["status"]) == ["ok", "failed", "ok", "missing", "missing", "missing"]
    assert not res.complete
    assert np.isnan(res.value("mean_energy_eV")[[1, 3, 4, 5]]).all()
    assert res.failures == [{"index": 1, "reason": "worker process died (killed by SIGKILL) in each of 3 attempts",
                             "attempts": 3}]
    with pytest.raises(AvalancheError, match="point 1 has status 'failed' \\(worker process died"):
        res.point(1)
    with pytest.raises(AvalancheError, match="point 3 has status 'missing' \\(not computed yet\\)"):
        res.point(3)
    with pytest.raises(ConfigError, match="point index 6 out of range"):
        res.point(6)
    # resuming retries the failed and the missing points, and keeps the finished ones
    with ResultsWriter(path, rf, resume=True, payload_io=IO) as writer:
        assert writer.finished == {0, 2}
        writer.commit(rf.points[1], stand_in(1))
    res = open_results(path, payload_io=IO)
    assert list(res.grid["status"][:3]) == ["ok"] * 3 and res.failures == []
    assert res.value("mean_energy_eV")[1] == 2.0


CRASH = '''
import os, signal, sys
sys.path.insert(0, {tests!r})
from test_results_file import IO, RUN, stand_in
from avalanche.store.sweep_file import ResultsWriter
from avalanche.sweep.runfile import parse_runfile

rf = parse_runfile(RUN, "file-test.toml")

def write_then_die(group, result):
    IO[0](group, result)
    group.create_dataset("more", data=[1.0, 2.0])
    os.kill(os.getpid(), signal.SIGKILL)   # killed in the middle of committing the third point

writer = ResultsWriter({path!r}, rf, payload_io=IO)
writer.commit(rf.points[0], stand_in(0))
writer.commit(rf.points[1], stand_in(1))
writer._write_payload = write_then_die
writer.commit(rf.points[2], stand_in(2))
'''


def test_a_kill_during_a_commit_leaves_the_finished_points_intact(tmp_path):
    path = tmp_path / "crash.h5"
    script = CRASH.format(tests=str(Path(__file__).resolve().parent), path=str(path))
    proc = subprocess.run([sys.executable, "-c", script], cwd=ROOT, capture_output=True, text=True)
    assert proc.returncode == -9, proc.stderr
    rf = parse_runfile(RUN, "file-test.toml")
    res = open_results(path, payload_io=IO)
    assert list(res.grid["status"]) == ["ok", "ok", "missing", "missing", "missing", "missing"]
    assert res.value("mean_energy_eV")[:2].tolist() == [1.0, 2.0]
    assert np.isnan(res.value("mean_energy_eV")[2])  # the interrupted commit's row does not count
    np.testing.assert_array_equal(res.point(1).curve, np.linspace(0, 1, 5))
    with ResultsWriter(path, rf, resume=True, payload_io=IO) as writer:
        assert writer.finished == {0, 1}
        for i in range(2, 6):
            writer.commit(rf.points[i], stand_in(i))
    resumed = open_results(path, payload_io=IO)
    make_file(tmp_path / "straight.h5", rf)
    straight = open_results(tmp_path / "straight.h5", payload_io=IO)
    assert resumed.complete
    for q in straight.quantities:
        np.testing.assert_array_equal(resumed.value(q), straight.value(q))
        np.testing.assert_array_equal(resumed.stderr(q), straight.stderr(q))
    with h5py.File(path, "r") as f:
        assert "more" not in f["points/000002"]  # the interrupted attempt was replaced, not merged


def test_new_files_never_overwrite_and_resume_needs_a_file(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0,))
    with pytest.raises(ConfigError, match="already exists; continue it with --resume"):
        ResultsWriter(path, rf, payload_io=IO)
    with pytest.raises(ConfigError, match="does not exist; run without --resume"):
        ResultsWriter(tmp_path / "none.h5", rf, resume=True, payload_io=IO)
    assert open_results(path, payload_io=IO).grid["status"][0] == "ok"  # untouched


def test_resume_is_refused_when_the_run_file_changed(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0,))
    changed = parse_runfile(RUN.replace("[1, 10, 100]", "[1, 10, 200]").replace("seed = 3", "seed = 4"), "new.toml")
    with pytest.raises(ConfigError) as info:
        ResultsWriter(path, changed, resume=True, payload_io=IO)
    message = str(info.value)
    assert "cannot resume" in message and "run file 'new.toml' differs" in message
    assert "changed: reduced_field_Td, seed" in message and "--out" in message
    # a comment or a new name changes nothing that matters
    cosmetic = parse_runfile("# note\n" + RUN.replace('name = "file-test"', 'name = "renamed"'), "file-test.toml")
    with ResultsWriter(path, cosmetic, resume=True, payload_io=IO) as writer:
        assert writer.finished == {0}


def test_resume_is_refused_when_the_cross_sections_changed(tmp_path, set_text):
    gas = tmp_path / "testium.toml"
    gas.write_text(set_text)
    run = tmp_path / "run.toml"
    run.write_text(RUN.replace('mixtures = ["reid-ramp", "maxwell"]', 'mixture = "testium.toml"')
                   .replace("temperature_K = 0\nnumber_density_m3 = 1e25", "temperature_K = 300"))
    rf = load_runfile(run)
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0,))
    gas.write_text(set_text.replace("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]",
                                    "cross_section = [1e-20, 2.1e-20, 1.5e-20, 5e-21]"))
    with pytest.raises(ConfigError, match="cannot resume .*the cross sections changed since it was started "
                                          "\\(.*testium.toml: [0-9a-f]{12} in the file, [0-9a-f]{12} now\\)"):
        ResultsWriter(path, load_runfile(run), resume=True, payload_io=IO)


def test_resume_is_refused_by_another_package_version(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0,))
    with h5py.File(path, "r+") as f:
        f.attrs["package_version"] = "0.0.1"
    with pytest.raises(ConfigError, match="started with avalanche 0.0.1 and this is avalanche"):
        ResultsWriter(path, rf, resume=True, payload_io=IO)


def test_other_files_are_rejected_clearly(tmp_path):
    other = tmp_path / "other.h5"
    with h5py.File(other, "w") as f:
        f.attrs["file_type"] = "something-else"
    with pytest.raises(AvalancheError, match="is not an avalanche results file"):
        open_results(other)
    rf = parse_runfile(RUN, "file-test.toml")
    newer = tmp_path / "newer.h5"
    make_file(newer, rf, indices=(0,))
    with h5py.File(newer, "r+") as f:
        f.attrs["format_version"] = FORMAT_VERSION + 1
    with pytest.raises(AvalancheError, match=f"has results format version {FORMAT_VERSION + 1}"):
        open_results(newer)
    with pytest.raises(ConfigError, match="not found"):
        open_results(tmp_path / "absent.h5")


def test_a_file_being_written_is_reported_as_locked(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    with ResultsWriter(path, rf, payload_io=IO):
        code = f"from avalanche.store.sweep_file import open_results; open_results({str(path)!r})"
        proc = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True)
    assert proc.returncode != 0
    assert "is locked by another process (a sweep still running?)" in proc.stderr \
        or "is open for writing in another process" in proc.stderr


def test_to_pandas_is_optional(tmp_path):
    rf = parse_runfile(RUN, "file-test.toml")
    path = tmp_path / "r.h5"
    make_file(path, rf, indices=(0, 1))
    res = open_results(path, payload_io=IO)
    try:
        import pandas  # noqa: F401
    except ImportError:
        with pytest.raises(AvalancheError, match="to_pandas\\(\\) needs pandas"):
            res.to_pandas()
    else:
        frame = res.to_pandas()
        assert list(frame["mean_energy_eV"][:2]) == [1.0, 2.0] and len(frame) == 6
