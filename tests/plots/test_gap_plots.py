"""Figures of gap runs drawn from a gap file: each has its data artists (gain curve, distribution with the Pólya
density, ionization map, induced current)."""

from __future__ import annotations

import math

import numpy as np

import avalanche as av
from avalanche import Mixture, model_gas
from avalanche.constants import TOWNSEND_V_m2
from avalanche.plots import plot_gain_curve, plot_gain_distribution, plot_induced_current, plot_ionization_map
from avalanche.store.gap import read_gap, write_gap


def test_gap_figures(tmp_path):
    mixture = Mixture({"lucas-saelee": 1.0}, number_density_m3=1e25, temperature_K=0,
                      sets={"lucas-saelee": model_gas("lucas-saelee", F=0.5)})
    a, b = 50e-6, 1e-3
    V = 200 * TOWNSEND_V_m2 * 1e25 * a * math.log(b / a)
    run = av.gap(av.Coaxial(a, b), mixture, V, primaries=10, seed=1, sharing="uniform",
                 start_position_m=(3 * a, 0, 0), alpha_table=([50.0, 100.0, 300.0], [7e-22, 2.2e-21, 5.8e-21]))
    data = read_gap(write_gap(tmp_path / "gap.h5", run))
    gids = {"curve": plot_gain_curve([data]), "distribution": plot_gain_distribution(data),
            "map": plot_ionization_map(data), "current": plot_induced_current(data)}
    found = {name: {a.get_gid() for a in fig.axes[0].get_children()} for name, fig in gids.items()}
    assert {"gain", "local_field"} <= found["curve"]
    assert {"histogram", "polya"} <= found["distribution"]
    assert "map" in found["map"] and "current" in found["current"]
    assert np.isfinite(data["current"]["driven_A"]).all()
