"""Swarm parameters of the shipped N2 set (Phelps & Pitchford 1985) and of dry air (N2, O2 of Lawton & Phelps 1978,
Ar) against published swarm data.

References (all recalled without access to the sources, "from memory"):

* Townsend formula α/p = A exp(−B p/E) of Raizer Yu P (1991), Gas Discharge Physics, Springer, table 4.1, as kept
  in :data:`avalanche.analysis.coefficients.HANDBOOK_TOWNSEND`: N2 A = 12, B = 342 (E/p 100–600 V cm⁻¹ Torr⁻¹), air A
  = 15, B = 365 (E/p 100–800). A two-parameter fit to measurements, good to some tens of per cent (common
  practice); the issue's tolerance is 25 %.
* Dry air, the fits of Morrow R and Lowke J J (1997) J. Phys. D 30 614, appendix: drift velocity
  (tests/data/air_drift_velocity_morrow_lowke_1997.toml), checked to 15 % at 50–500 Td, and α/N, η/N
  (tests/data/air_ionization_attachment_morrow_lowke_1997.toml), checked to 25 % (α/N at 100–300 Td; η/N at
  100–130 Td: above about 150 Td the two-body η fit rises linearly, which no published O2 attachment cross section
  reproduces, so it is not a reference there). Tolerances of the issue.
* Critical reduced field of dry air, where α/N = η/N: between 100 and 125 Td (common practice quotes about 120 Td;
  the Morrow–Lowke fits cross at 108 Td).

Every tolerance combines the reference's accuracy with three standard errors of the run, in quadrature
(independent uncertainties). Each field is run once per test process (session-scoped fixtures), with fixed seeds and
budgets capped by ``max_events``. The ``xdist_group`` marks ask for the tests of one fixture to share a test
process; with pytest 9 they do not (see DEVELOPERS.md), so a field may be run once in each of the two processes.
"""

from __future__ import annotations

import math
import tomllib
from pathlib import Path

import pytest

from avalanche import Mixture
from avalanche.analysis.breakdown import critical_reduced_field_Td
from avalanche.analysis.coefficients import HANDBOOK_TEMPERATURE_K, CoefficientTable, handbook_alpha_N
from avalanche.engine.time_of_flight import swarm

DATA = Path(__file__).resolve().parents[1] / "data"
TD_IN_V_cm2 = 1e-17
"""1 Td = 1e-21 V m² = 1e-17 V cm²."""
ELECTRONS = 2048
MAX_EVENTS = 50_000_000
CRITICAL_FIELDS_Td = (100.0, 110.0, 120.0, 130.0)
LOSCHMIDT_cm3 = 2.5e19
"""Gas density [cm⁻³] for the three-body part of the Morrow–Lowke η fit (1 atm, 293 K: p/(k T) = 2.505e19 cm⁻³)."""


def tolerance(reference_accuracy: float, relative_stderr: float) -> float:
    """Relative tolerance: reference accuracy and 3 standard errors of the run added in quadrature."""
    return math.hypot(reference_accuracy, 3.0 * relative_stderr)


class _Runs:
    """Swarm runs of one gas, each field simulated once (same settings for every field) and kept for the module.

    The run stops at 3 % standard error of α/N (of the flux drift velocity where nothing ionizes) or after
    MAX_EVENTS trial events, whichever comes first.
    """

    def __init__(self, mixture: Mixture, seed: int, electrons: int = ELECTRONS, max_events: int = MAX_EVENTS):
        self.mixture, self.seed, self.results = mixture, seed, {}
        self.electrons, self.max_events = electrons, max_events

    def __call__(self, reduced_field_Td: float):
        if reduced_field_Td not in self.results:
            self.results[reduced_field_Td] = swarm(self.mixture, reduced_field_Td,
                                                   seed=(self.seed, round(10 * reduced_field_Td)),
                                                   electrons=self.electrons, precision=0.03,
                                                   max_events=self.max_events)
        return self.results[reduced_field_Td]


@pytest.fixture(scope="session")  # kept for the session: test processes interleave modules
def nitrogen():
    # the pressures of the Townsend formula are taken at HANDBOOK_TEMPERATURE_K (293 K)
    return _Runs(Mixture("N2", temperature_K=HANDBOOK_TEMPERATURE_K), seed=71)


@pytest.fixture(scope="session")  # kept for the session: test processes interleave modules
def air():
    return _Runs(Mixture("air", temperature_K=293.0), seed=72)


# --- N2 --------------------------------------------------------------------------------------------------------------

def check_townsend_formula(runs, gas: str, reduced_field_Td: float, accuracy: float) -> None:
    """α/N of ``runs`` at ``reduced_field_Td`` against the handbook Townsend formula of ``gas`` (Raizer 1991,
    table 4.1, from memory) within ``accuracy`` (relative), with 3 standard errors of the run in quadrature."""
    alpha = runs(reduced_field_Td).alpha_N
    assert alpha.relative_stderr < 0.05
    reference = handbook_alpha_N(gas, reduced_field_Td)
    assert alpha.value == pytest.approx(reference, rel=tolerance(accuracy, alpha.relative_stderr), abs=0)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-nitrogen")
