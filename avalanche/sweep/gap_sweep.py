"""Gap sweeps: a run file with ``[sweep] mode = "gap"`` sweeps :func:`avalanche.gap` over voltage, gas pressure,
wire radius and drive frequency, on the same local worker pool or Dask cluster as the swarm sweeps
(:func:`avalanche.sweep.execution.run_sweep`), into one resumable HDF5 results file
(:class:`avalanche.store.gap.GapSweepWriter`).

Run file (validated completely before anything runs; the format is in the README, "Gap sweeps")::

    [sweep]        name, description, mode = "gap", seed, output
    [gas]          mixture or mixtures, temperature_K, pressure_Pa or number_density_m3
    [electrodes]   geometry = "plates" | "coaxial" | "spheres" | "point-plane" | "map" and its dimensions
                   (gap_m; wire_radius_m, tube_radius_m; inner_radius_m, outer_radius_m; tip_radius_m, gap_m;
                   map = "file.npz")
    [grid]         voltage_V (required), pressure_Pa, wire_radius_m (coaxial), frequencies_Hz: lists or ranges
    [avalanche]    primaries and any keyword option of avalanche.gap (population_cap, start_position_m, ...)
    [cluster]      as for swarm sweeps

Points run mixtures outermost, then pressures, wire radii, frequencies and voltages. Each point's seed comes from
the master seed and its coordinates (:func:`gap_point_seed`), so a point gives the same result as a direct
``avalanche.gap(..., seed=point.seed)`` call, whatever the workers or their order.
"""

from __future__ import annotations

import hashlib
import itertools
import json
import socket
import tomllib
import warnings
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path

import numpy as np

from ..errors import AvalancheError, ConfigError
from ..gas.crosssections import _did_you_mean
from ..gas.spec import MixtureSpec
from .runfile import (
    RUNFILE_FORMAT_VERSION,
    RunFile,
    _Checker,
    _cluster,
    _float_word,
    _mixtures,
    _output_path,
    parse_runfile,
    section_tables,
)

GAP_MODE = "gap"
GEOMETRY_KEYS = {"plates": ("gap_m",), "coaxial": ("wire_radius_m", "tube_radius_m"),
                 "spheres": ("inner_radius_m", "outer_radius_m"), "point-plane": ("tip_radius_m", "gap_m"),
                 "map": ("map",)}
"""Geometry name → the [electrodes] keys it needs."""
GRID_KEYS = ("voltage_V", "pressure_Pa", "wire_radius_m", "frequencies_Hz")
_SECTIONS = {"format_version": None, "sweep": {"name", "description", "mode", "seed", "output"},
             "gas": {"mixture", "mixtures", "balance", "fractions", "temperature_K", "pressure_Pa",
                     "number_density_m3", "parameters", "penning"},
             "electrodes": {"geometry"} | {k for keys in GEOMETRY_KEYS.values() for k in keys},
             "grid": set(GRID_KEYS), "avalanche": None, "cluster": None}
_RESERVED = {"geometry", "mixture", "voltage_V", "seed", "frequency_Hz"}


def is_gap_runfile(data: dict) -> bool:
    """Whether the parsed TOML ``data`` of a run file asks for the gap mode (``[sweep] mode = "gap"``)."""
    sweep = data.get("sweep")
    return isinstance(sweep, dict) and sweep.get("mode") == GAP_MODE


@dataclass(frozen=True)
class GapPoint:
    """One point of a gap sweep.

    Attributes
    ----------
    index : int
        Position in the sweep.
    mixture_index : int
        Index into :attr:`GapRunFile.mixtures`.
    voltage_V : float
        Voltage of the driven electrode [V] (the peak for an AC drive).
    pressure_Pa : float
        Gas pressure [Pa]; NaN when the run file gives a number density instead.
    wire_radius_m : float
        Wire radius [m] (coaxial); NaN for other geometries.
    frequency_Hz : float
        Drive frequency [Hz]; 0 for DC.
    seed : int
        The point's seed (:func:`gap_point_seed`).
    """

    index: int
    mixture_index: int
    voltage_V: float
    pressure_Pa: float
    wire_radius_m: float
    frequency_Hz: float
    seed: int


