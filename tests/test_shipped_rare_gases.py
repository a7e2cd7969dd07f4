"""Shipped rare-gas sets against outside references (atomic data and beam measurements)."""

from __future__ import annotations

import numpy as np
import pytest

from avalanche.constants import photon_energy_eV
from avalanche.library import get_set

# Ionization energies [eV]: NIST Atomic Spectra Database (Kramida, Ralchenko, Reader & NIST ASD Team) — from memory.
NIST_IONIZATION_eV = {"He": 24.587389, "Ne": 21.564540, "Ar": 15.759610, "Xe": 12.129843}

# Peak of the total (charge-weighted) ionization cross section [m²] and its energy [eV]:
# Rapp & Englander-Golden (1965), J. Chem. Phys. 43, 1464, table — from memory.
# The Xe peak energy is left out: two recollections of it (about 50 eV in the set's notes, about 60 eV here)
# disagree, and neither can be checked against the table without the paper at hand.
RAPP_PEAK = {"He": (3.7e-21, 125.0), "Ne": (7.8e-21, 180.0), "Ar": (2.85e-20, 85.0), "Xe": (4.9e-20, None)}


@pytest.mark.parametrize("gas", sorted(NIST_IONIZATION_eV))
def test_ionization_threshold_is_the_nist_ionization_energy(gas):
    xs = get_set(gas)
    ion = [p for p in xs.processes if p.kind == "ionization"]
    assert len(ion) == 1
    assert ion[0].threshold_eV == pytest.approx(NIST_IONIZATION_eV[gas], abs=0.01)
    assert xs.ionization_energy_eV == pytest.approx(NIST_IONIZATION_eV[gas], abs=0.01)


@pytest.mark.parametrize("gas", sorted(RAPP_PEAK))
def test_peak_ionization_cross_section_matches_rapp_englander_golden(gas):
    sigma_ref, energy_ref = RAPP_PEAK[gas]
    proc = [p for p in get_set(gas).processes if p.kind == "ionization"][0]
    energy = np.geomspace(proc.threshold_eV + 0.01, 1000.0, 4000)
    sigma = proc.sigma_m2(energy)
    i = int(np.argmax(sigma))
    # 15 % (the stated accuracy of the comparison in the issue; Rapp & Englander-Golden quote about 7 %)
    assert sigma[i] == pytest.approx(sigma_ref, rel=0.15)
    if energy_ref is not None:
        assert energy[i] == pytest.approx(energy_ref, rel=0.15)


@pytest.mark.parametrize("gas", sorted(RAPP_PEAK))
def test_resonant_level_wavelengths_match_level_energies(gas):
    # common practice: a resonance line from the ground state has photon energy = level energy (h c / lambda)
    radiating = [p for p in get_set(gas).processes if p.wavelength_nm]
    assert radiating, f"{gas}: no radiating level"
    for p in radiating:
        assert photon_energy_eV(p.wavelength_nm) == pytest.approx(p.threshold_eV, rel=0.01), p.label
        assert p.group == f"{gas}*"


def test_ramsauer_minimum_positions():
    # Ramsauer-Townsend minimum near 0.23 eV in Ar (Milloy et al. 1977, Aust. J. Phys. 30 61) and near 0.6-0.7 eV
    # in Xe (Koizumi, Shirakawa & Ogawa 1986, J. Phys. B 19 2331) — from memory
    for gas, lo, hi in (("Ar", 0.18, 0.30), ("Xe", 0.5, 0.8)):
        el = get_set(gas).process("momentum transfer")
        energy = np.linspace(0.01, 2.0, 4000)
        e_min = energy[np.argmin(el.sigma_m2(energy))]
        assert lo <= e_min <= hi, (gas, e_min)


def test_helium_momentum_transfer_near_1eV():
    # about 6e-20 m² at 1 eV (Crompton, Elford & Robertson 1970, Aust. J. Phys. 23 667 — from memory)
    sigma = get_set("He").process("momentum transfer").sigma_m2([1.0])[0]
    assert 5e-20 <= sigma <= 7e-20
