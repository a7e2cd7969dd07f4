"""The sweep results file (HDF5): one group per grid point, a table of headline coefficients, provenance, and the
crash-safe commit protocol that makes ``--resume`` possible.

Layout (format version 1)::

    /                      attrs: file_type = "avalanche-sweep", format_version, package_version, created_utc,
                                  name, description, mode, master_seed, n_points, runfile_source,
                                  runfile_sha256, config_sha256
    /runfile               the run file's text (string dataset; attr sha256)
    /config                canonical JSON of everything that determines the results (attr sha256)
    /crosssections         attrs: species -> SHA-256 checksum of its cross-section set
    /grid/                 one row per point (index order):
        mixture_index      (n,) int64
        mixture            (m,) strings, the mixture labels;  composition_json (m,) exact compositions
        reduced_field_Td   (n,) float64, units "Td"
        frequency_Hz       (n,) float64, units "Hz"
        seed               (n,) int64, the point's seed
        magnetic_field_T, reduced_magnetic_field_Hx, field_angle_deg
                           (n,) float64, units "T", "Hx", "deg": only in sweeps with a magnetic grid (a file
                           without them had B = 0 at every point; readers then report 0, 0, 90)
    /table/value/<q>       (n,) float64, headline quantity q per point (NaN where not finished); attrs quantity
                           (the exact name), units
    /table/stderr/<q>      (n,) float64, its standard error; same attrs
    /points/<index:06d>/   the engine's per-point layout (avalanche.store.point.write_result), plus attrs
                           sweep_index, sweep_seed, sweep_attempts, sweep_wall_seconds, sweep_worker,
                           sweep_finished_utc, sweep_warnings, sweep_reason (failed points) and, written last,
                           sweep_status = "ok" | "failed"

Crash safety. Only the coordinating process writes. A point is committed by deleting any earlier attempt's
group, writing the new group and its table rows, setting ``sweep_status`` last and flushing the file before the
next point is written. A point group without ``sweep_status`` is an interrupted commit: readers treat it as
missing (and its table rows as NaN), and ``--resume`` computes it again. The file uses HDF5's default
(earliest-compatible) format on purpose: files in the newest format record an "open for writing" flag in their
superblock which a killed writer leaves set, so the file then refuses to open until cleared with a separate tool.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from pathlib import Path

import h5py
import numpy as np

from .._version import __version__
from ..errors import AvalancheError, ConfigError

FILE_TYPE = "avalanche-sweep"
FORMAT_VERSION = 1
STATUS_OK = "ok"
STATUS_FAILED = "failed"
STATUS_MISSING = "missing"

RATE_PREFIX = "rate_coefficient:"
"""Every per-process rate coefficient of a point enters the table as ``rate_coefficient:<label>`` [m³/s]."""


def headline_quantities() -> tuple[tuple[str, str], ...]:
    """(name, units) of the scalar estimates of a result, in display order (:data:`avalanche.engine.results.ESTIMATES`);
    those a point's result has are copied into the table."""
    from ..engine.results import ESTIMATES

    return tuple((name, units) for name, units, _ in ESTIMATES)


PayloadIO = tuple[Callable, Callable]
"""``(write(h5group, result), read(h5group) -> result)``: how a point's full result is stored."""


def engine_payload_io() -> PayloadIO:
    """The engine's per-point HDF5 layout: :func:`avalanche.store.point.write_result` and
    :func:`avalanche.store.point.read_result`."""
    try:
        from .point import read_result, write_result
    except ImportError as exc:
        raise AvalancheError(f"the per-point HDF5 layout (avalanche.store.point) is not available: {exc}") from None
    return write_result, read_result


