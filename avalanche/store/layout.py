"""Parts shared by every results file (format version 2): the root attributes, value/stderr datasets, dimension
scales, inputs as attributes, and the cross-section sets used.

Every results file — a single time-of-flight point (``avalanche swarm --out``), a steady-state Townsend point
(``avalanche townsend --out``) and a sweep — has ``file_type = "avalanche-results"`` and a ``kind`` attribute
(:data:`KINDS`), and the same layout (see :mod:`avalanche.store.sweep_file`), so ``open_results``, ``avalanche
plot`` and ``avalanche table`` read any of them. One value/stderr layout: a quantity ``q`` is a dataset ``q`` and
a dataset ``q_stderr`` of the same shape, each with ``units``, ``long_name`` (plain words) and ``symbol`` from
:mod:`avalanche.quantities`. Array dimensions are HDF5 dimension scales, so netCDF readers (xarray with the
h5netcdf engine) see named dimensions.
"""

from __future__ import annotations

import json
import platform
import sys
from collections.abc import Mapping
from datetime import UTC, datetime

import h5py
import numpy as np

from .. import quantities as Q
from .._version import __version__
from ..errors import AvalancheError

FILE_TYPE = "avalanche-results"
FORMAT_VERSION = 2
KINDS = ("point", "steady-state", "sweep")
"""``kind`` attribute: a single time-of-flight point, a single steady-state Townsend point, a sweep."""
OLD_FILE_TYPES = ("avalanche-sweep", "avalanche swarm point", "avalanche townsend point")
"""``file_type`` of the files of avalanche 0.1 (format version 1)."""


def software_versions() -> dict[str, str]:
    """Versions of avalanche and of the software that computed a result (recorded in every file)."""
    import numba
    import scipy

    return {"package_version": __version__, "python_version": platform.python_version(),
            "numpy_version": np.__version__, "numba_version": numba.__version__, "scipy_version": scipy.__version__,
            "h5py_version": h5py.__version__, "hdf5_version": h5py.version.hdf5_version,
            "platform": f"{sys.platform} {platform.machine()}"}


def write_root(f: h5py.File, kind: str, **attrs) -> None:
    """The root attributes: ``file_type``, ``kind``, ``format_version``, ``created_utc``, the software versions
    (:func:`software_versions`) and ``attrs``."""
    f.attrs.update({"file_type": FILE_TYPE, "kind": kind, "format_version": FORMAT_VERSION,
                    "created_utc": datetime.now(UTC).isoformat(timespec="seconds"), **software_versions(), **attrs})


def check_root(f: h5py.File, path) -> str:
    """The ``kind`` of the results file ``f`` (opened from ``path``).

    Raises
    ------
    AvalancheError
        A file of an older avalanche version (re-run it, or read it with that version), of another format
        version, or not an avalanche results file.
    """
    file_type = _text(f.attrs.get("file_type", ""))
    if file_type in OLD_FILE_TYPES:
        old = _text(f.attrs.get("package_version", "0.1"))
        raise AvalancheError(f"'{path}' was written by an older avalanche version ({old}, file_type "
                             f"'{file_type}', format 1); this avalanche {__version__} reads format "
                             f"{FORMAT_VERSION}: re-run the point or sweep with this version (its run file or "
                             "command line), or read the file with the version that wrote it")
    if file_type != FILE_TYPE:
        raise AvalancheError(f"'{path}' is not an avalanche results file (file_type = {file_type!r}, expected "
                             f"'{FILE_TYPE}'); give a file written by avalanche swarm/townsend --out or sweep")
    version = int(f.attrs.get("format_version", -1))
    if version != FORMAT_VERSION:
        raise AvalancheError(f"'{path}' has results format version {version}; this avalanche {__version__} reads "
                             f"version {FORMAT_VERSION}: read it with the avalanche version that wrote it "
                             f"({_text(f.attrs.get('package_version', '?'))})")
    kind = _text(f.attrs.get("kind", ""))
    if kind not in KINDS:
        raise AvalancheError(f"'{path}': unknown kind {kind!r}; expected one of {', '.join(KINDS)}")
    return kind


