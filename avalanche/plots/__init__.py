"""Figures drawn from tables read out of results files (never from live workers): swarm parameters, EEDFs, AC
phase panels, steady-state Townsend profiles (``swarm``), Paschen curves and emission (``breakdown``), avalanches in
gaps (``gap``); the shared style and :func:`save_figure` (``style``). May import ``analysis``, ``gaps`` and the layers
below them.
"""

from .breakdown import plot_emission_spectrum, plot_paschen, plot_phase_resolved_emission
from .gap import plot_gain_curve, plot_gain_distribution, plot_induced_current, plot_ionization_map
from .style import FORMATS, PAPER_STYLE, save_figure
from .swarm import (
    PhaseCurve,
    ReferenceData,
    SSTProfile,
    handbook_gas_name,
    plot_eedf,
    plot_magnetic_drift,
    plot_phase_resolved,
    plot_sst_profiles,
    plot_swarm_parameters,
    read_reference,
    swarm_panels,
)

__all__ = [
    "PAPER_STYLE", "FORMATS", "save_figure", "ReferenceData", "read_reference", "handbook_gas_name",
    "swarm_panels", "plot_swarm_parameters", "plot_magnetic_drift", "plot_eedf", "PhaseCurve", "plot_phase_resolved",
    "SSTProfile", "plot_sst_profiles", "plot_paschen", "plot_emission_spectrum", "plot_phase_resolved_emission",
    "plot_gain_curve", "plot_gain_distribution", "plot_ionization_map", "plot_induced_current",
]
