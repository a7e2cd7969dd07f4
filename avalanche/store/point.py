"""HDF5 files of swarm results: one point per group, self-describing, read back into a :class:`SwarmResult`.

Layout of a point group (the root of a file written by :func:`save_result`; sweeps put one group per point):

* attributes: ``file_type`` = "avalanche swarm point", ``format_version`` (checked on read), ``package_version``,
  ``created_utc``, ``reduced_field_Td``, ``temperature_K``, ``number_density_m3``, ``mixture`` (label), ``seed``
  (JSON), ``stop_reason``, ``precision_on``, ``events``, ``cpu_seconds``, ``wall_seconds``, ``relaxation_time_s``,
  ``sampled_time_s``, ``extrapolated_fraction``, ``converged`` (bool; the reasons in ``convergence_notes_json``),
  ``stopped_by`` (the quantity that stopped or limited the run), ``upper_bounds_json`` (statistically zero
  quantities and their bounds); JSON text: ``inputs_json`` (every input and setting),
  ``composition_json``, ``checksums_json`` (SHA-256 of each species' cross-section set), ``provenance_json``
  (sources of each set), ``anomalies_json``.
* ``estimates/<name>``: float64 (2,) = (value, standard error), attributes ``units`` and ``description``.
* ``rate_coefficients/``: ``keys`` (str, P), ``value`` and ``stderr`` (P,) [m3/s].
* ``eedf/``: ``energy_edges_eV`` (B + 1,) [eV], ``value`` and ``stderr`` (B,) [eV^-3/2]; attribute
  ``overflow_fraction``.
* ``time_series/<name>``: per-chunk series (C,), each with ``units``.
* ``tallies/<name>``: the raw per-replica sums (R,), (R, P) or (R, B), each with ``units`` and ``description``.
* AC points only, ``phase/``: ``phase_rad`` (B_φ,) bin centres of ωt mod 2π [rad]; ``keys`` (str, K) of the
  phase-resolved quantities, ``units`` (str, K), ``value`` and ``stderr`` (K, B_φ); the regime as attributes
  (``verdict``, ``statement``, ``omega_over_nu_m``, ``omega_over_nu_energy``, ``effective_field_Td``, ... and
  all of it as ``regime_json``); ``phase/tallies/sums`` (R, B_φ, 4), ``counts`` (R, B_φ, 3), ``process``
  (R, B_φ, P): the raw per-replica phase sums (columns as in :mod:`avalanche.kernels`).
* Magnetic-field points only, ``magnetic/``: attributes ``magnetic_field_T``, ``reduced_magnetic_field_Hx``,
  ``field_angle_deg``, ``axes`` ("E, ExB, third", the frame of :mod:`avalanche.engine.magnetic`);
  ``drift_velocity_vector`` and ``drift_velocity_bulk_vector`` (3, 2) [m/s], ``drift_velocity_magnitude`` and
  ``lorentz_angle_deg`` (2,) [m/s, deg], ``diffusion_tensor_N_flux`` and ``diffusion_tensor_N_bulk`` (3, 3, 2)
  [1/(m s)]: the last axis is (value, stderr); each with ``units``. Their raw sums are in ``tallies/`` (the
  ``MAGNETIC_FIELDS`` of :mod:`avalanche.engine.tallies`). A point without ``magnetic/`` had no magnetic field.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime
from pathlib import Path

import h5py
import numpy as np

from .._version import __version__
from ..engine.results import (
    ESTIMATES,
    MAGNETIC_UNITS,
    ArrayEstimate,
    EnergyDistribution,
    Estimate,
    PhaseResolved,
    SwarmResult,
)
from ..engine.tallies import FIELDS, MAGNETIC_FIELDS, SwarmTallies
from ..errors import AvalancheError

FILE_TYPE = "avalanche swarm point"
FORMAT_VERSION = 1
TIME_SERIES_UNITS = {"time_s": "s", "duration_s": "s", "sampling": "1", "electrons": "1", "log_weight": "1",
                     "energy_max_eV": "eV", "mean_energy_eV": "eV", "drift_velocity_flux": "m/s",
                     "collision_frequency": "1/s", "net_production_frequency": "1/s"}
_SCALARS = ("events", "cpu_seconds", "wall_seconds", "relaxation_time_s", "sampled_time_s", "extrapolated_fraction")


def _json(value) -> str:
    return json.dumps(value, default=lambda v: v.tolist() if isinstance(v, np.ndarray) else str(v))


def write_result(group: h5py.Group, result: SwarmResult) -> None:
    """Write ``result`` into the (empty) HDF5 group ``group`` in the documented layout (a steady-state Townsend
    result in :mod:`avalanche.store.townsend`'s layout)."""
    if getattr(result, "inputs", {}).get("mode") == "steady-state-townsend":
        from .townsend import write_townsend

        return write_townsend(group, result)
    inputs = result.inputs
    mixture = inputs.get("mixture", {})
    attrs = group.attrs
    attrs["file_type"] = FILE_TYPE
    attrs["format_version"] = FORMAT_VERSION
    attrs["package_version"] = __version__
    attrs["created_utc"] = datetime.now(UTC).isoformat(timespec="seconds")
    attrs["reduced_field_Td"] = float(result.reduced_field_Td)
    attrs["temperature_K"] = float(mixture.get("temperature_K", np.nan))
    attrs["number_density_m3"] = float(mixture.get("number_density_m3", np.nan))
    attrs["mixture"] = str(inputs.get("label", ""))
    attrs["seed"] = _json(inputs.get("seed"))
    attrs["stop_reason"] = result.stop_reason
    attrs["precision_on"] = result.precision_quantity
    for name in _SCALARS:
        attrs[name] = getattr(result, name)
    attrs["inputs_json"] = _json(inputs)
    attrs["composition_json"] = _json(mixture.get("composition", {}))
    attrs["checksums_json"] = _json(mixture.get("checksums", {}))
    attrs["provenance_json"] = _json(inputs.get("provenance", {}))
    attrs["anomalies_json"] = _json(result.anomalies)
    attrs["converged"] = bool(result.converged)
    attrs["convergence_notes_json"] = _json(list(result.convergence_notes))
    attrs["stopped_by"] = str(result.stopped_by)
    attrs["upper_bounds_json"] = _json(result.upper_bounds)
    est = group.create_group("estimates")
    for name, units, description in ESTIMATES:
        if name in result.estimates:
            e = result.estimates[name]
            ds = est.create_dataset(name, data=np.array([e.value, e.stderr]))
            ds.attrs["units"] = units
            ds.attrs["description"] = description
            ds.attrs["columns"] = "value, stderr"
    rates = group.create_group("rate_coefficients")
    keys = list(result.rate_coefficients)
    rates.create_dataset("keys", data=np.array(keys, dtype=h5py.string_dtype()))
    for column in ("value", "stderr"):
        ds = rates.create_dataset(column, data=np.array([getattr(result.rate_coefficients[k], column) for k in keys],
                                                        dtype=float))
        ds.attrs["units"] = "m3/s"
    eedf = group.create_group("eedf")
    eedf.attrs["overflow_fraction"] = float(result.eedf.overflow_fraction)
    eedf.create_dataset("energy_edges_eV", data=result.eedf.energy_edges_eV).attrs["units"] = "eV"
    eedf.create_dataset("value", data=result.eedf.value).attrs["units"] = "eV^-3/2"
    eedf.create_dataset("stderr", data=result.eedf.stderr).attrs["units"] = "eV^-3/2"
    series = group.create_group("time_series")
    for name, values in result.time_series.items():
        series.create_dataset(name, data=np.asarray(values)).attrs["units"] = TIME_SERIES_UNITS.get(name, "")
    if result.tallies is not None:
        tallies = group.create_group("tallies")
        for name, (_, _, units, description) in {**FIELDS, **MAGNETIC_FIELDS}.items():
            if name not in result.tallies.arrays:
                continue
            ds = tallies.create_dataset(name, data=result.tallies[name])
            ds.attrs["units"] = units
            ds.attrs["description"] = description
    if result.phase is not None:
        _write_phase(group.create_group("phase"), result)
    if result.magnetic is not None:
        _write_magnetic(group.create_group("magnetic"), result)


def _write_magnetic(group: h5py.Group, result: SwarmResult) -> None:
    field = result.inputs.get("magnetic_field", {})
    for name in ("magnetic_field_T", "reduced_magnetic_field_Hx", "field_angle_deg"):
        group.attrs[name] = float(field.get(name, np.nan))
    group.attrs["axes"] = "E, ExB, third"
    for name, units in MAGNETIC_UNITS.items():
        e = result.magnetic[name]
        ds = group.create_dataset(name, data=np.stack([np.asarray(e.value, float), np.asarray(e.stderr, float)], -1))
        ds.attrs["units"] = units
        ds.attrs["columns"] = "value, stderr (last axis)"


def _read_magnetic(group: h5py.Group) -> dict:
    out = {}
    for name in MAGNETIC_UNITS:
        data = group[name][()]
        out[name] = Estimate(float(data[0]), float(data[1])) if data.ndim == 1 else ArrayEstimate(data[..., 0],
                                                                                                  data[..., 1])
    return out


def _write_phase(group: h5py.Group, result: SwarmResult) -> None:
    from ..engine.ac import PHASE_UNITS

    group.create_dataset("phase_rad", data=np.asarray(result.phase, dtype=float)).attrs["units"] = "rad"
    keys = list(result.phase_resolved)
    group.create_dataset("keys", data=np.array(keys, dtype=h5py.string_dtype()))
    group.create_dataset("units", data=np.array([PHASE_UNITS.get(k, "m3/s") for k in keys],
                                                dtype=h5py.string_dtype()))
    for column in ("value", "stderr"):
        group.create_dataset(column, data=np.array([getattr(result.phase_resolved[k], column) for k in keys],
                                                   dtype=float).reshape(len(keys), -1))
    for name, value in result.regime.items():
        group.attrs[name] = value
    group.attrs["regime_json"] = _json(result.regime)
    if result.phase_tallies is not None:
        tallies = group.create_group("tallies")
        for name in ("sums", "counts", "process"):
            tallies.create_dataset(name, data=getattr(result.phase_tallies, name))


def _read_phase(group: h5py.Group) -> dict:
    from ..engine.ac import PhaseTallies

    keys = [k.decode() if isinstance(k, bytes) else str(k) for k in group["keys"][()]]
    value, stderr = group["value"][()], group["stderr"][()]
    out = {"phase": group["phase_rad"][()], "regime": json.loads(group.attrs["regime_json"]),
           "phase_resolved": {k: PhaseResolved(value[i], stderr[i]) for i, k in enumerate(keys)}}
    if "tallies" in group:
        t = group["tallies"]
        out["phase_tallies"] = PhaseTallies(t["sums"][()], t["counts"][()], t["process"][()])
    return out


def _where(group: h5py.Group) -> str:
    return f"{group.file.filename}:{group.name}"


def read_result(group: h5py.Group) -> SwarmResult:
    """Read a :class:`SwarmResult` written by :func:`write_result` (or a ``TownsendResult``, by its ``mode``).

    Raises
    ------
    AvalancheError
        If the group is not a swarm point, has another format version, or lacks a part (named in the message).
    """
    where = _where(group)
    attrs = group.attrs
    if attrs.get("mode") == "steady-state-townsend":
        from .townsend import read_townsend

        return read_townsend(group)
    if attrs.get("file_type") != FILE_TYPE:
        raise AvalancheError(f"{where}: not an avalanche swarm point (attribute file_type = "
                             f"{attrs.get('file_type')!r}, expected {FILE_TYPE!r})")
    version = int(attrs.get("format_version", -1))
    if version != FORMAT_VERSION:
        raise AvalancheError(f"{where}: format_version = {version}; this avalanche ({__version__}) reads version "
                             f"{FORMAT_VERSION}: read it with the avalanche version that wrote it "
                             f"({attrs.get('package_version', '?')})")
    try:
        estimates = {name: Estimate(float(ds[0]), float(ds[1])) for name, ds in group["estimates"].items()}
        rates = group["rate_coefficients"]
        keys = [k.decode() if isinstance(k, bytes) else str(k) for k in rates["keys"][()]]
        rate_coefficients = {k: Estimate(float(v), float(s))
                             for k, v, s in zip(keys, rates["value"][()], rates["stderr"][()], strict=True)}
        e = group["eedf"]
        eedf = EnergyDistribution(energy_edges_eV=e["energy_edges_eV"][()], value=e["value"][()],
                                  stderr=e["stderr"][()], overflow_fraction=float(e.attrs["overflow_fraction"]))
        time_series = {name: ds[()] for name, ds in group["time_series"].items()}
        tallies = None
        if "tallies" in group:
            stored = group["tallies"]  # files from before the expected-value tallies lack them: NaN
            tallies = SwarmTallies({name: stored[name][()] if name in stored
                                    else np.full(stored["events"].shape, np.nan) for name in FIELDS}
                                   | {name: group["tallies"][name][()] for name in MAGNETIC_FIELDS
                                      if name in group["tallies"]})
        inputs = json.loads(attrs["inputs_json"])
        anomalies = json.loads(attrs["anomalies_json"])
        scalars = {name: attrs[name] for name in _SCALARS}
        stop_reason = str(attrs["stop_reason"])
        reduced_field_Td = float(attrs["reduced_field_Td"])
        phase = _read_phase(group["phase"]) if "phase" in group else {}
        magnetic = _read_magnetic(group["magnetic"]) if "magnetic" in group else None
        convergence = {"converged": bool(attrs.get("converged", True)),
                       "convergence_notes": json.loads(attrs.get("convergence_notes_json", "[]")),
                       "stopped_by": str(attrs.get("stopped_by", "")),
                       "upper_bounds": json.loads(attrs.get("upper_bounds_json", "{}"))}
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


def save_result(path: str | Path, result: SwarmResult, *, overwrite: bool = True) -> Path:
    """Write ``result`` as the root group of a new HDF5 file ``path``.

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

    def write(temporary: Path) -> None:
        with h5py.File(temporary, "w") as f:
            write_result(f, result)

    return write_atomically(path, write)


def load_result(path: str | Path) -> SwarmResult:
    """Read the swarm point stored at the root of the HDF5 file ``path``."""
    path = Path(path)
    if not path.is_file():
        raise AvalancheError(f"{path}: no such file" if not path.exists() else f"{path}: not a regular file")
    try:
        f = h5py.File(path, "r")
    except OSError as exc:
        raise AvalancheError(f"{path}: not an HDF5 file ({exc})") from None
    with f:
        return read_result(f)
