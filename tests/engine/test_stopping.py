"""The stop rule over every reported quantity (avalanche.engine.stopping)."""

import math
import warnings

import numpy as np
import pytest

from avalanche import swarm
from avalanche.engine.results import Estimate
from avalanche.engine.stopping import ZERO_EVENT_COUNT, StopRule, parse_precision
from avalanche.errors import ConfigError
from avalanche.gas.crosssections import make_set
from avalanche.gas.library import model_gas
from avalanche.gas.mixture import Mixture


def test_parse_precision_float_and_dict():
    assert parse_precision(0.05) == (0.05, ())
    assert parse_precision({"alpha_N": 0.03, "default": 0.02}) == (0.02, (("alpha_N", 0.03),))
    assert parse_precision({"eta_N": 0.1}) == (0.01, (("eta_N", 0.1),))
    for bad in (0, -1, math.nan, "x", {"alpha_N": -0.1}, {"default": True}):
        with pytest.raises(ConfigError, match="precision"):
            parse_precision(bad)


def test_unknown_target_name_is_a_config_error():
    with pytest.raises(ConfigError, match="neither an estimate nor a process"):
        StopRule(0.01, (("alpha", 0.1),), ("elastic",), ("elastic",), np.zeros(1), np.full(1, 1e-4), np.ones(1), 1.0)


def test_rule_picks_the_worst_quantity_and_bounds_zero_ones():
    # Energy loss shares (common practice: 2 m/M <eps> per elastic collision, the threshold per excitation):
    # elastic 100 * 2e-4 * 5 = 0.1 eV, excitation 10 * 10 = 100 eV -> only the excitation passes 1 %.
    rule = StopRule(0.1, (), ("el", "ex", "ion"), ("elastic", "excitation", "ionization"), np.array([0, 10, 15.0]),
                    np.full(3, 1e-4), np.ones(3), 2.0)
    est = {name: Estimate(1.0, 0.01) for name in ("mean_energy_eV", "drift_velocity_flux", "drift_velocity_bulk",
                                                   "N_D_L_flux", "N_D_L_bulk",
                                                   "N_D_T_flux", "N_D_T_bulk")}
    est["mean_energy_eV"] = Estimate(5.0, 0.05)
    est["drift_velocity_bulk"] = Estimate(4.0, 0.01)
    est["alpha_N"] = Estimate(0.0, 0.0)          # no ionization seen
    rates = {"el": Estimate(1.0, 0.5), "ex": Estimate(2.0, 0.1), "ion": Estimate(0.0, 0.0)}
    counts = np.array([100.0, 10.0, 0.0])
    assert rule.main_processes(counts, 5.0) == ["ex"]
    assert rule.check(est, rates, counts, exposure_s=6.0)
    assert rule.limiting == "ex" and rule.limiting_ratio == pytest.approx(0.5)
    # no event: rule of three (Hanley & Lippman-Hand 1983, JAMA 249 1743): 3 / exposure / (N W_bulk)
    assert rule.upper_bounds == {"alpha_N": pytest.approx(ZERO_EVENT_COUNT / 6.0 / (2.0 * 4.0))}
    rates["ex"] = Estimate(2.0, 0.3)                # 15 % > 10 %: not done, and it limits
    assert not rule.check(est, rates, counts, exposure_s=6.0)
    assert rule.limiting == "ex" and rule.limiting_ratio == pytest.approx(1.5)
    est["alpha_N"] = Estimate(1e-3, 1e-3)           # below 2 sigma: statistically zero, bound |x| + 2 sigma
    rates["ex"] = Estimate(2.0, 0.1)
    assert rule.check(est, rates, counts, exposure_s=6.0)
    assert rule.upper_bounds["alpha_N"] == pytest.approx(3e-3)


def _maxwell(precision, **kw):
    mixture = Mixture("maxwell", temperature_K=0.0, number_density_m3=1e25)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return swarm(mixture, 1.0, seed=3, precision=precision, electrons=512, max_events=5e7,
                     initial_energy_eV=0.2, diffusion_skip=0.02, **kw)


