"""Figure style shared by every plot: the paper style, figure and axis helpers, and :func:`save_figure`.

Every function returns a :class:`matplotlib.figure.Figure` built without pyplot (no global state, any backend);
:func:`save_figure` writes it as PNG and PDF. Sizes follow a two-column paper: 7 in wide, 9 pt text. Each plotted
series carries a ``gid`` (e.g. ``"drift_velocity_bulk"``, ``"handbook_alpha_N"``) so its data can be read back
from the figure — the tests do that to check that what is drawn is what the file holds.

Log axes cannot show zero or negative values: a log-scaled panel leaves such points out (a panel with a negative
value is drawn on a linear axis instead).
"""

from __future__ import annotations

import functools
import math
import re
from collections.abc import Sequence
from pathlib import Path

import matplotlib
import numpy as np
from matplotlib.figure import Figure
from matplotlib.ticker import FuncFormatter, LogFormatter, LogLocator, NullFormatter

from .. import quantities as Q
from .._version import __version__
from ..analysis.tables import RATE_PREFIX, did_you_mean
from ..errors import ConfigError

PAPER_STYLE = {
    "font.size": 9, "axes.labelsize": 9, "axes.titlesize": 9, "legend.fontsize": 7, "xtick.labelsize": 8,
    "ytick.labelsize": 8, "lines.linewidth": 1.2, "lines.markersize": 3.5, "axes.grid": True, "grid.alpha": 0.3,
    "savefig.dpi": 300, "savefig.bbox": "tight", "pdf.fonttype": 42, "ps.fonttype": 42,
}
"""Matplotlib settings used for every figure (readable at print size; fonts embedded as TrueType in PDF)."""

FORMATS = ("png", "pdf")
"""File formats :func:`save_figure` writes by default."""

_WIDTH_IN = 7.0
_PANEL_HEIGHT_IN = 2.5

_PRETTY_UNITS = {
    "rad": "rad",
    "m/s": r"m s$^{-1}$", "1/(m s)": r"m$^{-1}$ s$^{-1}$", "m^2": r"m$^{2}$", "m^3/s": r"m$^{3}$ s$^{-1}$",
    "1/s": r"s$^{-1}$", "1/(V m s)": r"V$^{-1}$ m$^{-1}$ s$^{-1}$", "eV^-3/2": r"eV$^{-3/2}$", "1/m": r"m$^{-1}$",
}

PAIRS = {
    "drift_velocity": ("drift_velocity_flux", "drift_velocity_bulk"),
    "N_D_L": ("N_D_L_flux", "N_D_L_bulk"),
    "N_D_T": ("N_D_T_flux", "N_D_T_bulk"),
}
"""Panels that show a flux and a bulk quantity together."""

_COMPANIONS = {"alpha_N_simple": "alpha_N", "eta_N_simple": "eta_N"}
"""Quantities drawn on another quantity's panel (the ν/(N W) estimates beside the diffusion-corrected ones)."""

_PANEL_LABELS = {
    **{name: Q.label(name) for name in Q.QUANTITIES},
    "drift_velocity": "drift velocity W",
    "N_D_L": "reduced longitudinal diffusion N·D$_L$",
    "N_D_T": "reduced transverse diffusion N·D$_T$",
    "alpha_N": "Townsend ionization coefficient α/N",
    "rate_coefficients": "rate coefficients k",
    "flux": "electron flux per released electron",
    "drift_velocity_amplitude": "drift velocity amplitude W$_1$",
}
"""Axis labels: the plain-words labels of :mod:`avalanche.quantities`, and those of the combined panels."""

_SERIES_LABELS = {"flux": "flux", "bulk": "bulk", "simple": "ν/(N W)"}

DEFAULT_PANELS = ("mean_energy_eV", "drift_velocity", "N_D_L", "N_D_T", "alpha_N", "eta_N")
"""Panels drawn when no quantities are chosen (those the data have; η/N only where it is nonzero)."""

_PHASE_DEFAULTS = ("mean_energy_eV", "ionization_rate_coefficient", "drift_velocity_flux")


def label(name: str) -> str:
    """The plain words (with the usual symbol) naming quantity or panel ``name`` on a figure, e.g.
    ``label("N_mu")`` → "reduced mobility μN"; every figure takes its axis labels from here.

    Per-process rate coefficients read "rate coefficient of <process>"; an unknown name is shown with spaces for
    underscores rather than as a code name.
    """
    if name in _PANEL_LABELS:
        return _PANEL_LABELS[name]
    if name.startswith(RATE_PREFIX):
        return f"rate coefficient of {name[len(RATE_PREFIX):]}"
    return name.replace("_", " ")


def pretty_unit(unit: str) -> str:
    return _PRETTY_UNITS.get(unit, unit)