def headline_values(result) -> dict[str, tuple[float, float, str]]:
    """Name → (value, standard error, units) of every headline quantity ``result`` has.

    A quantity counts when the result has an attribute of that name with ``.value`` and ``.stderr`` (an
    ``Estimate``); rate coefficients come from the mapping ``result.rate_coefficients``.
    """
    out = {}
    for name, units in headline_quantities():
        estimate = getattr(result, name, None)
        if hasattr(estimate, "value") and hasattr(estimate, "stderr"):
            out[name] = (float(estimate.value), float(estimate.stderr), units)
    rates = getattr(result, "rate_coefficients", None)
    if isinstance(rates, Mapping):
        for label, estimate in rates.items():
            out[RATE_PREFIX + str(label)] = (float(estimate.value), float(estimate.stderr), "m3/s")
    return out


def _column_name(quantity: str) -> str:
    return quantity.replace("/", "_")


def _now() -> str:
    return _dt.datetime.now(_dt.UTC).isoformat(timespec="seconds")


HDF5_SIGNATURE = b"\x89HDF\r\n\x1a\n"
INCOMPLETE_MAX_BYTES = 1 << 16
"""A file that does not open as HDF5 is taken as one whose creation was interrupted only when it is this small
(a results file is written under a temporary name and linked complete, so only older or foreign writers leave
such files); larger damaged files are reported, never deleted."""


def incomplete_reason(path: str | Path) -> str | None:
    """Why the results file ``path`` is an incomplete leftover of an interrupted creation (safe to delete and
    start afresh), or None when it is not one: empty; a small HDF5 file that does not open (truncated); or an HDF5
    file without the sweep's parts."""
    path = Path(path)
    try:
        size = path.stat().st_size
        if size == 0:
            return "it is empty"
        with open(path, "rb") as handle:
            head = handle.read(len(HDF5_SIGNATURE))
    except OSError:
        return None
    if head != HDF5_SIGNATURE:
        return None
    try:
        f = h5py.File(path, "r", locking=False)
    except OSError:
        return f"it is truncated ({size} bytes) and does not open" if size <= INCOMPLETE_MAX_BYTES else None
    with f:
        parts = ("runfile", "config", "grid", "table", "points")
        if not f.attrs.get("file_type") and not list(f.keys()):
            return "it has no content"
        if f.attrs.get("file_type") == FILE_TYPE and not all(part in f for part in parts):
            return "its creation was interrupted (parts missing)"
    return None


def _incomplete_message(path: Path, reason: str) -> str:
    return (f"results file '{path}' is incomplete ({reason}): its creation was interrupted and it holds no results; "
            "it is safe to delete, and `avalanche sweep --resume` starts it afresh")


def _open(path: Path, mode: str, **kwargs) -> h5py.File:
    try:
        return h5py.File(path, mode, **kwargs)
    except BlockingIOError:
        raise AvalancheError(f"results file '{path}' is open for writing in another process (a sweep still "
                             "running?); wait for it to finish, or write to another file with --out") from None
    except OSError as exc:
        if "lock" in str(exc).lower():
            raise AvalancheError(f"results file '{path}' is locked by another process (a sweep still running?); "
                                 "wait for it to finish, or write to another file with --out") from None
        raise AvalancheError(f"cannot open results file '{path}': {exc}") from None


def _check_type(f: h5py.File, path: Path) -> None:
    if f.attrs.get("file_type") != FILE_TYPE:
        raise AvalancheError(f"'{path}' is not an avalanche sweep results file (file_type = "
                             f"{f.attrs.get('file_type')!r}, expected '{FILE_TYPE}')")
    version = int(f.attrs.get("format_version", -1))
    if version != FORMAT_VERSION:
        raise AvalancheError(f"'{path}' has sweep format version {version}; this avalanche {__version__} reads "
                             f"version {FORMAT_VERSION}")


def _point_statuses(f: h5py.File, n_points: int) -> np.ndarray:
    status = np.full(n_points, STATUS_MISSING, dtype=object)
    for name, group in f["points"].items():
        value = group.attrs.get("sweep_status")
        if value in (STATUS_OK, STATUS_FAILED):
            status[int(name)] = value
    return status


# ---------------------------------------------------------------------------------------------------- writing

