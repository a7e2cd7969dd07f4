"""Subcommands that turn results into what users take away: ``plot``, ``table``, ``breakdown``, ``emission``.

Registered into :mod:`avalanche.cli` on import. Progress and notes go to stderr, so ``--json`` output and
tables printed to stdout can be piped.
"""

from __future__ import annotations

import csv
import io
import math
import re
import sys
import time
import warnings
from pathlib import Path

import numpy as np

from .cli import command, print_json
from .constants import BOLTZMANN_J_K, STANDARD_ATMOSPHERE_Pa, TORR_Pa, TOWNSEND_V_m2
from .errors import ConfigError
from .tables import RATE_PREFIX, SwarmTable, did_you_mean, fluid_table

PD_UNITS_Pa_m = {"torrcm": TORR_Pa / 100.0, "pam": 1.0}
"""Units accepted by ``--pd`` → their value in Pa m (1 Torr cm = 133.322 Pa × 0.01 m)."""
DEFAULT_PD_UNIT = "torrcm"
DEFAULT_PD_POINTS = 30
DEFAULT_BREAKDOWN_GRID = "50:5000:12"
"""E/N grid [Td] computed on demand by ``avalanche breakdown`` without ``--results`` (low:high:count, log)."""
EXTENSION_LIMITS_Td = (1.0, 3.0e4)
"""The on-demand grid is extended (×2 per point) towards these fields when the breakdown field lies beyond it."""
MAX_EXTENSIONS = 6
COEFFICIENTS = {"corrected": ("alpha_N", "eta_N"), "simple": ("alpha_N_simple", "eta_N_simple"),
                "sst": ("alpha_N", "eta_N")}
"""``--coefficients`` choices: the time-of-flight engine's diffusion-corrected α/N, η/N, its simple ν/(N W)
estimates, or the steady-state Townsend α/N, η/N (:func:`avalanche.townsend`: the spatial growth a gap sees)."""
SST_MODE = "steady-state-townsend"
_LENGTH_UNITS_m = {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "um": 1e-6}


def _note(message: str) -> None:
    print(message, file=sys.stderr)


def _split(text: str | None) -> list[str] | None:
    return None if text is None else [item.strip() for item in text.split(",") if item.strip()]


def _formats(text: str) -> list[str]:
    formats = _split(text) or []
    for fmt in formats:
        if fmt not in ("png", "pdf", "svg"):
            raise ConfigError(f"--format {fmt!r}{did_you_mean(fmt, ('png', 'pdf', 'svg'))}; give a comma list of "
                              "png, pdf, svg")
    return formats


def _show_warnings(caught, command_name: str) -> list[str]:
    messages = list(dict.fromkeys(str(w.message) for w in caught))
    for message in messages:
        _note(f"avalanche {command_name}: warning: {message}")
    return messages


# --- shared: results-file arguments -------------------------------------------------------------------------------

def _results_arguments(p, positional: bool = True) -> None:
    if positional:
        p.add_argument("results", metavar="RESULTS.h5", help="sweep results file (from avalanche sweep)")
    p.add_argument("--mixture", default=None, help="mixture label or index, when the sweep has several")
    p.add_argument("--frequency", type=float, default=None, metavar="HZ",
                   help="drive frequency [Hz] of the points to use, when the sweep has several (0 = DC)")


def _open(path):
    from .results_file import open_results

    return open_results(path)


def _load_table(results, args, command_name: str, default_lowest_frequency: bool = False) -> SwarmTable:
    frequency = args.frequency
    if frequency is None and default_lowest_frequency:
        index = _mixture_index(results, args.mixture)
        frequencies = sorted(set(results.grid["frequency_Hz"][results.grid["mixture_index"] == index].tolist()))
        if len(frequencies) > 1:
            frequency = frequencies[0]
            _note(f"avalanche {command_name}: the sweep has frequencies {frequencies} Hz; using {frequency:g} Hz "
                  "(choose with --frequency)")
    table = SwarmTable.from_results(results, mixture=args.mixture, frequency_Hz=frequency)
    for note in table.notes:
        _note(f"avalanche {command_name}: {results.path}: {note}")
    return table


def _mixture_index(results, mixture) -> int:
    from .tables import _choose_mixture

    return _choose_mixture(results.mixtures, mixture, str(results.path))


def _nearest_indices(fields_Td: np.ndarray, wanted: list[float]) -> list[int]:
    """Index of the field closest in ln E/N to each wanted value (duplicates removed, order kept)."""
    chosen = [int(np.argmin(np.abs(np.log(fields_Td / w)))) for w in wanted]
    return list(dict.fromkeys(chosen))


def _spread(count: int, points: int) -> list[int]:
    return sorted(set(np.round(np.linspace(0, points - 1, min(count, points))).astype(int).tolist()))


