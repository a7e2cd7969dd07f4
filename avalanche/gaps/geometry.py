"""Electrode gaps for avalanche runs: four analytic electrode pairs and a user field map.

Each geometry has a *driven* electrode (at the run's voltage V(t)) and a *grounded* one, and turns into the
kernel's geometry tuple (:mod:`avalanche.kernels.gap`). Coordinates are Cartesian, in metres, with the symmetry
axis along z:

====================  ==============================================  ======================================
geometry              electrodes                                      field for +1 V on the driven electrode
====================  ==============================================  ======================================
``ParallelPlates``    grounded z = 0, driven z = d                    −ẑ / d
``Coaxial``           driven wire r = a (z axis), grounded tube r = b  r̂ / (r ln(b/a))
``ConcentricSpheres`` driven sphere r = a, grounded sphere r = b       r̂ a b / (r² (b − a))
``PointPlane``        grounded plane z = 0, driven hyperboloid tip     −∇η / ((1 − η²) artanh η₀) (prolate
                      of apex radius R at z = d                       spheroidal η, see the kernel)
``FieldMap``          a mask on a regular grid (r–z or x–y–z)          interpolated from the file
====================  ==============================================  ======================================

The closed forms are the textbook vacuum fields (Kuffel, Zaengl & Kuffel, *High Voltage Engineering
Fundamentals*, 2nd ed., Newnes 2000, ch. 4 — from memory; the same as :mod:`avalanche.analysis.geometry`); the
point–plane field is that of confocal hyperboloids (Eyring, Mackeown & Millikan 1928, Phys. Rev. 31 900; Coelho &
Debeau 1971, J. Phys. D 4 1266 — from memory), with the apex field 2V/(R ln(4d/R)) for R ≪ d.
"""

from __future__ import annotations

import csv
import json
import math
from abc import ABC, abstractmethod
from pathlib import Path

import numpy as np

from ..errors import ConfigError
from ..kernels import gap as KG

LENGTH_UNITS = {"m": 1.0, "cm": 1e-2, "mm": 1e-3, "um": 1e-6, "µm": 1e-6}
"""Length units accepted in field-map files, in metres."""
FIELD_UNITS = {"V/m": 1.0, "V/cm": 1e2, "V/mm": 1e3, "kV/cm": 1e5, "kV/mm": 1e6, "MV/m": 1e6}
"""Field units accepted in field-map files, in V/m."""


def _length(owner: str, name: str, value) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
            or not math.isfinite(float(value)) or value <= 0:
        raise ConfigError(f"{owner}: {name} = {value!r} must be a positive finite length in metres")
    return float(value)


_NO_MAP = (np.zeros((3, 2, 2, 1)), np.zeros((3, 2, 2, 1)), np.zeros((1, 2, 2, 1)), np.zeros((2, 2, 1), np.int64))


class Geometry(ABC):
    """Common interface: the kernel tuple, the default start of primaries, the map extent, field evaluation."""

    code: int = -1
    params: np.ndarray

    def kernel_geometry(self) -> tuple:
        """The geometry tuple of :mod:`avalanche.kernels.gap`."""
        return (self.code, self.params) + _NO_MAP

    @abstractmethod
    def describe(self) -> dict:
        """The geometry as plain data (kind and dimensions), stored with the results."""

    @abstractmethod
    def emitter(self, electrons_to_driven: bool) -> tuple[np.ndarray, np.ndarray]:
        """Default start of the primaries (a point on the electrode the electrons leave) and the unit vector into
        the gas along the field line there."""

    @abstractmethod
    def map_extent(self) -> tuple[float, float, float]:
        """(ρ_max, z_min, z_max) [m] of the ionization and excitation maps."""

    @abstractmethod
    def gap_length_m(self) -> float:
        """Length of the field line between the electrodes along the symmetry axis [m]."""

    def field_V_m(self, points_m, voltage_V: float) -> np.ndarray:
        """The field E [V/m] at ``points_m`` (shape (..., 3)) for ``voltage_V`` on the driven electrode."""
        pts = np.asarray(points_m, dtype=float)
        flat = pts.reshape(-1, 3)
        geo = self.kernel_geometry()
        out = np.array([KG.unit_field(geo, *p)[:3] for p in flat]).reshape(pts.shape)
        return voltage_V * out

    def weighting_potential(self, points_m) -> np.ndarray:
        """Weighting potential φ_w of the driven electrode at ``points_m`` (shape (..., 3))."""
        pts = np.asarray(points_m, dtype=float)
        geo = self.kernel_geometry()
        return np.array([KG.weighting_potential(geo, *p) for p in pts.reshape(-1, 3)]).reshape(pts.shape[:-1])

    def region(self, point_m) -> int:
        """0 in the gas, 1 inside the driven electrode, 2 inside the grounded one, 3 outside a map."""
        return int(KG.region(self.kernel_geometry(), *np.asarray(point_m, dtype=float)))

    def __repr__(self) -> str:
        args = ", ".join(f"{k}={v!r}" for k, v in self.describe().items() if k != "kind")
        return f"{type(self).__name__}({args})"


