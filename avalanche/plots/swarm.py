"""Figures of swarm results: swarm parameters against E/N, drift in magnetic fields, energy distributions,
phase-resolved AC panels and steady-state Townsend profiles."""

from __future__ import annotations

import math
import textwrap
from collections.abc import Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from matplotlib.figure import Figure

from ..analysis.coefficients import HANDBOOK_TOWNSEND, handbook_alpha_N, handbook_validity_range_Td
from ..analysis.magnetic import MagneticDriftTable
from ..analysis.phase import DRIFT_AMPLITUDE, DRIFT_LAG
from ..analysis.tables import QUANTITY_UNITS, RATE_PREFIX, SwarmTable, did_you_mean, quantity_unit
from ..errors import ConfigError
from .style import (
    _COMPANIONS,
    _PHASE_DEFAULTS,
    _SERIES_LABELS,
    DEFAULT_PANELS,
    LEGEND_BELOW_ENTRIES,
    PAIRS,
    add_legend,
    axis_label,
    draw_errorbar,
    label,
    new_figure,
    phase_axis,
    set_log_x,
    set_log_y,
    styled,
    use_log,
)


@dataclass
class ReferenceData:
    """Reference values to overlay, read by :func:`read_reference`.

    Attributes
    ----------
    label : str
        Legend text (the file's ``# source:`` line, else the file name).
    reduced_field_Td : numpy.ndarray
    quantities : dict
        Quantity name → (values, stderr or None), in avalanche's units.
    """

    label: str
    reduced_field_Td: np.ndarray
    quantities: dict[str, tuple[np.ndarray, np.ndarray | None]] = field(default_factory=dict)


def read_reference(path) -> ReferenceData:
    """Read a reference CSV file for the overlay of :func:`plot_swarm_parameters`.

    The format (comma-separated): lines starting with ``#`` are comments, and ``# source: <text>`` gives the
    legend label (cite the publication and table). The first other line names the columns: ``reduced_field_Td``
    first, then quantity names as avalanche uses them, in the same units (e.g. ``alpha_N`` [m²],
    ``drift_velocity_bulk`` [m/s], ``mean_energy_eV`` [eV]; see :data:`avalanche.analysis.tables.QUANTITY_UNITS`), each
    optionally followed by ``<name>_stderr``. Empty cells are missing values. Example::

        # source: Author et al. (1990) J. Phys. D 23 1, table 2
        reduced_field_Td,alpha_N,alpha_N_stderr
        200,1.1e-21,0.1e-21

    Raises
    ------
    ConfigError
        Naming the file, line and column: missing file, no header, first column not ``reduced_field_Td``, an
        unknown quantity (with a did-you-mean), a cell that is not a number.
    """
    path = Path(path)
    if not path.exists():
        raise ConfigError(f"reference file '{path}' not found; give a CSV with columns reduced_field_Td,<quantity>,..")
    legend, header, rows = path.name, None, []
    from ..errors import read_user_text

    for number, line in enumerate(read_user_text(path, "reference file").splitlines(), start=1):
        text = line.strip()
        if not text:
            continue
        if text.startswith("#"):
            key, sep, value = text[1:].strip().partition(":")
            if sep and key.strip().lower() == "source" and value.strip():
                legend = value.strip()
            continue
        cells = [cell.strip() for cell in text.split(",")]
        if header is None:
            header = cells
            continue
        if len(cells) != len(header):
            raise ConfigError(f"{path}, line {number}: {len(cells)} cells for the {len(header)} columns of the header")
        try:
            rows.append([float(cell) if cell else math.nan for cell in cells])
        except ValueError:
            raise ConfigError(f"{path}, line {number}: a cell is not a number; is this a reference CSV?") from None
    if header is None or not rows:
        raise ConfigError(f"reference file '{path}' has no header line and data rows; see avalanche plot --help")
    if header[0] != "reduced_field_Td":
        raise ConfigError(f"{path}: the first column of the header line must be 'reduced_field_Td' (E/N in Td); is "
                          "this a reference CSV?")
    data = np.array(rows, dtype=float)
    quantities = {}
    for j, name in enumerate(header[1:], start=1):
        if name.endswith("_stderr"):
            if name.removesuffix("_stderr") not in header:
                raise ConfigError(f"{path}: column {name!r} has no value column {name.removesuffix('_stderr')!r}")
            continue
        if not quantity_unit(name):
            raise ConfigError(f"{path}: unknown quantity column {name!r}{did_you_mean(name, _known_names())}; "
                              "use avalanche's quantity names and units")
        stderr = data[:, header.index(f"{name}_stderr")] if f"{name}_stderr" in header else None
        quantities[name] = (data[:, j], stderr)
    return ReferenceData(legend, data[:, 0], quantities)


