"""The one table of quantities: every name, symbol, unit and plain-words label that avalanche writes.

Every writer takes its names and units from here: the screen tables of ``avalanche swarm``, ``townsend``,
``sweep`` and ``breakdown``, their JSON, the HDF5 results files, the CSV and text tables, and the attributes of the
Python result objects. A quantity has one name everywhere.

Conventions
-----------
* SI units, electron energy in eV and reduced field in Td; the unit goes into the name where it is not SI
  (``mean_energy_eV``, ``reduced_field_Td``, ``relaxation_length_m``).
* ``_N`` at the end of a name means *divided by* the gas number density N: ``alpha_N`` is α/N [m^2],
  ``eta_N`` is η/N [m^2].
* ``N_`` at the start of a name means *times* N: ``N_mu`` is the reduced mobility μN [1/(V m s)],
  ``N_D_L_flux`` is N·D_L [1/(m s)], ``N_D_tensor_bulk`` is N times the bulk diffusion tensor.
* The rate coefficient of one process is ``rate_coefficient_<process>``, the process label with every run of
  characters other than letters and digits turned into ``_`` (:func:`rate_name`); the exact process label is kept
  beside it (``process`` attribute in HDF5, ``processes`` in JSON, a ``# process of`` line in tables).
* A standard error is the quantity's name followed by ``_stderr``, in the quantity's unit.
* Units are spelled one way, plain ASCII: ``m^2``, ``m^3/s``, ``1/(m s)``, ``1/(V m s)``, ``m/s``, ``1/s``.

Names used before version 0.2 are listed in :data:`RENAMED`; the Python result objects still answer to them
with a :class:`DeprecationWarning` for one release.
"""

from __future__ import annotations

import re
import warnings
from dataclasses import dataclass

__all__ = ["Quantity", "QUANTITIES", "RENAMED", "RATE_PREFIX", "STDERR_SUFFIX", "rate_name", "rate_names",
           "unit", "label", "symbol", "safe_name", "current_name"]


@dataclass(frozen=True)
class Quantity:
    """One entry of the table.

    Attributes
    ----------
    name : str
        The name used on screen, in JSON, CSV, HDF5 and as a Python attribute.
    symbol : str
        The symbol used in formulas and figure labels (Unicode).
    unit : str
        The unit in plain ASCII (``'1'`` for a number).
    label : str
        Plain words with the symbol, shown on screen and on axes.
    description : str
        One sentence saying how the quantity is defined.
    """

    name: str
    symbol: str
    unit: str
    label: str
    description: str