class ParallelPlates(Geometry):
    """Plane-parallel gap of width ``gap_m`` [m]: grounded plane z = 0, driven plane z = d (uniform field V/d)."""

    code = KG.PLATES

    def __init__(self, gap_m: float):
        self.gap_m = _length("ParallelPlates", "gap_m", gap_m)
        self.params = np.array([self.gap_m])

    def describe(self) -> dict:
        return {"kind": "parallel-plates", "gap_m": self.gap_m}

    def emitter(self, electrons_to_driven):
        if electrons_to_driven:
            return np.zeros(3), np.array([0.0, 0.0, 1.0])
        return np.array([0.0, 0.0, self.gap_m]), np.array([0.0, 0.0, -1.0])

    def map_extent(self):
        return (self.gap_m, 0.0, self.gap_m)

    def gap_length_m(self):
        return self.gap_m


class Coaxial(Geometry):
    """Wire of radius ``wire_radius_m`` (driven) along the z axis inside a grounded tube of radius ``tube_radius_m``."""

    code = KG.COAXIAL

    def __init__(self, wire_radius_m: float, tube_radius_m: float):
        self.wire_radius_m = _length("Coaxial", "wire_radius_m", wire_radius_m)
        self.tube_radius_m = _length("Coaxial", "tube_radius_m", tube_radius_m)
        if self.tube_radius_m <= self.wire_radius_m:
            raise ConfigError(f"Coaxial: tube_radius_m = {tube_radius_m!r} must exceed wire_radius_m = "
                              f"{wire_radius_m!r}")
        self.params = np.array([self.wire_radius_m, self.tube_radius_m])

    def describe(self) -> dict:
        return {"kind": "coaxial", "wire_radius_m": self.wire_radius_m, "tube_radius_m": self.tube_radius_m}

    def emitter(self, electrons_to_driven):
        if electrons_to_driven:
            return np.array([self.tube_radius_m, 0.0, 0.0]), np.array([-1.0, 0.0, 0.0])
        return np.array([self.wire_radius_m, 0.0, 0.0]), np.array([1.0, 0.0, 0.0])

    def map_extent(self):
        b = self.tube_radius_m
        return (b, -b, b)

    def gap_length_m(self):
        return self.tube_radius_m - self.wire_radius_m


class ConcentricSpheres(Geometry):
    """Driven sphere of radius ``inner_radius_m`` inside a grounded sphere of radius ``outer_radius_m``."""

    code = KG.SPHERES

    def __init__(self, inner_radius_m: float, outer_radius_m: float):
        self.inner_radius_m = _length("ConcentricSpheres", "inner_radius_m", inner_radius_m)
        self.outer_radius_m = _length("ConcentricSpheres", "outer_radius_m", outer_radius_m)
        if self.outer_radius_m <= self.inner_radius_m:
            raise ConfigError(f"ConcentricSpheres: outer_radius_m = {outer_radius_m!r} must exceed inner_radius_m "
                              f"= {inner_radius_m!r}")
        self.params = np.array([self.inner_radius_m, self.outer_radius_m])

    def describe(self) -> dict:
        return {"kind": "concentric-spheres", "inner_radius_m": self.inner_radius_m,
                "outer_radius_m": self.outer_radius_m}

    def emitter(self, electrons_to_driven):
        if electrons_to_driven:
            return np.array([0.0, 0.0, self.outer_radius_m]), np.array([0.0, 0.0, -1.0])
        return np.array([0.0, 0.0, self.inner_radius_m]), np.array([0.0, 0.0, 1.0])

    def map_extent(self):
        b = self.outer_radius_m
        return (b, -b, b)

    def gap_length_m(self):
        return self.outer_radius_m - self.inner_radius_m


