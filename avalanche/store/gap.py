"""HDF5 layout of an avalanche run in an electrode gap (:class:`avalanche.gaps.GapResult`).

* root attributes: ``file_type`` = "avalanche gap run", ``format_version`` (checked on read), ``package_version``,
  ``created_utc``, ``mode`` = "gap", ``voltage_V``, ``primaries``, ``mixture`` (label), ``temperature_K``,
  ``number_density_m3``, ``seed`` (JSON), ``local_field_gain``, ``events``, ``steps``, ``real_collisions``,
  ``cpu_seconds``, ``wall_seconds``, ``space_charge`` (the note that it is neglected), ``caution`` (the high-voltage
  caution); JSON text: ``inputs_json`` (geometry, settings, drive), ``composition_json``, ``checksums_json``,
  ``provenance_json``, ``anomalies_json``, ``streamer_json``, ``charge_balance_json``, ``notes_json``.
* ``estimates/<name>`` (``mean_gain``, ``polya_theta``, ``local_field_ratio``, ``collected_<electrode>``):
  float64 (2,) = (value, standard error) with ``units``.
* ``gain/per_primary``, ``gain/controlled``: the gain of each primary and whether population control acted.
* ``current/time_s``, ``current/driven_A``, ``current/grounded_A``, ``current/charge_C`` (per primary, per bin).
* ``arrivals/time_edges_s``, ``arrivals/driven_per_primary``, ``arrivals/grounded_per_primary``,
  ``arrivals/samples`` (x_m, y_m, z_m, t_s, electrode).
* ``maps/rho_edges_m``, ``maps/z_edges_m`` and one (n_ρ, n_z) dataset per map (events per primary per bin; the
  names are in the attribute ``names_json``).
* ``field_line/<name>`` and ``alpha_table/<name>``: the local-field comparison.
"""

from __future__ import annotations

import json
from datetime import UTC, datetime
from pathlib import Path

import h5py
import numpy as np

from .._version import __version__
from ..engine.results import Estimate
from ..errors import AvalancheError
from .layout import create_layout, table_columns
from .sweep_file import ResultsWriter, open_results

FILE_TYPE = "avalanche gap run"
FORMAT_VERSION = 1
UNITS = {"time_s": "s", "driven_A": "A", "grounded_A": "A", "charge_C": "C", "time_edges_s": "s",
         "driven_per_primary": "1", "grounded_per_primary": "1", "samples": "m, m, m, s, 1", "rho_edges_m": "m",
         "z_edges_m": "m", "s_m": "m", "position_m": "m", "field_V_m": "V/m", "reduced_field_Td": "Td",
         "alpha_eff_per_m": "1/m", "alpha_N": "m^2", "eta_N": "m^2", "per_primary": "1", "controlled": "1"}


def _json(value) -> str:
    return json.dumps(value, default=lambda v: v.tolist() if isinstance(v, np.ndarray) else str(v))


def _arrays(group: h5py.Group, data: dict) -> None:
    for name, value in data.items():
        arr = np.asarray(value)
        if arr.dtype.kind in "fiub" and arr.ndim >= 1:
            group.create_dataset(name, data=arr).attrs["units"] = UNITS.get(name, "1")


def write_gap(path, result) -> Path:
    """Write a :class:`~avalanche.gaps.GapResult` to the HDF5 file ``path`` (overwritten); returns the path."""
    path = Path(path)
    with h5py.File(path, "w") as f:
        write_gap_group(f, result)
    return path


