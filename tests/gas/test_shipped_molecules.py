"""Checks of the shipped N2 and O2 cross-section sets (Phelps & Pitchford 1985; Lawton & Phelps 1978, built by
tools/build_crosssections.py) and of the dry-air named mixture.

Every reference value below is a published number recalled without access to the source ("from memory") or a
physical constant from scipy.constants; the citation stands beside each check.
"""

import math
import tomllib
from pathlib import Path

import numpy as np
import pytest
from scipy import constants

from avalanche.gas.library import get_set, named_mixture

# Energy of one wavenumber [eV per cm^-1].
EV_PER_INVERSE_CM = constants.h * constants.c * 100.0 / constants.e


def _process(cross_section_set, label):
    matches = [p for p in cross_section_set.processes if p.label == label]
    assert len(matches) == 1, f"{cross_section_set.name}: expected one process labelled {label!r}"
    return matches[0]


def _only(cross_section_set, kind):
    matches = [p for p in cross_section_set.processes if p.kind == kind and getattr(p, "enabled", True)]
    assert len(matches) == 1, f"{cross_section_set.name}: expected one enabled {kind} process"
    return matches[0]


def _peak(process):
    energy = np.asarray(process.energy_eV, dtype=float)
    sigma = np.asarray(process.cross_section_m2, dtype=float)
    i = int(np.argmax(sigma))
    return energy[i], sigma[i]


@pytest.fixture(scope="module")
def n2():
    return get_set("N2")


@pytest.fixture(scope="module")
def o2():
    return get_set("O2")


# --- species header --------------------------------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("name", "ionization_energy_eV"),
    [
        ("N2", 15.581),  # NIST Chemistry WebBook, N2 adiabatic ionization energy 15.581 eV (from memory)
        ("O2", 12.0697),  # NIST Chemistry WebBook, O2 adiabatic ionization energy 12.0697 eV (from memory)
    ],
)
def test_ionization_energy_matches_nist(name, ionization_energy_eV):
    cross_section_set = get_set(name)
    assert cross_section_set.name == name
    assert cross_section_set.ionization_energy_eV == pytest.approx(ionization_energy_eV, abs=0.01)
    ionization = _only(cross_section_set, "ionization")
    # the published sets give their thresholds rounded to 0.1 eV (N2 15.6) or 0.01 eV (O2 12.06)
    assert ionization.threshold_eV == pytest.approx(ionization_energy_eV, abs=0.05)


@pytest.mark.parametrize(
    ("name", "atomic_weight", "atoms"),
    [
        ("N2", 14.0067, 2),  # IUPAC conventional atomic weight of N, 14.0067 (from memory)
        ("O2", 15.9994, 2),  # IUPAC conventional atomic weight of O, 15.9994 (from memory)
    ],
)
def test_molecular_mass(name, atomic_weight, atoms):
    assert get_set(name).mass_amu == pytest.approx(atoms * atomic_weight, abs=1e-3)


# --- ionization ------------------------------------------------------------------------------------------------------

@pytest.mark.parametrize(
    ("name", "peak_m2", "energy_range_eV"),
    [
        # Rapp & Englander-Golden (1965) J. Chem. Phys. 43, 1464: N2 total ionization maximum 2.5e-20 m2 near
        # 100-150 eV (from memory); their stated accuracy is about 7 %, 15 % allows for the recall.
        ("N2", 2.5e-20, (90.0, 160.0)),
        # Same paper: O2 total ionization maximum about 2.8e-20 m2 near 100-150 eV (from memory).
        ("O2", 2.8e-20, (90.0, 160.0)),
    ],
)
def test_peak_ionization_cross_section(name, peak_m2, energy_range_eV):
    ionization = _only(get_set(name), "ionization")
    peak_energy, peak_sigma = _peak(ionization)
    assert peak_sigma == pytest.approx(peak_m2, rel=0.15, abs=0)
    assert energy_range_eV[0] <= peak_energy <= energy_range_eV[1]
    assert ionization.sigma_m2(peak_energy) == pytest.approx(peak_sigma, rel=1e-9, abs=0)


