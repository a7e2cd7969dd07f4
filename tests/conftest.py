"""Shared test helpers."""

from __future__ import annotations

import os
from dataclasses import dataclass

import pytest

os.environ.setdefault("MPLBACKEND", "Agg")

VALIDATION_BUDGETS = ("reduced", "full")
"""Choices of ``--validation-budget``: the reduced budget of CI (the default) or the full one of the source."""


def pytest_addoption(parser):
    parser.addoption("--validation-budget", choices=VALIDATION_BUDGETS, default="reduced",
                     help="budget of the slow validations: 'reduced' (default, what CI runs) or 'full' (the long runs "
                          "the tests were written with)")


@dataclass(frozen=True)
class ValidationBudget:
    """The budget a slow validation runs on (``--validation-budget``)."""

    full: bool

    def pick(self, full, reduced):
        """``full`` under ``--validation-budget=full``, else ``reduced``."""
        return full if self.full else reduced


@pytest.fixture(scope="session")
def validation_budget(request) -> ValidationBudget:
    """The budget of a slow validation (``--validation-budget``)."""
    return ValidationBudget(request.config.getoption("--validation-budget") == "full")


def pytest_collection_modifyitems(config, items):
    # only slow validations may size their runs by the budget: a quick test has one budget
    for item in items:
        if "validation_budget" in getattr(item, "fixturenames", ()) and item.get_closest_marker("slow") is None:
            raise pytest.UsageError(f"{item.nodeid} sizes its run by the validation budget but is not marked slow")
    # slow tests first (otherwise in collection order): the two test processes then end on short tests together
    # instead of one waiting for the other's last long validation
    items.sort(key=lambda item: item.get_closest_marker("slow") is None)


VALID_SET = '''format_version = 1

[species]
name = "Testium"
formula = "Ts"
mass_amu = 40.0
ionization_energy_eV = 15.0

[provenance]
date = "2026-12-02"
sources = ["invented test data for the loader"]

[[process]]
kind = "elastic"
label = "momentum transfer"
threshold_eV = 0.0
energy_eV = [0.0, 1.0, 10.0, 100.0]
cross_section = [1e-20, 2e-20, 1.5e-20, 5e-21]

[[process]]
kind = "excitation"
label = "level 1"
threshold_eV = 11.5
energy_eV = [11.5, 20.0, 100.0]
cross_section = [0.0, 1e-21, 5e-22]
wavelength_nm = 107.8

[[process]]
kind = "ionization"
label = "ionization"
threshold_eV = 15.0
opb_w_eV = 10.0
energy_eV = [15.0, 100.0, 1000.0]
cross_section = [0.0, 2.5e-20, 1.0e-20]
'''


@pytest.fixture
def set_text():
    """The text of a small valid cross-section file (invented data for loader tests only)."""
    return VALID_SET


@pytest.fixture
def write_set(tmp_path):
    """Write TOML text to a file in a temporary folder and return its path."""

    def write(text: str, name: str = "test.toml"):
        path = tmp_path / name
        path.write_text(text)
        return path

    return write


OUTPUTS_SWEEP = '''
[sweep]
name = "outputs-test"
seed = 11

[gas]
mixtures = ["Ar", "Ar:0.5,N2:0.5"]
temperature_K = 300

[grid]
reduced_field_Td = [60, 120, 240, 480]

[engine]
precision = 0.05
max_events = 2e6
electrons = 1000
'''
"""Argon and an argon-nitrogen mixture at four fields, tiny budgets (a fraction of a second per point)."""


def make_results(folder):
    """Run the tiny sweep into ``folder/outputs.h5`` and return its path."""
    from avalanche.sweep.execution import run_sweep

    runfile = folder / "outputs.toml"
    runfile.write_text(OUTPUTS_SWEEP)
    report = run_sweep(runfile, workers=1, out=folder / "outputs.h5", quiet=True)
    assert report.complete
    return report.path


@pytest.fixture(scope="session")
def outputs_results(tmp_path_factory):
    """A finished results file with two mixtures (shared by the output, table, plot and emission tests)."""
    return make_results(tmp_path_factory.mktemp("outputs"))