def _known_names() -> list[str]:
    return [name for name in QUANTITY_UNITS if name != "reduced_field_Td"]


def _panel_of(name: str) -> str:
    for group, members in PAIRS.items():
        if name in members:
            return group
    if name.startswith(RATE_PREFIX):
        return "rate_coefficients"
    return _COMPANIONS.get(name, name)


def swarm_panels(table: SwarmTable, quantities: Sequence[str] | None = None) -> dict[str, list[str]]:
    """Panels to draw: panel name → quantity names on it, in order.

    Parameters
    ----------
    table : SwarmTable
    quantities : sequence of str, optional
        Quantity names (``drift_velocity_bulk``), panel names (``drift_velocity`` = flux and bulk), or
        ``rate_coefficients`` (every per-process rate coefficient on one panel). Default
        :data:`DEFAULT_PANELS` where present.

    Raises
    ------
    ConfigError
        For a name that is neither a quantity nor a panel (with a did-you-mean), or one absent from the data.
    """
    panels: dict[str, list[str]] = {}
    if quantities is None:
        defaults = DEFAULT_PANELS
        if DRIFT_AMPLITUDE in table.quantities:  # AC: the drift's oscillation, not its cycle average (about 0)
            at = defaults.index("drift_velocity")
            defaults = (*defaults[:at], DRIFT_AMPLITUDE, DRIFT_LAG, *defaults[at + 1:])
        for group in defaults:
            members = [m for m in PAIRS.get(group, (group,)) if m in table.quantities]
            if group == "eta_N" and members and not np.any(np.nan_to_num(table.get("eta_N")[0]) > 0.0):
                continue
            if members:
                panels[group] = members
        if not panels:
            raise ConfigError(f"{table.source or 'swarm table'}: none of the default quantities is present; choose "
                              f"some of {', '.join(table.names)}")
        return panels
    choices = [*table.names, *PAIRS, "rate_coefficients"]
    for token in quantities:
        token = token.strip()
        if token in PAIRS:
            members = [m for m in PAIRS[token] if m in table.quantities]
        elif token == "rate_coefficients":
            members = [name for name in table.names if name.startswith(RATE_PREFIX)]
        elif token in table.quantities:
            members = [token]
        elif quantity_unit(token):
            raise ConfigError(f"{table.source or 'swarm table'}: quantity {token!r} is not in the data; available: "
                              f"{', '.join(table.names)}")
        else:
            raise ConfigError(f"unknown quantity {token!r}{did_you_mean(token, choices)}; choose from "
                              f"{', '.join(choices)}")
        if not members:
            raise ConfigError(f"{table.source or 'swarm table'}: no data for {token!r}; available: "
                              f"{', '.join(table.names)}")
        group = token if token in PAIRS or token == "rate_coefficients" else _panel_of(token)
        panels.setdefault(group, [])
        panels[group] += [m for m in members if m not in panels[group]]
    return panels


def _series_label(name: str, members: list[str]) -> str:
    if name.startswith(RATE_PREFIX):
        return name[len(RATE_PREFIX):]
    for suffix, text in _SERIES_LABELS.items():
        if name.endswith(f"_{suffix}"):
            return text
    return "Monte Carlo" if len(members) == 1 else label(name)


