"""The gas as the kernel sees it: per-process arrays of a mixture and collision-frequency tables on an energy grid.

:class:`ProcessTable` turns the enabled processes of a :class:`~avalanche.gas.mixture.Mixture` into one row per process
(action code, energy loss, mass ratios, target thermal speed, angular and sharing rules, Penning transfer), and
:class:`EnergyGrid` tabulates their collision frequencies N_k σ_k(ε) v on a uniform grid with the trial frequency
ν* of the null-collision method (Skullerud H R 1968, J. Phys. D 1 1567), extended at T > 0 to bound N σ(g) g over
the relative speeds g of thermal targets (:func:`avalanche.kernels.thermal_trial`). Used by the time-of-flight engine
(:mod:`avalanche.engine.time_of_flight`) and the steady-state Townsend mode (:mod:`avalanche.engine.townsend`).
"""

from __future__ import annotations

import math
import warnings
from dataclasses import dataclass, field

import numpy as np

from .. import kernels as K
from ..constants import BOLTZMANN_J_K, ELEMENTARY_CHARGE_C, EV_J, ATOMIC_MASS_UNIT_kg, ELECTRON_MASS_kg, TOWNSEND_V_m2
from ..errors import ConfigError, PhysicsWarning
from ..gas.levels import SUPERELASTIC, level_populations, superelastic_process
from ..gas.mixture import Mixture
from ..gas.penning import kernel_arrays

SHARING_RULES = {"equal": K.SHARING_EQUAL, "uniform": K.SHARING_UNIFORM, "opb": K.SHARING_OPB}
SCATTERING_MODELS = {"isotropic": K.SCATTER_ISOTROPIC, "screened-coulomb": K.SCATTER_SCREENED_COULOMB}
ACTIONS = {"elastic": K.ACTION_ELASTIC, "excitation": K.ACTION_EXCITATION, "ionization": K.ACTION_IONIZATION,
           "attachment": K.ACTION_ATTACHMENT, "penning": K.ACTION_PENNING,
           SUPERELASTIC: K.ACTION_EXCITATION}
"""Process kind → kernel action. A superelastic row is an excitation with a negative energy loss −Δ: the kernel's
excitation branch sets the energy to ε − loss = ε + Δ (``scatter_electron``) and never rejects it as below its
threshold (ε < loss is never true)."""
ENERGY_FLOOR_eV = 1e-9
"""Cross sections are evaluated at ε ≥ this, so σ ∝ ε^-1/2 gives a finite σ v."""
TRIAL_MARGIN = 1e-3
"""ν* = (1 + TRIAL_MARGIN) max ν(ε) over the nodes: a bound also between nodes for smooth data."""
THERMAL_MARGIN_SPEEDS = 8.0
"""At T > 0 the tables reach up to the relative energy ½ m_e (v_max + THERMAL_MARGIN_SPEEDS √(kT/M))², v_max the
speed at the top of the electron grid: a Maxwellian target is faster than 8 √(kT/M) with probability ~1e-13."""
COLD_GAS_GROUPS = (np.zeros((0, 0)), np.zeros(0, dtype=np.int64), np.zeros(0, dtype=np.int64), np.zeros(0),
                   np.zeros((0, 0)))
"""The kernels' ``thermal_groups`` argument of a cold gas (no target group: targets at rest)."""
EXTRAPOLATION_WARNING = 0.01
"""A PhysicsWarning is given when more than this fraction of the real collisions fall beyond their tables."""


