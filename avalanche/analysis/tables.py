"""Swarm parameters against E/N as plain arrays, and fluid-model tables written from them.

:class:`SwarmTable` is the common input of the output layer (tables, plots, breakdown, emission): a sorted grid of
reduced fields E/N [Td] and, for every quantity, its values and standard errors in SI units (electron energies in
eV), as the engine reports them. Build it from plain arrays, from a sweep's results file
(:meth:`SwarmTable.from_results`) or from engine results (:meth:`SwarmTable.from_swarm_results`).

:class:`FluidTable` is what a fluid or hybrid plasma model reads: one column per coefficient and one per standard
error, sorted and strictly increasing in the chosen coordinate (E/N or mean energy), with a line of units. It is
written as CSV (:meth:`FluidTable.to_csv`) or as whitespace-separated text (:meth:`FluidTable.to_text`), read back
by :func:`read_table`, and evaluated between its points by log-log interpolation (:meth:`FluidTable.interpolate`).
"""

from __future__ import annotations

import csv
import io
import math
import re
import warnings
from collections.abc import Sequence
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .. import quantities as Q
from .._version import __version__
from ..errors import ConfigError, PhysicsWarning
from ..gas.crosssections import _did_you_mean as did_you_mean
from .coefficients import CoefficientTable, loglog_interpolate, sorted_reduced_fields

__all__ = [
    "QUANTITY_UNITS", "RATE_PREFIX", "COORDINATES", "quantity_unit", "rate_quantity", "SwarmTable", "FluidTable",
    "fluid_table", "read_table",
]

QUANTITY_UNITS: dict[str, str] = {name: Q.unit(name) for name in (
    "reduced_field_Td", "mean_energy_eV", "characteristic_energy_eV", "drift_velocity_flux", "drift_velocity_bulk",
    "N_mu", "N_D_L_flux", "N_D_L_bulk", "N_D_T_flux", "N_D_T_bulk", "alpha_N", "eta_N", "effective_alpha_N",
    "alpha_N_simple", "eta_N_simple", "ionization_rate_coefficient", "attachment_rate_coefficient",
    "excitation_rate_coefficient", "penning_ionization_rate_coefficient", "penning_fraction",
    "effective_ionization_frequency", "collision_frequency", "relaxation_length_m")}
"""Units of the swarm quantities of a table, from :mod:`avalanche.quantities`."""

RATE_PREFIX = Q.RATE_PREFIX
"""Prefix of per-process rate coefficients [m^3/s]: ``rate_coefficient_<process>``
(:func:`avalanche.quantities.rate_name`)."""

COORDINATES = {"reduced-field": "reduced_field_Td", "mean-energy": "mean_energy_eV"}
"""Table coordinates (command-line spelling → column name)."""

_TABLE_FORMAT = 3


def rate_quantity(key: str) -> str:
    """Quantity name of the rate coefficient of process ``key`` (:func:`avalanche.quantities.rate_name`)."""
    return Q.rate_name(key)


def quantity_unit(name: str) -> str:
    """Unit of quantity ``name`` (``''`` when unknown), e.g. ``'m^2'`` for ``alpha_N``
    (:func:`avalanche.quantities.unit`)."""
    return Q.unit(name)


def _array(name: str, value, owner: str, size: int | None = None) -> np.ndarray:
    try:
        array = np.array(value, dtype=float)
    except (TypeError, ValueError):
        raise ConfigError(f"{owner}: {name} must be an array of numbers, got {value!r}") from None
    if array.ndim != 1 or (size is not None and array.size != size):
        expected = f"{size} values (one per reduced field)" if size is not None else "a 1-D array"
        raise ConfigError(f"{owner}: {name} has shape {array.shape}; give {expected}")
    return array


