"""The DC Monte Carlo swarm engine: :func:`swarm` follows an electron swarm in a uniform field through a gas
mixture by the null-collision method and returns every swarm parameter with its standard error.

Method
------
* Null collisions (Skullerud 1968): a constant trial frequency ν* bounds N Σ σ_k(ε) v over the energy grid
  [0, ε_max]; flight times are exponential with rate ν*, flights ballistic and exact; at each trial event the
  process is read from cumulative per-process frequency tables on a uniform grid (cell = int(ε/Δε), linear
  interpolation inside the cell), the rest are null events. Cross sections are evaluated at energies
  ≥ 1e-9 eV, so σ ∝ ε^-1/2 models have a finite, constant ν. ε_max adapts: when an electron leaves the grid
  during a chunk, ε_max doubles, the tables are rebuilt and the chunk is redone from its saved start
  (no event is lost or biased); during relaxation a grid far above every energy met is halved.
* Collisions: elastic with exact two-body kinematics in the centre-of-mass frame (recoil m/M). For T > 0 each trial
  event draws a target velocity V from the Maxwellian of one species (chosen by its band of ν*) and reads the
  frequencies at the relative speed |v − V|; a real collision uses that V, in the target's rest frame
  (:func:`avalanche.kernels.thermal_trial`; Skullerud 1968), so the swarm relaxes to Maxwell–Boltzmann at T.
  Excitation: the threshold is lost (in the target's frame; at rest in a cold gas). Attachment removes the electron.
  Ionization adds an electron and shares ε − I by the ``sharing`` rule. Penning transfer (a mixture's ``penning``
  groups, :mod:`avalanche.gas.penning`): an excitation of a selected level creates, with its probability r, an
  electron of energy ε_level − I_B, isotropic, at the excitation's place and time. Three-body processes scale with
  their species' density over ``reference_density_m3``. Angles are isotropic, or screened Coulomb (Okhrimovskyy et
  al. 2002) for every process if ``scattering="screened-coulomb"`` or for a process whose file says so; the elastic
  total cross section is then σ_m / ⟨1 − cos χ⟩, so that the momentum-transfer cross section is preserved, and
  inelastic scattering uses the same angular form at the post-collision energy.
* R independent replicas (default 16), each a serial simulation with its own xoshiro256** stream derived from
  ``numpy.random.SeedSequence(seed)``, advanced in parallel by numba: results are bitwise identical for any
  number of threads. Python runs the outer loop over chunks (a few tens of trial events per electron):
  tallies, population control, relaxation test, windows, stop rule.
* Population control per replica between chunks: above ``upper × target`` electrons a uniformly random subset
  of ``target`` is kept, below ``lower × target`` random electrons are cloned up to ``target``; the replica's
  weight is multiplied by n/target. Both steps are unbiased for every ensemble mean, and the estimators use
  ratios within chunks, so they never see the weight.
* Relaxation: sampling starts when the mean energy and the real collision frequency over the third and fourth
  quarters of the elapsed time agree within two standard errors, at least ``RELAXATION_MIN_ENERGY_TIMES``
  energy relaxation times τ_ε = (⟨ε⟩ − 3kT/2)/(e E W) have passed, and at least ``RELAXATION_MIN_CHUNKS``
  chunks were run; at half of ``max_events`` sampling starts anyway, with a PhysicsWarning.
* Position moments (bulk quantities, flux diffusion) are sampled in windows: at each window start the
  positions are reset to the origin, the first ``diffusion_skip`` energy relaxation times are not sampled
  (the position–energy correlations build up), then ``diffusion_segment`` × that time is. Without resets the
  spread grows and the precision of a diffusion coefficient stays near √(2/n) however long the run.
* Stop (DC): after every sampled chunk, once :data:`~avalanche.engine.stopping.MIN_SAMPLED_CHUNKS` chunks carry
  position moments, when every quantity of :class:`~avalanche.engine.stopping.StopRule` (every reported nonzero
  estimate, each to its target) has its relative standard error below its target, or when ``max_events`` trial
  events were simulated; ``stop_reason`` says which and ``stopped_by`` which quantity limited the run. AC: the
  relative standard error of ``precision_on`` (default "auto": the ionization rate coefficient if ionization
  occurred during relaxation, else the mean energy) at the end of each position window.

The electric field points along −z, so the force on the electrons and their drift point along +z, and every
drift velocity is reported positive.
"""

from __future__ import annotations

import math
import time
import warnings
from dataclasses import asdict, dataclass, replace

import numba
import numpy as np

from .. import kernels as K
from .._version import __version__
from ..constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, EV_J, ATOMIC_MASS_UNIT_kg, ELECTRON_MASS_kg, TOWNSEND_V_m2
from ..errors import AvalancheError, ConfigError, PhysicsWarning
from ..gas.crosssections import _did_you_mean
from ..gas.mixture import Mixture
from ..quantities import current_name
from . import ac, checks
from .drive import Drive, make_drive
from .ensemble import Ensemble
from .estimators import (
    EstimatorContext,
    energy_distribution,
    extrapolated_fraction,
    magnetic_estimates,
    rate_coefficients,
    swarm_estimates,
)
from .magnetic import NO_FIELD, MagneticField, make_magnetic
from .quasistatic import exact_settings, quasi_static_swarm
from .results import ESTIMATE_UNITS, SwarmResult, assess_convergence
from .stopping import MIN_SAMPLED_CHUNKS, StopRule, parse_precision
from .tables import (  # noqa: F401  (re-exported: the engine's tables are part of its interface)
    ACTIONS,
    COLD_GAS_GROUPS,
    EXTRAPOLATION_WARNING,
    SCATTERING_MODELS,
    SHARING_RULES,
    TRIAL_MARGIN,
    ENERGY_FLOOR_eV,
    EnergyGrid,
    ProcessTable,
    extrapolation_notice,
    momentum_transfer_fraction,
    near_equilibrium_energy_eV,
)
from .tallies import SwarmTallies

IONIZING_KINDS = ("ionization", "penning")
"""Process kinds that create electrons (a "penning" row is the pseudo-process counting Penning transfers)."""
RELAXATION_MIN_CHUNKS = 8
RELAXATION_MIN_ENERGY_TIMES = 3.0
GROWTH_PER_CHUNK = 0.3
"""A chunk is at most GROWTH_PER_CHUNK / |ν_eff| long, so the population changes by < ~35 % per chunk."""
PILOT_ELECTRONS_PER_REPLICA = 16
"""Electrons per replica of the pilot relaxation (see :func:`_pilot_check`)."""
PILOT_TRIGGER = 0.2
"""The pilot relaxation starts when the full ensemble has not relaxed after this fraction of max_events (runs that
relax within it are unchanged)."""
PILOT_CHUNK_EVENTS = 100_000
"""Pilot chunks are made long enough to hold about this many trial events (fewer, cheaper Python steps)."""