def extrapolation_notice(where: str, extrapolated, process_counts, keys) -> str | None:
    """The PhysicsWarning text when more than EXTRAPOLATION_WARNING of the real collisions used extrapolated
    cross sections (beyond the last point of their table), naming the three processes with most; else None.

    ``extrapolated`` and ``process_counts`` are per-replica counts (R, P) of the kernels, ``keys`` the process
    names, ``where`` the start of the message (the run and its E/N).
    """
    beyond = np.asarray(extrapolated).sum(axis=0)
    real = max(int(np.asarray(process_counts).sum()), 1)
    if beyond.sum() <= EXTRAPOLATION_WARNING * real:
        return None
    worst = sorted(range(beyond.size), key=lambda k: -beyond[k])[:3]
    listing = ", ".join(f"'{keys[k]}' ({100 * beyond[k] / real:.2g} %)" for k in worst if beyond[k])
    return (f"{where}: {100 * beyond.sum() / real:.2g} % of the collisions happened beyond the end of their "
            f"cross-section table, where it is extrapolated: {listing}; extend the tables to higher energy")

# ------------------------------------------------------------------------------------------- process tables

def _energy_loss_eV(proc) -> float:
    """The electron's energy loss in a collision [eV]: the threshold of an excitation or ionization, minus the level
    energy for a de-excitation (an energy gain), zero otherwise."""
    if proc.kind in ("excitation", "ionization"):
        return proc.threshold_eV
    if proc.kind == SUPERELASTIC:
        return -proc.threshold_eV
    return 0.0


def momentum_transfer_fraction(energy_eV) -> np.ndarray:
    """⟨1 − cos χ⟩ = σ_m/σ_T of the screened-Coulomb distribution at ``energy_eV`` [eV].

    With ξ = 4ε/(1 + 4ε): σ_m/σ_T = (1 − ξ)[(1 + ξ) ln((1 + ξ)/(1 − ξ)) − 2ξ]/(2ξ²) (Okhrimovskyy, Bogaerts &
    Gijbels 2002, Phys. Rev. E 65 037402, eq. (11), from memory; it is also the integral of 1 − cos χ over the
    sampling formula of :func:`avalanche.kernels.scattering_cosine`). Series 1 − 2ξ/3 for ξ < 1e-4.
    """
    energy = np.asarray(energy_eV, dtype=float)
    xi = 4.0 * energy / (1.0 + 4.0 * energy)
    small = xi < 1e-4
    xs = np.where(small, 0.5, xi)
    exact = (1 - xs) * ((1 + xs) * (np.log1p(xs) - np.log1p(-xs)) - 2 * xs) / (2 * xs * xs)
    return np.where(small, 1.0 - 2.0 * xi / 3.0, exact)


