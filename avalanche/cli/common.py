"""Arguments and helpers shared by the commands that read results files (plot, table, breakdown, emission)."""

from __future__ import annotations

import sys

import numpy as np

from ..analysis.tables import SwarmTable, did_you_mean
from ..errors import ConfigError
from .units import reduced_fields_Td

SST_MODE = "steady-state-townsend"


def note(message: str) -> None:
    print(message, file=sys.stderr)


def split_list(text: str | None) -> list[str] | None:
    return None if text is None else [item.strip() for item in text.split(",") if item.strip()]


def figure_formats(text: str) -> list[str]:
    formats = split_list(text) or []
    for fmt in formats:
        if fmt not in ("png", "pdf", "svg"):
            raise ConfigError(f"--format {fmt!r}{did_you_mean(fmt, ('png', 'pdf', 'svg'))}; give a comma list of "
                              "png, pdf, svg")
    return formats


def show_warnings(caught, command_name: str) -> list[str]:
    messages = list(dict.fromkeys(" ".join(str(w.message).split()) for w in caught))
    for message in messages:
        note(f"avalanche {command_name}: warning: {message}")
    return messages


# --- shared: results-file arguments -------------------------------------------------------------------------------

def results_arguments(p, positional: bool = True) -> None:
    if positional:
        p.add_argument("results", metavar="RESULTS.h5", help="sweep results file (from avalanche sweep)")
    p.add_argument("--mixture", default=None, help="mixture label or index, when the sweep has several")
    p.add_argument("--frequency", type=float, default=None, metavar="HZ",
                   help="drive frequency [Hz] of the points to use, when the sweep has several (0 = DC)")
    p.add_argument("--magnetic-field", type=magnetic_field_value, default=None, metavar="B",
                   help='magnetic field of the points to use ("0.5T" or "300Hx"), when the sweep has several')
    p.add_argument("--angle", type=float, default=None, metavar="DEG",
                   help="angle between E and B [deg] of the points to use, when the sweep has several")


def magnetic_field_value(text: str) -> tuple[str, float]:
    """Parse ``--magnetic-field``: ``("T", value)`` for "0.5" or "0.5T", ``("Hx", value)`` for "300Hx".

    Raises
    ------
    argparse.ArgumentTypeError
        Not a number with an optional unit T or Hx.
    """
    import argparse

    raw = text.strip()
    unit = "Hx" if raw.lower().endswith("hx") else "T"
    number = raw[:-2] if unit == "Hx" else (raw[:-1] if raw.lower().endswith("t") else raw)
    try:
        return unit, float(number)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--magnetic-field {text!r}: give a number in tesla (0.5 or 0.5T) or a "
                                         "reduced field in Hx (300Hx)") from None


def magnetic_selection(args) -> dict:
    """The magnetic keywords (``magnetic_field_T`` or ``reduced_magnetic_field_Hx``, ``field_angle_deg``) given by
    ``--magnetic-field`` and ``--angle``, for :func:`avalanche.swarm` and
    :meth:`~avalanche.analysis.tables.SwarmTable.from_results`."""
    out = {}
    if getattr(args, "magnetic_field", None) is not None:
        unit, value = args.magnetic_field
        out["reduced_magnetic_field_Hx" if unit == "Hx" else "magnetic_field_T"] = value
    if getattr(args, "angle", None) is not None:
        out["field_angle_deg"] = args.angle
    return out


def open_file(path):
    from ..store.sweep_file import open_results

    return open_results(path)


def load_table(results, args, command_name: str, default_lowest_frequency: bool = False) -> SwarmTable:
    frequency = args.frequency
    if frequency is None and default_lowest_frequency:
        index = mixture_index(results, args.mixture)
        frequencies = sorted(set(results.grid["frequency_Hz"][results.grid["mixture_index"] == index].tolist()))
        if len(frequencies) > 1:
            frequency = frequencies[0]
            note(f"avalanche {command_name}: the sweep has frequencies {frequencies} Hz; using {frequency:g} Hz "
                  "(choose with --frequency)")
    selection = magnetic_selection(args)
    chosen = {"magnetic_field_T", "reduced_magnetic_field_Hx"} & set(selection)
    if default_lowest_frequency and not chosen:
        index = mixture_index(results, args.mixture)
        fields = sorted(set(results.grid["magnetic_field_T"][results.grid["mixture_index"] == index].tolist()))
        if len(fields) > 1:
            selection["magnetic_field_T"] = fields[0]
            note(f"avalanche {command_name}: the sweep has magnetic fields {fields} T; the swarm panels use "
                 f"{fields[0]:g} T (choose with --magnetic-field)")
    table = SwarmTable.from_results(results, mixture=args.mixture, frequency_Hz=frequency, **selection)
    if table.point_index is not None and np.any(results.grid["frequency_Hz"][table.point_index] > 0):
        from ..analysis.phase import with_drift_harmonic

        table = with_drift_harmonic(table, results)  # AC: the drift's amplitude and lag, not its ~0 cycle average
    for message in table.notes:
        note(f"avalanche {command_name}: {results.path}: {message}")
    return table


def mixture_index(results, mixture) -> int:
    from ..analysis.tables import _choose_mixture

    return _choose_mixture(results.mixtures, mixture, str(results.path))


def nearest_indices(fields_Td: np.ndarray, wanted: list[float]) -> list[int]:
    """Index of the field closest in ln E/N to each wanted value (duplicates removed, order kept)."""
    chosen = [int(np.argmin(np.abs(np.log(fields_Td / w)))) for w in wanted]
    return list(dict.fromkeys(chosen))


def spread(count: int, points: int) -> list[int]:
    return sorted(set(np.round(np.linspace(0, points - 1, min(count, points))).astype(int).tolist()))


def fields_option(text: str | None, name: str) -> list[float] | None:
    """Reduced fields [Td] of an option in the one E/N syntax (:func:`avalanche.cli.units.reduced_fields_Td`), or
    None when the option is not given."""
    return None if text is None else reduced_fields_Td(text, name).tolist()


def value_error(entry):
    if hasattr(entry, "value") and hasattr(entry, "stderr"):
        return np.asarray(entry.value, dtype=float), np.asarray(entry.stderr, dtype=float)
    values, errors = entry
    return np.asarray(values, dtype=float), np.asarray(errors, dtype=float)
