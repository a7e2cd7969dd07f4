"""Output files are never overwritten without being told, never left half-written, and a sweep's results file has one
writer at a time, survives a full disk and an interrupted creation (issue 17, "Files").

The sweep-file checks store a small stand-in payload per point, so they test the file's rules without the engine.
The reference for the expected behaviour is POSIX: ``rename(2)`` replaces a file atomically, ``link(2)`` fails with
EEXIST on an existing name, ``flock(2)`` locks are released when their holder ends (common practice).
"""

from __future__ import annotations

import errno
import os
from pathlib import Path

import h5py
import pytest

from avalanche.engine.results import Estimate
from avalanche.errors import AvalancheError, ConfigError
from avalanche.store.files import FileLock, check_output_file, write_atomically
from avalanche.store.sweep_file import ResultsWriter, incomplete_reason, open_results
from avalanche.sweep.runfile import parse_runfile

RUN = '''
[sweep]
name = "safe-files"

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [1, 10, 100]
'''


class StandIn:
    """A point's stand-in result: one estimate."""

    def __init__(self, i: int):
        self.mean_energy_eV = Estimate(1.0 + i, 0.01)


def write_stand_in(group, result):
    group.attrs["mean_energy_eV"] = [result.mean_energy_eV.value, result.mean_energy_eV.stderr]


def read_stand_in(group):
    return StandIn(int(group.attrs["mean_energy_eV"][0] - 1))


IO = (write_stand_in, read_stand_in)


def runfile():
    return parse_runfile(RUN, "safe-files.toml")


def test_an_existing_file_is_refused_without_force_naming_the_path_and_the_flag(tmp_path):
    path = tmp_path / "keep.toml"
    path.write_text("precious = true\n")
    with pytest.raises(ConfigError, match="keep.toml' already exists; add --force"):
        check_output_file(path)
    assert check_output_file(path, force=True) == path
    with pytest.raises(ConfigError, match="is a folder"):
        check_output_file(tmp_path, force=True)
    blocker = tmp_path / "plain-file"
    blocker.write_text("x")
    with pytest.raises(ConfigError, match="cannot create the folder"):
        check_output_file(blocker / "sub" / "out.h5")
    assert path.read_text() == "precious = true\n"


def test_an_atomic_write_that_fails_leaves_the_old_file_and_no_partial_file(tmp_path):
    path = tmp_path / "point.h5"
    path.write_bytes(b"old content")

    def full_disk(temporary: Path):
        temporary.write_bytes(b"half")
        raise OSError(errno.ENOSPC, "No space left on device")

    with pytest.raises(AvalancheError, match="the disk is full"):
        write_atomically(path, full_disk)
    assert path.read_bytes() == b"old content"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["point.h5"]
    write_atomically(path, lambda temporary: temporary.write_bytes(b"new"))
    assert path.read_bytes() == b"new"


def test_two_writers_cannot_share_a_results_file_even_with_hdf5_locking_off(tmp_path, monkeypatch):
    monkeypatch.setenv("HDF5_USE_FILE_LOCKING", "FALSE")
    rf, path = runfile(), tmp_path / "r.h5"
    with ResultsWriter(path, rf, payload_io=IO) as first:
        first.commit(rf.points[0], StandIn(0))
        assert (tmp_path / "r.h5.lock").read_text().strip().endswith(f":{os.getpid()}")
        with pytest.raises(AvalancheError, match="in use by another sweep"):
            ResultsWriter(path, rf, resume=True, payload_io=IO)
        with pytest.raises(AvalancheError, match="in use by another sweep"):
            FileLock(path)
    assert not (tmp_path / "r.h5.lock").exists()  # released and removed on close
    with ResultsWriter(path, rf, resume=True, payload_io=IO) as second:
        assert second.finished == {0}


@pytest.mark.parametrize("size", [0, 96])
def test_a_file_left_empty_or_truncated_at_creation_is_incomplete_and_resume_starts_it_afresh(tmp_path, size):
    rf, path = runfile(), tmp_path / "r.h5"
    with ResultsWriter(path, rf, payload_io=IO):
        pass
    with open(path, "r+b") as handle:  # what a kill -9 within milliseconds of the creation left (older versions)
        handle.truncate(size)
    assert incomplete_reason(path)
    with pytest.raises(AvalancheError, match="incomplete .* safe to delete, and `avalanche sweep --resume` starts"):
        open_results(path)
    with pytest.raises(ConfigError, match="incomplete"):
        ResultsWriter(path, rf, payload_io=IO)
    with ResultsWriter(path, rf, resume=True, payload_io=IO) as writer:
        assert writer.restarted and writer.finished == set()
        writer.commit(rf.points[1], StandIn(1))
    assert list(open_results(path, payload_io=IO).grid["status"]) == ["missing", "ok", "missing"]


def test_a_large_damaged_file_or_a_foreign_file_is_never_taken_as_incomplete(tmp_path):
    foreign = tmp_path / "notes.h5"
    foreign.write_text("not hdf5 at all\n")
    assert incomplete_reason(foreign) is None
    with h5py.File(tmp_path / "other.h5", "w") as f:
        f.create_dataset("data", data=[1, 2, 3])
    assert incomplete_reason(tmp_path / "other.h5") is None


def test_a_full_disk_stops_with_one_message_and_the_committed_points_intact(tmp_path):
    rf, path = runfile(), tmp_path / "r.h5"
    calls = []

    def fills_the_disk(group, result):
        calls.append(1)
        if len(calls) > 1:
            raise OSError(errno.ENOSPC, "No space left on device")
        write_stand_in(group, result)

    with ResultsWriter(path, rf, payload_io=(fills_the_disk, read_stand_in)) as writer:
        writer.commit(rf.points[0], StandIn(0))
        with pytest.raises(AvalancheError) as info:
            writer.commit(rf.points[1], StandIn(1))
    message = str(info.value)
    assert "disk is full" in message and "1 points committed before are intact" in message and "--resume" in message
    assert "\n" not in message
    results = open_results(path, payload_io=IO)
    assert list(results.grid["status"]) == ["ok", "missing", "missing"]
    assert results.point(0).mean_energy_eV.value == 1.0


def test_the_lock_holds_across_processes_and_dies_with_its_holder(tmp_path):
    import signal
    import subprocess
    import sys

    path = tmp_path / "r.h5"
    code = ("import sys, time\nfrom avalanche.store.files import FileLock\nlock = FileLock(sys.argv[1])\n"
            "print('held', flush=True)\ntime.sleep(60)\n")
    holder = subprocess.Popen([sys.executable, "-c", code, str(path)], stdout=subprocess.PIPE, text=True,
                              env={**os.environ, "HDF5_USE_FILE_LOCKING": "FALSE"})
    try:
        assert holder.stdout.readline().strip() == "held"
        with pytest.raises(AvalancheError, match=f"in use by another sweep .*:{holder.pid}"):
            FileLock(path)
    finally:
        holder.send_signal(signal.SIGKILL)  # like kill -9: the lock file stays, the lock goes with the process
        holder.wait()
    assert (tmp_path / "r.h5.lock").exists()
    lock = FileLock(path)
    lock.release()
    assert not (tmp_path / "r.h5.lock").exists()