@dataclass(frozen=True, eq=False)
class ProcessTable:
    """The enabled processes of a mixture as kernel arrays (one entry per process), followed by one pseudo-process
    row of kind "penning" per Penning channel of the mixture (zero collision frequency, never selected; its count
    is the channel's Penning ionizations, its target density the receiver's, see :mod:`avalanche.gas.penning`)."""

    processes: tuple
    keys: tuple[str, ...]
    kinds: tuple[str, ...]
    species: tuple[str, ...]
    target_density_m3: np.ndarray
    density_factor: np.ndarray
    action: np.ndarray
    loss_eV: np.ndarray
    electron_fraction: np.ndarray
    target_fraction: np.ndarray
    thermal_speed: np.ndarray
    scatter: np.ndarray
    sharing: np.ndarray
    w_eV: np.ndarray
    table_max_eV: np.ndarray
    penning_probability: np.ndarray
    penning_energy_eV: np.ndarray
    penning_slot: np.ndarray

    @staticmethod
    def _expanded(xs, temperatures_K: dict) -> list:
        """(process, population factor) of a set's enabled processes, each ``superelastic`` excitation followed by
        its de-excitation; the factors are the Boltzmann populations of the initial levels (1 for other
        processes)."""
        out = []
        populations = level_populations(xs.processes, temperatures_K, xs.name)
        for proc in xs.processes:
            if not proc.enabled:
                continue
            if not proc.superelastic:
                out.append((proc, 1.0))
                continue
            out.append((proc, populations[proc.initial_state]))
            out.append((superelastic_process(proc), populations[proc.final_state]))
        return out

    @staticmethod
    def _partner_density(proc, species_density: float, mixture: Mixture) -> float:
        """Density [m⁻³] of the third body of a three-body process (the species itself, a named one or the gas)."""
        if not proc.third_body:
            return species_density
        if proc.third_body == "*":
            return mixture.number_density_m3
        return sum(c.fraction for c in mixture.components
                   if c.name == proc.third_body or c.cross_sections.name == proc.third_body) \
            * mixture.number_density_m3

    @classmethod
    def build(cls, mixture: Mixture, sharing: str, scattering: str) -> ProcessTable:
        rows = []
        single = len(mixture.components) == 1
        temperatures = {"rotational": mixture.temperature_K, "electronic": mixture.temperature_K,
                        "vibrational": mixture.vibrational_temperature_K}
        for comp in mixture.components:
            xs = comp.cross_sections
            density = comp.fraction * mixture.number_density_m3
            mass = xs.mass_amu * ATOMIC_MASS_UNIT_kg
            for proc, population in cls._expanded(xs, temperatures):
                factor = population
                if proc.three_body:
                    factor *= cls._partner_density(proc, density, mixture) / proc.reference_density_m3
                rule = SHARING_RULES[sharing]
                w = proc.opb_w_eV or 0.0
                if proc.kind == "ionization" and sharing == "opb" and not w:
                    warnings.warn(f"{xs.name}: ionization process '{proc.label}' has no opb_w_eV; its energy is "
                                  "shared equally (give opb_w_eV in the set, or choose sharing='uniform' or "
                                  "'equal')", PhysicsWarning, stacklevel=4)
                    rule = K.SHARING_EQUAL
                model = "screened-coulomb" if "screened-coulomb" in (scattering, proc.scattering) else "isotropic"
                rows.append(dict(
                    process=proc, key=proc.label if single else f"{comp.name}:{proc.label}", kind=proc.kind,
                    species=comp.name, density=density, factor=factor, action=ACTIONS[proc.kind],
                    loss=_energy_loss_eV(proc),
                    electron_fraction=ELECTRON_MASS_kg / (ELECTRON_MASS_kg + mass),
                    target_fraction=mass / (ELECTRON_MASS_kg + mass),
                    thermal=math.sqrt(BOLTZMANN_J_K * mixture.temperature_K / mass),
                    scatter=SCATTERING_MODELS[model], sharing=rule, w=w, table_max=proc.max_energy_eV))
        if not rows:
            raise ConfigError(f"mixture {mixture.label}: every process is disabled; enable at least the elastic one")
        penning = kernel_arrays(mixture.penning_channels, [r["species"] for r in rows],
                                [r["process"].label for r in rows])
        fractions = {c.name: c.fraction for c in mixture.components}
        for channel in mixture.penning_channels:
            rows.append(dict(process=channel, key=channel.key, kind="penning", species=channel.receiver,
                             density=fractions[channel.receiver] * mixture.number_density_m3, factor=1.0,
                             action=K.ACTION_PENNING, loss=0.0, electron_fraction=0.0, target_fraction=0.0,
                             thermal=0.0, scatter=K.SCATTER_ISOTROPIC, sharing=K.SHARING_EQUAL, w=0.0,
                             table_max=math.inf))

        def col(name, dtype=float):
            return np.array([r[name] for r in rows], dtype=dtype)

        return cls(processes=tuple(r["process"] for r in rows), keys=tuple(r["key"] for r in rows),
                   kinds=tuple(r["kind"] for r in rows), species=tuple(r["species"] for r in rows),
                   target_density_m3=col("density"), density_factor=col("factor"), action=col("action", np.int64),
                   loss_eV=col("loss"), electron_fraction=col("electron_fraction"),
                   target_fraction=col("target_fraction"), thermal_speed=col("thermal"),
                   scatter=col("scatter", np.int64), sharing=col("sharing", np.int64), w_eV=col("w"),
                   table_max_eV=col("table_max"), penning_probability=penning[0], penning_energy_eV=penning[1],
                   penning_slot=penning[2])

    def frequencies(self, energy_eV: np.ndarray) -> np.ndarray:
        """Collision frequency of each process [s⁻¹] at ``energy_eV`` (shape (P, len(energy_eV)))."""
        energy = np.maximum(np.asarray(energy_eV, dtype=float), ENERGY_FLOOR_eV)
        speed = np.sqrt(2.0 * energy * EV_J / ELECTRON_MASS_kg)
        out = np.empty((len(self.processes), energy.size))
        for k, proc in enumerate(self.processes):
            if self.kinds[k] == "penning":
                out[k] = 0.0
                continue
            sigma = np.asarray(proc.sigma_m2(energy), dtype=float)
            if proc.kind == "elastic" and self.scatter[k] == K.SCATTER_SCREENED_COULOMB:
                sigma = sigma / momentum_transfer_fraction(energy)
            out[k] = self.target_density_m3[k] * self.density_factor[k] * sigma * speed
        return out


