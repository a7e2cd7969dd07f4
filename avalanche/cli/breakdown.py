"""The ``breakdown`` and ``emission`` commands: Paschen curves, gap breakdown and photon emission.

Progress and notes go to stderr, so ``--json`` output printed to stdout can be piped.
"""

from __future__ import annotations

import csv
import io
import math
import re
import time
import warnings
from pathlib import Path

import numpy as np

from .. import quantities as Q
from ..analysis.tables import SwarmTable, did_you_mean, fluid_table
from ..constants import BOLTZMANN_J_K, STANDARD_ATMOSPHERE_Pa, TORR_Pa, TOWNSEND_V_m2
from ..errors import ConfigError
from .common import (
    SST_MODE,
    fields_option,
    figure_formats,
    load_table,
    nearest_indices,
    note,
    open_file,
    results_arguments,
    show_warnings,
    value_error,
)
from .registry import command, print_json
from .units import length_m, pressure_Pa, reduced_fields_Td

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
    """Reduced fields [Td] in the one E/N syntax (:func:`avalanche.cli.units.reduced_fields_Td`), sorted; at least
    two."""
    values = np.unique(reduced_fields_Td(text, name))
    if values.size < 2:
        raise ConfigError(f"{name} {text!r}: give at least two reduced fields, e.g. {DEFAULT_BREAKDOWN_GRID}")
    return values


GEOMETRIES = {"plane": 1, "coaxial": 2, "spheres": 2, "sphere": 1}
"""``--geometry`` kinds and their number of lengths: plane:GAP, coaxial:INNER,OUTER (radii), spheres:INNER,OUTER
(concentric spheres), sphere:RADIUS (isolated sphere, grounded electrode at infinity)."""


def parse_geometry(spec: str):
    """The gap of :mod:`avalanche.analysis.geometry` described by ``--geometry`` (lengths in m unless suffixed)."""
    from ..analysis.geometry import CoaxialGap, ConcentricSpheres, IsolatedSphere, PlaneGap

    kind, _, lengths = spec.partition(":")
    kind = kind.strip().lower()
    if kind not in GEOMETRIES:
        raise ConfigError(f"--geometry {spec!r}: unknown kind {kind!r}{did_you_mean(kind, GEOMETRIES)}; use "
                          "plane:GAP, coaxial:INNER,OUTER, spheres:INNER,OUTER or sphere:RADIUS")
    values = [length_m(item, f"--geometry {spec!r}:") for item in lengths.split(",") if item.strip()]
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
    results_arguments(p, positional=False)
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
    p.add_argument("--pressure", type=pressure_Pa, default=None, metavar="P",
                   help="gas pressure [Pa] of computed points (three-body processes) and of --geometry "
                        "(default 1 atm)")
    p.add_argument("--geometry", default=None, metavar="KIND:LENGTHS",
                   help="also a non-uniform gap at --pressure: plane:GAP, coaxial:INNER,OUTER, spheres:INNER,OUTER "
                        "or sphere:RADIUS; lengths in m, or with mm/cm suffix (e.g. coaxial:1mm,20mm)")
    p.add_argument("--json", action="store_true", help="print the result as JSON (minimum_voltage_V, "
                                                       "minimum_pd_Pa_m, the curve arrays, caution)")
    p.add_argument("--out-dir", "--out", dest="out", default=".", metavar="DIR",
                   help="folder for the plot and CSV tables (current folder; --out is the older spelling)")
    p.add_argument("--format", default="png,pdf", help="figure formats (png,pdf)")


