"""HDF5 layout of one time-of-flight swarm point (a :class:`SwarmResult`), format version 2.

A point's group is ``/points/<index:06d>`` of a results file (:mod:`avalanche.store.sweep_file`; a single point
written by :func:`save_result` is a results file of kind "point" with one such group). Names and units come from
:mod:`avalanche.quantities`; every quantity ``q`` is a dataset ``q`` beside ``q_stderr`` with ``units``,
``long_name`` and ``symbol``. Layout of a point group:

* attributes: ``payload`` = "time-of-flight point" (or "steady-state point", :mod:`avalanche.store.townsend`),
  ``reduced_field_Td``, ``temperature_K``, ``number_density_m3``, ``mixture`` (label), ``seed`` (JSON),
  ``stop_reason``, ``precision_on``, ``events``, ``cpu_seconds``, ``wall_seconds``, ``relaxation_time_s``,
  ``sampled_time_s``, ``extrapolated_fraction``, ``converged``, ``stopped_by``; JSON text of the same data as the
  groups below (read back exactly): ``inputs_json``, ``convergence_notes_json``, ``upper_bounds_json``,
  ``checksums_json``, ``provenance_json``, ``anomalies_json``.
* ``inputs/``: every input of the run as attributes of its own (mappings as subgroups: ``inputs/mixture``,
  ``inputs/settings``, ...).
* ``estimates/<q>``, ``estimates/<q>_stderr``: scalar, every estimate; the rate coefficient of each process as
  ``rate_coefficient_<process>`` with the exact label in attribute ``process``.
* ``eedf/``: dimension scales ``energy_eV`` (B,) bin centres and ``energy_edge_eV`` (B + 1,); ``eedf`` and
  ``eedf_stderr`` (B,) [eV^-3/2] on ``energy_eV``; attribute ``overflow_fraction``.
* ``time_series/<name>``: per-chunk series (C,) on the dimension ``chunk``, each with ``units``.
* ``tallies/<name>``: the raw per-replica sums (R, ...) on the dimension ``replica``, with ``units`` and
  ``description``.
* AC points only, ``phase/``: dimension scale ``phase_rad`` (B_φ,) of ωt mod 2π; every phase-resolved quantity
  ``q`` and ``q_stderr`` (B_φ,) on it (per-process rate coefficients as ``rate_coefficient_<process>`` with
  ``process``); the regime as attributes (and ``regime_json``); ``phase/tallies/sums``, ``counts``,
  ``process``: the raw per-replica phase sums.
* Magnetic-field points only, ``magnetic/``: attributes ``magnetic_field_T``, ``reduced_magnetic_field_Hx``,
  ``field_angle_deg``; dimension scales ``axis`` and ``axis_column`` ("E", "ExB", "third", the frame of
  :mod:`avalanche.engine.magnetic`); ``drift_velocity_vector``, ``drift_velocity_bulk_vector`` (3,),
  ``drift_velocity_magnitude``, ``lorentz_angle_deg`` (scalars), ``N_D_tensor_flux``, ``N_D_tensor_bulk``
  (3, 3), each with ``_stderr``. Their raw sums are in ``tallies/``.
"""

from __future__ import annotations

import json
from pathlib import Path

import h5py
import numpy as np

from .. import quantities as Q
from ..engine.results import (
    MAGNETIC_UNITS,
    ArrayEstimate,
    EnergyDistribution,
    Estimate,
    PhaseResolved,
    SwarmResult,
)
from ..engine.tallies import FIELDS, MAGNETIC_FIELDS, SwarmTallies
from ..errors import AvalancheError
from .layout import (
    FILE_TYPE,
    FORMAT_VERSION,
    MAGNETIC_COLUMNS,
    STATUS_OK,
    attach,
    attach_dims,
    check_root,
    create_layout,
    json_text,
    read_estimates,
    read_pairs,
    scale,
    write_estimates,
    write_inputs,
    write_pair,
    write_table_row,
)

__all__ = ["FILE_TYPE", "FORMAT_VERSION", "PAYLOAD", "write_result", "read_result", "save_result", "load_result",
           "write_point_file"]

PAYLOAD = "time-of-flight point"
TIME_SERIES_UNITS = {"time_s": "s", "duration_s": "s", "sampling": "1", "electrons": "1", "log_weight": "1",
                     "energy_max_eV": "eV", "mean_energy_eV": "eV", "drift_velocity_flux": "m/s",
                     "collision_frequency": "1/s", "net_production_frequency": "1/s"}
_SCALARS = ("events", "cpu_seconds", "wall_seconds", "relaxation_time_s", "sampled_time_s", "extrapolated_fraction")
AXES = ("E", "ExB", "third")
TALLY_DIMS = {"B": ("energy_bin",), "P": ("process",), "3": ("axis",), "3x3": ("axis", "axis_column")}
"""Dimension names of the tallies' shape codes (:data:`avalanche.engine.tallies.FIELDS`) after ``replica``."""


