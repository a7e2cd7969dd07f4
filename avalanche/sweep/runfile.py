"""Run files: the TOML description of a batch sweep, its validation and its expansion into grid points.

A run file names the gas (one mixture, a list of mixtures or a composition grid), its temperature and density,
the grid of reduced fields E/N [Td] and drive frequencies [Hz], the simulation mode, the engine's precision and
event budget, the master seed and the output file. It is validated completely on load — unknown keys (with a
did-you-mean), wrong types, empty or negative grids, unknown gases, modes the engine does not provide — before any
computing starts. The format is documented in the README ("Run files").

Every grid point gets its own random seed, derived with :class:`numpy.random.SeedSequence` from the master seed
and the point's coordinates (mixture, E/N, frequency), so a point's result does not depend on how many workers
computed the sweep, in which order, or on which other points the sweep contains.
"""

from __future__ import annotations

import dataclasses
import hashlib
import inspect
import itertools
import json
import math
import struct
import tomllib
from collections.abc import Mapping
from dataclasses import dataclass
from functools import cached_property
from pathlib import Path

import numpy as np

from ..errors import AvalancheError, ConfigError
from ..gas.crosssections import _did_you_mean
from ..gas.library import MODEL_GASES, model_gas
from ..gas.mixture import Mixture, parse_composition
from ..gas.penning import applicable_penning, split_key
from ..gas.spec import MixtureSpec, species_label

RUNFILE_FORMAT_VERSION = 1
MODES = ("time-of-flight", "steady-state-townsend")
"""Simulation modes a run file may name; :func:`engine_features` says which ones the installed engine provides."""
DEFAULT_MODE = "time-of-flight"
SPACINGS = ("log", "linear")

_SECTIONS = {
    "format_version": None,
    "sweep": {"name", "description", "mode", "seed", "output"},
    "gas": {"mixture", "mixtures", "balance", "fractions", "temperature_K", "pressure_Pa", "number_density_m3",
            "parameters", "penning", "vibrational_temperature_K"},
    "grid": {"reduced_field_Td", "frequencies_Hz", "magnetic_field_T", "reduced_magnetic_field_Hx", "field_angle_deg"},
    "engine": None,  # keywords of avalanche.engine.time_of_flight.swarm, checked in _engine_options
    "cluster": {"kind", "jobs", "cores", "processes", "memory", "walltime", "queue", "account", "options"},
}
_RANGE_KEYS = {"start", "stop", "count", "spacing"}
CLUSTER_KINDS = ("slurm", "pbs")
CLUSTER_OPTIONS = frozenset({"job_name", "interface", "local_directory", "log_directory", "death_timeout", "job_cpu",
                             "job_mem", "nanny", "scheduler_options"})
"""Extra dask-jobqueue arguments a run file's ``[cluster.options]`` may set (none of them adds job-script lines)."""
JOB_SCRIPT_OPTIONS = frozenset({"job_script_prologue", "job_extra_directives", "job_extra", "env_extra",
                                "job_directives_skip", "shebang", "python", "worker_extra_args", "extra",
                                "worker_command", "header_skip"})
"""dask-jobqueue arguments that add or change lines of the job script: refused in run files; the command line
gives directives and prologue lines with ``--job-directive`` and ``--job-prologue``."""

# Engine options checked here (type and range) before the run starts; any other keyword must be a parameter of
# avalanche.engine.time_of_flight.swarm (checked against its signature).
_ENGINE_CHOICES = {"sharing": ("equal", "uniform", "opb"), "scattering": ("isotropic", "screened-coulomb")}
_ENGINE_POSITIVE_INTEGERS = ("max_events", "electrons")
ENGINE_CONTRACT_OPTIONS = ("precision", "electrons", "max_events", "sharing", "scattering")
"""The documented keywords of :func:`avalanche.engine.time_of_flight.swarm` (its public contract)."""
_ENGINE_RESERVED = {"mixture", "reduced_field_Td", "seed", "frequency_Hz", "mode", "magnetic_field_T",
                    "reduced_magnetic_field_Hx", "field_angle_deg"}
MAGNETIC_UNITS = {"T": "magnetic_field_T", "Hx": "reduced_magnetic_field_Hx"}
"""Unit of a run file's magnetic grid → the keyword of :func:`avalanche.swarm` (and the [grid] key)."""


# ------------------------------------------------------------------------------------------------ engine features

