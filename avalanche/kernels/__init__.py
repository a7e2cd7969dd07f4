"""Kernels: numba functions over plain arrays only (random numbers, free flights, collisions, the time-of-flight
and steady-state Townsend chunks, the jit settings), and ``population`` (the numpy population-control sampler the
engine and ``gaps`` share between chunks). May import nothing of the package but ``constants``.

The names below are the kernel interface the engine uses as ``K.name``; the steady-state chunk is
:mod:`avalanche.kernels.steady_state`.
"""

from .collisions import *  # noqa: F403
from .collisions import ENERGY_PER_SPEED2_eV  # noqa: F401  (not matched by * : lower-case unit suffix)
from .flight import (  # noqa: F401
    SINE_SERIES_LIMIT,
    accel_and_slope,
    field_flight,
    field_frame_flight,
    gyration_coefficients,
    instantaneous_accel,
    interval_exit,
    jerk_coefficients,
    magnetic_field_flight,
    magnetic_flight,
    phase_bin,
    sine_flight,
    table_flight,
)
from .jit import JIT_OPTIONS, jit, jit_parallel  # noqa: F401
from .time_of_flight import advance_chunk, expected_counts  # noqa: F401