def write_result(group: h5py.Group, result: SwarmResult) -> None:
    """Write ``result`` into the (empty) HDF5 group ``group`` in the documented layout (a steady-state Townsend
    result in :mod:`avalanche.store.townsend`'s layout)."""
    if getattr(result, "inputs", {}).get("mode") == "steady-state-townsend":
        from .townsend import write_townsend

        return write_townsend(group, result)
    inputs = result.inputs
    mixture = inputs.get("mixture", {})
    attrs = group.attrs
    attrs["payload"] = PAYLOAD
    attrs["reduced_field_Td"] = float(result.reduced_field_Td)
    attrs["temperature_K"] = float(mixture.get("temperature_K", np.nan))
    attrs["number_density_m3"] = float(mixture.get("number_density_m3", np.nan))
    attrs["mixture"] = str(inputs.get("label", ""))
    attrs["seed"] = json_text(inputs.get("seed"))
    attrs["stop_reason"] = result.stop_reason
    attrs["precision_on"] = result.precision_quantity
    for name in _SCALARS:
        attrs[name] = getattr(result, name)
    write_inputs(group, inputs)
    attrs["checksums_json"] = json_text(mixture.get("checksums", {}))
    attrs["provenance_json"] = json_text(inputs.get("provenance", {}))
    attrs["anomalies_json"] = json_text(result.anomalies)
    attrs["converged"] = bool(result.converged)
    attrs["convergence_notes_json"] = json_text(list(result.convergence_notes))
    attrs["stopped_by"] = str(result.stopped_by)
    attrs["upper_bounds_json"] = json_text(result.upper_bounds)
    write_estimates(group.create_group("estimates"), result.estimates, result.rate_coefficients)
    eedf = group.create_group("eedf")
    eedf.attrs["overflow_fraction"] = float(result.eedf.overflow_fraction)
    centres = scale(eedf, "energy_eV", result.eedf.energy_eV, "eV")
    scale(eedf, "energy_edge_eV", result.eedf.energy_edges_eV, "eV")
    write_pair(eedf, "eedf", result.eedf.value, result.eedf.stderr, (centres,))
    series = group.create_group("time_series")
    if result.time_series:
        chunks = scale(series, "chunk", np.arange(len(np.asarray(next(iter(result.time_series.values()))))))
        for name, values in result.time_series.items():
            ds = series.create_dataset(name, data=np.asarray(values))
            ds.attrs["units"] = TIME_SERIES_UNITS.get(name, "")
            if ds.ndim and ds.shape[0] == chunks.shape[0]:
                attach(ds, chunks)
    if result.tallies is not None:
        tallies = group.create_group("tallies")
        for name, (_, shape, units, description) in {**FIELDS, **MAGNETIC_FIELDS}.items():
            if name not in result.tallies.arrays:
                continue
            ds = tallies.create_dataset(name, data=result.tallies[name])
            ds.attrs["units"] = units.replace("m2", "m^2")
            ds.attrs["description"] = description
            attach_dims(tallies, ds, ("replica", *TALLY_DIMS.get(shape, ())))
    if result.phase is not None:
        _write_phase(group.create_group("phase"), result)
    if result.magnetic is not None:
        _write_magnetic(group.create_group("magnetic"), result)


def _write_magnetic(group: h5py.Group, result: SwarmResult) -> None:
    field = result.inputs.get("magnetic_field", {})
    for name in ("magnetic_field_T", "reduced_magnetic_field_Hx", "field_angle_deg"):
        group.attrs[name] = float(field.get(name, np.nan))
    rows = scale(group, "axis", np.array(AXES, dtype=h5py.string_dtype()))
    columns = scale(group, "axis_column", np.array(AXES, dtype=h5py.string_dtype()))
    for name in MAGNETIC_UNITS:
        e = result.magnetic[name]
        value = np.asarray(e.value, float)
        write_pair(group, name, value, np.asarray(e.stderr, float), (rows, columns)[: value.ndim])


def _read_magnetic(group: h5py.Group) -> dict:
    out = {}
    for name, (value, stderr, _) in read_pairs(group).items():
        out[name] = Estimate(float(value), float(stderr)) if np.ndim(value) == 0 else ArrayEstimate(value, stderr)
    return out