_LABEL_WIDTH = 26
"""Characters of an axis label per line: longer labels wrap (at spaces, never inside a $…$ symbol) so that a
label stays within its panel's height and does not run into the next panel."""


def axis_label(label: str, unit: str) -> str:
    """``label [unit]``, wrapped onto two or more lines when longer than :data:`_LABEL_WIDTH` characters."""
    text = f"{label} [{pretty_unit(unit)}]" if unit else label
    if len(re.sub(r"\$[^$]*\$", "xx", text)) <= _LABEL_WIDTH:
        return text
    words, lines = [*label.split(" "), *([f"[{pretty_unit(unit)}]"] if unit else [])], [""]  # the unit stays whole
    for word in words:
        candidate = f"{lines[-1]} {word}".strip()
        if lines[-1] and len(re.sub(r"\$[^$]*\$", "xx", candidate)) > _LABEL_WIDTH:
            lines.append(word)
        else:
            lines[-1] = candidate
    return "\n".join(lines)


def new_figure(panels: int, columns: int = 2, height_in: float = _PANEL_HEIGHT_IN):
    columns = max(1, min(columns, panels))
    rows = math.ceil(panels / columns)
    figure = Figure(figsize=(_WIDTH_IN if columns > 1 else _WIDTH_IN / 1.6, height_in * rows), layout="constrained")
    axes = figure.subplots(rows, columns, squeeze=False).ravel()
    for extra in axes[panels:]:
        extra.remove()
    return figure, list(axes[:panels])


def styled(function):
    """Run a plotting function under :data:`PAPER_STYLE` (text sizes are fixed when artists are created)."""

    @functools.wraps(function)
    def styled(*args, **kwargs):
        with matplotlib.rc_context(PAPER_STYLE):
            return function(*args, **kwargs)

    return styled


def attach_notes(figure: Figure, **notes: str) -> Figure:
    """Keep notes that belong with a figure (the high-voltage caution, a model's approximation) beside it, not in
    it: :func:`save_figure` writes them into the file's metadata (PNG and SVG ``Description``, PDF ``Subject``)
    and the command line prints them in the terminal. Returns ``figure``."""
    existing = dict(getattr(figure, "avalanche_notes", {}))
    existing.update(notes)
    figure.avalanche_notes = existing
    return figure


def _metadata(figure: Figure, fmt: str) -> dict:
    """The metadata of a saved figure: its notes and the package version (keys each format supports)."""
    notes = " ".join(getattr(figure, "avalanche_notes", {}).values())
    software = f"avalanche {__version__}"
    if fmt == "pdf":
        data = {"Creator": software, "Subject": notes}
    elif fmt == "png":
        data = {"Software": software, "Description": notes}
    else:
        data = {"Creator": software, "Description": notes}
    return {key: value for key, value in data.items() if value}


def save_figure(figure: Figure, stem, formats: Sequence[str] = FORMATS) -> list[Path]:
    """Write ``figure`` to ``stem.<format>`` for every format, with its notes (:func:`attach_notes`) and the
    package version in the file's metadata; returns the paths written.

    Raises
    ------
    ConfigError
        For a format other than png, pdf or svg.
    """
    stem = Path(stem)
    stem.parent.mkdir(parents=True, exist_ok=True)
    paths = []
    for fmt in formats:
        if fmt not in ("png", "pdf", "svg"):
            raise ConfigError(f"save_figure: format {fmt!r}{did_you_mean(fmt, ('png', 'pdf', 'svg'))}; choose "
                              "png, pdf or svg")
        path = stem.with_name(f"{stem.name}.{fmt}")
        with matplotlib.rc_context(PAPER_STYLE):
            figure.savefig(path, metadata=_metadata(figure, fmt))
        paths.append(path)
    return paths


def draw_errorbar(ax, x, y, err, gid: str, label: str, log_y: bool, **style):
    """Error-bar series of the finite points (positive ones on a log axis), tagged with ``gid``."""
    x, y = np.asarray(x, dtype=float), np.asarray(y, dtype=float)
    err = np.zeros_like(y) if err is None else np.asarray(err, dtype=float)
    keep = np.isfinite(x) & np.isfinite(y) & ((y > 0.0) if log_y else True)
    if not np.any(keep):
        return None
    container = ax.errorbar(x[keep], y[keep], yerr=np.nan_to_num(err[keep]), label=label,
                            **({"fmt": "o-", "capsize": 2} | style))
    container.lines[0].set_gid(gid)
    return container