def _fields_option(text: str | None, name: str) -> list[float] | None:
    items = _split(text)
    if items is None:
        return None
    try:
        values = [float(item) for item in items]
    except ValueError:
        raise ConfigError(f"{name} {text!r}: give reduced fields in Td separated by commas, e.g. 10,100") from None
    if any(not math.isfinite(v) or v <= 0 for v in values):
        raise ConfigError(f"{name} {text!r}: reduced fields must be positive")
    return values


# --- plot ---------------------------------------------------------------------------------------------------------

def _plot_configure(p) -> None:
    _results_arguments(p)
    p.add_argument("--out", default=".", metavar="DIR", help="folder for the figures (default: current folder)")
    p.add_argument("--quantity", default=None, metavar="LIST",
                   help="comma list of quantities or panels, e.g. alpha_N,drift_velocity_bulk; 'drift_velocity', "
                        "'long_diffusion_N', 'trans_diffusion_N' draw flux and bulk together, 'rate_coefficients' "
                        "every process rate (default: mean energy, drift velocity, diffusion, alpha_N, eta_N)")
    p.add_argument("--reference", default=None, metavar="FILE.csv",
                   help="reference data to overlay: CSV with '# source: <citation>' comment, a header line "
                        "reduced_field_Td,<quantity>[,<quantity>_stderr],... and values in avalanche's units")
    p.add_argument("--handbook", default="auto", metavar="GAS",
                   help="empirical Townsend formula to draw on the alpha_N panel inside its validity range: a gas "
                        "of the handbook table, 'auto' (the sweep's gas; default) or 'none'")
    p.add_argument("--eedf", default=None, metavar="TD,...",
                   help="E/N [Td] of the energy distributions to draw (nearest computed points; default: up to 4 "
                        "spread over the sweep; 'none' to skip)")
    p.add_argument("--format", default="png,pdf", help="figure formats, comma list of png, pdf, svg (png,pdf)")


def phase_curves(results, mixture_index: int, field_Td: float) -> list:
    """One :class:`~avalanche.plots.PhaseCurve` per AC frequency (> 0) of a sweep, at the field nearest ``field_Td``.

    A point's result contributes when it has ``phase`` (bin centres [rad]) and ``phase_resolved`` (quantity name →
    values and errors per bin, as pairs or objects with ``.value``/``.stderr``); DC results have neither, so the
    AC panels appear only when the data contain them.
    """
    from .plots import PhaseCurve
    from .results_file import STATUS_OK

    grid = results.grid
    rows = np.flatnonzero((grid["mixture_index"] == mixture_index) & (grid["frequency_Hz"] > 0)
                          & (grid["status"] == STATUS_OK))
    curves = []
    for frequency in sorted(set(grid["frequency_Hz"][rows].tolist())):
        at = rows[grid["frequency_Hz"][rows] == frequency]
        i = int(at[np.argmin(np.abs(np.log(grid["reduced_field_Td"][at] / field_Td)))])
        result = results.point(i)
        resolved = getattr(result, "phase_resolved", None)
        if resolved is None:
            continue
        quantities = {name: _value_error(entry) for name, entry in resolved.items() if name != "rate_coefficients"}
        curves.append(PhaseCurve(frequency, np.asarray(result.phase, dtype=float), quantities,
                                 float(grid["reduced_field_Td"][i])))
    return curves


def sst_profile(result):
    """The :class:`~avalanche.plots.SSTProfile` of a steady-state Townsend result: the flux and its mean energy on
    the tally planes, the fitted growth exp((α − η) z) and the relaxation length."""
    from .plots import SSTProfile

    p = result.profiles
    quantities = {name: (np.asarray(p[name]), np.asarray(p[f"{name}_stderr"])) for name in ("flux", "mean_energy_eV")
                  if name in p and f"{name}_stderr" in p}
    density = result.inputs.get("mixture", {}).get("number_density_m3")
    alpha_N = result.effective_alpha_N.value
    growth = float(alpha_N * density) if density and math.isfinite(alpha_N) else None
    length = result.relaxation_length_m.value
    return SSTProfile(position_m=np.asarray(p["z_m"]), quantities=quantities,
                      reduced_field_Td=float(result.reduced_field_Td), effective_alpha_per_m=growth,
                      relaxation_length_m=float(length) if math.isfinite(length) else None)


def _value_error(entry):
    if hasattr(entry, "value") and hasattr(entry, "stderr"):
        return np.asarray(entry.value, dtype=float), np.asarray(entry.stderr, dtype=float)
    values, errors = entry
    return np.asarray(values, dtype=float), np.asarray(errors, dtype=float)