def gap_point_seed(master_seed: int, mixture_key: str, geometry_key: str, voltage_V: float, pressure_Pa: float,
                   wire_radius_m: float, frequency_Hz: float) -> int:
    """The seed of one gap-sweep point: a :class:`numpy.random.SeedSequence` with the master seed as entropy and
    as spawn key the first 64 bits of SHA-256 of the mixture's and of the geometry's canonical text and the
    IEEE-754 bit patterns of the voltage, pressure, wire radius and frequency; the first 63 bits of its state
    (common practice, as :func:`avalanche.sweep.runfile.point_seed`)."""
    words = [int.from_bytes(hashlib.sha256(text.encode()).digest()[:8], "little")
             for text in (mixture_key, geometry_key)]
    key = (*words, *(_float_word(x) for x in (voltage_V, pressure_Pa, wire_radius_m, frequency_Hz)))
    sequence = np.random.SeedSequence(entropy=int(master_seed), spawn_key=key)
    return int(sequence.generate_state(1, dtype=np.uint64)[0] >> np.uint64(1))


@dataclass(frozen=True)
class GapRunFile:
    """A validated gap-sweep run file (:func:`parse_gap_runfile`). It brings to
    :func:`avalanche.sweep.execution.run_sweep` its own tasks, computation, results writer and progress text."""

    text: str
    source: str
    name: str
    description: str
    seed: int
    output: Path
    mixtures: tuple[MixtureSpec, ...]
    temperature_K: float
    pressure_Pa: float | None
    number_density_m3: float | None
    electrodes: dict
    voltage_V: tuple[float, ...]
    pressures_Pa: tuple[float, ...]
    wire_radii_m: tuple[float, ...]
    frequencies_Hz: tuple[float, ...]
    options: dict
    cluster: dict | None
    mode: str = GAP_MODE
    magnetic: bool = False

    @cached_property
    def points(self) -> tuple[GapPoint, ...]:
        """Every point: mixtures outermost, then pressures, wire radii, frequencies, voltages."""
        # a map enters by its file name, so that a point's seed does not depend on the folder the sweep runs in
        geometry_key = json.dumps({k: Path(v).name if k == "map" else v for k, v in self.electrodes.items()},
                                  sort_keys=True)
        points = []
        for (m, mix), p, a, f, v in itertools.product(enumerate(self.mixtures), self.pressures_Pa,
                                                      self.wire_radii_m, self.frequencies_Hz, self.voltage_V):
            seed = gap_point_seed(self.seed, mix.key, geometry_key, v, p, a, f)
            points.append(GapPoint(len(points), m, v, p, a, f, seed))
        return tuple(points)

    def build_mixture(self, mixture_index: int, pressure_Pa: float = float("nan")):
        """The mixture ``mixtures[mixture_index]`` at the run file's temperature and the given pressure (NaN: the
        run file's pressure or number density)."""
        if np.isnan(pressure_Pa):
            return self.mixtures[mixture_index].build(self.temperature_K, self.pressure_Pa, self.number_density_m3)
        return self.mixtures[mixture_index].build(self.temperature_K, pressure_Pa, None)

    @cached_property
    def mixture_checksums(self) -> tuple[dict[str, str], ...]:
        """Per mixture: species → checksum of its cross-section set."""
        return tuple(self.build_mixture(i).checksums() for i in range(len(self.mixtures)))

    checksums = RunFile.checksums
    config_json = RunFile.config_json
    config_sha256 = RunFile.config_sha256
    text_sha256 = RunFile.text_sha256

    def config(self) -> dict:
        """Everything that determines the results, as plain data (its hash guards a resumed sweep)."""
        return {"format_version": RUNFILE_FORMAT_VERSION, "mode": self.mode, "seed": self.seed,
                "mixtures": [json.loads(m.key) for m in self.mixtures], "temperature_K": self.temperature_K,
                "pressure_Pa": self.pressure_Pa, "number_density_m3": self.number_density_m3,
                "electrodes": self.electrodes, "voltage_V": list(self.voltage_V),
                "pressures_Pa": [None if np.isnan(p) else p for p in self.pressures_Pa],
                "wire_radii_m": [None if np.isnan(a) else a for a in self.wire_radii_m],
                "frequencies_Hz": list(self.frequencies_Hz), "avalanche": dict(sorted(self.options.items()))}

    # -- what run_sweep asks of a run file with its own mode
    def point_task(self, point: GapPoint, threads: int | None = 1) -> dict:
        """The plain-data task of one point, as sent to a worker (see :func:`compute_gap_point`)."""
        mixture = self.mixtures[point.mixture_index]
        return {"index": point.index, "mixture": {"composition": mixture.composition,
                                                  "parameters": mixture.parameters, "penning": mixture.penning},
                "temperature_K": self.temperature_K,
                "pressure_Pa": None if np.isnan(point.pressure_Pa) else point.pressure_Pa,
                "run_pressure_Pa": self.pressure_Pa, "number_density_m3": self.number_density_m3,
                "electrodes": dict(self.electrodes), "wire_radius_m": point.wire_radius_m,
                "voltage_V": point.voltage_V, "frequency_Hz": point.frequency_Hz, "seed": point.seed,
                "options": dict(self.options), "checksums": self.mixture_checksums[point.mixture_index],
                "threads": threads}

    @property
    def notes(self) -> tuple[str, ...]:
        """The space-charge note and the high-voltage caution, printed when the sweep starts (and stored in the
        results file's attributes)."""
        from ..gaps.results import SAFETY_NOTE, SPACE_CHARGE_NOTE

        return (SPACE_CHARGE_NOTE, SAFETY_NOTE)

    @property
    def compute(self):
        """The per-point computation (:func:`compute_gap_point`, a module-level function for the workers)."""
        return compute_gap_point

    def writer(self, path, resume: bool):
        """The results writer of a gap sweep (:class:`avalanche.store.gap.GapSweepWriter`)."""
        from ..store.gap import GapSweepWriter

        return GapSweepWriter(path, self, resume=resume)

    def describe_point(self, point: GapPoint) -> str:
        """The point's coordinates in words (progress and failure lines)."""
        parts = [self.mixtures[point.mixture_index].label, f"{point.voltage_V:g} V"]
        if not np.isnan(point.pressure_Pa):
            parts.append(f"{point.pressure_Pa:g} Pa")
        if not np.isnan(point.wire_radius_m):
            parts.append(f"wire {point.wire_radius_m:g} m")
        if point.frequency_Hz:
            parts.append(f"{point.frequency_Hz:g} Hz")
        return ", ".join(parts)

    def progress_text(self, point: GapPoint, result) -> str:
        """The latest point's headline numbers for the progress bar."""
        return f"{self.describe_point(point)}  gain {result.mean_gain.value:.4g}"


