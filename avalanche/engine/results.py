"""Results of a swarm run: :class:`Estimate` (value and standard error), the energy distribution, and
:class:`SwarmResult` with its JSON form and human-readable table.

Every quantity is in SI units except electron energies (eV); the unit is part of the name where it is not SI.
Standard errors are the spread of independent replicas (see :mod:`avalanche.engine.estimators`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np

from .. import quantities as Q
from .tallies import SwarmTallies


@dataclass(frozen=True)
class Estimate:
    """A Monte Carlo estimate: ``value`` and its standard error ``stderr`` (same units)."""

    value: float
    stderr: float

    @property
    def relative_stderr(self) -> float:
        """stderr / |value| (infinite for a zero value with a nonzero error, 0 for 0 ± 0)."""
        if self.value == 0.0:
            return 0.0 if self.stderr == 0.0 else math.inf
        return abs(self.stderr / self.value)

    def to_dict(self) -> dict:
        """``{"value": ..., "stderr": ...}`` with plain floats (NaN becomes None, valid JSON)."""
        return {"value": _json_float(self.value), "stderr": _json_float(self.stderr)}

    def __format__(self, spec: str) -> str:
        spec = spec or ".5g"
        return f"{format(self.value, spec)} ± {format(self.stderr, '.2g')}"

    def __str__(self) -> str:
        return format(self)


@dataclass(frozen=True, eq=False)
class ArrayEstimate:
    """Monte Carlo estimates of the components of a vector or tensor: ``value`` and ``stderr`` (ndarrays of one
    shape, same units); ``est[i]`` or ``est[i, j]`` is the :class:`Estimate` of one component."""

    value: np.ndarray
    stderr: np.ndarray

    def __getitem__(self, index) -> Estimate:
        return Estimate(float(self.value[index]), float(self.stderr[index]))

    def to_dict(self) -> dict:
        """``{"value": nested lists, "stderr": nested lists}`` (NaN becomes None)."""
        return {"value": _plain(np.asarray(self.value)), "stderr": _plain(np.asarray(self.stderr))}


MAGNETIC_UNITS = {name: Q.unit(name) for name in ("drift_velocity_vector", "drift_velocity_bulk_vector",
                                                  "drift_velocity_magnitude", "lorentz_angle_deg", "N_D_tensor_flux",
                                                  "N_D_tensor_bulk")}
"""Units of the vector and tensor results (components in the frame E, E×B, third of
:mod:`avalanche.engine.magnetic`)."""


@dataclass(frozen=True, eq=False)
class EnergyDistribution:
    """The electron energy distribution function f(ε), normalised so that ∫ f(ε) ε^½ dε = 1 [eV^-3/2].

    It is the time-averaged distribution of the swarm during sampling (trial events are Poisson in time), as a
    histogram: ``value[i]`` is the mean of f over bin i, ``[energy_edges_eV[i], energy_edges_eV[i + 1])``.
    """

    energy_edges_eV: np.ndarray
    value: np.ndarray
    stderr: np.ndarray
    overflow_fraction: float = 0.0
    """Fraction of the sampled time spent above the last edge (not in ``value``)."""

    @property
    def energy_eV(self) -> np.ndarray:
        """Bin centres [eV]."""
        return 0.5 * (self.energy_edges_eV[1:] + self.energy_edges_eV[:-1])

    def moment_eV(self) -> float:
        """Mean energy of the histogram ∫ ε^{3/2} f dε [eV] (bin-exact for a flat f inside each bin)."""
        e0, e1 = self.energy_edges_eV[:-1], self.energy_edges_eV[1:]
        return float(np.sum(self.value * 0.4 * (e1 ** 2.5 - e0 ** 2.5)))

    def to_dict(self) -> dict:
        return {"energy_edges_eV": [float(e) for e in self.energy_edges_eV],
                "value": [_json_float(v) for v in self.value], "stderr": [_json_float(v) for v in self.stderr],
                "overflow_fraction": float(self.overflow_fraction), "units": "eV^-3/2"}


@dataclass(frozen=True, eq=False)
class PhaseResolved:
    """A phase-resolved quantity of an AC run: ``value[i]`` and its standard error ``stderr[i]`` in phase bin i of
    ωt mod 2π (bin centres in :attr:`SwarmResult.phase`), both ndarrays in the units of the DC quantity of the same
    name."""

    value: np.ndarray
    stderr: np.ndarray

    def to_dict(self) -> dict:
        return {"value": [_json_float(v) for v in self.value], "stderr": [_json_float(v) for v in self.stderr]}


ESTIMATE_NAMES = ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "N_D_L_flux", "N_D_L_bulk",
                  "N_D_T_flux", "N_D_T_bulk", "N_mu", "characteristic_energy_eV", "alpha_N", "eta_N",
                  "effective_alpha_N", "alpha_N_simple", "eta_N_simple", "ionization_rate_coefficient",
                  "attachment_rate_coefficient", "ionization_rate_coefficient_counted",
                  "attachment_rate_coefficient_counted", "excitation_rate_coefficient",
                  "penning_ionization_rate_coefficient", "penning_fraction", "effective_ionization_frequency",
                  "collision_frequency")
ESTIMATES: tuple[tuple[str, str, str], ...] = tuple((name, Q.unit(name), Q.label(name)) for name in ESTIMATE_NAMES)
"""(name, units, description) of every scalar estimate, in display order."""
ESTIMATE_UNITS = {name: units for name, units, _ in ESTIMATES}


@dataclass(eq=False)
class SwarmResult:
    """Swarm parameters of one point (mixture, E/N), each an :class:`Estimate` in SI units (energies in eV).

    Attributes
    ----------
    reduced_field_Td : float
        E/N [Td].
    mean_energy_eV, drift_velocity_flux, drift_velocity_bulk, N_D_L_flux, N_D_L_bulk, N_D_T_flux, N_D_T_bulk,
    N_mu, alpha_N, eta_N, ... : Estimate
        See :data:`ESTIMATES` and :mod:`avalanche.quantities` for units and meaning, and
        :mod:`avalanche.engine.estimators` for the definitions. The names of version 0.1 (``mobility_N``,
        ``long_diffusion_N_flux``, ...) still work with a :class:`DeprecationWarning`
        (:data:`avalanche.quantities.RENAMED`).
    rate_coefficients : dict of str to Estimate
        Rate coefficient per target molecule of every process [m³/s]; keys are the process labels, or
        "<species>:<label>" in a mixture of several species. Each is also an attribute under its quantity name
        ``rate_coefficient_<process>`` (:func:`avalanche.quantities.rate_name`), the name used in files.
        Expected-value estimates (Skullerud 1968), see :mod:`avalanche.engine.estimators`.
    rate_coefficients_counted : dict of str to Estimate
        The same from the collisions that happened (same keys; DC runs), the check of the expected values.
    eedf : EnergyDistribution
    events : int
        Trial collision events simulated (real and null, including chunks that were redone).
    cpu_seconds, wall_seconds : float
        Process CPU time (all threads) and wall-clock time of the run [s].
    stop_reason : {'precision', 'max_events'}
    relaxation_time_s, sampled_time_s : float
        Simulated time before sampling started, and the sampled time [s].
    extrapolated_fraction : float
        Fraction of the sampled real collisions at energies beyond their process's table.
    anomalies : dict
        Counters of the run (grid doublings, redone chunks, frequency above bound, ...).
    inputs : dict
        Every input of the run (mixture description, E/N, seed, settings, package version) as plain data.
    time_series : dict of str to ndarray
        Per-chunk series (time, electrons, mean energy, rates) used for relaxation and diagnostics.
    tallies : SwarmTallies or None
        The raw per-replica sums the estimates derive from.
    phase : ndarray or None
        AC runs: centres of the phase bins of ωt mod 2π [rad]; None for DC.
    phase_resolved : dict of str to PhaseResolved, or None
        AC runs: per phase bin, the quantities of the same names as :attr:`estimates` (mean energy, flux drift
        velocity, rate coefficients, frequencies, see :mod:`avalanche.engine.ac`), each process's rate coefficient under
        its key in :attr:`rate_coefficients`, plus ``reduced_field_Td`` (the bin average of E(t)/N) and
        ``power_absorbed_eV_s``. In AC the scalar estimates of those names are their cycle (time) averages.
    regime : dict or None
        AC runs: ``omega_over_nu_m``, ``omega_over_nu_energy``, ``verdict``, ``statement``, ``effective_field_Td``
        and the frequencies they derive from (see :func:`avalanche.engine.ac.regime`).
    magnetic : dict or None
        Magnetic-field runs: the estimates of :data:`MAGNETIC_UNITS` by name (from the tallies); None without a
        field, where the properties below follow from the axial symmetry about E.
    converged : bool
        False when the point must not be trusted: the swarm did not relax before sampling, its energy still drifted
        while sampled, or an estimate is NaN (see :func:`assess_convergence`); the reasons are in
        :attr:`convergence_notes`. Shown on screen, in JSON, HDF5, sweep summaries and tables.
    convergence_notes : list of str
        Why the point is not converged (empty when it is).
    stopped_by : str
        The quantity furthest from its precision target at the end: the one that stopped the run (stop_reason
        'precision') or limited it (budget spent); see :mod:`avalanche.engine.stopping`.
    upper_bounds : dict of str to float
        Quantities that stayed statistically zero, with an upper bound in their units (not chased by the stop
        rule; their estimates stay in :attr:`estimates`).
    """

    reduced_field_Td: float
    estimates: dict[str, Estimate]
    rate_coefficients: dict[str, Estimate]
    eedf: EnergyDistribution
    events: int
    cpu_seconds: float
    wall_seconds: float
    stop_reason: str
    relaxation_time_s: float
    sampled_time_s: float
    extrapolated_fraction: float
    anomalies: dict
    inputs: dict
    time_series: dict = field(default_factory=dict)
    tallies: SwarmTallies | None = None
    phase: np.ndarray | None = None
    phase_resolved: dict | None = None
    regime: dict | None = None
    phase_tallies: object | None = None
    magnetic: dict | None = None
    rate_coefficients_counted: dict = field(default_factory=dict)
    converged: bool = True
    convergence_notes: list = field(default_factory=list)
    stopped_by: str = ""
    upper_bounds: dict = field(default_factory=dict)
    mixture: object | None = field(default=None, repr=False)
    """The :class:`~avalanche.gas.mixture.Mixture` that was run (its cross-section sets go into results files);
    None for a result read from a file (use ``open_results(path).mixture()``)."""

    def __getattr__(self, name: str):
        return _lookup(self, name)

    def __getstate__(self):
        # the mixture stays with the process that ran the point (model gases hold functions that do not pickle)
        return {**self.__dict__, "mixture": None}

    def __dir__(self):
        return sorted(set(super().__dir__()) | set(self.quantities()))

    def quantities(self) -> dict[str, Estimate]:
        """Every scalar quantity by its name in :mod:`avalanche.quantities`: the estimates, then the rate
        coefficient of each process as ``rate_coefficient_<process>``."""
        names = Q.rate_names(self.rate_coefficients)
        return {**self.estimates, **{names[key]: est for key, est in self.rate_coefficients.items()}}

    def _vector(self, name: str, along_E: str) -> tuple[Estimate, Estimate, Estimate]:
        if self.magnetic is not None:
            return tuple(self.magnetic[name][i] for i in range(3))
        return (self.estimates[along_E], Estimate(0.0, 0.0), Estimate(0.0, 0.0))

    @property
    def drift_velocity_vector(self) -> tuple[Estimate, Estimate, Estimate]:
        """Flux drift velocity ⟨v⟩ [m/s]: components along E (the electrons' drift direction, > 0), E×B and the third
        axis (see :mod:`avalanche.engine.magnetic`). Without a magnetic field (W_flux, 0, 0) by symmetry."""
        return self._vector("drift_velocity_vector", "drift_velocity_flux")

    @property
    def drift_velocity_bulk_vector(self) -> tuple[Estimate, Estimate, Estimate]:
        """Bulk drift velocity d⟨r⟩/dt [m/s] in the same frame; without a magnetic field (W_bulk, 0, 0)."""
        return self._vector("drift_velocity_bulk_vector", "drift_velocity_bulk")

    @property
    def drift_velocity_magnitude(self) -> Estimate:
        """|⟨v⟩| [m/s] (the flux drift velocity without a magnetic field)."""
        return self.magnetic["drift_velocity_magnitude"] if self.magnetic else self.estimates["drift_velocity_flux"]

    @property
    def lorentz_angle_deg(self) -> Estimate:
        """Angle between the flux drift velocity and the electric force [deg]; 0 without a magnetic field."""
        return self.magnetic["lorentz_angle_deg"] if self.magnetic else Estimate(0.0, 0.0)

    def _tensor(self, name: str, kind: str) -> ArrayEstimate:
        if self.magnetic is not None:
            return self.magnetic[name]
        long, trans = self.estimates[f"N_D_L_{kind}"], self.estimates[f"N_D_T_{kind}"]
        return ArrayEstimate(np.diag([long.value, trans.value, trans.value]),
                             np.diag([long.stderr, trans.stderr, trans.stderr]))

    @property
    def N_D_tensor_flux(self) -> ArrayEstimate:
        """N·D (flux, symmetrised) [m⁻¹ s⁻¹], 3 × 3 in the frame (E, E×B, third); without a magnetic field
        diag(N·D_L, N·D_T, N·D_T). Formerly ``diffusion_tensor_N_flux``."""
        return self._tensor("N_D_tensor_flux", "flux")

    @property
    def N_D_tensor_bulk(self) -> ArrayEstimate:
        """N·D (bulk) [m⁻¹ s⁻¹], 3 × 3 in the frame (E, E×B, third); without a magnetic field diag(N·D_L, N·D_T,
        N·D_T). Formerly ``diffusion_tensor_N_bulk``."""
        return self._tensor("N_D_tensor_bulk", "bulk")

    def magnetic_dict(self) -> dict:
        """The magnetic-field part of :meth:`to_dict`: the field, the drift vectors (lists of three
        ``{"value", "stderr"}``), |W|, the Lorentz angle and the diffusion tensors (``{"value": 3×3, "stderr":
        3×3}``)."""
        field = self.inputs.get("magnetic_field") or {}
        return {
            "magnetic_field_T": float(field.get("magnetic_field_T", 0.0)),
            "reduced_magnetic_field_Hx": float(field.get("reduced_magnetic_field_Hx", 0.0)),
            "field_angle_deg": _json_float(field.get("field_angle_deg", math.nan)),
            "drift_velocity_vector": [e.to_dict() for e in self.drift_velocity_vector],
            "drift_velocity_bulk_vector": [e.to_dict() for e in self.drift_velocity_bulk_vector],
            "drift_velocity_magnitude": self.drift_velocity_magnitude.to_dict(),
            "lorentz_angle_deg": self.lorentz_angle_deg.to_dict(),
            "N_D_tensor_flux": self.N_D_tensor_flux.to_dict(),
            "N_D_tensor_bulk": self.N_D_tensor_bulk.to_dict(),
            "frame_axes": ["E", "ExB", "third"]}

    @property
    def precision_quantity(self) -> str:
        """The quantity whose relative standard error the stop rule tested."""
        return str(self.inputs.get("settings", {}).get("precision_on", ""))

    def to_dict(self, time_series: bool = False) -> dict:
        """JSON-ready data with the names of :mod:`avalanche.quantities`: each quantity (estimates, then the
        per-process ``rate_coefficient_<process>``) as ``{"value": .., "stderr": ..}``; ``processes`` maps each
        rate-coefficient name to its process label and ``units`` every name to its unit."""
        out: dict = {"reduced_field_Td": float(self.reduced_field_Td)}
        out.update({name: self.estimates[name].to_dict() for name, _, _ in ESTIMATES if name in self.estimates})
        names = Q.rate_names(self.rate_coefficients)
        out.update({names[key]: est.to_dict() for key, est in self.rate_coefficients.items()})
        out["processes"] = {name: key for key, name in names.items()}
        out["eedf"] = self.eedf.to_dict()
        out.update({"converged": bool(self.converged), "convergence_notes": list(self.convergence_notes),
                    "events": int(self.events), "cpu_seconds": float(self.cpu_seconds),
                    "wall_seconds": float(self.wall_seconds), "stop_reason": self.stop_reason,
                    "stopped_by": self.stopped_by, "upper_bounds": _plain(self.upper_bounds),
                    "relaxation_time_s": float(self.relaxation_time_s), "sampled_time_s": float(self.sampled_time_s),
                    "extrapolated_fraction": float(self.extrapolated_fraction),
                    "anomalies": _plain(self.anomalies), "inputs": _plain(self.inputs),
                    "units": {"reduced_field_Td": Q.unit("reduced_field_Td"), **ESTIMATE_UNITS,
                              **{name: Q.RATE_UNIT for name in names.values()}, **MAGNETIC_UNITS,
                              **{n: Q.unit(n) for n in ("magnetic_field_T", "reduced_magnetic_field_Hx",
                                                        "field_angle_deg")}}})
        out.update(self.magnetic_dict())
        if self.phase is not None:
            out["phase"] = [float(v) for v in self.phase]
            out["phase_resolved"] = {k: v.to_dict() for k, v in (self.phase_resolved or {}).items()}
            out["regime"] = _plain(self.regime)
        if time_series:
            out["time_series"] = {k: [_json_float(v) for v in np.ravel(a)] for k, a in self.time_series.items()}
        return out

    def format_table(self) -> str:
        """A readable table of every estimate with its standard error and unit, then the run's cost."""
        mixture = self.inputs.get("mixture", {})
        composition = ", ".join(f"{k} {v:g}" for k, v in mixture.get("composition", {}).items())
        lines = [f"E/N = {self.reduced_field_Td:g} Td   gas: {composition or '?'}   "
                 f"T = {mixture.get('temperature_K', float('nan')):g} K   "
                 f"N = {mixture.get('number_density_m3', float('nan')):.4g} m^-3"]
        if not self.converged:
            lines.append(f"  NOT CONVERGED: {'; '.join(self.convergence_notes)}")
        rows = [(name, desc, self.estimates[name], units) for name, units, desc in ESTIMATES if name in self.estimates]
        rows += [(name, f"rate coefficient k of {key}", self.rate_coefficients[key], Q.RATE_UNIT)
                 for key, name in Q.rate_names(self.rate_coefficients).items()]
        lines += format_rows(rows)
        lines.append(f"  events {self.events:.4g} (real + null), cpu {self.cpu_seconds:.3g} s, "
                     f"wall {self.wall_seconds:.3g} s, stop: {self.stop_reason}"
                     f"{f' ({self.stopped_by})' if self.stopped_by else ''}, relaxation "
                     f"{self.relaxation_time_s:.3g} s, sampled {self.sampled_time_s:.3g} s")
        if self.upper_bounds:
            lines.append("  statistically zero (upper bounds): "
                         + ", ".join(f"{k} < {v:.3g}" for k, v in self.upper_bounds.items()))
        if self.magnetic is not None:
            lines += self._magnetic_lines()
        if self.extrapolated_fraction > 0:
            lines.append(f"  {100 * self.extrapolated_fraction:.2g} % of collisions beyond a cross-section table")
        if self.phase is not None:
            lines += self._ac_lines()
        return "\n".join(lines)

    def _magnetic_lines(self) -> list[str]:
        """The magnetic section of :meth:`format_table`: the field, drift vector, Lorentz angle and tensors."""
        field = self.inputs.get("magnetic_field", {})
        w = self.drift_velocity_vector
        lines = [f"magnetic field {field.get('magnetic_field_T', math.nan):.4g} T "
                 f"({field.get('reduced_magnetic_field_Hx', math.nan):.4g} Hx) at "
                 f"{field.get('field_angle_deg', 0):g} deg to E; frame (E, ExB, third)",
                 f"  drift velocity vector [m/s]  {w[0]} | {w[1]} | {w[2]}",
                 f"  |W| {self.drift_velocity_magnitude} m/s, Lorentz angle {self.lorentz_angle_deg} deg"]
        for name in ("N_D_tensor_flux", "N_D_tensor_bulk"):
            t = getattr(self, name)
            rows = "; ".join(" ".join(f"{t.value[i, j]:.4g}" for j in range(3)) for i in range(3))
            lines.append(f"  {Q.label(name)} [{Q.unit(name)}]  {rows}")
        return lines

    def _ac_lines(self, rows: int = 8) -> list[str]:
        """The AC section of :meth:`format_table`: the regime and a compact phase table (``rows`` bins)."""
        reg = self.regime or {}
        drive = self.inputs.get("drive", {})
        lines = [f"AC drive: {drive.get('frequency_Hz', float('nan')):.4g} Hz, amplitude {self.reduced_field_Td:g} Td"
                 f", DC offset {drive.get('dc_offset_Td', 0.0):g} Td, waveform {drive.get('waveform', 'sine')}",
                 f"  regime: {reg.get('verdict', '?')} (omega/nu_m = {reg.get('omega_over_nu_m', float('nan')):.3g}, "
                 f"omega/nu_energy = {reg.get('omega_over_nu_energy', float('nan')):.3g}, E_eff/N = "
                 f"{reg.get('effective_field_Td', float('nan')):.4g} Td)", f"  {reg.get('statement', '')}"]
        if reg.get("method") == "quasi-static":
            fields = ", ".join(f"{f:.4g}" for f in self.inputs.get("quasi_static_fields_Td", []))
            lines.append(f"  method: quasi-static, the cycle from DC points at {fields} Td (midpoint rule over the "
                         "phase bins)")
        elif reg.get("method"):
            lines.append(f"  method: {reg['method']} tracking of every period")
        pr = self.phase_resolved or {}
        columns = [(n, f"{Q.symbol(n)} [{Q.unit(n)}]") for n in ("reduced_field_Td", "mean_energy_eV",
                                                               "drift_velocity_flux", "ionization_rate_coefficient")
                   if n in pr]
        lines.append("  " + f"{'phase [rad]':>11s}" + "".join(f" {h:>22s}" for _, h in columns))
        step = max(1, len(self.phase) // rows)
        for i in range(0, len(self.phase), step):
            cells = "".join(f" {pr[n].value[i]:>12.4g} ± {pr[n].stderr[i]:<7.2g}" for n, _ in columns)
            lines.append(f"  {self.phase[i]:11.3f}{cells}")
        return lines

    def __repr__(self) -> str:
        return (f"SwarmResult(E/N={self.reduced_field_Td:g} Td, mean_energy_eV={self.mean_energy_eV}, "
                f"drift_velocity_bulk={self.drift_velocity_bulk}, alpha_N={self.alpha_N}, "
                f"stop_reason={self.stop_reason!r})")


def format_rows(rows) -> list[str]:
    """Screen lines of (name, plain-words label, Estimate, unit) rows: the quantity's name (as in files and
    JSON), its label, value ± standard error, unit and relative error."""
    name_width = max((len(r[0]) for r in rows), default=0)
    width = max((len(r[1]) for r in rows), default=0)
    lines = []
    for name, desc, est, units in rows:
        rel = est.relative_stderr
        rel_text = f"({100 * rel:.2g} %)" if math.isfinite(rel) and est.value != 0 else ""
        lines.append(f"  {name:<{name_width}}  {desc:<{width}}  {est.value:>12.5g} ± {est.stderr:<9.2g} "
                     f"{units:<10} {rel_text}".rstrip())
    return lines


def _lookup(result, name: str):
    """Attribute access of the result objects by quantity name: an estimate, a ``rate_coefficient_<process>``,
    or a name of version 0.1 (:data:`avalanche.quantities.RENAMED`, with a DeprecationWarning)."""
    estimates = result.__dict__.get("estimates")
    if estimates is None or name.startswith("__"):
        raise AttributeError(name)
    if name in estimates:
        return estimates[name]
    current = Q.current_name(name, warn=False)
    if current != name:
        Q.current_name(name)
        return getattr(result, current)
    if name.startswith(Q.RATE_PREFIX):
        rates = result.__dict__.get("rate_coefficients") or {}
        for key, quantity in Q.rate_names(rates).items():
            if quantity == name:
                return rates[key]
    raise AttributeError(f"{type(result).__name__} has no attribute '{name}'")


UNDEFINED_WITHOUT_IONIZATION = ("penning_fraction",)
"""Estimates that are 0/0 (NaN) by definition when no ionization occurs; not a sign of a failed run."""
DRIFT_SIGMAS = 4.0
"""The mean energy of the first and second halves of the sampled chunks may differ by this many standard errors
before a point counts as still relaxing (a false alarm rate below 1e-4 for normal errors)."""


def assess_convergence(result: SwarmResult, sampled_energy: np.ndarray | None = None) -> tuple[bool, list[str]]:
    """Whether ``result`` can be trusted, and why not.

    A point is not converged when (i) its ``anomalies["not_relaxed"]`` is set (sampling was forced to start at
    half the budget), (ii) ``sampled_energy`` — per-chunk mean energies of the sampled chunks, shape (C, R) — has
    first and second halves whose replica means differ by more than :data:`DRIFT_SIGMAS` standard errors (the
    swarm was still relaxing, e.g. a slow energy relaxation in a heavy gas at a low field), or (iii) an estimate
    is NaN (except those in :data:`UNDEFINED_WITHOUT_IONIZATION` when nothing ionizes).
    """
    notes = []
    if result.anomalies.get("not_relaxed"):
        notes.append("the swarm did not pass the relaxation test before sampling had to start (half of max_events "
                     "or max_wall_seconds spent); raise max_events")
    if result.phase_tallies is not None:
        empty = int(np.count_nonzero(result.phase_tallies.counts.sum(axis=0)[:, 0] == 0))  # column 0: events
        if empty:
            notes.append(f"{empty} of {result.phase_tallies.counts.shape[1]} phase bins were never sampled (the "
                         "budget ended inside a period); raise max_events or use the quasi-static method")
    if sampled_energy is not None and len(sampled_energy) >= 4:
        half = len(sampled_energy) // 2
        first, second = sampled_energy[:half].mean(axis=0), sampled_energy[half:].mean(axis=0)
        diff = second - first
        error = diff.std(ddof=1) / math.sqrt(diff.size) if diff.size > 1 else math.inf
        if math.isfinite(error) and abs(diff.mean()) > DRIFT_SIGMAS * error + 1e-12 * abs(first.mean()):
            notes.append(f"the mean energy still drifted while sampled ({first.mean():.4g} -> {second.mean():.4g} "
                         "eV over the sampled time): the swarm had not relaxed; raise max_events")
    nan = [name for name, e in result.estimates.items() if not math.isfinite(e.value)
           and name not in UNDEFINED_WITHOUT_IONIZATION]
    if nan:
        notes.append(f"NaN estimates: {', '.join(nan)} (too few sampled events or no position-moment window "
                     "finished; raise max_events)")
    return not notes, notes


def _json_float(value) -> float | None:
    value = float(value)
    return value if math.isfinite(value) else None


def _plain(value):
    """Nested data as JSON-ready plain Python types."""
    if isinstance(value, dict):
        return {str(k): _plain(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_plain(v) for v in value]
    if isinstance(value, np.ndarray):
        return [_plain(v) for v in value.tolist()]
    if isinstance(value, (bool, np.bool_)):
        return bool(value)
    if isinstance(value, (int, np.integer)):
        return int(value)
    if isinstance(value, (float, np.floating)):
        return _json_float(value)
    return value