def _handbook_note(figure, table: SwarmTable, handbook: str | None) -> None:
    from .coefficients import HANDBOOK_TOWNSEND, handbook_validity_range_Td
    from .plots import handbook_gas_name

    if handbook is None or any(line.get_gid() == "handbook_alpha_N" for ax in figure.axes for line in ax.lines):
        return
    gas = handbook_gas_name(table.gas_label if handbook == "auto" else handbook)
    if gas is None:
        _note(f"avalanche plot: no handbook Townsend formula for {table.gas_label!r} (the table has "
              f"{', '.join(HANDBOOK_TOWNSEND)}; choose one with --handbook)")
    elif any(line.get_gid() == "alpha_N" for ax in figure.axes for line in ax.lines):
        low, high = handbook_validity_range_Td(gas)
        _note(f"avalanche plot: the Townsend formula of {gas} holds for {low:.4g}–{high:.4g} Td, outside the data's "
              f"E/N range; not drawn")


@command("plot", "plot swarm parameters against E/N (and EEDFs, AC phase panels) from a results file",
         configure=_plot_configure)
def _plot(args) -> int:
    from .plots import (
        plot_eedf,
        plot_phase_resolved,
        plot_sst_profiles,
        plot_swarm_parameters,
        read_reference,
        save_figure,
    )

    formats = _formats(args.format)
    results = _open(args.results)
    table = _load_table(results, args, "plot", default_lowest_frequency=True)
    reference = read_reference(args.reference) if args.reference else None
    handbook = None if args.handbook.lower() == "none" else args.handbook
    out, stem = Path(args.out), Path(args.results).stem
    written = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        figure = plot_swarm_parameters(table, _split(args.quantity), reference, handbook)
        written += save_figure(figure, out / f"{stem}_swarm", formats)
        _handbook_note(figure, table, handbook)
        if (args.eedf or "").lower() != "none":
            wanted = _fields_option(args.eedf, "--eedf")
            indices = (_nearest_indices(table.reduced_field_Td, wanted) if wanted
                       else _spread(4, table.reduced_field_Td.size))
            distributions = {}
            for k in indices:
                eedf = getattr(results.point(int(table.point_index[k])), "eedf", None)
                if eedf is not None:
                    distributions[float(table.reduced_field_Td[k])] = (eedf.energy_edges_eV, eedf.value, eedf.stderr)
            if distributions:
                written += save_figure(plot_eedf(distributions, title=table.gas_label), out / f"{stem}_eedf", formats)
        if results.attrs.get("mode") == SST_MODE:
            profiles = [sst_profile(results.point(int(table.point_index[k])))
                        for k in _spread(4, table.reduced_field_Td.size)]
            written += save_figure(plot_sst_profiles(profiles), out / f"{stem}_sst_profiles", formats)
        curves = phase_curves(results, _mixture_index(results, args.mixture),
                              float(np.exp(np.mean(np.log(table.reduced_field_Td)))))
        if curves:
            written += save_figure(plot_phase_resolved(curves), out / f"{stem}_phase", formats)
    _show_warnings(caught, "plot")
    for path in written:
        print(f"wrote {path}")
    return 0


# --- table --------------------------------------------------------------------------------------------------------

def _table_configure(p) -> None:
    _results_arguments(p)
    p.add_argument("--out", default=None, metavar="FILE",
                   help="output file (default: print to stdout); .txt or .dat selects the text format")
    p.add_argument("--against", default="reduced-field", choices=["reduced-field", "mean-energy"],
                   help="coordinate of the first column, sorted and strictly increasing (default reduced-field)")
    p.add_argument("--format", default=None, choices=["csv", "text"],
                   help="csv (names line, units line, comma-separated) or text (whitespace-separated, header as "
                        "# comments, for numpy.loadtxt); default from the --out suffix, else csv")
    p.add_argument("--quantity", default=None, metavar="LIST", help="comma list of quantities (default: all)")


@command("table", "write a fluid-model table of coefficients with errors and units (CSV or text)",
         configure=_table_configure)
def _table(args) -> int:
    results = _open(args.results)
    table = _load_table(results, args, "table")
    fluid = fluid_table(table, against=args.against, quantities=_split(args.quantity))
    fmt = args.format or ("text" if args.out and Path(args.out).suffix.lower() in (".txt", ".dat") else "csv")
    text = fluid.format_text() if fmt == "text" else fluid.format_csv()
    if args.out is None:
        sys.stdout.write(text)
        return 0
    path = Path(args.out)
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(text, encoding="utf-8")
    print(f"wrote {path} ({fmt}, {table.reduced_field_Td.size} rows, {len(fluid.names)} columns, against "
          f"{fluid.coordinate})")
    return 0


# --- breakdown ----------------------------------------------------------------------------------------------------

_PD_SUFFIX = re.compile(r"(?<=[\d\s.])(torr[\s·.*_]?cm|pa[\s·.*_]?m)\s*$", re.IGNORECASE)


