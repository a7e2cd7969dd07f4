"""AC sweeps: the plot and table commands show the drift velocity's first-harmonic amplitude and lag (from
avalanche.analysis.phase), not its cycle average, which is about zero in a symmetric drive."""

from __future__ import annotations

import csv
import warnings

import numpy as np
import pytest

from avalanche.analysis.phase import DRIFT_AMPLITUDE, DRIFT_LAG, first_harmonic, with_drift_harmonic
from avalanche.analysis.tables import SwarmTable
from avalanche.cli.main import main
from avalanche.plots import plot_swarm_parameters
from avalanche.store.sweep_file import open_results
from avalanche.sweep.execution import run_sweep

AC_SWEEP = '''
[sweep]
name = "ac-drift"
seed = 9

[gas]
mixture = "maxwell"
temperature_K = 0
number_density_m3 = 1e23

[grid]
reduced_field_Td = [5, 10]
frequencies_Hz = [1e9]

[engine]
max_events = 6e4
electrons = 64
replicas = 4
'''
"""Two AC points of the Maxwell model gas (ω/ν_m ≈ 1; a tiny budget: plumbing, not physics — the physics of the
amplitude is checked in tests/analysis/test_phase.py)."""


@pytest.fixture(scope="module")
def ac_results(tmp_path_factory):
    folder = tmp_path_factory.mktemp("ac_drift")
    (folder / "ac.toml").write_text(AC_SWEEP)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        run_sweep(folder / "ac.toml", workers=1, out=folder / "ac.h5", quiet=True)
    return folder / "ac.h5"


def test_ac_table_and_plot_show_the_drift_amplitude(ac_results, tmp_path):
    results = open_results(ac_results)
    table = with_drift_harmonic(SwarmTable.from_results(results), results)
    amplitude, amplitude_err = table.get(DRIFT_AMPLITUDE)
    for k, i in enumerate(table.point_index):
        point = results.point(int(i))
        drift = point.phase_resolved["drift_velocity_flux"]
        expected = first_harmonic(point.phase, drift.value, drift.stderr)
        assert amplitude[k] == expected.amplitude and amplitude_err[k] == expected.amplitude_stderr
    assert table.unit(DRIFT_AMPLITUDE) == "m/s" and table.unit(DRIFT_LAG) == "rad"

    figure = plot_swarm_parameters(table)
    drawn = {line.get_gid(): line for ax in figure.axes for line in ax.lines if line.get_gid()}
    assert DRIFT_AMPLITUDE in drawn and DRIFT_LAG in drawn and "drift_velocity_flux" not in drawn
    np.testing.assert_array_equal(drawn[DRIFT_AMPLITUDE].get_ydata(), amplitude)
    labels = [" ".join(ax.get_ylabel().split()) for ax in figure.axes]  # long labels wrap onto two lines
    assert "drift velocity amplitude W$_1$ [m s$^{-1}$]" in labels

    out = tmp_path / "rates.csv"
    assert main(["table", str(ac_results), "--out", str(out)]) == 0
    rows = list(csv.reader(line for line in out.read_text().splitlines() if not line.startswith("#")))
    header = rows[0]
    column = next(j for j, name in enumerate(header) if name.startswith(DRIFT_AMPLITUDE)
                  and "stderr" not in name)
    np.testing.assert_allclose([float(row[column]) for row in rows[1:]], amplitude, rtol=1e-6)
    assert main(["plot", str(ac_results), "--out-dir", str(tmp_path / "plots"), "--format", "png"]) == 0
    assert (tmp_path / "plots" / "ac_swarm.png").exists() and (tmp_path / "plots" / "ac_phase.png").exists()