def write_gap_group(f: h5py.Group, result) -> None:
    """Write a :class:`~avalanche.gaps.GapResult` into the HDF5 group (or file) ``f`` with the layout above."""
    inputs = result.inputs
    mixture = inputs.get("mixture", {})
    a = f.attrs
    a.update({"file_type": FILE_TYPE, "format_version": FORMAT_VERSION, "package_version": __version__,
              "created_utc": datetime.now(UTC).isoformat(timespec="seconds"), "mode": "gap",
              "voltage_V": float(inputs["voltage_V"]), "primaries": int(inputs["primaries"]),
              "mixture": str(inputs.get("label", "")),
              "temperature_K": float(mixture.get("temperature_K", np.nan)),
              "number_density_m3": float(mixture.get("number_density_m3", np.nan)),
              "seed": _json(inputs.get("seed")), "local_field_gain": float(result.local_field_gain),
              "events": int(result.events), "steps": int(result.steps),
              "real_collisions": int(result.real_collisions), "cpu_seconds": float(result.cpu_seconds),
              "wall_seconds": float(result.wall_seconds), "space_charge": result.notes[0],
              "caution": result.notes[-1], "inputs_json": _json(inputs),
              "composition_json": _json(mixture.get("composition", {})),
              "checksums_json": _json(mixture.get("checksums", {})),
              "provenance_json": _json(inputs.get("provenance", {})), "anomalies_json": _json(result.anomalies),
              "streamer_json": _json(result.streamer), "charge_balance_json": _json(result.charge_balance),
              "notes_json": _json(result.notes)})
    est = f.create_group("estimates")
    values = {"mean_gain": (result.mean_gain, "1"), "polya_theta": (result.polya_theta, "1"),
              "local_field_ratio": (result.local_field_ratio, "1")}
    values.update({f"collected_{k}": (v, "1") for k, v in result.mean_collected.items()})
    for name, (e, units) in values.items():
        ds = est.create_dataset(name, data=np.array([e.value, e.stderr]))
        ds.attrs.update({"units": units, "columns": "value, stderr"})
    _arrays(f.create_group("gain"), {"per_primary": result.gain_distribution.per_primary,
                                     "controlled": result.gain_distribution.controlled.astype(np.int8)})
    _arrays(f.create_group("current"), {k: v for k, v in result.current.items() if k != "bin_width_s"})
    f["current"].attrs["bin_width_s"] = float(result.current["bin_width_s"])
    _arrays(f.create_group("arrivals"), {k: v for k, v in result.arrivals.items() if k != "sample_columns"})
    f["arrivals"].attrs["sample_columns"] = result.arrivals["sample_columns"]
    maps = f.create_group("maps")
    names = [k for k in result.maps if k not in ("rho_edges_m", "z_edges_m")]
    maps.attrs["names_json"] = _json(names)
    maps.create_dataset("rho_edges_m", data=result.maps["rho_edges_m"]).attrs["units"] = "m"
    maps.create_dataset("z_edges_m", data=result.maps["z_edges_m"]).attrs["units"] = "m"
    for k, name in enumerate(names):
        ds = maps.create_dataset(f"map_{k}", data=result.maps[name])
        ds.attrs.update({"units": "events per primary per bin", "name": name})
    _arrays(f.create_group("field_line"), result.field_line)
    table = f.create_group("alpha_table")
    _arrays(table, {k: v for k, v in result.alpha_table.items() if k != "source"})
    table.attrs["source"] = str(result.alpha_table.get("source", ""))


def read_gap(path) -> dict:
    """Read a gap file into plain data: ``attrs`` (with the JSON entries decoded), ``estimates`` (name →
    Estimate), and one dict of arrays per group (``gain``, ``current``, ``arrivals``, ``maps`` by name,
    ``field_line``, ``alpha_table``).

    Raises
    ------
    AvalancheError
        Not a gap file, or a format version this package cannot read.
    """
    path = Path(path)
    with h5py.File(path, "r") as f:
        if f.attrs.get("file_type") != FILE_TYPE:
            raise AvalancheError(f"{path}: not an avalanche gap file (file_type {f.attrs.get('file_type')!r})")
        if int(f.attrs["format_version"]) > FORMAT_VERSION:
            raise AvalancheError(f"{path}: format version {f.attrs['format_version']} is newer than this package "
                                 f"reads ({FORMAT_VERSION}); update avalanche")
        return read_gap_group(f)


def read_gap_group(f: h5py.Group) -> dict:
    """Read a gap result written by :func:`write_gap_group` from the HDF5 group (or file) ``f`` (see
    :func:`read_gap`)."""
    attrs = {}
    for k, v in f.attrs.items():
        attrs[k[:-5] if k.endswith("_json") else k] = json.loads(v) if k.endswith("_json") else v
    out = {"attrs": attrs,
           "estimates": {k: Estimate(float(d[0]), float(d[1])) for k, d in f["estimates"].items()}}
    for group in ("gain", "current", "arrivals", "field_line", "alpha_table"):
        out[group] = {k: d[()] for k, d in f[group].items()}
    maps = {"rho_edges_m": f["maps/rho_edges_m"][()], "z_edges_m": f["maps/z_edges_m"][()]}
    for k, name in enumerate(json.loads(f["maps"].attrs["names_json"])):
        maps[name] = f[f"maps/map_{k}"][()]
    out["maps"] = maps
    return out


# ------------------------------------------------------------------------------------------------- gap sweeps

GAP_SWEEP_COLUMNS = ("voltage_V", "pressure_Pa", "wire_radius_m", "frequency_Hz")
"""Grid columns of a gap sweep (units in the names; NaN pressure: the run file's gas state; NaN radius: not a
coaxial sweep)."""