@dataclass
class SwarmTable:
    """Swarm quantities with standard errors on a grid of reduced fields.

    Parameters
    ----------
    reduced_field_Td : array_like
        E/N [Td] (> 0, distinct); the table is sorted by it on construction.
    quantities : mapping
        Quantity name → ``(values, stderr)``, one value per field, in the units of :func:`quantity_unit`
        (SI, energies in eV). Per-process rate coefficients are named ``rate_coefficient_<process>``
        (:func:`avalanche.quantities.rate_name`). Names of version 0.1 (``mobility_N``, ...) are renamed with a
        :class:`DeprecationWarning`.
    gas_label : str
        The mixture, e.g. ``"Ar"`` or ``"Ne:0.99,Ar:0.01"``.
    temperature_K, number_density_m3 : float, optional
        Gas temperature [K] and number density [m⁻³] of the runs.
    composition : mapping, optional
        Species → mole fraction (used by the emission estimate).
    source : str
        Where the data came from (a file name, or ``"computed"``), quoted in outputs.
    units : mapping, optional
        Units overriding :func:`quantity_unit` (e.g. the ``units`` attributes of a results file).
    eedf : mapping, optional
        E/N [Td] → ``(energy_edges_eV, values, stderr)`` of the energy distribution [eV^-3/2].
    parameters : mapping, optional
        Model-gas parameters per species (as in a run file), to rebuild the mixture.
    checksums : mapping, optional
        Species → cross-section checksum of the runs.
    point_index : array_like, optional
        Index of each point in its results file (for reading full results later).
    notes : list of str
        Remarks for the reader (points left out, ...), printed by the command line.
    not_converged : list of str
        The points marked not converged ("E/N x Td: reason"); they are kept, and :func:`fluid_table` writes this
        list into the table's header (``not_converged``).
    converged : array_like of bool, optional
        Per point, whether it converged (default: all); :meth:`coefficient_table` leaves the others out.
    processes : mapping, optional
        Rate-coefficient quantity name → the exact process label (default: the part after the prefix).

    Raises
    ------
    ConfigError
        For E/N ≤ 0, repeated E/N, arrays of the wrong length, or non-finite or negative standard errors.
    """

    reduced_field_Td: np.ndarray
    quantities: dict[str, tuple[np.ndarray, np.ndarray]]
    gas_label: str = ""
    temperature_K: float | None = None
    number_density_m3: float | None = None
    composition: dict[str, float] | None = None
    source: str = ""
    units: dict[str, str] = field(default_factory=dict)
    eedf: dict[float, tuple[np.ndarray, np.ndarray, np.ndarray]] = field(default_factory=dict)
    parameters: dict = field(default_factory=dict)
    checksums: dict = field(default_factory=dict)
    point_index: np.ndarray | None = None
    notes: list[str] = field(default_factory=list)
    not_converged: list[str] = field(default_factory=list)
    converged: np.ndarray | None = None
    processes: dict[str, str] = field(default_factory=dict)

    def __post_init__(self):
        owner = f"SwarmTable({self.source or self.gas_label or 'data'})"
        fields = _array("reduced_field_Td", self.reduced_field_Td, owner)
        if fields.size == 0:
            raise ConfigError(f"{owner}: no reduced fields; give at least one point")
        bad = ~np.isfinite(fields)
        if np.any(bad):
            raise ConfigError(f"{owner}: reduced_field_Td={float(fields[bad][0])!r} must be positive and finite")
        fields, order = sorted_reduced_fields(
            fields, owner, repeat_hint="select one frequency/composition, or average repeats")
        quantities = {}
        for name, pair in dict(self.quantities).items():
            try:
                values, errors = pair
            except (TypeError, ValueError):
                raise ConfigError(f"{owner}: quantity {name!r} must be a pair (values, stderr)") from None
            values = _array(f"{name} values", values, owner, fields.size)[order]
            errors = _array(f"{name} stderr", errors, owner, fields.size)[order]
            if np.any(errors[np.isfinite(errors)] < 0.0):
                raise ConfigError(f"{owner}: {name} has a negative standard error; errors must be ≥ 0")
            quantities[Q.current_name(str(name))] = (values, errors)
        if self.point_index is not None:
            self.point_index = np.asarray(self.point_index, dtype=np.int64).reshape(-1)[order]
        converged = np.ones(fields.size, dtype=bool) if self.converged is None else \
            np.asarray(self.converged, dtype=bool).reshape(-1)
        if converged.size != fields.size:
            raise ConfigError(f"{owner}: converged has {converged.size} values for {fields.size} reduced fields")
        self.converged = converged[order]
        self.reduced_field_Td = fields
        self.quantities = quantities
        self.units = {Q.current_name(str(k), warn=False): str(v) for k, v in dict(self.units).items()}
        self.processes = {name: dict(self.processes).get(name, name[len(RATE_PREFIX):]) for name in quantities
                          if name.startswith(RATE_PREFIX)}
        self.eedf = {float(k): v for k, v in dict(self.eedf).items()}

    @property
    def names(self) -> list[str]:
        """Quantity names, in insertion order."""
        return list(self.quantities)

    def unit(self, name: str) -> str:
        """Unit of quantity ``name`` (file attribute first, then :func:`quantity_unit`)."""
        return self.units.get(name) or quantity_unit(name)

    def get(self, name: str) -> tuple[np.ndarray, np.ndarray]:
        """``(values, stderr)`` of ``name``; a :class:`ConfigError` with a did-you-mean if it is absent."""
        if name not in self.quantities:
            raise ConfigError(f"{self.source or 'swarm table'}: no quantity {name!r}{did_you_mean(name, self.names)};"
                              f" available: {', '.join(self.names)}")
        return self.quantities[name]

    @property
    def rate_keys(self) -> list[str]:
        """Process labels of the per-process rate coefficients present."""
        return list(self.processes.values())

    def rate(self, process: str) -> tuple[np.ndarray, np.ndarray]:
        """``(values, stderr)`` of the rate coefficient of ``process`` (its label or its quantity name)."""
        for name, key in self.processes.items():
            if process in (key, name):
                return self.quantities[name]
        return self.get(rate_quantity(process))

    def coefficient_table(self, alpha: str = "alpha_N", eta: str = "eta_N",
                          temperature_K: float | None = None) -> CoefficientTable:
        """α/N and η/N as a :class:`~avalanche.analysis.coefficients.CoefficientTable` for the breakdown functions.

        Parameters
        ----------
        alpha, eta : str
            Quantities to use: ``alpha_N``/``eta_N`` (the engine's diffusion-corrected values, default) or
            ``alpha_N_simple``/``eta_N_simple`` (ν/(N W)).
        temperature_K : float, optional
            Gas temperature [K] relating p to N; default the runs' (300 K if unknown).

        Notes
        -----
        Points where α/N or η/N is not finite (failed points, or a diffusion correction without a real solution)
        are left out (see :meth:`undefined_fields_Td`), and so are points marked not converged (:attr:`converged`),
        with a :class:`~avalanche.errors.PhysicsWarning` naming them; η/N is zero when the table has none (a gas
        without attachment).

        Raises
        ------
        ConfigError
            If α/N is missing, or fewer than two points remain.
        """
        alpha_values, alpha_err = self.get(alpha)
        eta_values, eta_err = self.quantities.get(eta, (np.zeros_like(alpha_values), np.zeros_like(alpha_values)))
        keep = np.isfinite(alpha_values) & np.isfinite(eta_values)
        dropped = keep & ~self.converged
        if np.any(dropped):
            warnings.warn(f"{self.source or 'swarm table'}: point(s) at "
                          f"{', '.join(f'{x:g}' for x in self.reduced_field_Td[dropped])} Td are not converged and "
                          f"are left out of the {alpha}, {eta} table (raise the points' max_events)", PhysicsWarning,
                          stacklevel=2)
            keep &= self.converged
        if np.count_nonzero(keep) < 2:
            raise ConfigError(f"{self.source or 'swarm table'}: {alpha} is finite at {np.count_nonzero(keep)} "
                              "reduced field(s); a breakdown curve needs at least two — add points to the sweep")
        return CoefficientTable(self.reduced_field_Td[keep], np.maximum(alpha_values[keep], 0.0),
                                np.maximum(eta_values[keep], 0.0), np.nan_to_num(alpha_err[keep]),
                                np.nan_to_num(eta_err[keep]), gas_label=self.gas_label,
                                temperature_K=temperature_K or self.temperature_K or 300.0)

    def undefined_fields_Td(self, *names: str) -> np.ndarray:
        """Reduced fields [Td] where any of the quantities ``names`` present in the table is not finite."""
        bad = np.zeros(self.reduced_field_Td.size, dtype=bool)
        for name in names:
            if name in self.quantities:
                bad |= ~np.isfinite(self.quantities[name][0])
        return self.reduced_field_Td[bad]

    def merged(self, other: SwarmTable) -> SwarmTable:
        """This table with the points of ``other`` added (quantities both have; metadata of this one)."""
        names = [name for name in self.quantities if name in other.quantities]
        quantities = {name: tuple(np.concatenate((a, b)) for a, b in zip(self.quantities[name],
                                                                         other.quantities[name], strict=True))
                      for name in names}
        return SwarmTable(np.concatenate((self.reduced_field_Td, other.reduced_field_Td)), quantities,
                          gas_label=self.gas_label, temperature_K=self.temperature_K,
                          number_density_m3=self.number_density_m3, composition=self.composition,
                          source=self.source, units=self.units, parameters=self.parameters,
                          checksums=self.checksums, not_converged=self.not_converged + other.not_converged,
                          converged=np.concatenate((self.converged, other.converged)),
                          processes={**other.processes, **self.processes})

    def build_mixture(self):
        """The :class:`~avalanche.gas.mixture.Mixture` of the runs (composition, model-gas parameters, T, N).

        Warns with a :class:`~avalanche.errors.PhysicsWarning` when a species' cross sections now differ from
        the ones the runs used (their checksums).
        """
        from ..gas.spec import MixtureSpec

        if not self.composition:
            raise ConfigError(f"{self.source or 'swarm table'}: the composition of the gas is unknown")
        mixture = MixtureSpec(dict(self.composition), dict(self.parameters)).build(
            self.temperature_K if self.temperature_K is not None else 300.0,
            number_density_m3=self.number_density_m3)
        changed = [name for name, checksum in mixture.checksums().items()
                   if self.checksums.get(name) not in (None, checksum)]
        if changed:
            warnings.warn(f"{self.source}: the cross sections of {', '.join(changed)} changed since the runs (checksum "
                          "differs); the metadata read now may not match the computed rates", PhysicsWarning,
                          stacklevel=2)
        return mixture

    @classmethod
    def from_swarm_results(cls, results: Sequence, source: str = "computed") -> SwarmTable:
        """Table of engine results (:class:`avalanche.engine.results.SwarmResult`), one per reduced field.

        Every estimate becomes a quantity, each process rate coefficient ``rate_coefficient_<process>``, and the
        EEDFs are kept. The gas, temperature and density are those of the first result.
        """
        results = list(results)
        if not results:
            raise ConfigError("SwarmTable.from_swarm_results: no results given")
        names = list(dict.fromkeys(name for r in results for name in r.estimates))
        processes = Q.rate_names(dict.fromkeys(key for r in results for key in getattr(r, "rate_coefficients", {})))
        by_name = {name: key for key, name in processes.items()}
        names += list(by_name)

        def estimate(result, name):
            if name in by_name:
                return getattr(result, "rate_coefficients", {}).get(by_name[name])
            return result.estimates.get(name)

        quantities = {}
        for name in names:
            pairs = [estimate(r, name) for r in results]
            quantities[name] = (np.array([math.nan if e is None else e.value for e in pairs]),
                                np.array([math.nan if e is None else e.stderr for e in pairs]))
        described = results[0].inputs.get("mixture", {})
        eedf = {float(r.reduced_field_Td): (r.eedf.energy_edges_eV, r.eedf.value, r.eedf.stderr) for r in results
                if getattr(r, "eedf", None) is not None}
        return cls(np.array([r.reduced_field_Td for r in results], dtype=float), quantities,
                   gas_label=str(results[0].inputs.get("label", "")), temperature_K=described.get("temperature_K"),
                   number_density_m3=described.get("number_density_m3"),
                   composition=dict(described.get("composition", {})) or None, source=source, eedf=eedf,
                   checksums=dict(described.get("checksums", {})),
                   not_converged=[f"E/N {r.reduced_field_Td:g} Td: {'; '.join(r.convergence_notes)}" for r in results
                                  if not getattr(r, "converged", True)],
                   converged=[bool(getattr(r, "converged", True)) for r in results], processes=by_name)

    @classmethod
    def from_results(cls, results, mixture: str | int | None = None, frequency_Hz: float | None = None,
                     magnetic_field_T: float | None = None, reduced_magnetic_field_Hx: float | None = None,
                     field_angle_deg: float | None = None) -> SwarmTable:
        """Table of one mixture and frequency of a sweep's results file.

        Parameters
        ----------
        results : str, Path or avalanche.store.sweep_file.SweepResults
            The results file (opened with :func:`avalanche.store.sweep_file.open_results`) or the opened results.
        mixture : str or int, optional
            Mixture label or index; needed when the sweep has several.
        frequency_Hz : float, optional
            Drive frequency [Hz] (0 for DC); needed when the sweep has several.
        magnetic_field_T, reduced_magnetic_field_Hx, field_angle_deg : float, optional
            The magnetic field (in T or as B/N in Hx) and its angle to E [deg]; needed when the sweep has several
            (the vector results against E/N for several B: :class:`avalanche.analysis.magnetic.MagneticDriftTable`).

        Notes
        -----
        Only finished points enter; missing and failed ones are listed in :attr:`notes`; finished points marked
        not converged are kept, listed in :attr:`notes` and :attr:`not_converged` with the reason. The points' full
        results (EEDFs, phase-resolved data) are not read here; :attr:`point_index` locates them for
        :meth:`avalanche.store.sweep_file.SweepResults.point`.

        Raises
        ------
        ConfigError
            For an unknown mixture or frequency (naming the choices), or when no point has finished.
        """
        from ..constants import STANDARD_ATMOSPHERE_Pa, number_density_m3
        from ..store.sweep_file import STATUS_OK, SweepResults, open_results

        if not isinstance(results, SweepResults):
            results = open_results(results)
        grid, source = results.grid, str(results.path)
        index = _choose_mixture(results.mixtures, mixture, source)
        rows = grid["mixture_index"] == index
        frequencies = sorted(set(grid["frequency_Hz"][rows].tolist()))
        if frequency_Hz is None:
            if len(frequencies) > 1:
                raise ConfigError(f"{source}: the sweep has several frequencies {frequencies} Hz; choose one "
                                  "(--frequency)")
            frequency_Hz = frequencies[0]
        if float(frequency_Hz) not in frequencies:
            raise ConfigError(f"{source}: no points at frequency {frequency_Hz!r} Hz; the sweep has {frequencies} Hz")
        rows &= grid["frequency_Hz"] == float(frequency_Hz)
        rows &= _magnetic_rows(grid, rows, source, magnetic_field_T, reduced_magnetic_field_Hx, field_angle_deg)
        done = rows & (grid["status"] == STATUS_OK)
        notes = [f"{np.count_nonzero(rows & (grid['status'] == status))} point(s) {status}, left out"
                 for status in ("failed", "missing") if np.any(rows & (grid["status"] == status))]
        unconverged = []
        if "converged" in (grid.dtype.names or ()):
            reasons = {p["index"]: "; ".join(p["notes"]) for p in getattr(results, "not_converged", [])}
            unconverged = [f"E/N {grid['reduced_field_Td'][i]:g} Td: {reasons.get(int(i), 'see the results file')}"
                           for i in np.flatnonzero(done & ~grid["converged"])]
            notes += [f"point at {text} (NOT CONVERGED, kept and marked in the table header)"
                      for text in unconverged]
        if not np.any(done):
            raise ConfigError(f"{source}: no finished point for mixture {results.mixtures[index]!r} at "
                              f"{frequency_Hz:g} Hz; finish the sweep first (avalanche sweep ... --resume)")
        config = results.config
        temperature = config.get("temperature_K")
        density = config.get("number_density_m3")
        if density is None and temperature:
            density = number_density_m3(config.get("pressure_Pa") or STANDARD_ATMOSPHERE_Pa, temperature)
        spec = (config.get("mixtures") or [{}])[index]
        quantities = {name: (results.value(name)[done], results.stderr(name)[done]) for name in results.quantities
                      if np.any(np.isfinite(results.value(name)[done]))}  # not the other mixtures' processes
        return cls(grid["reduced_field_Td"][done], quantities, gas_label=results.mixtures[index],
                   temperature_K=temperature, number_density_m3=density,
                   composition=dict(spec.get("composition", {})) or None, source=source,
                   units=dict(results.units), parameters=dict(spec.get("parameters", {})),
                   checksums=dict(results.checksums), point_index=grid["index"][done], notes=notes,
                   not_converged=unconverged,
                   converged=grid["converged"][done] if "converged" in (grid.dtype.names or ()) else None,
                   processes={q: p for q, p in getattr(results, "processes", {}).items() if q in quantities})


