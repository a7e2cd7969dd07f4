"""Avalanches in electrode gaps: :func:`gap` follows every electron of the avalanches of ``primaries`` primary
electrons through the gap's non-uniform, DC or AC field.

Method
------
* Electrons. One avalanche per primary, each a row of the kernel :func:`avalanche.kernels.gap.advance_slice`
  with its own random stream from ``numpy.random.SeedSequence((*seed, primary))``, so results do not depend on
  the batch size or the threads. Collisions, null collisions and kinematics are those of :func:`avalanche.swarm`
  (same :class:`~avalanche.engine.tables.ProcessTable` and :class:`~avalanche.engine.tables.EnergyGrid`); the free
  flight is integrated by velocity Verlet with the step control of the kernel (see its notes for the error).
* Time slices. Python advances all avalanches of a batch slice by slice; between slices it applies the stop rule
  and population control: an avalanche with more than ``population_cap`` live electrons keeps a uniformly random
  subset of ``population_cap`` of them and multiplies its weight by n/cap (unbiased for every tally; the gain of
  such a primary is then an estimate, flagged in ``gain_distribution.controlled``). Memory is O(electrons alive).
* Stop rule. When an avalanche's electrons (1 + created − attached, weighted) reach ``electron_limit`` (default
  1e8, the Raether–Meek streamer criterion: Raether H 1964, *Electron Avalanches and Breakdown in Gases*,
  Butterworths; Meek J M 1940, Phys. Rev. 57 722 — from memory), it stops; the time and the centroid of its live
  electrons are reported as "streamer criterion reached". Space charge is neglected in every case, so results
  beyond ~1e6–1e7 electrons describe the vacuum-field avalanche only.
* Drive. V(t) = voltage_V for DC; with ``frequency_Hz`` V(t) = dc_offset_V + voltage_V w(t), w a sine or the
  tabulated periodic waveform of :func:`avalanche.engine.drive.make_drive` (peak |w| = 1). The step is at most
  1/400 of a period.
* Time bins. A short pilot (a few primaries, population cap 64) measures the avalanche duration; the current and
  arrival-time bins then span 1.5 × that from ``start_time_s``, later arrivals going into the last bin.
"""

from __future__ import annotations

import math
import time
from dataclasses import asdict, dataclass

import numba
import numpy as np

from .._version import __version__
from ..constants import ELEMENTARY_CHARGE_C, TOWNSEND_V_m2
from ..engine.drive import make_drive
from ..engine.results import Estimate
from ..engine.tables import SCATTERING_MODELS, SHARING_RULES, EnergyGrid, ProcessTable
from ..errors import AvalancheError, ConfigError
from ..gas.crosssections import _did_you_mean
from ..gas.mixture import Mixture
from ..kernels import collisions as KC
from ..kernels import gap as KG
from ..kernels.population import resample_population
from . import local_field as LF
from .geometry import Geometry
from .results import GainDistribution, GapResult, polya_fit


@dataclass(frozen=True)
class GapSettings:
    """Validated options of :func:`gap` (see there)."""

    sharing: str = "opb"
    scattering: str = "isotropic"
    batch: int = 32
    population_cap: int = 4000
    electron_limit: float = 1e8
    step_control: float = 0.05
    initial_energy_eV: float = 1.0
    initial_direction: str = "forward"
    start_position_m: tuple | None = None
    start_time_s: float = 0.0
    frequency_Hz: float | None = None
    waveform: object = None
    dc_offset_V: float = 0.0
    current_bins: int = 200
    map_bins: int = 40
    map_extent_m: tuple | None = None
    arrival_samples: int = 16
    energy_cells: int = 4096
    energy_limit_eV: float = 1e5
    max_time_s: float | None = None
    local_field: bool = True
    alpha_table: object = None
    alpha_precision: float = 0.03
    pilot_primaries: int = 4


def _fail(name, value, requirement):
    raise ConfigError(f"gap(): argument {name} = {value!r} must be {requirement}")


def _positive(name, value, integer=False, allow_none=False):
    if value is None and allow_none:
        return None
    kinds = (int, np.integer) if integer else (int, float, np.integer, np.floating)
    if isinstance(value, bool) or not isinstance(value, kinds) or not math.isfinite(float(value)) or value <= 0:
        _fail(name, value, "a positive integer" if integer else "a positive finite number")
    return int(value) if integer else float(value)