def _headline(result) -> dict:
    """Name → (value, standard error) of a gap result's tabulated quantities."""
    out = {"mean_gain": result.mean_gain, "polya_theta": result.polya_theta,
           "local_field_gain": Estimate(result.local_field_gain, float("nan")),
           "local_field_ratio": result.local_field_ratio}
    out.update({f"collected_{k}": v for k, v in result.mean_collected.items()})
    return {k: (float(v.value), float(v.stderr)) for k, v in out.items()}


class GapSweepWriter(ResultsWriter):
    """The results file of a gap sweep: the swarm sweep's file and commit protocol
    (:class:`avalanche.store.sweep_file.ResultsWriter`, so ``--resume`` and crash safety are the same), with

    * root attributes ``mode`` = "gap", ``caution`` (the high-voltage caution) and ``space_charge`` (the note that
      it is neglected), besides the usual provenance;
    * the results layout of every sweep (:mod:`avalanche.store.layout`): ``/table`` with the coordinates
      ``voltage_V``, ``pressure_Pa``, ``wire_radius_m``, ``frequency_Hz``, ``seed``, ``mixture_index`` (and
      ``reduced_field_Td``, NaN: not a coordinate of a gap sweep, kept so that :func:`avalanche.open_results`
      reads the file), and the pairs ``q``, ``q_stderr`` for q in mean_gain, polya_theta, local_field_gain,
      local_field_ratio, collected_driven, collected_grounded, collected_outside (names and units from
      :mod:`avalanche.quantities`);
    * ``/points/<index:06d>/``: the single-run layout of :func:`write_gap_group` plus the ``sweep_*`` attributes.
    """

    def __init__(self, path, runfile, *, resume: bool = False):
        super().__init__(path, runfile, resume=resume, payload_io=(self._write_point, read_gap_group))

    def _create(self) -> None:
        from ..gaps.results import SAFETY_NOTE, SPACE_CHARGE_NOTE

        rf = self.runfile
        points = rf.points
        grid = {"mixture_index": np.array([p.mixture_index for p in points], dtype=np.int64),
                "reduced_field_Td": np.full(len(points), np.nan),
                "frequency_Hz": np.array([p.frequency_Hz for p in points], dtype=float),
                "seed": np.array([p.seed for p in points], dtype=np.int64)}
        grid.update({name: np.array([getattr(p, name) for p in points], dtype=float)
                     for name in GAP_SWEEP_COLUMNS if name != "frequency_Hz"})
        mixtures = [rf.build_mixture(i) for i in range(len(rf.mixtures))]
        sets = {c.name: c.cross_sections for m in mixtures for c in m.components}
        create_layout(self.file, "sweep", {
            "name": rf.name, "description": rf.description, "mode": rf.mode, "master_seed": rf.seed,
            "runfile_source": rf.source, "runfile_sha256": rf.text_sha256, "config_sha256": rf.config_sha256,
            "caution": SAFETY_NOTE, "space_charge": SPACE_CHARGE_NOTE, "electrodes_json": _json(rf.electrodes)},
            grid=grid, labels=[m.label for m in rf.mixtures], compositions=[m.key for m in rf.mixtures],
            config_json=rf.config_json(), runfile_text=rf.text, sets=sets, checksums=rf.checksums)
        self.file["table"]["reduced_field_Td"].attrs["note"] = "not a coordinate of a gap sweep (NaN)"
        self.file.flush()

    def _write_point(self, group: h5py.Group, result) -> None:
        """A point's payload: its gap result, and its rows of the table (written before the point's status)."""
        write_gap_group(group, result)
        index = int(group.name.rsplit("/", 1)[1])
        for quantity, (value, stderr) in _headline(result).items():
            value_column, stderr_column = table_columns(self.file["table"], quantity)
            value_column[index], stderr_column[index] = value, stderr


def open_gap_sweep(path):
    """Open a gap sweep's results file: :func:`avalanche.open_results` with the gap layout, whose ``grid`` gains
    the columns of :data:`GAP_SWEEP_COLUMNS`; ``point(i)`` returns the point's data as :func:`read_gap` does.

    Raises
    ------
    AvalancheError
        Not a sweep results file, or a sweep of another mode.
    """
    from numpy.lib import recfunctions

    results = open_results(path, payload_io=(write_gap_group, read_gap_group))
    if results.attrs.get("mode") != "gap":
        raise AvalancheError(f"{path}: a sweep of mode {results.attrs.get('mode')!r}, not a gap sweep; read it with "
                             "avalanche.open_results")
    names = [name for name in GAP_SWEEP_COLUMNS if name not in results.grid.dtype.names]
    with h5py.File(results.path, "r") as f:
        columns = [f["table"][name][()] for name in names]
    results.grid = recfunctions.append_fields(results.grid, names, columns, usemask=False)
    return results