@dataclass(frozen=True)
class Settings:
    """Validated run settings of :func:`swarm` (see there for the meaning of each)."""

    seed: int | tuple[int, ...]
    precision: float
    electrons: int
    max_events: int
    sharing: str
    scattering: str
    replicas: int
    precision_on: str
    energy_cells: int
    energy_max_eV: float | None
    energy_limit_eV: float
    initial_energy_eV: float
    events_per_chunk: float
    population_bounds: tuple[float, float]
    eedf_bins: int
    diffusion_skip: float
    diffusion_segment: float
    max_wall_seconds: float | None = None
    ac_method: str = "auto"
    precision_targets: tuple = ()
    relaxation_pilot: bool = True
    trial_frequency: str = "piecewise"


AC_METHODS = ("auto", "exact", "quasi-static")
TRIAL_FREQUENCIES = ("piecewise", "constant")
"""``trial_frequency`` of :func:`swarm`: "piecewise" bounds the collision frequency by a constant over each of a
few energy intervals (DC fields without B; :func:`avalanche.engine.tables.trial_intervals`), "constant" by one
constant over all energies (always so with AC drives and magnetic fields)."""
"""``ac_method`` of :func:`swarm`: "auto" computes the cycle from DC points when the drive is quasi-static
(:mod:`avalanche.engine.quasistatic`) and tracks it exactly otherwise; "exact" always tracks; "quasi-static" always
uses DC points."""


def _positive(name: str, value, integer: bool = False, allow_none: bool = False):
    return checks.positive("swarm()", name, value, integer=integer, allow_none=allow_none)


def _choice(name: str, value, choices) -> str:
    return checks.choice("swarm()", name, value, choices)


def make_settings(*, seed=0, precision=0.01, electrons=16384, max_events=1_000_000_000, sharing="opb",
                  scattering="isotropic", replicas=16, precision_on="auto", energy_cells=8192, energy_max_eV=None,
                  energy_limit_eV=1e5, initial_energy_eV=1.0, events_per_chunk=48.0, population_bounds=(0.6, 1.5),
                  eedf_bins=200, diffusion_skip=4.0, diffusion_segment=3.0, max_wall_seconds=None,
                  ac_method="auto", relaxation_pilot=True, trial_frequency="piecewise") -> Settings:
    """Validate the keyword arguments of :func:`swarm`; raise :class:`ConfigError` naming the bad one."""
    replicas = _positive("replicas", replicas, integer=True)
    if replicas < 2:
        raise ConfigError(f"swarm(): argument replicas = {replicas} must be >= 2 (standard errors come from the "
                          "spread of independent replicas)")
    electrons = _positive("electrons", electrons, integer=True)
    if electrons < 2 * replicas:
        raise ConfigError(f"swarm(): argument electrons = {electrons} must be at least 2 per replica "
                          f"({2 * replicas} for replicas = {replicas})")
    max_events = _positive("max_events", int(max_events) if isinstance(max_events, float) and
                           float(max_events).is_integer() else max_events, integer=True)
    if not (isinstance(population_bounds, (tuple, list)) and len(population_bounds) == 2
            and all(isinstance(b, (int, float)) for b in population_bounds)
            and 0 < population_bounds[0] < 1 < population_bounds[1] <= 4):
        raise ConfigError(f"swarm(): argument population_bounds = {population_bounds!r} must be (lower, upper) "
                          "with 0 < lower < 1 < upper <= 4 (fractions of the target population per replica)")
    precision, precision_targets = parse_precision(precision)
    precision_choices = ("auto", "alpha_N", *[name for name in ESTIMATE_UNITS if name != "alpha_N"])
    energy_cells = _positive("energy_cells", energy_cells, integer=True)
    if not isinstance(relaxation_pilot, (bool, np.bool_)):
        raise ConfigError(f"swarm(): argument relaxation_pilot = {relaxation_pilot!r} must be True or False")
    if energy_cells < 64:
        raise ConfigError(f"swarm(): argument energy_cells = {energy_cells} must be >= 64")
    return Settings(
        seed=checks.seed("swarm()", seed), precision=precision, precision_targets=precision_targets,
        electrons=electrons,
        max_events=max_events, sharing=_choice("sharing", sharing, SHARING_RULES),
        scattering=_choice("scattering", scattering, SCATTERING_MODELS), replicas=replicas,
        precision_on=_choice("precision_on", current_name(precision_on) if isinstance(precision_on, str)
                             else precision_on, precision_choices), energy_cells=energy_cells,
        energy_max_eV=_positive("energy_max_eV", energy_max_eV, allow_none=True),
        energy_limit_eV=_positive("energy_limit_eV", energy_limit_eV),
        initial_energy_eV=_positive("initial_energy_eV", initial_energy_eV),
        events_per_chunk=_positive("events_per_chunk", events_per_chunk),
        population_bounds=(float(population_bounds[0]), float(population_bounds[1])),
        eedf_bins=_positive("eedf_bins", eedf_bins, integer=True),
        diffusion_skip=_positive("diffusion_skip", diffusion_skip),
        diffusion_segment=_positive("diffusion_segment", diffusion_segment),
        max_wall_seconds=_positive("max_wall_seconds", max_wall_seconds, allow_none=True),
        ac_method=_choice("ac_method", ac_method, AC_METHODS), relaxation_pilot=bool(relaxation_pilot),
        trial_frequency=_choice("trial_frequency", trial_frequency, TRIAL_FREQUENCIES))


# ------------------------------------------------------------------------------------------------ the run

@dataclass
class _ChunkOutput:
    sums: np.ndarray
    counts: np.ndarray
    hist: np.ndarray
    process_counts: np.ndarray
    extrapolated: np.ndarray
    node_time: np.ndarray
    below_threshold: np.ndarray
    expected_counts: np.ndarray | None = None  # (R, P), from the two above after the chunk