def _text(value) -> str:
    return value.decode() if isinstance(value, bytes) else str(value)


def describe(ds: h5py.Dataset, name: str, **extra) -> h5py.Dataset:
    """Set ``units``, ``long_name`` and ``symbol`` of quantity ``name`` (from :mod:`avalanche.quantities`) and
    ``extra`` on ``ds``."""
    ds.attrs.update({"units": Q.unit(name), "long_name": Q.label(name), "symbol": Q.symbol(name), **extra})
    return ds


def scale(group: h5py.Group, name: str, data, units: str = "", **attrs) -> h5py.Dataset:
    """A dimension-scale dataset ``name`` in ``group`` (a netCDF dimension of that name)."""
    ds = group.create_dataset(name, data=data)
    ds.make_scale(name)
    ds.attrs.update({"units": units, **attrs} if units else attrs)
    return ds


def attach(ds: h5py.Dataset, *scales: h5py.Dataset) -> h5py.Dataset:
    """Attach ``scales`` to the dimensions of ``ds`` in order."""
    for axis, s in enumerate(scales):
        ds.dims[axis].attach_scale(s)
    return ds


def attach_dims(group: h5py.Group, ds: h5py.Dataset, names) -> h5py.Dataset:
    """Attach a dimension scale to every dimension of ``ds``: the scale ``names[k]`` of ``group`` when it exists
    with the right length, else an index scale of that name created in ``group`` (``<name>_<length>`` when the
    name is taken by a scale of another length). netCDF readers need every dimension of a variable named."""
    for axis, size in enumerate(ds.shape):
        name = names[axis] if axis < len(names) else f"{ds.name.rsplit('/', 1)[1]}_dim{axis}"
        if name in group and group[name].shape != (size,):
            name = f"{name}_{size}"
        if name not in group:
            scale(group, name, np.arange(size, dtype=np.int64))
        ds.dims[axis].attach_scale(group[name])
    return ds


def write_pair(group: h5py.Group, name: str, value, stderr, scales=(), **extra) -> None:
    """Datasets ``name`` and ``name_stderr`` (arrays of one shape, or scalars), described from the table of
    quantities, with ``scales`` attached."""
    for key, data in ((name, value), (name + Q.STDERR_SUFFIX, stderr)):
        ds = group.create_dataset(key, data=np.asarray(data, dtype=float))
        describe(ds, name, **extra)
        attach(ds, *scales)


def read_pairs(group: h5py.Group) -> dict[str, tuple[np.ndarray, np.ndarray, dict]]:
    """Name → (value, stderr, attributes) of every pair written by :func:`write_pair` in ``group``."""
    out = {}
    for name, ds in group.items():
        if not isinstance(ds, h5py.Dataset) or name.endswith(Q.STDERR_SUFFIX) or \
                name + Q.STDERR_SUFFIX not in group:
            continue
        out[name] = (ds[()], group[name + Q.STDERR_SUFFIX][()], {k: _text(v) if isinstance(v, bytes) else v
                                                                  for k, v in ds.attrs.items()})
    return out


def json_text(value) -> str:
    return json.dumps(value, default=lambda v: v.tolist() if isinstance(v, np.ndarray) else str(v))


def write_inputs(group: h5py.Group, inputs: dict) -> None:
    """The run's inputs as a group of their own: numbers, strings and lists of them as attributes, mappings as
    subgroups (and the whole as ``inputs_json`` on ``group`` for an exact read-back)."""
    group.attrs["inputs_json"] = json_text(inputs)
    _attributes(group.create_group("inputs"), inputs)