def parse_pd(text: str) -> np.ndarray:
    """p d values [Pa m] of a ``--pd`` specification.

    ``LOW:HIGH`` (30 log-spaced values), ``LOW:HIGH:COUNT`` or ``VALUE[,VALUE...]``, optionally followed by a
    unit: ``torrcm`` (default; also ``Torr cm``, ``Torr·cm``) or ``pam`` (``Pa m``, ``Pa·m``).
    Examples: ``0.1:100``, ``0.1:100:50torrcm``, ``13:13000pam``.

    Raises
    ------
    ConfigError
        For a malformed specification, non-positive values or an unknown unit.
    """
    spec = str(text).strip()
    match = _PD_SUFFIX.search(spec)
    unit = DEFAULT_PD_UNIT
    if match:
        unit = re.sub(r"[\s·.*_]", "", match.group(1).lower())
        spec = spec[:match.start()].strip()
    help_text = "give LOW:HIGH[:COUNT] or VALUE[,VALUE...] with an optional unit torrcm or pam, e.g. 0.1:100torrcm"
    try:
        parts = spec.split(":")
        if len(parts) > 3:
            raise ValueError
        numbers = [float(part) for part in parts[:2]] if ":" in spec else [float(v) for v in spec.split(",")]
        count = int(parts[2]) if len(parts) == 3 else DEFAULT_PD_POINTS
    except ValueError:
        tail = re.search(r"[a-zA-Z][\w\s·.*]*$", spec)
        if tail and not re.fullmatch(r"[eE][-+]?\d+", tail.group(0)):
            raise ConfigError(f"--pd {text!r}: unknown unit {tail.group(0)!r}"
                              f"{did_you_mean(tail.group(0).lower(), PD_UNITS_Pa_m)}; use torrcm or pam") from None
        raise ConfigError(f"--pd {text!r}: {help_text}") from None
    if ":" in spec:
        if not (0 < numbers[0] < numbers[1]) or count < 2:
            raise ConfigError(f"--pd {text!r}: need 0 < LOW < HIGH and COUNT ≥ 2; {help_text}")
        values = np.geomspace(numbers[0], numbers[1], count)
    else:
        values = np.array(numbers)
    if np.any(~np.isfinite(values) | (values <= 0)):
        raise ConfigError(f"--pd {text!r}: p d values must be positive")
    return values * PD_UNITS_Pa_m[unit]


def parse_field_grid(text: str, name: str = "--en") -> np.ndarray:
    """Reduced fields [Td] of ``LOW:HIGH:COUNT`` (log-spaced) or ``VALUE,VALUE,...``."""
    try:
        if ":" in text:
            low, high, count = text.split(":")
            low, high, count = float(low), float(high), int(count)
            if not (0 < low < high) or count < 2:
                raise ValueError
            return np.geomspace(low, high, count)
        values = np.array([float(v) for v in text.split(",")])
    except ValueError:
        raise ConfigError(f"{name} {text!r}: give LOW:HIGH:COUNT (log-spaced, Td) or a comma list, e.g. "
                          f"{DEFAULT_BREAKDOWN_GRID}") from None
    if values.size < 2 or np.any(values <= 0):
        raise ConfigError(f"{name} {text!r}: give at least two positive reduced fields")
    return np.sort(values)


def _length_m(text: str, spec: str) -> float:
    match = re.fullmatch(r"\s*([0-9.eE+-]+)\s*(m|cm|mm|um)?\s*", text)
    if not match:
        raise ConfigError(f"--geometry {spec!r}: {text!r} is not a length; give e.g. 2mm, 0.5cm or 0.01 (metres)")
    return float(match.group(1)) * _LENGTH_UNITS_m[match.group(2) or "m"]


GEOMETRIES = {"plane": 1, "coaxial": 2, "spheres": 2, "sphere": 1}
"""``--geometry`` kinds and their number of lengths: plane:GAP, coaxial:INNER,OUTER (radii), spheres:INNER,OUTER
(concentric spheres), sphere:RADIUS (isolated sphere, grounded electrode at infinity)."""


def parse_geometry(spec: str):
    """The gap of :mod:`avalanche.geometry` described by ``--geometry`` (lengths in m unless suffixed)."""
    from .geometry import CoaxialGap, ConcentricSpheres, IsolatedSphere, PlaneGap

    kind, _, lengths = spec.partition(":")
    kind = kind.strip().lower()
    if kind not in GEOMETRIES:
        raise ConfigError(f"--geometry {spec!r}: unknown kind {kind!r}{did_you_mean(kind, GEOMETRIES)}; use "
                          "plane:GAP, coaxial:INNER,OUTER, spheres:INNER,OUTER or sphere:RADIUS")
    values = [_length_m(item, spec) for item in lengths.split(",") if item.strip()]
    if len(values) != GEOMETRIES[kind]:
        raise ConfigError(f"--geometry {spec!r}: {kind} needs {GEOMETRIES[kind]} length(s), got {len(values)}")
    build = {"plane": PlaneGap, "coaxial": CoaxialGap, "spheres": ConcentricSpheres, "sphere": IsolatedSphere}
    return build[kind](*values)