def make_gap_settings(**options) -> GapSettings:
    """Validate the keyword options of :func:`gap`; raise :class:`ConfigError` naming the bad one."""
    fields = GapSettings.__dataclass_fields__
    unknown = set(options) - set(fields)
    if unknown:
        name = sorted(unknown)[0]
        raise ConfigError(f"gap(): unknown argument '{name}'{_did_you_mean(name, fields)}; valid options are "
                          f"{sorted(fields)}")
    s = dict(asdict(GapSettings()), **options)
    for name, choices in (("sharing", SHARING_RULES), ("scattering", SCATTERING_MODELS),
                          ("initial_direction", ("forward", "isotropic"))):
        if s[name] not in choices:
            raise ConfigError(f"gap(): argument {name} = {s[name]!r} is not valid"
                              f"{_did_you_mean(str(s[name]), choices)}; choose one of {list(choices)}")
    for name in ("batch", "population_cap", "current_bins", "map_bins", "energy_cells", "pilot_primaries"):
        s[name] = _positive(name, s[name], integer=True)
    s["arrival_samples"] = int(s["arrival_samples"]) if s["arrival_samples"] else 0
    for name in ("electron_limit", "step_control", "initial_energy_eV", "energy_limit_eV", "alpha_precision"):
        s[name] = _positive(name, s[name])
    if s["step_control"] > 0.5:
        _fail("step_control", s["step_control"], "at most 0.5 (displacement per step / field gradient length)")
    if s["population_cap"] < 16:
        _fail("population_cap", s["population_cap"], "at least 16")
    s["max_time_s"] = _positive("max_time_s", s["max_time_s"], allow_none=True)
    s["frequency_Hz"] = _positive("frequency_Hz", s["frequency_Hz"], allow_none=True) if s["frequency_Hz"] else None
    for name in ("start_time_s", "dc_offset_V"):
        if isinstance(s[name], bool) or not isinstance(s[name], (int, float, np.integer, np.floating)) \
                or not math.isfinite(float(s[name])):
            _fail(name, s[name], "a finite number")
        s[name] = float(s[name])
    if s["start_position_m"] is not None:
        p = np.asarray(s["start_position_m"], dtype=float).ravel()
        if p.size != 3 or not np.all(np.isfinite(p)):
            _fail("start_position_m", s["start_position_m"], "three finite coordinates (x, y, z) [m]")
        s["start_position_m"] = tuple(p.tolist())
    if s["map_extent_m"] is not None:
        e = np.asarray(s["map_extent_m"], dtype=float).ravel()
        if e.size != 3 or not np.all(np.isfinite(e)) or e[0] <= 0 or e[2] <= e[1]:
            _fail("map_extent_m", s["map_extent_m"], "(rho_max, z_min, z_max) [m] with rho_max > 0 and z_max > z_min")
        s["map_extent_m"] = tuple(e.tolist())
    s["local_field"] = bool(s["local_field"])
    return GapSettings(**s)


def _seed(value) -> tuple[int, ...]:
    def ok(v):
        return isinstance(v, (int, np.integer)) and not isinstance(v, bool) and v >= 0
    if ok(value):
        return (int(value),)
    if isinstance(value, (tuple, list)) and value and all(ok(v) for v in value):
        return tuple(int(v) for v in value)
    _fail("seed", value, "a non-negative integer or a tuple of them")


# ------------------------------------------------------------------------------------------------- the run

