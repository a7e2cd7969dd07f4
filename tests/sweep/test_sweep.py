"""Batch sweeps: the local worker pool and Dask executors, bitwise-reproducible sweeps for any number of workers,
resume after SIGKILL, retried and failed points, the ``avalanche sweep`` command.

Sweeps use tiny points of the Reid ramp model gas so that the whole module runs in well under a minute.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import h5py
import numpy as np
import pytest

from avalanche.errors import ConfigError
from avalanche.quantities import rate_name
from avalanche.store.sweep_file import open_results
from avalanche.sweep.execution import LocalPool, compute_point, run_sweep
from avalanche.sweep.runfile import load_runfile

ROOT = Path(__file__).resolve().parents[2]


# Task functions for the worker processes (module level, so that fresh worker processes can import them).

def square(x):
    return x * x


def refuse_odd(x):
    if x % 2:
        raise ValueError(f"odd input {x}")
    return x


def die_once(task):
    """Kill the own worker process the first time a task with this marker runs (a real SIGKILL), then succeed."""
    marker, value = task
    if not Path(marker).exists():
        Path(marker).write_text("died once")
        os.kill(os.getpid(), signal.SIGKILL)
    return value


def die_always(value):
    if value == "doomed":
        os.kill(os.getpid(), signal.SIGKILL)
    return value


def test_a_local_pool_runs_every_task_once():
    outcomes = list(LocalPool(2).map_unordered(square, [(i, i) for i in range(7)]))
    assert sorted(o.key for o in outcomes) == list(range(7))
    assert all(o.ok and o.value == o.key ** 2 and o.attempts == 1 for o in outcomes)
    assert len({o.worker for o in outcomes}) <= 2 and all(":" in o.worker for o in outcomes)
    assert list(LocalPool(2).map_unordered(square, [])) == []


def test_an_exception_fails_its_task_at_once_and_the_rest_goes_on():
    outcomes = {o.key: o for o in LocalPool(2).map_unordered(refuse_odd, [(i, i) for i in range(4)])}
    assert [outcomes[i].ok for i in range(4)] == [True, False, True, False]
    assert outcomes[1].reason == "ValueError: odd input 1" and outcomes[1].attempts == 1
    assert "Traceback" in outcomes[1].detail and "refuse_odd" in outcomes[1].detail


def test_a_worker_that_dies_is_replaced_and_its_task_retried(tmp_path):
    marker, done = str(tmp_path / "died"), tmp_path / "exists"
    done.write_text("")
    tasks = [("a", (marker, 1)), ("b", (str(done), 2)), ("c", (str(done), 3))]
    outcomes = {o.key: o for o in LocalPool(2, max_retries=2).map_unordered(die_once, tasks)}
    assert all(o.ok for o in outcomes.values())
    assert {k: o.value for k, o in outcomes.items()} == {"a": 1, "b": 2, "c": 3}
    assert {k: o.attempts for k, o in outcomes.items()} == {"a": 2, "b": 1, "c": 1}


def test_a_task_whose_worker_always_dies_is_reported_failed():
    outcomes = {o.key: o for o in LocalPool(2, max_retries=1).map_unordered(
        die_always, [(0, "fine"), (1, "doomed"), (2, "also fine")])}
    assert outcomes[0].ok and outcomes[2].ok and outcomes[2].value == "also fine"
    assert not outcomes[1].ok and outcomes[1].attempts == 2
    assert outcomes[1].reason == "worker process died (killed by SIGKILL) in each of 2 attempts"


def test_pool_arguments_are_checked():
    with pytest.raises(ConfigError, match="give at least 1 worker"):
        LocalPool(0)
    with pytest.raises(ConfigError, match="max_retries = -1 must be >= 0"):
        LocalPool(1, max_retries=-1)


# ------------------------------------------------------------------------------------------------------- Dask

@pytest.fixture(scope="module")
def dask_cluster():
    """A two-worker Dask cluster on loopback, where a worker that dies once more fails its task."""
    dask = pytest.importorskip("dask")
    distributed = pytest.importorskip("distributed")
    with dask.config.set({"distributed.scheduler.allowed-failures": 1}):
        with distributed.LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                                      dashboard_address=None) as cluster:
            yield cluster


def test_dask_runs_every_task_and_reports_exceptions_and_dead_workers(dask_cluster):
    from avalanche.sweep.execution import DaskExecutor, dask_client

    with dask_client(dask_cluster.scheduler_address) as client:
        executor = DaskExecutor(client)
        assert dask_cluster.scheduler_address in executor.description
        outcomes = {o.key: o for o in executor.map_unordered(square, [(i, i) for i in range(5)])}
        assert {k: o.value for k, o in outcomes.items()} == {i: i * i for i in range(5)}
        outcomes = {o.key: o for o in executor.map_unordered(refuse_odd, [(0, 0), (1, 1)])}
        assert outcomes[0].ok and outcomes[1].reason == "ValueError: odd input 1"
        outcomes = {o.key: o for o in executor.map_unordered(die_always, [(0, "fine"), (1, "doomed")])}
        assert outcomes[0].ok and outcomes[0].value == "fine"
        assert not outcomes[1].ok and outcomes[1].reason.startswith("Dask worker died while computing the point")


def test_an_unreachable_scheduler_is_a_clear_error():
    pytest.importorskip("distributed")
    from avalanche.errors import AvalancheError
    from avalanche.sweep.execution import dask_client

    with pytest.raises(AvalancheError, match="cannot reach the Dask scheduler at 'tcp://127.0.0.1:9'"):
        dask_client("tcp://127.0.0.1:9", timeout_s=1.0)


# --------------------------------------------------------------------------------------- sweeps of engine points

SWEEP = '''
[sweep]
name = "test-sweep"
seed = 7

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [6, 12, 18, 24]

[engine]
precision = 0.02
max_events = 3e6
electrons = 1000
'''
"""Four tiny points of the Reid ramp model gas (Reid 1979, Aust. J. Phys. 32 231), a fraction of a second each."""

TIMING_ATTRS = {"cpu_seconds", "wall_seconds", "created_utc", "sweep_wall_seconds", "sweep_worker",
                "sweep_finished_utc", "sweep_attempts"}
"""Attributes that record when, where and how fast a point ran (they differ between runs by nature)."""
HDF5_BOOKKEEPING = {"DIMENSION_LIST", "REFERENCE_LIST"}
"""Attributes holding HDF5 object references of the dimension scales (addresses inside one file)."""


def assert_same_results(path_a, path_b):
    """Both files hold the same numbers, bit for bit: the table, and every dataset and attribute of every point
    except the timing attributes."""
    a, b = open_results(path_a), open_results(path_b)
    np.testing.assert_array_equal(a.grid, b.grid)
    assert a.quantities == b.quantities
    for q in a.quantities:
        np.testing.assert_array_equal(a.value(q), b.value(q))
        np.testing.assert_array_equal(a.stderr(q), b.stderr(q))
    with h5py.File(path_a, "r") as fa, h5py.File(path_b, "r") as fb:
        def compare(name, obj):
            other = fb["points"][name]
            if isinstance(obj, h5py.Dataset):
                np.testing.assert_array_equal(obj[()], other[()], err_msg=name)
            skip = TIMING_ATTRS | HDF5_BOOKKEEPING
            keys = {k for k in obj.attrs if k not in skip}
            assert keys == {k for k in other.attrs if k not in skip}, name
            for k in keys:
                np.testing.assert_array_equal(obj.attrs[k], other.attrs[k], err_msg=f"{name} {k}")

        fa["points"].visititems(compare)
        assert set(fa["points"]) == set(fb["points"])


@pytest.fixture(scope="module")
def sweep_file(tmp_path_factory):
    folder = tmp_path_factory.mktemp("sweep")
    path = folder / "test-sweep.toml"
    path.write_text(SWEEP)
    return path


@pytest.fixture(scope="module")
def one_worker(sweep_file):
    """The reference: the sweep computed by one local worker."""
    out = sweep_file.parent / "one.h5"
    report = run_sweep(sweep_file, workers=1, out=out, quiet=True)
    assert report.computed == 4 and report.failed == [] and report.complete
    return out


def test_a_sweep_fills_its_results_file(one_worker, sweep_file):
    res = open_results(one_worker)
    assert res.complete and list(res.grid["reduced_field_Td"]) == [6.0, 12.0, 18.0, 24.0]
    rf = load_runfile(sweep_file)
    assert list(res.grid["seed"]) == [p.seed for p in rf.points]
    assert res.runfile_text == SWEEP and res.attrs["runfile_sha256"] == rf.text_sha256
    assert res.checksums == rf.checksums
    mean = res.value("mean_energy_eV")
    assert np.all(np.diff(mean) > 0)  # the Reid-ramp swarm heats up with E/N (Reid 1979, table 1)
    # the table holds each point's own result, which also reads back in full
    point = res.point(2)
    assert point.mean_energy_eV.value == mean[2] and point.mean_energy_eV.stderr == res.stderr("mean_energy_eV")[2]
    assert point.reduced_field_Td == 18.0
    assert set(point.rate_coefficients) and all(rate_name(k) in res.units for k in point.rate_coefficients)


def test_two_workers_give_bitwise_the_same_results(one_worker, sweep_file):
    out = sweep_file.parent / "two.h5"
    report = run_sweep(sweep_file, workers=2, out=out, quiet=True)
    assert report.executor == "2 local worker processes" and report.computed == 4
    assert len({open_results(out).grid["status"][i] for i in range(4)}) == 1
    assert_same_results(one_worker, out)


def test_a_dask_sweep_equals_the_local_one(one_worker, sweep_file, dask_cluster):
    out = sweep_file.parent / "dask.h5"
    report = run_sweep(sweep_file, scheduler=dask_cluster.scheduler_address, out=out, quiet=True)
    assert report.executor.startswith("Dask scheduler") and report.computed == 4
    assert_same_results(one_worker, out)


KILLED = "import sys, avalanche.cli.sweep; from avalanche.cli.main import main; sys.exit(main(sys.argv[1:]))"


def _finished_points(path) -> list[int]:
    """Indices of committed points, read while the sweep may still be writing (no file lock).

    A reader racing the writer can see a half-flushed B-tree; h5py then raises RuntimeError or
    OSError. That is a torn read of a file still being written, not a damaged file, so poll again.
    """
    try:
        with h5py.File(path, "r", locking=False) as f:
            return [int(k) for k, g in f["points"].items() if g.attrs.get("sweep_status") == "ok"]
    except (OSError, KeyError, RuntimeError, ValueError):
        return []


def _gone(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/status").read_text()
    except FileNotFoundError:
        return True
    return "State:\tZ" in state or "State:\tX" in state


def test_a_sweep_killed_with_sigkill_resumes_to_the_same_numbers(one_worker, sweep_file):
    out = sweep_file.parent / "killed.h5"
    proc = subprocess.Popen([sys.executable, "-c", KILLED, "sweep", str(sweep_file), "--out", str(out),
                             "--workers", "1", "--quiet"], cwd=ROOT, stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 60
    while not _finished_points(out) and proc.poll() is None and time.monotonic() < deadline:
        time.sleep(0.02)
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    assert proc.returncode == -9, proc.stderr.read()  # it was killed, not finished
    res = open_results(out)
    done = [i for i in range(4) if res.grid["status"][i] == "ok"]
    assert 1 <= len(done) < 4, done
    reference = open_results(one_worker)
    for q in reference.quantities:  # every finished point is intact
        np.testing.assert_array_equal(res.value(q)[done], reference.value(q)[done])
    # the worker process did not outlive its coordinator
    with h5py.File(out, "r") as f:
        worker = int(f["points"][f"{done[0]:06d}"].attrs["sweep_worker"].rsplit(":", 1)[1])
    deadline = time.monotonic() + 10
    while not _gone(worker) and time.monotonic() < deadline:
        time.sleep(0.1)
    assert _gone(worker)
    report = run_sweep(sweep_file, workers=2, out=out, resume=True, quiet=True)
    assert report.skipped == len(done) and report.computed == 4 - len(done)
    assert_same_results(one_worker, out)


def die_on_fields(task):
    """A point computation whose worker process dies (SIGKILL) at 12 Td once and at 18 Td every time."""
    if task["reduced_field_Td"] == 12.0:
        marker = Path(os.environ["AVALANCHE_TEST_MARKER"])
        if not marker.exists():
            marker.write_text("died")
            os.kill(os.getpid(), signal.SIGKILL)
    if task["reduced_field_Td"] == 18.0:
        os.kill(os.getpid(), signal.SIGKILL)
    return compute_point(task)


def test_a_dead_worker_is_retried_then_its_point_reported_failed(one_worker, sweep_file, monkeypatch):
    monkeypatch.setenv("AVALANCHE_TEST_MARKER", str(sweep_file.parent / "marker"))
    out = sweep_file.parent / "dying.h5"
    report = run_sweep(sweep_file, workers=2, out=out, quiet=True, max_retries=1, compute=die_on_fields)
    assert report.computed == 3 and not report.complete
    assert report.failed == [{"index": 2, "reason": "worker process died (killed by SIGKILL) in each of 2 attempts",
                              "attempts": 2}]
    res = open_results(out)
    assert list(res.grid["status"]) == ["ok", "ok", "failed", "ok"]
    assert res.failures[0]["reason"].startswith("worker process died (killed by SIGKILL)")
    with h5py.File(out, "r") as f:
        assert f["points/000001"].attrs["sweep_attempts"] == 2  # retried once, then fine
    log = out.with_suffix(".failures.log").read_text()
    assert "point 2 (mixture reid-ramp, E/N 18 Td, frequency 0 Hz, seed" in log and "in each of 2 attempts" in log
    reference = open_results(one_worker)
    for q in reference.quantities:  # the retried point is the same as computed in one go
        np.testing.assert_array_equal(res.value(q)[[0, 1, 3]], reference.value(q)[[0, 1, 3]])
    run_sweep(sweep_file, workers=1, out=out, resume=True, quiet=True)  # the failed point is tried again
    assert_same_results(one_worker, out)


def test_the_sweep_command(sweep_file, capsys):
    import avalanche.cli.sweep  # noqa: F401  (registers the command; avalanche.cli.main imports it too once wired)
    from avalanche.cli.main import main

    run = sweep_file.parent / "two-points.toml"
    run.write_text(SWEEP.replace("[6, 12, 18, 24]", "[6, 24]"))
    out = sweep_file.parent / "cli.h5"
    assert main(["sweep", str(run), "--out", str(out), "--workers", "1"]) == 0
    err = capsys.readouterr().err
    assert "2 points on 1 local worker process" in err and "E/N 24 Td" in err and "<eps>" in err
    assert "2 computed, 0 already done, 0 failed, of 2 points" in err
    assert main(["sweep", str(run), "--out", str(out), "--quiet"]) == 1
    assert "already exists; continue it with --resume" in capsys.readouterr().err
    assert main(["sweep", str(run), "--out", str(out), "--resume", "--quiet"]) == 0
    assert capsys.readouterr().err == ""
    run.write_text(SWEEP.replace("[6, 12, 18, 24]", "[6, 25]"))
    assert main(["sweep", str(run), "--out", str(out), "--resume"]) == 1
    assert "cannot resume" in capsys.readouterr().err
    run.write_text(SWEEP.replace("[6, 12, 18, 24]", "[-6, 25]"))
    assert main(["sweep", str(run), "--out", str(out)]) == 1
    assert "negative value -6 Td" in capsys.readouterr().err


def test_register_adds_the_subcommand_to_a_parser():
    import argparse

    from avalanche.cli.sweep import register, run

    parser = argparse.ArgumentParser()
    register(parser.add_subparsers(dest="command"))
    args = parser.parse_args(["sweep", "runs/quick.toml", "--workers", "3", "--out", "x.h5", "--resume"])
    assert (args.runfile, args.workers, args.out, args.resume, args.quiet, args._run) == \
        ("runs/quick.toml", 3, "x.h5", True, False, run)
    with pytest.raises(SystemExit):
        parser.parse_args(["sweep", "r.toml", "--workers", "2", "--scheduler", "tcp://h:1"])


def test_sweep_arguments_are_checked(sweep_file):
    with pytest.raises(ConfigError, match="choose one of --workers, --scheduler and --cluster"):
        run_sweep(sweep_file, workers=2, scheduler="tcp://127.0.0.1:1")
    with pytest.raises(ConfigError, match="--cluster needs a \\[cluster\\] table"):
        run_sweep(sweep_file, cluster=True)
    with pytest.raises(ConfigError, match="threads_per_worker = 0 must be >= 1"):
        run_sweep(sweep_file, threads_per_worker=0)


def test_a_batch_cluster_from_the_run_file(tmp_path):
    pytest.importorskip("dask_jobqueue")
    from avalanche.sweep.execution import jobqueue_cluster

    path = tmp_path / "cluster.toml"
    path.write_text(SWEEP + '\n[cluster]\nkind = "slurm"\njobs = 4\ncores = 8\nmemory = "16GB"\n'
                    'walltime = "02:00:00"\nqueue = "short"\naccount = "plasma"\n'
                    'options = { scheduler_options = { dashboard_address = ":0" } }\n')
    rf = load_runfile(path)
    assert rf.cluster["jobs"] == 4 and rf.cluster["processes"] == 8
    with jobqueue_cluster(rf.cluster, directives=("--exclusive",)) as cluster:  # --job-directive on the command line
        script = cluster.job_script()
    for line in ("#SBATCH -p short", "#SBATCH -A plasma", "#SBATCH --cpus-per-task=8", "#SBATCH -t 02:00:00",
                 "#SBATCH --exclusive"):
        assert line in script
    assert "--nworkers 8" in script and "--nthreads 1" in script
