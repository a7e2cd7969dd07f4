"""Steady-state Townsend (SST) simulation: :func:`townsend` releases electrons continuously from a plane
electrode into a uniform DC field and follows them in space, giving α/N, η/N and the effective α/N from the
spatial growth of the electron flux, with the relaxation length and the spatial profiles.

Method
------
* Geometry. The electrode is the plane z = 0; the force on the electrons points along +z (the engine's
  convention). Electrons leave the electrode with v_z > 0, directions isotropic over the forward hemisphere and
  energies from ``initial_energy_eV``: a number is the mean of a Maxwellian (default 1 eV), with
  ``initial_distribution="beam"`` every electron has that energy, and a pair ``(energies_eV, weights)`` is a
  discrete table sampled with those weights. An electron that returns to z = 0 is absorbed by the electrode, as in
  a Townsend experiment.
* Physics. Flights are ballistic between trial events of the null-collision method and the collisions are those
  of :func:`avalanche.swarm` (same process tables and the kinematics functions of :mod:`avalanche.kernels`);
  there is no time in the problem, only positions.
* Tallies (:mod:`avalanche.kernels.steady_state`). Planes z_j = j Δz, j = 0 … J, over the tally distance; at each the
  net
  flux (crossings towards +z minus those towards −z) and the energy flux (the same, weighted by the energy at the
  crossing); per slab the ionizations, attachments and the signed path length (see
  :mod:`avalanche.engine.townsend_estimators` for the estimators and the relaxation length).
* Population control in space. Every few planes a *bank plane* z_b stops the electrons: a pass follows each
  electron, and every secondary, until it reaches z_b, returns to the electrode or is attached (electrons that
  diffuse back below the earlier bank planes are followed there and tallied). The electrons that reached z_b are
  the flux entering the next pass; each replica resamples them to its fixed population M (a uniformly random
  subset without replacement above M, all of them plus random clones below M) and multiplies its weight by n/M.
  Both steps are unbiased for every flux tally, the work per pass stays ∝ M, and the total work grows linearly
  with the distance instead of exponentially. The last pass ends at z_J + margin, the margin (10 D_L/W from the
  pilot, at least two planes) keeping the back-diffusion from the stop plane away from the tally planes.
* Adaptive distance. A short time-of-flight pilot (:func:`avalanche.swarm`) gives W, D_L, α_eff and the
  relaxation time τ; the tally distance is max(4 W τ, 4/|α_eff|), capped at 40 W τ, the bank planes are spaced for
  a growth of about 0.25 e-folds per pass. ``distance_m`` and ``margin_m`` override the choice.
* Batches. A batch emits M electrons per replica and carries them through every pass; batches repeat until the
  relative standard error of ``precision_on`` is below ``precision`` or ``max_events`` trial events were spent
  (a batch is never cut short, which would bias the deep planes).

Relation to time-of-flight
--------------------------
In the hydrodynamic regime the SST density grows as exp(α z) with D_L α² − W α + ν = 0, so
α = [W − √(W² − 4 D_L ν)]/(2 D_L) with the bulk time-of-flight W and D_L (Tagashira H, Sakai Y & Sakamoto S 1977,
J. Phys. D 10 1051; Blevin H A & Fletcher J 1984, Aust. J. Phys. 37 593 — from memory). It is the first-order
hydrodynamic relation: it neglects the higher-order transport coefficients, and it differs from the simple
ν/W when D_L ν/W² is not small. ``compare=True`` runs :func:`avalanche.swarm` at the same E/N and puts its
alpha_N (with that correction) and alpha_N_simple = ν/(N W) beside the SST values.
"""

from __future__ import annotations

import math
import time
import warnings
from dataclasses import asdict, dataclass, field

import numba
import numpy as np

from .. import kernels as K
from .. import quantities as Q
from .._version import __version__
from ..constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, EV_J, ELECTRON_MASS_kg, TOWNSEND_V_m2
from ..errors import AvalancheError, ConfigError, PhysicsWarning
from ..gas.crosssections import _did_you_mean
from ..gas.mixture import Mixture
from ..kernels import steady_state as S
from ..kernels.population import resample_population
from . import checks
from .results import _json_float, _lookup, _plain, format_rows
from .tables import COLD_GAS_GROUPS, EnergyGrid, ProcessTable, extrapolation_notice
from .townsend_estimators import TALLY_FIELDS, townsend_estimates

TOWNSEND_ESTIMATES: tuple[tuple[str, str, str], ...] = tuple(
    (name, Q.unit(name), Q.label(name)) for name in ("alpha_N", "eta_N", "effective_alpha_N", "relaxation_length_m",
                                                     "mean_energy_eV"))