def geometry_from_electrodes(electrodes: dict, wire_radius_m: float = float("nan")):
    """The geometry object of an ``[electrodes]`` table (the map path already absolute); ``wire_radius_m``
    (not NaN) replaces the coaxial wire radius."""
    from ..gaps.geometry import Coaxial, ConcentricSpheres, FieldMap, ParallelPlates, PointPlane

    e = electrodes
    kind = e["geometry"]
    if kind == "plates":
        return ParallelPlates(e["gap_m"])
    if kind == "coaxial":
        return Coaxial(e["wire_radius_m"] if np.isnan(wire_radius_m) else wire_radius_m, e["tube_radius_m"])
    if kind == "spheres":
        return ConcentricSpheres(e["inner_radius_m"], e["outer_radius_m"])
    if kind == "point-plane":
        return PointPlane(e["tip_radius_m"], e["gap_m"])
    return FieldMap.load(e["map"])


def compute_gap_point(task: dict) -> dict:
    """Compute one gap-sweep point with :func:`avalanche.gap` (runs on a worker).

    Parameters
    ----------
    task : dict
        From :meth:`GapRunFile.point_task`.

    Returns
    -------
    dict
        ``result`` (the :class:`~avalanche.gaps.GapResult`) and ``warnings`` (the distinct warning messages).

    Raises
    ------
    ConfigError
        When the worker's cross sections differ from the coordinator's.
    """
    import numba

    from ..gaps.simulation import gap

    if task.get("threads"):  # as the swarm sweep's workers do
        numba.set_num_threads(max(1, min(int(task["threads"]), numba.config.NUMBA_NUM_THREADS)))
    spec = MixtureSpec(**task["mixture"])
    if task["pressure_Pa"] is None:
        mixture = spec.build(task["temperature_K"], task["run_pressure_Pa"], task["number_density_m3"])
    else:
        mixture = spec.build(task["temperature_K"], task["pressure_Pa"], None)
    if mixture.checksums() != task["checksums"]:
        raise ConfigError(f"the cross sections on worker {socket.gethostname()} differ from the coordinator's "
                          f"({mixture.checksums()} vs {task['checksums']}); install the same avalanche and gas "
                          "library on every node")
    options = dict(task["options"])
    primaries = options.pop("primaries", 1000)
    if task["frequency_Hz"]:
        options["frequency_Hz"] = task["frequency_Hz"]
    geometry = geometry_from_electrodes(task["electrodes"], task["wire_radius_m"])
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = gap(geometry, mixture, task["voltage_V"], primaries=primaries, seed=task["seed"], **options)
    messages = list(dict.fromkeys(f"{w.category.__name__}: {w.message}" for w in caught))
    return {"result": result, "warnings": messages}