class ResultsWriter:
    """Writes a sweep's results file, one committed point at a time (see the module notes on crash safety).

    Parameters
    ----------
    path : str or Path
        The results file.
    runfile : avalanche.sweep.runfile.RunFile
        The validated run file of the sweep.
    resume : bool
        False: create a new file (an existing file is an error). True: continue an existing file, refusing when
        its run-file configuration, cross-section checksums or package version differ from the present ones.
    payload_io : (write, read), optional
        How a point's full result is written; default :func:`engine_payload_io`.

    Attributes
    ----------
    finished : set of int
        Indices of points committed with status "ok" (a resumed sweep skips them).
    """

    broken = False
    """True after a write failed (e.g. a full disk); the file then only gets closed."""

    def __init__(self, path: str | Path, runfile, *, resume: bool = False, payload_io: PayloadIO | None = None):
        self.path = Path(path)
        self.runfile = runfile
        self._write_payload = (payload_io or engine_payload_io())[0]
        self.restarted: str | None = None
        """Why an incomplete file was started afresh by ``resume`` (None when it was not)."""
        from .files import FileLock, check_output_file

        check_output_file(self.path, force=True, option="results file")
        self._lock = FileLock(self.path)
        try:
            self._open_or_create(resume)
        except BaseException:
            self._lock.release()
            raise
        self.finished = {i for i, s in enumerate(_point_statuses(self.file, len(runfile.points))) if s == STATUS_OK}

    # -- set-up
    def _open_or_create(self, resume: bool) -> None:
        reason = incomplete_reason(self.path) if self.path.exists() else None
        if resume:
            if not self.path.exists():
                raise ConfigError(f"--resume: results file '{self.path}' does not exist; run without --resume to "
                                  "start the sweep")
            if reason is not None:
                self.path.unlink()
                self.restarted = reason
                return self._create_complete()
            if not self.path.is_file():
                raise ConfigError(f"results file '{self.path}' is not a regular file; give another --out")
            self.file = _open(self.path, "r+")
            try:
                self._check_resumable()
            except BaseException:
                self.file.close()
                raise
            return None
        if reason is not None:
            raise ConfigError(_incomplete_message(self.path, reason))
        if self.path.exists() or self.path.is_symlink():
            raise ConfigError(f"results file '{self.path}' already exists; continue it with --resume, write "
                              "to another file with --out, or delete it")
        return self._create_complete()

    def _create_complete(self) -> None:
        """Create the file under a temporary name, complete, then link it to its name (never over another file),
        so a results file under its final name always has every part."""
        from .files import disk_error

        temporary = self.path.with_name(f".{self.path.name}.{os.getpid()}.partial")
        try:
            with _open(temporary, "w") as self.file:
                self._create()
            os.link(temporary, self.path)
        except FileExistsError:
            raise ConfigError(f"results file '{self.path}' appeared while it was being created; another sweep "
                              "writes it") from None
        except OSError as exc:
            raise disk_error(exc, self.path, "creating the results file") from None
        finally:
            temporary.unlink(missing_ok=True)
        self.file = _open(self.path, "r+")

    def _create(self) -> None:
        f, rf = self.file, self.runfile
        points = rf.points
        f.attrs.update({
            "file_type": FILE_TYPE, "format_version": FORMAT_VERSION, "package_version": __version__,
            "created_utc": _now(), "name": rf.name, "description": rf.description, "mode": rf.mode,
            "master_seed": rf.seed, "n_points": len(points), "runfile_source": rf.source,
            "runfile_sha256": rf.text_sha256, "config_sha256": rf.config_sha256,
        })
        f.create_dataset("runfile", data=rf.text, dtype=h5py.string_dtype()).attrs["sha256"] = rf.text_sha256
        f.create_dataset("config", data=rf.config_json(), dtype=h5py.string_dtype()).attrs["sha256"] = \
            rf.config_sha256
        f.create_group("crosssections").attrs.update(rf.checksums)
        grid = f.create_group("grid")
        grid.create_dataset("mixture_index", data=np.array([p.mixture_index for p in points], dtype=np.int64))
        grid.create_dataset("mixture", data=[m.label for m in rf.mixtures], dtype=h5py.string_dtype())
        grid.create_dataset("composition_json", data=[m.key for m in rf.mixtures], dtype=h5py.string_dtype())
        grid.create_dataset("reduced_field_Td", data=np.array([p.reduced_field_Td for p in points]))\
            .attrs["units"] = "Td"
        grid.create_dataset("frequency_Hz", data=np.array([p.frequency_Hz for p in points])).attrs["units"] = "Hz"
        grid.create_dataset("seed", data=np.array([p.seed for p in points], dtype=np.int64))
        if getattr(rf, "magnetic", False):
            self._write_magnetic_grid(grid, rf, points)
        table = f.create_group("table")
        table.create_group("value")
        table.create_group("stderr")
        f.create_group("points")
        f.flush()

    @staticmethod
    def _write_magnetic_grid(grid, rf, points) -> None:
        """The magnetic grid columns: B in T and in Hx (converted with each mixture's density) and the angle."""
        from ..constants import HUXLEY_T_m3

        density = [rf.build_mixture(i).number_density_m3 for i in range(len(rf.mixtures))]
        given = np.array([p.magnetic_field for p in points])
        per_point = np.array([density[p.mixture_index] for p in points]) * HUXLEY_T_m3
        tesla, hx = (given, given / per_point) if rf.magnetic_unit == "T" else (given * per_point, given)
        grid.create_dataset("magnetic_field_T", data=tesla).attrs["units"] = "T"
        grid.create_dataset("reduced_magnetic_field_Hx", data=hx).attrs["units"] = "Hx"
        grid.create_dataset("field_angle_deg", data=np.array([p.field_angle_deg for p in points])).attrs["units"] = \
            "deg"

    def _check_resumable(self) -> None:
        f, rf, path = self.file, self.runfile, self.path
        _check_type(f, path)
        if f.attrs["config_sha256"] != rf.config_sha256:
            old = json.loads(_text(f["config"][()]))
            new = rf.config()
            changed = sorted(k for k in set(old) | set(new) if old.get(k) != new.get(k))
            raise ConfigError(f"cannot resume '{path}': run file '{rf.source}' differs from the one this file was "
                              f"started with (changed: {', '.join(changed)}); restore the original run file (its "
                              "text is stored in the results file under /runfile) or start a new file with --out")
        stored = {k: _text(v) for k, v in f["crosssections"].attrs.items()}
        if stored != rf.checksums:
            changed = sorted(k for k in set(stored) | set(rf.checksums) if stored.get(k) != rf.checksums.get(k))
            detail = "; ".join(f"{k}: {str(stored.get(k, 'absent'))[:12]} in the file, "
                               f"{str(rf.checksums.get(k, 'absent'))[:12]} now" for k in changed)
            raise ConfigError(f"cannot resume '{path}': the cross sections changed since it was started ({detail});"
                              " restore the original cross-section files or start a new file with --out")
        started = _text(f.attrs["package_version"])
        if started != __version__:
            raise ConfigError(f"cannot resume '{path}': it was started with avalanche {started} "
                              f"and this is avalanche {__version__}, so the points would not be computed alike; "
                              "resume with the original version or start a new file with --out")

    # -- commits
    def _fresh_group(self, index: int) -> h5py.Group:
        """Remove any earlier attempt of point ``index`` (group and table rows) and create its group."""
        name = f"{index:06d}"
        points = self.file["points"]
        if name in points:
            del points[name]
        for part in ("value", "stderr"):
            for column in self.file["table"][part].values():
                column[index] = np.nan
        return points.create_group(name)

    def _column(self, part: str, quantity: str, units: str) -> h5py.Dataset:
        group = self.file["table"][part]
        name = _column_name(quantity)
        if name not in group:
            column = group.create_dataset(name, data=np.full(len(self.runfile.points), np.nan))
            column.attrs.update({"quantity": quantity, "units": units})
        return group[name]

    def _point_attrs(self, group: h5py.Group, point, info: Mapping) -> None:
        group.attrs.update({"sweep_index": point.index, "sweep_seed": point.seed,
                            "sweep_attempts": int(info.get("attempts", 1)),
                            "sweep_wall_seconds": float(info.get("wall_seconds", np.nan)),
                            "sweep_worker": str(info.get("worker", "")), "sweep_finished_utc": _now(),
                            "sweep_warnings": json.dumps(list(info.get("warnings", [])))})

    def commit(self, point, result, info: Mapping | None = None) -> None:
        """Write a finished point: its full result, its table rows, then its status; flush.

        Parameters
        ----------
        point : avalanche.sweep.runfile.Point
        result :
            The point's result (an engine ``SwarmResult``).
        info : mapping, optional
            ``attempts``, ``wall_seconds`` [s], ``worker`` (host:pid) and ``warnings`` (list of str).
        """
        info = info or {}
        try:
            group = self._fresh_group(point.index)
            self._write_payload(group, result)
            self._point_attrs(group, point, info)
            group.attrs["sweep_converged"] = bool(getattr(result, "converged", True))
            group.attrs["sweep_convergence_notes"] = json.dumps(list(getattr(result, "convergence_notes", [])))
            for quantity, (value, stderr, units) in headline_values(result).items():
                self._column("value", quantity, units)[point.index] = value
                self._column("stderr", quantity, units)[point.index] = stderr
            group.attrs["sweep_status"] = STATUS_OK
            self.file.flush()
        except OSError as exc:
            raise self._write_error(exc, point) from None
        self.finished.add(point.index)

    def _write_error(self, exc: OSError, point) -> AvalancheError:
        from .files import disk_error

        error = disk_error(exc, self.path, f"committing point {point.index}")
        self.broken = True
        return AvalancheError(f"{error}; the {len(self.finished)} points committed before are intact (the "
                              "interrupted one counts as missing): continue with --resume")

    def commit_failure(self, point, reason: str, info: Mapping | None = None) -> None:
        """Record that a point failed, with the reason; flush. A resumed sweep tries it again."""
        try:
            group = self._fresh_group(point.index)
            self._point_attrs(group, point, info or {})
            group.attrs["sweep_reason"] = str(reason)
            group.attrs["sweep_status"] = STATUS_FAILED
            self.file.flush()
        except OSError as exc:
            raise self._write_error(exc, point) from None
        self.finished.discard(point.index)

    def close(self) -> None:
        """Flush and close the file, then release the lock. After a failed write (full disk) the close may fail
        too; the committed points are on disk already, so that failure is ignored."""
        try:
            if self.file.id.valid:
                self.file.close()
        except OSError:
            if not self.broken:
                raise
        finally:
            self._lock.release()

    def __enter__(self):
        return self

    def __exit__(self, *exc):
        self.close()


