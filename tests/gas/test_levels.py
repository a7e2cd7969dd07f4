"""Derived processes: elastic momentum transfer from an effective cross section, Boltzmann level populations and
de-excitation by detailed balance (:mod:`avalanche.gas.levels`), and the named data sets of the library."""

import math
from dataclasses import replace

import numpy as np
import pytest
from scipy import constants as sc
from scipy import integrate

from avalanche import Mixture
from avalanche.errors import ConfigError, CrossSectionError
from avalanche.gas.crosssections import parse_set, process_from_table
from avalanche.gas.levels import (
    SUPERELASTIC_FLOOR_eV,
    elastic_from_effective,
    level_populations,
    superelastic_process,
)
from avalanche.gas.library import data_sets, get_set

KT_PER_K_eV = sc.k / sc.e


def _excitation(threshold_eV=1.0, label="exc", **metadata):
    table = [[threshold_eV, 0.0], [threshold_eV + 1.0, 2.0], [50.0, 1.0]]
    return process_from_table(table, kind="excitation", label=label, threshold_eV=threshold_eV,
                              cross_section_unit="A2", **metadata)


def _pair(threshold_eV=0.3, weights=(1.0, 3.0), upper="X(v=1)", energy0_eV=0.0):
    return replace(_excitation(threshold_eV, label=f"to {upper}"), superelastic=True, statistical_weights=weights,
                   level_type="vibrational", initial_state="X(v=0)", final_state=upper,
                   initial_energy_eV=energy0_eV)


# --- effective cross sections ----------------------------------------------------------------------------------------

def test_elastic_part_is_effective_minus_inelastic():
    effective = process_from_table([[0.0, 10.0], [100.0, 10.0]], kind="effective", label="m",
                                   threshold_eV=0.0, cross_section_unit="A2")
    exc = _excitation()
    elastic = elastic_from_effective(effective, [exc], "test")
    assert elastic.kind == "elastic" and elastic.original_keyword == "EFFECTIVE"
    energy = np.array([0.5, 1.0, 1.5, 2.0, 10.0, 50.0])
    # exact: both tables are linear between the union of their nodes
    np.testing.assert_allclose(elastic.sigma_m2(energy), 10e-20 - exc.sigma_m2(energy), rtol=1e-12)


def test_negative_elastic_part_is_reported_not_clipped():
    effective = process_from_table([[0.0, 1.0], [100.0, 1.0]], kind="effective", label="m",
                                   threshold_eV=0.0, cross_section_unit="A2")
    with pytest.raises(CrossSectionError, match=r"smaller than the sum of the inelastic ones at .*2 eV: -1\.000e-20"):
        elastic_from_effective(effective, [_excitation()], "test")


def test_effective_kind_in_a_file_loads_as_elastic():
    data = {"species": {"name": "g", "mass_amu": 4.0},
            "process": [{"kind": "effective", "label": "momentum transfer", "threshold_eV": 0.0,
                         "energy_eV": [0.0, 100.0], "cross_section": [5.0, 5.0], "units": "A2"},
                        {"kind": "excitation", "label": "x", "threshold_eV": 1.0,
                         "energy_eV": [1.0, 2.0, 100.0], "cross_section": [0.0, 1.0, 1.0], "units": "A2"}]}
    xs = parse_set(data, "inline")
    assert [p.kind for p in xs.processes] == ["elastic", "excitation"]
    assert xs.process("momentum transfer").sigma_m2(10.0) == pytest.approx(4e-20, rel=1e-12)
    data["process"].append(dict(data["process"][0], kind="elastic", label="other"))
    with pytest.raises(CrossSectionError, match="already holds the elastic momentum transfer"):
        parse_set(data, "inline")


def test_superelastic_flag_needs_levels_and_weights():
    data = {"species": {"name": "g", "mass_amu": 4.0},
            "process": [{"kind": "elastic", "label": "m", "threshold_eV": 0.0, "energy_eV": [0.0, 1.0],
                         "cross_section": [1.0, 1.0], "units": "A2"},
                        {"kind": "excitation", "label": "x", "threshold_eV": 1.0, "superelastic": True,
                         "energy_eV": [1.0, 2.0], "cross_section": [0.0, 1.0], "units": "A2"}]}
    with pytest.raises(CrossSectionError, match="superelastic = true needs .*statistical_weights"):
        parse_set(data, "inline")
    data["process"][1].update(statistical_weights=[1, 3], level_type="vibrationnal", initial_state="a",
                              final_state="b")
    with pytest.raises(CrossSectionError, match="did you mean 'vibrational'"):
        parse_set(data, "inline")


# --- populations and detailed balance --------------------------------------------------------------------------------

def test_two_level_boltzmann_populations():
    temperature = 2000.0
    pops = level_populations([_pair()], {"vibrational": temperature})
    ratio = 3.0 * math.exp(-0.3 / (KT_PER_K_eV * temperature))  # Boltzmann: n1/n0 = (g1/g0) exp(-Δ/kT)
    assert pops["X(v=1)"] / pops["X(v=0)"] == pytest.approx(ratio, rel=1e-12)
    assert pops["X(v=0)"] + pops["X(v=1)"] == pytest.approx(1.0, rel=1e-12)
    assert level_populations([_pair()], {"vibrational": 0.0}) == {"X(v=0)": 1.0, "X(v=1)": 0.0}