def test_every_tested_quantity_reaches_its_target():
    states = []
    result = _maxwell({"default": 0.1, "drift_velocity_flux": 0.02}, progress=states.append)
    stages = [s["stage"] for s in states]
    assert "relaxing" in stages and stages[-1] == "sampling"
    assert states[-1]["quantity"] and states[-1]["events"] <= result.events
    assert result.stop_reason == "precision"
    tested = ("mean_energy_eV", "drift_velocity_bulk", "N_D_L_flux", "N_D_L_bulk",
              "N_D_T_flux", "N_D_T_bulk")
    for name in tested:
        assert result.estimates[name].relative_stderr < 0.1, name
    assert result.drift_velocity_flux.relative_stderr < 0.02
    assert result.stopped_by in (*tested, "drift_velocity_flux", "momentum transfer")
    assert "alpha_N" not in result.upper_bounds  # no ionization process: not reported at all
    data = result.to_dict()
    assert data["stopped_by"] == result.stopped_by and data["upper_bounds"] == {}
    assert f"stop: precision ({result.stopped_by})" in result.format_table()


def test_stopped_by_and_upper_bounds_in_hdf5(tmp_path):
    from avalanche.store.point import load_result, save_result

    # The Reid ramp model (elastic + a 0.2 eV ramp excitation; mean energy ~0.3 eV at 12 Td) with the 15.6 eV
    # ionization of the Lucas-Saelee model added: the ionization can never be reached in practice, so alpha_N
    # stays statistically zero and must come back as an upper bound, not as the limiting quantity.
    ionization = [p for p in model_gas("lucas-saelee", F=1.0).processes if p.kind == "ionization"]
    gas = make_set("ramp-ion", mass_amu=4.0, processes=(*model_gas("reid-ramp").processes, *ionization),
                   ionization_energy_eV=15.6, provenance={"sources": ["model"]})
    mixture = Mixture("ramp-ion", temperature_K=0.0, number_density_m3=1e24, sets={"ramp-ion": gas})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(mixture, 12.0, seed=2, precision=0.05, electrons=512, max_events=2e7, sharing="uniform")
    assert "alpha_N" in result.upper_bounds and result.upper_bounds["alpha_N"] > 0
    assert "alpha_N" != result.stopped_by
    save_result(tmp_path / "p.h5", result)
    back = load_result(tmp_path / "p.h5")
    assert back.stopped_by == result.stopped_by and back.upper_bounds == pytest.approx(result.upper_bounds)


@pytest.mark.slow
def test_loose_precision_stops_much_earlier():
    # Issue 13: a tenfold looser precision must cost at least 5x fewer events (errors fall as 1/sqrt(events), so
    # about 100x is expected once sampling dominates; the relaxation is a fixed cost).
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        # The Reid (1979) ramp model gas (Reid I D 1979, Aust. J. Phys. 32 231) at 12 Td: few processes, so the
        # tight run reaches 1 % on every quantity within the budget. (Argon at 100 Td with the published set's 37
        # levels needs more than 5e8 events for 1 % on every level above 1 % of the energy loss: benchmarks/.)
        reid = Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25)
        loose = swarm(reid, 12.0, seed=1, precision=0.1, electrons=4096, max_events=5e8)
        tight = swarm(reid, 12.0, seed=1, precision=0.01, electrons=4096, max_events=5e8)
    assert loose.stop_reason == tight.stop_reason == "precision"
    assert tight.events >= 5 * loose.events


def test_progress_printer_lines():
    import io

    from avalanche.cli.point import progress_printer

    out = io.StringIO()
    show = progress_printer(out, interval_s=0.0)
    show({"stage": "compiling"})
    show({"stage": "relaxing", "events": 1e6, "max_events": 1e9})
    show({"stage": "sampling", "quantity": "alpha_N", "ratio_to_target": 2.0, "events": 2e6, "eta_s": 30.0})
    lines = out.getvalue().splitlines()
    assert "compiles" in lines[0] and "relaxing" in lines[1]
    assert "alpha_N at 2 x its target" in lines[2] and "about 30 s left" in lines[2]