# ---------------------------------------------------------------------------------------------------- reading

@dataclass
class SweepResults:
    """A sweep's results, read by :func:`open_results`. Small data are loaded at once; a point's full result is
    read on demand by :meth:`point`.

    Attributes
    ----------
    path : Path
    attrs : dict
        The file's root attributes (package version, seeds, hashes, dates, mode...).
    runfile_text, config : str, dict
        The run file's text and the canonical configuration it was started with.
    checksums : dict
        Species → cross-section checksum.
    mixtures : list of str
        Mixture labels; ``grid["mixture_index"]`` indexes them.
    grid : numpy.ndarray
        Structured array, one row per point: ``index``, ``mixture_index``, ``mixture``, ``reduced_field_Td``
        [Td], ``frequency_Hz`` [Hz], ``seed``, ``status`` ("ok", "failed" or "missing"), ``magnetic_field_T`` [T],
        ``reduced_magnetic_field_Hx`` [Hx], ``field_angle_deg`` [deg] (0, 0, 90 for a sweep without a magnetic
        field), ``converged`` (False for a finished point marked not converged: not relaxed, or a NaN estimate).
    units : dict
        Quantity → units of every tabulated quantity, in table order.
    failures : list of dict
        ``index``, ``reason``, ``attempts`` of every failed point.
    not_converged : list of dict
        ``index`` and ``notes`` (the reasons) of every finished point marked not converged.
    """

    path: Path
    attrs: dict
    runfile_text: str
    config: dict
    checksums: dict
    mixtures: list
    grid: np.ndarray
    units: dict
    failures: list
    _values: dict
    _stderrs: dict
    _read_payload: Callable | None = None
    not_converged: list = field(default_factory=list)

    @property
    def quantities(self) -> list[str]:
        """Names of the tabulated quantities (headline order, then rate coefficients alphabetically)."""
        return list(self.units)

    @property
    def complete(self) -> bool:
        """True when every point finished with status "ok"."""
        return bool(np.all(self.grid["status"] == STATUS_OK))

    def __len__(self) -> int:
        return len(self.grid)

    def value(self, quantity: str) -> np.ndarray:
        """Values of ``quantity`` per point (NaN where the point did not finish or lacks it), in its units."""
        return self._values[self._known(quantity)].copy()

    def stderr(self, quantity: str) -> np.ndarray:
        """Standard errors of ``quantity`` per point (NaN where unavailable)."""
        return self._stderrs[self._known(quantity)].copy()

    def _known(self, quantity: str) -> str:
        if quantity not in self.units:
            from ..gas.crosssections import _did_you_mean

            raise ConfigError(f"{self.path}: no quantity '{quantity}' in the table"
                              f"{_did_you_mean(quantity, self.units)}; quantities are {self.quantities}")
        return quantity

    @property
    def table(self) -> np.ndarray:
        """The coefficient table: a structured array with the grid columns, then ``<q>`` and ``<q>_stderr`` for
        every quantity q (in :attr:`units`)."""
        grid_fields = [(name, self.grid.dtype[name]) for name in self.grid.dtype.names]
        fields = grid_fields + [(f"{q}{suffix}", np.float64) for q in self.units for suffix in ("", "_stderr")]
        table = np.zeros(len(self.grid), dtype=fields)
        for name, _ in grid_fields:
            table[name] = self.grid[name]
        for q in self.units:
            table[q] = self._values[q]
            table[f"{q}_stderr"] = self._stderrs[q]
        return table

    def point(self, index: int):
        """The full result of point ``index`` (an engine ``SwarmResult``).

        Raises
        ------
        AvalancheError
            When the point failed or has not been computed.
        """
        index = int(index)
        if not 0 <= index < len(self.grid):
            raise ConfigError(f"{self.path}: point index {index} out of range 0..{len(self.grid) - 1}")
        status = self.grid["status"][index]
        if status != STATUS_OK:
            reason = next((f["reason"] for f in self.failures if f["index"] == index), "not computed yet")
            raise AvalancheError(f"{self.path}: point {index} has status '{status}' ({reason})")
        read = self._read_payload or engine_payload_io()[1]
        with _open(self.path, "r") as f:
            return read(f["points"][f"{index:06d}"])

    def to_pandas(self):
        """The table as a :class:`pandas.DataFrame` (pandas is imported only here; it is optional)."""
        try:
            import pandas as pd
        except ImportError:
            raise AvalancheError("to_pandas() needs pandas, which is not installed (pip install pandas); "
                                 "SweepResults.table gives the same table as a numpy structured array") from None
        table = self.table
        return pd.DataFrame({name: table[name] for name in table.dtype.names})


