"""Arguments and helpers shared by the commands that read results files (plot, table, breakdown, emission)."""

from __future__ import annotations

import math
import sys

import numpy as np

from ..analysis.tables import SwarmTable, did_you_mean
from ..errors import ConfigError

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
    table = SwarmTable.from_results(results, mixture=args.mixture, frequency_Hz=frequency)
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
    items = split_list(text)
    if items is None:
        return None
    try:
        values = [float(item) for item in items]
    except ValueError:
        raise ConfigError(f"{name} {text!r}: give reduced fields in Td separated by commas, e.g. 10,100") from None
    if any(not math.isfinite(v) or v <= 0 for v in values):
        raise ConfigError(f"{name} {text!r}: reduced fields must be positive")
    return values


def value_error(entry):
    if hasattr(entry, "value") and hasattr(entry, "stderr"):
        return np.asarray(entry.value, dtype=float), np.asarray(entry.stderr, dtype=float)
    values, errors = entry
    return np.asarray(values, dtype=float), np.asarray(errors, dtype=float)
