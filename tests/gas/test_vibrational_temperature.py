"""The vibrational temperature of a mixture from the command line and run files, and its effect on a swarm.

Physics (common practice): in a vibrationally excited gas the electrons collide with molecules in v ≥ 1 and gain the
level energy in superelastic (de-excitation) collisions, so at low E/N, where the field heats the electrons little,
their mean energy rises with the vibrational temperature; at 300 K the v = 1 population of N2, exp(−0.29 eV/kT)
≈ 1e-5, gives no such collisions in a short run.
"""

from __future__ import annotations

import json
import warnings

import pytest

from avalanche import Mixture, swarm
from avalanche.cli.main import main
from avalanche.cli.units import temperature_K
from avalanche.errors import ConfigError
from avalanche.sweep.runfile import parse_runfile

DE_EXCITATION = "vibration v=0-1 (de-excitation)"


def test_temperature_option_parses_kelvin():
    assert temperature_K("2000") == temperature_K("2000K") == temperature_K("2000 K") == 2000.0
    with pytest.raises(ConfigError, match="--vibrational-temperature 'hot'"):
        temperature_K("hot")
    with pytest.raises(ConfigError, match="unknown unit 'C'"):
        temperature_K("1500C")


def test_swarm_command_takes_the_vibrational_temperature(capsys):
    code = main(["swarm", "--gas", "N2", "--en", "50", "--vibrational-temperature", "2000K", "--json",
                 "--electrons", "64", "--max-events", "2e5", "--seed", "1"])
    assert code == 0
    result = json.loads(capsys.readouterr().out)
    assert result["inputs"]["mixture"]["vibrational_temperature_K"] == 2000.0
    with pytest.raises(SystemExit) as exc:  # argparse's usage error: one line, exit status 2
        main(["swarm", "--gas", "N2", "--en", "50", "--vibrational-temperature", "-5"])
    assert exc.value.code == 2
    err = capsys.readouterr().err
    assert "--vibrational-temperature '-5': must be positive and finite" in err and "Traceback" not in err


RUNFILE = """format_version = 1
[sweep]
name = "hot"
seed = 1
output = "hot.h5"
[gas]
mixture = "N2"
temperature_K = 300.0
{extra}
[grid]
reduced_field_Td = [10.0]
"""


def test_run_file_key_sets_the_vibrational_temperature():
    run = parse_runfile(RUNFILE.format(extra="vibrational_temperature_K = 2500.0"))
    assert run.build_mixture(0).vibrational_temperature_K == 2500.0
    assert run.config()["vibrational_temperature_K"] == 2500.0
    plain = parse_runfile(RUNFILE.format(extra=""))
    assert plain.build_mixture(0).vibrational_temperature_K == 300.0
    assert "vibrational_temperature_K" not in plain.config()  # earlier run files keep their configuration hash
    with pytest.raises(ConfigError, match="vibrational_temperature_K"):
        parse_runfile(RUNFILE.format(extra="vibrational_temperature_K = -1.0"))


@pytest.mark.slow
def test_vibrationally_hot_nitrogen_heats_the_electrons_at_low_field():
    # N2 (Phelps & Pitchford 1985, vibrational pairs v = 0-1 … 0-8) at 0.3 Td, 1 atm, gas at 300 K: the same seed,
    # budget and start energy (0.13 eV, between the two steady states) at vibrational temperatures 300 K and 2000 K.
    runs = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for tv in (300.0, 2000.0):
            runs[tv] = swarm(Mixture("N2", vibrational_temperature_K=tv), 0.3, seed=1, electrons=256,
                             precision=0.02, max_events=4_000_000, initial_energy_eV=0.13)
    cold, hot = runs[300.0], runs[2000.0]
    # superelastic collisions happen in the hot gas only (counted rate > 3 standard errors above zero); in the cold
    # gas none happens, and the expected number (Σ ν_k/ν*(t) over the trial events: the v = 1 population of
    # ~1e-5 is in ν_k) is consistent with none (Poisson: P(0 | λ < 3) > 5 %). The rate coefficient per v = 1
    # molecule is a property of the EEDF, so its expected value is nonzero in both gases.
    k = list(hot.rate_coefficients).index(DE_EXCITATION)
    rate = hot.rate_coefficients_counted[DE_EXCITATION]
    assert rate.value > 3 * rate.stderr > 0
    assert cold.rate_coefficients_counted[DE_EXCITATION].value == 0.0
    assert 0.0 < cold.tallies["expected_process_counts"].sum(axis=0)[k] < 3.0
    assert cold.rate_coefficients[DE_EXCITATION].value > 0.0
    # and they raise the mean energy: by more than 5 combined standard errors (measured 0.12 → 0.16 eV)
    gap = hot.mean_energy_eV.value - cold.mean_energy_eV.value
    assert gap > 5 * (hot.mean_energy_eV.stderr ** 2 + cold.mean_energy_eV.stderr ** 2) ** 0.5