def target_groups(table: ProcessTable) -> list[tuple[int, int, float]]:
    """(first row, one-past-last row, thermal speed √(kT/M) [m/s]) of each species' processes (consecutive rows of
    ``table``, Penning pseudo-rows excluded); empty for a cold gas (T = 0), whose targets are at rest."""
    groups: list[tuple[int, int, float]] = []
    for k, (species, kind) in enumerate(zip(table.species, table.kinds, strict=True)):
        if kind == "penning" or not table.thermal_speed[k] > 0:
            continue
        if groups and groups[-1][1] == k and table.species[k - 1] == species:
            groups[-1] = (groups[-1][0], k + 1, groups[-1][2])
        else:
            groups.append((k, k + 1, float(table.thermal_speed[k])))
    return groups


def window_max(values: np.ndarray, low: np.ndarray, high: np.ndarray) -> np.ndarray:
    """max(values[low[i]:high[i]]) for every i (high > low), from a sparse table of maxima over windows of 2^j
    (Bender M A & Farach-Colton M 2000, LATIN 2000, LNCS 1776 88: range-minimum queries; from memory)."""
    levels = [np.asarray(values, dtype=float)]
    while 2 ** len(levels) <= levels[0].size:
        width = 2 ** (len(levels) - 1)
        levels.append(np.maximum(levels[-1][:-width], levels[-1][width:]))
    j = np.floor(np.log2(high - low)).astype(np.int64)
    out = np.empty(low.size)
    for level in np.unique(j):
        pick = j == level
        table = levels[level]
        out[pick] = np.maximum(table[low[pick]], table[high[pick] - 2 ** level])
    return out


def near_equilibrium_energy_eV(table: ProcessTable, number_density_m3: float, reduced_field_Td: float,
                               temperature_K: float, ceiling_eV: float) -> float:
    """A start energy [eV] near the steady state of a gas at T > 0 and low E/N, from the elastic energy balance.

    Momentum balance W = eE/(m ν_m), ν_m = Σ_k M_k/(m + M_k) ν_k, and energy balance
    e E W = Σ_k 2 m M_k/(m + M_k)² ν_k (ε − 3kT/2) over the elastic processes give
    ε = 3kT/2 + (eE)²/(m ν_m Σ_k 2 m M_k/(m + M_k)² ν_k), with the frequencies read at ε, solved by fixed-point
    iteration. For a constant collision frequency (the Maxwell model) this is Wannier's exact
    ⟨ε⟩ = 3kT/2 + (m + M) W²/2 (Wannier G H 1953, Bell Syst. Tech. J. 32 170, from memory). Inelastic losses
    are left out, so the estimate is high where they matter: it is capped at ``ceiling_eV`` (the default start).
    A start near the steady state saves the energy relaxation of thousands of elastic collisions at low E/N.
    """
    kT_eV = BOLTZMANN_J_K * temperature_K / EV_J
    field_V_m = reduced_field_Td * TOWNSEND_V_m2 * number_density_m3
    elastic = np.array([kind == "elastic" for kind in table.kinds])
    loss = 2.0 * table.electron_fraction * table.target_fraction * elastic
    energy = 1.5 * kT_eV
    for _ in range(60):
        nu = table.frequencies(np.array([energy]))[:, 0]
        rate = float(table.target_fraction @ nu) * float(loss @ nu)
        if not rate > 0:
            return ceiling_eV
        new = 1.5 * kT_eV + (ELEMENTARY_CHARGE_C * field_V_m) ** 2 / (ELECTRON_MASS_kg * rate) / EV_J
        new = min(new, ceiling_eV)
        if abs(new - energy) <= 1e-6 * new:
            return new
        energy = math.sqrt(energy * new)  # geometric damping: the map can overshoot where ν changes steeply
    return energy