def test_n2_ionization_falls_like_bethe_at_high_energy(n2):
    # Bethe (1930): sigma ~ ln(c E)/E at high energy, so E*sigma rises slowly between 300 and 1000 eV while sigma
    # itself falls (common practice; Rapp & Englander-Golden 1965 data behave so, from memory).
    ionization = _only(n2, "ionization")
    s300, s1000 = ionization.sigma_m2(300.0), ionization.sigma_m2(1000.0)
    assert s1000 < s300
    assert 1000.0 * s1000 > 300.0 * s300


# --- attachment ------------------------------------------------------------------------------------------------------

def test_o2_dissociative_attachment_peak(o2):
    attachment = _process(o2, "dissociative attachment O2 -> O- + O")
    peak_energy, peak_sigma = _peak(attachment)
    # Rapp & Briglia (1965) J. Chem. Phys. 43, 1480: maximum 1.3e-22 m2 near 6.5-7 eV (from memory); the
    # Lawton & Phelps (1978) table peaks at 7.05 eV.
    assert 6.0 <= peak_energy <= 7.1
    assert peak_sigma == pytest.approx(1.3e-22, rel=0.30, abs=0)


def test_o2_dissociative_attachment_closed_below_thermochemical_threshold(o2):
    # O2 -> O + O- needs D0(O2) - EA(O) = 5.116 - 1.461 = 3.655 eV (Huber & Herzberg 1979 D0 = 5.116 eV;
    # Hotop & Lineberger 1985 EA(O) = 1.461 eV; both from memory).
    attachment = _process(o2, "dissociative attachment O2 -> O- + O")
    for energy in (0.5, 2.0, 3.6):
        assert attachment.sigma_m2(energy) == 0.0


def test_three_body_attachment_has_o2_as_third_body(o2):
    three_body = [p for p in o2.processes if getattr(p, "three_body", False)]
    assert len(three_body) == 1
    process = three_body[0]
    assert process.kind == "attachment"
    assert process.enabled
    assert process.third_body == "O2"
    # Lawton & Phelps (1978) give the three-body cross section for an O2 density of 1 cm^-3 (the source's block
    # header, read by the build script)
    assert process.reference_density_m3 == 1e6


def test_three_body_attachment_thermal_rate_coefficient(o2):
    # Chanin, Phelps & Biondi (1962) Phys. Rev. 128, 219: k3 = 2-3e-42 m6/s for thermal electrons in O2 at 300 K
    # (from memory). k3 = <sigma v> / N_ref over a 300 K Maxwellian.
    process = next(p for p in o2.processes if getattr(p, "three_body", False))
    kT_eV = constants.k * 300.0 / constants.e
    energy = np.linspace(0.0, 1.0, 20001)
    maxwellian = 2.0 / math.sqrt(math.pi) * kT_eV ** -1.5 * np.sqrt(energy) * np.exp(-energy / kT_eV)
    speed = np.sqrt(2.0 * energy * constants.e / constants.m_e)
    sigma = np.array([process.sigma_m2(e) for e in energy])
    k3 = np.trapezoid(sigma * speed * maxwellian, energy) / process.reference_density_m3
    assert 2.0e-42 <= k3 <= 3.0e-42


# --- excitation ------------------------------------------------------------------------------------------------------

def _vibrational(cross_section_set):
    levels = {}
    for p in cross_section_set.processes:
        if p.label.startswith("vibration v=0-"):
            levels[int(p.label.rsplit("-", 1)[1])] = p
    return [levels[v] for v in sorted(levels)]