def _magnetic_rows(grid, rows, source: str, tesla, hx, angle) -> np.ndarray:
    """The rows of one magnetic field and angle (all rows for a sweep without a magnetic grid)."""
    if "magnetic_field_T" not in (grid.dtype.names or ()):
        return np.ones(len(grid), dtype=bool)
    column, value = ("reduced_magnetic_field_Hx", hx) if hx is not None else ("magnetic_field_T", tesla)
    chosen = rows & (grid[column] == _pick(grid[column][rows], value, column, "magnetic fields", source))
    angle = _pick(grid["field_angle_deg"][chosen], angle, "field_angle_deg", "angles between E and B", source)
    return chosen & (grid["field_angle_deg"] == angle)


def _pick(present: np.ndarray, value, column: str, what: str, source: str) -> float:
    """``value`` if the sweep has it in ``column`` (``present``), or the only one there is; else a ConfigError
    naming the choices."""
    choices = sorted(set(present.tolist()))
    if value is None:
        if len(choices) > 1:
            raise ConfigError(f"{source}: the sweep has several {what} {choices} ({column}); choose one")
        return choices[0]
    if float(value) not in choices:
        raise ConfigError(f"{source}: no points at {column} = {value!r}; the sweep has {choices}")
    return float(value)


def _choose_mixture(labels: Sequence[str], mixture, source: str) -> int:
    if mixture is None:
        if len(labels) > 1:
            raise ConfigError(f"{source}: the sweep has {len(labels)} mixtures {list(labels)}; choose one (--mixture)")
        return 0
    if isinstance(mixture, int) or str(mixture).isdigit():
        if not 0 <= int(mixture) < len(labels):
            raise ConfigError(f"{source}: mixture index {mixture} out of range 0..{len(labels) - 1}")
        return int(mixture)
    if mixture not in labels:
        raise ConfigError(f"{source}: no mixture {mixture!r}{did_you_mean(mixture, labels)}; the sweep has "
                          f"{list(labels)}")
    return list(labels).index(mixture)


