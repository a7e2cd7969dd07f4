"""Cross-section file format: loading, validation messages, interpolation, extrapolation, round trip."""

from __future__ import annotations

import numpy as np
import pytest

from avalanche.errors import CrossSectionError
from avalanche.gas.crosssections import load_set, process_from_table, save_set


def _fails(write_set, text, *fragments):
    path = write_set(text)
    with pytest.raises(CrossSectionError) as info:
        load_set(path)
    message = str(info.value)
    assert str(path) in message, message
    for fragment in fragments:
        assert fragment in message, message
    return message


def test_valid_file_loads(write_set, set_text):
    xs = load_set(write_set(set_text))
    assert xs.name == "Testium" and xs.mass_amu == 40.0
    assert [p.kind for p in xs.processes] == ["elastic", "excitation", "ionization"]
    assert xs.process("level 1").wavelength_nm == 107.8
    assert xs.process("ionization").opb_w_eV == 10.0


def test_round_trip_is_unchanged(write_set, set_text, tmp_path):
    first = load_set(write_set(set_text))
    second = load_set(save_set(first, tmp_path / "copy.toml"))
    assert first.checksum() == second.checksum()
    assert first.to_dict() == second.to_dict()
    for a, b in zip(first.processes, second.processes, strict=True):
        np.testing.assert_array_equal(a.energy_eV, b.energy_eV)
        np.testing.assert_array_equal(a.cross_section_m2, b.cross_section_m2)


@pytest.mark.parametrize("old,new,fragments", [
    ("energy_eV = [0.0, 1.0, 10.0, 100.0]", "energy_eV = [0.0, 1.0, 1.0, 100.0]", ["duplicate", "energy_eV[1]"]),
    ("energy_eV = [0.0, 1.0, 10.0, 100.0]", "energy_eV = [0.0, 10.0, 1.0, 100.0]", ["decreasing", "strictly"]),
    ("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]", "cross_section = [1e-20, -2e-20, 1.5e-20, 5e-21]",
     ["negative", "momentum transfer"]),
    ("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]", "cross_section = [1e-20, nan, 1.5e-20, 5e-21]",
     ["not finite"]),
    ("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]", "cross_section = [1e-20, inf, 1.5e-20, 5e-21]",
     ["not finite"]),
    ("energy_eV = [11.5, 20.0, 100.0]\ncross_section = [0.0, 1e-21, 5e-22]",
     "energy_eV = [5.0, 20.0, 100.0]\ncross_section = [1e-22, 1e-21, 5e-22]", ["below the threshold", "level 1"]),
    ("threshold_eV = 11.5\n", "", ["missing field 'threshold_eV'", "level 1"]),
    ("threshold_eV = 11.5\n", "threshold_eV = -1.0\n", ["negative", "threshold_eV"]),
    ('kind = "excitation"', 'kind = "exitation"', ["unknown kind 'exitation'", "did you mean 'excitation'"]),
    ("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]", "cross_section = [1e-16, 2e-16, 1.5e-16, 5e-17]",
     ["look like cm2", 'units = "cm2"']),
    ("mass_amu = 40.0\n", "", ["missing field 'mass_amu'"]),
    ("mass_amu = 40.0", "mass_amu = 0.0", ["mass_amu = 0.0 must be positive"]),
    ("wavelength_nm = 107.8", "wavelenght_nm = 107.8", ["unknown field 'wavelenght_nm'", "wavelength_nm"]),
])
def test_malformed_files_are_rejected_with_a_message(write_set, set_text, old, new, fragments):
    assert old in set_text
    _fails(write_set, set_text.replace(old, new, 1), *fragments)


def test_missing_elastic_is_rejected(write_set, set_text):
    text = set_text.replace('kind = "elastic"', 'kind = "excitation"', 1)
    _fails(write_set, text, "no elastic (momentum-transfer) process")


def test_unknown_species_field_and_malformed_toml(write_set, set_text):
    _fails(write_set, set_text.replace("[species]", "[species]\ncolour = 1"), "unknown field 'colour'")
    message = _fails(write_set, set_text.replace("threshold_eV = 15.0", "threshold_eV = = 15.0"), "malformed TOML")
    assert "line" in message


def test_cm2_units_are_converted(write_set, set_text):
    text = set_text.replace("cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]",
                            'cross_section = [1e-16, 2e-16, 1.5e-16, 5e-17]\nunits = "cm2"')
    xs = load_set(write_set(text))
    np.testing.assert_allclose(xs.process("momentum transfer").cross_section_m2, [1e-20, 2e-20, 1.5e-20, 5e-21])


def test_csv_table_beside_the_file(write_set, set_text, tmp_path):
    (tmp_path / "el.csv").write_text("# energy_eV, cross section (A2)\n0, 1\n1, 2\n10 1.5\n100, 0.5\n")
    text = set_text.replace("energy_eV = [0.0, 1.0, 10.0, 100.0]\ncross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]",
                            'table = "el.csv"\nunits = "A2"')
    xs = load_set(write_set(text))
    np.testing.assert_allclose(xs.process("momentum transfer").cross_section_m2, [1e-20, 2e-20, 1.5e-20, 5e-21])
    (tmp_path / "el.csv").write_text("0, 1\n1, 2, 3\n")
    with pytest.raises(CrossSectionError, match="el.csv:2: expected two columns"):
        load_set(tmp_path / "test.toml")


def test_linear_interpolation_and_extrapolation(write_set, set_text):
    xs = load_set(write_set(set_text))
    el, exc, ion = xs.processes
    # linear in energy between points (documented choice)
    np.testing.assert_allclose(el.sigma_m2([0.5, 5.5]), [1.5e-20, 1.75e-20])
    # constant above the last point for elastic
    np.testing.assert_allclose(el.sigma_m2([500.0]), [5e-21])
    # zero below threshold for inelastic
    np.testing.assert_array_equal(exc.sigma_m2([0.0, 11.0]), [0.0, 0.0])
    # Bethe-like ln(e/th)/e fall-off above the last point (Inokuti 1971, Rev. Mod. Phys. 43 297): continuous at
    # the last point and proportional to ln(e/th)/e beyond it
    e = np.array([1000.0, 2000.0, 4000.0])
    s = ion.sigma_m2(e)
    assert s[0] == pytest.approx(1.0e-20)
    shape = np.log(e / 15.0) / e
    np.testing.assert_allclose(s / s[0], shape / shape[0], rtol=1e-12)


def test_import_plain_table(tmp_path):
    path = tmp_path / "paper.txt"
    path.write_text("# digitised, energy in eV, sigma in 1e-16 cm2 units given as cm2\n12 0\n20 1e-17\n50 2e-17\n")
    proc = process_from_table(path, kind="excitation", label="digitised", threshold_eV=12.0,
                              cross_section_unit="cm2")
    np.testing.assert_allclose(proc.cross_section_m2, [0.0, 1e-21, 2e-21])
    proc = process_from_table([[12e3, 0.0], [20e3, 1.0]], kind="excitation", label="meV table", threshold_eV=12.0,
                              energy_unit="meV", cross_section_unit="A2")
    np.testing.assert_allclose(proc.energy_eV, [12.0, 20.0])
    with pytest.raises(CrossSectionError, match="unknown cross-section unit"):
        process_from_table(path, kind="excitation", label="x", threshold_eV=12.0, cross_section_unit="barn")
