"""Gap sweeps from a run file (``[sweep] mode = "gap"``): the same numbers as direct :func:`avalanche.gap` calls
at the points' seeds, one HDF5 file with provenance, resume without recomputing finished points, input checks.

The gas is the Lucas–Saelee model (Lucas J & Saelee H T 1975, J. Phys. D 8 640) between plates, so each point
takes a fraction of a second.
"""

from __future__ import annotations

import json

import h5py
import numpy as np
import pytest

import avalanche as av
from avalanche import ConfigError
from avalanche.store.gap import open_gap_sweep
from avalanche.sweep.execution import Outcome, run_sweep
from avalanche.sweep.gap_sweep import compute_gap_point, load_sweep_runfile, parse_gap_runfile

RUNFILE = """
[sweep]
name = "plates"
mode = "gap"
seed = 7
output = "plates.h5"

[gas]
mixture = "lucas-saelee"
parameters = { lucas-saelee = { F = 0.5 } }
temperature_K = 0
number_density_m3 = 1e25

[electrodes]
geometry = "plates"
gap_m = 60e-6

[grid]
voltage_V = [120.0, 150.0]

[avalanche]
primaries = 40
sharing = "uniform"
local_field = false
"""


class InProcess:
    """An executor that computes the tasks in this process, in order, and can stop after ``stop_after`` of them
    as an interrupted sweep does (KeyboardInterrupt)."""

    description = "this process"

    def __init__(self, stop_after=None):
        self.stop_after, self.computed = stop_after, []

    def map_unordered(self, fn, tasks):
        for key, payload in tasks:
            if self.stop_after is not None and len(self.computed) == self.stop_after:
                raise KeyboardInterrupt
            self.computed.append(key)
            yield Outcome(key=key, ok=True, value=fn(payload), worker="local")


def write_runfile(folder, text=RUNFILE):
    path = folder / "plates.toml"
    path.write_text(text)
    return path


def test_a_two_voltage_sweep_gives_the_gains_of_direct_calls(tmp_path):
    # exact reproduction (common practice for seeded Monte Carlo): each point runs avalanche.gap with the point's
    # seed, so the sweep's gains equal two direct calls bit for bit
    rf = load_sweep_runfile(write_runfile(tmp_path))
    report = run_sweep(rf, executor=InProcess(), quiet=True)
    assert report.computed == 2 and not report.failed
    results = open_gap_sweep(rf.output)
    assert list(results.grid["voltage_V"]) == [120.0, 150.0] and results.complete
    mixture = rf.build_mixture(0)
    for point in rf.points:
        direct = av.gap(av.ParallelPlates(60e-6), mixture, point.voltage_V, primaries=40, seed=point.seed,
                        sharing="uniform", local_field=False)
        stored = results.point(point.index)
        np.testing.assert_array_equal(stored["gain"]["per_primary"], direct.gain_distribution.per_primary)
        assert results.value("mean_gain")[point.index] == direct.mean_gain.value
        assert results.stderr("mean_gain")[point.index] == direct.mean_gain.stderr
    gains = results.value("mean_gain")
    assert gains[1] > gains[0] > 1.0  # more voltage, more gain
    with h5py.File(rf.output, "r") as f:  # provenance and the cautions in the file
        assert f.attrs["mode"] == "gap" and "High voltages" in f.attrs["caution"]
        assert "neglected" in f.attrs["space_charge"]
        assert f["runfile"][()].decode() == RUNFILE and json.loads(f.attrs["electrodes_json"])["gap_m"] == 60e-6
        assert f["table/voltage_V"].attrs["units"] == "V" and dict(f["crosssections"].attrs)
    assert av.open_results(rf.output).value("mean_gain")[0] == gains[0]


def test_an_interrupted_gap_sweep_resumes_without_recomputing_finished_points(tmp_path):
    rf = load_sweep_runfile(write_runfile(tmp_path))
    first = InProcess(stop_after=1)
    with pytest.raises(KeyboardInterrupt):
        run_sweep(rf, executor=first, quiet=True)
    assert first.computed == [0]
    with h5py.File(rf.output, "r") as f:
        finished = f["points/000000"].attrs["sweep_finished_utc"]
        kept = f["points/000000/gain/per_primary"][()]
    with pytest.raises(ConfigError, match="already exists"):
        run_sweep(rf, executor=InProcess(), quiet=True)
    second = InProcess()
    report = run_sweep(rf, executor=second, resume=True, quiet=True)
    assert second.computed == [1] and report.skipped == 1 and report.computed == 1
    results = open_gap_sweep(rf.output)
    assert results.complete
    with h5py.File(rf.output, "r") as f:
        assert f["points/000000"].attrs["sweep_finished_utc"] == finished
        np.testing.assert_array_equal(f["points/000000/gain/per_primary"][()], kept)
    # a changed run file is refused, as for swarm sweeps
    changed = load_sweep_runfile(write_runfile(tmp_path, RUNFILE.replace("primaries = 40", "primaries = 41")))
    with pytest.raises(ConfigError, match="changed: avalanche"):
        run_sweep(changed, executor=InProcess(), resume=True, quiet=True)


