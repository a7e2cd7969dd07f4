"""Checks of the shipped rare-gas cross-section sets (He, Ne, Ar, Xe) against published atomic data.

Every reference value below is recalled (there is no access to the sources here): each carries its citation and
the words "from memory". Tolerances reflect the precision of the recalled value, not the data's quoted accuracy.
Comparisons of cross sections [m²] pass ``abs=0`` to ``pytest.approx``: its default absolute tolerance (1e-12) would
otherwise accept any value of order 1e-20.
"""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.gas.library import get_set

RARE_GASES = ("He", "Ne", "Ar", "Xe")

# NIST Atomic Spectra Database (Kramida, Ralchenko, Reader & NIST ASD Team), ground-state ionization energies [eV]
# (from memory).
NIST_IONIZATION_ENERGY_eV = {"He": 24.587389, "Ne": 21.564540, "Ar": 15.759610, "Xe": 12.129843}

# Rapp D & Englander-Golden P (1965) J. Chem. Phys. 43 1464, total (charge-weighted) ionization: peak cross
# section [m²] and the energy of the peak [eV] (from memory). The Xe peak energy is left out: two recollections of
# it (about 50 eV in the set's notes, about 60 eV) disagree, and neither can be checked without the paper at hand.
# For Ne, Ar and Xe the set's table is itself recalled from this paper, so the check mainly guards the file against
# unit and transcription errors; for He the table is computed from the Binary-Encounter-Bethe formula (Kim & Rudd
# 1994), an independent comparison.
RAPP_PEAK = {"He": (3.7e-21, 125.0), "Ne": (7.8e-21, 180.0), "Ar": (2.85e-20, 85.0), "Xe": (4.9e-20, None)}

# Zero-energy scattering lengths [Bohr radii] (O'Malley T F 1963 Phys. Rev. 130 1020 analysis; He: Crompton,
# Elford & Robertson 1970 Aust. J. Phys. 23 667; Ar: Milloy et al. 1977 Aust. J. Phys. 30 61) (from memory).
SCATTERING_LENGTH_a0 = {"He": 1.18, "Ar": -1.45}


def _process(xs, kind):
    found = [p for p in xs.processes if p.kind == kind]
    assert found, f"{xs.name}: no {kind} process"
    return found


def _hc_over_eV_nm(energy_eV):
    """Photon vacuum wavelength [nm] for energy [eV], λ = h c / E, from scipy.constants (CODATA)."""
    return sc.h * sc.c / (np.asarray(energy_eV, float) * sc.electron_volt) * 1e9


@pytest.mark.parametrize("gas", RARE_GASES)
def test_ionization_threshold_is_nist_ionization_energy(gas):
    # NIST Atomic Spectra Database, Kramida et al. (from memory): threshold = ionization energy within 0.01 eV.
    xs = get_set(gas)
    (ion,) = _process(xs, "ionization")
    assert ion.threshold_eV == pytest.approx(NIST_IONIZATION_ENERGY_eV[gas], abs=0.01)
    assert xs.ionization_energy_eV == pytest.approx(NIST_IONIZATION_ENERGY_eV[gas], abs=0.01)
    # an inelastic cross section vanishes below its threshold (common practice)
    below = np.linspace(0.0, ion.threshold_eV * 0.999, 50)
    assert np.all(ion.sigma_m2(below) == 0.0)


@pytest.mark.parametrize("gas", RARE_GASES)
def test_ionization_peak_matches_rapp_englander_golden(gas):
    # Rapp & Englander-Golden (1965) J. Chem. Phys. 43 1464, table of total ionization (from memory):
    # peak value and its energy within 15 %.
    (ion,) = _process(get_set(gas), "ionization")
    energy = np.linspace(ion.threshold_eV, 1000.0, 20001)
    sigma = ion.sigma_m2(energy)
    peak_m2, peak_eV = RAPP_PEAK[gas]
    assert sigma.max() == pytest.approx(peak_m2, rel=0.15, abs=0)
    if peak_eV is not None:
        assert energy[np.argmax(sigma)] == pytest.approx(peak_eV, rel=0.15, abs=0)


def test_ionization_opb_parameters():
    # Opal, Peterson & Beaty (1971) J. Chem. Phys. 55 4100, w parameters [eV] (from memory).
    expected = {"He": 15.8, "Ne": 24.2, "Ar": 10.0, "Xe": 8.7}
    for gas, w in expected.items():
        (ion,) = _process(get_set(gas), "ionization")
        assert ion.opb_w_eV == pytest.approx(w, abs=0.05)


def test_neon_recombination_photon_wavelength():
    # λ = h c / E with scipy.constants (common practice): a photon carrying the Ne ionization energy 21.56 eV
    # has a vacuum wavelength of 57.5 nm.
    xs = get_set("Ne")
    assert _hc_over_eV_nm(xs.ionization_energy_eV) == pytest.approx(57.5, abs=0.05)


@pytest.mark.parametrize("gas", RARE_GASES)
def test_resonance_wavelengths_match_level_energies(gas):
    # A resonance line connects the level with the ground state, so its photon energy is the level energy
    # (common practice); λ = h c / E_threshold within 1 %.
    excitations = _process(get_set(gas), "excitation")
    radiating = [p for p in excitations if p.wavelength_nm is not None]
    assert radiating, f"{gas}: no resonant level carries wavelength_nm"
    for p in radiating:
        assert p.wavelength_nm == pytest.approx(_hc_over_eV_nm(p.threshold_eV), rel=0.01, abs=0), p.label