@pytest.mark.parametrize("reduced_field_Td", [350.0, 500.0, 700.0, 1000.0])
def test_n2_ionization_coefficient_follows_townsend_formula(nitrogen, reduced_field_Td):
    # 25 %: the tolerance for N2 against the Townsend formula inside its range (300-1800 Td at 293 K)
    check_townsend_formula(nitrogen, "N2", reduced_field_Td, 0.25)


# --- dry air ---------------------------------------------------------------------------------------------------------

def morrow_lowke_drift_velocity_m_s(reduced_field_Td: float) -> float:
    """Drift velocity of electrons in dry air [m/s] from the fit of Morrow & Lowke (1997) in tests/data."""
    table = tomllib.loads((DATA / "air_drift_velocity_morrow_lowke_1997.toml").read_text())
    x = reduced_field_Td * TD_IN_V_cm2
    for piece in table["piece"]:
        if piece["low_V_cm2"] < x <= piece["high_V_cm2"]:
            return (piece["slope_per_V_cm_s"] * x + piece["intercept_cm_s"]) / 100.0
    raise AssertionError(f"{reduced_field_Td} Td is outside the pieces of the Morrow & Lowke fit")


def test_morrow_lowke_fit_is_continuous():
    # A check of the recalled table (not of the engine): a published piecewise fit joins continuously, here to
    # 1.3 % at 1e-16 V cm² and better at the other joints.
    for joint_Td in (2.6, 10.0, 200.0):
        below = morrow_lowke_drift_velocity_m_s(joint_Td)
        above = morrow_lowke_drift_velocity_m_s(joint_Td * (1 + 1e-9))
        assert above == pytest.approx(below, rel=0.015, abs=0)


def _pieces(name: str) -> dict:
    return tomllib.loads((DATA / "air_ionization_attachment_morrow_lowke_1997.toml").read_text())[name]


def morrow_lowke_alpha_N_m2(reduced_field_Td: float) -> float:
    """α/N of dry air [m²] from the Morrow & Lowke (1997) fit in tests/data."""
    x = reduced_field_Td * TD_IN_V_cm2
    piece = next(p for p in _pieces("alpha") if p["low_V_cm2"] < x <= p["high_V_cm2"])
    return piece["a_cm2"] * math.exp(-piece["b_V_cm2"] / x) * 1e-4


def morrow_lowke_eta_N_m2(reduced_field_Td: float, density_cm3: float = LOSCHMIDT_cm3) -> float:
    """η/N of dry air [m²] (two-body plus three-body at ``density_cm3``) from the Morrow & Lowke (1997) fit."""
    x = reduced_field_Td * TD_IN_V_cm2
    piece = next(p for p in _pieces("eta2") if p["low_V_cm2"] < x <= p["high_V_cm2"])
    three = _pieces("eta3")
    return (piece["slope_cm_per_V"] * x + piece["intercept_cm2"]
            + three["coefficient"] * x ** three["exponent"] * density_cm3) * 1e-4


def test_morrow_lowke_coefficient_fits_cross_at_108_Td():
    # A check of the recalled fits (not of the engine): the issue states that they cross at 108 Td.
    assert morrow_lowke_alpha_N_m2(106.0) < morrow_lowke_eta_N_m2(106.0)
    assert morrow_lowke_alpha_N_m2(110.0) > morrow_lowke_eta_N_m2(110.0)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air")
@pytest.mark.parametrize("reduced_field_Td", [50.0, 120.0, 200.0, 300.0, 500.0])
def test_air_drift_velocity_matches_morrow_lowke(air, reduced_field_Td):
    result = air(reduced_field_Td)
    drift = result.drift_velocity_bulk  # measured drift velocities are centre-of-mass (bulk) velocities
    reference = morrow_lowke_drift_velocity_m_s(reduced_field_Td)
    # 15 %: the tolerance for drift velocities in air at 50-500 Td (Morrow & Lowke 1997).
    assert drift.value == pytest.approx(reference, rel=tolerance(0.15, drift.relative_stderr), abs=0)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air")
@pytest.mark.parametrize("reduced_field_Td", [100.0, 120.0, 200.0, 300.0])
def test_air_ionization_coefficient_matches_morrow_lowke(air, reduced_field_Td):
    alpha = air(reduced_field_Td).alpha_N
    assert alpha.relative_stderr < 0.1
    reference = morrow_lowke_alpha_N_m2(reduced_field_Td)
    # 25 %: the tolerance for alpha/N of air (Morrow & Lowke 1997 fit), 3 standard errors in quadrature
    assert alpha.value == pytest.approx(reference, rel=tolerance(0.25, alpha.relative_stderr), abs=0)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air")
