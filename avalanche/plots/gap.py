"""Figures of avalanche runs in electrode gaps, drawn from gap files read by :func:`avalanche.store.gap.read_gap`:
gain against voltage, the gain distribution with its Pólya fit, the ionization map and the induced current."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from matplotlib.colors import LogNorm
from matplotlib.figure import Figure

from ..errors import ConfigError
from ..gaps.results import polya_density
from .style import add_legend, axis_label, new_figure, styled


@styled
def plot_gain_curve(runs: Sequence[dict], at_release: bool = False) -> Figure:
    """Mean gain (with error bars) and the local-field gain against the voltage, one point per gap file.

    With ``at_release`` the abscissa is |V| at the primaries' release (the instantaneous voltage of an AC run,
    ``inputs["start_voltage_V"]``) instead of the run's voltage (the peak of an AC drive).
    """
    if not runs:
        raise ConfigError("plot_gain_curve: give at least one gap file")

    def volts_of(d):
        return abs(d["attrs"]["inputs"]["start_voltage_V"]) if at_release else d["attrs"]["voltage_V"]

    runs = sorted(runs, key=volts_of)
    volts = np.array([volts_of(d) for d in runs])
    gain = np.array([d["estimates"]["mean_gain"].value for d in runs])
    err = np.array([d["estimates"]["mean_gain"].stderr for d in runs])
    local = np.array([d["attrs"]["local_field_gain"] for d in runs])
    figure, (ax,) = new_figure(1)
    ax.errorbar(volts, gain, yerr=err, marker="o", linestyle="-", label="Monte Carlo", gid="gain")
    if np.isfinite(local).any():
        ax.plot(volts, local, marker="s", linestyle="--", label="local-field approximation", gid="local_field")
    ax.set_yscale("log")
    ax.set_xlabel(axis_label("voltage at release" if at_release else "voltage", "V"))
    ax.set_ylabel("mean gain")
    add_legend(ax)
    return figure


@styled
def plot_gain_distribution(run: dict, bins: int = 40) -> Figure:
    """Histogram of the gain per primary with the fitted Pólya density."""
    gains = run["gain"]["per_primary"]
    gains = gains[gains > 0]
    figure, (ax,) = new_figure(1)
    edges = np.unique(np.round(np.geomspace(1.0, max(gains.max(), 2.0) + 1, bins + 1)))
    counts, edges = np.histogram(gains, bins=edges)
    density = counts / (gains.size * np.diff(edges))
    ax.stairs(density, edges, label="Monte Carlo", gid="histogram")
    theta = run["estimates"]["polya_theta"].value
    if np.isfinite(theta):
        n = np.geomspace(edges[0], edges[-1], 200)
        ax.plot(n, polya_density(n, gains.mean(), theta), label=f"Pólya, θ = {theta:.3g}", gid="polya")
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("gain per primary")
    ax.set_ylabel("probability density")
    add_legend(ax)
    return figure


@styled
def plot_ionization_map(run: dict, name: str = "created") -> Figure:
    """The (ρ, z) map of ``name`` ('created' electrons, or a process key) per primary."""
    maps = run["maps"]
    if name not in maps:
        raise ConfigError(f"plot_ionization_map: no map '{name}'; the file has "
                          f"{[k for k in maps if not k.endswith('_m')]}")
    data = np.asarray(maps[name], float)
    figure, (ax,) = new_figure(1)
    positive = data[data > 0]
    norm = LogNorm(positive.min(), positive.max()) if positive.size else None
    mesh = ax.pcolormesh(maps["rho_edges_m"] * 1e3, maps["z_edges_m"] * 1e3, data.T, norm=norm, gid="map")
    figure.colorbar(mesh, ax=ax, label=f"{name} per primary per bin")
    ax.set_xlabel(axis_label("ρ", "mm"))
    ax.set_ylabel(axis_label("z", "mm"))
    return figure


@styled
def plot_induced_current(run: dict) -> Figure:
    """The current induced on the driven electrode per primary (Shockley–Ramo, electrons only) against time."""
    current = run["current"]
    figure, (ax,) = new_figure(1)
    ax.plot(current["time_s"] * 1e9, current["driven_A"], gid="current")
    ax.set_xlabel(axis_label("time", "ns"))
    ax.set_ylabel(axis_label("induced current per primary", "A"))
    return figure