def _attributes(group: h5py.Group, data: dict) -> None:
    for key, value in data.items():
        key = str(key).replace("/", "_") or "_"
        if isinstance(value, dict):
            _attributes(group.create_group(key), value)
        elif value is None:
            group.attrs[key] = "none"
        elif isinstance(value, (bool, int, float, str, np.integer, np.floating, np.bool_)):
            group.attrs[key] = value
        else:
            try:
                array = np.asarray(value)
                group.attrs[key] = array.astype(h5py.string_dtype()) if array.dtype.kind in "UO" else array
            except (TypeError, ValueError):
                group.attrs[key] = json_text(value)


def write_crosssections(group: h5py.Group, sets: dict) -> None:
    """Species → :class:`~avalanche.gas.crosssections.CrossSectionSet`: each set's full text (the project's TOML
    format) as a dataset ``set_<k>`` with attributes ``species`` and ``checksum``; the checksums also as
    attributes of ``group`` (species → SHA-256)."""
    from ..gas.crosssections import dumps_set

    for k, (species, xs) in enumerate(sorted(sets.items())):
        checksum = xs.checksum()
        ds = group.create_dataset(f"set_{k:03d}", data=dumps_set(xs), dtype=h5py.string_dtype())
        ds.attrs.update({"species": species, "checksum": checksum})
        group.attrs[species] = checksum


def read_crosssections(group: h5py.Group, where: str) -> dict:
    """Species → :class:`~avalanche.gas.crosssections.CrossSectionSet` stored by :func:`write_crosssections`."""
    import tomllib

    from ..gas.crosssections import parse_set

    out = {}
    for ds in group.values():
        species = _text(ds.attrs["species"])
        out[species] = parse_set(tomllib.loads(_text(ds[()])), f"{where}:{ds.name}")
    return out


STATUS_OK = "ok"
"""``sweep_status`` of a committed point."""
RATE_PREFIX = Q.RATE_PREFIX
"""Every per-process rate coefficient of a point enters the table as ``rate_coefficient_<process>`` [m^3/s]
(:func:`avalanche.quantities.rate_name`), with the exact label in the column's ``process`` attribute."""
GRID_COLUMNS = ("mixture_index", "reduced_field_Td", "frequency_Hz", "seed")
MAGNETIC_COLUMNS = ("magnetic_field_T", "reduced_magnetic_field_Hx", "field_angle_deg")


def headline_quantities() -> tuple[tuple[str, str], ...]:
    """(name, units) of the scalar quantities of a result, in display order (the time-of-flight estimates, then
    the steady-state ones); those a point's result has are copied into the table."""
    from ..engine.results import ESTIMATES

    names = [name for name, _, _ in ESTIMATES] + ["relaxation_length_m"]
    return tuple((name, Q.unit(name)) for name in names)


def headline_values(result) -> dict[str, tuple[float, float, str]]:
    """Name → (value, standard error, units) of every quantity of the table ``result`` has.

    A quantity counts when the result has an attribute of that name with ``.value`` and ``.stderr`` (an
    ``Estimate``); rate coefficients come from the mapping ``result.rate_coefficients``, named by
    :func:`avalanche.quantities.rate_names` (:func:`rate_processes` gives their process labels).
    """
    out = {}
    for name, units in headline_quantities():
        estimate = getattr(result, name, None)
        if hasattr(estimate, "value") and hasattr(estimate, "stderr"):
            out[name] = (float(estimate.value), float(estimate.stderr), units)
    rates = getattr(result, "rate_coefficients", None)
    if isinstance(rates, Mapping):
        for label, name in Q.rate_names(rates).items():
            out[name] = (float(rates[label].value), float(rates[label].stderr), Q.RATE_UNIT)
    return out


def rate_processes(result) -> dict[str, str]:
    """Rate-coefficient quantity name → process label of ``result``'s rate coefficients."""
    rates = getattr(result, "rate_coefficients", None)
    return {name: label for label, name in Q.rate_names(rates).items()} if isinstance(rates, Mapping) else {}