def handbook_gas_name(gas: str) -> str | None:
    """The key of :data:`~avalanche.analysis.coefficients.HANDBOOK_TOWNSEND` matching ``gas`` (case-insensitive), or
    None."""
    return next((name for name in HANDBOOK_TOWNSEND if name.lower() == str(gas).strip().lower()), None)


def _handbook_overlay(ax, gas: str, fields_Td: np.ndarray) -> None:
    low, high = handbook_validity_range_Td(gas)
    finite = fields_Td[np.isfinite(fields_Td)]
    low, high = max(low, float(finite.min())), min(high, float(finite.max()))
    if low >= high:
        return
    field_Td = np.geomspace(low, high, 100)
    constants = HANDBOOK_TOWNSEND[gas]
    ax.plot(field_Td, handbook_alpha_N(gas, field_Td), "--", color="0.3", gid="handbook_alpha_N",
            label=textwrap.fill(f"Townsend formula, {constants.source}", 36))


@styled
def plot_swarm_parameters(table: SwarmTable, quantities: Sequence[str] | None = None,
                          reference: ReferenceData | None = None, handbook: str | None = "auto") -> Figure:
    """Swarm parameters against E/N on log axes with error bars, one panel per quantity.

    Parameters
    ----------
    table : SwarmTable
    quantities : sequence of str, optional
        See :func:`swarm_panels`. Flux and bulk values share a panel.
    reference : ReferenceData, optional
        Drawn as open markers on the panels of its quantities (others are ignored).
    handbook : str or None
        Gas whose empirical Townsend formula (:data:`~avalanche.analysis.coefficients.HANDBOOK_TOWNSEND`) is drawn on
        the
        α/N panel, only inside its validity range and the data's E/N range: ``"auto"`` (the table's gas, if the
        handbook has it), a gas name, or None for no overlay.

    Returns
    -------
    matplotlib.figure.Figure
    """
    panels = swarm_panels(table, quantities)
    if handbook is None:
        gas = None
    elif handbook == "auto":
        gas = handbook_gas_name(table.gas_label)
    else:
        gas = handbook_gas_name(handbook)
        if gas is None:
            handbook_validity_range_Td(handbook)  # raises ConfigError naming the gas, with a did-you-mean
    # a panel of many series (every rate coefficient) has its legend below it: draw it last, so nothing is below
    order = sorted(panels.items(), key=lambda item: len(item[1]) > LEGEND_BELOW_ENTRIES)
    figure, axes = new_figure(len(panels))
    fields = table.reduced_field_Td
    for ax, (panel, members) in zip(axes, order, strict=True):
        legend_title = None
        if panel == "rate_coefficients" and len(members) > RATE_PANEL_MAX:
            members, legend_title = _largest_rates(table, members)
        series = [table.get(name) for name in members]
        log_y = use_log([values for values, _ in series])
        for name, (values, errors) in zip(members, series, strict=True):
            draw_errorbar(ax, fields, values, errors, name, _series_label(name, members), log_y,
                      fmt="s--" if name.endswith("_bulk") or name.endswith("_simple") else "o-")
        if reference is not None:
            for name in members:
                if name in reference.quantities:
                    values, errors = reference.quantities[name]
                    draw_errorbar(ax, reference.reduced_field_Td, values, errors, f"reference:{name}",
                              f"{reference.label}" + (f" ({_series_label(name, members)})" if len(members) > 1
                                                      else ""), log_y, fmt="D", mfc="none", color="k")
        if panel == "alpha_N" and gas is not None:
            _handbook_overlay(ax, gas, fields)
        set_log_x(ax, fields)
        if log_y:
            set_log_y(ax)
        unit = table.unit(members[0])
        ax.set_xlabel("reduced field E/N [Td]")
        ax.set_ylabel(axis_label(label(panel), unit))
        if not ax.has_data():
            ax.text(0.5, 0.5, "no finite values", transform=ax.transAxes, ha="center")
        add_legend(ax, **({"title": legend_title, "title_fontsize": 6} if legend_title else {}))
    figure.suptitle(_title(table))
    return figure