def engine_features() -> dict:
    """What the installed engine provides, detected from :func:`avalanche.engine.time_of_flight.swarm` itself.

    Returns
    -------
    dict
        ``available`` (the engine imports), ``parameters`` (the keywords ``swarm`` takes: its named parameters
        and, when it takes ``**more``, the fields of ``avalanche.engine.time_of_flight.Settings``), ``modes``
        (time-of-flight
        always; steady-state Townsend when ``avalanche.townsend`` exists or ``swarm`` takes a ``mode`` keyword),
        ``ac`` (it takes ``frequency_Hz``, i.e. time-varying fields) and ``townsend_parameters`` (the keywords of
        ``avalanche.sst.townsend``, used for the [engine] table in steady-state-townsend mode).
    """
    try:
        from ..engine import time_of_flight as engine
    except ImportError:
        return {"available": False, "parameters": (), "modes": (DEFAULT_MODE,), "ac": False}
    signature = inspect.signature(engine.swarm).parameters.values()
    names = [p.name for p in signature if p.kind in (p.KEYWORD_ONLY, p.POSITIONAL_OR_KEYWORD)]
    settings = getattr(engine, "Settings", None)
    if any(p.kind == p.VAR_KEYWORD for p in signature) and dataclasses.is_dataclass(settings):
        names += [f.name for f in dataclasses.fields(settings) if f.name not in names]
    townsend = _townsend_parameters()
    modes = MODES if "mode" in names or townsend else (DEFAULT_MODE,)
    return {"available": True, "parameters": tuple(names), "modes": modes, "ac": "frequency_Hz" in names,
            "townsend_parameters": townsend}


def _townsend_parameters() -> tuple[str, ...]:
    """The keywords :func:`avalanche.sst.townsend` takes (empty when that module does not exist)."""
    try:
        from ..engine import townsend as townsend
    except ImportError:
        return ()
    signature = inspect.signature(townsend.townsend).parameters.values()
    names = [p.name for p in signature if p.kind in (p.KEYWORD_ONLY, p.POSITIONAL_OR_KEYWORD)]
    return tuple(names + [f.name for f in dataclasses.fields(townsend.TownsendSettings) if f.name not in names])


def _engine_check(options: dict, source: str) -> None:
    """Let the engine validate the option values (``avalanche.engine.time_of_flight.make_settings``, where it
    exists)."""
    try:
        from ..engine.time_of_flight import make_settings
    except ImportError:
        return
    accepted = {k: v for k, v in options.items() if k in inspect.signature(make_settings).parameters}
    try:
        make_settings(**accepted)
    except ConfigError as exc:
        raise ConfigError(f"{source}: [engine]: {exc}") from None


# ------------------------------------------------------------------------------------------------- data classes

@dataclass(frozen=True)
class Point:
    """One grid point of a sweep: a mixture, a reduced field and a drive frequency.

    Attributes
    ----------
    index : int
        Position in the sweep (mixtures outermost, then frequencies, then fields).
    mixture_index : int
        Index into :attr:`RunFile.mixtures`.
    reduced_field_Td : float
        E/N [Td] (the field amplitude in an AC sweep).
    frequency_Hz : float
        Drive frequency [Hz]; 0 for a DC field.
    seed : int
        The point's seed, from the master seed and the coordinates (see :func:`point_seed`).
    magnetic_field : float
        Magnetic field in the run file's unit (:attr:`RunFile.magnetic_unit`: T, or Hx for B/N); 0 for none.
    field_angle_deg : float
        Angle between E and B [deg].
    """

    index: int
    mixture_index: int
    reduced_field_Td: float
    frequency_Hz: float
    seed: int
    magnetic_field: float = 0.0
    field_angle_deg: float = 90.0

    def magnetic_options(self, unit: str) -> dict:
        """The magnetic keywords of :func:`avalanche.swarm` for this point ({} without a field)."""
        if not self.magnetic_field:
            return {}
        return {MAGNETIC_UNITS[unit]: self.magnetic_field, "field_angle_deg": self.field_angle_deg}