def _breakdown_configure(p) -> None:
    p.add_argument("--gas", default=None, help='gas or mixture, e.g. "N2", "Ar", "air" (required without '
                                              "--results; with it, taken from the file)")
    p.add_argument("--gamma", type=float, required=True,
                   help="secondary-electron yield per ion at the cathode, e.g. 0.01")
    p.add_argument("--pd", default="0.1:100",
                   help="p d range: LOW:HIGH[:COUNT] or VALUE[,VALUE], in Torr cm by default; add a unit to say "
                        "so: 0.1:100torrcm or 13:13000pam (default 0.1:100, 30 log-spaced values)")
    p.add_argument("--results", default=None, metavar="RESULTS.h5",
                   help="take alpha_N and eta_N from this sweep results file instead of computing them")
    _results_arguments(p, positional=False)
    p.add_argument("--en", default=DEFAULT_BREAKDOWN_GRID, metavar="LOW:HIGH:COUNT",
                   help=f"E/N grid [Td] computed on demand without --results (default {DEFAULT_BREAKDOWN_GRID}, "
                        "extended automatically when the breakdown field lies beyond it)")
    p.add_argument("--extend", action="store_true",
                   help="with --results: compute extra points with the engine where the file's E/N range is short")
    p.add_argument("--coefficients", default="corrected", choices=list(COEFFICIENTS),
                   help="corrected: the time-of-flight alpha_N, eta_N (diffusion-corrected; default); simple: "
                        "alpha_N_simple, eta_N_simple (nu/(N W)); sst: steady-state Townsend alpha_N, eta_N (the "
                        "spatial growth of a gap; computed with avalanche.townsend, or from an SST sweep file)")
    p.add_argument("--precision", type=float, default=0.03, help="target relative error per point (0.03)")
    p.add_argument("--max-events", type=float, default=2e7, help="event budget per computed point (2e7)")
    p.add_argument("--electrons", type=int, default=None, help="electrons per computed point (engine default)")
    p.add_argument("--seed", type=int, default=0, help="master seed of computed points (0)")
    p.add_argument("--temperature", type=float, default=None, metavar="K",
                   help="gas temperature relating p to N [K] (default: the results file's, else 300)")
    p.add_argument("--pressure", type=float, default=None, metavar="PA",
                   help="gas pressure [Pa] of computed points (three-body processes) and of --geometry "
                        "(default 1 atm)")
    p.add_argument("--geometry", default=None, metavar="KIND:LENGTHS",
                   help="also a non-uniform gap at --pressure: plane:GAP, coaxial:INNER,OUTER, spheres:INNER,OUTER "
                        "or sphere:RADIUS; lengths in m, or with mm/cm suffix (e.g. coaxial:1mm,20mm)")
    p.add_argument("--json", action="store_true", help="print the result as JSON (minimum_voltage_V, "
                                                       "minimum_pd_Pa_m, the curve arrays, caution)")
    p.add_argument("--out", default=".", metavar="DIR", help="folder for the plot and CSV tables (current folder)")
    p.add_argument("--format", default="png,pdf", help="figure formats (png,pdf)")


def _compute(mixture, fields_Td, args, first_index: int) -> SwarmTable:
    """Engine runs at ``fields_Td`` (progress and time estimate on stderr)."""
    from .engine import swarm

    if args.coefficients == "sst":
        from .sst import townsend as swarm
    results, started = [], time.perf_counter()
    for k, field_Td in enumerate(fields_Td):
        t0 = time.perf_counter()
        options = {} if args.electrons is None else {"electrons": args.electrons}
        results.append(swarm(mixture, float(field_Td), seed=(args.seed, first_index + k), precision=args.precision,
                             max_events=int(args.max_events), **options))
        if k == 0 and len(fields_Td) > 1:
            per_point = time.perf_counter() - t0
            _note(f"  {field_Td:g} Td took {per_point:.1f} s; the other {len(fields_Td) - 1} point(s) may take "
                  f"about {per_point * (len(fields_Td) - 1):.0f} s (higher E/N costs more)")
    _note(f"  {len(fields_Td)} point(s) in {time.perf_counter() - started:.1f} s")
    engine = "avalanche.townsend (steady-state Townsend)" if args.coefficients == "sst" else "avalanche.engine"
    return SwarmTable.from_swarm_results(results, source=f"computed with {engine}")


def _beyond(table: SwarmTable, names, pd_Pa_m: np.ndarray, gamma: float, temperature_K: float) -> str | None:
    """'above' / 'below' when breakdown fields of the p d range lie above / below the table's finite points."""
    coefficients = table.coefficient_table(*names)
    effective = coefficients.alpha_N_m2 - coefficients.eta_N_m2
    required = math.log1p(1.0 / gamma) * BOLTZMANN_J_K * temperature_K / pd_Pa_m
    if effective[0] >= required.min():
        return "below"
    if effective[-1] < required.max() and effective[-1] > effective[-2]:
        return "above"
    return None