class PointPlane(Geometry):
    """Hyperboloid point of apex radius ``tip_radius_m`` (driven) at distance ``gap_m`` above a grounded plane z = 0.

    Prolate spheroidal coordinates with foci (0, 0, ±c), c = √(d(d + R)): the tip is the hyperboloid η = η₀ = d/c,
    the plane η = 0, and φ = V artanh η / artanh η₀ (see :mod:`avalanche.kernels.gap`).
    """

    code = KG.POINT_PLANE

    def __init__(self, tip_radius_m: float, gap_m: float):
        self.tip_radius_m = _length("PointPlane", "tip_radius_m", tip_radius_m)
        self.gap_m = _length("PointPlane", "gap_m", gap_m)
        d, R = self.gap_m, self.tip_radius_m
        c = math.sqrt(d * (d + R))
        eta0 = d / c
        self.params = np.array([d, R, c, eta0, math.atanh(eta0)])

    def describe(self) -> dict:
        return {"kind": "point-plane", "tip_radius_m": self.tip_radius_m, "gap_m": self.gap_m}

    def apex_field_V_m(self, voltage_V: float) -> float:
        """|E| at the tip's apex [V/m]: V / (c (1 − η₀²) artanh η₀)."""
        d, R, c, eta0, a0 = self.params
        return abs(voltage_V) / (c * (1.0 - eta0 * eta0) * a0)

    def emitter(self, electrons_to_driven):
        if electrons_to_driven:
            return np.zeros(3), np.array([0.0, 0.0, 1.0])
        return np.array([0.0, 0.0, self.gap_m]), np.array([0.0, 0.0, -1.0])

    def map_extent(self):
        return (self.gap_m, 0.0, self.gap_m)

    def gap_length_m(self):
        return self.gap_m


# --------------------------------------------------------------------------------------------------- maps

