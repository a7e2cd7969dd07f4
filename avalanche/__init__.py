"""avalanche: electron swarm parameters in gases by Monte Carlo simulation (null-collision method).

Public entry points: :class:`Mixture`, :func:`get_set`, :func:`model_gas`, :func:`load_set`, :func:`swarm`,
:func:`townsend`, :func:`gap` (avalanches in electrode gaps).
"""

from ._version import __version__
from .errors import AvalancheError, ConfigError, CrossSectionError, PhysicsWarning
from .gas.crosssections import CrossSectionSet, Process, load_set, make_set, process_from_table, save_set
from .gas.library import available_gases, get_set, model_gas, named_mixture
from .gas.mixture import Mixture, humid_air

_GAPS = ("gap", "ParallelPlates", "Coaxial", "ConcentricSpheres", "PointPlane", "FieldMap")


def __getattr__(name):
    # heavy modules (numba kernels, h5py) load on first use
    if name == "swarm":
        from .engine.time_of_flight import swarm

        return swarm
    if name == "townsend":
        from .engine.townsend import townsend

        return townsend
    if name in _GAPS:
        from . import gaps

        return getattr(gaps, name)
    if name == "open_results":
        from .store.sweep_file import open_results

        return open_results
    if name == "run_sweep":
        from .sweep.execution import run_sweep

        return run_sweep
    raise AttributeError(f"module 'avalanche' has no attribute '{name}'")


__all__ = [
    "__version__", "AvalancheError", "ConfigError", "CrossSectionError", "PhysicsWarning",
    "CrossSectionSet", "Process", "load_set", "save_set", "make_set", "process_from_table",
    "available_gases", "get_set", "model_gas", "named_mixture", "Mixture", "swarm", "townsend", "open_results",
    "run_sweep", "gap", "ParallelPlates", "Coaxial", "ConcentricSpheres", "PointPlane", "FieldMap", "humid_air",
]