@pytest.mark.parametrize("gas, lines_nm", [
    # Resonance lines (from memory, NIST ASD): He 2 1P 58.4 nm; Ne 73.6/74.4 nm; Ar 104.8/106.7 nm;
    # Xe 129.6/147.0 nm.
    ("He", (58.4,)), ("Ne", (73.6, 74.4)), ("Ar", (104.8, 106.7)), ("Xe", (129.6, 147.0)),
])
def test_known_resonance_lines_present(gas, lines_nm):
    waves = sorted(p.wavelength_nm for p in _process(get_set(gas), "excitation") if p.wavelength_nm)
    assert len(waves) == len(lines_nm)
    np.testing.assert_allclose(waves, lines_nm, atol=0.1)


@pytest.mark.parametrize("gas", RARE_GASES)
def test_excited_levels_form_the_gas_group(gas):
    # Penning transfer addresses the excited levels through their group name "<Gas>*" (project convention).
    excitations = _process(get_set(gas), "excitation")
    assert len(excitations) >= 5
    assert all(p.group == f"{gas}*" for p in excitations)


@pytest.mark.parametrize("gas, window_eV", [
    # Ramsauer-Townsend minimum of the momentum-transfer cross section (from memory):
    # Ar near 0.23 eV (Milloy, Crompton, Rees & Robertson 1977 Aust. J. Phys. 30 61);
    # Xe near 0.6-0.7 eV (Koizumi, Shirakawa & Ogawa 1986 J. Phys. B 19 2331; Hayashi 1983 J. Phys. D 16 581).
    ("Ar", (0.20, 0.26)),
    ("Xe", (0.60, 0.70)),
])
def test_ramsauer_minimum_position(gas, window_eV):
    (elastic,) = _process(get_set(gas), "elastic")
    energy = np.linspace(0.02, 3.0, 30001)
    sigma = elastic.sigma_m2(energy)
    lo, hi = window_eV
    assert lo <= energy[np.argmin(sigma)] <= hi


def test_argon_ramsauer_minimum_depth():
    # Milloy et al. (1977) Aust. J. Phys. 30 61: about 1e-21 m² at the minimum (from memory; recalled to ±30 %).
    (elastic,) = _process(get_set("Ar"), "elastic")
    sigma = elastic.sigma_m2(np.linspace(0.1, 0.4, 3001))
    assert sigma.min() == pytest.approx(1.0e-21, rel=0.3, abs=0)


@pytest.mark.parametrize("gas", sorted(SCATTERING_LENGTH_a0))
def test_zero_energy_momentum_transfer_is_four_pi_a_squared(gas):
    # Effective-range theory (O'Malley 1963 Phys. Rev. 130 1020): σ_m(0) = 4 π a², with the recalled scattering
    # length (from memory, ±2 % on a → ±4 % on σ); Bohr radius from scipy.constants.
    (elastic,) = _process(get_set(gas), "elastic")
    a = SCATTERING_LENGTH_a0[gas] * sc.physical_constants["Bohr radius"][0]
    assert elastic.sigma_m2(np.array([0.0]))[0] == pytest.approx(4 * np.pi * a**2, rel=0.04, abs=0)


def test_helium_momentum_transfer_at_one_eV():
    # Crompton, Elford & Robertson (1970) Aust. J. Phys. 23 667, σ_m(He) at 1 eV ≈ 6.4e-20 m² (from memory;
    # the swarm analysis quotes about 2 %, the recall is good to about 5 %). Nearly flat at low energy:
    # between 4.9e-20 (0 eV) and 7e-20 m² up to 8 eV.
    (elastic,) = _process(get_set("He"), "elastic")
    assert elastic.sigma_m2(np.array([1.0]))[0] == pytest.approx(6.4e-20, rel=0.05, abs=0)
    low = elastic.sigma_m2(np.linspace(0.0, 8.0, 801))
    assert low.min() >= 4.8e-20 and low.max() <= 7.0e-20


def test_argon_momentum_transfer_near_its_maximum():
    # Argon σ_m about 1.5e-19 m² at 10-13 eV (Yanguas-Gil, Cotrino & Alves 2005 J. Phys. D 38 1588 review,
    # from memory; recalled to ±15 %).
    (elastic,) = _process(get_set("Ar"), "elastic")
    assert elastic.sigma_m2(np.linspace(10.0, 13.0, 301)).max() == pytest.approx(1.5e-19, rel=0.15, abs=0)


def test_argon_total_excitation_magnitude():
    # Total excitation of the default argon set (Yanguas-Gil, Cotrino & Alves 2005) against the independent
    # compilation of Hayashi (2003, report NIFS-DATA-72), both read from their published tables: the peaks agree
    # within 25 % (the spread between evaluations of the 4s-4p cross sections that both papers discuss) and lie
    # between 20 and 50 eV. An earlier recollection of 1.5-2e-20 m² for this peak (from memory) is contradicted by
    # both published tables (1.05e-20 and 1.08e-20 m²).
    energy = np.linspace(11.0, 1000.0, 9891)
    total = sum(p.sigma_m2(energy) for p in _process(get_set("Ar"), "excitation"))
    reference = sum(p.sigma_m2(energy) for p in _process(get_set("Ar@hayashi"), "excitation"))
    assert total.max() == pytest.approx(reference.max(), rel=0.25, abs=0)
    assert 20.0 <= energy[np.argmax(total)] <= 50.0


@pytest.mark.parametrize("gas", RARE_GASES)
def test_tables_cover_the_energy_range(gas):
    # The format asks rare-gas tables to reach 1000 eV so that extrapolation is rarely used (project format).
    xs = get_set(gas)
    for p in xs.processes:
        assert p.energy_eV[-1] >= 1000.0, p.label
    (elastic,) = _process(xs, "elastic")
    assert elastic.energy_eV[0] <= 1e-3
    assert len(elastic.energy_eV) >= 30