def ensure_compiled() -> None:
    """Compile (or load from numba's cache) the chunk kernel with a call that does no work."""
    z2 = np.zeros((1, 1))
    i2 = np.zeros((1, 1), dtype=np.int64)
    K.advance_chunk(z2, z2.copy(), z2.copy(), z2.copy(), z2.copy(), z2.copy(), z2.copy(),
                    np.zeros(1, dtype=np.int64), np.ones((1, 4), dtype=np.uint64), 0.0, 1.0, 0.0, 0.0, 0.0, 0.0,
                    1.0, 1, 1.0, np.ones(2), np.ones((2, 1)), np.zeros(1, dtype=np.int64), np.zeros(1),
                    np.zeros(1), np.ones(1), np.zeros(1), np.zeros(1, dtype=np.int64), np.zeros(1, dtype=np.int64),
                    np.zeros(1), np.full(1, np.inf), np.zeros((1, 3)), True, 1.0, np.zeros((1, K.N_SUMS)),
                    np.zeros((1, K.N_COUNTS), dtype=np.int64), z2.copy(), i2.copy(), i2.copy(), np.zeros(1),
                    np.zeros(1), np.full(1, -1, dtype=np.int64), 0.0, *(np.zeros(0),) * 4,
                    np.zeros((1, 0, K.N_PHASE_SUMS)),
                    np.zeros((1, 0, K.N_PHASE_COUNTS), dtype=np.int64), np.zeros((1, 0, 1), dtype=np.int64),
                    COLD_GAS_GROUPS, np.zeros(3), (np.ones(1), np.array([0.0, np.inf]), np.zeros(1, dtype=np.int64)),
                    (np.zeros(2, dtype=np.int64), np.zeros(0, dtype=np.int64), np.zeros(0)), np.zeros((1, 1, 2)),
                    np.zeros((1, 1, 2)))


class _Run:
    """The outer loop of one swarm point."""

    def __init__(self, mixture: Mixture, reduced_field_Td: float, settings: Settings, drive: Drive | None = None,
                 magnetic: MagneticField | None = None):
        self.settings = settings
        self.magnetic = magnetic  # None: no magnetic field, the kernel flies the field-free path
        self.magnetic_kernel = magnetic.kernel_array() if magnetic is not None else NO_FIELD
        self.mixture = mixture
        self.table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
        self.field_V_m = reduced_field_Td * TOWNSEND_V_m2 * mixture.number_density_m3
        self.accel = ELEMENTARY_CHARGE_C * self.field_V_m / ELECTRON_MASS_kg
        # AC: the drive's kernel arguments (DC: no oscillating part, period 0, no phase bins)
        self.drive = drive
        empty = np.zeros(0)
        field = {"accel_ac": 0.0, "omega": 0.0, "period_s": 0.0, "wave": (empty,) * 4}
        if drive is not None:
            field = drive.kernel_field(mixture.number_density_m3)
            self.accel = field["accel_dc"]
        self.accel_ac, self.omega, self.period_s, self.wave = (field["accel_ac"], field["omega"],
                                                                field["period_s"], field["wave"])
        self.phase_out = ac.PhaseTallies.zeros(settings.replicas, drive.phase_bins if drive else 0,
                                               len(self.table.processes))
        self.kT_eV = BOLTZMANN_J_K * mixture.temperature_K / EV_J
        self.ens = Ensemble(settings, growing=bool(np.any(self.table.action == K.ACTION_IONIZATION)
                                                   or np.any(self.table.penning_probability > 0)))
        start = settings.energy_max_eV or 10.0 * settings.initial_energy_eV
        self.grid = EnergyGrid.build(self.table, start, settings.energy_cells)
        R, P, B = settings.replicas, len(self.table.processes), settings.eedf_bins
        self.out = _ChunkOutput(np.zeros((R, K.N_SUMS)), np.zeros((R, K.N_COUNTS), dtype=np.int64),
                                np.zeros((R, B)), np.zeros((R, P), dtype=np.int64),
                                np.zeros((R, P), dtype=np.int64), np.zeros((R, settings.energy_cells, 2)),
                                np.zeros((R, P, 2)))
        # a piecewise-constant trial frequency over energy intervals in a DC field without B (the kernel solves the
        # flight's exit from an interval in closed form only there); constant otherwise
        self.variable_trial = drive is None and magnetic is None and settings.trial_frequency == "piecewise"
        self.eedf_max_eV = self.grid.energy_max_eV
        self.events = 0
        self.chunk_scale = 1.0  # chunks this many times longer while the ensemble is below its target (pilot)
        self.pilot = False
        self.anomalies = {"energy_grid_doublings": 0, "energy_grid_reductions": 0, "capacity_enlargements": 0,
                          "redone_chunks": 0, "shortened_chunks": 0, "frequency_above_bound": 0,
                          "population_controls": 0, "not_relaxed": 0}

    def advance(self, t0: float, t1: float, reference: np.ndarray, positions: bool) -> tuple[_ChunkOutput, float]:
        """Advance every replica from t0 to t1, redoing the chunk on a larger grid, in a larger store, or (when the
        store would pass 4 × the upper population bound) over half the time; returns the outputs and the end."""
        saved = self.ens.save()
        while True:
            e, g, t, o = self.ens, self.grid, self.table, self.out
            K.advance_chunk(e.x, e.y, e.z, e.vx, e.vy, e.vz, e.birth, e.count, e.rng, t0, t1, self.accel,
                            self.accel_ac, self.omega, 0.0, g.inv_cell_eV, g.n_cells, g.nu_star, g.nu_total,
                            g.nu_cumulative, t.action, t.loss_eV, t.electron_fraction, t.target_fraction,
                            t.thermal_speed, t.scatter, t.sharing, t.w_eV, t.table_max_eV, reference, positions,
                            self.settings.eedf_bins / self.eedf_max_eV,
                            o.sums, o.counts, o.hist, o.process_counts, o.extrapolated, t.penning_probability,
                            t.penning_energy_eV, t.penning_slot, self.period_s, *self.wave, self.phase_out.sums,
                            self.phase_out.counts,
                            self.phase_out.process, *self.trial_arguments(), o.node_time, o.below_threshold)
            self.events += int(o.counts[:, K.COUNT_EVENTS].sum())
            self.anomalies["frequency_above_bound"] += int(o.counts[:, K.COUNT_ABOVE_BOUND].sum())
            above = bool(o.counts[:, K.COUNT_ABOVE_GRID].any())
            full = bool(o.counts[:, K.COUNT_OVERFLOW].any())
            if not (above or full):
                o.expected_counts = g.expected_counts(o.node_time, o.below_threshold)
                return o, t1
            self.ens.restore(saved)
            self.anomalies["redone_chunks"] += 1
            if above:
                self.resize_grid(2.0 * self.grid.energy_max_eV)
                self.anomalies["energy_grid_doublings"] += 1
            elif self.ens.capacity < 4 * self.ens.upper:
                self.ens.enlarge()
                self.anomalies["capacity_enlargements"] += 1
            else:
                t1 = t0 + 0.5 * (t1 - t0)
                self.anomalies["shortened_chunks"] += 1

    def trial_arguments(self) -> tuple:
        """The kernel's (thermal_groups, magnetic, trial, expected) arguments of this run's grid."""
        g = self.grid
        if self.variable_trial:
            return g.interval_groups, self.magnetic_kernel, g.trial, g.expected
        return g.thermal_groups, self.magnetic_kernel, g.constant_trial, g.expected

    def resize_grid(self, energy_max_eV: float) -> None:
        if energy_max_eV > self.settings.energy_limit_eV:
            raise AvalancheError(
                f"electrons reached {energy_max_eV / 2:.4g} eV, beyond energy_limit_eV = "
                f"{self.settings.energy_limit_eV:g}: the swarm runs away at this E/N (no steady state); lower the "
                "reduced field or raise energy_limit_eV")
        self.grid = EnergyGrid.build(self.table, energy_max_eV, self.settings.energy_cells)

    def chunk_duration(self, nu_eff: float) -> float:
        dt = self.settings.events_per_chunk * self.chunk_scale / self.grid.nu_star
        if nu_eff != 0.0 and math.isfinite(nu_eff):
            dt = min(dt, GROWTH_PER_CHUNK / abs(nu_eff))
        return dt