# ----------------------------------------------------------------------------------------------------- loading

def load_sweep_runfile(path: str | Path):
    """Read and validate a run file of any mode: a :class:`GapRunFile` for ``[sweep] mode = "gap"``, else the
    swarm sweep's :class:`~avalanche.sweep.runfile.RunFile` (:func:`avalanche.sweep.runfile.load_runfile`)."""
    from ..errors import read_user_text

    path = Path(path)
    text = read_user_text(path, "run file")
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError:
        data = {}  # parse_runfile reports the TOML error
    if is_gap_runfile(data):
        return parse_gap_runfile(text, source=str(path), base=path.parent)
    return parse_runfile(text, source=str(path), base=path.parent)


def parse_gap_runfile(text: str, source: str = "<run file>", base: str | Path | None = None) -> GapRunFile:
    """Validate the text of a gap-sweep run file (see the module notes); ``base`` is the folder for relative
    paths (species files, the field map, the output).

    Raises
    ------
    ConfigError
        With the file, the field, the value and the fix, for every kind of malformed input.
    """
    from ..gaps.simulation import make_gap_settings

    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{source}: not valid TOML: {exc}") from None
    folder_given = base is not None
    base = Path(base) if base is not None else Path.cwd()
    check = _Checker(source)
    tables = section_tables(data, check, _SECTIONS, "the top level of a gap run file")
    for name, example in (("gas", "mixture = \"Ar\""), ("electrodes", "geometry = \"coaxial\""),
                          ("grid", "voltage_V = [500, 600]")):
        if name not in data:
            raise ConfigError(f"{source}: a gap run file needs a table [{name}], e.g. [{name}] {example}")
    sweep = tables["sweep"]
    seed = check.integer(sweep, "[sweep]", "seed", default=0, minimum=0)
    stem = "sweep" if source.startswith("<") else Path(source).stem
    name = check.string(sweep, "[sweep]", "name", default=stem)
    description = check.string(sweep, "[sweep]", "description", default="")
    output = _output_path(check.string(sweep, "[sweep]", "output", default=f"{stem}.h5"),
                          base if folder_given else None, check)

    gas = tables["gas"]
    mixtures = _mixtures(gas, check, base)
    temperature_K = check.number(gas, "[gas]", "temperature_K", default=300.0)
    pressure_Pa = check.number(gas, "[gas]", "pressure_Pa", default=None)
    number_density_m3 = check.number(gas, "[gas]", "number_density_m3", default=None)

    electrodes = _electrodes(tables["electrodes"], check, base)
    grid = tables["grid"]
    if "voltage_V" not in grid:
        raise ConfigError(f"{source}: [grid] needs voltage_V: a list such as [500, 600] or a range "
                          "{ start = 400, stop = 700, count = 4, spacing = \"linear\" }")
    voltages = check.grid(grid, "voltage_V", "V", positive=True)
    nan = (float("nan"),)
    pressures = check.grid(grid, "pressure_Pa", "Pa", positive=True) if "pressure_Pa" in grid else nan
    if "pressure_Pa" in grid and number_density_m3 is not None:
        check.fail("[gas]", "number_density_m3", number_density_m3, "conflicts with the [grid] pressure_Pa sweep; "
                   "give the gas state by the pressure grid and temperature_K only")
    radii = nan
    if "wire_radius_m" in grid:
        if electrodes["geometry"] != "coaxial":
            check.fail("[grid]", "wire_radius_m", grid["wire_radius_m"], "sweeps the wire of a coaxial geometry; "
                       f"[electrodes] geometry is \"{electrodes['geometry']}\"")
        radii = check.grid(grid, "wire_radius_m", "m", positive=True)
        if max(radii) >= electrodes["tube_radius_m"]:
            check.fail("[grid]", "wire_radius_m", grid["wire_radius_m"], "every wire radius must be below "
                       f"[electrodes] tube_radius_m = {electrodes['tube_radius_m']:g}")
    frequencies = check.grid(grid, "frequencies_Hz", "Hz", positive=False) if "frequencies_Hz" in grid else (0.0,)

    options = dict(tables["avalanche"])
    reserved = sorted(set(options) & _RESERVED)
    if reserved:
        check.fail("[avalanche]", reserved[0], options[reserved[0]], "is set by the sweep ([electrodes], [gas], "
                   "[grid], [sweep] seed); remove it from [avalanche]")
    if "primaries" in options:
        options["primaries"] = check.integer(options, "[avalanche]", "primaries", None, minimum=1)
    try:
        make_gap_settings(**{k: v for k, v in options.items() if k != "primaries"})
    except ConfigError as exc:
        raise ConfigError(f"{source}: [avalanche]: {exc}") from None
    cluster = _cluster(tables["cluster"], check) if "cluster" in data else None

    runfile = GapRunFile(text=text, source=source, name=name, description=description, seed=seed, output=output,
                         mixtures=mixtures, temperature_K=temperature_K, pressure_Pa=pressure_Pa,
                         number_density_m3=number_density_m3, electrodes=electrodes, voltage_V=voltages,
                         pressures_Pa=pressures, wire_radii_m=radii, frequencies_Hz=frequencies, options=options,
                         cluster=cluster)
    try:
        for i in range(len(mixtures)):
            for p in pressures:
                runfile.build_mixture(i, p)
        for a in radii:
            geometry_from_electrodes(electrodes, a)
    except AvalancheError as exc:
        raise ConfigError(f"{source}: {exc}") from None
    runfile.mixture_checksums  # noqa: B018 - computed once, before any work is handed out
    return runfile


def _electrodes(table: dict, check: _Checker, base: Path) -> dict:
    """The validated [electrodes] table: the geometry name and exactly its keys (lengths in m > 0, the map path
    made absolute)."""
    if "geometry" not in table:
        raise ConfigError(f"{check.source}: [electrodes] needs geometry = one of {list(GEOMETRY_KEYS)}")
    kind = check.choice(table, "[electrodes]", "geometry", tuple(GEOMETRY_KEYS), None)
    need = GEOMETRY_KEYS[kind]
    extra = sorted(set(table) - set(need) - {"geometry"})
    if extra:
        raise ConfigError(f"{check.source}: [electrodes] {extra[0]} does not belong to geometry \"{kind}\"; it "
                          f"takes {list(need)}{_did_you_mean(extra[0], need)}")
    out = {"geometry": kind}
    for key in need:
        if key not in table:
            raise ConfigError(f"{check.source}: [electrodes] geometry \"{kind}\" needs {key}")
        if key == "map":
            out[key] = str((base / check.string(table, "[electrodes]", key, None)).resolve())
            continue
        value = check.number(table, "[electrodes]", key, None)
        if value <= 0:
            check.fail("[electrodes]", key, value, "must be a positive length in metres")
        out[key] = value
    return out