_TABLE = (
    ("reduced_field_Td", "E/N", "Td", "reduced field E/N", "electric field over gas number density"),
    ("mean_energy_eV", "⟨ε⟩", "eV", "mean energy ⟨ε⟩", "mean electron energy, time average of the swarm"),
    ("drift_velocity_flux", "W_flux", "m/s", "flux drift velocity W_flux",
     "mean electron velocity along the force eE, ⟨v_z⟩"),
    ("drift_velocity_bulk", "W_bulk", "m/s", "bulk drift velocity W_bulk",
     "velocity of the swarm's centre of mass, d⟨z⟩/dt"),
    ("N_D_L_flux", "N·D_L", "1/(m s)", "reduced longitudinal diffusion N·D_L (flux)",
     "N times the flux longitudinal diffusion coefficient"),
    ("N_D_L_bulk", "N·D_L", "1/(m s)", "reduced longitudinal diffusion N·D_L (bulk)",
     "N times the bulk longitudinal diffusion coefficient, from the growth of the swarm's spread along E"),
    ("N_D_T_flux", "N·D_T", "1/(m s)", "reduced transverse diffusion N·D_T (flux)",
     "N times the flux transverse diffusion coefficient"),
    ("N_D_T_bulk", "N·D_T", "1/(m s)", "reduced transverse diffusion N·D_T (bulk)",
     "N times the bulk transverse diffusion coefficient, from the growth of the swarm's spread across E"),
    ("N_mu", "μN", "1/(V m s)", "reduced mobility μN", "N times the mobility, N·W_bulk/E"),
    ("characteristic_energy_eV", "D_T/μ", "eV", "characteristic energy D_T/μ",
     "bulk transverse diffusion over mobility"),
    ("alpha_N", "α/N", "m^2", "Townsend ionization coefficient α/N",
     "ionizations per unit drift length, divided by N (diffusion-corrected)"),
    ("eta_N", "η/N", "m^2", "attachment coefficient η/N",
     "attachments per unit drift length, divided by N (diffusion-corrected)"),
    ("effective_alpha_N", "(α−η)/N", "m^2", "effective ionization coefficient (α−η)/N",
     "net growth per unit drift length, divided by N"),
    ("alpha_N_simple", "ν_iz/(N·W)", "m^2", "ionization coefficient ν_iz/(N·W_bulk)",
     "ionization frequency over N and the bulk drift velocity, without the diffusion correction"),
    ("eta_N_simple", "ν_att/(N·W)", "m^2", "attachment coefficient ν_att/(N·W_bulk)",
     "attachment frequency over N and the bulk drift velocity, without the diffusion correction"),
    ("ionization_rate_coefficient", "k_iz", "m^3/s", "ionization rate coefficient k_iz",
     "ionizations (direct and Penning) per electron per second, divided by N"),
    ("attachment_rate_coefficient", "k_att", "m^3/s", "attachment rate coefficient k_att",
     "attachments per electron per second, divided by N"),
    ("ionization_rate_coefficient_counted", "k_iz", "m^3/s", "ionization rate coefficient k_iz (counted events)",
     "k_iz from the counted ionization events (the other estimate sums expected values)"),
    ("attachment_rate_coefficient_counted", "k_att", "m^3/s", "attachment rate coefficient k_att (counted events)",
     "k_att from the counted attachment events"),
    ("excitation_rate_coefficient", "k_ex", "m^3/s", "excitation rate coefficient k_ex",
     "excitations of every level per electron per second, divided by N"),
    ("penning_ionization_rate_coefficient", "k_P", "m^3/s", "Penning ionization rate coefficient k_P",
     "Penning ionizations per electron per second, divided by N"),
    ("penning_fraction", "k_P/k_iz", "1", "Penning share of ionization k_P/k_iz",
     "the Penning part of the ionization rate coefficient"),
    ("effective_ionization_frequency", "ν_iz − ν_att", "1/s", "effective ionization frequency ν_iz − ν_att",
     "ionizations minus attachments per electron per second"),
    ("drift_velocity_amplitude", "W_1", "m/s", "drift velocity amplitude W_1",
     "first-harmonic amplitude of the phase-resolved flux drift velocity over the drive period"),
    ("drift_velocity_phase_lag_rad", "φ_W", "rad", "drift velocity lag φ behind E",
     "phase by which the first harmonic of the drift velocity lags the field"),
    ("collision_frequency", "ν_c", "1/s", "collision frequency ν_c", "real collisions per electron per second"),
    ("relaxation_length_m", "L_rel", "m", "energy relaxation length L_rel",
     "distance from the electrode where the flux mean energy has relaxed (steady-state Townsend)"),
    ("power_absorbed_eV_s", "P", "eV/s", "power absorbed per electron P",
     "energy gained from the field per electron per second"),
    ("drift_velocity_vector", "W", "m/s", "flux drift velocity vector W",
     "⟨v⟩ in the frame (E, E×B, third)"),
    ("drift_velocity_bulk_vector", "W_bulk", "m/s", "bulk drift velocity vector W_bulk",
     "d⟨r⟩/dt in the frame (E, E×B, third)"),
    ("drift_velocity_magnitude", "|W|", "m/s", "drift speed |W|", "magnitude of the flux drift velocity"),
    ("lorentz_angle_deg", "ψ_L", "deg", "Lorentz angle ψ_L",
     "angle between the flux drift velocity and the electric force"),
    ("N_D_tensor_flux", "N·D", "1/(m s)", "reduced diffusion tensor N·D (flux)",
     "N times the symmetrised flux diffusion tensor in the frame (E, E×B, third)"),
    ("N_D_tensor_bulk", "N·D", "1/(m s)", "reduced diffusion tensor N·D (bulk)",
     "N times the bulk diffusion tensor in the frame (E, E×B, third)"),
    ("eedf", "f(ε)", "eV^-3/2", "energy distribution f(ε)",
     "electron energy distribution, normalised so that ∫ f(ε) ε^½ dε = 1"),
    ("energy_eV", "ε", "eV", "electron energy ε", "centre of an energy bin"),
    ("phase_rad", "ωt", "rad", "drive phase ωt", "centre of a phase bin of ωt mod 2π"),
    ("frequency_Hz", "f", "Hz", "drive frequency f", "frequency of the AC drive (0: DC)"),
    ("magnetic_field_T", "B", "T", "magnetic field B", "magnitude of the magnetic field"),
    ("reduced_magnetic_field_Hx", "B/N", "Hx", "reduced magnetic field B/N", "magnetic field over N"),
    ("field_angle_deg", "θ_EB", "deg", "angle between E and B θ_EB", "angle between the electric and magnetic "
     "fields"),
    ("mean_gain", "G", "1", "mean gain G", "electrons reaching the anode per primary electron (avalanches in gaps)"),
    ("polya_theta", "θ", "1", "Pólya parameter θ", "shape parameter of the Pólya fit of the gain distribution"),
    ("local_field_gain", "G_LFA", "1", "local-field gain G_LFA",
     "exp of the integral of (α − η) from the package's own α(E/N) table along the same field line"),
    ("local_field_ratio", "G/G_LFA", "1", "gain over local-field gain G/G_LFA",
     "simulated mean gain divided by the local-field-approximation gain"),
    ("collected_driven", "n_d", "1", "electrons collected by the driven electrode n_d", "per primary"),
    ("collected_grounded", "n_g", "1", "electrons collected by the grounded electrode n_g", "per primary"),
    ("collected_outside", "n_o", "1", "electrons leaving the modelled region n_o", "per primary"),
    ("voltage_V", "U", "V", "voltage U", "voltage of the driven electrode (amplitude for an AC drive)"),
    ("pressure_Pa", "p", "Pa", "gas pressure p", "pressure of the gas"),
    ("wire_radius_m", "a", "m", "wire radius a", "radius of the inner electrode of a coaxial gap"),
    ("temperature_K", "T", "K", "gas temperature T", "temperature of the gas"),
    ("number_density_m3", "N", "1/m^3", "gas number density N", "molecules per cubic metre"),
)