class _Series:
    """Growing per-chunk arrays (per replica where it matters)."""

    def __init__(self, replicas: int):
        self.replicas = replicas
        self.scalar: dict[str, list] = {}
        self.per_replica: dict[str, list] = {}

    def add(self, **values) -> None:
        for name, value in values.items():
            if np.ndim(value):
                self.per_replica.setdefault(name, []).append(np.array(value, dtype=float))
            else:
                self.scalar.setdefault(name, []).append(float(value))

    def array(self, name: str) -> np.ndarray:
        if name in self.per_replica:
            return np.array(self.per_replica[name])
        return np.array(self.scalar[name])

    def __len__(self) -> int:
        return len(next(iter(self.scalar.values()), []))


def _stationary(series: _Series, now: float) -> tuple[bool, float, float, float]:
    """Relaxation test over the third and fourth quarters of the elapsed time.

    Returns (stationary, mean energy [eV], flux drift velocity [m/s], real collision frequency [s⁻¹]) of the
    fourth quarter.
    """
    end = series.array("time_s")
    a = (end > 0.5 * now) & (end <= 0.75 * now)
    b = end > 0.75 * now
    if a.sum() < 2 or b.sum() < 2:
        return False, math.nan, math.nan, math.nan
    ok = True
    values = {}
    for num, den in (("energy_sum", "weights"), ("real", "exposure"), ("vz_sum", "weights")):
        n, d = series.array(num), series.array(den)
        qa = n[a].sum(axis=0) / d[a].sum(axis=0)
        qb = n[b].sum(axis=0) / d[b].sum(axis=0)
        values[num] = qb
        if num == "vz_sum":
            continue
        diff = qb - qa
        tol = 2.0 * diff.std(ddof=1) / math.sqrt(diff.size) + 1e-12 * abs(qb.mean())
        ok = ok and bool(abs(diff.mean()) <= tol)
    return (ok, float(np.mean(values["energy_sum"])), float(np.mean(values["vz_sum"])),
            float(np.mean(values["real"])))


