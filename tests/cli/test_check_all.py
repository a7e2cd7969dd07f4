"""``avalanche check`` reports every problem of a file in one run (issue 14, part 7): a cross-section set and a run
file, each with three distinct errors, and each message names the file, the field, the value and the fix."""

from __future__ import annotations

from avalanche.cli.check import file_problems
from avalanche.cli.main import main

BAD_SET = """\
format_version = 1

[species]
name = "Xx"
mass_amu = -4.0

[[process]]
kind = "elastic"
label = "momentum transfer"
threshold_eV = 0.0
energy_eV = [0.0, 10.0, 100.0]
cross_section = [1e-20, 1e-20, 1e-20]

[[process]]
kind = "excitaton"
label = "first level"
threshold_eV = 11.5
energy_eV = [11.5, 100.0]
cross_section = [0.0, 1e-21]

[[process]]
kind = "ionization"
label = "ionization"
threshold_eV = -15.0
energy_eV = [15.0, 100.0]
cross_section = [0.0, 1e-20]
"""

BAD_RUN = """\
[sweep]
seed = -3

[gas]
mixture = "Ar"
temperature_K = "hot"

[grid]
reduced_field_Td = [10, 100]

[engine]
precision = 0.05
electorns = 64
"""


def test_three_errors_of_a_cross_section_set_in_one_run(tmp_path, capsys):
    path = tmp_path / "bad_set.toml"
    path.write_text(BAD_SET)
    kind, problems = file_problems(path)
    assert kind == "cross-section set" and len(problems) == 3, problems
    mass, kind_error, threshold = problems
    assert "bad_set.toml" in mass and "mass_amu = -4.0" in mass and "must be positive" in mass
    assert "'excitaton'" in kind_error and "did you mean 'excitation'" in kind_error
    assert "threshold_eV = -15.0" in threshold and "must be >= 0" in threshold
    assert main(["check", str(path)]) == 1
    err = capsys.readouterr().err
    assert "3 problem(s)" in err and all(text in err for text in ("mass_amu", "excitaton", "threshold_eV = -15.0"))
    assert "Traceback" not in err


def test_three_errors_of_a_run_file_in_one_run(tmp_path, capsys):
    path = tmp_path / "bad_run.toml"
    path.write_text(BAD_RUN)
    kind, problems = file_problems(path)
    assert kind == "run file" and len(problems) == 3, problems
    seed, temperature, key = problems
    assert "bad_run.toml" in seed and "[sweep] seed = -3" in seed and "must be >= 0" in seed
    assert '[gas] temperature_K = "hot"' in temperature and "finite number" in temperature
    assert "'electorns'" in key and "did you mean 'electrons'" in key
    assert main(["check", str(path)]) == 1
    assert "3 problem(s) in this run file" in capsys.readouterr().err


def test_a_valid_run_file_passes(tmp_path, capsys):
    path = tmp_path / "good.toml"
    path.write_text(BAD_RUN.replace("seed = -3", "seed = 3").replace('"hot"', "300").replace("electorns", "electrons"))
    assert file_problems(path) == ("run file", [])
    assert main(["check", str(path)]) == 0
    assert "OK" in capsys.readouterr().out