"""(name, units, description) of the estimates of a :class:`TownsendResult`, in display order."""
COMPARISON_QUANTITIES = ("alpha_N", "alpha_N_simple", "effective_alpha_N", "eta_N", "eta_N_simple",
                         "drift_velocity_bulk", "N_D_L_bulk", "mean_energy_eV")
"""Time-of-flight estimates put beside the SST ones by ``compare=True``."""
PROFILE_UNITS = {"z_m": "m", "slab_center_m": "m", "flux": "1", "mean_energy_eV": "eV", "ionization": "1",
                 "attachment": "1", "local_alpha_N": Q.unit("alpha_N"), "local_eta_N": Q.unit("eta_N")}
"""Units of the profiles (each also has a ``<name>_stderr``); flux, ionization and attachment per emitted electron."""
INITIAL_DISTRIBUTIONS = ("maxwellian", "beam")
GROWTH_PER_PASS = 0.25
"""Target growth (e-folds) of the flux between bank planes."""


@dataclass(frozen=True)
class TownsendSettings:
    """Validated settings of :func:`townsend` (see there)."""

    seed: int | tuple[int, ...]
    precision: float
    electrons: int
    max_events: int
    sharing: str
    scattering: str
    replicas: int
    planes: int
    distance_m: float | None
    margin_m: float | None
    initial_energy_eV: float | tuple
    initial_distribution: str
    relaxation_tolerance: float
    energy_cells: int
    energy_limit_eV: float
    pilot_events: int
    precision_on: str


def _fail(name, value, requirement):
    checks.fail("townsend()", name, value, requirement)


def _number(name, value, integer=False, allow_none=False, minimum=None):
    return checks.positive("townsend()", name, value, integer=integer, allow_none=allow_none, minimum=minimum,
                           integral_float=True)


def _initial_energy(value, distribution):
    if distribution not in INITIAL_DISTRIBUTIONS:
        raise ConfigError(f"townsend(): argument initial_distribution = {distribution!r} is not valid"
                          f"{_did_you_mean(str(distribution), INITIAL_DISTRIBUTIONS)}; choose one of "
                          f"{list(INITIAL_DISTRIBUTIONS)} (or give initial_energy_eV as (energies_eV, weights))")
    if isinstance(value, (tuple, list)) and len(value) == 2:
        energies = np.asarray(value[0], dtype=float).ravel()
        weights = np.asarray(value[1], dtype=float).ravel()
        if (energies.size == 0 or energies.size != weights.size or not np.all(np.isfinite(energies))
                or np.any(energies <= 0) or not np.all(np.isfinite(weights)) or np.any(weights < 0)
                or weights.sum() <= 0):
            _fail("initial_energy_eV", value, "a positive number or a table (energies_eV, weights) of equal length "
                  "with energies > 0 and weights >= 0, not all zero")
        return (tuple(energies.tolist()), tuple((weights / weights.sum()).tolist()))
    return _number("initial_energy_eV", value)


def make_townsend_settings(*, seed=0, precision=0.02, electrons=4096, max_events=2_000_000_000, sharing="opb",
                           scattering="isotropic", replicas=16, planes=100, distance_m=None, margin_m=None,
                           initial_energy_eV=1.0, initial_distribution="maxwellian", relaxation_tolerance=0.03,
                           energy_cells=8192, energy_limit_eV=1e5, pilot_events=20_000_000,
                           precision_on="auto") -> TownsendSettings:
    """Validate the keyword arguments of :func:`townsend`; raise :class:`ConfigError` naming the bad one."""
    from .tables import SCATTERING_MODELS, SHARING_RULES

    replicas = _number("replicas", replicas, integer=True, minimum=2)
    electrons = _number("electrons", electrons, integer=True)
    if electrons < 8 * replicas:
        _fail("electrons", electrons, f"at least 8 per replica ({8 * replicas} for replicas = {replicas})")
    for name, value, choices in (("sharing", sharing, SHARING_RULES), ("scattering", scattering, SCATTERING_MODELS),
                                 ("precision_on", precision_on, ("auto", "alpha_N", "eta_N", "effective_alpha_N",
                                                                 "mean_energy_eV"))):
        checks.choice("townsend()", name, value, choices)
    tolerance = _number("relaxation_tolerance", relaxation_tolerance)
    if tolerance >= 0.5:
        _fail("relaxation_tolerance", relaxation_tolerance, "a fraction below 0.5 (e.g. 0.03)")
    return TownsendSettings(
        seed=checks.seed("townsend()", seed), precision=_number("precision", precision), electrons=electrons,
        max_events=_number("max_events", max_events, integer=True), sharing=sharing, scattering=scattering,
        replicas=replicas, planes=_number("planes", planes, integer=True, minimum=10),
        distance_m=_number("distance_m", distance_m, allow_none=True),
        margin_m=_number("margin_m", margin_m, allow_none=True),
        initial_energy_eV=_initial_energy(initial_energy_eV, initial_distribution),
        initial_distribution=initial_distribution, relaxation_tolerance=tolerance,
        energy_cells=_number("energy_cells", energy_cells, integer=True, minimum=64),
        energy_limit_eV=_number("energy_limit_eV", energy_limit_eV),
        pilot_events=_number("pilot_events", pilot_events, integer=True), precision_on=precision_on)