def _write_phase(group: h5py.Group, result: SwarmResult) -> None:
    phase = scale(group, "phase_rad", np.asarray(result.phase, dtype=float), "rad")
    processes = [k for k in result.phase_resolved if not Q.unit(k)]
    names = Q.rate_names(processes)
    for key, entry in result.phase_resolved.items():
        extra = {"process": key} if key in names else {}
        write_pair(group, names.get(key, key), entry.value, entry.stderr, (phase,), **extra)
    for name, value in result.regime.items():
        group.attrs[name] = value
    group.attrs["regime_json"] = json_text(result.regime)
    if result.phase_tallies is not None:
        tallies = group.create_group("tallies")
        for name in ("sums", "counts", "process"):
            ds = tallies.create_dataset(name, data=getattr(result.phase_tallies, name))
            attach_dims(tallies, ds, ("replica", "phase_bin", f"{name}_column"))


def _read_phase(group: h5py.Group) -> dict:
    from ..engine.ac import PhaseTallies

    resolved = {str(attrs.get("process", name)): PhaseResolved(value, stderr)
                for name, (value, stderr, attrs) in read_pairs(group).items()}
    out = {"phase": group["phase_rad"][()], "regime": json.loads(group.attrs["regime_json"]),
           "phase_resolved": resolved}
    if "tallies" in group:
        t = group["tallies"]
        out["phase_tallies"] = PhaseTallies(t["sums"][()], t["counts"][()], t["process"][()])
    return out


def _where(group: h5py.Group) -> str:
    return f"{group.file.filename}:{group.name}"


def read_result(group: h5py.Group) -> SwarmResult:
    """Read a :class:`SwarmResult` written by :func:`write_result` (or a ``TownsendResult``, by its payload).

    Raises
    ------
    AvalancheError
        If the group is not a point, or lacks a part (named in the message).
    """
    where = _where(group)
    attrs = group.attrs
    payload = attrs.get("payload")
    if payload == "steady-state point":
        from .townsend import read_townsend

        return read_townsend(group)
    if payload != PAYLOAD:
        raise AvalancheError(f"{where}: not an avalanche point (attribute payload = {payload!r}); a file of an "
                             "older avalanche version? re-run it with this version")
    try:
        estimates, rate_coefficients = read_estimates(group["estimates"])
        e = group["eedf"]
        eedf = EnergyDistribution(energy_edges_eV=e["energy_edge_eV"][()], value=e["eedf"][()],
                                  stderr=e["eedf_stderr"][()], overflow_fraction=float(e.attrs["overflow_fraction"]))
        time_series = {name: ds[()] for name, ds in group["time_series"].items() if name != "chunk"}
        tallies = None
        if "tallies" in group:
            stored = group["tallies"]
            arrays = {name: stored[name][()] for name in (*FIELDS, *MAGNETIC_FIELDS) if name in stored}
            tallies = SwarmTallies(_with_constant_trial_weights(arrays))
        inputs = json.loads(attrs["inputs_json"])
        anomalies = json.loads(attrs["anomalies_json"])
        scalars = {name: attrs[name] for name in _SCALARS}
        stop_reason = str(attrs["stop_reason"])
        reduced_field_Td = float(attrs["reduced_field_Td"])
        phase = _read_phase(group["phase"]) if "phase" in group else {}
        magnetic = _read_magnetic(group["magnetic"]) if "magnetic" in group else None
        convergence = {"converged": bool(attrs["converged"]),
                       "convergence_notes": json.loads(attrs["convergence_notes_json"]),
                       "stopped_by": str(attrs["stopped_by"]),
                       "upper_bounds": json.loads(attrs["upper_bounds_json"])}
    except KeyError as exc:
        raise AvalancheError(f"{where}: incomplete swarm point, missing {exc}; the file is damaged or was not "
                             "written by avalanche.store.point.write_result") from None
    if isinstance(inputs.get("seed"), list):
        inputs["seed"] = tuple(inputs["seed"])
    return SwarmResult(reduced_field_Td=reduced_field_Td, estimates=estimates, rate_coefficients=rate_coefficients,
                       eedf=eedf, events=int(scalars["events"]), cpu_seconds=float(scalars["cpu_seconds"]),
                       wall_seconds=float(scalars["wall_seconds"]), stop_reason=stop_reason,
                       relaxation_time_s=float(scalars["relaxation_time_s"]),
                       sampled_time_s=float(scalars["sampled_time_s"]),
                       extrapolated_fraction=float(scalars["extrapolated_fraction"]), anomalies=anomalies,
                       inputs=inputs, time_series=time_series, tallies=tallies, magnetic=magnetic, **phase,
                       **convergence)


def _with_constant_trial_weights(arrays: dict) -> dict:
    """Tallies of a file written before the energy-dependent trial frequency (no ``event_weights``): its trial
    frequency was constant, so every weight was 1 and the weighted sums are the counts; its expected-value sums
    were per ionization and attachment only, so the per-process ones are taken from the counts."""
    if "event_weights" not in arrays and "events" in arrays:
        arrays["event_weights"] = arrays["events"].astype(float)
        arrays["mature_event_weights"] = arrays["mature_events"].astype(float)
        arrays["eedf_counts"] = arrays["eedf_counts"].astype(float)
        arrays["expected_process_counts"] = arrays["process_counts"].astype(float)
        arrays.pop("expected_ionizations", None)
        arrays.pop("expected_attachments", None)
    return arrays