RATE_PANEL_MAX = 10
"""Most rate coefficients drawn on the ``rate_coefficients`` panel: the largest ones (a set with dozens of levels
would give an unreadable panel; a named process is always drawn when asked for by its own name)."""


def _largest_rates(table, members: list[str]) -> tuple[list[str], str]:
    """The :data:`RATE_PANEL_MAX` rate coefficients with the largest peak value over the table, in table order,
    and a legend title saying how many were left out."""
    peaks = []
    for name in members:
        values = np.asarray(table.get(name)[0], dtype=float)
        finite = values[np.isfinite(values)]
        peaks.append(finite.max() if finite.size else -np.inf)
    keep = set(np.argsort(peaks)[::-1][:RATE_PANEL_MAX].tolist())
    kept = [name for k, name in enumerate(members) if k in keep]
    return kept, f"largest {len(kept)} of {len(members)}"


def _title(table: SwarmTable) -> str:
    parts = [table.gas_label or "swarm parameters"]
    if table.temperature_K is not None:
        parts.append(f"T = {table.temperature_K:g} K")
    return ", ".join(parts)


# --- magnetic fields ----------------------------------------------------------------------------------------------

_COMPONENT_STYLES = (("drift_velocity_E", "o-", "along E"), ("drift_velocity_ExB", "s--", "along ExB"),
                     ("drift_velocity_third", "^:", "third axis"))


@styled
def plot_magnetic_drift(table: MagneticDriftTable) -> Figure:
    """Drift velocity components (along E, E×B, the third axis) and the Lorentz angle against E/N, one colour per
    magnetic field (two panels; series tagged ``<quantity>:<B>T`` for the tests).

    Parameters
    ----------
    table : avalanche.analysis.magnetic.MagneticDriftTable

    Returns
    -------
    matplotlib.figure.Figure
    """
    figure, (ax_w, ax_angle) = new_figure(2)
    colours = [f"C{i}" for i in range(10)]
    every_field = []
    for n, (tesla, curve) in enumerate(table.curves.items()):
        fields = curve["reduced_field_Td"]
        every_field.extend(fields.tolist())
        hx = table.reduced_magnetic_field_Hx.get(tesla)
        name = f"B = {tesla:.3g} T" + (f" ({hx:.3g} Hx)" if hx else "")
        colour = colours[n % len(colours)]
        for quantity, fmt, text in _COMPONENT_STYLES:
            values, errors = curve[quantity]
            draw_errorbar(ax_w, fields, values, errors, f"{quantity}:{tesla:g}T", f"{name}, {text}", False, fmt=fmt,
                          color=colour)
        values, errors = curve["lorentz_angle_deg"]
        draw_errorbar(ax_angle, fields, values, errors, f"lorentz_angle_deg:{tesla:g}T", name, False, fmt="o-",
                      color=colour)
    for ax in (ax_w, ax_angle):
        set_log_x(ax, np.array(every_field))
        ax.set_xlabel("reduced field E/N [Td]")
        add_legend(ax)
    ax_w.set_ylabel(axis_label("drift velocity component", "m/s"))
    ax_angle.set_ylabel(axis_label("Lorentz angle", "deg"))
    figure.suptitle(f"{table.gas_label or 'drift in E and B'}, angle between E and B {table.field_angle_deg:g} deg")
    return figure


# --- energy distributions -----------------------------------------------------------------------------------------