def _coefficients(args, pd: np.ndarray, pressure: float) -> tuple[SwarmTable, str, list[SwarmTable]]:
    """The table of α/N and η/N to use, its description, and the pieces computed here."""
    from .mixture import Mixture

    if args.results:
        opened = _open(args.results)
        sst_file = opened.attrs.get("mode") == SST_MODE
        if sst_file != (args.coefficients == "sst"):
            raise ConfigError(f"--coefficients {args.coefficients} does not fit {args.results}, a "
                              f"{'steady-state Townsend' if sst_file else 'time-of-flight'} sweep: use "
                              f"{'--coefficients sst' if sst_file else 'corrected or simple'} with it, or leave "
                              "--results out to compute the coefficients")
        table = _load_table(opened, args, "breakdown")
        if args.gas and args.gas != table.gas_label:
            raise ConfigError(f"--gas {args.gas!r} differs from the gas {table.gas_label!r} of {args.results}; "
                              "leave --gas out or use the file of that gas")
        source, computed = f"{args.results} ({table.reduced_field_Td.size} points)", []
        mixture = table.build_mixture() if args.extend else None
    else:
        if not args.gas:
            raise ConfigError("breakdown: give --gas (e.g. --gas N2) to compute the coefficients, or --results with "
                              "a sweep results file")
        mixture = Mixture(args.gas, temperature_K=args.temperature or 300.0, pressure_Pa=pressure)
        fields = parse_field_grid(args.en)
        _note(f"avalanche breakdown: computing alpha_N and eta_N of {args.gas} at {fields.size} reduced fields "
              f"{fields[0]:g}–{fields[-1]:g} Td with the Monte Carlo engine (precision {args.precision:g}, at most "
              f"{args.max_events:.3g} events per point); this takes from seconds to a few minutes")
        table = _compute(mixture, fields, args, 0)
        source, computed = table.source, [table]
    names = COEFFICIENTS[args.coefficients]
    temperature = args.temperature or table.temperature_K or 300.0
    for extension in range(MAX_EXTENSIONS if mixture is not None else 0):
        side = _beyond(table, names, pd, args.gamma, temperature)
        finite = table.coefficient_table(*names).reduced_field_Td
        new = finite[-1] * 2.0 if side == "above" else finite[0] / 2.0 if side == "below" else None
        if new is None or not EXTENSION_LIMITS_Td[0] <= new <= EXTENSION_LIMITS_Td[1] or new in table.reduced_field_Td:
            break
        _note(f"avalanche breakdown: the breakdown field lies {side} the table; computing {new:g} Td")
        extra = _compute(mixture, [new], args, 1000 + extension)
        table = table.merged(extra)
        computed.append(extra)
        source += f", + {new:g} Td computed"
    undefined = table.undefined_fields_Td(*names)
    if undefined.size:
        hint = " (the diffusion correction has no real solution there; --coefficients simple uses ν/(N W))" \
            if args.coefficients == "corrected" else ""
        _note(f"avalanche breakdown: {names[0]} or {names[1]} is undefined at {', '.join(f'{x:g}' for x in undefined)}"
              f" Td; those points are left out{hint}")
    return table, source, computed


def _paschen_rows(curve) -> list[str]:
    rows = [f"  {'p d [Pa m]':>12}  {'p d [Torr cm]':>13}  {'V_breakdown [V]':>15}"]
    for pd, pd_torr, voltage in zip(curve.pd_Pa_m, curve.pd_Torr_cm, curve.breakdown_voltage_V, strict=True):
        text = f"{voltage:15.5g}" if math.isfinite(voltage) else f"{'—':>15}"
        rows.append(f"  {pd:12.5g}  {pd_torr:13.5g}  {text}")
    return rows


def _write_curve_csv(path: Path, curve, source: str) -> Path:
    from .breakdown import CAUTION

    lines = [f"# avalanche Paschen curve, {curve.gas_label}, gamma = {curve.gamma:g}, T = {curve.temperature_K:g} K",
             f"# coefficients: {source}", f"# caution: {CAUTION}",
             f"# minimum_voltage_V: {curve.minimum_voltage_V!r}", f"# minimum_pd_Pa_m: {curve.minimum_pd_Pa_m!r}",
             "pd_Pa_m,pd_Torr_cm,breakdown_voltage_V", "Pa m,Torr cm,V"]
    lines += [f"{a!r},{b!r},{c!r}" for a, b, c in zip(curve.pd_Pa_m.tolist(), curve.pd_Torr_cm.tolist(),
                                                      curve.breakdown_voltage_V.tolist(), strict=True)]
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _safe_name(text: str) -> str:
    return re.sub(r"[^A-Za-z0-9.+-]+", "_", text).strip("_") or "gas"


