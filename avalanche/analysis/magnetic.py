"""Drift in magnetic fields against E/N: the components of the drift velocity vector and the Lorentz angle, one curve
per magnetic field, from engine results or a sweep's results file, written as CSV.

The components are those of :attr:`avalanche.engine.results.SwarmResult.drift_velocity_vector` in the frame (E, E×B,
third) of :mod:`avalanche.engine.magnetic`.
"""

from __future__ import annotations

import csv
import io
from collections.abc import Iterable
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .._version import __version__
from ..errors import ConfigError

MAGNETIC_COLUMNS: dict[str, str] = {
    "drift_velocity_E": "m/s",
    "drift_velocity_ExB": "m/s",
    "drift_velocity_third": "m/s",
    "drift_velocity_magnitude": "m/s",
    "lorentz_angle_deg": "deg",
}
"""The quantities of a :class:`MagneticDriftTable` curve and their units (the first three are the components of
``drift_velocity_vector``)."""


@dataclass
class MagneticDriftTable:
    """Drift velocity components and Lorentz angle against E/N for several magnetic fields.

    Parameters
    ----------
    curves : dict
        Magnetic field [T] → ``{"reduced_field_Td": E/N array, name: (values, stderr), ...}`` for every name of
        :data:`MAGNETIC_COLUMNS`, sorted by E/N.
    field_angle_deg : float
        Angle between E and B [deg] of every curve.
    reduced_magnetic_field_Hx : dict
        Magnetic field [T] → B/N [Hx] of the curve.
    gas_label, source : str
        The mixture and where the data came from, quoted in outputs.
    """

    curves: dict[float, dict]
    field_angle_deg: float
    reduced_magnetic_field_Hx: dict[float, float] = field(default_factory=dict)
    gas_label: str = ""
    source: str = "computed"

    @classmethod
    def from_swarm_results(cls, results: Iterable, gas_label: str = "") -> MagneticDriftTable:
        """From engine results (:class:`~avalanche.engine.results.SwarmResult`), grouped by their magnetic field
        (a result without one is B = 0: W along E, Lorentz angle 0).

        Raises
        ------
        ConfigError
            No results, results at different angles between E and B, or a repeated (B, E/N).
        """
        rows = []
        for r in results:
            magnetic = r.inputs.get("magnetic_field") or {}
            rows.append((float(magnetic.get("magnetic_field_T", 0.0)),
                         float(magnetic.get("reduced_magnetic_field_Hx", 0.0)),
                         magnetic.get("field_angle_deg"), r))
        if not rows:
            raise ConfigError("MagneticDriftTable.from_swarm_results(): no results given")
        angles = sorted({float(a) for _, _, a, _ in rows if a is not None})
        if len(angles) > 1:
            raise ConfigError(f"MagneticDriftTable.from_swarm_results(): the results have several angles between E "
                              f"and B {angles} deg; give the results of one angle")
        grouped: dict[float, list] = {}
        hx: dict[float, float] = {}
        for tesla, reduced, _, r in rows:
            grouped.setdefault(tesla, []).append(r)
            hx[tesla] = reduced
        curves = {}
        for tesla, members in sorted(grouped.items()):
            fields = np.array([float(r.reduced_field_Td) for r in members])
            if len(set(fields.tolist())) != fields.size:
                raise ConfigError(f"MagneticDriftTable.from_swarm_results(): E/N repeated at B = {tesla:g} T")
            order = np.argsort(fields)
            curve = {"reduced_field_Td": fields[order]}
            for name, values in _columns([members[i] for i in order]).items():
                curve[name] = values
            curves[tesla] = curve
        label = gas_label or str(rows[0][3].inputs.get("label", ""))
        return cls(curves, angles[0] if angles else 90.0, hx, label)

    @classmethod
    def from_results(cls, results, mixture: str | int | None = None, frequency_Hz: float | None = None,
                     field_angle_deg: float | None = None) -> MagneticDriftTable:
        """From a sweep's results file: the finished points of one mixture, frequency and angle, every B.

        Parameters
        ----------
        results : str, Path or avalanche.store.sweep_file.SweepResults
        mixture : str or int, optional
            Mixture label or index; needed when the sweep has several.
        frequency_Hz, field_angle_deg : float, optional
            Needed when the sweep has several (points without a field enter at any angle).

        Raises
        ------
        ConfigError
            Unknown mixture, frequency or angle (naming the choices), or no finished point.
        """
        from ..store.sweep_file import STATUS_OK, SweepResults, open_results
        from .tables import _choose_mixture

        if not isinstance(results, SweepResults):
            results = open_results(results)
        grid, source = results.grid, str(results.path)
        rows = grid["mixture_index"] == _choose_mixture(results.mixtures, mixture, source)
        for name, value, unit in (("frequency_Hz", frequency_Hz, "Hz"), ("field_angle_deg", field_angle_deg, "deg")):
            present = rows if name == "frequency_Hz" else rows & (grid["magnetic_field_T"] > 0)
            choices = sorted(set(grid[name][present].tolist()))
            if value is None:
                if len(choices) > 1:
                    raise ConfigError(f"{source}: the sweep has several {name} {choices} {unit}; choose one")
                value = choices[0] if choices else None
            elif float(value) not in choices:
                raise ConfigError(f"{source}: no points at {name} = {value!r} {unit}; the sweep has {choices} {unit}")
            if value is not None:
                rows &= (grid[name] == float(value)) | (name == "field_angle_deg") & (grid["magnetic_field_T"] == 0)
        done = np.flatnonzero(rows & (grid["status"] == STATUS_OK))
        if done.size == 0:
            raise ConfigError(f"{source}: no finished point for this mixture, frequency and angle; finish the sweep "
                              "first (avalanche sweep ... --resume)")
        table = cls.from_swarm_results([results.point(int(i)) for i in done])
        table.source = source
        table.gas_label = results.mixtures[int(grid["mixture_index"][done[0]])]
        return table

    def to_csv(self, path: str | Path | None = None) -> str:
        """The table as CSV, one row per (B, E/N): ``magnetic_field_T``, ``reduced_magnetic_field_Hx``,
        ``reduced_field_Td``, then each quantity of :data:`MAGNETIC_COLUMNS` and its ``_stderr``; ``#`` header lines
        give the gas, the angle, the source and the units. Written to ``path`` if given."""
        out = io.StringIO()
        out.write(f"# avalanche {__version__}: drift velocity components (frame E, ExB, third) and Lorentz angle\n")
        out.write(f"# gas: {self.gas_label}; angle between E and B: {self.field_angle_deg:g} deg; source: "
                  f"{self.source}\n")
        names = list(MAGNETIC_COLUMNS)
        units = ["T", "Hx", "Td"] + [u for n in names for u in (MAGNETIC_COLUMNS[n],) * 2]
        header = ["magnetic_field_T", "reduced_magnetic_field_Hx", "reduced_field_Td"] + [
            c for n in names for c in (n, f"{n}_stderr")]
        out.write("# units: " + ",".join(units) + "\n")
        writer = csv.writer(out, lineterminator="\n")
        writer.writerow(header)
        for tesla, curve in self.curves.items():
            for i, e in enumerate(curve["reduced_field_Td"]):
                row = [tesla, self.reduced_magnetic_field_Hx.get(tesla, float("nan")), e]
                for n in names:
                    row += [curve[n][0][i], curve[n][1][i]]
                writer.writerow([f"{float(v):.8g}" for v in row])
        text = out.getvalue()
        if path is not None:
            Path(path).write_text(text)
        return text


def _columns(results: list) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    """Per quantity of :data:`MAGNETIC_COLUMNS`: (values, stderr) over ``results``."""
    picks = {
        "drift_velocity_E": lambda r: r.drift_velocity_vector[0],
        "drift_velocity_ExB": lambda r: r.drift_velocity_vector[1],
        "drift_velocity_third": lambda r: r.drift_velocity_vector[2],
        "drift_velocity_magnitude": lambda r: r.drift_velocity_magnitude,
        "lorentz_angle_deg": lambda r: r.lorentz_angle_deg,
    }
    out = {}
    for name, pick in picks.items():
        estimates = [pick(r) for r in results]
        out[name] = (np.array([e.value for e in estimates]), np.array([e.stderr for e in estimates]))
    return out