@styled
def plot_eedf(distributions: Mapping[float, tuple], title: str = "") -> Figure:
    """Electron energy distributions f(ε) [eV^-3/2] at several E/N, on a log axis against energy [eV].

    Parameters
    ----------
    distributions : mapping
        E/N [Td] → ``(energy_edges_eV, values, stderr)``: bin edges (n + 1) and values/errors (n) of the EEDF
        normalised as ∫ f(ε) ε^1/2 dε = 1. Points are drawn at bin centres; empty bins are left out.
    title : str
    """
    if not distributions:
        raise ConfigError("plot_eedf: no energy distributions given")
    figure, (ax,) = new_figure(1, columns=1, height_in=3.0)
    for field_Td, (edges, values, errors) in sorted(distributions.items()):
        edges = np.asarray(edges, dtype=float)
        centres = 0.5 * (edges[:-1] + edges[1:])
        draw_errorbar(ax, centres, values, errors, f"eedf:{field_Td:g}", f"{field_Td:g} Td", True, fmt="-",
                  elinewidth=0.5, capsize=0)
    set_log_y(ax)
    ax.set_xlabel("electron energy ε [eV]")
    ax.set_ylabel(axis_label("EEDF f(ε)", "eV^-3/2"))
    ax.legend(title="E/N")
    if title:
        ax.set_title(title)
    return figure


# --- AC: phase-resolved panels ------------------------------------------------------------------------------------

@dataclass
class PhaseCurve:
    """Phase-resolved results of one AC run.

    Attributes
    ----------
    frequency_Hz : float
    phase_rad : numpy.ndarray
        Phase-bin centres of ωt [rad], in [0, 2π).
    quantities : mapping
        Quantity name → (values, stderr), one per phase bin, in the DC result's units.
    reduced_field_Td : float, optional
        The field amplitude E_0/N [Td].
    """

    frequency_Hz: float
    phase_rad: np.ndarray
    quantities: Mapping[str, tuple[np.ndarray, np.ndarray]]
    reduced_field_Td: float | None = None

    @property
    def label(self) -> str:
        text = _frequency_text(self.frequency_Hz)
        return text if self.reduced_field_Td is None else f"{text}, {self.reduced_field_Td:g} Td"


def _frequency_text(frequency_Hz: float) -> str:
    for scale, unit in ((1e9, "GHz"), (1e6, "MHz"), (1e3, "kHz")):
        if abs(frequency_Hz) >= scale:
            return f"{frequency_Hz / scale:g} {unit}"
    return f"{frequency_Hz:g} Hz"


@styled
def plot_phase_resolved(curves: Sequence[PhaseCurve], quantities: Sequence[str] | None = None) -> Figure:
    """Phase-resolved AC panels: each quantity against the phase ωt, one curve per frequency (linear axes).

    Parameters
    ----------
    curves : sequence of PhaseCurve
    quantities : sequence of str, optional
        Default: mean energy, ionization rate coefficient and flux drift velocity, those present.

    Raises
    ------
    ConfigError
        When no curve is given, or a chosen quantity is in none of the curves (with a did-you-mean).
    """
    if not curves:
        raise ConfigError("plot_phase_resolved: no phase-resolved results given (AC runs only)")
    available = list(dict.fromkeys(name for curve in curves for name in curve.quantities))
    if quantities is None:
        quantities = [name for name in _PHASE_DEFAULTS if name in available]
        if not quantities:
            raise ConfigError(f"plot_phase_resolved: none of {', '.join(_PHASE_DEFAULTS)} is phase-resolved; choose "
                              f"from {', '.join(available)}")
    for name in quantities:
        if name not in available:
            raise ConfigError(f"plot_phase_resolved: no phase-resolved {name!r}{did_you_mean(name, available)}; "
                              f"available: {', '.join(available)}")
    figure, axes = new_figure(len(quantities), columns=min(3, len(quantities)))
    for ax, name in zip(axes, quantities, strict=True):
        for curve in sorted(curves, key=lambda c: c.frequency_Hz):
            if name in curve.quantities:
                values, errors = curve.quantities[name]
                draw_errorbar(ax, curve.phase_rad, values, errors, f"phase:{name}:{curve.frequency_Hz:g}", curve.label,
                          False, fmt=".-")
        phase_axis(ax)
        ax.set_ylabel(axis_label(label(name), quantity_unit(name)))
        add_legend(ax)
    return figure


# --- steady-state Townsend profiles -------------------------------------------------------------------------------