def _rate_sort_key(name: str) -> tuple[int, str]:
    return (1, name) if name.startswith(RATE_PREFIX) else (0, "")


@dataclass
class FluidTable:
    """A fluid-model table: columns sorted and strictly increasing in the coordinate, with units.

    Attributes
    ----------
    coordinate : str
        ``'reduced_field_Td'`` or ``'mean_energy_eV'``: the first column.
    columns : dict
        Column name → values; every quantity ``q`` is followed by ``q_stderr``.
    units : dict
        Column name → unit.
    metadata : dict
        Gas, temperature, density, source: written as comment lines.
    processes : dict
        Rate-coefficient column → its process label (written as ``# process of`` lines).
    """

    coordinate: str
    columns: dict[str, np.ndarray]
    units: dict[str, str]
    metadata: dict[str, str] = field(default_factory=dict)
    processes: dict[str, str] = field(default_factory=dict)

    @property
    def names(self) -> list[str]:
        return list(self.columns)

    def __getitem__(self, name: str) -> np.ndarray:
        if name not in self.columns:
            raise ConfigError(f"fluid table: no column {name!r}{did_you_mean(name, self.columns)}")
        return self.columns[name]

    def interpolate(self, quantity: str, x):
        """``quantity`` at coordinate values ``x`` (units of the coordinate), log-log between table points.

        Uses :func:`avalanche.analysis.coefficients.loglog_interpolate`: a power law between neighbouring positive
        points,
        linear in ln x next to a zero, a :class:`~avalanche.errors.PhysicsWarning` outside the table. Negative
        values (e.g. an effective coefficient below the critical field) are rejected with a :class:`ConfigError`.
        """
        return loglog_interpolate(x, self.columns[self.coordinate], self[quantity], quantity=quantity)

    def _header_comments(self) -> list[str]:
        lines = [f"avalanche fluid-model table (format {_TABLE_FORMAT}), avalanche {__version__}"]
        lines += [f"{key}: {value}" for key, value in self.metadata.items()]
        lines.append(f"coordinate: {self.coordinate}, sorted and strictly increasing; every quantity q is followed "
                     "by its standard error q_stderr")
        lines += [f"process of {name}: {self.process(name)}" for name in self.names
                  if name.startswith(RATE_PREFIX) and not name.endswith(Q.STDERR_SUFFIX)]
        return lines

    def process(self, name: str) -> str:
        """The process label of the rate-coefficient column ``name``."""
        return self.processes.get(name.removesuffix(Q.STDERR_SUFFIX), name[len(RATE_PREFIX):])

    def column_labels(self) -> dict[str, str]:
        """Column name → the label in the CSV header: the quantity name followed by its unit in brackets,
        ``alpha_N[m^2]``, ``N_D_L_flux_stderr[1/(m s)]`` (names are letters, digits and ``_`` only, see
        :mod:`avalanche.quantities`; a column without a unit has no brackets)."""
        return {name: f"{name}[{self.units[name]}]" if self.units.get(name) else name for name in self.names}

    def format_csv(self, digits: int | None = 7) -> str:
        """The table as CSV: ``#`` comment lines (metadata, the process of every rate column), then ONE line of
        column labels ``name[unit]`` (:meth:`column_labels`) and one row per point, so that
        ``pandas.read_csv(path, comment="#")`` gives numeric columns.

        Parameters
        ----------
        digits : int or None
            Significant digits of the values (default 7, beyond the statistical precision of any swarm run);
            None writes Python's shortest round-trip representation, so reading gives the same floats.
        """
        labels = self.column_labels()
        buffer = io.StringIO()
        for line in self._header_comments():
            buffer.write(f"# {line}\n")
        writer = csv.writer(buffer, lineterminator="\n")
        writer.writerow([labels[n] for n in self.names])
        for row in zip(*self.columns.values(), strict=True):
            writer.writerow([_number(v, digits) for v in row])
        return buffer.getvalue()

    def format_text(self, digits: int | None = 7) -> str:
        """The table as whitespace-separated text readable by ``numpy.loadtxt``: every header line is a ``#``
        comment; ``# units:`` gives ``name = unit`` pairs and the last comment line the column names.
        ``digits`` as for :meth:`format_csv`."""
        names = self.names
        cells = [[_number(v, digits) for v in values] for values in self.columns.values()]
        widths = [max(len(n), *(len(c) for c in column)) for n, column in zip(names, cells, strict=True)]
        lines = [f"# {line}" for line in self._header_comments()]
        lines.append("# units: " + "; ".join(f"{n} = {self.units[n] or '-'}" for n in names))
        lines.append("# last comment line: column names")
        lines.append("# " + " ".join(n.rjust(w) for n, w in zip(names, widths, strict=True)))
        for row in zip(*cells, strict=True):
            lines.append("  " + " ".join(c.rjust(w) for c, w in zip(row, widths, strict=True)))
        return "\n".join(lines) + "\n"

    def to_csv(self, path, digits: int | None = 7) -> Path:
        """Write :meth:`format_csv` to ``path`` (atomically); returns the path."""
        return _write(path, self.format_csv(digits))

    def to_text(self, path, digits: int | None = 7) -> Path:
        """Write :meth:`format_text` to ``path`` (atomically); returns the path."""
        return _write(path, self.format_text(digits))


