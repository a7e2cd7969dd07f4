"""The stop rule of a swarm point: every reported nonzero quantity to its asked precision.

:func:`parse_precision` turns the ``precision`` argument of :func:`avalanche.swarm` (a float, or a dict of targets
by quantity name with an optional ``"default"``) into a default target and per-quantity targets. :class:`StopRule`
tests, after every sampled chunk, the relative standard errors of the estimates computed from the tallies
accumulated so far (plain numpy over the R replicas: cheap next to a chunk of the kernel).

Which quantities are tested (the "default set"): the mean energy, the flux and bulk drift velocities, the flux and
bulk longitudinal and transverse diffusion coefficients, α/N, η/N, and the rate coefficient of every process that
takes more than :data:`LOSS_SHARE` of the energy the electrons lose in collisions (elastic: 2 (m/M) ⟨ε⟩ per
collision, the mean loss of isotropic scattering on a heavy target at rest, common practice; inelastic: the
threshold; attachment: ⟨ε⟩). A quantity named in a ``precision`` dict is tested even if it is not in the default
set (any name of :data:`avalanche.engine.results.ESTIMATES` or a process key of ``rate_coefficients``).

A quantity that stays statistically zero — its value is 0 (no event) or below :data:`ZERO_SIGMAS` standard
errors after the minimum sample — is not chased: it is reported in ``upper_bounds`` with the bound
|value| + 2 σ, or, with no event at all, the frequency bound 3 / ∫ n dt (the 95 % Poisson upper limit of zero
counts, "rule of three": Hanley J A & Lippman-Hand A 1983, JAMA 249 1743) turned into the quantity's units.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np

from ..errors import ConfigError
from ..quantities import current_name
from .results import ESTIMATE_UNITS, Estimate

DEFAULT_QUANTITIES = ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk", "N_D_L_flux", "N_D_L_bulk",
                      "N_D_T_flux", "N_D_T_bulk", "alpha_N", "eta_N")
"""The estimates the stop rule tests by default (besides the rate coefficients of the main energy-loss
processes)."""
LOSS_SHARE = 0.01
"""A process whose share of the collisional energy loss exceeds this is in the default set."""
ZERO_SIGMAS = 2.0
"""A quantity below this many standard errors after the minimum sample counts as statistically zero."""
MIN_SAMPLED_CHUNKS = 8
"""The stop test starts after this many sampled chunks with position-moment data (the replica spread must rest
on enough chunks to be a standard error)."""
ZERO_EVENT_COUNT = 3.0
"""Rule of three: the 95 % upper limit of a Poisson mean when zero events were seen."""
_FREQUENCY_QUANTITIES = {"alpha_N": "per_N_W", "eta_N": "per_N_W", "alpha_N_simple": "per_N_W",
                         "eta_N_simple": "per_N_W", "effective_alpha_N": "per_N_W",
                         "ionization_rate_coefficient": "per_N", "attachment_rate_coefficient": "per_N",
                         "excitation_rate_coefficient": "per_N", "penning_ionization_rate_coefficient": "per_N"}


def parse_precision(precision, where: str = "swarm(): argument precision") -> tuple[float, tuple]:
    """The default target and the per-quantity targets of a ``precision`` argument.

    Parameters
    ----------
    precision : float or mapping of str to float
        A relative standard error for every tested quantity, or targets by name, e.g. ``{"alpha_N": 0.03,
        "default": 0.01}`` ("default", 0.01 if absent, applies to the default set).

    Returns
    -------
    default : float
    targets : tuple of (str, float)
        The named targets, sorted by name (hashable, for the frozen settings).

    Raises
    ------
    ConfigError
        A target that is not a positive finite number, or a name that is not an estimate (process keys are
        checked when the run knows its processes, :meth:`StopRule.__init__`).
    """
    def number(name, value):
        if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) \
                or not math.isfinite(float(value)) or value <= 0:
            raise ConfigError(f"{where} {name!s} = {value!r} must be a positive finite number (a relative standard "
                              "error such as 0.01)")
        return float(value)

    if isinstance(precision, Mapping):
        targets = {current_name(str(k)): number(f"[{k!r}]", v) for k, v in precision.items()}
        default = targets.pop("default", 0.01)
        return default, tuple(sorted(targets.items()))
    return number("", precision), ()


def _upper(value: float, stderr: float) -> float:
    return abs(value) + ZERO_SIGMAS * (stderr if math.isfinite(stderr) else 0.0)


class StopRule:
    """The stop test of one run.

    Parameters
    ----------
    default : float
        Target relative standard error of the default set.
    targets : tuple of (str, float)
        Named targets (estimates or process keys).
    process_keys, process_kinds : tuple of str
        The run's processes (see :class:`avalanche.engine.tables.ProcessTable`).
    loss_eV, electron_fraction, target_density_m3 : ndarray
        Per process: energy loss [eV], m/(m + M), target density [m⁻³].
    number_density_m3 : float
        Total density N [m⁻³].
    only : str or None
        A single quantity to test (the ``precision_on`` argument other than "auto"), as before this rule.
    """

    def __init__(self, default: float, targets: tuple, process_keys, process_kinds, loss_eV, electron_fraction,
                 target_density_m3, number_density_m3: float, only: str | None = None):
        self.default = default
        self.targets = dict(targets)
        unknown = [k for k in self.targets if k not in ESTIMATE_UNITS and k not in process_keys]
        if unknown:
            raise ConfigError(f"swarm(): argument precision names '{unknown[0]}', which is neither an estimate nor a "
                              f"process of this mixture; choose from {sorted(ESTIMATE_UNITS)} or "
                              f"{list(process_keys)}")
        self.keys, self.kinds = tuple(process_keys), tuple(process_kinds)
        self.loss_eV, self.electron_fraction = np.asarray(loss_eV), np.asarray(electron_fraction)
        self.target_density_m3 = np.asarray(target_density_m3)
        self.N = number_density_m3
        self.only = only
        self.upper_bounds: dict[str, float] = {}
        self.limiting = ""
        self.limiting_ratio = math.inf

    def main_processes(self, process_counts: np.ndarray, mean_energy_eV: float) -> list[str]:
        """Keys of the processes above :data:`LOSS_SHARE` of the collisional energy loss (pooled counts)."""
        kinds = np.asarray(self.kinds)
        per = np.where(kinds == "elastic", 2.0 * self.electron_fraction * mean_energy_eV,
                       np.where(kinds == "attachment", mean_energy_eV, np.abs(self.loss_eV)))
        per = np.where(kinds == "penning", 0.0, per)
        loss = process_counts * per
        total = loss.sum()
        if not total > 0:
            return []
        return [self.keys[k] for k in np.flatnonzero(loss > LOSS_SHARE * total)]

    def tested(self, estimates: dict[str, Estimate], rates: dict[str, Estimate], process_counts: np.ndarray) \
            -> dict[str, tuple[Estimate, float]]:
        """The tested quantities: name → (estimate, target)."""
        if self.only is not None:
            return {self.only: (estimates[self.only], self.default)}
        absent = {"alpha_N": not {"ionization", "penning"} & set(self.kinds),
                  "eta_N": "attachment" not in self.kinds}  # identically zero: nothing to report
        names = {name: self.default for name in DEFAULT_QUANTITIES if not absent.get(name)}
        names.update(dict.fromkeys(self.main_processes(process_counts, estimates["mean_energy_eV"].value),
                                   self.default))
        names.update(self.targets)
        return {name: (estimates[name] if name in estimates else rates[name], target)
                    for name, target in names.items()}

    def zero_bound(self, name: str, estimates: dict[str, Estimate], exposure_s: float) -> float:
        """Upper bound of a quantity with no event at all (rule of three over the exposure), in its units."""
        nu = ZERO_EVENT_COUNT / exposure_s if exposure_s > 0 else math.inf
        if name in self.keys:
            return nu / self.target_density_m3[self.keys.index(name)]
        kind = _FREQUENCY_QUANTITIES.get(name)
        if kind == "per_N":
            return nu / self.N
        if kind == "per_N_W":
            return nu / (self.N * abs(estimates["drift_velocity_bulk"].value))
        return math.nan

    def check(self, estimates: dict[str, Estimate], rates: dict[str, Estimate], process_counts: np.ndarray,
              exposure_s: float) -> bool:
        """Whether every tested quantity has reached its target; sets :attr:`limiting` (the quantity furthest
        from its target, the one that stops or limits the run), :attr:`limiting_ratio` (its relative error over
        its target) and :attr:`upper_bounds` (the statistically zero quantities)."""
        worst, ratio_max = "", 0.0
        bounds = {}
        for name, (est, target) in self.tested(estimates, rates, process_counts).items():
            if est.value == 0.0 and est.stderr == 0.0 and name != self.only:
                bounds[name] = self.zero_bound(name, estimates, exposure_s)
                continue
            if math.isfinite(est.value) and abs(est.value) < ZERO_SIGMAS * est.stderr and name != self.only:
                bounds[name] = _upper(est.value, est.stderr)
                continue
            rel = est.relative_stderr
            ratio = rel / target if math.isfinite(rel) else math.inf
            if not ratio <= ratio_max:
                worst, ratio_max = name, ratio
        self.upper_bounds, self.limiting, self.limiting_ratio = bounds, worst, ratio_max
        return ratio_max < 1.0