# ------------------------------------------------------------------------------------------------- result

@dataclass(eq=False)
class TownsendResult:
    """SST coefficients of one point (mixture, E/N), each an :class:`~avalanche.engine.results.Estimate`.

    Attributes
    ----------
    estimates : dict
        :data:`TOWNSEND_ESTIMATES` by name (also readable as attributes: ``result.alpha_N``).
    profiles : dict of ndarray
        ``z_m`` (J + 1 planes), ``flux``, ``mean_energy_eV`` per plane; ``slab_center_m``, ``ionization``,
        ``attachment`` (per emitted electron), ``local_alpha_N``, ``local_eta_N`` [m²] per slab; each value with
        a ``<name>_stderr`` (see :data:`PROFILE_UNITS`).
    comparison : dict
        The time-of-flight :data:`COMPARISON_QUANTITIES` at the same E/N (``compare=True``; else empty).
    """

    reduced_field_Td: float
    estimates: dict
    profiles: dict
    comparison: dict
    equilibrium_from_m: float
    events: int
    pilot_events: int
    batches: int
    cpu_seconds: float
    wall_seconds: float
    stop_reason: str
    extrapolated_fraction: float
    anomalies: dict
    inputs: dict
    tallies: dict = field(default_factory=dict)

    mixture: object | None = field(default=None, repr=False)
    """The :class:`~avalanche.gas.mixture.Mixture` that was run (None when read from a file)."""

    def __getattr__(self, name: str):
        return _lookup(self, name)

    def __getstate__(self):
        # the mixture stays with the process that ran the point (model gases hold functions that do not pickle)
        return {**self.__dict__, "mixture": None}

    def __dir__(self):
        return sorted(set(super().__dir__()) | set(self.estimates))

    def to_dict(self, profiles: bool = True) -> dict:
        """JSON-ready data: each estimate as ``{"value": .., "stderr": ..}``, the TOF comparison under
        ``time_of_flight``, the profiles as lists."""
        out: dict = {"mode": "steady-state-townsend", "reduced_field_Td": float(self.reduced_field_Td)}
        out.update({name: self.estimates[name].to_dict() for name, _, _ in TOWNSEND_ESTIMATES
                    if name in self.estimates})
        out["time_of_flight"] = {name: est.to_dict() for name, est in self.comparison.items()}
        if profiles:
            out["profiles"] = {k: [_json_float(v) for v in np.ravel(a)] for k, a in self.profiles.items()}
        out.update({"equilibrium_from_m": float(self.equilibrium_from_m), "events": int(self.events),
                    "pilot_events": int(self.pilot_events), "batches": int(self.batches),
                    "cpu_seconds": float(self.cpu_seconds), "wall_seconds": float(self.wall_seconds),
                    "stop_reason": self.stop_reason, "extrapolated_fraction": float(self.extrapolated_fraction),
                    "anomalies": _plain(self.anomalies), "inputs": _plain(self.inputs),
                    "units": {name: units for name, units, _ in TOWNSEND_ESTIMATES}})
        return out

    def format_table(self) -> str:
        """A readable table of the SST estimates, the time-of-flight values beside them, then the cost."""
        mixture = self.inputs.get("mixture", {})
        composition = ", ".join(f"{k} {v:g}" for k, v in mixture.get("composition", {}).items())
        lines = [f"steady-state Townsend   E/N = {self.reduced_field_Td:g} Td   gas: {composition or '?'}   "
                 f"T = {mixture.get('temperature_K', float('nan')):g} K   "
                 f"N = {mixture.get('number_density_m3', float('nan')):.4g} m^-3"]
        lines += format_rows([(name, desc, self.estimates[name], units) for name, units, desc in TOWNSEND_ESTIMATES])
        if self.comparison:
            lines.append("  time-of-flight at the same E/N:")
            lines += format_rows([(name, Q.label(name), est, Q.unit(name)) for name, est in self.comparison.items()])
        lines.append(f"  {len(self.profiles.get('z_m', []))} planes to {self.profiles['z_m'][-1]:.4g} m, "
                     f"equilibrium from {self.equilibrium_from_m:.4g} m; events {self.events:.4g} "
                     f"(+ pilot {self.pilot_events:.3g}), {self.batches} batches, cpu {self.cpu_seconds:.3g} s, "
                     f"wall {self.wall_seconds:.3g} s, stop: {self.stop_reason}")
        return "\n".join(lines)

    def __repr__(self) -> str:
        return (f"TownsendResult(E/N={self.reduced_field_Td:g} Td, alpha_N={self.alpha_N}, "
                f"effective_alpha_N={self.effective_alpha_N}, stop_reason={self.stop_reason!r})")