@dataclass
class SSTProfile:
    """Spatial profile of a steady-state Townsend run.

    Attributes
    ----------
    position_m : numpy.ndarray
        Distances of the sampling planes from the emitting electrode [m].
    quantities : mapping
        Quantity name → (values, stderr) per plane (e.g. the electron flux crossing each plane per released
        electron, the mean energy there).
    reduced_field_Td : float, optional
    effective_alpha_per_m : float, optional
        The fitted (α − η) [1/m]: drawn as exp((α − η) x) through the flux beyond the relaxation length.
    relaxation_length_m : float, optional
        Marked with a vertical line.
    flux_quantity : str
        Name of the flux among ``quantities`` (for the exponential fit line).
    """

    position_m: np.ndarray
    quantities: Mapping[str, tuple[np.ndarray, np.ndarray]]
    reduced_field_Td: float | None = None
    effective_alpha_per_m: float | None = None
    relaxation_length_m: float | None = None
    flux_quantity: str = "flux"


def _growth_line(ax, profile: SSTProfile, color) -> None:
    if profile.effective_alpha_per_m is None or profile.flux_quantity not in profile.quantities:
        return
    x = np.asarray(profile.position_m, dtype=float)
    flux = np.asarray(profile.quantities[profile.flux_quantity][0], dtype=float)
    beyond = (x >= (profile.relaxation_length_m or 0.0)) & (flux > 0.0) & np.isfinite(flux)
    if not np.any(beyond):
        return
    alpha = profile.effective_alpha_per_m
    intercept = float(np.mean(np.log(flux[beyond]) - alpha * x[beyond]))
    line_x = np.linspace(x[beyond].min(), x[beyond].max(), 50)
    ax.plot(line_x, np.exp(intercept + alpha * line_x), ":", color=color, gid=f"sst_growth:{profile.reduced_field_Td}",
            label=f"exp((α−η) x), α−η = {alpha:.4g} m$^{{-1}}$")


@styled
def plot_sst_profiles(profiles: Sequence[SSTProfile], quantities: Sequence[str] | None = None) -> Figure:
    """Steady-state Townsend spatial profiles: one panel per quantity against distance from the cathode.

    A panel is log-scaled when all its values are positive and span more than a decade (the growing flux).
    """
    if not profiles:
        raise ConfigError("plot_sst_profiles: no profiles given (steady-state Townsend runs only)")
    available = list(dict.fromkeys(name for p in profiles for name in p.quantities))
    quantities = available if quantities is None else list(quantities)
    for name in quantities:
        if name not in available:
            raise ConfigError(f"plot_sst_profiles: no profile of {name!r}{did_you_mean(name, available)}; "
                              f"available: {', '.join(available)}")
    figure, axes = new_figure(len(quantities))
    for ax, name in zip(axes, quantities, strict=True):
        values_all = [np.asarray(p.quantities[name][0], dtype=float) for p in profiles if name in p.quantities]
        finite = np.concatenate(values_all)[np.isfinite(np.concatenate(values_all))]
        log_y = finite.size > 0 and bool(np.all(finite > 0.0)) and finite.max() > 10.0 * finite.min()
        for profile in profiles:
            if name not in profile.quantities:
                continue
            values, errors = profile.quantities[name]
            series = "" if profile.reduced_field_Td is None else f"{profile.reduced_field_Td:g} Td"
            container = draw_errorbar(ax, profile.position_m, values, errors, f"sst:{name}:{profile.reduced_field_Td}",
                                  series, log_y, fmt=".-")
            color = container.lines[0].get_color() if container else None
            if name == profile.flux_quantity:
                _growth_line(ax, profile, color)
            if profile.relaxation_length_m is not None:
                ax.axvline(profile.relaxation_length_m, color=color, lw=0.8, ls="--",
                           gid=f"sst_relaxation:{profile.reduced_field_Td}")
        if log_y:
            set_log_y(ax)
        ax.set_xlabel("distance from the emitting electrode x [m]")
        ax.set_ylabel(axis_label(label(name), quantity_unit(name)))
        add_legend(ax)
    return figure


# --- Paschen curve ------------------------------------------------------------------------------------------------