@pytest.mark.parametrize("reduced_field_Td", [100.0, 110.0, 120.0, 130.0])
def test_air_attachment_coefficient_matches_morrow_lowke(air, reduced_field_Td):
    eta = air(reduced_field_Td).eta_N
    assert eta.relative_stderr < 0.1
    # the run's density: 1 atm at 293 K, the three-body part of the fit taken at the same density
    density_cm3 = air.mixture.number_density_m3 * 1e-6
    reference = morrow_lowke_eta_N_m2(reduced_field_Td, density_cm3)
    # 25 %: the tolerance for eta/N of air at 100-130 Td (Morrow & Lowke 1997 fit)
    assert eta.value == pytest.approx(reference, rel=tolerance(0.25, eta.relative_stderr), abs=0)


REFERENCES_DISAGREE = pytest.mark.xfail(strict=True, reason=(
    "at 350 Td the Morrow & Lowke (1997) alpha/N fit, which the run matches to a few per cent, lies 31 % above the "
    "air Townsend formula (A = 15, B = 365, from memory): the two references disagree by more than 30 %"))


def test_air_references_disagree_at_350_Td():
    # the reason for the xfail below: a check of the two recalled references against each other
    assert morrow_lowke_alpha_N_m2(350.0) > 1.3 * handbook_alpha_N("air", 350.0)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air")
@pytest.mark.parametrize("reduced_field_Td", [pytest.param(350.0, marks=REFERENCES_DISAGREE), 500.0])
def test_air_ionization_coefficient_follows_townsend_formula(air, reduced_field_Td):
    # 30 %: the accuracy of a two-parameter fit (common practice)
    check_townsend_formula(air, "air", reduced_field_Td, 0.30)


def _critical_field_Td(fields, alpha, eta) -> float:
    table = CoefficientTable(fields, alpha, eta, gas_label="air", temperature_K=293.0)
    value = critical_reduced_field_Td(table)
    assert value is not None, "α/N − η/N does not change sign between 100 and 130 Td"
    return value


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air")
def test_air_critical_reduced_field(air):
    results = [air(f) for f in CRITICAL_FIELDS_Td]
    alpha = [r.alpha_N for r in results]
    eta = [r.eta_N for r in results]
    assert all(a.value > 0 and e.value > 0 for a, e in zip(alpha, eta, strict=True))
    values_alpha, values_eta = [a.value for a in alpha], [e.value for e in eta]
    critical = _critical_field_Td(CRITICAL_FIELDS_Td, values_alpha, values_eta)
    # Standard error of the crossing: the shifts caused by one standard error of α and of η, in quadrature.
    shift_alpha = _critical_field_Td(CRITICAL_FIELDS_Td, [a.value + a.stderr for a in alpha], values_eta) - critical
    shift_eta = _critical_field_Td(CRITICAL_FIELDS_Td, values_alpha, [e.value + e.stderr for e in eta]) - critical
    stderr = math.hypot(shift_alpha, shift_eta)
    assert 0 < stderr < 4.0  # the budget resolves the crossing well inside the reference interval
    # between 100 and 125 Td (issue: common practice about 120 Td, the Morrow-Lowke fits cross at 108 Td)
    assert 100.0 <= critical <= 125.0, (critical, stderr)


# --- dry air from the named alternative sets -------------------------------------------------------------------------

@pytest.fixture(scope="session")  # kept for the session: test processes interleave modules
def air_lisbon():
    # N2 and O2 of the Lisbon group (Loureiro & Ferreira 1986; Gousset et al. 1991, Alves et al. 2016), the default Ar
    mixture = Mixture("air", temperature_K=293.0, sets={"N2": "lisbon", "O2": "lisbon"})
    assert {c.name for c in mixture.components} == {"N2@lisbon", "O2@lisbon", "Ar"}
    return _Runs(mixture, seed=73, electrons=1024, max_events=20_000_000)


@pytest.mark.slow
@pytest.mark.xdist_group("molecules-air-lisbon")
@pytest.mark.parametrize("reduced_field_Td", [120.0, 200.0])
def test_air_from_the_lisbon_sets_matches_morrow_lowke(air_lisbon, reduced_field_Td):
    # A data-set comparison: the alternative N2 and O2 sets meet the tolerances against the Morrow & Lowke
    # (1997) fits, α/N to 25 % (100-300 Td) and the bulk drift velocity to 15 % (50-500 Td), 3 standard errors of
    # the run in quadrature. (The Lisbon O2 set has no three-body attachment, so η/N is not compared.)
    result = air_lisbon(reduced_field_Td)
    alpha, drift = result.alpha_N, result.drift_velocity_bulk
    assert alpha.relative_stderr < 0.1
    assert alpha.value == pytest.approx(morrow_lowke_alpha_N_m2(reduced_field_Td),
                                        rel=tolerance(0.25, alpha.relative_stderr), abs=0)
    assert drift.value == pytest.approx(morrow_lowke_drift_velocity_m_s(reduced_field_Td),
                                        rel=tolerance(0.15, drift.relative_stderr), abs=0)
