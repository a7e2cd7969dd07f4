"""Raw per-replica sums of a swarm run, from which every estimate derives (:mod:`avalanche.engine.estimators`).

A :class:`SwarmTallies` holds, for each independent replica, sums over the sampled chunks: counts, sums of the
pre-collision state at trial events (each weighted by ν*/ν*(t), 1 for a constant trial frequency), collision
counts per process and their expected values, exposure ∫ n dt, the energy histogram, and the increments of the
ensemble's position moments during chunks. Means and standard errors are derived, never
stored, so the tallies of a continued run add up (:meth:`SwarmTallies.accumulate`), and independent runs with
different seeds combine by stacking their replicas (:func:`combine`).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass

import numpy as np

from .. import kernels as K
from .magnetic import to_frame_tensors, to_frame_vectors

# name: (dtype, trailing shape key, units, description). Shape keys: "" → (R,), "P" → (R, P), "B" → (R, B).
FIELDS: dict[str, tuple[type, str, str, str]] = {
    "events": (np.int64, "", "1", "trial events (real and null) in sampled chunks"),
    "event_weights": (np.float64, "", "1", "sum of nu*/nu*(t) over those trial events (their number for a constant "
                      "trial frequency nu*): nu* times the electron-time they sample"),
    "real_collisions": (np.int64, "", "1", "real collisions in sampled chunks"),
    "energy_sum_eV": (np.float64, "", "eV", "weighted sum of the electron energy at trial events"),
    "vz_sum": (np.float64, "", "m/s", "weighted sum of v_z at trial events"),
    "exposure_s": (np.float64, "", "s", "electron-time exposure, integral of n dt (unweighted)"),
    "sampled_time_s": (np.float64, "", "s", "simulated time of the sampled chunks"),
    "created": (np.int64, "", "1", "electrons created by ionization"),
    "removed": (np.int64, "", "1", "electrons removed by attachment"),
    "eedf_overflow": (np.int64, "", "1", "trial events above the last energy bin (unweighted diagnostic; the "
                      "EEDF's overflow fraction comes from event_weights)"),
    "process_counts": (np.int64, "P", "1", "real collisions per process"),
    "extrapolated_counts": (np.int64, "P", "1", "real collisions beyond the process's table"),
    "eedf_counts": (np.float64, "B", "1", "weighted trial events per energy bin"),
    "expected_process_counts": (np.float64, "P", "1", "sum of nu_k(eps)/nu*(t) over trial events: the expected "
                                "collisions of each process"),
    "mature_events": (np.int64, "", "1", "trial events in chunks sampled for position moments"),
    "mature_event_weights": (np.float64, "", "1", "sum of nu*/nu*(t) over those trial events"),
    "mature_vz_sum": (np.float64, "", "m/s", "weighted sum of v_z at those events"),
    "mature_zvz_sum": (np.float64, "", "m2/s", "weighted sum of (z - z_ref) v_z at those events"),
    "mature_z_sum": (np.float64, "", "m", "weighted sum of (z - z_ref) at those events"),
    "mature_xyv_sum": (np.float64, "", "m2/s", "weighted sum of (x - x_ref) v_x + (y - y_ref) v_y at those "
                       "events"),
    "mature_time_s": (np.float64, "", "s", "simulated time of the chunks sampled for position moments"),
    "z_mean_increment_m": (np.float64, "", "m", "sum over those chunks of the change of <z> during the chunk"),
    "z_var_increment_m2": (np.float64, "", "m2", "sum of the change of var(z) during the chunk"),
    "xy_var_increment_m2": (np.float64, "", "m2", "sum of the change of var(x) + var(y) during the chunk"),
}
MAGNETIC_FIELDS: dict[str, tuple[type, str, str, str]] = {
    "velocity_sum": (np.float64, "3", "m/s", "sum of the velocity at trial events (frame E, ExB, third)"),
    "mature_velocity_sum": (np.float64, "3", "m/s", "sum of the velocity at the position-moment events"),
    "mature_position_sum": (np.float64, "3", "m", "sum of r - r_ref at those events"),
    "mature_position_velocity_sum": (np.float64, "3x3", "m2/s", "sum of (r_i - r_ref,i) v_j at those events"),
    "position_mean_increment_m": (np.float64, "3", "m", "sum over those chunks of the change of <r>"),
    "position_covariance_increment_m2": (np.float64, "3x3", "m2",
                                         "sum over those chunks of the change of the covariance of r"),
}
"""Magnetic-field runs only (present in their tallies, absent otherwise): the vector and tensor sums, in the frame
(E, E×B, third) of :mod:`avalanche.engine.magnetic`. Shape keys: "3" → (R, 3), "3x3" → (R, 3, 3)."""
_TRAILING = {"": (), "3": (3,), "3x3": (3, 3)}


@dataclass(eq=False)
class SwarmTallies:
    """Raw sums per replica (arrays of shape (R,), (R, P) or (R, B), see :data:`FIELDS`).

    Parameters
    ----------
    arrays : dict of str to ndarray
        One array per name in :data:`FIELDS`.
    """

    arrays: dict[str, np.ndarray]

    def __post_init__(self):
        missing = set(FIELDS) - set(self.arrays)
        if missing:
            raise ValueError(f"tallies lack the fields {sorted(missing)}")

    @classmethod
    def zeros(cls, replicas: int, processes: int, bins: int, magnetic: bool = False) -> SwarmTallies:
        """Empty tallies for ``replicas`` replicas, ``processes`` processes and ``bins`` energy bins (with the
        :data:`MAGNETIC_FIELDS` if ``magnetic``)."""
        trailing = dict(_TRAILING, P=(processes,), B=(bins,))
        fields = {**FIELDS, **MAGNETIC_FIELDS} if magnetic else FIELDS
        return cls({name: np.zeros((replicas, *trailing[key]), dtype=dtype)
                    for name, (dtype, key, _, _) in fields.items()})

    @property
    def magnetic(self) -> bool:
        """Whether these are the tallies of a magnetic-field run (they hold :data:`MAGNETIC_FIELDS`)."""
        return "velocity_sum" in self.arrays

    @property
    def replicas(self) -> int:
        return int(self.arrays["events"].shape[0])

    def __getitem__(self, name: str) -> np.ndarray:
        return self.arrays[name]

    def add_chunk(self, sums: np.ndarray, counts: np.ndarray, hist: np.ndarray, process_counts: np.ndarray,
                  extrapolated: np.ndarray, duration_s: float, expected_counts: np.ndarray) -> None:
        """Add one sampled chunk's kernel outputs (see :func:`avalanche.kernels.advance_chunk`) and its expected
        collisions per process (R, P) (:meth:`avalanche.engine.tables.EnergyGrid.expected_counts`)."""
        a = self.arrays
        a["events"] += counts[:, K.COUNT_EVENTS]
        a["event_weights"] += sums[:, K.SUM_WEIGHTS]
        a["real_collisions"] += counts[:, K.COUNT_REAL]
        a["created"] += counts[:, K.COUNT_CREATED]
        a["removed"] += counts[:, K.COUNT_REMOVED]
        a["eedf_overflow"] += counts[:, K.COUNT_EEDF_OVERFLOW]
        a["energy_sum_eV"] += sums[:, K.SUM_ENERGY]
        a["vz_sum"] += sums[:, K.SUM_VZ]
        a["exposure_s"] += sums[:, K.SUM_EXPOSURE]
        a["expected_process_counts"] += expected_counts
        a["sampled_time_s"] += duration_s
        a["process_counts"] += process_counts
        a["extrapolated_counts"] += extrapolated
        a["eedf_counts"] += hist
        if self.magnetic:
            a["velocity_sum"] += to_frame_vectors(sums[:, K.SUM_VELOCITY])

    def add_mature_chunk(self, sums: np.ndarray, counts: np.ndarray, duration_s: float, start_moments: np.ndarray,
                         end_moments: np.ndarray, start_positions: np.ndarray | None = None,
                         end_positions: np.ndarray | None = None) -> None:
        """Add one chunk to the position-moment sums.

        ``start_moments`` and ``end_moments`` have shape (R, 3): <z>, var(z), var(x) + var(y) of each replica's
        ensemble at the chunk start (after population control) and end (before it). Magnetic-field runs also give
        ``start_positions`` and ``end_positions`` (R, 12): the mean position (3) and the position covariance (3 × 3,
        row-major) in kernel coordinates (:meth:`avalanche.engine.ensemble.Ensemble.position_moments`).
        """
        a = self.arrays
        a["mature_events"] += counts[:, K.COUNT_EVENTS]
        a["mature_event_weights"] += sums[:, K.SUM_WEIGHTS]
        a["mature_vz_sum"] += sums[:, K.SUM_VZ]
        a["mature_zvz_sum"] += sums[:, K.SUM_ZVZ]
        a["mature_z_sum"] += sums[:, K.SUM_Z]
        a["mature_xyv_sum"] += sums[:, K.SUM_XYV]
        a["mature_time_s"] += duration_s
        change = end_moments - start_moments
        a["z_mean_increment_m"] += change[:, 0]
        a["z_var_increment_m2"] += change[:, 1]
        a["xy_var_increment_m2"] += change[:, 2]
        if self.magnetic:
            a["mature_velocity_sum"] += to_frame_vectors(sums[:, K.SUM_VELOCITY])
            a["mature_position_sum"] += to_frame_vectors(sums[:, K.SUM_POSITION])
            a["mature_position_velocity_sum"] += to_frame_tensors(sums[:, np.array(K.SUM_POSITION_VELOCITY)])
            moved = end_positions - start_positions
            a["position_mean_increment_m"] += to_frame_vectors(moved[:, :3])
            a["position_covariance_increment_m2"] += to_frame_tensors(moved[:, 3:].reshape(-1, 3, 3))

    def accumulate(self, other: SwarmTallies) -> None:
        """Add the sums of ``other`` (the same replicas continued) to these, in place."""
        for name in self.arrays:
            self.arrays[name] += other.arrays[name]

    def copy(self) -> SwarmTallies:
        return SwarmTallies({k: v.copy() for k, v in self.arrays.items()})


def combine(tallies: Sequence[SwarmTallies]) -> SwarmTallies:
    """Stack the replicas of independent runs (different seeds, same settings) into one set of tallies."""
    if not tallies:
        raise ValueError("combine() needs at least one SwarmTallies")
    names = [name for name in tallies[0].arrays if all(name in t.arrays for t in tallies)]
    return SwarmTallies({name: np.concatenate([t.arrays[name] for t in tallies], axis=0) for name in names})
