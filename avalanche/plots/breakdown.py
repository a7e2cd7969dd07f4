"""Figures of breakdown and emission: Paschen curves and emission stick spectra (steady and phase-resolved)."""

from __future__ import annotations

import math
from collections.abc import Sequence

import numpy as np
from matplotlib.figure import Figure

from ..analysis.breakdown import CAUTION, PaschenCurve
from ..constants import BOLTZMANN_J_K, TORR_Pa, TOWNSEND_V_m2
from ..errors import ConfigError
from .style import add_legend, attach_notes, new_figure, phase_axis, set_log_x, styled


@styled
def plot_paschen(curve: PaschenCurve, title: str = "") -> Figure:
    """Breakdown voltage against p d [Pa m] (bottom) and [Torr cm] (top), with the minimum, the asymptote
    V = (E/N)_crit N d of an attaching gas, with :data:`avalanche.analysis.breakdown.CAUTION` in the
    file's metadata (:func:`~avalanche.plots.style.attach_notes`), not drawn."""
    figure, (ax,) = new_figure(1, columns=1, height_in=3.6)
    ok = np.isfinite(curve.breakdown_voltage_V)
    ax.plot(curve.pd_Pa_m[ok], curve.breakdown_voltage_V[ok], "-", gid="paschen",
            label=f"Townsend criterion, γ = {curve.gamma:g}")
    if math.isfinite(curve.minimum_voltage_V):
        ax.plot([curve.minimum_pd_Pa_m], [curve.minimum_voltage_V], "o", gid="paschen_minimum",
                label=f"minimum {curve.minimum_voltage_V:.4g} V at {curve.minimum_pd_Pa_m:.4g} Pa m "
                      f"({curve.minimum_pd_Torr_cm:.4g} Torr cm)")
    if curve.critical_reduced_field_Td is not None:
        pd = curve.pd_Pa_m
        voltage = curve.critical_reduced_field_Td * TOWNSEND_V_m2 * pd / (BOLTZMANN_J_K * curve.temperature_K)
        ax.plot(pd, voltage, ":", color="0.4", gid="paschen_asymptote",
                label=f"(E/N)$_{{crit}}$ N d, (E/N)$_{{crit}}$ = {curve.critical_reduced_field_Td:.4g} Td")
    set_log_x(ax, curve.pd_Pa_m)
    ax.set_yscale("log")
    ax.set_xlabel("p d [Pa m]")
    ax.set_ylabel("breakdown voltage [V]")
    top = ax.secondary_xaxis("top", functions=(lambda x: x * 100.0 / TORR_Pa, lambda x: x * TORR_Pa / 100.0))
    top.set_xlabel("p d [Torr cm]")
    add_legend(ax)
    ax.set_title(title or f"Paschen curve, {curve.gas_label or 'gas'}, T = {curve.temperature_K:g} K")
    attach_notes(figure, caution="Caution: " + CAUTION)
    return figure


# --- emission -----------------------------------------------------------------------------------------------------

@styled
def plot_emission_spectrum(wavelength_nm, relative_rate, labels: Sequence[str], title: str = "",
                           annotate: int = 8) -> Figure:
    """Stick spectrum: relative photon emission rate of each radiating level at its wavelength [nm].

    The ``annotate`` strongest lines are labelled where their labels do not overlap (:func:`_label_lines`); the
    method's limits go to the file's metadata (:func:`~avalanche.plots.style.attach_notes`), not into the figure.
    """
    from ..analysis.emission import APPROXIMATION_NOTE

    wavelength = np.asarray(wavelength_nm, dtype=float)
    rate = np.asarray(relative_rate, dtype=float)
    if wavelength.size == 0:
        raise ConfigError("plot_emission_spectrum: no radiating levels (no excitation process has wavelength_nm)")
    figure, (ax,) = new_figure(1, columns=1, height_in=3.2)
    ax.vlines(wavelength, 0.0, rate, gid="emission", lw=1.5)
    ax.set_ylim(0.0, 1.25 * max(float(np.nanmax(rate)), 1e-300))
    ax.set_xlabel("wavelength [nm]")
    ax.set_ylabel("relative photon emission rate")
    if title:
        ax.set_title(title)
    _label_lines(figure, ax, wavelength, rate, labels, annotate)
    attach_notes(figure, note=APPROXIMATION_NOTE)
    return figure


_LABEL_PLACES = ((0, 3, "center"), (3, 3, "left"), (-3, 3, "right"), (0, 26, "center"), (3, 26, "left"),
                 (-3, 26, "right"))
"""Offsets [points] and alignments tried, in order, for a line's label: above it, beside it, higher up."""


def _label_lines(figure: Figure, ax, wavelength, rate, labels: Sequence[str], count: int) -> None:
    """Label the ``count`` strongest lines, strongest first, each at the first place of :data:`_LABEL_PLACES` where
    its text (measured once the figure is laid out) overlaps no earlier label and no other line and stays inside
    the axes; a label with no free place is left out (the stick is still drawn)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.transforms import Bbox

    renderer = FigureCanvasAgg(figure).get_renderer()
    figure.draw_without_rendering()
    frame = ax.get_window_extent(renderer)
    tops = ax.transData.transform(np.column_stack((wavelength, np.nan_to_num(rate))))
    bottom = ax.transData.transform((0.0, 0.0))[1]
    sticks = [Bbox([[x - 1.5, bottom], [x + 1.5, y]]) for x, y in tops]  # the drawn lines, a few pixels wide
    placed = []
    for k in np.argsort(-np.nan_to_num(rate))[:count]:
        if not (np.isfinite(rate[k]) and rate[k] > 0):
            continue
        others = placed + [stick for j, stick in enumerate(sticks) if j != k]
        for dx, dy, align in _LABEL_PLACES:
            text = ax.annotate(f"{labels[k]}\n{wavelength[k]:.4g} nm", (wavelength[k], rate[k]),
                               textcoords="offset points", xytext=(dx, dy), ha=align, fontsize=6)
            box = text.get_window_extent(renderer)
            inside = frame.x0 <= box.x0 and box.x1 <= frame.x1 and box.y1 <= frame.y1
            if inside and not any(box.overlaps(other) for other in others):
                placed.append(box)
                break
            text.remove()


@styled
def plot_phase_resolved_emission(phase_rad, relative_rate, labels: Sequence[str], title: str = "") -> Figure:
    """Relative photon emission rate of each radiating level against the phase ωt (one curve per level).

    ``relative_rate`` has shape (levels, phase bins).
    """
    from ..analysis.emission import APPROXIMATION_NOTE

    rate = np.asarray(relative_rate, dtype=float)
    figure, (ax,) = new_figure(1, columns=1, height_in=3.2)
    for k, label in enumerate(labels):
        ax.plot(phase_rad, rate[k], ".-", gid=f"emission_phase:{label}", label=label)
    phase_axis(ax)
    ax.set_ylabel("relative photon emission rate")
    add_legend(ax)
    if title:
        ax.set_title(title)
    attach_notes(figure, note=APPROXIMATION_NOTE)
    return figure