def test_gap_sweeps_run_on_the_local_worker_pool(tmp_path, capsys):
    path = write_runfile(tmp_path, RUNFILE.replace("[120.0, 150.0]", "[150.0]").replace("primaries = 40",
                                                                                          "primaries = 8"))
    report = run_sweep(path, workers=1)
    assert report.computed == 1 and not report.failed
    assert "High voltages" in capsys.readouterr().err  # the caution on the terminal too
    assert open_gap_sweep(tmp_path / "plates.h5").value("mean_gain")[0] > 1.0


def test_grid_over_pressure_wire_radius_and_frequency():
    text = RUNFILE.replace('geometry = "plates"\ngap_m = 60e-6', 'geometry = "coaxial"\nwire_radius_m = 1e-5\n'
                           'tube_radius_m = 1e-3').replace("number_density_m3 = 1e25\n", "temperature_K = 300\n")
    text = text.replace("temperature_K = 0\n", "").replace(
        "voltage_V = [120.0, 150.0]", "voltage_V = [100, 200]\npressure_Pa = [5e4, 1e5]\nwire_radius_m = [1e-5, 2e-5]\n"
        "frequencies_Hz = [0, 1e6]")
    rf = parse_gap_runfile(text)
    assert len(rf.points) == 16 and len({p.seed for p in rf.points}) == 16
    last = rf.points[-1]
    assert (last.pressure_Pa, last.wire_radius_m, last.frequency_Hz, last.voltage_V) == (1e5, 2e-5, 1e6, 200.0)
    task = rf.point_task(last)
    assert task["pressure_Pa"] == 1e5 and task["wire_radius_m"] == 2e-5
    # the point's mixture has the point's pressure (ideal gas, N = p / kT)
    half, full = rf.build_mixture(0, 5e4), rf.build_mixture(0, 1e5)
    assert half.number_density_m3 == pytest.approx(0.5 * full.number_density_m3)
    assert callable(rf.compute) and rf.compute is compute_gap_point


@pytest.mark.parametrize("edit, message", [
    (("gap_m = 60e-6", "gap_m = -1.0"), "gap_m = -1.0: must be a positive length"),
    (("gap_m = 60e-6", "gap_m = 60e-6\nwire_radius_m = 1e-5"), "wire_radius_m does not belong to geometry"),
    (('geometry = "plates"', 'geometry = "plate"'), "did you mean"),
    (("voltage_V = [120.0, 150.0]", "voltage_V = [120.0, 150.0]\nwire_radius_m = [1e-5]"),
     "sweeps the wire of a coaxial geometry"),
    (("voltage_V = [120.0, 150.0]", "voltage = [1]"), "unknown key 'voltage'"),
    (("primaries = 40", "primaries = 0"), "primaries = 0: must be >= 1"),
    (("primaries = 40", "population_cap = 3"), "population_cap"),
    (("primaries = 40", "seed = 3"), "is set by the sweep"),
    (("voltage_V = [120.0, 150.0]", "voltage_V = [-5.0]"), "negative value"),
])
def test_bad_gap_run_files_name_the_field(edit, message):
    with pytest.raises(ConfigError, match=message):
        parse_gap_runfile(RUNFILE.replace(*edit), source="bad.toml")


def test_the_readme_gap_run_file_is_valid():
    # the README's example run file (argon–CO2 tube) validates and expands to its three voltages
    import re
    from pathlib import Path

    readme = (Path(__file__).resolve().parents[2] / "README.md").read_text(encoding="utf-8")
    text = re.search(r"```toml\n(\[sweep\]\nmode = \"gap\".*?)```", readme, re.S).group(1)
    rf = parse_gap_runfile(text)
    assert [p.voltage_V for p in rf.points] == [500.0, 550.0, 600.0]
    assert rf.electrodes == {"geometry": "coaxial", "wire_radius_m": 12.5e-6, "tube_radius_m": 5e-3}


class FailFirst(InProcess):
    """Fails point 0 (as a worker that died would), computes the others."""

    def map_unordered(self, fn, tasks):
        for key, payload in tasks:
            if key == 0:
                yield Outcome(key=key, ok=False, reason="worker process died", attempts=3)
            else:
                self.computed.append(key)
                yield Outcome(key=key, ok=True, value=fn(payload), worker="local")


def test_a_failed_gap_point_is_logged_with_its_coordinates_and_retried_on_resume(tmp_path):
    rf = load_sweep_runfile(write_runfile(tmp_path))
    report = run_sweep(rf, executor=FailFirst(), quiet=True)
    assert [f["index"] for f in report.failed] == [0] and report.computed == 1
    log = rf.output.with_suffix(".failures.log").read_text()
    assert "point 0 (lucas-saelee, 120 V, seed" in log and "worker process died" in log
    assert open_gap_sweep(rf.output).failures[0]["index"] == 0
    again = InProcess()
    run_sweep(rf, executor=again, resume=True, quiet=True)
    assert again.computed == [0] and open_gap_sweep(rf.output).complete