class FieldMap(Geometry):
    """A field on a regular grid: 2D axisymmetric (r, z) or 3D (x, y, z), with the electrodes as a mask.

    Parameters
    ----------
    kind : {'rz', 'xyz'}
    origin_m, spacing_m : sequence of float
        Grid origin and node spacing [m] per axis ((r, z) or (x, y, z)).
    field_V_m : ndarray
        Field components at the nodes [V/m] for the applied voltage ``voltage_V``: shape (2, n_r, n_z) (E_r, E_z)
        or (3, n_x, n_y, n_z).
    mask : ndarray of int
        Node labels: 0 gas, 1 driven electrode, 2 grounded electrode (shape of one component).
    voltage_V : float
        The driven electrode's voltage for which ``field_V_m`` was computed (the run scales it linearly).
    weighting_field_per_m, weighting_potential : ndarray, optional
        Shockley–Ramo weighting field [1/m] (same shape as ``field_V_m``) and potential of the driven electrode.
        When omitted they are ``field_V_m / voltage_V`` and ``potential_V / voltage_V``, exact for two electrodes
        with nothing else at a fixed potential.
    potential_V : ndarray, optional
        The potential at the nodes [V] for ``voltage_V``.
    source : str
        Where the map came from (file name), for messages and provenance.
    """

    def __init__(self, kind, origin_m, spacing_m, field_V_m, mask, voltage_V, *, weighting_field_per_m=None,
                 weighting_potential=None, potential_V=None, source="array"):
        where = f"FieldMap {source}"
        if kind not in ("rz", "xyz"):
            raise ConfigError(f"{where}: kind = {kind!r} must be 'rz' (2D axisymmetric) or 'xyz' (3D)")
        dims = 2 if kind == "rz" else 3
        field = np.asarray(field_V_m, dtype=float)
        if field.ndim != dims + 1 or field.shape[0] != dims or min(field.shape[1:]) < 2:
            raise ConfigError(f"{where}: field has shape {field.shape}; expected ({dims}, n1, ..., n{dims}) with at "
                              "least 2 nodes per axis")
        shape = field.shape[1:]
        mask = np.asarray(mask)
        if mask.shape != shape or not np.all(np.isin(mask, (0, 1, 2))):
            raise ConfigError(f"{where}: mask must have shape {shape} and hold 0 (gas), 1 (driven electrode) or 2 "
                              f"(grounded electrode); got shape {mask.shape}")
        if not np.all(np.isfinite(field[:, mask == 0])):
            raise ConfigError(f"{where}: the field has non-finite values at gas nodes")
        origin = np.asarray(origin_m, dtype=float).ravel()
        spacing = np.asarray(spacing_m, dtype=float).ravel()
        if origin.size != dims or spacing.size != dims or np.any(spacing <= 0) or not np.all(np.isfinite(origin)):
            raise ConfigError(f"{where}: origin_m and spacing_m need {dims} finite values (spacing > 0)")
        if isinstance(voltage_V, bool) or not np.isfinite(voltage_V) or voltage_V == 0:
            raise ConfigError(f"{where}: voltage_V = {voltage_V!r} must be the nonzero voltage of the map's field")
        self.kind, self.source, self.voltage_V = kind, str(source), float(voltage_V)
        self.code = KG.MAP_RZ if kind == "rz" else KG.MAP_XYZ
        self.shape = shape
        pad = 3 - dims
        self.params = np.concatenate((origin, np.zeros(pad), spacing, np.ones(pad)))

        def grid(a, comps):
            a = np.asarray(a, dtype=float).reshape((comps,) + shape)
            return np.ascontiguousarray(a.reshape(a.shape + (1,) * pad) if pad else a)

        unit = np.where(np.isfinite(field), field, 0.0) / self.voltage_V
        self._field = grid(np.concatenate((unit, np.zeros((pad,) + shape))) if pad else unit, 3)
        wf = unit if weighting_field_per_m is None else np.asarray(weighting_field_per_m, dtype=float)
        if wf.shape != field.shape:
            raise ConfigError(f"{where}: weighting field has shape {wf.shape}, expected {field.shape}")
        self._weight = grid(np.concatenate((wf, np.zeros((pad,) + shape))) if pad else wf, 3)
        if weighting_potential is None and potential_V is not None:
            weighting_potential = np.asarray(potential_V, dtype=float) / self.voltage_V
        self.has_weighting_potential = weighting_potential is not None
        wp = np.zeros(shape) if weighting_potential is None else np.asarray(weighting_potential, dtype=float)
        if wp.shape != shape:
            raise ConfigError(f"{where}: weighting potential has shape {wp.shape}, expected {shape}")
        self._potential = grid(wp, 1)
        self._mask = np.ascontiguousarray(mask.astype(np.int64).reshape(shape + (1,) * pad))
        self.origin_m, self.spacing_m = origin, spacing

    @classmethod
    def load(cls, path) -> FieldMap:
        """Read a field map from ``.npz``, HDF5 (``.h5``/``.hdf5``) or ``.csv``.

        npz and HDF5 hold the arrays ``field`` (components first), ``mask``, ``origin``, ``spacing`` and optional
        ``weighting_field``, ``weighting_potential``, ``potential``, with the scalars (npz entries or HDF5 root
        attributes) ``kind`` ('rz' or 'xyz'), ``voltage_V``, ``length_unit`` (one of :data:`LENGTH_UNITS`) and
        ``field_unit`` (one of :data:`FIELD_UNITS`; potentials are in volts). A CSV file starts
        with a line ``# kind=rz length_unit=mm field_unit=V/m voltage_V=1000`` and has the header
        ``r,z,Er,Ez,mask`` (or ``x,y,z,Ex,Ey,Ez,mask``), optionally followed by
        ``potential`` and the weighting columns ``Wr,Wz`` (``Wx,Wy,Wz``) and ``weighting_potential``; its nodes
        must fill a regular grid.

        Raises
        ------
        ConfigError
            Missing file, unknown extension or units, missing entries, a grid that is not regular.
        """
        path = Path(path)
        if not path.is_file():
            raise ConfigError(f"field map '{path}' not found")
        suffix = path.suffix.lower()
        if suffix == ".npz":
            with np.load(path, allow_pickle=False) as data:
                entries = {k: data[k] for k in data.files}
            meta = {k: entries.pop(k).item() for k in ("kind", "voltage_V", "length_unit", "field_unit")
                    if k in entries}
        elif suffix in (".h5", ".hdf5"):
            import h5py

            with h5py.File(path, "r") as f:
                entries = {k: f[k][()] for k in f.keys()}
                meta = {k: (v.decode() if isinstance(v, bytes) else v) for k, v in f.attrs.items()}
        elif suffix == ".csv":
            return cls._load_csv(path)
        else:
            raise ConfigError(f"field map '{path}': unknown extension '{suffix}'; use .npz, .h5/.hdf5 or .csv")
        for key in ("kind", "voltage_V", "length_unit", "field_unit"):
            if key not in meta:
                raise ConfigError(f"field map '{path}': missing '{key}' (kind 'rz'/'xyz', voltage_V, length_unit "
                                  f"one of {list(LENGTH_UNITS)}, field_unit one of {list(FIELD_UNITS)})")
        for key in ("field", "mask", "origin", "spacing"):
            if key not in entries:
                raise ConfigError(f"field map '{path}': missing the array '{key}'")
        length, field_unit = cls._units(path, meta["length_unit"], meta["field_unit"])
        wf = entries.get("weighting_field")
        return cls(str(meta["kind"]), entries["origin"] * length, entries["spacing"] * length,
                   entries["field"] * field_unit, entries["mask"], float(meta["voltage_V"]),
                   weighting_field_per_m=None if wf is None else wf / length,
                   weighting_potential=entries.get("weighting_potential"), potential_V=entries.get("potential"),
                   source=str(path))

    @staticmethod
    def _units(path, length_unit, field_unit):
        if length_unit not in LENGTH_UNITS:
            raise ConfigError(f"field map '{path}': length_unit = {length_unit!r}; choose one of {list(LENGTH_UNITS)}")
        if field_unit not in FIELD_UNITS:
            raise ConfigError(f"field map '{path}': field_unit = {field_unit!r}; choose one of {list(FIELD_UNITS)}")
        return LENGTH_UNITS[length_unit], FIELD_UNITS[field_unit]

    @classmethod
    def _load_csv(cls, path: Path) -> FieldMap:
        lines = path.read_text(encoding="utf-8").splitlines()
        if not lines or not lines[0].startswith("#"):
            raise ConfigError(f"field map '{path}': the first line must be '# kind=rz length_unit=mm "
                              "field_unit=V/m voltage_V=1000' (or kind=xyz)")
        meta = dict(item.split("=", 1) for item in lines[0][1:].split() if "=" in item)
        for key in ("kind", "voltage_V", "length_unit", "field_unit"):
            if key not in meta:
                raise ConfigError(f"field map '{path}': line 1 lacks '{key}=...'")
        length, field_unit = cls._units(path, meta["length_unit"], meta["field_unit"])
        rows = list(csv.DictReader(lines[1:]))
        kind = meta["kind"]
        axes = ("r", "z") if kind == "rz" else ("x", "y", "z")
        comps = ("Er", "Ez") if kind == "rz" else ("Ex", "Ey", "Ez")
        wcomps = tuple("W" + c[1:] for c in comps)
        try:
            table = {k: np.array([float(row[k]) for row in rows]) for k in axes + comps + ("mask",)}
        except (KeyError, TypeError, ValueError) as exc:
            raise ConfigError(f"field map '{path}': needs columns {list(axes + comps)} and 'mask' with numbers "
                              f"({exc})") from None
        coords = [np.unique(table[a]) for a in axes]
        shape = tuple(c.size for c in coords)
        if np.prod(shape) != len(rows):
            raise ConfigError(f"field map '{path}': {len(rows)} rows do not fill a regular grid of {shape} nodes")
        spacing = [float(c[1] - c[0]) if c.size > 1 else 1.0 for c in coords]
        for a, c, s in zip(axes, coords, spacing, strict=True):
            if c.size > 1 and not np.allclose(np.diff(c), s, rtol=1e-6):
                raise ConfigError(f"field map '{path}': axis '{a}' is not evenly spaced")
        index = tuple(np.rint((table[a] - c[0]) / s).astype(int) for a, c, s in zip(axes, coords, spacing,
                                                                                     strict=True))

        def gridded(names):
            out = np.zeros((len(names),) + shape)
            for j, n in enumerate(names):
                out[(j,) + index] = table[n] if n in table else np.array([float(row[n]) for row in rows])
            return out

        mask = gridded(("mask",))[0].astype(int)
        have = set(rows[0])
        wf = gridded(wcomps) / length if set(wcomps) <= have else None
        wp = gridded(("weighting_potential",))[0] if "weighting_potential" in have else None
        pot = gridded(("potential",))[0] if "potential" in have else None
        return cls(kind, np.array([c[0] for c in coords]) * length, np.array(spacing) * length,
                   gridded(comps) * field_unit, mask, float(meta["voltage_V"]), weighting_field_per_m=wf,
                   weighting_potential=wp, potential_V=pot, source=str(path))

    def kernel_geometry(self) -> tuple:
        return (self.code, self.params, self._field, self._weight, self._potential, self._mask)

    def describe(self) -> dict:
        return {"kind": f"field-map-{self.kind}", "source": self.source, "shape": list(self.shape),
                "origin_m": self.origin_m.tolist(), "spacing_m": self.spacing_m.tolist(),
                "voltage_V": self.voltage_V}

    def _axis_range(self, axis: int) -> tuple[float, float]:
        return self.origin_m[axis], self.origin_m[axis] + self.spacing_m[axis] * (self.shape[axis] - 1)

    def emitter(self, electrons_to_driven):
        """The gas node on the symmetry axis (x = y = 0 for 3D maps) next to the electrode the electrons leave:
        the grounded electrode when they drift to the driven one."""
        leave = 2 if electrons_to_driven else 1
        mask = self._mask
        if self.kind == "rz":
            column = mask[0, :, 0]
            z0 = self.origin_m[1]
            dz = self.spacing_m[1]
            pos = lambda j: np.array([0.0, 0.0, z0 + j * dz])  # noqa: E731
        else:
            i = int(round(-self.origin_m[0] / self.spacing_m[0]))
            j = int(round(-self.origin_m[1] / self.spacing_m[1]))
            if not (0 <= i < self.shape[0] and 0 <= j < self.shape[1]):
                raise ConfigError(f"FieldMap {self.source}: the z axis (x = y = 0) is outside the map; give "
                                  "start_position_m")
            column = mask[i, j, :]
            dz = self.spacing_m[2]
            pos = lambda k: np.array([0.0, 0.0, self.origin_m[2] + k * dz])  # noqa: E731
        labels = np.asarray(column)
        for k in range(labels.size - 1):
            if labels[k] == leave and labels[k + 1] == 0:
                return pos(k + 1), np.array([0.0, 0.0, 1.0])
            if labels[k] == 0 and labels[k + 1] == leave:
                return pos(k), np.array([0.0, 0.0, -1.0])
        raise ConfigError(f"FieldMap {self.source}: no gas node next to electrode {leave} on the z axis; give "
                          "start_position_m")

    def map_extent(self):
        if self.kind == "rz":
            return (self._axis_range(0)[1],) + self._axis_range(1)
        x, y = self._axis_range(0), self._axis_range(1)
        return (math.hypot(max(abs(x[0]), abs(x[1])), max(abs(y[0]), abs(y[1]))),) + self._axis_range(2)

    def gap_length_m(self):
        return float(np.ptp(self._axis_range(1 if self.kind == "rz" else 2)))


def geometry_from_dict(data: dict) -> Geometry:
    """A geometry from its :meth:`Geometry.describe` dict (run files, the command line)."""
    kind = data.get("kind")
    args = {k: v for k, v in data.items() if k != "kind"}
    classes = {"parallel-plates": ParallelPlates, "coaxial": Coaxial, "concentric-spheres": ConcentricSpheres,
               "point-plane": PointPlane}
    if kind in classes:
        try:
            return classes[kind](**args)
        except TypeError as exc:
            raise ConfigError(f"geometry {json.dumps(data)}: {exc}") from None
    if kind == "field-map":
        return FieldMap.load(args.get("path", ""))
    raise ConfigError(f"geometry kind {kind!r} is unknown; choose one of {list(classes) + ['field-map']}")