def _number(value, digits: int | None) -> str:
    return repr(float(value)) if digits is None else f"{float(value):.{digits}g}"


def _write(path, text: str) -> Path:
    from ..store.files import write_atomically

    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    return write_atomically(path, lambda temporary: temporary.write_text(text, encoding="utf-8"))


def _check_monotone_energy(table: SwarmTable) -> None:
    energy, error = table.get("mean_energy_eV")
    fields = table.reduced_field_Td
    bad = np.flatnonzero(~(np.diff(energy) > 0.0))
    if bad.size == 0:
        return
    i = int(bad[0])
    combined = math.hypot(error[i], error[i + 1])
    sigmas = abs(energy[i + 1] - energy[i]) / combined if combined > 0 else math.inf
    verdict = (f"the step is {sigmas:.2g} combined standard errors, likely statistical noise: rerun these points "
               "with a smaller precision target" if sigmas <= 2.0 else
               f"the step is {sigmas:.2g} combined standard errors, beyond the statistics: check the data")
    raise ConfigError(
        f"{table.source or 'swarm table'}: mean energy is not strictly increasing with E/N — "
        f"{energy[i]:.6g} ± {error[i]:.2g} eV at {fields[i]:g} Td, then {energy[i + 1]:.6g} ± {error[i + 1]:.2g} eV "
        f"at {fields[i + 1]:g} Td ({bad.size} such step(s)); a table against mean energy would not be single-valued. "
        f"{verdict[0].upper()}{verdict[1:]}, drop one of the points, or tabulate against reduced-field")


