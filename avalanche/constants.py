"""Physical constants in SI units (CODATA values via :mod:`scipy.constants`) and unit conversions.

Electron energies are in eV and reduced fields in Td throughout the public interface; this module is the one
place that converts them.
"""

from __future__ import annotations

import numpy as np
import scipy.constants as sc

ELEMENTARY_CHARGE_C: float = sc.e
ELECTRON_MASS_kg: float = sc.m_e
ATOMIC_MASS_UNIT_kg: float = sc.atomic_mass
BOLTZMANN_J_K: float = sc.k
EV_J: float = sc.electron_volt
TOWNSEND_V_m2: float = 1e-21
"""1 Td = 1e-21 V m² (common practice)."""
HUXLEY_T_m3: float = 1e-27
"""1 Hx (huxley, the unit of reduced magnetic field B/N) = 1e-27 T m³ (common practice)."""
ANGSTROM2_m2: float = 1e-20
CM2_m2: float = 1e-4
TORR_Pa: float = sc.torr
STANDARD_ATMOSPHERE_Pa: float = sc.atm


def speed_m_s(energy_eV):
    """Electron speed [m s⁻¹] for kinetic energy ``energy_eV`` [eV] (non-relativistic)."""
    return np.sqrt(2.0 * np.asarray(energy_eV, dtype=float) * EV_J / ELECTRON_MASS_kg)


def photon_wavelength_nm(energy_eV):
    """Vacuum wavelength [nm] of a photon of energy ``energy_eV`` [eV]: λ = h c / E."""
    energy = np.asarray(energy_eV, dtype=float)
    return sc.h * sc.c / (energy * EV_J) * 1e9


def photon_energy_eV(wavelength_nm):
    """Photon energy [eV] of vacuum wavelength ``wavelength_nm`` [nm]: E = h c / λ."""
    wavelength = np.asarray(wavelength_nm, dtype=float)
    return sc.h * sc.c / (wavelength * 1e-9) / EV_J


def number_density_m3(pressure_Pa: float, temperature_K: float) -> float:
    """Ideal-gas number density N = p / (k T) [m⁻³]."""
    return float(pressure_Pa) / (BOLTZMANN_J_K * float(temperature_K))
