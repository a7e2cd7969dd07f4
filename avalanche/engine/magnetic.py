"""A uniform, constant magnetic field at any angle to the electric field: validation, the kernel's field vector and
the frame in which vector and tensor results are given.

Frame
-----
The electric field points along −z (the kernels' convention), so the electric force on an electron points along +z.
The results use the frame

* ê_E = +z: the direction of the electric force on electrons, along which every drift velocity is reported
  positive (as without a magnetic field);
* ê_E×B = E × B / |E × B|;
* ê_3 = ê_E × ê_E×B, the third axis: the direction of B's component perpendicular to E.

With ψ the angle between E and B, B = |B| (cos ψ Ê + sin ψ ê_3) with Ê = −ê_E. In the kernels' coordinates
ê_E = ẑ, ê_E×B = ŷ, ê_3 = −x̂ and B = −|B| (sin ψ, 0, cos ψ). For B ∥ E (ψ = 0 or 180°) E × B vanishes and the
axes are the limit ψ → 0 of these.

The electron's equation of motion m dv/dt = −e (E + v × B) is flown exactly between collisions
(:func:`avalanche.kernels.magnetic_flight`).
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..constants import ELEMENTARY_CHARGE_C, ELECTRON_MASS_kg, HUXLEY_T_m3
from ..errors import ConfigError

FRAME = np.array([[0.0, 0.0, 1.0], [0.0, 1.0, 0.0], [-1.0, 0.0, 0.0]])
"""Rows: the frame axes ê_E, ê_E×B, ê_3 in the kernels' (x, y, z) coordinates (frame vector = FRAME @ kernel)."""
AXES = ("E", "ExB", "third")
"""Names of the frame axes, in order."""


@dataclass(frozen=True)
class MagneticField:
    """A validated magnetic field of a swarm point.

    Parameters
    ----------
    magnetic_field_T : float
        |B| [T], > 0.
    field_angle_deg : float
        Angle ψ between E and B [deg], 0 … 180 (90: crossed fields).
    number_density_m3 : float
        Gas density N [m⁻³], for the reduced field B/N.
    """

    magnetic_field_T: float
    field_angle_deg: float
    number_density_m3: float

    @property
    def reduced_magnetic_field_Hx(self) -> float:
        """B/N [Hx] (1 Hx = 1e-27 T m³)."""
        return self.magnetic_field_T / (self.number_density_m3 * HUXLEY_T_m3)

    @property
    def cyclotron_frequency(self) -> float:
        """ω_c = e B / m [rad s⁻¹]."""
        return ELEMENTARY_CHARGE_C * self.magnetic_field_T / ELECTRON_MASS_kg

    def kernel_array(self) -> np.ndarray:
        """The kernel's ``magnetic`` argument (b_x, b_z, ω_c): B's unit vector (b_x, 0, b_z) in kernel coordinates
        and ω_c."""
        psi = math.radians(self.field_angle_deg)
        return np.array([-math.sin(psi), -math.cos(psi), self.cyclotron_frequency])

    def unit_vector(self) -> np.ndarray:
        """B / |B| in kernel coordinates (x, y, z)."""
        bx, bz, _ = self.kernel_array()
        return np.array([bx, 0.0, bz])

    def describe(self) -> dict:
        """Plain data for the run's inputs."""
        return {"magnetic_field_T": self.magnetic_field_T, "reduced_magnetic_field_Hx": self.reduced_magnetic_field_Hx,
                "field_angle_deg": self.field_angle_deg, "cyclotron_frequency_rad_s": self.cyclotron_frequency,
                "axes": list(AXES)}


NO_FIELD = np.zeros(3)
"""The kernel's ``magnetic`` argument without a magnetic field (ω_c = 0: the field-free flights)."""


def _number(name: str, value) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float, np.integer, np.floating)) or not math.isfinite(
            float(value)):
        raise ConfigError(f"swarm(): argument {name} = {value!r} must be a finite number")
    return float(value)


def make_magnetic(magnetic_field_T=0.0, field_angle_deg=90.0, reduced_magnetic_field_Hx=None, *,
                  number_density_m3: float) -> MagneticField | None:
    """Validate the magnetic-field arguments of :func:`avalanche.engine.time_of_flight.swarm`.

    Parameters
    ----------
    magnetic_field_T : float
        |B| [T], ≥ 0.
    field_angle_deg : float
        Angle between E and B [deg], 0 … 180.
    reduced_magnetic_field_Hx : float, optional
        B/N [Hx] instead of ``magnetic_field_T`` (give one of the two).
    number_density_m3 : float
        Gas density N [m⁻³].

    Returns
    -------
    MagneticField or None
        None for B = 0: the run is then exactly the field-free one.

    Raises
    ------
    ConfigError
        A negative or non-finite field, an angle outside 0 … 180°, or both B and B/N nonzero.
    """
    tesla = _number("magnetic_field_T", magnetic_field_T)
    angle = _number("field_angle_deg", field_angle_deg)
    if tesla < 0:
        raise ConfigError(f"swarm(): argument magnetic_field_T = {tesla:g} must be >= 0 [T] (the direction is set by "
                          "field_angle_deg)")
    if not 0.0 <= angle <= 180.0:
        raise ConfigError(f"swarm(): argument field_angle_deg = {angle:g} must lie in 0 ... 180 (angle between E and "
                          "B; 90 for crossed fields)")
    if reduced_magnetic_field_Hx is not None:
        reduced = _number("reduced_magnetic_field_Hx", reduced_magnetic_field_Hx)
        if reduced < 0:
            raise ConfigError(f"swarm(): argument reduced_magnetic_field_Hx = {reduced:g} must be >= 0 [Hx]")
        if tesla != 0.0 and reduced != 0.0:
            raise ConfigError(f"swarm(): give either magnetic_field_T (= {tesla:g}) or reduced_magnetic_field_Hx "
                              f"(= {reduced:g}), not both")
        tesla = tesla or reduced * HUXLEY_T_m3 * number_density_m3
    if tesla == 0.0:
        return None
    return MagneticField(magnetic_field_T=tesla, field_angle_deg=angle, number_density_m3=float(number_density_m3))


def to_frame_vectors(kernel_vectors: np.ndarray) -> np.ndarray:
    """Vectors (..., 3) in kernel coordinates → frame components (E, E×B, third)."""
    return np.asarray(kernel_vectors) @ FRAME.T


def to_frame_tensors(kernel_tensors: np.ndarray) -> np.ndarray:
    """Tensors (..., 3, 3) in kernel coordinates → frame components: FRAME · T · FRAMEᵀ."""
    return np.einsum("ai,...ij,bj->...ab", FRAME, np.asarray(kernel_tensors), FRAME)
