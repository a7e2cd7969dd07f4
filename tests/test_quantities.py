"""The table of quantities: one spelling of names and units, safe rate-coefficient names, and the deprecated names
of version 0.1 still answering with a DeprecationWarning.

References: SI units of the swarm quantities (common practice: W in m/s, N·D in 1/(m s), μN in 1/(V m s), α/N in
m^2, k in m^3/s); the rest checks the project's own naming rules (avalanche.quantities module notes).
"""

from __future__ import annotations

import re
import warnings

import numpy as np
import pytest

from avalanche import quantities as Q
from avalanche.analysis.tables import SwarmTable
from avalanche.engine.results import ESTIMATES, EnergyDistribution, Estimate, SwarmResult
from avalanche.engine.stopping import parse_precision


def test_names_and_units_are_spelled_one_way():
    for name, quantity in Q.QUANTITIES.items():
        assert re.fullmatch(r"[A-Za-z][A-Za-z0-9_]*", name) and quantity.name == name
        assert quantity.label and quantity.description and quantity.symbol
        assert not re.search(r"\bm2\b|\bm3\b|m_s\)", quantity.unit), quantity.unit
    assert Q.unit("alpha_N") == "m^2" and Q.unit("eta_N_stderr") == "m^2"
    assert Q.unit("N_D_L_flux") == Q.unit("N_D_T_bulk") == "1/(m s)" and Q.unit("N_mu") == "1/(V m s)"
    assert Q.unit("ionization_rate_coefficient") == Q.unit("rate_coefficient_anything") == "m^3/s"
    assert all(unit == Q.unit(name) for name, unit, _ in ESTIMATES)
    # our own plain words on screen
    assert Q.label("N_mu") == "reduced mobility μN"
    assert Q.label("ionization_rate_coefficient") == "ionization rate coefficient k_iz"
    assert Q.label("N_D_L_bulk").startswith("reduced longitudinal diffusion N·D_L")


def test_rate_names_are_safe_and_unique():
    assert Q.rate_name("1s5 (3p5 4s [3/2]2, metastable)") == "rate_coefficient_1s5_3p5_4s_3_2_2_metastable"
    assert Q.rate_name("N2:C3Pi_u") == "rate_coefficient_N2_C3Pi_u"
    names = Q.rate_names(["a/b", "a b", "c"])
    assert names == {"a/b": "rate_coefficient_a_b", "a b": "rate_coefficient_a_b_2", "c": "rate_coefficient_c"}


def _result() -> SwarmResult:
    estimates = {name: Estimate(float(k + 1), 0.1) for k, name in enumerate(Q.RENAMED.values())
                 if not name.startswith("N_D_tensor")}
    eedf = EnergyDistribution(np.array([0.0, 1.0]), np.array([1.0]), np.array([0.0]))
    return SwarmResult(reduced_field_Td=10.0, estimates=estimates, rate_coefficients={"a/b": Estimate(2.0, 0.1)},
                       eedf=eedf, events=1, cpu_seconds=0.0, wall_seconds=0.0, stop_reason="precision",
                       relaxation_time_s=0.0, sampled_time_s=1.0, extrapolated_fraction=0.0, anomalies={}, inputs={})


@pytest.mark.parametrize("old, new", sorted(Q.RENAMED.items()))
def test_each_old_attribute_name_still_answers_with_a_deprecation_warning(old, new):
    result = _result()
    with pytest.warns(DeprecationWarning, match=f"'{old}' is deprecated.*use '{new}'"):
        value = getattr(result, old)
    expected = getattr(result, new)
    assert np.array_equal(np.asarray(value.value), np.asarray(expected.value))


def test_rate_coefficients_answer_to_their_quantity_name():
    result = _result()
    assert result.rate_coefficient_a_b == result.rate_coefficients["a/b"]
    assert "rate_coefficient_a_b" in result.quantities()
    with pytest.raises(AttributeError, match="no attribute 'rate_coefficient_c'"):
        result.rate_coefficient_c  # noqa: B018


def test_old_names_in_a_precision_target_and_a_table_are_renamed():
    with pytest.warns(DeprecationWarning, match="'mobility_N' is deprecated"):
        assert parse_precision({"mobility_N": 0.02})[1] == (("N_mu", 0.02),)
    from avalanche.engine.time_of_flight import make_settings

    with pytest.warns(DeprecationWarning, match="'trans_diffusion_N_flux' is deprecated"):
        assert make_settings(precision_on="trans_diffusion_N_flux").precision_on == "N_D_T_flux"
    with pytest.warns(DeprecationWarning, match="'long_diffusion_N_bulk' is deprecated"):
        table = SwarmTable([1.0, 2.0], {"long_diffusion_N_bulk": ([1.0, 2.0], [0.1, 0.1])})
    assert table.names == ["N_D_L_bulk"]
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        assert Q.current_name("N_D_L_bulk") == "N_D_L_bulk"