@dataclass(frozen=True)
class RunFile:
    """A validated run file. Build it with :func:`load_runfile` or :func:`parse_runfile`."""

    text: str
    source: str
    name: str
    description: str
    mode: str
    seed: int
    output: Path
    mixtures: tuple[MixtureSpec, ...]
    temperature_K: float
    pressure_Pa: float | None
    number_density_m3: float | None
    reduced_field_Td: tuple[float, ...]
    frequencies_Hz: tuple[float, ...]
    engine: dict
    cluster: dict | None
    magnetic_field: tuple[float, ...] = (0.0,)
    magnetic_unit: str = "T"
    field_angle_deg: tuple[float, ...] = (90.0,)
    vibrational_temperature_K: float | None = None

    @property
    def magnetic(self) -> bool:
        """Whether the grid has a magnetic field (a point with B > 0)."""
        return any(b > 0 for b in self.magnetic_field)

    @cached_property
    def points(self) -> tuple[Point, ...]:
        """Every grid point: mixtures outermost, then frequencies, magnetic fields, angles, reduced fields (a point
        with B = 0 takes only the first angle: the angle has no meaning there)."""
        points = []
        for (m, mix), f, b, angle, e in itertools.product(enumerate(self.mixtures), self.frequencies_Hz,
                                                          self.magnetic_field, self.field_angle_deg,
                                                          self.reduced_field_Td):
            if b == 0 and angle != self.field_angle_deg[0]:
                continue
            points.append(Point(index=len(points), mixture_index=m, reduced_field_Td=e, frequency_Hz=f,
                                seed=point_seed(self.seed, mix.key, e, f, (self.magnetic_unit, b, angle)),
                                magnetic_field=b, field_angle_deg=angle))
        return tuple(points)

    def build_mixture(self, mixture_index: int) -> Mixture:
        """The :class:`~avalanche.gas.mixture.Mixture` of ``mixtures[mixture_index]`` at the run file's state."""
        return self.mixtures[mixture_index].build(self.temperature_K, self.pressure_Pa, self.number_density_m3,
                                                  self.vibrational_temperature_K)

    @cached_property
    def mixture_checksums(self) -> tuple[dict[str, str], ...]:
        """Per mixture: species → checksum of its cross-section set."""
        return tuple(self.build_mixture(i).checksums() for i in range(len(self.mixtures)))

    @property
    def checksums(self) -> dict[str, str]:
        """Species → checksum of its cross-section set, over every mixture of the sweep."""
        out: dict[str, str] = {}
        for sums in self.mixture_checksums:
            out.update(sums)
        return dict(sorted(out.items()))

    def config(self) -> dict:
        """Everything that determines the results (not the name, description, output path or cluster), as plain
        data; its hash guards a resumed sweep."""
        return {
            "format_version": RUNFILE_FORMAT_VERSION, "mode": self.mode, "seed": self.seed,
            "mixtures": [json.loads(m.key) for m in self.mixtures], "temperature_K": self.temperature_K,
            "pressure_Pa": self.pressure_Pa, "number_density_m3": self.number_density_m3,
            "reduced_field_Td": list(self.reduced_field_Td), "frequencies_Hz": list(self.frequencies_Hz),
            "engine": dict(sorted(self.engine.items())),
        } | ({"magnetic": {"unit": self.magnetic_unit, "values": list(self.magnetic_field),
                           "field_angle_deg": list(self.field_angle_deg)}} if self.magnetic else {}) \
          | ({"vibrational_temperature_K": self.vibrational_temperature_K}
             if self.vibrational_temperature_K is not None else {})

    def config_json(self) -> str:
        """:meth:`config` as canonical JSON text."""
        return json.dumps(self.config(), sort_keys=True, separators=(",", ":"))

    @property
    def config_sha256(self) -> str:
        """SHA-256 of :meth:`config_json`."""
        return hashlib.sha256(self.config_json().encode()).hexdigest()

    @property
    def text_sha256(self) -> str:
        """SHA-256 of the run file's text."""
        return hashlib.sha256(self.text.encode()).hexdigest()


# ------------------------------------------------------------------------------------------------------- seeds

def _float_word(x: float) -> int:
    return struct.unpack("<Q", struct.pack("<d", float(x)))[0]


def point_seed(master_seed: int, mixture_key: str, reduced_field_Td: float, frequency_Hz: float,
               magnetic: tuple[str, float, float] = ("T", 0.0, 90.0)) -> int:
    """The seed of one grid point.

    A :class:`numpy.random.SeedSequence` with the master seed as entropy and the point's coordinates as spawn
    key: the first 64 bits of SHA-256 of the mixture's canonical text, and the IEEE-754 bit patterns of E/N and of
    the frequency; with a magnetic field B > 0 also its unit (1 for T, 2 for Hx) and the bit patterns of B and of
    the angle (so a point without a field keeps the seed it had before magnetic grids existed). The first 63
    bits of its generated state are the seed (a non-negative int64).

    Parameters
    ----------
    master_seed : int
        The run file's ``seed`` (>= 0).
    mixture_key : str
        :attr:`MixtureSpec.key`.
    reduced_field_Td, frequency_Hz : float
        The point's coordinates [Td], [Hz].
    magnetic : (str, float, float)
        Unit ("T" or "Hx"), magnetic field in that unit and angle to E [deg].
    """
    mixture_word = int.from_bytes(hashlib.sha256(mixture_key.encode()).digest()[:8], "little")
    key = (mixture_word, _float_word(reduced_field_Td), _float_word(frequency_Hz))
    unit, field, angle = magnetic
    if field:
        key += (1 if unit == "T" else 2, _float_word(field), _float_word(angle))
    sequence = np.random.SeedSequence(entropy=int(master_seed), spawn_key=key)
    return int(sequence.generate_state(1, dtype=np.uint64)[0] >> np.uint64(1))


# ----------------------------------------------------------------------------------------------------- loading

def load_runfile(path: str | Path) -> RunFile:
    """Read and validate a run file.

    Parameters
    ----------
    path : str or Path
        The ``.toml`` run file. Species given as paths are relative to its folder.

    Raises
    ------
    ConfigError
        With the file, the field, the value and the fix, for every kind of malformed input.
    """
    from ..errors import read_user_text

    path = Path(path)
    return parse_runfile(read_user_text(path, "run file"), source=str(path), base=path.parent)


def parse_runfile(text: str, source: str = "<run file>", base: str | Path | None = None) -> RunFile:
    """Validate the text of a run file (see :func:`load_runfile`); ``base`` is the folder for relative paths."""
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise ConfigError(f"{source}: not valid TOML: {exc}") from None
    return runfile_from_data(data, text, source, base)