def _text(value) -> str:
    return value.decode() if isinstance(value, bytes) else str(value)


def open_results(path: str | Path, *, payload_io: PayloadIO | None = None) -> SweepResults:
    """Open a sweep results file for reading.

    Points without a committed status (an interrupted write) count as missing, and their table rows as NaN.

    Parameters
    ----------
    path : str or Path
    payload_io : (write, read), optional
        How points' full results are read; default :func:`engine_payload_io` (imported on first use).

    Raises
    ------
    AvalancheError
        When the file is not a sweep results file, has another format version, or cannot be opened.
    """
    path = Path(path)
    if not path.is_file():
        raise ConfigError(f"results file '{path}' not found" if not path.exists() else
                          f"results file '{path}' is not a regular file; give the .h5 file written by avalanche sweep")
    reason = incomplete_reason(path)
    if reason is not None:
        raise AvalancheError(_incomplete_message(path, reason))
    with _open(path, "r") as f:
        _check_type(f, path)
        n = int(f.attrs["n_points"])
        status = _point_statuses(f, n)
        ok = status == STATUS_OK
        g = f["grid"]
        mixtures = [_text(s) for s in g["mixture"][()]]
        mixture_index = g["mixture_index"][()]
        width = max((len(m) for m in mixtures), default=1)
        grid = np.zeros(n, dtype=[("index", np.int64), ("mixture_index", np.int64), ("mixture", f"U{width}"),
                                  ("reduced_field_Td", np.float64), ("frequency_Hz", np.float64),
                                  ("seed", np.int64), ("status", "U7"), ("magnetic_field_T", np.float64),
                                  ("reduced_magnetic_field_Hx", np.float64), ("field_angle_deg", np.float64),
                                  ("converged", bool)])
        grid["index"] = np.arange(n)
        grid["mixture_index"] = mixture_index
        grid["mixture"] = [mixtures[i] for i in mixture_index]
        grid["reduced_field_Td"] = g["reduced_field_Td"][()]
        grid["frequency_Hz"] = g["frequency_Hz"][()]
        grid["seed"] = g["seed"][()]
        grid["status"] = status.astype(str)
        for name, default in (("magnetic_field_T", 0.0), ("reduced_magnetic_field_Hx", 0.0), ("field_angle_deg", 90.0)):
            grid[name] = g[name][()] if name in g else default
        grid["converged"] = True
        not_converged = []
        for i in np.flatnonzero(ok):
            attrs = f["points"][f"{i:06d}"].attrs
            if not bool(attrs.get("sweep_converged", True)):
                grid["converged"][i] = False
                not_converged.append({"index": int(i),
                                      "notes": json.loads(_text(attrs.get("sweep_convergence_notes", "[]")))})
        columns = {}
        for column in f["table"]["value"].values():
            quantity = _text(column.attrs["quantity"])
            values = np.where(ok, column[()], np.nan)
            errors = np.where(ok, f["table"]["stderr"][column.name.rsplit("/", 1)[1]][()], np.nan)
            columns[quantity] = (_text(column.attrs["units"]), values, errors)
        order = [q for q, _ in headline_quantities() if q in columns]
        order += sorted(q for q in columns if q not in order)
        failures = []
        for i in np.flatnonzero(status == STATUS_FAILED):
            attrs = f["points"][f"{i:06d}"].attrs
            failures.append({"index": int(i), "reason": _text(attrs.get("sweep_reason", "")),
                             "attempts": int(attrs.get("sweep_attempts", 0))})
        return SweepResults(
            path=path, attrs={k: (_text(v) if isinstance(v, bytes) else v) for k, v in f.attrs.items()},
            runfile_text=_text(f["runfile"][()]), config=json.loads(_text(f["config"][()])),
            checksums={k: _text(v) for k, v in f["crosssections"].attrs.items()}, mixtures=mixtures, grid=grid,
            units={q: columns[q][0] for q in order}, failures=failures,
            _values={q: columns[q][1] for q in order}, _stderrs={q: columns[q][2] for q in order},
            _read_payload=(payload_io[1] if payload_io else None), not_converged=not_converged)
