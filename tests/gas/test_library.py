"""The gas library: shipped sets are found, model gases follow their published definitions."""

from __future__ import annotations

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.constants import photon_wavelength_nm
from avalanche.errors import ConfigError
from avalanche.gas.library import available_gases, get_set, model_gas, shipped_dir

MODEL_GASES = ["maxwell", "reid-ramp", "lucas-saelee", "ness-robson"]


def test_model_gases_are_listed():
    names = available_gases()
    for name in MODEL_GASES:
        assert name in names


def test_shipped_files_are_valid():
    # every shipped TOML file loads through the validating loader
    for path in sorted(shipped_dir().glob("*.toml")):
        if path.stem == "mixtures":
            continue
        xs = get_set(path.stem)
        species, _, set_name = path.stem.partition("@")  # a named data set: <species>@<set>.toml
        assert xs.name == species
        assert xs.set_name == set_name or not set_name
        assert xs.provenance.get("sources"), f"{path}: provenance has no sources"


def test_maxwell_model_has_constant_collision_frequency():
    # sigma_m = 10 eps^-1/2 A^2 with eps in eV, so sigma_m v is energy independent (the definition of the
    # constant-collision-frequency model; e.g. Ness & Robson 1986, Phys. Rev. A 34 2185 — from memory)
    xs = model_gas("maxwell")
    energy = np.array([0.01, 0.1, 1.0, 10.0, 100.0])
    speed = np.sqrt(2 * energy * sc.e / sc.m_e)
    k = xs.process("momentum transfer").sigma_m2(energy) * speed
    np.testing.assert_allclose(k, 10e-20 * np.sqrt(2 * sc.e / sc.m_e), rtol=1e-12)
    assert xs.mass_amu == 4.0


def test_reid_ramp_definition():
    # Reid 1979, Aust. J. Phys. 32 231: sigma_m = 6 A^2, sigma_inel = 10 (eps - 0.2) A^2 for eps >= 0.2 eV
    xs = model_gas("reid-ramp")
    np.testing.assert_allclose(xs.process("momentum transfer").sigma_m2([0.01, 1.0, 50.0]), 6e-20)
    np.testing.assert_allclose(xs.process("ramp").sigma_m2([0.1, 0.2, 0.7, 2.2]), [0, 0, 5e-20, 2e-19], atol=1e-35)
    assert xs.process("ramp").threshold_eV == 0.2 and xs.mass_amu == 4.0


@pytest.mark.parametrize("F", [0.0, 0.5, 1.0])
def test_lucas_saelee_definition(F):
    # Lucas & Saelee 1975, J. Phys. D 8 640 (from memory): sigma_el = 4 eps^-1/2 A^2; inelastic 0.1 (eps - 15.6) A^2
    # above 15.6 eV, split into ionization (fraction F) and excitation (1 - F)
    xs = model_gas("lucas-saelee", F=F)
    e = np.array([10.0, 15.6, 25.6])
    inelastic = sum(p.sigma_m2(e) for p in xs.processes if p.kind != "elastic")
    np.testing.assert_allclose(inelastic, [0.0, 0.0, 1e-20], atol=1e-35)
    ion = sum(p.sigma_m2(e) for p in xs.processes if p.kind == "ionization")
    np.testing.assert_allclose(ion, F * np.array([0.0, 0.0, 1e-20]), atol=1e-35)
    np.testing.assert_allclose(xs.process("momentum transfer").sigma_m2([4.0]), [2e-20])
    with pytest.raises(ConfigError, match="F = 1.5"):
        model_gas("lucas-saelee", F=1.5)


def test_ness_robson_definition():
    xs = model_gas("ness-robson", a_A2=1e-3, p=1.0)
    np.testing.assert_allclose(xs.process("attachment").sigma_m2([2.0]), [2e-23])


def test_unknown_gas_suggests_a_name():
    with pytest.raises(ConfigError, match="did you mean 'reid-ramp'"):
        get_set("reid-rmp")
    with pytest.raises(ConfigError, match="unknown parameters"):
        model_gas("maxwell", F=1)


def test_recombination_photon_wavelength_neon():
    # photon at the Ne ionization energy 21.56 eV: lambda = h c / E = 57.5 nm (common practice eV-nm conversion,
    # with CODATA constants from scipy.constants)
    assert photon_wavelength_nm(21.56) == pytest.approx(57.5, abs=0.05)
    assert photon_wavelength_nm(21.56) == pytest.approx(sc.h * sc.c / (21.56 * sc.e) * 1e9, rel=1e-12, abs=0)


def test_gases_command_lists_every_data_set_with_its_source(capsys):
    # Every shipped file is listed once in the index, the defaults with their set name, each beside the first source
    # of its provenance (the published set's authors and year: Yanguas-Gil et al. 2005 for the default argon).
    from avalanche.cli.main import main

    assert main(["gases", "--brief"]) == 0
    index = capsys.readouterr().out.split("\n\n", 1)[0].splitlines()[1:]
    names = [line.split()[0] for line in index]
    assert names == [n for n in available_gases() if get_set(n).formula != "model"]
    by_name = {line.split()[0]: line for line in index}
    assert "(= Ar@lisbon, the default)" in by_name["Ar"] and "Yanguas-Gil" in by_name["Ar"]
    assert "Loureiro and C. M. Ferreira (1986)" in by_name["N2@lisbon"]
    assert "Lawton and A. V. Phelps (1978)" in by_name["O2"]
    assert "from memory" in by_name["He"]