def section_tables(data: dict, check: _Checker, sections: dict, where: str) -> dict:
    """The tables of a run file read as TOML: only the keys of ``sections`` at the top level, a supported
    ``format_version``, every other section a table (absent: empty) whose keys are those ``sections`` allows
    (None: checked elsewhere). Returns section name → table; shared by swarm and gap run files."""
    source = check.source
    check.keys(data, set(sections), where)
    version = data.get("format_version", RUNFILE_FORMAT_VERSION)
    if version != RUNFILE_FORMAT_VERSION:
        raise ConfigError(f"{source}: format_version = {version!r} is not supported; this avalanche reads run "
                          f"files of format_version {RUNFILE_FORMAT_VERSION}")
    tables = {}
    for name, allowed in sections.items():
        if name == "format_version":
            continue
        value = data.get(name, {})
        if not isinstance(value, dict):
            raise ConfigError(f"{source}: '{name}' must be a table [{name}], got {value!r}")
        if allowed is not None:
            check.keys(value, allowed, f"[{name}]")
        tables[name] = value
    return tables


def runfile_from_data(data: dict, text: str, source: str = "<run file>", base: str | Path | None = None) -> RunFile:
    """Validate a run file already read as TOML (``data``; ``text`` is kept as the run's record), as
    :func:`parse_runfile` does; ``avalanche check`` calls it on parts of a file to report every problem."""
    folder_given = base is not None
    base = Path(base) if base is not None else Path.cwd()
    check = _Checker(source)
    sections = section_tables(data, check, _SECTIONS, "the top level")
    if "gas" not in data:
        raise ConfigError(f"{source}: missing table [gas]; name the gas, e.g. [gas] mixture = \"Ar\"")
    if "grid" not in data:
        raise ConfigError(f"{source}: missing table [grid]; give e.g. [grid] reduced_field_Td = [10, 100]")

    features = engine_features()
    sweep = sections["sweep"]
    mode = check.choice(sweep, "[sweep]", "mode", MODES, DEFAULT_MODE)
    if mode not in features["modes"]:
        raise ConfigError(f"{source}: [sweep] mode = \"{mode}\" is not provided by this installation's engine "
                          f"(it runs {list(features['modes'])}); use mode = \"{DEFAULT_MODE}\"")
    seed = check.integer(sweep, "[sweep]", "seed", default=0, minimum=0)
    description = check.string(sweep, "[sweep]", "description", default="")
    stem = "sweep" if source.startswith("<") else Path(source).stem
    name = check.string(sweep, "[sweep]", "name", default=stem)
    output = _output_path(check.string(sweep, "[sweep]", "output", default=f"{stem}.h5"),
                          base if folder_given else None, check)

    gas = sections["gas"]
    mixtures = _mixtures(gas, check, base)
    temperature_K = check.number(gas, "[gas]", "temperature_K", default=300.0)
    pressure_Pa = check.number(gas, "[gas]", "pressure_Pa", default=None)
    number_density_m3 = check.number(gas, "[gas]", "number_density_m3", default=None)
    vibrational_temperature_K = check.number(gas, "[gas]", "vibrational_temperature_K", default=None)
    if vibrational_temperature_K is not None and vibrational_temperature_K < 0:
        check.fail("[gas]", "vibrational_temperature_K", vibrational_temperature_K,
                   "must be a temperature >= 0 K (the vibrational level populations), e.g. 2000")

    grid = sections["grid"]
    if "reduced_field_Td" not in grid:
        raise ConfigError(f"{source}: [grid] needs reduced_field_Td: a list such as [10, 100] or a range "
                          "{ start = 1, stop = 1000, count = 31, spacing = \"log\" }")
    fields = check.grid(grid, "reduced_field_Td", "Td", positive=True)
    frequencies = check.grid(grid, "frequencies_Hz", "Hz", positive=False) if "frequencies_Hz" in grid else (0.0,)
    if any(f > 0 for f in frequencies) and not features["ac"]:
        raise ConfigError(f"{source}: [grid] frequencies_Hz = {list(frequencies)} needs time-varying (AC) fields, "
                          "which this installation's engine does not provide yet (avalanche.swarm takes no "
                          "frequency_Hz); remove frequencies_Hz or use [0.0] for a DC sweep")
    if any(f > 0 for f in frequencies) and mode != DEFAULT_MODE:
        raise ConfigError(f"{source}: [grid] frequencies_Hz = {list(frequencies)} with [sweep] mode = \"{mode}\": the "
                          "steady-state Townsend mode follows electrons in a DC field only; remove frequencies_Hz "
                          f"(or use [0.0]), or use mode = \"{DEFAULT_MODE}\" for AC points")

    magnetic_field, magnetic_unit, angles = _magnetic_grid(grid, check, features, mode)
    engine = _engine_options(sections["engine"], features, source, mode)
    cluster = _cluster(sections["cluster"], check) if "cluster" in data else None

    runfile = RunFile(text=text, source=source, name=name, description=description, mode=mode, seed=seed,
                      output=output, mixtures=mixtures, temperature_K=temperature_K, pressure_Pa=pressure_Pa,
                      number_density_m3=number_density_m3, reduced_field_Td=fields, frequencies_Hz=frequencies,
                      engine=engine, cluster=cluster, magnetic_field=magnetic_field, magnetic_unit=magnetic_unit,
                      field_angle_deg=angles, vibrational_temperature_K=vibrational_temperature_K)
    for i, mix in enumerate(mixtures):  # loads every cross-section set: unknown gases and bad states fail here
        try:
            runfile.build_mixture(i)
        except AvalancheError as exc:
            raise ConfigError(f"{source}: [gas] mixture {mix.label}: {exc}") from None
    runfile.mixture_checksums  # noqa: B018 - computed once, before any work is handed out
    return runfile