def fluid_table(table: SwarmTable, against: str = "reduced-field", quantities: Sequence[str] | None = None
                ) -> FluidTable:
    """Fluid-model table of ``table``: the coordinate, the other coordinate, then each quantity and its error.

    Parameters
    ----------
    table : SwarmTable
    against : {'reduced-field', 'mean-energy'}
        Coordinate of the first column. Against mean energy the mean energy must rise strictly with E/N.
    quantities : sequence of str, optional
        Quantities to include (default: all, per-process rate coefficients last).

    Returns
    -------
    FluidTable
        Arrays sorted and strictly increasing in the coordinate.

    Raises
    ------
    ConfigError
        For an unknown coordinate or quantity (with a did-you-mean), a missing mean energy, or a mean energy
        that is not strictly increasing with E/N (naming the two points and whether the step is within errors).
    """
    if against not in COORDINATES:
        raise ConfigError(f"fluid table: against={against!r}{did_you_mean(against, COORDINATES)}; choose "
                          f"{' or '.join(COORDINATES)}")
    coordinate = COORDINATES[against]
    if coordinate == "mean_energy_eV":
        _check_monotone_energy(table)
    names = sorted(table.names, key=_rate_sort_key) if quantities is None else list(quantities)
    for name in names:
        table.get(name)
    columns: dict[str, np.ndarray] = {"reduced_field_Td": table.reduced_field_Td}
    if coordinate == "mean_energy_eV":
        # mean energy and its error first, then E/N
        names = [name for name in names if name != "mean_energy_eV"]
        energy, energy_error = table.get("mean_energy_eV")
        columns = {"mean_energy_eV": energy, "mean_energy_eV_stderr": energy_error, **columns}
    for name in names:
        values, errors = table.get(name)
        columns[name], columns[f"{name}_stderr"] = values, errors
    units = {name: table.unit(name.removesuffix("_stderr")) for name in columns}
    metadata = {"gas": table.gas_label or "unknown"}
    if table.temperature_K is not None:
        metadata["temperature_K"] = f"{table.temperature_K:g}"
    if table.number_density_m3 is not None:
        metadata["number_density_m3"] = f"{table.number_density_m3:.6g}"
    if table.source:
        metadata["source"] = table.source
    if table.not_converged:
        metadata["not_converged"] = " | ".join(table.not_converged)
    return FluidTable(coordinate, {k: np.array(v, dtype=float) for k, v in columns.items()}, units, metadata,
                      {name: table.processes.get(name, name[len(RATE_PREFIX):]) for name in columns
                       if name.startswith(RATE_PREFIX) and not name.endswith(Q.STDERR_SUFFIX)})


