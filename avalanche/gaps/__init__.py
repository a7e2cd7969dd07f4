"""Avalanches in electrode gaps: geometries and field maps, the :func:`gap` run (one simulation, a sibling of the
swarm engine), the local-field comparison and the result. May import ``kernels``, ``gas``, ``engine`` (process
tables, drives, result helpers), ``constants`` and ``errors``.

The run function lives in :mod:`avalanche.gaps.simulation` (no module is named ``gap``: importing it would
replace the public function ``avalanche.gap``).
"""

from .geometry import Coaxial, ConcentricSpheres, FieldMap, ParallelPlates, PointPlane  # noqa: F401
from .results import GainDistribution, GapResult  # noqa: F401
from .simulation import gap  # noqa: F401