def swarm(mixture: Mixture | str, reduced_field_Td: float, magnetic_field_T: float = 0.0,
          field_angle_deg: float = 90.0, *, reduced_magnetic_field_Hx: float | None = None, seed=0,
          precision: float = 0.01, electrons: int = 16384, max_events: int = 1_000_000_000, sharing: str = "opb",
          scattering: str = "isotropic", threads: int | None = None, frequency_Hz: float | None = None,
          phase_bins: int = 32, dc_offset_Td: float = 0.0, waveform=None, progress=None, **more) -> SwarmResult:
    """Swarm parameters of electrons in ``mixture`` at reduced field ``reduced_field_Td`` (DC or AC), by Monte Carlo.

    Parameters
    ----------
    mixture : Mixture or str
        The gas (a string is passed to :class:`~avalanche.gas.mixture.Mixture`: 300 K, 1 atm).
    reduced_field_Td : float
        E/N [Td] (1 Td = 1e-21 V m²), > 0.
    magnetic_field_T : float
        |B| [T], ≥ 0, constant and uniform (0: no magnetic field, exactly the field-free run). Flights are the
        exact motion in E and B (:func:`avalanche.kernels.magnetic_flight`); with an AC drive, see
        :func:`avalanche.kernels.magnetic_field_flight` for the stated error. The result then has
        ``drift_velocity_vector``, ``lorentz_angle_deg``, the diffusion tensors and ``magnetic`` in the frame
        (E, E×B, third) of :mod:`avalanche.engine.magnetic`; the scalar estimates keep their meaning along E (the
        transverse D_T is the mean of the two transverse diagonal components).
    field_angle_deg : float
        Angle between E and B [deg], 0 … 180 (90: crossed fields; 0: B parallel to E).
    reduced_magnetic_field_Hx : float, optional
        B/N [Hx] (1 Hx = 1e-27 T m³) instead of ``magnetic_field_T``.
    seed : int or tuple of int
        Master seed; replica streams derive from ``numpy.random.SeedSequence(seed)``. A tuple such as
        ``(master, point)`` gives independent streams for the points of a sweep.
    precision : float or dict
        Target relative standard error (stop rule, :mod:`avalanche.engine.stopping`): a float for every reported
        nonzero quantity of the default set (mean energy, flux and bulk drift velocities and diffusion, α/N,
        η/N, rate coefficients of the processes above 1 % of the energy loss), or targets by name, e.g.
        ``{"alpha_N": 0.03, "default": 0.01}`` (estimate names or process keys of ``rate_coefficients``). The
        test runs after every sampled chunk; ``result.stopped_by`` names the quantity that stopped (or limited)
        the run and ``result.upper_bounds`` holds the statistically zero ones. With ``precision_on`` set to an
        estimate name only that quantity is tested (AC runs: "auto" tests α/N... as before, at window ends).
    electrons : int
        Target number of electrons, split evenly over the replicas.
    max_events : int
        Budget of trial events (real and null); the run stops when it is spent.
    sharing : {'opb', 'uniform', 'equal'}
        Energy sharing in ionization. 'opb' (default) uses each ionization process's ``opb_w_eV`` and falls back
        to equal sharing, with a PhysicsWarning, where a process has none; the model-gas benchmarks use 'uniform'.
    scattering : {'isotropic', 'screened-coulomb'}
        Angular distribution of every process (a process whose file says 'screened-coulomb' uses it anyway).
    threads : int, optional
        numba threads for this run (default: numba's current setting); results do not depend on it.
    frequency_Hz : float, optional
        AC drive frequency f [Hz] (up to 10 GHz): E(t)/N = dc_offset_Td + reduced_field_Td · sin(2πft), or the
        ``waveform`` repeated at f; None or 0 runs DC (unchanged). See :mod:`avalanche.engine.ac` for the method; the
        result then also has ``phase``, ``phase_resolved`` and ``regime``, and the scalar estimates of the
        phase-resolved quantities are their cycle averages.
    phase_bins : int
        AC: number of phase bins of ωt mod 2π (32).
    dc_offset_Td : float
        AC: constant part E_dc/N [Td] added to the oscillating field (0).
    waveform : str, path or array, optional
        AC: a periodic waveform instead of the sine, as a two-column CSV file (phase fraction in [0, 1) or, with
        the header ``time_s,value``, time within the period) or an (M, 2) array; piecewise linear between the
        nodes and scaled so that its peak |value| is ``reduced_field_Td``
        (:func:`avalanche.engine.drive.load_waveform`).
    progress : callable, optional
        DC: called with a dict: once ``{"stage": "compiling"}`` before the kernels are loaded, after each chunk of
        the relaxation ``{"stage": "relaxing", "events", "max_events", "elapsed_s"}``, after each stop test
        ``{"stage": "sampling", "quantity", "ratio_to_target", "events", "max_events", "elapsed_s", "eta_s"}``
        (the limiting quantity, its relative error over its target, a rough time left [s]). The engine itself
        prints nothing.
    **more
        replicas (16), precision_on ('auto' or an estimate name), energy_cells (8192), energy_max_eV (initial grid
        top, default 10 × initial_energy_eV), energy_limit_eV (1e5, runaway guard), initial_energy_eV (mean of the
        initial Maxwellian: 1.0 in a cold gas; at T > 0 the elastic energy balance at E/N, at most 1.0, so that
        low-field points start near their steady state), events_per_chunk (48, trial events per electron per chunk),
        population_bounds ((0.6, 1.5)), eedf_bins (200), diffusion_skip (4 energy relaxation times),
        diffusion_segment (3 × the skip), max_wall_seconds (None: a wall-clock limit [s], always honoured: sampling
        starts and the run stops when it is spent, checked after every chunk), ac_method ("auto": in the
        quasi-static regime the AC cycle is computed from DC points, :mod:`avalanche.engine.quasistatic`; "exact"
        tracks every period; "quasi-static" always uses DC points), relaxation_pilot (True: a DC run that has not
        relaxed after 20 % of max_events thins every replica to 16 electrons, relaxes them and clones them back to
        the ensemble the remaining budget affords, see :func:`_pilot_check`; False: the full ensemble relaxes),
        trial_frequency ("piecewise": in a DC field without B the null-collision trial frequency is a constant bound
        of the collision frequency over each of a few energy intervals, which wastes far fewer null events in real
        gases; "constant": one bound over all energies, Skullerud 1968; AC drives and magnetic fields always use
        it).

    Returns
    -------
    SwarmResult

    Raises
    ------
    ConfigError
        A bad argument (its name, value and the valid choices in the message).
    AvalancheError
        The swarm runs away beyond ``energy_limit_eV`` or a replica dies out.

    References
    ----------
    Skullerud H R (1968) J. Phys. D 1 1567 (null collisions); Robson R E (1991) Aust. J. Phys. 44 685 (flux and
    bulk transport coefficients; from memory).
    """
    unknown = set(more) - set(Settings.__dataclass_fields__)
    if unknown:
        name = sorted(unknown)[0]
        raise ConfigError(f"swarm(): unknown argument '{name}'{_did_you_mean(name, Settings.__dataclass_fields__)}")
    settings = make_settings(seed=seed, precision=precision, electrons=electrons, max_events=max_events,
                             sharing=sharing, scattering=scattering, **more)
    if isinstance(mixture, str):
        mixture = Mixture(mixture)
    if not isinstance(mixture, Mixture):
        raise ConfigError(f"swarm(): mixture must be a Mixture or a gas string, got {type(mixture).__name__}")
    reduced_field_Td = _positive("reduced_field_Td", reduced_field_Td)
    drive = make_drive(reduced_field_Td, frequency_Hz, phase_bins, dc_offset_Td, waveform)
    if "initial_energy_eV" not in more and mixture.temperature_K > 0:
        settings = replace(settings, initial_energy_eV=_thermal_start_eV(mixture, reduced_field_Td + abs(dc_offset_Td),
                                                                        settings))
    magnetic = make_magnetic(magnetic_field_T, field_angle_deg, reduced_magnetic_field_Hx,
                             number_density_m3=mixture.number_density_m3)
    previous = numba.get_num_threads()
    if threads is not None:
        threads = _positive("threads", threads, integer=True)
        if threads > numba.config.NUMBA_NUM_THREADS:
            raise ConfigError(f"swarm(): argument threads = {threads} exceeds the {numba.config.NUMBA_NUM_THREADS} "
                              "threads numba was started with (set NUMBA_NUM_THREADS)")
        numba.set_num_threads(threads)
    try:
        if progress is not None and not K.advance_chunk.signatures:
            progress({"stage": "compiling"})
        ensure_compiled()
        cpu0, wall0 = time.process_time(), time.perf_counter()
        result, probe_events = None, 0
        if drive is not None and settings.ac_method != "exact":  # AC: DC points in the quasi-static regime
            result, probe_events = quasi_static_swarm(
                mixture, drive, settings, lambda field, s: _simulate(_Run(mixture, field, s, None, magnetic), field),
                BOLTZMANN_J_K * mixture.temperature_K / EV_J, force=settings.ac_method == "quasi-static")
        if result is None:
            run = _Run(mixture, reduced_field_Td, exact_settings(settings, probe_events, wall0), drive, magnetic)
            result = _simulate(run, reduced_field_Td, progress)
            result.events += probe_events
            if drive is not None:
                result.inputs["method"] = result.regime["method"] = "exact"
        result.cpu_seconds = time.process_time() - cpu0
        result.wall_seconds = time.perf_counter() - wall0
        result.mixture = mixture
    finally:
        numba.set_num_threads(previous)
    return result