@pytest.mark.parametrize(
    ("name", "count", "we_cm", "wexe_cm"),
    [
        ("N2", 8, 2358.57, 14.324),  # Huber & Herzberg (1979) N2 X1Sigma_g+: w_e, w_e x_e [cm-1] (from memory)
        ("O2", 4, 1580.19, 11.98),  # Huber & Herzberg (1979) O2 X3Sigma_g-: w_e, w_e x_e [cm-1] (from memory)
    ],
)
def test_vibrational_thresholds_follow_the_levels(name, count, we_cm, wexe_cm):
    levels = _vibrational(get_set(name))
    assert len(levels) == count
    thresholds = np.array([p.threshold_eV for p in levels])
    assert np.all(np.diff(thresholds) > 0), "thresholds must increase with v"
    v = np.arange(1, count + 1)
    term = (we_cm * v - wexe_cm * v * (v + 1)) * EV_PER_INVERSE_CM  # G(v) - G(0)
    # v=1: the sets give the energy to 0.01 eV. Higher v: the sets space the levels nearly evenly (0.29-0.30 eV
    # in N2, 0.18-0.19 eV in O2), so they lie above the anharmonic levels by up to 6 % at the top of the ladder.
    assert thresholds[0] == pytest.approx(term[0], abs=0.005)
    np.testing.assert_allclose(thresholds, term, rtol=0.065)


def test_vibrational_levels_carry_superelastic_pairs():
    # structured metadata of the build: each vibrational excitation is a level pair with weights (1, 1)
    for name in ("N2", "O2"):
        for p in _vibrational(get_set(name)):
            assert p.superelastic and p.level_type == "vibrational"
            assert p.statistical_weights == (1.0, 1.0)
            assert p.initial_state == "X(v=0)" and p.final_state.startswith("X(v=")


def test_n2_v1_resonance_peak(n2):
    # Schulz (1964) Phys. Rev. 135, A988 and Phelps & Pitchford (1985) Phys. Rev. A 31, 2932: the 2Pi_g resonance
    # gives v=0-1 a maximum of about 5e-20 m2 near 2.2-2.5 eV (from memory); 30 % for the recall.
    peak_energy, peak_sigma = _peak(_vibrational(n2)[0])
    assert 2.0 <= peak_energy <= 2.6
    assert peak_sigma == pytest.approx(5.0e-20, rel=0.30, abs=0)


def test_n2_second_positive_system_wavelength(n2):
    c_state = _process(n2, "C3Pi_u")
    b_state = _process(n2, "B3Pi_g")
    # Lofthus & Krupenie (1977) J. Phys. Chem. Ref. Data 6, 113: 0-0 band of the second positive system
    # C3Pi_u -> B3Pi_g at 337.1 nm in air (from memory, common practice).
    assert c_state.wavelength_nm == pytest.approx(337.1, abs=0.05)
    # The band is not the C-state energy: its photon energy is T0(C) - T0(B). Air wavelength -> vacuum with the
    # refractive index of air 1.000292 near 340 nm (Edlen 1966, from memory).
    photon_eV = constants.h * constants.c / (c_state.wavelength_nm * 1.000292e-9) / constants.e
    assert c_state.threshold_eV - b_state.threshold_eV == pytest.approx(photon_eV, abs=0.02)


@pytest.mark.parametrize(
    ("label", "threshold_eV"),
    [
        # N2 level energies T0 [eV], Lofthus & Krupenie (1977) J. Phys. Chem. Ref. Data 6, 113 (from memory)
        ("A3Sigma_u+ (v=0-4)", 6.17), ("B3Pi_g", 7.35), ("W3Delta_u", 7.36), ("B'3Sigma_u-", 8.16),
        ("a'1Sigma_u-", 8.40), ("a1Pi_g", 8.55), ("w1Delta_u", 8.89), ("C3Pi_u", 11.03),
        ("E3Sigma_g+", 11.87), ("a''1Sigma_g+", 12.25),
    ],
)
def test_n2_electronic_thresholds(n2, label, threshold_eV):
    assert _process(n2, label).threshold_eV == pytest.approx(threshold_eV, abs=0.01)


