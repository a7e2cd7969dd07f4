"""The ``plot`` and ``table`` commands: figures and fluid-model tables from a results file.

Progress and notes go to stderr, so tables printed to stdout can be piped.
"""

from __future__ import annotations

import math
import sys
import warnings
from pathlib import Path

import numpy as np

from .. import quantities as Q
from ..analysis.magnetic import MagneticDriftTable
from ..analysis.tables import SwarmTable, fluid_table
from ..errors import ConfigError
from .common import (
    SST_MODE,
    fields_option,
    figure_formats,
    load_table,
    mixture_index,
    nearest_indices,
    note,
    open_file,
    results_arguments,
    show_warnings,
    split_list,
    spread,
    value_error,
)
from .registry import command


def _quantities(text: str | None, command_name: str) -> list[str] | None:
    """The ``--quantity`` list, names of version 0.1 replaced by the current ones (with a deprecation note)."""
    names = split_list(text)
    if names is None:
        return None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        names = [Q.current_name(name) for name in names]
    show_warnings(caught, command_name)
    return names


# --- plot ---------------------------------------------------------------------------------------------------------

def _plot_configure(p) -> None:
    results_arguments(p)
    p.add_argument("--out-dir", "--out", dest="out", default=".", metavar="DIR",
                   help="folder for the figures (default: current folder; --out is the older spelling)")
    p.add_argument("--quantity", default=None, metavar="LIST",
                   help="comma list of quantities or panels, e.g. alpha_N,drift_velocity_bulk; 'drift_velocity', "
                        "'N_D_L', 'N_D_T' draw flux and bulk together, 'rate_coefficients' "
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
    p.add_argument("--phase-en", default=None, metavar="TD",
                   help="E/N amplitude [Td] of the AC phase panels (nearest computed point; default: the geometric "
                        "middle of the sweep's fields)")
    p.add_argument("--format", default="png,pdf", help="figure formats, comma list of png, pdf, svg (png,pdf)")
    p.add_argument("--force", action="store_true", help="overwrite figures that already exist in --out")


def phase_curves(results, mixture_index: int, field_Td: float) -> list:
    """One :class:`~avalanche.plots.PhaseCurve` per AC frequency (> 0) of a sweep, at the field nearest
    ``field_Td``.

    A point's result contributes when it has ``phase`` (bin centres [rad]) and ``phase_resolved`` (quantity name →
    values and errors per bin, as pairs or objects with ``.value``/``.stderr``); DC results have neither, so the
    AC panels appear only when the data contain them.
    """
    from ..plots import PhaseCurve
    from ..store.sweep_file import STATUS_OK

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
        quantities = {name: value_error(entry) for name, entry in resolved.items() if name != "rate_coefficients"}
        curves.append(PhaseCurve(frequency, np.asarray(result.phase, dtype=float), quantities,
                                 float(grid["reduced_field_Td"][i])))
    return curves


def sst_profile(result):
    """The :class:`~avalanche.plots.SSTProfile` of a steady-state Townsend result: the flux and its mean
    energy on
    the tally planes, the fitted growth exp((α − η) z) and the relaxation length."""
    from ..plots import SSTProfile

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


def _handbook_note(figure, table: SwarmTable, handbook: str | None) -> None:
    from ..analysis.coefficients import HANDBOOK_TOWNSEND, handbook_validity_range_Td
    from ..plots import handbook_gas_name

    if handbook is None or any(line.get_gid() == "handbook_alpha_N" for ax in figure.axes for line in ax.lines):
        return
    gas = handbook_gas_name(table.gas_label if handbook == "auto" else handbook)
    if gas is None:
        note(f"avalanche plot: no handbook Townsend formula for {table.gas_label!r} (the table has "
              f"{', '.join(HANDBOOK_TOWNSEND)}; choose one with --handbook)")
    elif any(line.get_gid() == "alpha_N" for ax in figure.axes for line in ax.lines):
        low, high = handbook_validity_range_Td(gas)
        note(f"avalanche plot: the Townsend formula of {gas} holds for {low:.4g}–{high:.4g} Td, outside the data's "
              f"E/N range; not drawn")


@command("plot", "plot swarm parameters against E/N (and EEDFs, AC phase panels) from a results file",
         configure=_plot_configure)
def _plot(args) -> int:
    from ..plots import (
        plot_eedf,
        plot_magnetic_drift,
        plot_phase_resolved,
        plot_sst_profiles,
        plot_swarm_parameters,
        read_reference,
        save_figure,
    )
    from ..store.files import check_output_files, check_output_folder

    formats = figure_formats(args.format)
    out, stem = check_output_folder(args.out), Path(args.results).stem
    check_output_files((out / f"{stem}_{part}.{fmt}" for part in ("swarm", "eedf", "sst_profiles", "phase")
                        for fmt in formats), force=args.force)
    results = open_file(args.results)
    table = load_table(results, args, "plot", default_lowest_frequency=True)
    reference = read_reference(args.reference) if args.reference else None
    handbook = None if args.handbook.lower() == "none" else args.handbook
    written = []
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        figure = plot_swarm_parameters(table, _quantities(args.quantity, "plot"), reference, handbook)
        written += save_figure(figure, out / f"{stem}_swarm", formats)
        _handbook_note(figure, table, handbook)
        if (args.eedf or "").lower() != "none":
            wanted = fields_option(args.eedf, "--eedf")
            indices = (nearest_indices(table.reduced_field_Td, wanted) if wanted
                       else spread(4, table.reduced_field_Td.size))
            distributions = {}
            for k in indices:
                eedf = getattr(results.point(int(table.point_index[k])), "eedf", None)
                if eedf is not None:
                    distributions[float(table.reduced_field_Td[k])] = (eedf.energy_edges_eV, eedf.value, eedf.stderr)
            if distributions:
                written += save_figure(plot_eedf(distributions, title=table.gas_label), out / f"{stem}_eedf", formats)
        if results.attrs.get("mode") == SST_MODE:
            profiles = [sst_profile(results.point(int(table.point_index[k])))
                        for k in spread(4, table.reduced_field_Td.size)]
            written += save_figure(plot_sst_profiles(profiles), out / f"{stem}_sst_profiles", formats)
        wanted = fields_option(args.phase_en, "--phase-en")
        phase_field = wanted[0] if wanted else float(np.exp(np.mean(np.log(table.reduced_field_Td))))
        curves = phase_curves(results, mixture_index(results, args.mixture), phase_field)
        if curves:
            written += save_figure(plot_phase_resolved(curves), out / f"{stem}_phase", formats)
        if np.any(results.grid["magnetic_field_T"] > 0):  # W components and Lorentz angle for every B
            drift = MagneticDriftTable.from_results(results, args.mixture, args.frequency, args.angle)
            written += save_figure(plot_magnetic_drift(drift), out / f"{stem}_magnetic", formats)
    show_warnings(caught, "plot")
    for path in written:
        print(f"wrote {path}")
    return 0


# --- table --------------------------------------------------------------------------------------------------------

def _table_configure(p) -> None:
    results_arguments(p)
    p.add_argument("--out", default=None, metavar="FILE",
                   help="output file (default: print to stdout); .txt or .dat selects the text format")
    p.add_argument("--against", default="reduced-field", choices=["reduced-field", "mean-energy"],
                   help="coordinate of the first column, sorted and strictly increasing (default reduced-field)")
    p.add_argument("--table-format", "--format", dest="table_format", default=None, choices=["csv", "text"],
                   help="csv (# comment lines with metadata and units, one line of column names, comma-separated "
                        "values: pandas.read_csv(path, comment='#')) or text (whitespace-separated, header as # "
                        "comments, for numpy.loadtxt); default from the --out suffix, else csv (--format is the "
                        "older spelling)")
    p.add_argument("--digits", type=int, default=7, metavar="N",
                   help="significant digits of the values (default 7); 0 writes the shortest exact round-trip form")
    p.add_argument("--quantity", default=None, metavar="LIST", help="comma list of quantities (default: all)")
    p.add_argument("--magnetic", action="store_true",
                   help="instead: the drift velocity components (E, ExB, third) and Lorentz angle against E/N for "
                        "every magnetic field of the sweep (CSV)")
    p.add_argument("--force", action="store_true", help="overwrite the --out file if it exists")


@command("table", "write a fluid-model table of coefficients with errors and units (CSV or text)",
         configure=_table_configure)
def _table(args) -> int:
    from ..store.files import check_output_file, write_atomically

    if args.out is not None:
        check_output_file(args.out, force=args.force)
    results = open_file(args.results)
    if args.magnetic:
        text = MagneticDriftTable.from_results(results, args.mixture, args.frequency, args.angle).to_csv()
        if args.out is None:
            sys.stdout.write(text)
        else:
            Path(args.out).parent.mkdir(parents=True, exist_ok=True)
            write_atomically(args.out, lambda temporary: temporary.write_text(text, encoding="utf-8"))
            print(f"wrote {args.out} (drift velocity components and Lorentz angle, csv)")
        return 0
    table = load_table(results, args, "table")
    fluid = fluid_table(table, against=args.against, quantities=_quantities(args.quantity, "table"))
    fmt = args.table_format or ("text" if args.out and Path(args.out).suffix.lower() in (".txt", ".dat") else "csv")
    if args.digits < 0 or args.digits > 17:
        raise ConfigError(f"--digits {args.digits}: give 1 to 17 significant digits, or 0 for the exact form")
    digits = args.digits or None
    text = fluid.format_text(digits) if fmt == "text" else fluid.format_csv(digits)
    if args.out is None:
        sys.stdout.write(text)
        return 0
    path = write_atomically(args.out, lambda temporary: temporary.write_text(text, encoding="utf-8"))
    print(f"wrote {path} ({fmt}, {table.reduced_field_Td.size} rows, {len(fluid.names)} columns, against "
          f"{fluid.coordinate})")
    return 0