def test_vibrational_ladder_is_a_truncated_harmonic_distribution():
    # levels n * 0.29 eV with weight 1: populations x^n (1 - x) / (1 - x^9), x = exp(-0.29/kT) (Boltzmann)
    ladder = [_pair(0.29 * n, (1.0, 1.0), f"X(v={n})") for n in range(1, 9)]
    temperature = 3000.0
    pops = level_populations(ladder, {"vibrational": temperature})
    x = math.exp(-0.29 / (KT_PER_K_eV * temperature))
    for n in range(9):
        assert pops[f"X(v={n})"] == pytest.approx(x ** n * (1 - x) / (1 - x ** 9), rel=1e-12)


def test_inconsistent_level_is_rejected():
    with pytest.raises(CrossSectionError, match="level 'X\\(v=1\\)' has energy"):
        level_populations([_pair(0.3), replace(_pair(0.31), label="again")], {"vibrational": 300.0})


def test_klein_rosseland_cross_section():
    pair = _pair(0.3, (2.0, 6.0))
    sup = superelastic_process(pair)
    assert sup.kind == "superelastic" and sup.threshold_eV == 0.3
    assert (sup.initial_state, sup.final_state) == ("X(v=1)", "X(v=0)")
    energy = np.array([0.01, 0.5, 1.0, 3.0])
    # Klein & Rosseland (1921): sigma_sup(e) = (g0/g1) (e + Δ)/e sigma_exc(e + Δ)
    expected = (2.0 / 6.0) * (energy + 0.3) / energy * pair.sigma_m2(energy + 0.3)
    np.testing.assert_allclose(sup.sigma_m2(energy), expected, rtol=1e-12)
    assert sup.sigma_m2(0.0) == sup.sigma_m2(SUPERELASTIC_FLOOR_eV)


def test_detailed_balance_of_the_rates_in_a_maxwellian():
    # Detailed balance: n0 k_exc(T) = n1 k_sup(T) with both rate coefficients over a Maxwellian at T (exact for
    # the Klein-Rosseland cross section; integrals by scipy.integrate.quad)
    pair = _pair(0.3, (1.0, 3.0))
    sup = superelastic_process(pair)
    temperature = 3000.0
    kt = KT_PER_K_eV * temperature

    def rate(process, lower):
        def integrand(e):
            return float(process.sigma_m2(e)) * math.sqrt(e) * math.sqrt(e) * math.exp(-e / kt)
        return integrate.quad(integrand, lower, 60.0, limit=400, points=[0.3, 1.3, 1.0])[0]

    pops = level_populations([pair], {"vibrational": temperature})
    forward = pops["X(v=0)"] * rate(pair, 0.3)
    backward = pops["X(v=1)"] * rate(sup, SUPERELASTIC_FLOOR_eV)  # sigma_exc is 0 at its threshold: no floor effect
    assert forward == pytest.approx(backward, rel=1e-6)


# --- named data sets -------------------------------------------------------------------------------------------------

def test_named_data_sets():
    assert data_sets("N2")[0] == "phelps"  # the default set first
    assert data_sets("Ar") == ["lisbon", "hayashi", "phelps"]  # the default (file Ar.toml) first
    assert data_sets("N2") == ["phelps", "lisbon"] and data_sets("O2") == ["phelps", "lisbon"]
    assert get_set("N2@phelps") is get_set("N2")
    assert get_set("Ar@phelps").set_name == "phelps"
    with pytest.raises(ConfigError, match="unknown data set 'phelp' of N2 \\(did you mean 'phelps'"):
        get_set("N2@phelp")


def test_mixture_chooses_a_set_by_name():
    by_spelling = Mixture({"Ar@phelps": 1.0})
    by_mapping = Mixture({"Ar": 1.0}, sets={"Ar": "phelps"})
    assert by_spelling.components[0].cross_sections is by_mapping.components[0].cross_sections
    assert by_spelling.components[0].cross_sections.set_name == "phelps"
    assert Mixture("Ar").components[0].cross_sections.set_name == "lisbon"  # the default argon set
    with pytest.raises(ConfigError, match="vibrational_temperature_K = -1.0 is negative"):
        Mixture("N2", vibrational_temperature_K=-1.0)


def test_run_file_compares_data_sets():
    from avalanche.sweep.runfile import parse_runfile

    text = """format_version = 1
[sweep]
name = "sets"
seed = 1
output = "sets.h5"
[gas]
mixtures = ["Ar", "Ar@phelps"]
temperature_K = 300.0
pressure_Pa = 1000.0
[grid]
reduced_field_Td = [100.0]
"""
    run = parse_runfile(text)
    names = [run.build_mixture(i).components[0].cross_sections.set_name for i in range(2)]
    assert names == ["lisbon", "phelps"]
    assert run.mixtures[0].key != run.mixtures[1].key  # different seeds and rows in the results file


def test_vibrational_temperature_populates_the_n2_ladder():
    from avalanche.engine.tables import ProcessTable

    hot = ProcessTable.build(Mixture("N2", vibrational_temperature_K=3000.0), "equal", "isotropic")
    cold = ProcessTable.build(Mixture("N2"), "equal", "isotropic")
    key = "vibration v=0-1 (de-excitation)"
    x = math.exp(-0.29 / (KT_PER_K_eV * 3000.0))  # levels 0.29 n eV to v = 8 in the set (Boltzmann, weights 1)
    populations = [math.exp(-e / (KT_PER_K_eV * 3000.0)) for e in (0, .29, .59, .88, 1.17, 1.47, 1.76, 2.06, 2.35)]
    assert hot.density_factor[hot.keys.index(key)] == pytest.approx(populations[1] / sum(populations), rel=1e-12)
    assert 0.2 < x < 0.35
    assert cold.density_factor[cold.keys.index(key)] < 1e-4  # 300 K: exp(-0.29/kT) ~ 1.4e-5