def _magnetic_grid(grid: dict, check: _Checker, features: dict, mode: str):
    """The [grid] magnetic field (``magnetic_field_T`` or ``reduced_magnetic_field_Hx``, values >= 0) and
    ``field_angle_deg`` (0 … 180): (values, unit, angles); ((0.0,), "T", (90.0,)) when absent."""
    given = [key for key in MAGNETIC_UNITS.values() if key in grid]
    if len(given) > 1:
        raise ConfigError(f"{check.source}: [grid] give either magnetic_field_T (tesla) or reduced_magnetic_field_Hx "
                          "(B/N in Hx), not both")
    if not given:
        if "field_angle_deg" in grid:
            raise ConfigError(f"{check.source}: [grid] field_angle_deg needs a magnetic field: add magnetic_field_T "
                              "= [...] or reduced_magnetic_field_Hx = [...]")
        return (0.0,), "T", (90.0,)
    key = given[0]
    unit = "T" if key == "magnetic_field_T" else "Hx"
    values = check.grid(grid, key, unit, positive=False)
    angles = check.grid(grid, "field_angle_deg", "deg", positive=False) if "field_angle_deg" in grid else (90.0,)
    if any(a > 180 for a in angles):
        check.fail("[grid]", "field_angle_deg", list(angles), "angles between E and B lie in 0 ... 180 deg")
    if any(values) and "magnetic_field_T" not in features["parameters"]:
        raise ConfigError(f"{check.source}: [grid] {key} needs magnetic fields, which this installation's engine "
                          "does not provide (avalanche.swarm takes no magnetic_field_T)")
    if any(values) and mode != DEFAULT_MODE:
        raise ConfigError(f"{check.source}: [grid] {key} with [sweep] mode = \"{mode}\": the steady-state Townsend "
                          f"mode runs without a magnetic field; remove {key} or use mode = \"{DEFAULT_MODE}\"")
    return values, unit, angles


class _Checker:
    """Type and range checks whose messages name the file, the place (``where``) and the field."""

    def __init__(self, source: str):
        self.source = source

    def fail(self, where: str, key: str, value, problem: str):
        raise ConfigError(f"{self.source}: {where} {key} = {_show(value)}: {problem}")

    def keys(self, table: dict, allowed: set, where: str):
        for key in table:
            if key not in allowed:
                raise ConfigError(f"{self.source}: unknown key '{key}' in {where}{_did_you_mean(key, allowed)}; "
                                  f"allowed keys are {sorted(allowed)}")

    def string(self, table, where, key, default):
        value = table.get(key, default)
        if not isinstance(value, str):
            self.fail(where, key, value, "must be a string in quotes")
        return value

    def choice(self, table, where, key, choices, default):
        value = self.string(table, where, key, default)
        if value not in choices:
            self.fail(where, key, value, f"must be one of {list(choices)}{_did_you_mean(value, choices)}")
        return value

    def integer(self, table, where, key, default, minimum):
        value = table.get(key, default)
        if isinstance(value, float) and value.is_integer():
            value = int(value)
        if isinstance(value, bool) or not isinstance(value, int):
            self.fail(where, key, value, "must be an integer")
        if value < minimum:
            self.fail(where, key, value, f"must be >= {minimum}")
        return value

    def number(self, table, where, key, default):
        value = table.get(key, default)
        if value is None:
            return None
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value):
            self.fail(where, key, value, "must be a finite number")
        return float(value)

    def grid(self, table: dict, key: str, unit: str, positive: bool) -> tuple[float, ...]:
        """A list of values, or a range table {start, stop, count, spacing}; sorted, distinct, > 0 (``positive``)
        or >= 0."""
        value = table[key]
        where = "[grid]"
        if isinstance(value, dict):
            inner = f"[grid] {key}"
            self.keys(value, _RANGE_KEYS, inner)
            missing = [k for k in ("start", "stop", "count") if k not in value]
            if missing:
                self.fail(where, key, value, f"a range needs start, stop and count (missing {missing})")
            start = self.number(value, inner, "start", None)
            stop = self.number(value, inner, "stop", None)
            count = self.integer(value, inner, "count", None, minimum=1)
            spacing = self.choice(value, inner, "spacing", SPACINGS, "log")
            if spacing == "log" and min(start, stop) <= 0:
                self.fail(where, key, value, f"a log range needs start and stop > 0 {unit}; use spacing = "
                          "\"linear\" or a list to include 0")
            if count > 1 and start == stop:
                self.fail(where, key, value, "start equals stop; give a single value as a list instead")
            values = np.geomspace(start, stop, count) if spacing == "log" else np.linspace(start, stop, count)
        elif isinstance(value, list):
            if not value:
                self.fail(where, key, value, f"the grid is empty; give at least one value in {unit}")
            if not all(type(item) in (int, float) for item in value):  # bool is not int's type
                item = next(item for item in value if type(item) not in (int, float))
                self.fail(where, key, value, f"every entry must be a finite number in {unit}, got {item!r}")
            values = np.array(value, dtype=float)
            if not np.all(np.isfinite(values)):
                item = values[~np.isfinite(values)][0]
                self.fail(where, key, value, f"every entry must be a finite number in {unit}, got {item!r}")
        elif isinstance(value, (int, float)) and not isinstance(value, bool) and math.isfinite(value):
            values = np.array([float(value)])
        else:
            self.fail(where, key, value, f"must be a list of numbers in {unit} or a range table "
                      "{ start = ..., stop = ..., count = ..., spacing = \"log\" }")
        # whole-array checks, and one sort after which duplicates are neighbours: linear in the grid size
        bad = values[(values < 0) | ((values == 0) if positive else False)]
        if bad.size:
            self.fail(where, key, value, f"{'negative ' if bad[0] < 0 else ''}value {bad[0]:g} {unit}; values must "
                      f"be {'> 0' if positive else '>= 0'}")
        ordered = np.sort(values)
        duplicates = ordered[1:][ordered[1:] == ordered[:-1]]
        if duplicates.size:
            self.fail(where, key, value, f"{duplicates[0]:g} {unit} appears more than once")
        return tuple(ordered.tolist())


