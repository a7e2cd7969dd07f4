"""HDF5 layout of a steady-state Townsend point (:class:`avalanche.engine.townsend.TownsendResult`).

:func:`avalanche.store.point.write_result` and :func:`avalanche.store.point.read_result` dispatch here, so a single
point file and a
sweep's per-point groups hold either kind. Layout of a point group:

* attributes: ``file_type`` = "avalanche townsend point", ``format_version`` (checked on read),
  ``package_version``, ``created_utc``, ``mode`` = "steady-state-townsend", ``reduced_field_Td``,
  ``temperature_K``, ``number_density_m3``, ``mixture`` (label), ``seed`` (JSON), ``stop_reason``, ``events``,
  ``pilot_events``, ``batches``, ``cpu_seconds``, ``wall_seconds``, ``equilibrium_from_m``,
  ``extrapolated_fraction``; JSON text: ``inputs_json``, ``composition_json``, ``checksums_json``,
  ``provenance_json``, ``anomalies_json``.
* ``estimates/<name>``: float64 (2,) = (value, standard error), attributes ``units`` and ``description``.
* ``time_of_flight/<name>``: the same for the time-of-flight comparison (present, possibly empty).
* ``profiles/<name>``: per plane (J + 1,) or per slab (J,), each with ``units``.
* ``tallies/<name>``: the raw per-replica sums, each with ``units`` and ``description``.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime

import h5py
import numpy as np

from .._version import __version__
from ..engine.results import Estimate
from ..errors import AvalancheError

FILE_TYPE = "avalanche townsend point"
FORMAT_VERSION = 1
_SCALARS = ("events", "pilot_events", "batches", "cpu_seconds", "wall_seconds", "equilibrium_from_m",
            "extrapolated_fraction")
_EXTRA_TALLIES = {"process_counts": ("1", "real collisions per process (unweighted)"),
                  "extrapolated_counts": ("1", "real collisions beyond the process's table (unweighted)")}


def _json(value) -> str:
    return json.dumps(value, default=lambda v: v.tolist() if isinstance(v, np.ndarray) else str(v))


def _estimates(group: h5py.Group, estimates: dict, described: dict) -> None:
    for name, e in estimates.items():
        ds = group.create_dataset(name, data=np.array([e.value, e.stderr]))
        units, description = described.get(name, ("", ""))
        ds.attrs.update({"units": units, "description": description, "columns": "value, stderr"})


def write_townsend(group: h5py.Group, result) -> None:
    """Write a :class:`~avalanche.engine.townsend.TownsendResult` into the (empty) HDF5 group ``group``."""
    from ..engine.results import ESTIMATES
    from ..engine.townsend import PROFILE_UNITS, TOWNSEND_ESTIMATES
    from ..engine.townsend_estimators import TALLY_FIELDS

    inputs = result.inputs
    mixture = inputs.get("mixture", {})
    attrs = group.attrs
    attrs.update({"file_type": FILE_TYPE, "format_version": FORMAT_VERSION, "package_version": __version__,
                  "created_utc": datetime.now(UTC).isoformat(timespec="seconds"), "mode": "steady-state-townsend",
                  "reduced_field_Td": float(result.reduced_field_Td),
                  "temperature_K": float(mixture.get("temperature_K", np.nan)),
                  "number_density_m3": float(mixture.get("number_density_m3", np.nan)),
                  "mixture": str(inputs.get("label", "")), "seed": _json(inputs.get("seed")),
                  "stop_reason": result.stop_reason, "inputs_json": _json(inputs),
                  "composition_json": _json(mixture.get("composition", {})),
                  "checksums_json": _json(mixture.get("checksums", {})),
                  "provenance_json": _json(inputs.get("provenance", {})), "anomalies_json": _json(result.anomalies)})
    for name in _SCALARS:
        attrs[name] = getattr(result, name)
    _estimates(group.create_group("estimates"), result.estimates,
               {n: (u, d) for n, u, d in TOWNSEND_ESTIMATES})
    _estimates(group.create_group("time_of_flight"), result.comparison, {n: (u, d) for n, u, d in ESTIMATES})
    profiles = group.create_group("profiles")
    for name, values in result.profiles.items():
        profiles.create_dataset(name, data=np.asarray(values)).attrs["units"] = PROFILE_UNITS.get(
            name.removesuffix("_stderr"), "")
    tallies = group.create_group("tallies")
    described = {n: (u, d) for n, (_, u, d) in TALLY_FIELDS.items()} | _EXTRA_TALLIES
    for name, values in result.tallies.items():
        ds = tallies.create_dataset(name, data=np.asarray(values))
        ds.attrs["units"], ds.attrs["description"] = described.get(name, ("", ""))


def read_townsend(group: h5py.Group):
    """Read a :class:`~avalanche.engine.townsend.TownsendResult` written by :func:`write_townsend`.

    Raises
    ------
    AvalancheError
        If the group is not a Townsend point, has another format version, or lacks a part (named).
    """
    from ..engine.townsend import TownsendResult

    where = f"{group.file.filename}:{group.name}"
    attrs = group.attrs
    if attrs.get("file_type") != FILE_TYPE:
        raise AvalancheError(f"{where}: not an avalanche townsend point (file_type = {attrs.get('file_type')!r})")
    version = int(attrs.get("format_version", -1))
    if version != FORMAT_VERSION:
        raise AvalancheError(f"{where}: townsend format_version = {version}; this avalanche ({__version__}) reads "
                             f"version {FORMAT_VERSION}")
    try:
        def estimates(name):
            return {k: Estimate(float(ds[0]), float(ds[1])) for k, ds in group[name].items()}

        inputs = json.loads(attrs["inputs_json"])
        if isinstance(inputs.get("seed"), list):
            inputs["seed"] = tuple(inputs["seed"])
        return TownsendResult(
            reduced_field_Td=float(attrs["reduced_field_Td"]), estimates=estimates("estimates"),
            profiles={k: ds[()] for k, ds in group["profiles"].items()}, comparison=estimates("time_of_flight"),
            equilibrium_from_m=float(attrs["equilibrium_from_m"]), events=int(attrs["events"]),
            pilot_events=int(attrs["pilot_events"]), batches=int(attrs["batches"]),
            cpu_seconds=float(attrs["cpu_seconds"]), wall_seconds=float(attrs["wall_seconds"]),
            stop_reason=str(attrs["stop_reason"]), extrapolated_fraction=float(attrs["extrapolated_fraction"]),
            anomalies=json.loads(attrs["anomalies_json"]), inputs=inputs,
            tallies={k: ds[()] for k, ds in group["tallies"].items()})
    except KeyError as exc:
        raise AvalancheError(f"{where}: incomplete townsend point, missing {exc}; the file is damaged or was not "
                             "written by avalanche") from None