@pytest.mark.parametrize(
    ("label", "threshold_eV"),
    [
        ("a1Delta_g", 0.977),  # Huber & Herzberg (1979) O2 a1Delta_g T0 = 0.977 eV (from memory)
        ("b1Sigma_g+", 1.627),  # Huber & Herzberg (1979) O2 b1Sigma_g+ T0 = 1.627 eV (from memory)
    ],
)
def test_o2_low_lying_singlet_thresholds(o2, label, threshold_eV):
    assert _process(o2, label).threshold_eV == pytest.approx(threshold_eV, abs=0.002)


def test_rotation_is_the_single_level_approximation():
    # Hake & Phelps (1967) Phys. Rev. 158, 70 / Lawton & Phelps (1978): one rotational loss of 0.02 eV standing
    # for the whole rotational manifold at 300 K (the sets' block headers)
    for name in ("N2", "O2"):
        rotation = _process(get_set(name), "rotation (single-level approximation)")
        assert rotation.threshold_eV == 0.02
        assert rotation.level_type == "rotational" and not rotation.superelastic


# --- elastic ---------------------------------------------------------------------------------------------------------

def test_n2_momentum_transfer_magnitude(n2):
    # Itikawa (2006) J. Phys. Chem. Ref. Data 35, 31: N2 momentum transfer about 1.0-1.5e-19 m2 at 1.5-2 eV,
    # rising through the 2Pi_g resonance; about 1e-19 m2 at 10 eV (from memory).
    elastic = _only(n2, "elastic")
    for energy in (1.5, 2.0):
        assert 0.9e-19 <= elastic.sigma_m2(energy) <= 1.6e-19
    assert elastic.sigma_m2(10.0) == pytest.approx(1.0e-19, rel=0.2, abs=0)


@pytest.mark.parametrize("name", ["N2", "O2"])
def test_elastic_part_plus_inelastic_gives_the_published_effective_cross_section(name):
    # The sets give the effective cross section (Phelps & Pitchford 1985, sec. II: sigma_eff = sigma_m + sum of the
    # inelastic cross sections); the loader derives sigma_m. Re-adding the inelastic ones gives the published table
    # back, read here from the shipped file (as built from the source), exactly up to rounding.
    xs = get_set(name)
    effective = tomllib.loads(Path(xs.path).read_text())["process"]
    table = next(p for p in effective if p["kind"] == "effective")
    energy = np.array(table["energy_eV"])
    energy = energy[energy <= 1000.0]
    published = np.interp(energy, table["energy_eV"], table["cross_section"])
    total = sum(p.sigma_m2(energy) for p in xs.processes
                if p.kind in ("elastic", "excitation", "ionization", "attachment") and not p.three_body)
    np.testing.assert_allclose(total, published, rtol=1e-9, atol=1e-30)


# --- whole-set rules -------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("name", ["N2", "O2"])
def test_inelastic_processes_closed_below_threshold(name):
    # no inelastic loss below threshold (format rule); the published tables end where their sources end, and
    # the momentum transfer and ionization reach 1000 eV
    for p in get_set(name).processes:
        if p.kind in ("elastic", "ionization"):
            assert p.energy_eV[-1] >= 1000.0, p.label
        if p.kind != "elastic" and p.threshold_eV > 0:
            assert p.sigma_m2(0.999 * p.threshold_eV) == 0.0, p.label


# --- dry air ---------------------------------------------------------------------------------------------------------

def test_air_mixture_fractions():
    fractions = named_mixture("air")
    assert set(fractions) == {"N2", "O2", "Ar"}
    assert sum(fractions.values()) == pytest.approx(1.0, abs=1e-6)
    # CRC Handbook of Chemistry and Physics, dry air: N2 78.084 %, O2 20.946 %, Ar 0.934 % by volume (from memory,
    # common practice); CO2 and trace gases omitted and the three renormalised.
    reference = {"N2": 0.78084, "O2": 0.20946, "Ar": 0.00934}
    total = sum(reference.values())
    for species, fraction in reference.items():
        assert fractions[species] == pytest.approx(fraction / total, abs=1e-6)


def test_air_mixture_species_have_shipped_sets():
    for species in named_mixture("air"):
        assert get_set(species).name == species
