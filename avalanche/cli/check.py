"""Every problem of a cross-section file or a run file in one pass, for ``avalanche check``.

The loaders stop at the first problem. To report them all, the file is cut into parts that the loaders can judge
on their own — for a cross-section set: the top level, ``[species]``, ``[provenance]``, each ``[[process]]``, then
the set as a whole; for a run file: the top level, each table (``[sweep]``, ``[gas]``, ``[grid]``, ``[engine]``,
``[cluster]``) added in turn to a small valid run file, then the file as a whole. Each part gives at most its first
problem, in the loader's own words (file, field, value, fix); repeats are dropped.
"""

from __future__ import annotations

import tomllib
from pathlib import Path

from ..errors import AvalancheError, read_user_text

PROBE_SPECIES = {"name": "probe", "mass_amu": 1.0}
"""A valid ``[species]`` put beside a part of a cross-section file judged on its own."""
PROBE_PROCESS = {"kind": "elastic", "label": "check probe elastic", "threshold_eV": 0.0,
                 "energy_eV": [0.0, 100.0], "cross_section": [1e-20, 1e-20]}
"""A valid elastic ``[[process]]`` put beside a part of a cross-section file judged on its own."""
PROBE_RUN = {"gas": {"mixture": "Ar"}, "grid": {"reduced_field_Td": [100.0]}}
"""The small valid run file to which the tables of a checked run file are added one at a time."""
RUN_TABLES = ("sweep", "gas", "grid", "engine", "cluster")
SET_TABLES = ("species", "provenance", "process")


def file_kind(data: dict) -> str:
    """``"cross-section set"`` when the TOML has ``[species]`` or ``[[process]]``, ``"run file"`` when it has one of
    the run-file tables, else ``"unknown"``."""
    if "species" in data or "process" in data:
        return "cross-section set"
    if any(name in data for name in RUN_TABLES):
        return "run file"
    return "unknown"


def _first_problem(function, *args) -> str | None:
    try:
        function(*args)
    except AvalancheError as exc:
        return str(exc)
    return None


def cross_section_problems(data: dict, where: str, base: Path) -> list[str]:
    """Every problem of a cross-section set read as TOML (``where`` names the file in the messages)."""
    from ..gas.crosssections import _parse_process, parse_set

    species = data.get("species", PROBE_SPECIES)
    parts = [
        {key: value for key, value in data.items() if key not in SET_TABLES} | {"species": PROBE_SPECIES},
        {"species": species},
        {"species": PROBE_SPECIES, "provenance": data.get("provenance", {})},
    ]
    found = [_first_problem(parse_set, part | {"process": [PROBE_PROCESS]}, where, base) for part in parts]
    processes = data.get("process", [])
    if isinstance(processes, list):
        found += [_first_problem(_parse_process, raw, i, base, where) for i, raw in enumerate(processes)]
    found.append(_first_problem(parse_set, data, where, base))
    return list(dict.fromkeys(problem for problem in found if problem))


def run_file_problems(data: dict, text: str, source: str, base: Path) -> list[str]:
    """Every problem of a run file read as TOML (``text`` is its content, ``source`` names it in messages)."""
    from ..sweep.runfile import runfile_from_data

    found = []
    top = {key: value for key, value in data.items() if key not in RUN_TABLES}
    accepted = dict(PROBE_RUN)
    found.append(_first_problem(runfile_from_data, top | accepted, text, source, base))
    for name in RUN_TABLES:
        if name not in data:
            continue
        candidate = accepted | {name: data[name]}
        problem = _first_problem(runfile_from_data, candidate, text, source, base)
        found.append(problem)
        if problem is None:
            accepted = candidate
    found.append(_first_problem(runfile_from_data, data, text, source, base))
    return list(dict.fromkeys(problem for problem in found if problem))


def file_problems(path: str | Path) -> tuple[str, list[str]]:
    """The kind of the file at ``path`` and every problem found in it (empty when it is valid).

    Returns
    -------
    tuple
        (``"cross-section set"``, ``"run file"`` or ``"unknown"``; the messages, each naming the file, the field,
        the value and the fix).
    """
    path = Path(path)
    try:
        text = read_user_text(path, "file to check")
    except AvalancheError as exc:
        return "unknown", [str(exc)]
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        return "unknown", [f"{path}: malformed TOML: {exc}; fix the line it names"]
    kind = file_kind(data)
    if kind == "cross-section set":
        return kind, cross_section_problems(data, str(path), path.parent)
    if kind == "run file":
        return kind, run_file_problems(data, text, str(path), path.parent)
    return kind, [f"{path}: neither a cross-section set ([species] and [[process]] tables) nor a run file ([gas] "
                  "and [grid] tables); see the README's sections on both formats"]