def _output_path(text: str, base: Path | None, check: _Checker) -> Path:
    """The ``[sweep] output`` file: a relative path resolves against the run file's folder (as species paths do)
    and must stay inside it; a file elsewhere needs an absolute path, so a shared run file cannot write outside
    its folder unnoticed."""
    if not text.strip():
        check.fail("[sweep]", "output", text, "is empty; give a file name such as \"sweep.h5\"")
    given = Path(text)
    if text.endswith(("/", "\\")) or given.name in ("", ".", ".."):
        check.fail("[sweep]", "output", text, "names a folder; give a file name such as \"results/sweep.h5\"")
    if given.is_absolute():
        return given
    folder = (base or Path.cwd()).resolve()
    path = (folder / given).resolve()
    if not path.is_relative_to(folder):
        check.fail("[sweep]", "output", text, f"leaves the run file's folder '{folder}'; give an absolute path to "
                   "write elsewhere")
    return path if base is not None else given


def _show(value) -> str:
    if isinstance(value, list) and len(value) > 20:
        return f"[{_show(value[0])}, {_show(value[1])}, ... ({len(value)} values)]"
    return json.dumps(value) if isinstance(value, (str, list, dict, int, float)) else repr(value)


def _resolve_species(name: str, base: Path) -> str:
    """Library names stay; a path to a ``.toml`` file becomes absolute (relative to the run file's folder)."""
    if name.endswith(".toml") or "/" in name:
        return str((base / name).resolve())
    return name


def _composition(value, where: str, check: _Checker, base: Path) -> dict[str, float]:
    if isinstance(value, str):
        try:
            composition = parse_composition(value)
        except ConfigError as exc:
            raise ConfigError(f"{check.source}: {where}: {exc}") from None
    elif isinstance(value, dict) and value:
        composition = {}
        for species, fraction in value.items():
            if isinstance(fraction, bool) or not isinstance(fraction, (int, float)):
                raise ConfigError(f"{check.source}: {where}: mole fraction of '{species}' must be a number, "
                                  f"got {fraction!r}")
            composition[species] = float(fraction)
    else:
        raise ConfigError(f"{check.source}: {where} must be a gas (\"Ar\"), a mixture string (\"Ne:0.99,Ar:0.01\")"
                          f" or a table {{ Ne = 0.99, Ar = 0.01 }}, got {_show(value)}")
    return {_resolve_species(k, base): v for k, v in composition.items() if v != 0}


