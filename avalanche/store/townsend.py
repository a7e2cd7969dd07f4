"""HDF5 layout of a steady-state Townsend point (:class:`avalanche.engine.townsend.TownsendResult`), format
version 2.

:func:`avalanche.store.point.write_result` and :func:`avalanche.store.point.read_result` dispatch here, so a
results file's points hold either kind. Layout of a point group (names and units from :mod:`avalanche.quantities`):

* attributes: ``payload`` = "steady-state point", ``mode`` = "steady-state-townsend", ``reduced_field_Td``,
  ``temperature_K``, ``number_density_m3``, ``mixture`` (label), ``seed`` (JSON), ``stop_reason``, ``events``,
  ``pilot_events``, ``batches``, ``cpu_seconds``, ``wall_seconds``, ``equilibrium_from_m``,
  ``extrapolated_fraction``; JSON text: ``inputs_json``, ``checksums_json``, ``provenance_json``,
  ``anomalies_json``.
* ``inputs/``: every input as attributes of its own.
* ``estimates/<q>``, ``estimates/<q>_stderr``: scalars, with ``units``, ``long_name`` and ``symbol``.
* ``time_of_flight/<q>``, ``<q>_stderr``: the same for the time-of-flight comparison (present, possibly empty).
* ``profiles/``: dimension scales ``z_m`` (J + 1 planes) and ``slab_center_m`` (J slabs); each profile and its
  ``_stderr`` on one of them, with ``units``.
* ``tallies/<name>``: the raw per-replica sums, each with ``units`` and ``description``.
"""

from __future__ import annotations

import json

import h5py
import numpy as np

from ..errors import AvalancheError
from .layout import attach, attach_dims, json_text, read_estimates, scale, write_estimates, write_inputs

PAYLOAD = "steady-state point"
_SCALARS = ("events", "pilot_events", "batches", "cpu_seconds", "wall_seconds", "equilibrium_from_m",
            "extrapolated_fraction")
_EXTRA_TALLIES = {"process_counts": ("1", "real collisions per process (unweighted)"),
                  "extrapolated_counts": ("1", "real collisions beyond the process's table (unweighted)")}


def write_townsend(group: h5py.Group, result) -> None:
    """Write a :class:`~avalanche.engine.townsend.TownsendResult` into the (empty) HDF5 group ``group``."""
    from ..engine.townsend import PROFILE_UNITS
    from ..engine.townsend_estimators import TALLY_FIELDS

    inputs = result.inputs
    mixture = inputs.get("mixture", {})
    attrs = group.attrs
    attrs.update({"payload": PAYLOAD, "mode": "steady-state-townsend",
                  "reduced_field_Td": float(result.reduced_field_Td),
                  "temperature_K": float(mixture.get("temperature_K", np.nan)),
                  "number_density_m3": float(mixture.get("number_density_m3", np.nan)),
                  "mixture": str(inputs.get("label", "")), "seed": json_text(inputs.get("seed")),
                  "stop_reason": result.stop_reason, "checksums_json": json_text(mixture.get("checksums", {})),
                  "provenance_json": json_text(inputs.get("provenance", {})),
                  "anomalies_json": json_text(result.anomalies)})
    write_inputs(group, inputs)
    for name in _SCALARS:
        attrs[name] = getattr(result, name)
    write_estimates(group.create_group("estimates"), result.estimates)
    write_estimates(group.create_group("time_of_flight"), result.comparison)
    profiles = group.create_group("profiles")
    scales = {}
    for name in ("z_m", "slab_center_m"):
        if name in result.profiles:
            scales[len(result.profiles[name])] = scale(profiles, name, np.asarray(result.profiles[name]), "m")
    for name, values in result.profiles.items():
        if name in ("z_m", "slab_center_m"):
            continue
        ds = profiles.create_dataset(name, data=np.asarray(values))
        ds.attrs["units"] = PROFILE_UNITS.get(name.removesuffix("_stderr"), "")
        if ds.ndim == 1 and ds.shape[0] in scales:
            attach(ds, scales[ds.shape[0]])
    tallies = group.create_group("tallies")
    described = {n: (u, d) for n, (_, u, d) in TALLY_FIELDS.items()} | _EXTRA_TALLIES
    shapes = {n: shape for n, (shape, _, _) in TALLY_FIELDS.items()}
    for name, values in result.tallies.items():
        ds = tallies.create_dataset(name, data=np.asarray(values))
        ds.attrs["units"], ds.attrs["description"] = described.get(name, ("", ""))
        dims = ("process",) if name in _EXTRA_TALLIES else {"J+1": ("plane",), "J": ("slab",)}.get(
            shapes.get(name, ""), ())
        attach_dims(tallies, ds, ("replica", *dims) if ds.ndim > len(dims) else dims)


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
    if attrs.get("payload") != PAYLOAD:
        raise AvalancheError(f"{where}: not a steady-state Townsend point (payload = {attrs.get('payload')!r})")
    try:
        def estimates(name):
            return read_estimates(group[name])[0]

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