def write_point_file(path: str | Path, result) -> None:
    """Write one result (``SwarmResult`` or ``TownsendResult``) as a new results file of kind "point" or
    "steady-state" at ``path`` (not atomic by itself: :func:`save_result` writes it under a
    temporary name)."""
    import hashlib

    from .point import write_result

    inputs = result.inputs
    described = inputs.get("mixture", {})
    steady = inputs.get("mode") == "steady-state-townsend"
    seed = inputs.get("seed")
    drive = inputs.get("drive") or {}
    grid = {"mixture_index": np.zeros(1, dtype=np.int64),
            "reduced_field_Td": np.array([float(result.reduced_field_Td)]),
            "frequency_Hz": np.array([float(drive.get("frequency_Hz") or 0.0)]),
            "seed": np.array([seed if isinstance(seed, int) else -1], dtype=np.int64)}
    field = inputs.get("magnetic_field")
    if field:
        grid.update({name: np.array([float(field.get(name, np.nan))]) for name in MAGNETIC_COLUMNS})
    mixture = getattr(result, "mixture", None)
    sets = {c.name: c.cross_sections for c in mixture.components} if mixture is not None else {}
    penning = (described.get("penning") or {}).get("groups")
    spec = {"composition": described.get("composition", {}), "parameters": {}, **({"penning": penning} if penning
                                                                                  else {})}
    config = {"mode": "steady-state-townsend" if steady else "time-of-flight", "seed": seed,
              "temperature_K": described.get("temperature_K"), "number_density_m3": described.get("number_density_m3"),
              "pressure_Pa": described.get("pressure_Pa"), "mixtures": [spec],
              "vibrational_temperature_K": described.get("vibrational_temperature_K"),
              "settings": inputs.get("settings", {})}
    config_json = json.dumps(config, sort_keys=True, separators=(",", ":"), default=str)
    with h5py.File(path, "w") as f:
        create_layout(f, "steady-state" if steady else "point",
                      {"name": "", "description": "", "mode": config["mode"], "master_seed": json.dumps(seed),
                       "runfile_source": "", "config_sha256": hashlib.sha256(config_json.encode()).hexdigest()},
                      grid=grid, labels=[str(inputs.get("label", ""))], compositions=[json.dumps(spec["composition"])],
                      config_json=config_json, runfile_text="", sets=sets,
                      checksums=dict(described.get("checksums", {})))
        group = f["points"].create_group(f"{0:06d}")
        write_result(group, result)
        write_table_row(f["table"], 0, result)
        group.attrs.update({"sweep_index": 0, "sweep_seed": grid["seed"][0], "sweep_attempts": 1,
                            "sweep_converged": bool(getattr(result, "converged", True)),
                            "sweep_convergence_notes": json.dumps(list(getattr(result, "convergence_notes", []))),
                            "sweep_status": STATUS_OK})


def save_result(path: str | Path, result: SwarmResult, *, overwrite: bool = True) -> Path:
    """Write ``result`` as a results file of kind "point" (or "steady-state" for a ``TownsendResult``): the
    layout of :mod:`avalanche.store.sweep_file` with one point, readable by ``open_results``, ``avalanche plot``
    and ``avalanche table``.

    The file is written under a temporary name in the same folder and renamed into place, so ``path`` never holds a
    half-written file (after a crash or a full disk the previous file, if any, is unchanged).

    Parameters
    ----------
    path : str or Path
    result : SwarmResult or TownsendResult
    overwrite : bool
        Replace an existing file (default); False refuses with a :class:`ConfigError` naming the path.
    """
    from .files import check_output_file, write_atomically

    path = check_output_file(path, force=overwrite)
    return write_atomically(path, lambda temporary: write_point_file(temporary, result))


def load_result(path: str | Path) -> SwarmResult:
    """Read the point of a results file written by :func:`save_result` (the first point of any results file;
    ``avalanche.open_results`` reads the whole file)."""
    path = Path(path)
    if not path.is_file():
        raise AvalancheError(f"{path}: no such file" if not path.exists() else f"{path}: not a regular file")
    try:
        f = h5py.File(path, "r")
    except OSError as exc:
        raise AvalancheError(f"{path}: not an HDF5 file ({exc})") from None
    with f:
        check_root(f, path)
        if "points/000000" not in f or f["points/000000"].attrs.get("sweep_status") != STATUS_OK:
            raise AvalancheError(f"{path}: its first point is not computed (yet)")
        return read_result(f["points/000000"])