# ------------------------------------------------------------------------------------------------ the run

def initial_velocities(gen: np.random.Generator, n: int, settings: TownsendSettings) -> np.ndarray:
    """Velocities (n, 3) [m/s] of electrons leaving the electrode: energies from the settings' initial
    distribution, directions isotropic over the forward hemisphere (v_z > 0)."""
    spec = settings.initial_energy_eV
    if isinstance(spec, tuple):
        energy = gen.choice(np.asarray(spec[0]), size=n, p=np.asarray(spec[1]))
    elif settings.initial_distribution == "beam":
        energy = np.full(n, spec)
    else:
        energy = (2.0 / 3.0) * spec * gen.standard_gamma(1.5, n)
    speed = np.sqrt(energy / K.ENERGY_PER_SPEED2_eV)
    cos_t = 1.0 - gen.random(n)  # (0, 1]
    phi = 2.0 * np.pi * gen.random(n)
    sin_t = np.sqrt(1.0 - cos_t ** 2)
    return np.column_stack((speed * sin_t * np.cos(phi), speed * sin_t * np.sin(phi), speed * cos_t))


@dataclass(frozen=True)
class Layout:
    """Tally planes and bank planes: planes at j ``spacing_m``, j = 0 … ``planes`` − 1; bank planes every
    ``planes_per_pass`` planes up to index ``stop_index`` (beyond the tally planes by the margin)."""

    spacing_m: float
    planes: int
    planes_per_pass: int
    stop_index: int

    @classmethod
    def build(cls, distance_m: float, margin_m: float, planes: int, growth_per_m: float) -> Layout:
        spacing = distance_m / (planes - 1)
        per_pass = max(1, (planes - 1) // 10)
        if growth_per_m > 0:
            per_pass = max(1, min(per_pass, int(GROWTH_PER_PASS / (growth_per_m * spacing))))
        stop = planes - 1 + max(2, math.ceil(margin_m / spacing))
        stop = per_pass * math.ceil(stop / per_pass)
        return cls(spacing_m=spacing, planes=planes, planes_per_pass=per_pass, stop_index=stop)

    @property
    def z_m(self) -> np.ndarray:
        return np.arange(self.planes) * self.spacing_m


def _pilot(mixture: Mixture, reduced_field_Td: float, settings: TownsendSettings, precision: float, events: int,
           compare: bool):
    """The time-of-flight run that sets the distances (and, with ``compare``, the comparison)."""
    from .time_of_flight import swarm

    seed = (*((settings.seed,) if isinstance(settings.seed, int) else settings.seed), 1)
    with warnings.catch_warnings():
        if not compare:
            warnings.simplefilter("ignore")
        initial = settings.initial_energy_eV
        mean = float(np.dot(*initial)) if isinstance(initial, tuple) else initial
        return swarm(mixture, reduced_field_Td, seed=seed, precision=precision, max_events=events,
                     electrons=min(settings.electrons, 4096) if not compare else settings.electrons,
                     sharing=settings.sharing, scattering=settings.scattering, replicas=settings.replicas,
                     energy_limit_eV=settings.energy_limit_eV, initial_energy_eV=mean)


def _finite(*values) -> float:
    return next((float(v) for v in values if math.isfinite(v) and v > 0), math.nan)


def _distances(settings: TownsendSettings, pilot, density_m3: float) -> tuple[float, float, float]:
    """(tally distance [m], margin [m], growth rate [m⁻¹]) from the settings or the pilot.

    Rough pilot values suffice: the flux drift velocity and the simple growth rate |ν_eff|/W are used (they exist
    as soon as the pilot relaxed); D_L is the bulk value, else the flux one.
    """
    distance, margin = settings.distance_m, settings.margin_m
    if pilot is None:
        return distance, margin, 0.0
    w = _finite(pilot.drift_velocity_flux.value)
    growth = abs(pilot.effective_ionization_frequency.value) / w
    growth = growth if math.isfinite(growth) else 0.0
    d_l = _finite(pilot.N_D_L_bulk.value, pilot.N_D_L_flux.value) / density_m3
    relax = w * pilot.relaxation_time_s
    if not (math.isfinite(relax) and relax > 0):
        raise AvalancheError(f"townsend(): the time-of-flight pilot gave no drift distance (W = {w:g} m/s, "
                             f"relaxation time {pilot.relaxation_time_s:g} s); give distance_m and margin_m")
    if distance is None:
        distance = max(4.0 * relax, 4.0 / growth if growth > 0 else 0.0)
        distance = min(distance, 40.0 * relax)
    if margin is None:
        margin = 10.0 * d_l / w if math.isfinite(d_l) else 0.25 * distance
    return distance, margin, growth


class _Passes:
    """The electrons of R replicas between bank planes, with their generators, weights and kernel tables."""

    def __init__(self, mixture: Mixture, reduced_field_Td: float, settings: TownsendSettings, layout: Layout,
                 energy_max_eV: float):
        self.settings, self.layout = settings, layout
        self.table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
        self.field_V_m = reduced_field_Td * TOWNSEND_V_m2 * mixture.number_density_m3
        self.accel = ELEMENTARY_CHARGE_C * self.field_V_m / ELECTRON_MASS_kg
        self.grid = EnergyGrid.build(self.table, energy_max_eV, settings.energy_cells)
        R = settings.replicas
        self.population = settings.electrons // R
        children = np.random.SeedSequence(settings.seed).spawn(R)
        streams = [child.spawn(2) for child in children]
        self.rng = np.array([s[0].generate_state(4, np.uint64) for s in streams], dtype=np.uint64)
        self.rng[np.all(self.rng == 0, axis=1), 0] = np.uint64(1)
        self.control = [np.random.Generator(np.random.PCG64(s[1])) for s in streams]
        self.capacity = 4 * self.population
        self._allocate()
        J, P = layout.planes, len(self.table.processes)
        self.out = {"crossings": np.zeros((R, J), np.int64), "energy_flux": np.zeros((R, J)),
                    "ionizations": np.zeros((R, J - 1), np.int64), "attachments": np.zeros((R, J - 1), np.int64),
                    "path": np.zeros((R, J - 1)), "counts": np.zeros((R, S.N_COUNTS), np.int64),
                    "process_counts": np.zeros((R, P), np.int64), "extrapolated": np.zeros((R, P), np.int64),
                    "max_energy": np.zeros(R)}
        self.events = 0
        self.max_energy_eV = 0.0
        self.anomalies = {"energy_grid_doublings": 0, "energy_grid_reductions": 0, "capacity_enlargements": 0,
                          "redone_passes": 0, "frequency_above_bound": 0, "absorbed_fraction": 0.0, "dead_replicas": 0}

    def _allocate(self) -> None:
        R = self.settings.replicas
        for name in ("z", "vx", "vy", "vz", "bank_vx", "bank_vy", "bank_vz"):
            setattr(self, name, np.zeros((R, self.capacity)))
        self.count = np.zeros(R, np.int64)
        self.bank_count = np.zeros(R, np.int64)

    def emit(self) -> np.ndarray:
        """Put ``population`` new electrons per replica on the electrode; returns their energies (R, M) [eV]."""
        M = self.population
        if self.capacity < 4 * M:
            self.capacity = 4 * M
            self._allocate()
        energies = np.empty((self.settings.replicas, M))
        for r, gen in enumerate(self.control):
            v = initial_velocities(gen, M, self.settings)
            self.z[r, :M] = 0.0
            self.vx[r, :M], self.vy[r, :M], self.vz[r, :M] = v.T
            energies[r] = K.ENERGY_PER_SPEED2_eV * (v ** 2).sum(axis=1)
        self.count[:] = M
        return energies

    def run_pass(self, bank_index: int) -> dict:
        """Advance every replica to the bank plane ``bank_index``, redoing the pass on a larger energy grid or in
        larger arrays when needed; returns the kernel outputs."""
        top = int(self.count.max())
        saved = (self.count.copy(), self.rng.copy(), [getattr(self, n)[:, :top].copy()
                                                      for n in ("z", "vx", "vy", "vz")])
        z_next = bank_index * self.layout.spacing_m
        while True:
            g, t, o = self.grid, self.table, self.out
            S.advance_pass(self.z, self.vx, self.vy, self.vz, self.count, self.bank_vx, self.bank_vy, self.bank_vz,
                           self.bank_count, self.rng, z_next, self.layout.spacing_m, self.accel, self.field_V_m,
                           g.inv_cell_eV, g.n_cells, g.nu_star, g.nu_total, g.nu_cumulative, t.action, t.loss_eV,
                           t.electron_fraction, t.target_fraction, t.thermal_speed, t.scatter, t.sharing, t.w_eV,
                           t.table_max_eV, o["crossings"], o["energy_flux"], o["ionizations"], o["attachments"],
                           o["path"], o["counts"], o["process_counts"], o["extrapolated"], o["max_energy"],
                           t.penning_probability, t.penning_energy_eV, t.penning_slot, g.thermal_groups)
            counts = o["counts"]
            self.events += int(counts[:, S.COUNT_EVENTS].sum())
            self.anomalies["frequency_above_bound"] += int(counts[:, S.COUNT_ABOVE_BOUND].sum())
            if counts[:, S.COUNT_UNKNOWN_ACTION].any():
                raise ConfigError("townsend(): the mixture has a process whose action the steady-state Townsend "
                                  f"kernel does not handle (action codes {sorted(set(t.action.tolist()))}); use "
                                  "avalanche.swarm for it")
            above = bool(counts[:, S.COUNT_ABOVE_GRID].any())
            full = bool(counts[:, S.COUNT_OVERFLOW].any())
            if not (above or full):
                self.max_energy_eV = max(self.max_energy_eV, float(o["max_energy"].max()))
                return o
            count, rng, arrays = saved
            self.anomalies["redone_passes"] += 1
            if above:
                top_eV = 2.0 * self.grid.energy_max_eV
                if top_eV > self.settings.energy_limit_eV:
                    raise AvalancheError(f"townsend(): electrons reached {top_eV / 2:.4g} eV, beyond energy_limit_eV "
                                         f"= {self.settings.energy_limit_eV:g}: the swarm runs away at this E/N; "
                                         "lower the reduced field or raise energy_limit_eV")
                self.grid = EnergyGrid.build(self.table, top_eV, self.settings.energy_cells)
                self.anomalies["energy_grid_doublings"] += 1
            else:
                self.capacity *= 2
                self._allocate()
                self.anomalies["capacity_enlargements"] += 1
            self.count[:] = count
            self.rng[:] = rng
            for name, arr in zip(("z", "vx", "vy", "vz"), arrays, strict=True):
                getattr(self, name)[:, :arr.shape[1]] = arr

    def shrink_grid(self) -> None:
        """Lower the energy grid's top to 1.5 × the largest energy met so far when that is below half the top
        (fewer null events; any top is exact as long as no electron passes it, and a pass where one does is
        redone on a doubled grid)."""
        top = self.grid.energy_max_eV
        if 1.5 * self.max_energy_eV < 0.5 * top:
            self.grid = EnergyGrid.build(self.table, max(1.5 * self.max_energy_eV, 1e-3), self.settings.energy_cells)
            self.anomalies["energy_grid_reductions"] += 1

    def restart_from_bank(self, bank_index: int, log_weight: np.ndarray) -> None:
        """Resample each replica's banked electrons to the population (unbiased; the weight takes n/M) and put
        them on the bank plane as the start of the next pass."""
        M = self.population
        z_next = bank_index * self.layout.spacing_m
        for r, gen in enumerate(self.control):
            n = int(self.bank_count[r])
            if n == 0:
                if np.isfinite(log_weight[r]):
                    self.anomalies["dead_replicas"] += 1
                log_weight[r] = -np.inf
                self.count[r] = 0
                continue
            index, factor = resample_population(gen, n, M)
            for src, dst in (("bank_vx", "vx"), ("bank_vy", "vy"), ("bank_vz", "vz")):
                getattr(self, dst)[r, :M] = getattr(self, src)[r, index]
            self.z[r, :M] = z_next
            self.count[r] = M
            log_weight[r] += math.log(factor)


def _zero_tallies(replicas: int, planes: int) -> dict:
    shapes = {"": (replicas,), "J+1": (replicas, planes), "J": (replicas, planes - 1)}
    return {name: np.zeros(shapes[shape]) for name, (shape, _, _) in TALLY_FIELDS.items()}


def _batch(passes: _Passes, tallies: dict, process_counts: np.ndarray, extrapolated: np.ndarray) -> None:
    """Emit one batch of electrons and carry it through every pass, adding the weighted tallies."""
    layout = passes.layout
    energies = passes.emit()
    M = passes.population
    tallies["emitted"] += M
    tallies["flux"][:, 0] += M
    tallies["energy_flux_eV"][:, 0] += energies.sum(axis=1)
    log_weight = np.zeros(passes.settings.replicas)
    absorbed = 0
    for bank in range(layout.planes_per_pass, layout.stop_index + 1, layout.planes_per_pass):
        o = passes.run_pass(bank)
        weight = np.exp(log_weight)
        for name, key in (("flux", "crossings"), ("energy_flux_eV", "energy_flux"), ("ionizations", "ionizations"),
                          ("attachments", "attachments"), ("path_m", "path")):
            tallies[name] += weight[:, None] * o[key]
        process_counts += o["process_counts"]
        extrapolated += o["extrapolated"]
        absorbed += float(weight @ o["counts"][:, S.COUNT_ABSORBED])
        if bank < layout.stop_index:
            passes.restart_from_bank(bank, log_weight)
    passes.anomalies["absorbed_fraction"] += absorbed / (M * passes.settings.replicas)


def ensure_compiled() -> None:
    """Compile (or load from numba's cache) the SST kernel with a call that does no work."""
    z2 = np.zeros((1, 1))
    i2 = np.zeros((1, 1), dtype=np.int64)
    S.advance_pass(z2, z2.copy(), z2.copy(), z2.copy(), np.zeros(1, np.int64), z2.copy(), z2.copy(), z2.copy(),
                   np.zeros(1, np.int64), np.ones((1, 4), np.uint64), 1.0, 1.0, 1.0, 1.0, 1.0, 1, 1.0, np.ones(2),
                   np.ones((2, 1)), np.zeros(1, np.int64), np.zeros(1), np.zeros(1), np.ones(1), np.zeros(1),
                   np.zeros(1, np.int64), np.zeros(1, np.int64), np.zeros(1), np.full(1, np.inf),
                   np.zeros((1, 2), np.int64), np.zeros((1, 2)), i2.copy(), i2.copy(), z2.copy(),
                   np.zeros((1, S.N_COUNTS), np.int64), i2.copy(), i2.copy(), np.zeros(1), np.zeros(1), np.zeros(1),
                   np.full(1, -1, np.int64), COLD_GAS_GROUPS)


def townsend(mixture: Mixture | str, reduced_field_Td: float, *, seed=0, precision: float = 0.02,
             electrons: int = 4096, max_events: int = 2_000_000_000, compare: bool = False,
             threads: int | None = None, **more) -> TownsendResult:
    """Steady-state Townsend coefficients of electrons in ``mixture`` at reduced field ``reduced_field_Td``.

    Parameters
    ----------
    mixture : Mixture or str
        The gas (a string is passed to :class:`~avalanche.gas.mixture.Mixture`: 300 K, 1 atm).
    reduced_field_Td : float
        E/N [Td], > 0.
    seed : int or tuple of int
        Master seed (replica streams from ``numpy.random.SeedSequence(seed)``; the pilot uses ``(*seed, 1)``).
    precision : float
        Target relative standard error of ``precision_on`` (stop rule, checked after each batch).
    electrons : int
        Electrons followed per pass (the population M per replica is electrons / replicas).
    max_events : int
        Budget of SST trial events (real and null); the run stops after the batch that spends it.
    compare : bool
        Also run :func:`avalanche.swarm` at ``precision`` and report its coefficients in ``comparison``.
    threads : int, optional
        numba threads (default: numba's current setting); results do not depend on it.
    **more
        sharing ('opb'), scattering ('isotropic'), replicas (16), planes (100 tally planes), distance_m (tally
        distance; adaptive when None), margin_m (distance beyond the last plane; adaptive), initial_energy_eV
        (1.0: Maxwellian mean; or (energies_eV, weights)), initial_distribution ('maxwellian' or 'beam'),
        relaxation_tolerance (0.03), energy_cells (8192), energy_limit_eV (1e5), pilot_events (2e7, budget of
        the time-of-flight pilot), precision_on ('auto': alpha_N if ionization occurs, else mean_energy_eV).

    Returns
    -------
    TownsendResult

    Raises
    ------
    ConfigError
        A bad argument (its name, value and the valid choices in the message).
    AvalancheError
        The swarm runs away beyond ``energy_limit_eV``.

    References
    ----------
    Tagashira H, Sakai Y & Sakamoto S (1977) J. Phys. D 10 1051 (SST Monte Carlo, relation to time-of-flight
    coefficients; from memory); Skullerud H R (1968) J. Phys. D 1 1567 (null collisions).
    """
    unknown = set(more) - set(TownsendSettings.__dataclass_fields__)
    if unknown:
        name = sorted(unknown)[0]
        raise ConfigError(f"townsend(): unknown argument '{name}'"
                          f"{_did_you_mean(name, TownsendSettings.__dataclass_fields__)}")
    settings = make_townsend_settings(seed=seed, precision=precision, electrons=electrons, max_events=max_events,
                                      **more)
    if isinstance(mixture, str):
        mixture = Mixture(mixture)
    if not isinstance(mixture, Mixture):
        raise ConfigError(f"townsend(): mixture must be a Mixture or a gas string, got {type(mixture).__name__}")
    reduced_field_Td = _number("reduced_field_Td", reduced_field_Td)
    previous = numba.get_num_threads()
    if threads is not None:
        threads = _number("threads", threads, integer=True)
        if threads > numba.config.NUMBA_NUM_THREADS:
            raise ConfigError(f"townsend(): argument threads = {threads} exceeds the "
                              f"{numba.config.NUMBA_NUM_THREADS} threads numba was started with")
        numba.set_num_threads(threads)
    try:
        cpu0, wall0 = time.process_time(), time.perf_counter()
        result = _simulate(mixture, reduced_field_Td, settings, bool(compare))
        result.cpu_seconds = time.process_time() - cpu0
        result.wall_seconds = time.perf_counter() - wall0
        result.mixture = mixture
    finally:
        numba.set_num_threads(previous)
    return result


def _simulate(mixture: Mixture, reduced_field_Td: float, settings: TownsendSettings, compare: bool):
    density = mixture.number_density_m3
    pilot = None
    if compare or settings.distance_m is None or settings.margin_m is None:
        pilot = (_pilot(mixture, reduced_field_Td, settings, settings.precision, settings.max_events, True) if compare
                 else _pilot(mixture, reduced_field_Td, settings, 0.05, settings.pilot_events, False))
    distance, margin, growth = _distances(settings, pilot, density)
    layout = Layout.build(distance, margin, settings.planes, growth)
    ensure_compiled()
    start_eV = pilot.anomalies.get("final_energy_max_eV", 0.0) if pilot is not None else 0.0
    initial = settings.initial_energy_eV
    top_initial = max(initial[0]) if isinstance(initial, tuple) else 10.0 * initial
    passes = _Passes(mixture, reduced_field_Td, settings, layout, max(start_eV, top_initial, 1.0))
    R, P = settings.replicas, len(passes.table.processes)
    tallies = _zero_tallies(R, layout.planes)
    process_counts = np.zeros((R, P), np.int64)
    extrapolated = np.zeros((R, P), np.int64)
    ionizing = bool(np.any(passes.table.action == K.ACTION_IONIZATION) or np.any(passes.table.penning_probability > 0))
    precision_on = settings.precision_on
    if precision_on == "auto":
        precision_on = "alpha_N" if ionizing else "mean_energy_eV"
    batches, stop_reason = 0, "max_events"
    while True:
        _batch(passes, tallies, process_counts, extrapolated)
        batches += 1
        passes.shrink_grid()
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            est = townsend_estimates(tallies, layout.z_m, density, settings.relaxation_tolerance)
        if est.estimates[precision_on].relative_stderr < settings.precision:
            stop_reason = "precision"
            break
        if passes.events >= settings.max_events:
            break
    passes.anomalies["absorbed_fraction"] /= batches
    _warn(est, layout, process_counts, extrapolated, passes.table.keys, reduced_field_Td)
    comparison = ({name: getattr(pilot, name) for name in COMPARISON_QUANTITIES} if compare else {})
    inputs = {
        "mode": "steady-state-townsend", "reduced_field_Td": float(reduced_field_Td), "mixture": mixture.describe(),
        "label": mixture.label, "seed": settings.seed, "package_version": __version__,
        "settings": dict(asdict(settings), precision_on=precision_on), "processes": list(passes.table.keys),
        "provenance": {c.name: c.cross_sections.provenance for c in mixture.components},
        "threads": numba.get_num_threads(),
        "layout": dict(asdict(layout), distance_m=float(layout.z_m[-1]), margin_m=float(margin)),
        "kT_eV": BOLTZMANN_J_K * mixture.temperature_K / EV_J,
        "pilot": None if pilot is None else {
            name: getattr(pilot, name).to_dict() for name in ("effective_alpha_N", "drift_velocity_bulk",
                                                              "N_D_L_bulk")} | {
            "relaxation_time_s": float(pilot.relaxation_time_s), "events": int(pilot.events)},
    }
    real = max(int(process_counts.sum()), 1)
    return TownsendResult(
        reduced_field_Td=float(reduced_field_Td), estimates=est.estimates, profiles=est.profiles,
        comparison=comparison, equilibrium_from_m=float(layout.z_m[est.region.first]), events=int(passes.events),
        pilot_events=int(pilot.events) if pilot is not None else 0, batches=batches, cpu_seconds=0.0,
        wall_seconds=0.0, stop_reason=stop_reason, extrapolated_fraction=float(extrapolated.sum()) / real,
        anomalies=dict(passes.anomalies, final_energy_max_eV=passes.grid.energy_max_eV), inputs=inputs,
        tallies=dict(tallies, process_counts=process_counts, extrapolated_counts=extrapolated))


def _warn(est, layout: Layout, process_counts, extrapolated, keys, reduced_field_Td: float) -> None:
    where = f"townsend(): E/N = {reduced_field_Td:g} Td"
    if est.region.first > 0.6 * (layout.planes - 1):
        warnings.warn(f"{where}: the flux mean energy relaxed only at z = {layout.z_m[est.region.first]:.3g} m of "
                      f"{layout.z_m[-1]:.3g} m, so the equilibrium region is short; raise distance_m",
                      PhysicsWarning, stacklevel=3)
    notice = extrapolation_notice(where, extrapolated, process_counts, keys)
    if notice:
        warnings.warn(notice, PhysicsWarning, stacklevel=3)