class _Run:
    """Kernel tables, drive, tallies and the batch loop of one :func:`gap` call."""

    def __init__(self, geometry: Geometry, mixture: Mixture, voltage_V: float, settings: GapSettings,
                 seed: tuple[int, ...]):
        self.geometry, self.mixture, self.settings, self.seed = geometry, mixture, settings, seed
        self.voltage_V = voltage_V
        self.geo = geometry.kernel_geometry()
        self.table = ProcessTable.build(mixture, settings.sharing, settings.scattering)
        self.grid = EnergyGrid.build(self.table, max(4.0 * settings.initial_energy_eV, 30.0), settings.energy_cells)
        self.drive_obj = None
        empty = np.zeros(0)
        if settings.frequency_Hz:
            self.drive_obj = make_drive(1.0, settings.frequency_Hz, waveform=settings.waveform)
            period = self.drive_obj.period_s
            if self.drive_obj.waveform is None:
                self.drive = (settings.dc_offset_V, voltage_V, self.drive_obj.omega, 0.0, period, empty, empty)
            else:
                t, v, _, _ = self.drive_obj.waveform.kernel_tables(voltage_V, period)
                self.drive = (settings.dc_offset_V, 0.0, 0.0, 0.0, period, t, v)
            self.max_step_s = period / 400.0
        else:
            self.drive = (voltage_V, 0.0, 0.0, 0.0, 1.0, empty, empty)
            self.max_step_s = math.inf
        v0 = KG.voltage(self.drive, settings.start_time_s)
        if v0 == 0.0:
            raise ConfigError(f"gap(): the voltage is 0 at start_time_s = {settings.start_time_s:g} s; electrons "
                              "would not drift (choose another start time or a nonzero voltage)")
        self.v0 = v0
        if settings.start_position_m is None:
            start, direction = geometry.emitter(v0 > 0)
        else:
            start = np.asarray(settings.start_position_m, dtype=float)
            if KG.region(self.geo, *start) != KG.GAS:
                raise ConfigError(f"gap(): start_position_m = {list(start)} is not in the gas of {geometry!r}")
            ex, ey, ez, _ = KG.unit_field(self.geo, *start)
            direction = -np.sign(v0) * np.array([ex, ey, ez]) / max(math.sqrt(ex * ex + ey * ey + ez * ez), 1e-300)
        self.start, self.direction = start, direction
        n = direction / np.linalg.norm(direction)
        helper = np.array([1.0, 0.0, 0.0]) if abs(n[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
        e1 = np.cross(n, helper)
        e1 /= np.linalg.norm(e1)
        self.basis = (n, e1, np.cross(n, e1))
        # maps: slot 0 = electrons created, then one per excitation and ionization process
        self.map_names = ["created"]
        slots = []
        for key, kind in zip(self.table.keys, self.table.kinds, strict=True):
            if kind in ("excitation", "ionization"):
                slots.append(len(self.map_names))
                self.map_names.append(key)
            else:
                slots.append(-1)
        self.map_slot = np.array(slots, np.int64)
        self.map_extent = settings.map_extent_m or geometry.map_extent()
        self.bin_width = 1.0
        self.t_origin = settings.start_time_s
        self.anomalies = {"energy_grid_doublings": 0, "capacity_enlargements": 0, "redone_slices": 0,
                          "frequency_above_bound": 0, "current_overflow_fraction": 0.0, "controlled_primaries": 0,
                          "time_limit_primaries": 0}
        self.events = self.steps = self.real = 0
        P = len(self.table.processes)
        self.process_counts = np.zeros(P, np.int64)
        self.extrapolated = np.zeros(P, np.int64)

    # --------------------------------------------------------------------------------------------- batches
    def _gas(self):
        g, t = self.grid, self.table
        args = (t.loss_eV, t.electron_fraction, t.target_fraction, t.thermal_speed, t.scatter, t.sharing, t.w_eV,
                t.penning_probability, t.penning_energy_eV)
        return (g.inv_cell_eV, g.n_cells, g.nu_star, g.nu_total, g.nu_cumulative, t.action, args, t.table_max_eV,
                t.penning_slot, self.map_slot)

    def _initial(self, gen: np.random.Generator) -> np.ndarray:
        energy = (2.0 / 3.0) * self.settings.initial_energy_eV * gen.standard_gamma(1.5)
        speed = math.sqrt(energy / KC.ENERGY_PER_SPEED2_eV)
        cos_t = 1.0 - 2.0 * gen.random() if self.settings.initial_direction == "isotropic" else 1.0 - gen.random()
        phi = 2.0 * math.pi * gen.random()
        sin_t = math.sqrt(max(0.0, 1.0 - cos_t * cos_t))
        n, e1, e2 = self.basis
        return speed * (cos_t * n + sin_t * (math.cos(phi) * e1 + math.sin(phi) * e2))

    def run_batch(self, primaries: np.ndarray, cap: int, bins: int, map_bins: int, samples: int,
                  pilot: bool = False) -> dict:
        """Follow the avalanches of the primaries with indices ``primaries`` to their end; per-primary tallies."""
        R = primaries.size
        P = len(self.table.processes)
        capacity = max(4 * cap, 64)
        arrays = [np.zeros((R, capacity)) for _ in range(7)]
        count = np.ones(R, np.int64)
        rng = np.zeros((R, 4), np.uint64)
        control_gen = []
        for r, index in enumerate(primaries):
            ss = np.random.SeedSequence((*self.seed, int(index)))
            rng[r] = ss.generate_state(4, np.uint64)
            if not rng[r].any():
                rng[r, 0] = np.uint64(1)
            gen = np.random.Generator(np.random.PCG64(ss.spawn(1)[0]))
            control_gen.append(gen)
            v = self._initial(gen)
            for a, value in zip(arrays, (*self.start, *v, self.settings.start_time_s), strict=True):
                a[r, 0] = value
        weights = np.ones(R)
        S = len(self.map_names)
        tallies = (np.zeros((R, KG.N_COUNTS), np.int64), np.zeros((R, KG.N_SUMS)), np.zeros((R, P), np.int64),
                   np.zeros((R, P), np.int64), np.zeros((R, bins)), np.zeros((R, 2, bins)),
                   np.zeros((R, S, map_bins, map_bins)), np.zeros((R, max(samples, 1), KG.N_SAMPLE)),
                   np.zeros(R, np.int64))
        out = {name: np.zeros(R) for name in ("created", "attached", "driven", "grounded", "outside", "phi_birth",
                                              "phi_end", "phi_start")}
        out.update(current=np.zeros(bins), arrival=np.zeros((2, bins)), maps=np.zeros((S, map_bins, map_bins)),
                   controlled=np.zeros(R, bool), streamer_time=np.full(R, np.nan),
                   streamer_position=np.full((R, 3), np.nan), timed_out=np.zeros(R, bool))
        out["phi_start"][:] = KG.weighting_potential(self.geo, *self.start)
        rho_max, z_min, z_max = self.map_extent
        t = self.settings.start_time_s
        t_stop = math.inf if self.settings.max_time_s is None else t + self.settings.max_time_s
        dt = self.geometry.gap_length_m() / 1e5 / 50.0 if pilot or not math.isfinite(self._dt0) else self._dt0
        while count.any():
            t_end = min(t + dt, t_stop)
            control = np.array([t_end, self.settings.step_control, self.max_step_s, self.bin_width, rho_max, z_min,
                                z_max, self.t_origin])
            top = int(count.max())
            saved = (count.copy(), rng.copy(), [a[:, :top].copy() for a in arrays])
            before = int(count.sum())
            while True:
                KG.advance_slice((*arrays, count), rng, weights, self.geo, self.drive, self._gas(), control, tallies)
                counts = tallies[0]
                if counts[:, KG.COUNT_UNKNOWN_ACTION].any():
                    raise ConfigError("gap(): the mixture has a process whose action the gap kernel does not handle "
                                      f"(action codes {sorted(set(self.table.action.tolist()))})")
                above = bool(counts[:, KG.COUNT_ABOVE_GRID].any())
                full = bool(counts[:, KG.COUNT_OVERFLOW].any())
                if not (above or full):
                    break
                self.anomalies["redone_slices"] += 1
                if above:
                    top_eV = 2.0 * self.grid.energy_max_eV
                    if top_eV > self.settings.energy_limit_eV:
                        raise AvalancheError(f"gap(): electrons reached {top_eV / 2:.4g} eV, beyond energy_limit_eV "
                                             f"= {self.settings.energy_limit_eV:g}: they run away in this field; "
                                             "lower the voltage or raise energy_limit_eV")
                    self.grid = EnergyGrid.build(self.table, top_eV, self.settings.energy_cells)
                    self.anomalies["energy_grid_doublings"] += 1
                else:
                    capacity *= 2
                    arrays = [np.zeros((R, capacity)) for _ in range(7)]
                    self.anomalies["capacity_enlargements"] += 1
                count[:], rng[:] = saved[0], saved[1]
                for a, s in zip(arrays, saved[2], strict=True):
                    a[:, :s.shape[1]] = s
            counts, sums = tallies[0], tallies[1]
            self.events += int(counts[:, KG.COUNT_EVENTS].sum())
            self.steps += int(counts[:, KG.COUNT_STEPS].sum())
            self.real += int(counts[:, KG.COUNT_REAL].sum())
            self.anomalies["frequency_above_bound"] += int(counts[:, KG.COUNT_ABOVE_BOUND].sum())
            self.process_counts += tallies[2].sum(axis=0)
            self.extrapolated += tallies[3].sum(axis=0)
            for name, column in (("created", KG.COUNT_CREATED), ("attached", KG.COUNT_ATTACHED),
                                 ("driven", KG.COUNT_DRIVEN), ("grounded", KG.COUNT_GROUNDED),
                                 ("outside", KG.COUNT_OUTSIDE)):
                out[name] += weights * counts[:, column]
            out["phi_birth"] += weights * sums[:, KG.SUM_PHI_BIRTH]
            out["phi_end"] += weights * sums[:, KG.SUM_PHI_END]
            out["current"] += tallies[4].sum(axis=0)
            out["arrival"] += tallies[5].sum(axis=0)
            out["maps"] += tallies[6].sum(axis=0)
            t = t_end
            electrons = 1.0 + out["created"] - out["attached"]
            for r in np.flatnonzero(count):
                n = int(count[r])
                stop = electrons[r] >= self.settings.electron_limit
                if stop or t >= t_stop:
                    pos = np.column_stack([a[r, :n] for a in arrays[:3]])
                    out["phi_end"][r] += weights[r] * sum(KG.weighting_potential(self.geo, *p) for p in pos)
                    if stop:
                        out["streamer_time"][r] = t
                        out["streamer_position"][r] = pos.mean(axis=0)
                    else:
                        out["timed_out"][r] = True
                    count[r] = 0
                elif n > cap:
                    keep, factor = resample_population(control_gen[r], n, cap)
                    for a in arrays:
                        a[r, :cap] = a[r, keep]
                    count[r] = cap
                    weights[r] *= factor
                    out["controlled"][r] = True
            after = int(count.sum())
            if after > 3 * max(before, 1):
                dt *= 0.5
            elif after < 1.5 * before:
                dt *= 1.5
        out["end_time"] = t
        out["samples"] = tallies[7][:, :samples] if samples else np.zeros((R, 0, KG.N_SAMPLE))
        out["sample_count"] = np.minimum(tallies[8], samples)
        out["weights"] = weights
        return out

    _dt0 = math.nan

    def pilot(self, primaries: int) -> float:
        """Duration [s] of the longest of a few small avalanches; sets the time bins and the first slice."""
        self.bin_width, self.t_origin = 1e30, self.settings.start_time_s
        idx = np.arange(primaries) + 2 ** 40
        o = self.run_batch(idx, 64, 1, 1, 0, pilot=True)
        duration = max(float(o["end_time"]) - self.settings.start_time_s, 1e-15)
        self._dt0 = duration / 40.0
        return duration


def gap(geometry: Geometry, mixture: Mixture | str, voltage_V: float, primaries: int = 1000, seed=0,
        **options) -> GapResult:
    """Avalanches of ``primaries`` electrons in the electrode gap ``geometry`` at ``voltage_V``.

    Parameters
    ----------
    geometry : ParallelPlates, Coaxial, ConcentricSpheres, PointPlane or FieldMap
        The electrodes; ``voltage_V`` is applied to the driven one (the anode of the plates, the wire, the inner
        sphere, the point), the other is grounded.
    mixture : Mixture or str
        The gas, uniform (a string is passed to :class:`~avalanche.gas.mixture.Mixture`: 300 K, 1 atm).
    voltage_V : float
        DC voltage [V], or with ``frequency_Hz`` the peak of the AC part.
    primaries : int
        Primary electrons, each started at ``start_position_m`` (default: on the electrode the electrons leave,
        on the symmetry axis) with a Maxwellian energy of mean ``initial_energy_eV``.
    seed : int or tuple of int
        Master seed; primary i uses ``SeedSequence((*seed, i))``.
    **options
        sharing ('opb'), scattering ('isotropic'), batch (32 avalanches per kernel call), population_cap (4000 live
        electrons per avalanche), electron_limit (1e8, the streamer criterion), step_control (κ = 0.05),
        initial_energy_eV (1.0), initial_direction ('forward' along the field line, or 'isotropic'),
        start_position_m ((x, y, z) [m]), start_time_s (0), frequency_Hz (AC), waveform (a table or CSV file, see
        :func:`avalanche.swarm`), dc_offset_V (0), current_bins (200), map_bins (40),
        map_extent_m ((ρ_max, z_min, z_max) [m] of the maps; default the whole gap; events outside are not
        mapped), arrival_samples (16 per
        avalanche), energy_cells (4096), energy_limit_eV (1e5), max_time_s (none), local_field (True: compute the
        local-field gain), alpha_table ((E/N [Td], α/N [m²][, η/N [m²]]) instead of the on-demand swarm table),
        alpha_precision (0.03), pilot_primaries (4).

    Returns
    -------
    GapResult

    Raises
    ------
    ConfigError
        A bad argument (its name, value and the valid choices in the message).
    AvalancheError
        Electrons run away beyond ``energy_limit_eV``.

    References
    ----------
    Skullerud H R (1968) J. Phys. D 1 1567 (null collisions); Shockley W (1938) J. Appl. Phys. 9 635 and Ramo S
    (1939) Proc. IRE 27 584 (induced current); Furry W H (1937) Phys. Rev. 52 569 and Legler W (1955)
    Z. Naturforsch. A 16 253 (avalanche statistics, from memory).
    """
    if not isinstance(geometry, Geometry):
        raise ConfigError(f"gap(): geometry must be ParallelPlates, Coaxial, ConcentricSpheres, PointPlane or a "
                          f"FieldMap, got {type(geometry).__name__}")
    if isinstance(mixture, str):
        mixture = Mixture(mixture)
    if not isinstance(mixture, Mixture):
        raise ConfigError(f"gap(): mixture must be a Mixture or a gas string, got {type(mixture).__name__}")
    if isinstance(voltage_V, bool) or not isinstance(voltage_V, (int, float, np.integer, np.floating)) \
            or not math.isfinite(float(voltage_V)) or voltage_V == 0:
        _fail("voltage_V", voltage_V, "a nonzero finite voltage [V]")
    primaries = _positive("primaries", primaries, integer=True)
    settings = make_gap_settings(**options)
    seed = _seed(seed)
    cpu0, wall0 = time.process_time(), time.perf_counter()
    run = _Run(geometry, mixture, float(voltage_V), settings, seed)
    duration = run.pilot(min(settings.pilot_primaries, primaries))
    run.bin_width = 1.5 * duration / settings.current_bins
    run.t_origin = settings.start_time_s
    parts = []
    for first in range(0, primaries, settings.batch):
        idx = np.arange(first, min(first + settings.batch, primaries))
        parts.append(run.run_batch(idx, settings.population_cap, settings.current_bins, settings.map_bins,
                                   settings.arrival_samples))
    result = _assemble(run, parts, primaries)
    result.cpu_seconds = time.process_time() - cpu0
    result.wall_seconds = time.perf_counter() - wall0
    return result


def _estimate(values: np.ndarray) -> Estimate:
    n = values.size
    return Estimate(float(values.mean()), float(values.std(ddof=1) / math.sqrt(n)) if n > 1 else math.nan)


def _assemble(run: _Run, parts: list[dict], primaries: int) -> GapResult:
    s = run.settings

    def cat(name):
        return np.concatenate([p[name] for p in parts])

    gains = 1.0 + cat("created") - cat("attached")
    controlled = cat("controlled")
    run.anomalies["controlled_primaries"] = int(controlled.sum())
    run.anomalies["time_limit_primaries"] = int(cat("timed_out").sum())
    theta, _ = polya_fit(gains)
    mean_gain = _estimate(gains)
    current_charge = sum(p["current"] for p in parts) / primaries
    arrival = sum(p["arrival"] for p in parts) / primaries
    run.anomalies["current_overflow_fraction"] = float(arrival[:, -1].sum() / max(arrival.sum(), 1e-300))
    edges_t = run.t_origin + run.bin_width * np.arange(s.current_bins + 1)
    e = ELEMENTARY_CHARGE_C
    driven, grounded, outside = cat("driven"), cat("grounded"), cat("outside")
    expected = e * (driven + cat("phi_end") - cat("phi_birth") - cat("phi_start"))
    induced = float(current_charge.sum())
    charge_balance = {
        "induced_driven_C": induced, "expected_driven_C": float(expected.mean()),
        "expected_driven_stderr_C": float(expected.std(ddof=1) / math.sqrt(primaries)) if primaries > 1 else math.nan,
        "induced_grounded_C": -induced, "expected_grounded_C": -float(expected.mean()),
        "weighting_potential_available": bool(getattr(run.geometry, "has_weighting_potential", True))}
    streamer_t = cat("streamer_time")
    reached = np.flatnonzero(np.isfinite(streamer_t))
    streamer = {"limit": s.electron_limit, "reached": int(reached.size), "time_s": math.nan,
                "position_m": [math.nan] * 3, "message": ""}
    if reached.size:
        first = reached[np.argmin(streamer_t[reached])]
        streamer.update(time_s=float(streamer_t[first]), position_m=cat("streamer_position")[first].tolist(),
                        message=f"streamer criterion reached ({s.electron_limit:.3g} electrons) by {reached.size} of "
                                f"{primaries} avalanches; first at t = {streamer_t[first]:.4g} s")
    rho_max, z_min, z_max = run.map_extent
    maps = {"rho_edges_m": np.linspace(0.0, rho_max, s.map_bins + 1),
            "z_edges_m": np.linspace(z_min, z_max, s.map_bins + 1)}
    total_maps = sum(p["maps"] for p in parts) / primaries
    for k, name in enumerate(run.map_names):
        maps[name] = total_maps[k]
    samples = np.concatenate([p["samples"] for p in parts]) if s.arrival_samples else np.zeros((0, 0, 5))
    sample_count = cat("sample_count")
    flat = [samples[r, :sample_count[r]] for r in range(samples.shape[0])] if s.arrival_samples else []
    arrivals = {"time_edges_s": edges_t, "driven_per_primary": arrival[0], "grounded_per_primary": arrival[1],
                "samples": np.concatenate(flat) if flat else np.zeros((0, KG.N_SAMPLE)),
                "sample_columns": "x_m, y_m, z_m, t_s, electrode (1 driven, 2 grounded)"}
    current = {"time_s": 0.5 * (edges_t[1:] + edges_t[:-1]), "bin_width_s": run.bin_width,
               "charge_C": current_charge, "driven_A": current_charge / run.bin_width,
               "grounded_A": -current_charge / run.bin_width}
    lfa_gain, ratio, line, table = math.nan, Estimate(math.nan, math.nan), {}, {}
    if s.local_field or s.alpha_table is not None:
        density = run.mixture.number_density_m3
        line = LF.trace_field_line(run.geometry, run.v0, run.start)
        en = line["field_V_m"] / (density * TOWNSEND_V_m2)
        if s.alpha_table is not None:
            table = LF.check_alpha_table(s.alpha_table)
        else:
            table = LF.alpha_table_from_swarm(run.mixture, (float(en.min()), float(en.max())), seed=run.seed,
                                              precision=s.alpha_precision, sharing=s.sharing,
                                              scattering=s.scattering)
        lfa_gain, line = LF.local_field_gain(line, table, density)
        ratio = Estimate(mean_gain.value / lfa_gain, mean_gain.stderr / lfa_gain)
    inputs = {
        "mode": "gap", "geometry": run.geometry.describe(), "voltage_V": run.voltage_V,
        "start_voltage_V": run.v0, "primaries": primaries, "seed": list(run.seed), "settings": _settings_dict(s),
        "mixture": run.mixture.describe(), "label": run.mixture.label, "package_version": __version__,
        "processes": list(run.table.keys), "map_names": run.map_names,
        "provenance": {c.name: c.cross_sections.provenance for c in run.mixture.components},
        "threads": numba.get_num_threads(), "start_position_m": run.start.tolist(),
        "drive": None if run.drive_obj is None else dict(run.drive_obj.describe(), peak_voltage_V=run.voltage_V,
                                                          dc_offset_V=s.dc_offset_V),
        "integrator": "velocity Verlet, step |v|h + |a|h^2/2 <= step_control x gradient length",
        "space_charge": "neglected",
    }
    run.anomalies["final_energy_max_eV"] = run.grid.energy_max_eV
    return GapResult(
        mean_gain=mean_gain, gain_distribution=GainDistribution(per_primary=gains, controlled=controlled),
        polya_theta=theta, local_field_gain=lfa_gain, local_field_ratio=ratio,
        mean_collected={"driven": _estimate(driven), "grounded": _estimate(grounded),
                        "outside": _estimate(outside)},
        current=current, charge_balance=charge_balance, arrivals=arrivals, maps=maps, streamer=streamer,
        field_line=line, alpha_table=table, inputs=inputs, anomalies=run.anomalies, events=run.events,
        steps=run.steps, real_collisions=run.real)


def _settings_dict(s: GapSettings) -> dict:
    out = asdict(s)
    for key in ("waveform", "alpha_table"):
        value = out[key]
        if value is not None and not isinstance(value, str):
            out[key] = np.asarray(value, dtype=float).tolist() if not isinstance(value, dict) else {
                k: np.asarray(v).tolist() if not isinstance(v, str) else v for k, v in value.items()}
    return out