def _critical_text(curve, coefficients, field_1atm) -> str:
    if curve.critical_reduced_field_Td is not None:
        return (f"critical reduced field (α = η): {curve.critical_reduced_field_Td:.4g} Td — the large-p d asymptote "
                f"V = (E/N)crit N d; {field_1atm / 1e6:.3g} MV/m at 1 atm and {curve.temperature_K:g} K")
    if not np.any(coefficients.eta_N_m2 > 0.0):
        return "no attachment in the table: no limiting breakdown field (the right branch rises without bound)"
    return "α > η or α < η over the whole table: the critical field (α = η) lies outside it — extend the table"


@command("breakdown", "Paschen curve (and non-uniform gaps) from computed Townsend coefficients",
         configure=_breakdown_configure)
def _breakdown(args) -> int:
    from .breakdown import CAUTION, STREAMER_THRESHOLD, breakdown_voltage, paschen_curve
    from .plots import plot_paschen, save_figure

    formats = _formats(args.format)
    pd = parse_pd(args.pd)
    gap = parse_geometry(args.geometry) if args.geometry else None
    pressure = STANDARD_ATMOSPHERE_Pa if args.pressure is None else args.pressure
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        table, source, computed = _coefficients(args, pd, pressure)
        coefficients = table.coefficient_table(*COEFFICIENTS[args.coefficients], temperature_K=args.temperature)
        temperature = coefficients.temperature_K
        curve = paschen_curve(coefficients, args.gamma, pd)
        gap_result = None
        if gap is not None:
            gap_result = {"geometry": repr(gap), "pressure_Pa": pressure,
                          "townsend_threshold": math.log1p(1.0 / args.gamma), "streamer_threshold": STREAMER_THRESHOLD,
                          "townsend_voltage_V": breakdown_voltage(coefficients, gap, pressure, gamma=args.gamma),
                          "streamer_voltage_V": breakdown_voltage(coefficients, gap, pressure, criterion="streamer")}
    messages = _show_warnings(caught, "breakdown")
    out, name = Path(args.out), f"paschen_{_safe_name(curve.gas_label or args.gas or 'gas')}"
    files = [_write_curve_csv(out / f"{name}.csv", curve, source)]
    files += save_figure(plot_paschen(curve), out / name, formats)
    for k, piece in enumerate(computed):
        files.append(fluid_table(piece).to_csv(out / f"{name}_coefficients{k or ''}.csv"))
    critical = curve.critical_reduced_field_Td
    field_1atm = (None if critical is None else
                  critical * TOWNSEND_V_m2 * STANDARD_ATMOSPHERE_Pa / (BOLTZMANN_J_K * temperature))
    if args.json:
        print_json({"gas": curve.gas_label, "gamma": args.gamma, "temperature_K": temperature, "source": source,
                    "coefficients_used": args.coefficients, **curve.to_dict(),
                    "minimum_pd_Torr_cm": curve.minimum_pd_Torr_cm if math.isfinite(curve.minimum_pd_Torr_cm)
                    else None, "critical_reduced_field_Td": critical, "critical_field_1atm_V_m": field_1atm,
                    "coefficients": {"reduced_field_Td": coefficients.reduced_field_Td,
                                     "alpha_N_m2": coefficients.alpha_N_m2, "eta_N_m2": coefficients.eta_N_m2},
                    "gap": gap_result, "warnings": messages, "files": [str(f) for f in files], "caution": CAUTION})
        return 0
    low, high = coefficients.reduced_field_range_Td
    print(f"Paschen curve of {curve.gas_label or args.gas}: uniform gap, Townsend criterion "
          f"γ (exp((α−η) d) − 1) = 1 with γ = {args.gamma:g}, T = {temperature:g} K")
    print(f"coefficients ({args.coefficients}): {source}, {low:g}–{high:g} Td")
    print("\n".join(_paschen_rows(curve)))
    if math.isfinite(curve.minimum_voltage_V):
        print(f"minimum: {curve.minimum_voltage_V:.4g} V at p d = {curve.minimum_pd_Pa_m:.4g} Pa m "
              f"({curve.minimum_pd_Torr_cm:.4g} Torr cm)")
    else:
        print("minimum: outside the table's E/N range (extend it: --extend, or a wider --en)")
    print(_critical_text(curve, coefficients, field_1atm))
    if gap_result:
        print(f"{gap_result['geometry']} at {pressure:g} Pa: Townsend breakdown {gap_result['townsend_voltage_V']:.4g}"
              f" V (K = ln(1 + 1/γ) = {gap_result['townsend_threshold']:.3g}); streamer criterion K = "
              f"{STREAMER_THRESHOLD:g}: {gap_result['streamer_voltage_V']:.4g} V")
    print(f"Caution: {CAUTION}")
    for path in files:
        print(f"wrote {path}")
    return 0


# --- emission -----------------------------------------------------------------------------------------------------