TRIAL_INTERVAL_RATIO = 1.3
"""Energy-dependent trial frequency: an interval of grid cells grows while the largest bound of the collision
frequency over its cells is within this factor of the smallest (see :func:`trial_intervals`)."""
TRIAL_INTERVAL_MIN_CELLS = 8
"""The narrowest interval, in grid cells (fewer edges to cross where the frequency changes fast)."""
TRIAL_RATE_FLOOR = 1e-3
"""No interval's trial frequency lies below this fraction of the largest (bounded event weights ν*/ν*_j)."""


def trial_intervals(bound: np.ndarray, ratio: float = TRIAL_INTERVAL_RATIO,
                    min_cells: int = TRIAL_INTERVAL_MIN_CELLS) -> np.ndarray:
    """Split the grid cells into intervals of similar collision frequency: the first cell of each interval.

    ``bound`` (n_cells,) is an upper bound of the collision frequency on each cell [s⁻¹]. Walking up the cells,
    an interval ends before the cell that would make max/min of its bounds exceed ``ratio``, once it holds
    ``min_cells`` cells. Its trial frequency is then the largest bound in it, so that the null events it wastes
    are at most a fraction 1 − 1/ratio of its trial events where the frequency is as tabulated, while the
    number of edges a flight crosses stays small (common practice: a piecewise-constant bound of ν(ε) over energy
    intervals keeps the null-collision method exact, Skullerud 1968, with fewer null events).
    """
    starts = [0]
    low = high = float(bound[0])
    for c in range(1, bound.size):
        b = float(bound[c])
        new_low, new_high = min(low, b), max(high, b)
        if c - starts[-1] >= min_cells and new_high > ratio * max(new_low, 0.0) and new_high > 0:
            starts.append(c)
            low = high = b
        else:
            low, high = new_low, new_high
    return np.array(starts, dtype=np.int64)


def _interval_tables(bound_groups: np.ndarray, starts: np.ndarray, n_cells: int, cell_eV: float, scale: float):
    """From per-cell, per-group bounds ``bound_groups`` (n_cells, S) and the interval starts: the per-interval band
    widths (J, S) (the groups' largest bound in the interval, times ``scale``, floored so that no interval's rate
    falls below TRIAL_RATE_FLOOR of the largest), the edges in v² [m² s⁻²] and the interval of every cell."""
    ends = np.append(starts[1:], n_cells)
    bands = np.array([bound_groups[a:b].max(axis=0) for a, b in zip(starts, ends, strict=True)]) * scale
    totals = bands.sum(axis=1)
    floor = TRIAL_RATE_FLOOR * totals.max()
    for j in np.flatnonzero(totals < floor):
        bands[j] = bands[j] * (floor / totals[j]) if totals[j] > 0 else floor / bands.shape[1]
    edges = np.append(starts * cell_eV, np.inf) / K.ENERGY_PER_SPEED2_eV
    cell_interval = np.repeat(np.arange(starts.size, dtype=np.int64), ends - starts)
    return np.ascontiguousarray(bands), edges, cell_interval