QUANTITIES: dict[str, Quantity] = {row[0]: Quantity(*row) for row in _TABLE}
"""Name → :class:`Quantity`, in display order."""

RATE_PREFIX = "rate_coefficient_"
"""Prefix of the per-process rate coefficients [m^3/s] (:func:`rate_name`)."""
RATE_UNIT = "m^3/s"
STDERR_SUFFIX = "_stderr"
"""Suffix of a standard error (same unit as the quantity)."""

RENAMED: dict[str, str] = {
    "mobility_N": "N_mu",
    "long_diffusion_N_flux": "N_D_L_flux",
    "long_diffusion_N_bulk": "N_D_L_bulk",
    "trans_diffusion_N_flux": "N_D_T_flux",
    "trans_diffusion_N_bulk": "N_D_T_bulk",
    "diffusion_tensor_N_flux": "N_D_tensor_flux",
    "diffusion_tensor_N_bulk": "N_D_tensor_bulk",
}
"""Names of version 0.1 → the current names (the old ones meant "times N" with a ``_N`` suffix, which elsewhere
means "divided by N")."""


def safe_name(text: str) -> str:
    """``text`` with every run of characters other than ASCII letters and digits turned into ``_`` (no leading or
    trailing ``_``), e.g. ``'1s5 (3p5 4s [3/2]2, metastable)'`` → ``'1s5_3p5_4s_3_2_2_metastable'``."""
    return re.sub(r"[^0-9A-Za-z]+", "_", str(text)).strip("_") or "x"


def rate_name(process: str) -> str:
    """The quantity name of the rate coefficient of ``process`` (its label, or ``<species>:<label>`` in a
    mixture of several species): ``rate_coefficient_`` + :func:`safe_name` of it."""
    return RATE_PREFIX + safe_name(process)


def rate_names(processes) -> dict[str, str]:
    """Process label → quantity name for several processes; names made unique by ``_2``, ``_3``, ... when two
    labels differ only in characters that :func:`safe_name` replaces."""
    out, seen = {}, set()
    for process in processes:
        name, k = rate_name(process), 1
        while name in seen:
            k += 1
            name = f"{rate_name(process)}_{k}"
        seen.add(name)
        out[str(process)] = name
    return out


def current_name(name: str, warn: bool = True) -> str:
    """The current name of ``name``: itself, or its replacement when it is a name of :data:`RENAMED` (with a
    :class:`DeprecationWarning` when ``warn``); ``_stderr`` suffixes are kept."""
    base, suffix = (name[: -len(STDERR_SUFFIX)], STDERR_SUFFIX) if name.endswith(STDERR_SUFFIX) else (name, "")
    if base in RENAMED:
        if warn:
            warnings.warn(f"'{base}' is deprecated and will be removed in the next release; use "
                          f"'{RENAMED[base]}'", DeprecationWarning, stacklevel=3)
        return RENAMED[base] + suffix
    return name


def _base(name: str) -> str:
    return name[: -len(STDERR_SUFFIX)] if name.endswith(STDERR_SUFFIX) else name


def unit(name: str) -> str:
    """Unit of quantity ``name`` (also of ``<name>_stderr`` and ``rate_coefficient_<process>``); ``''`` when the
    table does not know it."""
    base = _base(name)
    if base.startswith(RATE_PREFIX):
        return RATE_UNIT
    quantity = QUANTITIES.get(base)
    return quantity.unit if quantity else ""


def label(name: str) -> str:
    """Plain-words label of ``name`` with its symbol, e.g. ``'reduced mobility μN'``; a rate coefficient reads
    ``'rate coefficient k of <process>'``; an unknown name is returned unchanged."""
    base = _base(name)
    suffix = " (standard error)" if base != name else ""
    if base.startswith(RATE_PREFIX):
        return f"rate coefficient k of {base[len(RATE_PREFIX):]}{suffix}"
    quantity = QUANTITIES.get(base)
    return (quantity.label if quantity else base) + suffix


def symbol(name: str) -> str:
    """Symbol of ``name`` (``'k'`` for a rate coefficient; the name itself when unknown)."""
    base = _base(name)
    if base.startswith(RATE_PREFIX):
        return "k"
    quantity = QUANTITIES.get(base)
    return quantity.symbol if quantity else base