def write_table_row(table: h5py.Group, index: int, result) -> None:
    """Row ``index`` of ``/table``: every quantity of :func:`headline_values` (columns created on first use)."""
    processes = rate_processes(result)
    for quantity, (value, stderr, _) in headline_values(result).items():
        value_column, stderr_column = table_columns(table, quantity, processes.get(quantity, ""))
        value_column[index], stderr_column[index] = value, stderr


def create_layout(f: h5py.File, kind: str, attrs: dict, *, grid: dict, labels: list, compositions: list,
                  config_json: str, runfile_text: str, sets: dict, checksums: dict) -> None:
    """The parts every results file has before its points (see the module notes): root attributes, run file,
    configuration, cross-section sets, mixtures and the table's coordinates (``grid``: column → (n,) array)."""
    import hashlib

    n = len(grid["reduced_field_Td"])
    write_root(f, kind, n_points=n, **attrs)
    f.create_dataset("runfile", data=runfile_text, dtype=h5py.string_dtype()).attrs["sha256"] = \
        hashlib.sha256(runfile_text.encode()).hexdigest()
    f.create_dataset("config", data=config_json, dtype=h5py.string_dtype()).attrs["sha256"] = \
        hashlib.sha256(config_json.encode()).hexdigest()
    crosssections = f.create_group("crosssections")
    write_crosssections(crosssections, sets)
    crosssections.attrs.update(checksums)
    mixtures = f.create_group("mixtures")
    index = scale(mixtures, "mixture", np.arange(len(labels), dtype=np.int64))
    attach(mixtures.create_dataset("label", data=list(labels), dtype=h5py.string_dtype()), index)
    attach(mixtures.create_dataset("composition_json", data=list(compositions), dtype=h5py.string_dtype()), index)
    table = f.create_group("table")
    point = scale(table, "point", np.arange(n, dtype=np.int64))
    for name, values in grid.items():
        describe(attach(table.create_dataset(name, data=values), point), name)
    label = table.create_dataset("mixture", data=[labels[i] for i in grid["mixture_index"]],
                                 dtype=h5py.string_dtype())
    attach(label, point).attrs["long_name"] = "mixture"
    f.create_group("points")


def table_columns(table: h5py.Group, quantity: str, process: str = "") -> tuple[h5py.Dataset, h5py.Dataset]:
    """The columns ``quantity`` and ``quantity_stderr`` of ``/table`` (created, NaN-filled, on first use)."""
    if quantity not in table:
        coordinates = " ".join(name for name in ("mixture", *GRID_COLUMNS, *MAGNETIC_COLUMNS) if name in table)
        extra = {"quantity": quantity, "coordinates": coordinates, **({"process": process} if process else {})}
        for name in (quantity, quantity + Q.STDERR_SUFFIX):
            column = table.create_dataset(name, data=np.full(table["point"].shape[0], np.nan))
            describe(attach(column, table["point"]), quantity, **extra)
    return table[quantity], table[quantity + Q.STDERR_SUFFIX]


def write_estimates(group: h5py.Group, estimates: dict, rates: dict | None = None) -> None:
    """Every estimate (name → ``Estimate``) as a scalar pair, then the rate coefficients (process label →
    ``Estimate``) under their quantity names with the ``process`` attribute."""
    for name, e in estimates.items():
        write_pair(group, name, e.value, e.stderr)
    for key, name in Q.rate_names(rates or {}).items():
        write_pair(group, name, rates[key].value, rates[key].stderr, process=key)


def read_estimates(group: h5py.Group) -> tuple[dict, dict]:
    """(estimates, rate coefficients by process label) written by :func:`write_estimates`."""
    from ..engine.results import Estimate

    estimates, rates = {}, {}
    for name, (value, stderr, attrs) in read_pairs(group).items():
        e = Estimate(float(value), float(stderr))
        if "process" in attrs:
            rates[str(attrs["process"])] = e
        else:
            estimates[name] = e
    return estimates, rates