def _threshold_cells(table: ProcessTable, n_cells: int, cell_eV: float):
    """The kernel's ``expected`` tables: for every cell, the processes whose threshold lies inside it (the cell
    [c Δε, (c + 1) Δε) with c Δε < threshold ≤ (c + 1) Δε), as (cell_start, entry_process, entry_threshold_eV)."""
    loss = np.asarray(table.loss_eV, dtype=float)
    picked = np.flatnonzero((loss > 0) & (loss < n_cells * cell_eV))
    cells = np.ceil(loss[picked] / cell_eV).astype(np.int64) - 1
    order = np.argsort(cells, kind="stable")
    picked, cells = picked[order], cells[order]
    cell_start = np.searchsorted(cells, np.arange(n_cells + 1)).astype(np.int64)
    return cell_start, picked.astype(np.int64), loss[picked].astype(float)


@dataclass(frozen=True, eq=False)
class EnergyGrid:
    """The kernel's collision-frequency tables on nodes i Δε and the trial frequency.

    Cold gas: nodes i = 0 … n_cells (the electron grid up to ``energy_max_eV``) and ν* = (1 + TRIAL_MARGIN)
    max ν(ε). Gas at T > 0 (:func:`avalanche.kernels.thermal_trial`): the collision frequencies are read at the
    relative energy ½ m_e g², g = |v − V|, which exceeds the electron's energy when the target moves against it, so
    the nodes continue with the same spacing up to (√ε_max + √ε_th)², ε_th = ½ m_e (THERMAL_MARGIN_SPEEDS √(kT/M))²
    for the lightest species, and each species s gets its own band ν*_s = (1 + TRIAL_MARGIN) max over all these
    nodes of Σ_{k∈s} N_k σ_k g, a bound of its frequency over the thermal spread of V; ν* = Σ_s ν*_s
    (``thermal_groups`` holds the band edges). Per electron cell c and species, ``local`` bounds ν_s over the
    nodes from (√ε_c − √ε_th)² to (√ε_c+1 + √ε_th)² (the relative energies an electron of that cell can meet, with
    the nodes around them), so that the kernel decides most null events before drawing a target. A frequency
    above its bound is counted by the kernels (COUNT_ABOVE_BOUND), as in the cold gas.
    """

    energy_max_eV: float
    n_cells: int
    nu_star: float
    nu_total: np.ndarray
    nu_cumulative: np.ndarray
    thermal_groups: tuple = COLD_GAS_GROUPS
    nu_nodes: np.ndarray = field(default_factory=lambda: np.zeros((0, 0)))
    """(n_cells + 1, P): every process's collision frequency at the electron-grid nodes [s⁻¹] (targets at rest), for
    the expected-value estimates (:meth:`expected_counts`)."""
    trial: tuple = ()
    """The kernel's energy-dependent trial frequency (rates (J,) [s⁻¹], v² edges (J + 1,) [m² s⁻²], interval of
    each cell (n_cells,)), see :func:`avalanche.kernels.advance_chunk`; :attr:`constant_trial` is the one-interval
    form."""
    interval_groups: tuple = COLD_GAS_GROUPS
    """``thermal_groups`` with one row of band edges per trial-frequency interval (T > 0; cold gas: empty)."""
    expected: tuple = ()
    """The kernel's threshold cells (cell_start, entry_process, entry_threshold_eV), see :func:`_threshold_cells`."""

    @classmethod
    def build(cls, table: ProcessTable, energy_max_eV: float, n_cells: int) -> EnergyGrid:
        nodes = np.linspace(0.0, energy_max_eV, n_cells + 1)
        cell_eV = energy_max_eV / n_cells
        groups = target_groups(table)
        if groups:
            margin_eV = K.ENERGY_PER_SPEED2_eV * (THERMAL_MARGIN_SPEEDS * max(g[2] for g in groups)) ** 2
            extra = math.ceil(((math.sqrt(energy_max_eV) + math.sqrt(margin_eV)) ** 2 - energy_max_eV) / cell_eV) + 1
            nodes = np.concatenate((nodes, energy_max_eV + cell_eV * np.arange(1, extra + 1)))
        nu = table.frequencies(nodes)
        cumulative = np.ascontiguousarray(np.cumsum(nu, axis=0).T)
        total = np.ascontiguousarray(cumulative[:, -1])
        peak = float(total.max())
        if not peak > 0:
            raise ConfigError("the mixture's collision frequency is zero on the whole energy grid; check the "
                              "cross sections (every process zero?)")
        common = dict(energy_max_eV=float(energy_max_eV), n_cells=int(n_cells), nu_total=total,
                      nu_cumulative=cumulative, nu_nodes=np.ascontiguousarray(nu[:, :n_cells + 1].T),
                      expected=_threshold_cells(table, n_cells, cell_eV))
        starts_of = trial_intervals
        if not groups:
            cell_bound = np.maximum(total[:n_cells], total[1:n_cells + 1])[:, None]
            bands, edges, cell_interval = _interval_tables(cell_bound, starts_of(cell_bound[:, 0]), n_cells, cell_eV,
                                                           1.0 + TRIAL_MARGIN)
            rates = np.ascontiguousarray(bands[:, 0])
            return cls(nu_star=float(rates.max()), trial=(rates, edges, cell_interval), **common)
        group_nu = np.array([nu[first:last].sum(axis=0) for first, last, _ in groups])
        bands = (1.0 + TRIAL_MARGIN) * group_nu.max(axis=1)
        upper = np.cumsum(bands)
        # per electron cell [ε_c, ε_c+1]: the relative energies (√ε ∓ √ε_th)² reachable, as whole node ranges
        root = np.sqrt(nodes[:n_cells + 1])
        reach = math.sqrt(margin_eV)
        low = np.floor(np.maximum(root[:-1] - reach, 0.0) ** 2 / cell_eV).astype(np.int64)
        high = np.minimum(np.ceil((root[1:] + reach) ** 2 / cell_eV).astype(np.int64) + 1, nodes.size)
        local = np.minimum((1.0 + TRIAL_MARGIN) * np.array([window_max(v, low, high) for v in group_nu]).T, bands)
        rest = (np.array([g[0] for g in groups], dtype=np.int64), np.array([g[1] for g in groups], dtype=np.int64),
                np.array([g[2] for g in groups]), np.ascontiguousarray(local))
        interval_bands, edges, cell_interval = _interval_tables(local, starts_of(local.sum(axis=1)), n_cells,
                                                                cell_eV, 1.0)
        interval_upper = np.ascontiguousarray(np.cumsum(interval_bands, axis=1))
        rates = np.ascontiguousarray(interval_upper[:, -1])
        return cls(nu_star=float(upper[-1]), thermal_groups=(upper[None, :].copy(), *rest),
                   trial=(rates, edges, cell_interval), interval_groups=(interval_upper, *rest), **common)

    @property
    def constant_trial(self) -> tuple:
        """The kernel's ``trial`` argument of a constant trial frequency ν* (one interval)."""
        return (np.array([self.nu_star]), np.array([0.0, np.inf]), np.zeros(self.n_cells, dtype=np.int64))

    def expected_counts(self, node_time: np.ndarray, below_threshold: np.ndarray) -> np.ndarray:
        """Expected collisions per replica and process (R, P) from the kernel's expected-value tallies:
        Σ_c node_time[c] ν_k(ε_c) minus, in the cell of the threshold, the part below it (see
        :func:`avalanche.kernels.advance_chunk`)."""
        cell_start, entry_process, _ = self.expected
        counts = np.empty((node_time.shape[0], self.nu_nodes.shape[1]))
        K.expected_counts(node_time, below_threshold, self.nu_nodes, cell_start, entry_process, counts)
        return counts

    @property
    def inv_cell_eV(self) -> float:
        return self.n_cells / self.energy_max_eV
