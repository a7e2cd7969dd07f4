"""The results file (HDF5, format version 2) of a sweep, a single point or a steady-state point: one layout,
one group per point, a table of every scalar quantity, provenance, and the crash-safe commit protocol that makes
``--resume`` possible.

Layout (names and units from :mod:`avalanche.quantities`; shared parts in :mod:`avalanche.store.layout`)::

    /                      attrs: file_type = "avalanche-results", kind = "sweep" | "point" | "steady-state",
                                  format_version = 2, created_utc, package_version, python_version,
                                  numpy_version, numba_version, scipy_version, h5py_version, hdf5_version,
                                  platform, name, description, mode, master_seed, n_points, runfile_source,
                                  runfile_sha256, config_sha256
    /runfile               the run file's text (string; empty for a single point); attr sha256
    /config                canonical JSON of everything that determines the results (attr sha256)
    /crosssections/        the cross-section sets used, one string dataset set_<k> each (the project's TOML
                           format, attrs species, checksum); attrs: species -> SHA-256 checksum
    /mixtures/             mixture (m,) index scale; label (m,) strings; composition_json (m,)
    /table/                one row per point on the dimension scale point (n,):
        mixture_index, mixture (labels), reduced_field_Td [Td], frequency_Hz [Hz], seed,
        magnetic_field_T [T], reduced_magnetic_field_Hx [Hx], field_angle_deg [deg] (only in sweeps with a
                           magnetic grid)       coordinates of the points
        <q>, <q>_stderr    (n,) float64, every scalar quantity q of the points (NaN where a point did not finish
                           or lacks it); attrs quantity, units, long_name, symbol, coordinates, and process for
                           the per-process rate coefficients rate_coefficient_<process>
    /points/<index:06d>/   the per-point layout (avalanche.store.point.write_result), plus attrs sweep_index,
                           sweep_seed, sweep_attempts, sweep_wall_seconds, sweep_worker, sweep_finished_utc,
                           sweep_warnings, sweep_reason (failed points) and, written last, sweep_status = "ok" |
                           "failed"

``xarray.open_dataset(path, engine="h5netcdf", group="table")`` gives the table with the dimension ``point`` and
the grid columns as coordinates; :meth:`SweepResults.to_xarray` gives the same without h5netcdf.

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

from .. import quantities as Q
from .._version import __version__
from ..errors import AvalancheError, ConfigError
from .layout import (
    FILE_TYPE,
    FORMAT_VERSION,
    GRID_COLUMNS,
    MAGNETIC_COLUMNS,
    RATE_PREFIX,
    STATUS_OK,
    check_root,
    create_layout,
    headline_quantities,
    headline_values,
    table_columns,
    write_table_row,
)

__all__ = ["FILE_TYPE", "FORMAT_VERSION", "RATE_PREFIX", "STATUS_OK", "GRID_COLUMNS", "MAGNETIC_COLUMNS",
           "ResultsWriter", "SweepResults", "open_results", "headline_quantities", "headline_values", "table_columns",
           "create_layout"]

STATUS_FAILED = "failed"
STATUS_MISSING = "missing"

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
        parts = ("runfile", "config", "crosssections", "mixtures", "table", "points")
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


def _check_type(f: h5py.File, path: Path) -> str:
    return check_root(f, path)


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
        rf = self.runfile
        points = rf.points
        grid = {"mixture_index": np.array([p.mixture_index for p in points], dtype=np.int64),
                "reduced_field_Td": np.array([p.reduced_field_Td for p in points], dtype=float),
                "frequency_Hz": np.array([p.frequency_Hz for p in points], dtype=float),
                "seed": np.array([p.seed for p in points], dtype=np.int64)}
        mixtures = [rf.build_mixture(i) for i in range(len(rf.mixtures))]
        if getattr(rf, "magnetic", False):
            from ..constants import HUXLEY_T_m3

            given = np.array([p.magnetic_field for p in points], dtype=float)
            per_point = np.array([mixtures[p.mixture_index].number_density_m3 for p in points]) * HUXLEY_T_m3
            grid["magnetic_field_T"], grid["reduced_magnetic_field_Hx"] = \
                (given, given / per_point) if rf.magnetic_unit == "T" else (given * per_point, given)
            grid["field_angle_deg"] = np.array([p.field_angle_deg for p in points], dtype=float)
        sets = {c.name: c.cross_sections for m in mixtures for c in m.components}
        create_layout(self.file, "sweep", {
            "name": rf.name, "description": rf.description, "mode": rf.mode, "master_seed": rf.seed,
            "runfile_source": rf.source, "runfile_sha256": rf.text_sha256, "config_sha256": rf.config_sha256},
            grid=grid, labels=[m.label for m in rf.mixtures], compositions=[m.key for m in rf.mixtures],
            config_json=rf.config_json(), runfile_text=rf.text, sets=sets, checksums=rf.checksums)
        self.file.flush()

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
        for column in self.file["table"].values():
            if "quantity" in column.attrs:
                column[index] = np.nan
        return points.create_group(name)

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
            write_table_row(self.file["table"], point.index, result)
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
        Structured array, one row per point (the coordinates of ``/table``): ``index``,
        ``mixture_index``, ``mixture``, ``reduced_field_Td``
        [Td], ``frequency_Hz`` [Hz], ``seed``, ``status`` ("ok", "failed" or "missing"), ``magnetic_field_T`` [T],
        ``reduced_magnetic_field_Hx`` [Hx], ``field_angle_deg`` [deg] (0, 0, 90 for a sweep without a magnetic
        field), ``converged`` (False for a finished point marked not converged: not relaxed, or a NaN estimate).
    units : dict
        Quantity → units of every tabulated quantity, in table order (names of :mod:`avalanche.quantities`).
    processes : dict
        Rate-coefficient quantity → its exact process label.
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
    processes: dict = field(default_factory=dict)

    @property
    def kind(self) -> str:
        """"sweep", "point" (``avalanche swarm --out``) or "steady-state" (``avalanche townsend --out``)."""
        return str(self.attrs.get("kind", "sweep"))

    def crosssections(self) -> dict:
        """Species → the :class:`~avalanche.gas.crosssections.CrossSectionSet` stored in the file (the sets the
        points were computed with)."""
        from .layout import read_crosssections

        with _open(self.path, "r") as f:
            return read_crosssections(f["crosssections"], str(self.path))

    def mixture(self, index: int = 0):
        """The :class:`~avalanche.gas.mixture.Mixture` of mixture ``index``, rebuilt from the file alone: the
        stored cross-section sets, composition, temperature, density and Penning groups. Re-running a point with
        it, the point's seed and settings (``point(i).inputs``) gives the stored result.
        """
        from ..gas.mixture import Mixture

        spec = (self.config.get("mixtures") or [{}])[index]
        done = np.flatnonzero((self.grid["mixture_index"] == index) & (self.grid["status"] == STATUS_OK))
        with _open(self.path, "r") as f:
            composition = spec.get("composition") or json.loads(_text(f["mixtures"]["composition_json"][index]))
            described = (json.loads(_text(f["points"][f"{done[0]:06d}"].attrs["inputs_json"]))["mixture"]
                         if done.size else {})
        sets = self.crosssections()
        penning = (described.get("penning") or {}).get("groups") or spec.get("penning")
        return Mixture(dict(composition),
                       temperature_K=described.get("temperature_K", self.config.get("temperature_K", 300.0)),
                       number_density_m3=described.get("number_density_m3", self.config.get("number_density_m3")),
                       sets={name: sets[name] for name in composition if name in sets}, penning=penning,
                       vibrational_temperature_K=described.get("vibrational_temperature_K"))

    def to_xarray(self):
        """The table as an :class:`xarray.Dataset`: dimension ``point``, the grid columns as coordinates, every
        quantity ``q`` and ``q_stderr`` as variables with ``units`` and ``long_name`` attributes (xarray is
        imported only here; it is optional)."""
        try:
            import xarray as xr
        except ImportError:
            raise AvalancheError("to_xarray() needs xarray, which is not installed (pip install xarray); "
                                 "SweepResults.table gives the same table as a numpy structured array") from None
        coords = {name: ("point", self.grid[name], {"units": Q.unit(name), "long_name": Q.label(name)})
                  for name in self.grid.dtype.names if name != "index"}
        data = {}
        for q in self.units:
            attrs = {"units": self.units[q], "long_name": Q.label(q)}
            if q in self.processes:
                attrs["process"] = self.processes[q]
            data[q] = ("point", self._values[q], attrs)
            data[q + Q.STDERR_SUFFIX] = ("point", self._stderrs[q], attrs)
        return xr.Dataset(data, coords={"point": self.grid["index"], **coords},
                          attrs={k: v for k, v in self.attrs.items() if isinstance(v, (str, int, float))})

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
    """Open a results file for reading: a sweep, a single point (``avalanche swarm --out``) or a steady-state point
    (``avalanche townsend --out``), all in one layout.

    Points without a committed status (an interrupted write) count as missing, and their table rows as NaN.

    Parameters
    ----------
    path : str or Path
    payload_io : (write, read), optional
        How points' full results are read; default :func:`engine_payload_io` (imported on first use).

    Raises
    ------
    AvalancheError
        When the file is not an avalanche results file, was written by an older version (the message says to
        re-run it), has another format version, or cannot be opened.
    """
    path = Path(path)
    if not path.is_file():
        raise ConfigError(f"results file '{path}' not found" if not path.exists() else
                          f"results file '{path}' is not a regular file; give the .h5 file written by avalanche")
    reason = incomplete_reason(path)
    if reason is not None:
        raise AvalancheError(_incomplete_message(path, reason))
    with _open(path, "r") as f:
        _check_type(f, path)
        try:
            return _read(f, path, payload_io)
        except KeyError as exc:
            raise AvalancheError(f"'{path}': damaged results file, missing {exc}; re-run it") from None


def _read(f: h5py.File, path: Path, payload_io) -> SweepResults:
    n = int(f.attrs["n_points"])
    status = _point_statuses(f, n)
    ok = status == STATUS_OK
    t = f["table"]
    mixtures = [_text(s) for s in f["mixtures"]["label"][()]]
    width = max((len(m) for m in mixtures), default=1)
    grid = np.zeros(n, dtype=[("index", np.int64), ("mixture_index", np.int64), ("mixture", f"U{width}"),
                              ("reduced_field_Td", np.float64), ("frequency_Hz", np.float64),
                              ("seed", np.int64), ("status", "U7"), ("magnetic_field_T", np.float64),
                              ("reduced_magnetic_field_Hx", np.float64), ("field_angle_deg", np.float64),
                              ("converged", bool)])
    grid["index"] = np.arange(n)
    for name in GRID_COLUMNS:
        grid[name] = t[name][()]
    grid["mixture"] = [mixtures[i] for i in grid["mixture_index"]]
    grid["status"] = status.astype(str)
    for name, default in zip(MAGNETIC_COLUMNS, (0.0, 0.0, 90.0), strict=True):
        grid[name] = t[name][()] if name in t else default
    grid["converged"] = True
    not_converged = []
    for i in np.flatnonzero(ok):
        attrs = f["points"][f"{i:06d}"].attrs
        if not bool(attrs.get("sweep_converged", True)):
            grid["converged"][i] = False
            not_converged.append({"index": int(i),
                                  "notes": json.loads(_text(attrs.get("sweep_convergence_notes", "[]")))})
    columns, processes = {}, {}
    for name, column in t.items():
        if "quantity" not in column.attrs or name.endswith(Q.STDERR_SUFFIX):
            continue
        values = np.where(ok, column[()], np.nan)
        errors = np.where(ok, t[name + Q.STDERR_SUFFIX][()], np.nan)
        columns[name] = (_text(column.attrs["units"]), values, errors)
        if "process" in column.attrs:
            processes[name] = _text(column.attrs["process"])
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
        _read_payload=(payload_io[1] if payload_io else None), not_converged=not_converged, processes=processes)