def _thermal_start_eV(mixture: Mixture, reduced_field_Td: float, settings: Settings) -> float:
    """The default start energy of a gas at T > 0: the elastic energy balance at E/N (an AC drive: its peak),
    capped at the cold-gas default ``settings.initial_energy_eV`` (see :func:`near_equilibrium_energy_eV`)."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PhysicsWarning)  # given again when the run builds its tables
        table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
    return near_equilibrium_energy_eV(table, mixture.number_density_m3, reduced_field_Td, mixture.temperature_K,
                                      settings.initial_energy_eV)


def _energy_relaxation_time(run: _Run, mean_energy_eV: float, drift_velocity: float, frequency: float) -> float:
    """τ_ε = (⟨ε⟩ − 3kT/2) / (e E W) [s], the time the field takes to supply the swarm's excess energy (exact
    energy relaxation time of the Maxwell model); where that is not positive, the elastic estimate
    M / (2 m ν) with the mixture's mean mass and the real collision frequency ν. In a gas at T > 0 the smaller of
    the two: near thermal equilibrium the excess ⟨ε⟩ − 3kT/2 is small and noisy, while the elastic estimate bounds
    the relaxation time (inelastic collisions only shorten it)."""
    tau = (mean_energy_eV - 1.5 * run.kT_eV) / (run.field_V_m * drift_velocity)
    fraction = sum(c.fraction * ELECTRON_MASS_kg / (c.cross_sections.mass_amu * ATOMIC_MASS_UNIT_kg)
                   for c in run.mixture.components)
    elastic = 1.0 / (2.0 * fraction * frequency) if frequency > 0 else math.nan
    if math.isfinite(tau) and tau > 0:
        return min(tau, elastic) if run.kT_eV > 0 and math.isfinite(elastic) else tau
    return elastic


def _recent_rates(series: _Series, chunks: int) -> tuple[float, float, float, float]:
    """Pooled over the replicas and the last ``chunks`` chunks: (mean energy [eV], flux drift velocity [m/s], real
    collision frequency [s⁻¹], trial events per electron-second [s⁻¹])."""
    events = series.array("events")[-chunks:].sum()
    weights = series.array("weights")[-chunks:].sum()
    exposure = series.array("exposure")[-chunks:].sum()
    return (float(series.array("energy_sum")[-chunks:].sum() / weights),
            float(series.array("vz_sum")[-chunks:].sum() / weights),
            float(series.array("real")[-chunks:].sum() / exposure), float(events / exposure))


def _relaxation_events(run: _Run, series: _Series, electrons: int) -> tuple[float, float]:
    """(τ_ε [s], trial events) that relaxing ``electrons`` electrons over RELAXATION_MIN_ENERGY_TIMES energy
    relaxation times takes, at the rates of the last chunks."""
    energy, drift, frequency, trial = _recent_rates(series, min(len(series), RELAXATION_MIN_CHUNKS))
    tau = _energy_relaxation_time(run, energy, drift, frequency)
    return tau, RELAXATION_MIN_ENERGY_TIMES * tau * trial * electrons


def _pilot_check(run: _Run) -> bool:
    """Start the pilot relaxation; returns whether it started.

    Called when the full ensemble has spent PILOT_TRIGGER × max_events without passing the relaxation test (the
    energy relaxation of a heavy rare gas at low E/N takes ~M/(2m) elastic collisions per electron, common
    practice: ~3.6e4 in argon). Each replica is thinned to PILOT_ELECTRONS_PER_REPLICA electrons (unbiased
    population control, :meth:`Ensemble.retarget`), which go on relaxing at a small fraction of the cost;
    :func:`_leave_pilot` clones them back when the test passes. The stationarity test and the number of energy
    relaxation times do not depend on the number of electrons; chunks are made longer so that each holds about
    PILOT_CHUNK_EVENTS trial events (at most the full ensemble's chunk). Runs that relax within PILOT_TRIGGER of
    their budget never take this path (their results are unchanged).
    """
    ens, s = run.ens, run.settings
    if ens.target <= PILOT_ELECTRONS_PER_REPLICA:
        return False
    run.pilot = True
    run.anomalies["pilot_electrons"] = PILOT_ELECTRONS_PER_REPLICA * ens.replicas
    pilot_events = PILOT_ELECTRONS_PER_REPLICA * ens.replicas * s.events_per_chunk
    run.chunk_scale = min(ens.target / PILOT_ELECTRONS_PER_REPLICA, max(1.0, PILOT_CHUNK_EVENTS / pilot_events))
    ens.retarget(PILOT_ELECTRONS_PER_REPLICA)
    return True


def _leave_pilot(run: _Run, series: _Series, tau: float) -> bool:
    """Clone the relaxed pilot electrons up to the ensemble that sampling can afford; returns True.

    The full target (``electrons``) when half of the remaining budget covers one position window (diffusion_skip +
    diffusion_segment energy relaxation times) for every electron, else fewer (at least the pilot's): a swarm with
    a long energy relaxation then samples with fewer electrons over a longer time, which costs the same per
    event and gives finite bulk and diffusion estimates within the budget. ``anomalies["sampled_electrons"]``
    records the size used.
    """
    ens, s = run.ens, run.settings
    recent_tau, _ = _relaxation_events(run, series, 1)
    tau = tau if math.isfinite(tau) and tau > 0 else recent_tau
    _, _, _, trial = _recent_rates(series, min(len(series), RELAXATION_MIN_CHUNKS))
    full = s.electrons // s.replicas
    window = s.diffusion_skip * (1.0 + s.diffusion_segment) * tau if math.isfinite(tau) and tau > 0 else 0.0
    remaining = max(s.max_events - run.events, 0)
    affordable = 0.5 * remaining / (trial * window * ens.replicas) if window > 0 else full
    target = int(min(full, max(ens.target, math.floor(affordable))))
    run.pilot = False
    run.chunk_scale = full / target
    ens.retarget(target)
    run.anomalies["sampled_electrons"] = target * ens.replicas
    return True


def _relaxation_advice(run: _Run, series: _Series) -> str:
    """What to change when the relaxation test did not pass in the budget: the events it needs at this point
    (sampling is forced at half of max_events, hence the factor 2)."""
    tau, needed = _relaxation_events(run, series, int(run.ens.count.sum()))
    if not (math.isfinite(needed) and needed > 0):
        return "raise max_events"
    return (f"the energy relaxation time is about {tau:.3g} s and relaxing {int(run.ens.count.sum())} electrons "
            f"needs about {needed:.3g} trial events: raise max_events to at least {2.0 * needed:.3g}, or lower "
            "electrons")


def _shrink_grid(run: _Run, recent_max_eV: float, factor: float) -> None:
    """Lower the grid top to ``factor`` × the largest energy met recently, if that is below half the top.

    Any top is exact as long as no electron passes it (a chunk where one does is redone on a doubled grid); a low
    top means a low trial frequency and fewer null events.
    """
    top = run.grid.energy_max_eV
    if recent_max_eV * factor < 0.5 * top:
        run.anomalies["energy_grid_reductions"] += 1
        run.resize_grid(max(recent_max_eV * factor, 1e-3))


def _simulate(run: _Run, reduced_field_Td: float, progress=None) -> SwarmResult:
    s, ens = run.settings, run.ens
    tallies = SwarmTallies.zeros(s.replicas, len(run.table.processes), s.eedf_bins, magnetic=run.magnetic is not None)
    # magnetic: the full position moments (mean, covariance) at chunk starts and ends, for the bulk tensor
    moments = ens.position_moments if run.magnetic is not None else (lambda: None)
    series = _Series(s.replicas)
    t = 0.0
    sampling = False
    relaxation_time = math.nan
    ionized = False
    nu_eff = 0.0
    start = ens.moments()
    start_b = moments()
    mature_from = window_end = math.inf
    skip = segment = math.nan
    stop_reason = "max_events"
    ion_kinds = np.array([k in IONIZING_KINDS for k in run.table.kinds])
    precision_on = s.precision_on
    t_ = run.table
    rule = StopRule(s.precision, s.precision_targets, t_.keys, t_.kinds, t_.loss_eV, t_.electron_fraction,
                    t_.target_density_m3, run.mixture.number_density_m3,
                    only=None if precision_on == "auto" else precision_on)
    mature_chunks = 0
    resized = False  # the ensemble was resampled to a new size (pilot relaxation): position moments start again
    drive = run.drive  # AC: chunks end on a grid holding every period boundary; the relaxation test runs there
    started = time.perf_counter()
    phase_tallies = ac.PhaseTallies.zeros(s.replicas, drive.phase_bins, len(run.table.processes)) if drive else None
    slack = 1e-9 * drive.period_s if drive else 0.0
    while True:
        dt = run.chunk_duration(nu_eff)
        reference = np.nan_to_num(start[:, :3])
        out, t_end = run.advance(t, t + dt if drive is None else drive.chunk_end(t, dt), reference,
                                 t + slack >= mature_from)
        t_start, t, dt = t, t_end, t_end - t
        end = ens.moments()
        end_b = moments()
        sums, counts = out.sums, out.counts
        exposure = sums[:, K.SUM_EXPOSURE]
        net = counts[:, K.COUNT_CREATED].sum() - counts[:, K.COUNT_REMOVED].sum()
        nu_eff = net / exposure.sum() if exposure.sum() > 0 else 0.0
        series.add(time_s=t, duration_s=dt, electrons=ens.count.sum(), sampling=float(sampling),
                   energy_max_eV=run.grid.energy_max_eV, log_weight=ens.log_weight.mean(),
                   events=counts[:, K.COUNT_EVENTS], weights=sums[:, K.SUM_WEIGHTS], energy_sum=sums[:, K.SUM_ENERGY],
                   vz_sum=sums[:, K.SUM_VZ],
                   real=counts[:, K.COUNT_REAL], exposure=exposure, max_energy=sums[:, K.SUM_MAX_ENERGY],
                   net_production=np.full(s.replicas, net / s.replicas))
        boundary = drive is None or drive.at_boundary(t)
        if drive is not None:
            series.add(net=(counts[:, K.COUNT_CREATED] - counts[:, K.COUNT_REMOVED]).astype(float),
                       power=run.phase_out.sums[:, :, K.PHASE_POWER].sum(axis=1))
        if not sampling:
            ionized = ionized or bool(out.process_counts[:, ion_kinds].sum() > 0)
            if drive is None:
                ok, energy, drift, frequency = _stationary(series, t)
            else:  # the field's power per electron over the field amplitude stands in for W
                ok, energy, power, frequency = (ac.periodic_stationary(series, drive, t) if boundary
                                                else (False, math.nan, math.nan, math.nan))
                drift = power / run.field_V_m
            tau = _energy_relaxation_time(run, energy, drift, frequency)
            enough = len(series) >= RELAXATION_MIN_CHUNKS and (
                not math.isfinite(tau) or t >= RELAXATION_MIN_ENERGY_TIMES * tau)
            # the budget and the wall-clock limit are checked after every chunk, also inside a period
            over_time = _over_time(s, started)
            forced = run.events >= 0.5 * s.max_events or over_time
            if (drive is None and s.relaxation_pilot and "pilot_electrons" not in run.anomalies and not (ok and enough)
                    and run.events >= PILOT_TRIGGER * s.max_events):
                resized = _pilot_check(run)
            if (ok and enough) or forced:
                if forced and not (ok and enough):
                    run.anomalies["not_relaxed"] = 1
                    limit = (f"max_wall_seconds = {s.max_wall_seconds:g}" if over_time
                             else f"half of max_events = {s.max_events:g}")
                    warnings.warn(f"E/N = {reduced_field_Td:g} Td: the swarm did not pass the relaxation test "
                                  f"within {limit}; sampling starts anyway ({_relaxation_advice(run, series)})",
                                  PhysicsWarning, stacklevel=3)
                if run.pilot:
                    resized = _leave_pilot(run, series, tau)
                sampling = True
                relaxation_time = t
                _shrink_grid(run, float(series.array("max_energy")[len(series) // 2:].max()), 1.5)
                run.eedf_max_eV = run.grid.energy_max_eV
                if not math.isfinite(tau):
                    tau = dt
                skip = s.diffusion_skip * tau
                segment = max(s.diffusion_segment * skip, 4.0 * dt)
                if drive is not None:  # AC: position windows of whole periods, stop rule on cycle averages
                    skip, segment = (drive.period_s * math.ceil(x / drive.period_s - 1e-9) for x in (skip, segment))
                    if precision_on == "auto":
                        precision_on = "ionization_rate_coefficient" if ionized else "mean_energy_eV"
                if precision_on == "auto":
                    precision_on = "all"  # DC: every reported nonzero quantity (engine.stopping)
            elif len(series) % RELAXATION_MIN_CHUNKS == 0:
                _shrink_grid(run, float(series.array("max_energy")[-RELAXATION_MIN_CHUNKS:].max()), 2.0)
            if progress is not None:
                progress({"stage": "relaxing", "events": run.events, "max_events": s.max_events,
                          "elapsed_s": time.perf_counter() - started})
        else:
            tallies.add_chunk(sums, counts, out.hist, out.process_counts, out.extrapolated, dt, out.expected_counts)
            if drive is not None:
                phase_tallies.add(run.phase_out)
            if t_start + slack >= mature_from:
                tallies.add_mature_chunk(sums, counts, dt, start[:, 2:5], end[:, 2:5], start_b, end_b)
                mature_chunks += 1
        if ens.control() or resized:
            run.anomalies["population_controls"] += 0 if resized else 1
            resized = False
            start = ens.moments()
            start_b = moments()
        else:
            start = end
            start_b = end_b
        if drive is None and mature_chunks >= MIN_SAMPLED_CHUNKS:  # DC: every chunk, from the tallies so far
            if _stop_test(run, tallies, rule):
                stop_reason = "precision"
                break
            if progress is not None:
                progress(_progress_state(run, rule, started))
        if drive is not None and sampling and t + slack >= window_end:
            estimates = swarm_estimates(tallies, _context(run, tallies))
            estimates.update(_phase_estimates(run, phase_tallies).cycle)
            if estimates[precision_on].relative_stderr < s.precision:
                stop_reason = "precision"
                break
        if sampling and (t + slack >= window_end or not math.isfinite(window_end)):
            ens.reset_positions()
            start = ens.moments()
            start_b = moments()
            mature_from = t + skip
            window_end = mature_from + segment
        if tallies["events"].sum() > 0 and run.events >= s.max_events:
            break
        if tallies["events"].sum() > 0 and _over_time(s, started):
            stop_reason = "max_wall_seconds"
            break
    run.windows = {"skip_s": skip, "segment_s": segment}
    result = _result(run, reduced_field_Td, tallies, series, relaxation_time, stop_reason, precision_on)
    if drive is None:
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", RuntimeWarning)
            rule.check(result.estimates, result.rate_coefficients, tallies["process_counts"].sum(axis=0),
                       float(tallies["exposure_s"].sum()))
        result.stopped_by, result.upper_bounds = rule.limiting, dict(rule.upper_bounds)
    else:
        result.stopped_by = precision_on
    if drive is not None:
        ac.finish(result, drive, _phase_estimates(run, phase_tallies), phase_tallies, run.table.target_density_m3,
                  run.table.scatter == K.SCATTER_SCREENED_COULOMB, run.kT_eV)
    sampled = series.array("sampling") > 0
    energy = series.array("energy_sum")[sampled] / series.array("weights")[sampled] if drive is None else None
    result.converged, result.convergence_notes = assess_convergence(result, energy)
    return result


def _stop_test(run: _Run, tallies: SwarmTallies, rule: StopRule) -> bool:
    """The DC stop test on the tallies accumulated so far (see :class:`avalanche.engine.stopping.StopRule`)."""
    ctx = _context(run, tallies)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        return rule.check(swarm_estimates(tallies, ctx), rate_coefficients(tallies, ctx),
                          tallies["process_counts"].sum(axis=0), float(tallies["exposure_s"].sum()))


def _progress_state(run: _Run, rule: StopRule, started: float) -> dict:
    """What a progress callback receives: the limiting quantity, its relative error and target ratio, the events
    so far and the estimated seconds left (errors fall as 1/√events, so the events needed scale with ratio²)."""
    elapsed = time.perf_counter() - started
    ratio = rule.limiting_ratio
    left = elapsed * (ratio * ratio - 1.0) if math.isfinite(ratio) and ratio > 1 else math.nan
    return {"stage": "sampling", "quantity": rule.limiting, "ratio_to_target": ratio, "events": run.events,
            "max_events": run.settings.max_events, "elapsed_s": elapsed, "eta_s": left}


def _over_time(settings: Settings, started: float) -> bool:
    return settings.max_wall_seconds is not None and time.perf_counter() - started > settings.max_wall_seconds


def _phase_estimates(run: _Run, phase_tallies: ac.PhaseTallies) -> ac.PhaseEstimates:
    t = run.table
    return ac.phase_estimates(phase_tallies, run.drive, t.keys, t.kinds, t.target_density_m3,
                              run.mixture.number_density_m3)


def _context(run: _Run, tallies: SwarmTallies) -> EstimatorContext:
    edges = np.linspace(0.0, run.eedf_max_eV, run.settings.eedf_bins + 1)
    return EstimatorContext(number_density_m3=run.mixture.number_density_m3, field_V_m=run.field_V_m,
                            process_keys=run.table.keys, process_kinds=run.table.kinds,
                            target_density_m3=run.table.target_density_m3, energy_edges_eV=edges)


def _result(run: _Run, reduced_field_Td: float, tallies: SwarmTallies, series: _Series, relaxation_time: float,
            stop_reason: str, precision_on: str) -> SwarmResult:
    ctx = _context(run, tallies)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        estimates = swarm_estimates(tallies, ctx)
    notice = extrapolation_notice(f"E/N = {reduced_field_Td:g} Td", tallies["extrapolated_counts"],
                                  tallies["process_counts"], run.table.keys)
    if notice:
        warnings.warn(notice, PhysicsWarning, stacklevel=3)
    if tallies["mature_events"].sum() == 0:
        warnings.warn(f"E/N = {reduced_field_Td:g} Td: no chunk was sampled for position moments (bulk drift, "
                      "diffusion, Townsend coefficients are NaN); raise max_events", PhysicsWarning, stacklevel=3)
    weights = series.array("weights")
    pooled = {
        "mean_energy_eV": series.array("energy_sum").sum(axis=1) / weights.sum(axis=1),
        "drift_velocity_flux": series.array("vz_sum").sum(axis=1) / weights.sum(axis=1),
        "collision_frequency": series.array("real").sum(axis=1) / series.array("exposure").sum(axis=1),
        "net_production_frequency": (series.array("net_production").sum(axis=1)
                                     / series.array("exposure").sum(axis=1)),
    }
    time_series = {name: series.array(name) for name in ("time_s", "duration_s", "sampling", "electrons",
                                                         "log_weight", "energy_max_eV")}
    time_series.update(pooled)
    mix = run.mixture
    anomalies = dict(run.anomalies)
    anomalies["final_energy_max_eV"] = run.grid.energy_max_eV
    inputs = {
        "reduced_field_Td": float(reduced_field_Td), "mixture": mix.describe(), "label": mix.label,
        "seed": run.settings.seed, "settings": dict(asdict(run.settings), precision_on=precision_on),
        "package_version": __version__, "processes": list(run.table.keys),
        "provenance": {c.name: c.cross_sections.provenance for c in mix.components},
        "threads": numba.get_num_threads(), "windows": run.windows,
    }
    if run.magnetic is not None:
        inputs["magnetic_field"] = run.magnetic.describe()
    return SwarmResult(
        reduced_field_Td=float(reduced_field_Td), estimates=estimates,
        rate_coefficients=rate_coefficients(tallies, ctx),
        rate_coefficients_counted=rate_coefficients(tallies, ctx, counted=True),
        eedf=energy_distribution(tallies, ctx), events=int(run.events), cpu_seconds=0.0, wall_seconds=0.0,
        stop_reason=stop_reason, relaxation_time_s=float(relaxation_time),
        sampled_time_s=float(tallies["sampled_time_s"][0]), extrapolated_fraction=extrapolated_fraction(tallies),
        anomalies=anomalies, inputs=inputs, time_series=time_series, tallies=tallies,
        magnetic=magnetic_estimates(tallies, ctx) if run.magnetic is not None else None)


def dc_equivalent(mixture, result, **swarm_options):
    """A DC swarm run at the effective field E_eff/N of an AC ``result`` (``result.regime["effective_field_Td"]``)
    — the DC-equivalent numbers of the effective-field regime (for the quasi-static regime average DC runs over
    the phase with :func:`phase_average` instead). ``swarm_options`` go to :func:`swarm`."""
    if result.regime is None:
        raise ConfigError("dc_equivalent(): the result is not from an AC run (no regime)")
    field = result.regime["effective_field_Td"]
    if not (math.isfinite(field) and field > 0):
        raise ConfigError(f"dc_equivalent(): the result's effective field is {field!r} Td; nothing to run")
    return swarm(mixture, field, **swarm_options)