def _mixtures(gas: dict, check: _Checker, base: Path) -> tuple[MixtureSpec, ...]:
    """The [gas] table's compositions: ``mixture``, ``mixtures`` (a list) or ``balance`` + ``fractions``."""
    given = [k for k in ("mixture", "mixtures", "fractions") if k in gas]
    if len(given) != 1:
        raise ConfigError(f"{check.source}: [gas] needs exactly one of mixture = \"Ar\", mixtures = [...] or "
                          f"balance = \"Ne\" with fractions = {{ Ar = [...] }}; got {given or 'none'}")
    parameters = gas.get("parameters", {})
    if not isinstance(parameters, dict):
        check.fail("[gas]", "parameters", parameters, "must be a table of model gas → {parameter = value}")
    for species, params in parameters.items():
        if species not in MODEL_GASES:
            raise ConfigError(f"{check.source}: [gas.parameters] '{species}' is not a model gas"
                              f"{_did_you_mean(species, MODEL_GASES)}; parameters apply to {list(MODEL_GASES)}")
        if not isinstance(params, dict):
            check.fail("[gas.parameters]", species, params, "must be a table such as { F = 0.5 }")
        try:
            model_gas(species, **params)
        except ConfigError as exc:
            raise ConfigError(f"{check.source}: [gas.parameters] {species}: {exc}") from None
    if "balance" in gas and "fractions" not in gas:
        raise ConfigError(f"{check.source}: [gas] balance = {_show(gas['balance'])} needs fractions = "
                          "{ SPECIES = [mole fractions] }")
    if "mixture" in gas:
        compositions = [_composition(gas["mixture"], "[gas] mixture", check, base)]
    elif "mixtures" in gas:
        value = gas["mixtures"]
        if not isinstance(value, list) or not value:
            check.fail("[gas]", "mixtures", value, "must be a non-empty list of mixtures")
        compositions = [_composition(v, f"[gas] mixtures[{i}]", check, base) for i, v in enumerate(value)]
    else:
        compositions = _composition_grid(gas, check, base)
    penning = _penning_table(gas, check, compositions)
    specs = []
    for composition in compositions:
        used = {k: dict(v) for k, v in parameters.items() if k in composition}
        specs.append(MixtureSpec(composition=composition, parameters=used,
                                 penning=applicable_penning(penning, composition)))
    keys = [s.key for s in specs]
    for i, key in enumerate(keys):
        if key in keys[:i]:
            raise ConfigError(f"{check.source}: [gas] mixture {specs[i].label} appears more than once")
    return tuple(specs)


def _penning_table(gas: dict, check: _Checker, compositions: list[dict[str, float]]) -> dict[str, float]:
    """The [gas] penning table (level group → transfer probability). It serves every mixture of the sweep; each
    group must apply to at least one (its species and a receiver present); the rest of the checks (levels, ionization
    energies) happen when the mixtures are built."""
    table = gas.get("penning", {})
    if not isinstance(table, dict):
        check.fail("[gas]", "penning", table, "must be a table of level group → transfer probability, e.g. "
                   "penning = { Ne = 0.3 } or penning = { \"Ne:1s\" = 0.2, \"Ne:2p\" = 0.5 }")
    species = sorted({species_label(k) for c in compositions for k in c})
    for key, value in table.items():
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 <= value <= 1:
            check.fail("[gas.penning]", f'"{key}"', value, "must be a transfer probability between 0 and 1")
        if not any(applicable_penning({key: value}, c) for c in compositions):
            donor, _, receiver = split_key(key)
            missing = donor if donor not in species else (receiver or "a second species")
            raise ConfigError(f"{check.source}: [gas.penning] \"{key}\" applies to no mixture of the sweep: "
                              f"'{missing}' is not in any of them{_did_you_mean(missing, species)} (species: "
                              f"{species})")
    return {k: float(v) for k, v in table.items()}


def _composition_grid(gas: dict, check: _Checker, base: Path) -> list[dict[str, float]]:
    """Every combination of the listed mole fractions, the balance gas taking the rest."""
    balance = gas.get("balance")
    if not isinstance(balance, str) or not balance:
        check.fail("[gas]", "balance", balance, "a composition grid needs balance = \"SPECIES\" (the gas that "
                   "takes the remaining fraction)")
    fractions = gas["fractions"]
    if not isinstance(fractions, dict) or not fractions:
        check.fail("[gas]", "fractions", fractions, "must be a table { SPECIES = [mole fractions] }")
    if balance in fractions:
        check.fail("[gas]", "fractions", fractions, f"the balance gas '{balance}' must not be listed")
    lists = {}
    for species, values in fractions.items():
        values = values if isinstance(values, list) else [values]
        ok = values and all(not isinstance(v, bool) and isinstance(v, (int, float)) and 0 <= v <= 1 for v in values)
        if not ok:
            check.fail("[gas.fractions]", species, fractions[species], "must be a non-empty list of mole fractions "
                       "in [0, 1]")
        lists[species] = [float(v) for v in values]
    out = []
    for combo in itertools.product(*lists.values()):
        rest = 1.0 - math.fsum(combo)
        if rest < -1e-12:
            raise ConfigError(f"{check.source}: [gas.fractions] {dict(zip(lists, combo, strict=True))} sum to more "
                              f"than 1, leaving nothing for the balance gas '{balance}'")
        composition = {balance: max(rest, 0.0), **dict(zip(lists, combo, strict=True))}
        out.append({_resolve_species(k, base): v for k, v in composition.items() if v != 0})
    return out