def _compute(mixture, fields_Td, args, first_index: int) -> SwarmTable:
    """Engine runs at ``fields_Td`` (progress and time estimate on stderr)."""
    from ..engine.time_of_flight import swarm

    if args.coefficients == "sst":
        from ..engine.townsend import townsend as swarm
    results, started = [], time.perf_counter()
    for k, field_Td in enumerate(fields_Td):
        t0 = time.perf_counter()
        options = {} if args.electrons is None else {"electrons": args.electrons}
        results.append(swarm(mixture, float(field_Td), seed=(args.seed, first_index + k), precision=args.precision,
                             max_events=int(args.max_events), **options))
        if k == 0 and len(fields_Td) > 1:
            per_point = time.perf_counter() - t0
            note(f"  {field_Td:g} Td took {per_point:.1f} s; the other {len(fields_Td) - 1} point(s) may take "
                  f"about {per_point * (len(fields_Td) - 1):.0f} s (higher E/N costs more)")
    note(f"  {len(fields_Td)} point(s) in {time.perf_counter() - started:.1f} s")
    engine = "avalanche.townsend (steady-state Townsend)" if args.coefficients == "sst" else "avalanche.swarm"
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
    from ..gas.mixture import Mixture

    if args.results:
        opened = open_file(args.results)
        sst_file = opened.attrs.get("mode") == SST_MODE
        if sst_file != (args.coefficients == "sst"):
            raise ConfigError(f"--coefficients {args.coefficients} does not fit {args.results}, a "
                              f"{'steady-state Townsend' if sst_file else 'time-of-flight'} sweep: use "
                              f"{'--coefficients sst' if sst_file else 'corrected or simple'} with it, or leave "
                              "--results out to compute the coefficients")
        table = load_table(opened, args, "breakdown")
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
        note(f"avalanche breakdown: computing alpha_N and eta_N of {args.gas} at {fields.size} reduced fields "
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
        note(f"avalanche breakdown: the breakdown field lies {side} the table; computing {new:g} Td")
        extra = _compute(mixture, [new], args, 1000 + extension)
        table = table.merged(extra)
        computed.append(extra)
        source += f", + {new:g} Td computed"
    undefined = table.undefined_fields_Td(*names)
    if undefined.size:
        hint = " (the diffusion correction has no real solution there; --coefficients simple uses ν/(N W))" \
            if args.coefficients == "corrected" else ""
        note(f"avalanche breakdown: {names[0]} or {names[1]} is undefined at {', '.join(f'{x:g}' for x in undefined)}"
              f" Td; those points are left out{hint}")
    return table, source, computed


def _paschen_rows(curve) -> list[str]:
    rows = [f"  {'p d [Pa m]':>12}  {'p d [Torr cm]':>13}  {'V_breakdown [V]':>15}"]
    for pd, pd_torr, voltage in zip(curve.pd_Pa_m, curve.pd_Torr_cm, curve.breakdown_voltage_V, strict=True):
        text = f"{voltage:15.5g}" if math.isfinite(voltage) else f"{'—':>15}"
        rows.append(f"  {pd:12.5g}  {pd_torr:13.5g}  {text}")
    return rows


def _write_curve_csv(path: Path, curve, source: str) -> Path:
    from ..analysis.breakdown import CAUTION

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
    from ..analysis.breakdown import CAUTION, STREAMER_THRESHOLD, breakdown_voltage, paschen_curve
    from ..plots import plot_paschen, save_figure

    formats = figure_formats(args.format)
    pd = parse_pd(args.pd)
    gap = parse_geometry(args.geometry) if args.geometry else None
    pressure = STANDARD_ATMOSPHERE_Pa if args.pressure is None else args.pressure
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        table, source, computed = _coefficients(args, pd, pressure)
        used = args.coefficients
        coefficients = table.coefficient_table(*COEFFICIENTS[used], temperature_K=args.temperature)
        curve = paschen_curve(coefficients, args.gamma, pd)
        if (used == "corrected" and not math.isfinite(curve.minimum_voltage_V)
                and table.undefined_fields_Td(*COEFFICIENTS[used]).size):
            # Above these fields 4 D_L ν > W²: the first-order (hydrodynamic) relation between the time-of-flight and
            # the steady-state coefficients has no solution, and just below it the correction is large and unsure
            # (its neglected higher-order terms grow with D_L α/W; Robson R E 1991, Aust. J. Phys. 44 685, from
            # memory). When that hides the Paschen minimum, the curve uses ν/(N W), which is defined everywhere.
            simple = table.coefficient_table(*COEFFICIENTS["simple"], temperature_K=args.temperature)
            fallback = paschen_curve(simple, args.gamma, pd)
            if math.isfinite(fallback.minimum_voltage_V):
                note("avalanche breakdown: the diffusion-corrected alpha_N has no real solution at the top of the "
                     "table, so the Paschen minimum cannot be placed with it; the curve uses alpha_N_simple = "
                     "ν/(N W) (--coefficients simple; --coefficients sst computes the steady-state Townsend values)")
                used, coefficients, curve = "simple", simple, fallback
        temperature = coefficients.temperature_K
        gap_result = None
        if gap is not None:
            gap_result = {"geometry": repr(gap), "pressure_Pa": pressure,
                          "townsend_threshold": math.log1p(1.0 / args.gamma), "streamer_threshold": STREAMER_THRESHOLD,
                          "townsend_voltage_V": breakdown_voltage(coefficients, gap, pressure, gamma=args.gamma),
                          "streamer_voltage_V": breakdown_voltage(coefficients, gap, pressure, criterion="streamer")}
    messages = show_warnings(caught, "breakdown")
    out, name = Path(args.out), f"paschen_{_safe_name(curve.gas_label or args.gas or 'gas')}"
    files = [_write_curve_csv(out / f"{name}.csv", curve, source)]
    files += save_figure(plot_paschen(curve), out / name, formats)
    if computed:  # every point computed here (on-demand grid and extensions) in one coefficient file
        merged = computed[0]
        for piece in computed[1:]:
            merged = merged.merged(piece)
        files.append(fluid_table(merged).to_csv(out / f"{name}_coefficients.csv"))
    critical = curve.critical_reduced_field_Td
    field_1atm = (None if critical is None else
                  critical * TOWNSEND_V_m2 * STANDARD_ATMOSPHERE_Pa / (BOLTZMANN_J_K * temperature))
    if args.json:
        print_json({"gas": curve.gas_label, "gamma": args.gamma, "temperature_K": temperature, "source": source,
                    "coefficients_used": used, **curve.to_dict(),
                    "minimum_pd_Torr_cm": curve.minimum_pd_Torr_cm if math.isfinite(curve.minimum_pd_Torr_cm)
                    else None, "critical_reduced_field_Td": critical, "critical_field_1atm_V_m": field_1atm,
                    "coefficients": {"reduced_field_Td": coefficients.reduced_field_Td,
                                     "alpha_N": coefficients.alpha_N_m2, "eta_N": coefficients.eta_N_m2,
                                     "units": {n: Q.unit(n) for n in ("reduced_field_Td", "alpha_N", "eta_N")}},
                    "gap": gap_result, "warnings": messages, "files": [str(f) for f in files], "caution": CAUTION})
        return 0
    low, high = coefficients.reduced_field_range_Td
    print(f"Paschen curve of {curve.gas_label or args.gas}: uniform gap, Townsend criterion "
          f"γ (exp((α−η) d) − 1) = 1 with γ = {args.gamma:g}, T = {temperature:g} K")
    print(f"coefficients ({used}): {source}, {low:g}–{high:g} Td")
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
    results_arguments(p)
    p.add_argument("--en", default=None, metavar="TD,...",
                   help="E/N [Td] (nearest computed points; default every point of the sweep)")
    p.add_argument("--out-dir", "--out", dest="out", default=".", metavar="DIR",
                   help="folder for the spectra and the CSV (current folder; --out is the older spelling)")
    p.add_argument("--json", action="store_true", help="print the estimates as JSON")
    p.add_argument("--format", default="png,pdf", help="figure formats (png,pdf)")


def _phase_rates(resolved) -> dict:
    """Per-process phase-resolved rate coefficients of a result's ``phase_resolved`` mapping."""
    nested = resolved.get("rate_coefficients")
    if nested is not None:
        return {key: value_error(entry) for key, entry in nested.items()}
    # the engine keys each process's phase-resolved rate by its label ("rate_coefficient:<label>" where the label
    # is also the name of a quantity); the quantities of avalanche.quantities have a unit, processes do not
    return {name.removeprefix("rate_coefficient:"): value_error(entry) for name, entry in resolved.items()
            if name.startswith("rate_coefficient:") or not Q.unit(name)}


def _write_emission_csv(path: Path, estimates, source: str) -> Path:
    from ..analysis.emission import APPROXIMATION_NOTE

    buffer = io.StringIO()
    buffer.write(f"# avalanche emission estimate, {source}\n# {APPROXIMATION_NOTE}\n")
    writer = csv.writer(buffer, lineterminator="\n")
    writer.writerow(["reduced_field_Td[Td]", "species", "level", "wavelength_nm[nm]", "photon_energy_eV[eV]",
                     "emission_coefficient[m^3/s]", "emission_coefficient_stderr[m^3/s]", "relative_rate[1]",
                     "relative_power[1]"])
    for estimate in estimates:
        columns = (estimate.emission_coefficient_m3_s, estimate.emission_coefficient_stderr, estimate.relative_rate,
                   estimate.relative_power)
        for k, level in enumerate(estimate.levels):
            writer.writerow([f"{estimate.reduced_field_Td:.7g}", level.species, level.label,
                             f"{level.wavelength_nm:.7g}", f"{level.photon_energy_eV:.7g}",
                             *(f"{float(column[k]):.7g}" for column in columns)])
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text(buffer.getvalue(), encoding="utf-8")
    return path


@command("emission", "relative photon emission of the radiating levels (direct excitation) from a results file",
         configure=_emission_configure)
def _emission(args) -> int:
    from ..analysis.emission import emission_estimate, phase_resolved_emission, radiating_levels
    from ..plots import plot_emission_spectrum, plot_phase_resolved_emission, save_figure

    formats = figure_formats(args.format)
    results = open_file(args.results)
    table = load_table(results, args, "emission")
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        levels = radiating_levels(table.build_mixture())
    show_warnings(caught, "emission")
    if not levels:
        raise ConfigError(f"{args.results}: no radiating level in the cross sections of {table.gas_label!r} (no "
                          "excitation process has wavelength_nm); add wavelength_nm to the emitting levels' files")
    wanted = fields_option(args.en, "--en")
    indices = nearest_indices(table.reduced_field_Td, wanted) if wanted else range(table.reduced_field_Td.size)
    out, stem = Path(args.out), Path(args.results).stem
    estimates, files, phase = [], [], []
    for k in indices:
        rates = {key: (table.rate(key)[0][k], table.rate(key)[1][k]) for key in table.rate_keys}
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