def _parse_header(comments: list[str], path) -> dict[str, str]:
    metadata = {}
    for line in comments[1:]:
        key, sep, value = line.partition(": ")
        if sep and " " not in key and key != "units":
            metadata[key] = value
    if not comments or not comments[0].startswith("avalanche fluid-model table"):
        raise ConfigError(f"{path}: not an avalanche fluid-model table (first line should start with "
                          "'# avalanche fluid-model table'); write one with `avalanche table`")
    return metadata


def read_table(path) -> FluidTable:
    """Read a table written by :meth:`FluidTable.to_csv` or :meth:`FluidTable.to_text` (detected from the file).

    Raises
    ------
    ConfigError
        If the file is missing, is not such a table, or has rows of the wrong length. Tables of the older formats
        (1 and 2) still read.
    """
    path = Path(path)
    if not path.is_file():
        raise ConfigError(f"{path}: no such file; give the path of a table written by `avalanche table`")
    from ..errors import read_user_text

    lines = read_user_text(path, "table").splitlines()
    comments = [line[1:].strip() for line in lines if line.startswith("#")]
    body = [line for line in lines if line.strip() and not line.startswith("#")]
    metadata = _parse_header(comments, path)
    processes = {line.split(": ", 1)[0][len("process of "):]: line.split(": ", 1)[1]
                 for line in comments if line.startswith("process of ")}
    units_line = next((line for line in comments if line.startswith("units: ")), None)
    unit_of = {} if units_line is None else dict(item.split(" = ", 1) for item in units_line[len("units: "):]
                                                 .split("; ") if " = " in item)
    if any(line.startswith("last comment line: column names") for line in comments):  # text
        names = comments[-1].split()
        units = [("" if unit_of.get(name, "-") == "-" else unit_of[name]) for name in names]
        rows = [line.split() for line in body]
    elif any("last two comment lines" in line for line in comments):  # text of format 2: names, then units
        names = comments[-2].split()
        units = [("" if u == "-" else u.replace("_", " ")) for u in comments[-1].split()]
        rows = [line.split() for line in body]
    elif any(line.startswith("next line: column names") for line in comments):  # CSV of format 1
        parsed = list(csv.reader(body))
        names, units, rows = parsed[0], parsed[1], parsed[2:]
    else:  # CSV: one header line of name[unit] labels (format 2: plain names and a "# units:" line)
        parsed = list(csv.reader(body))
        labels, rows = (parsed[0], parsed[1:]) if parsed else ([], [])
        split = [re.fullmatch(r"([0-9A-Za-z_]+)(?:\[(.*)\])?", label) for label in labels]
        if not labels or not all(split):
            raise ConfigError(f"{path}: the header line should hold name[unit] labels; write the table with "
                              "`avalanche table`")
        names = [m.group(1) for m in split]
        units = [m.group(2) if m.group(2) is not None else
                 ("" if unit_of.get(m.group(1), "-") == "-" else unit_of[m.group(1)]) for m in split]
    if len(names) != len(units):
        raise ConfigError(f"{path}: {len(names)} column names but {len(units)} units; the header is damaged")
    for number, row in enumerate(rows, start=1):
        if len(row) != len(names):
            raise ConfigError(f"{path}: data row {number} has {len(row)} values for {len(names)} columns")
    values = np.array(rows, dtype=float).reshape(len(rows), len(names))
    coordinate = metadata.pop("coordinate", names[0]).split(",")[0]
    return FluidTable(coordinate, {name: values[:, j] for j, name in enumerate(names)},
                      dict(zip(names, units, strict=True)), metadata, processes)