def _engine_options(table: dict, features: dict, source: str, mode: str = DEFAULT_MODE) -> dict:
    """The [engine] table: keywords passed to :func:`avalanche.engine.time_of_flight.swarm` (to
    :func:`avalanche.townsend` in
    steady-state-townsend mode), checked before the run.

    Names are checked against the engine's signature (or, where the engine cannot be imported, against the
    documented contract :data:`ENGINE_CONTRACT_OPTIONS`); the documented options are also checked for type and
    range.
    """
    townsend = mode != DEFAULT_MODE and bool(features.get("townsend_parameters"))
    if townsend:
        known = set(features["townsend_parameters"]) - {"compare", "threads"}
    else:
        known = set(features["parameters"]) if features["available"] else set(ENGINE_CONTRACT_OPTIONS)
    known -= _ENGINE_RESERVED
    options = {}
    for key, value in table.items():
        if key in _ENGINE_RESERVED:
            raise ConfigError(f"{source}: [engine] {key} is set by the sweep itself (from [gas], [grid] and "
                              "[sweep]); remove it from [engine]")
        if key not in known:
            raise ConfigError(f"{source}: unknown key '{key}' in [engine]{_did_you_mean(key, known)}; the engine "
                              f"takes {sorted(known)}")
        if key == "precision":
            if isinstance(value, bool) or not isinstance(value, (int, float)) or not 0 < value < 1:
                raise ConfigError(f"{source}: [engine] precision = {_show(value)}: must be a relative standard "
                                  "error between 0 and 1, e.g. 0.01")
            value = float(value)
        elif key in _ENGINE_POSITIVE_INTEGERS:
            if isinstance(value, float) and value.is_integer():
                value = int(value)
            if isinstance(value, bool) or not isinstance(value, int) or value <= 0:
                raise ConfigError(f"{source}: [engine] {key} = {_show(value)}: must be a positive integer")
        elif key in _ENGINE_CHOICES and value not in _ENGINE_CHOICES[key]:
            raise ConfigError(f"{source}: [engine] {key} = {_show(value)}: must be one of "
                              f"{list(_ENGINE_CHOICES[key])}{_did_you_mean(str(value), _ENGINE_CHOICES[key])}")
        options[key] = value
    if townsend:
        _townsend_check(options, source)
    elif features["available"]:
        _engine_check(options, source)
    return options


def _townsend_check(options: dict, source: str) -> None:
    """Let :func:`avalanche.engine.townsend.make_townsend_settings` validate the option values."""
    from ..engine.townsend import make_townsend_settings

    accepted = {k: v for k, v in options.items() if k in inspect.signature(make_townsend_settings).parameters}
    try:
        make_townsend_settings(**accepted)
    except ConfigError as exc:
        raise ConfigError(f"{source}: [engine]: {exc}") from None


def _cluster(table: dict, check: _Checker) -> dict:
    """The [cluster] table: a dask-jobqueue batch cluster (used with ``avalanche sweep --cluster``)."""
    out = {"kind": check.choice(table, "[cluster]", "kind", CLUSTER_KINDS, "slurm"),
           "jobs": check.integer(table, "[cluster]", "jobs", default=1, minimum=1),
           "cores": check.integer(table, "[cluster]", "cores", default=1, minimum=1),
           "processes": check.integer(table, "[cluster]", "processes", default=table.get("cores", 1), minimum=1),
           "memory": check.string(table, "[cluster]", "memory", default="4GB"),
           "walltime": check.string(table, "[cluster]", "walltime", default="01:00:00")}
    for key in ("queue", "account"):
        if key in table:
            out[key] = check.string(table, "[cluster]", key, default="")
    for key in ("memory", "walltime", "queue", "account"):
        if key in out:
            _one_line(out[key], "[cluster]", key, check)
    options = table.get("options", {})
    if not isinstance(options, Mapping):
        check.fail("[cluster]", "options", options, "must be a table of extra dask-jobqueue arguments")
    for key, value in options.items():
        if key in JOB_SCRIPT_OPTIONS:
            check.fail("[cluster.options]", key, value, "adds lines to the job script, which a run file may not do "
                       "(a shared run file would control the job); give such lines on the command line with "
                       "--job-directive or --job-prologue")
        if key not in CLUSTER_OPTIONS:
            check.fail("[cluster.options]", key, value, f"is not an allowed option{_did_you_mean(key, CLUSTER_OPTIONS)}"
                       f"; allowed: {sorted(CLUSTER_OPTIONS)} (job-script lines go on the command line)")
        for inner in (value.values() if key == "scheduler_options" and isinstance(value, Mapping) else [value]):
            if isinstance(inner, bool) or not isinstance(inner, (str, int, float)):
                check.fail("[cluster.options]", key, value, "must be a string or a number (scheduler_options: a "
                           "table of them)")
            if isinstance(inner, str):
                _one_line(inner, "[cluster.options]", key, check)
    out["options"] = dict(options)
    return out


def _one_line(value: str, where: str, key: str, check: _Checker) -> None:
    if any(ord(c) < 32 or ord(c) == 127 for c in value):
        check.fail(where, key, value, "must be one line of text (no line breaks or control characters)")