class PlainLogFormatter(LogFormatter):
    """Tick labels of a log axis as plain numbers between 0.001 and 10⁴ ("6", "0.2", "3000"), as m×10ⁿ beyond
    ("3×10⁴", "10⁻²¹"), never "6×10⁰" or "3e+04"; which minor ticks get a label follows matplotlib's
    :class:`~matplotlib.ticker.LogFormatter` (all, a few or none, by the axis span)."""

    def __init__(self, *args, minor: bool = False, **kwargs):
        super().__init__(*args, **kwargs)
        self.minor = minor

    def __call__(self, x, pos=None):
        text = super().__call__(x, pos)
        return "" if text and self.minor and self._crowded(x, text) else text

    def _crowded(self, x: float, text: str) -> bool:
        """Whether a minor label at ``x`` would touch its neighbours' (ticks at m·10ⁿ, m = 1 … 9): the distance in
        pixels to the nearer neighbouring tick, from the axis length and span, against the label's height."""
        axis = self.axis
        if axis is None or x <= 0 or axis.axes is None or axis.axis_name != "y":
            return False
        low, high = sorted(axis.get_view_interval())
        if low <= 0 or high <= low:
            return False
        pixels_per_decade = axis.axes.get_window_extent().height / math.log10(high / low)
        exponent = math.floor(math.log10(x) + 1e-9)
        m = round(x / 10.0 ** exponent)
        gap = min(math.log10((m + 1) / m), math.log10(m / (m - 1)) if m > 1 else math.log10(10 / 9))
        dpi = axis.figure.dpi if axis.figure is not None else 72.0
        size = matplotlib.rcParams["ytick.labelsize"]
        size = size if isinstance(size, (int, float)) else 8.0
        height = size * dpi / 72.0 * (1.6 if "$" in text else 1.2)
        return gap * pixels_per_decade < height

    def _num_to_string(self, x, vmin, vmax):
        if x == 0.0 or 1e-3 <= abs(x) < 1e4:
            return f"{x:.3g}"
        exponent = math.floor(math.log10(abs(x)) + 1e-9)
        mantissa = float(f"{x / 10.0 ** exponent:.2g}")
        power = f"10^{{{exponent}}}"
        return f"${power}$" if mantissa == 1.0 else f"${mantissa:g}\\times{power}$"


def set_log_y(ax) -> None:
    """Log y axis whose range follows the data points, not error bars reaching towards zero (those run off the
    bottom of the panel)."""
    ax.set_yscale("log")
    values = [np.asarray(line.get_ydata(), dtype=float) for line in ax.lines if line.get_gid()]
    positive = np.concatenate(values)[np.concatenate(values) > 0] if values else np.empty(0)
    if positive.size:
        low, high = float(positive.min()), float(positive.max())
        ax.set_ylim(low / 2.0, max(ax.get_ylim()[1], high * 1.5))
        ax.yaxis.set_major_formatter(PlainLogFormatter())
        ax.yaxis.set_minor_formatter(PlainLogFormatter(labelOnlyBase=False, minor_thresholds=(2, 0.5), minor=True))


LEGEND_BELOW_ENTRIES = 6
"""A legend of more entries goes below its axes in two small columns (so the curves stay visible)."""


def add_legend(ax, **kwargs) -> None:
    """A legend sized to its entries (many entries: two small columns below the axes), if there is anything to
    label."""
    handles, labels = ax.get_legend_handles_labels()
    if len(handles) < 2:  # one series needs no legend: the axis label names it
        return
    if len(handles) > LEGEND_BELOW_ENTRIES:
        ax.legend(loc="upper center", bbox_to_anchor=(0.5, -0.25), fontsize=5.5, ncols=2, **kwargs)
    else:
        ax.legend(loc="best", **kwargs)


def set_log_x(ax, values) -> None:
    """Log x axis labelled with plain numbers: 1-2-5 ticks within two decades, decades beyond."""
    finite = np.asarray(values, dtype=float)
    finite = finite[np.isfinite(finite) & (finite > 0)]
    ax.set_xscale("log")
    decades = math.log10(finite.max() / finite.min()) if finite.size else 0.0
    ax.xaxis.set_major_locator(LogLocator(subs=(1.0,) if decades > 2.5 else (1.0, 2.0, 5.0)))
    ax.xaxis.set_major_formatter(FuncFormatter(lambda v, _: f"{v:g}"))
    ax.xaxis.set_minor_formatter(NullFormatter())


def use_log(values: Sequence[np.ndarray]) -> bool:
    finite = np.concatenate([np.asarray(v, dtype=float)[np.isfinite(v)] for v in values]) if values else []
    return len(finite) > 0 and bool(np.all(finite >= 0.0)) and bool(np.any(finite > 0.0))


# --- swarm parameters against E/N ---------------------------------------------------------------------------------


def phase_axis(ax) -> None:
    ax.set_xlim(0.0, 2.0 * math.pi)
    ax.set_xticks(np.arange(5) * math.pi / 2.0, ["0", "π/2", "π", "3π/2", "2π"])
    ax.set_xlabel("phase ωt [rad]")
