"""The electrons of a swarm: R independent replicas in (R, capacity) arrays, their generators, weights and the
unbiased population control between chunks (random thinning above, cloning below the bounds)."""

from __future__ import annotations

import math

import numpy as np

from .. import kernels as K
from ..errors import AvalancheError

# ------------------------------------------------------------------------------------------------ ensemble

class Ensemble:
    """The electrons of R replicas in arrays of shape (R, capacity), with their generators and weights."""

    def __init__(self, settings, growing: bool = True):
        self.replicas = settings.replicas
        self.bounds = settings.population_bounds
        self._set_target(settings.electrons // settings.replicas)
        children = np.random.SeedSequence(settings.seed).spawn(self.replicas)
        streams = [child.spawn(2) for child in children]
        self.rng = np.array([s[0].generate_state(4, np.uint64) for s in streams], dtype=np.uint64)
        self.rng[np.all(self.rng == 0, axis=1), 0] = np.uint64(1)  # xoshiro's one forbidden state
        self.control_rng = [np.random.Generator(np.random.PCG64(s[1])) for s in streams]
        # Without ionization no replica ever exceeds its target (cloning stops there); with it, room for growth
        # above the upper bound (the store is enlarged, and the chunk redone, if that is not enough).
        self.capacity = int(math.ceil(1.4 * self.upper)) if growing else self.target
        self._allocate(self.capacity)
        self.count = np.full(self.replicas, self.target, dtype=np.int64)
        self.log_weight = np.zeros(self.replicas)
        kT_eV = 2.0 / 3.0 * settings.initial_energy_eV
        for r, gen in enumerate(self.control_rng):
            energy = kT_eV * gen.standard_gamma(1.5, self.target)
            speed = np.sqrt(energy / K.ENERGY_PER_SPEED2_eV)
            cos_t = 1.0 - 2.0 * gen.random(self.target)
            phi = 2.0 * np.pi * gen.random(self.target)
            sin_t = np.sqrt(1.0 - cos_t ** 2)
            self.vx[r, :self.target] = speed * sin_t * np.cos(phi)
            self.vy[r, :self.target] = speed * sin_t * np.sin(phi)
            self.vz[r, :self.target] = speed * cos_t

    _STATE = ("x", "y", "z", "vx", "vy", "vz")

    def _set_target(self, target: int) -> None:
        lower, upper = self.bounds
        self.target = target
        self.lower = max(1, int(math.floor(lower * target)))
        self.upper = max(target + 1, int(math.ceil(upper * target)))

    def _allocate(self, capacity: int) -> None:
        for name in self._STATE + ("birth",):
            setattr(self, name, np.zeros((self.replicas, capacity)))

    def enlarge(self) -> None:
        """Enlarge the capacity 1.5 times (keeping the live electrons)."""
        old = {name: getattr(self, name) for name in self._STATE}
        self.capacity = int(math.ceil(1.5 * self.capacity))
        self._allocate(self.capacity)
        for name, arr in old.items():
            getattr(self, name)[:, :arr.shape[1]] = arr

    def save(self) -> tuple:
        """A copy of the live state (for redoing a chunk)."""
        top = int(self.count.max())
        return (self.count.copy(), self.rng.copy(), {n: getattr(self, n)[:, :top].copy() for n in self._STATE})

    def restore(self, saved: tuple) -> None:
        count, rng, arrays = saved
        self.count[:] = count
        self.rng[:] = rng
        for name, arr in arrays.items():
            getattr(self, name)[:, :arr.shape[1]] = arr

    def moments(self) -> np.ndarray:
        """Per replica (R, 6): x̄, ȳ, z̄, var(z), var(x) + var(y), n (variances with n − 1; NaN for n < 2)."""
        n = self.count.astype(float)
        top = int(self.count.max())
        live = np.arange(top)[None, :] < self.count[:, None]
        out = np.empty((self.replicas, 6))
        out[:, 5] = n
        with np.errstate(invalid="ignore", divide="ignore"):
            for column, name in enumerate(("x", "y", "z")):
                values = np.where(live, getattr(self, name)[:, :top], 0.0)
                mean = values.sum(axis=1) / n
                deviation = np.where(live, values - mean[:, None], 0.0)
                out[:, column] = mean
                var = np.einsum("ij,ij->i", deviation, deviation) / (n - 1)
                if name == "z":
                    out[:, 3] = var
                else:
                    out[:, 4] = var if name == "x" else out[:, 4] + var
        out[n < 2, :5] = np.nan
        return out

    def position_moments(self) -> np.ndarray:
        """Per replica (R, 12): the mean position (x̄, ȳ, z̄) and the position covariance matrix (3 × 3, row-major,
        with n − 1; NaN for n < 2), for the diffusion tensor of magnetic-field runs."""
        n = self.count.astype(float)
        top = int(self.count.max())
        live = np.arange(top)[None, :] < self.count[:, None]
        out = np.empty((self.replicas, 12))
        with np.errstate(invalid="ignore", divide="ignore"):
            positions = np.stack([np.where(live, getattr(self, name)[:, :top], 0.0) for name in ("x", "y", "z")],
                                 axis=1)
            mean = positions.sum(axis=2) / n[:, None]
            deviation = np.where(live[:, None, :], positions - mean[:, :, None], 0.0)
            out[:, :3] = mean
            out[:, 3:] = (np.einsum("rit,rjt->rij", deviation, deviation) / (n - 1)[:, None, None]).reshape(-1, 9)
        out[n < 2] = np.nan
        return out

    def reset_positions(self) -> None:
        """Move every live electron to the origin (only live entries are touched: memory stays ∝ electrons)."""
        for name in ("x", "y", "z"):
            arr = getattr(self, name)
            for r in range(self.replicas):
                arr[r, :self.count[r]] = 0.0

    def retarget(self, target: int) -> None:
        """Set the target population per replica to ``target`` (the bounds scale with it) and resample every replica
        to exactly ``target`` electrons: a uniformly random subset when it has more, random clones when it has fewer.

        The replica's weight is multiplied by n/target, as in :meth:`control`, so every ensemble mean stays unbiased.
        Used by the pilot relaxation of :func:`avalanche.swarm`: a few electrons per replica relax, then are cloned
        to the full ensemble (clones share their parent's state and part from it at their next collisions, each
        replica with its own generator, so the replicas stay independent).
        """
        target = int(target)
        if target < 2:
            raise AvalancheError(f"internal: a replica needs at least 2 electrons, not {target}")
        self._set_target(target)
        while self.capacity < int(math.ceil(1.4 * self.upper)):
            self.enlarge()
        self._resample(force=True)

    def control(self) -> int:
        """Population control of every replica; returns how many replicas were resampled."""
        return self._resample(force=False)

    def _resample(self, force: bool) -> int:
        changed = 0
        for r, gen in enumerate(self.control_rng):
            n = int(self.count[r])
            if n == 0:
                raise AvalancheError("a replica lost all its electrons (attachment faster than the chunk "
                                     "schedule); raise electrons or lower events_per_chunk")
            if (self.lower <= n <= self.upper and not force) or n == self.target:
                continue
            if n > self.target:
                index = np.sort(gen.choice(n, self.target, replace=False))
            else:
                index = np.concatenate((np.arange(n), gen.integers(0, n, self.target - n)))
            for name in self._STATE:
                arr = getattr(self, name)
                arr[r, :self.target] = arr[r, index]
            self.count[r] = self.target
            self.log_weight[r] += math.log(n / self.target)
            changed += 1
        return changed