def _emission_configure(p) -> None:
    _results_arguments(p)
    p.add_argument("--en", default=None, metavar="TD,...",
                   help="E/N [Td] (nearest computed points; default every point of the sweep)")
    p.add_argument("--out", default=".", metavar="DIR", help="folder for the spectra and the CSV (current folder)")
    p.add_argument("--json", action="store_true", help="print the estimates as JSON")
    p.add_argument("--format", default="png,pdf", help="figure formats (png,pdf)")


def _phase_rates(resolved) -> dict:
    """Per-process phase-resolved rate coefficients of a result's ``phase_resolved`` mapping."""
    nested = resolved.get("rate_coefficients")
    if nested is not None:
        return {key: _value_error(entry) for key, entry in nested.items()}
    return {name[len(RATE_PREFIX):]: _value_error(entry) for name, entry in resolved.items()
            if name.startswith(RATE_PREFIX)}


def _write_emission_csv(path: Path, estimates, source: str) -> Path:
    from .emission import APPROXIMATION_NOTE

    buffer = io.StringIO()
    buffer.write(f"# avalanche emission estimate, {source}\n# {APPROXIMATION_NOTE}\n")
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["reduced_field_Td", "species", "level", "wavelength_nm", "photon_energy_eV",
                     "emission_coefficient_m3_s", "emission_coefficient_stderr", "relative_rate", "relative_power"])
    writer.writerow(["Td", "", "", "nm", "eV", "m3/s", "m3/s", "", ""])
    for estimate in estimates:
        columns = (estimate.emission_coefficient_m3_s, estimate.emission_coefficient_stderr, estimate.relative_rate,
                   estimate.relative_power)
        for k, level in enumerate(estimate.levels):
            writer.writerow([repr(estimate.reduced_field_Td), level.species, level.label, repr(level.wavelength_nm),
                             repr(level.photon_energy_eV), *(repr(float(column[k])) for column in columns)])
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(buffer.getvalue(), encoding="utf-8")
    return path


@command("emission", "relative photon emission of the radiating levels (direct excitation) from a results file",
         configure=_emission_configure)
def _emission(args) -> int:
    from .emission import emission_estimate, phase_resolved_emission, radiating_levels
    from .plots import plot_emission_spectrum, plot_phase_resolved_emission, save_figure

    formats = _formats(args.format)
    results = _open(args.results)
    table = _load_table(results, args, "emission")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        levels = radiating_levels(table.build_mixture())
    _show_warnings(caught, "emission")
    if not levels:
        raise ConfigError(f"{args.results}: no radiating level in the cross sections of {table.gas_label!r} (no "
                          "excitation process has wavelength_nm); add wavelength_nm to the emitting levels' files")
    wanted = _fields_option(args.en, "--en")
    indices = _nearest_indices(table.reduced_field_Td, wanted) if wanted else range(table.reduced_field_Td.size)
    out, stem = Path(args.out), Path(args.results).stem
    estimates, files, phase = [], [], []
    for k in indices:
        rates = {key: (table.quantities[RATE_PREFIX + key][0][k], table.quantities[RATE_PREFIX + key][1][k])
                 for key in table.rate_keys}
        estimate = emission_estimate(levels, rates, float(table.reduced_field_Td[k]))
        estimates.append(estimate)
        labels = [level.name for level in estimate.levels]
        title = f"{table.gas_label}, E/N = {estimate.reduced_field_Td:g} Td"
        files += save_figure(plot_emission_spectrum(estimate.wavelength_nm, estimate.relative_rate, labels, title),
                             out / f"{stem}_emission_{estimate.reduced_field_Td:g}Td", formats)
        result = results.point(int(table.point_index[k])) if table.point_index is not None else None
        resolved = getattr(result, "phase_resolved", None)
        if resolved is not None and _phase_rates(resolved):
            frequency = float(results.grid["frequency_Hz"][int(table.point_index[k])])
            resolved_emission = phase_resolved_emission(levels, result.phase, _phase_rates(resolved), frequency)
            phase.append(resolved_emission)
            files += save_figure(plot_phase_resolved_emission(resolved_emission.phase_rad,
                                                              resolved_emission.relative_rate, labels, title),
                                 out / f"{stem}_emission_phase_{estimate.reduced_field_Td:g}Td", formats)
    files.insert(0, _write_emission_csv(out / f"{stem}_emission.csv", estimates, str(args.results)))
    if args.json:
        print_json({"gas": table.gas_label, "source": str(args.results),
                    "estimates": [e.to_dict() for e in estimates],
                    "phase_resolved": [{"frequency_Hz": p.frequency_Hz, "phase_rad": p.phase_rad,
                                        "levels": [lv.name for lv in p.levels], "relative_rate": p.relative_rate}
                                       for p in phase],
                    "files": [str(f) for f in files]})
        return 0
    print(f"{table.gas_label} ({args.results})")
    for estimate in estimates:
        print(estimate.format_table())
        print()
    for path in files:
        print(f"wrote {path}")
    return 0
