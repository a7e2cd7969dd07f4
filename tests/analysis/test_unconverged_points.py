"""Consumers drop points that are NaN or marked not converged, with a warning, instead of spoiling the curve."""

import json
import math
import subprocess
import sys
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from avalanche.analysis.breakdown import paschen_curve
from avalanche.analysis.tables import SwarmTable
from avalanche.errors import PhysicsWarning

TORR_CM_PA_M = sc.torr * 1e-2           # 1 Torr cm in Pa m
# Townsend's formula alpha/p = A exp(-B p/E) for argon, A = 12 /(cm Torr), B = 180 V/(cm Torr), gamma = 0.01
# (Raizer Y P 1991, Gas Discharge Physics, Springer, Table 4.1 and eq. (7.4), from memory).
A_PER_PA_M = 12.0 / TORR_CM_PA_M
B_V_PER_PA_M = 180.0 / TORR_CM_PA_M
GAMMA = 0.01
KT_J = sc.k * 300.0


def townsend_minimum_V() -> float:
    """Paschen minimum of the Townsend formula: V_min = e (B/A) ln(1 + 1/γ) (Raizer 1991, eq. (7.6), from memory)."""
    return math.e * B_V_PER_PA_M / A_PER_PA_M * math.log1p(1.0 / GAMMA)


def _alpha_N(fields_Td):
    # alpha/N = A kT exp(-B kT / (E/N)) with p = N k T
    return A_PER_PA_M * KT_J * np.exp(-B_V_PER_PA_M * KT_J / (np.asarray(fields_Td) * 1e-21))


def test_not_converged_and_nan_points_are_left_out_with_a_warning():
    fields = np.geomspace(100.0, 3000.0, 16)
    alpha = _alpha_N(fields)
    alpha[3] = math.nan          # a failed point
    alpha[7] *= 10.0             # a point marked not converged, with a wrong value
    converged = np.ones(fields.size, dtype=bool)
    converged[7] = False
    table = SwarmTable(fields, {"alpha_N": (alpha, np.zeros_like(alpha)), "eta_N": (0 * alpha, 0 * alpha)},
                       temperature_K=300.0, converged=converged)
    with pytest.warns(PhysicsWarning, match=f"{fields[7]:g} Td are not converged"):
        coefficients = table.coefficient_table()
    assert coefficients.reduced_field_Td.size == fields.size - 2
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", PhysicsWarning)
        curve = paschen_curve(coefficients, GAMMA, np.geomspace(0.1, 30.0, 40) * TORR_CM_PA_M)
    # the tabulated formula interpolated log-log: the minimum within 2 % of the closed form
    assert curve.minimum_voltage_V == pytest.approx(townsend_minimum_V(), rel=0.02)


def test_converged_mask_is_sorted_with_the_fields_and_merged():
    table = SwarmTable([300.0, 100.0], {"alpha_N": ([2.0, 1.0], [0.0, 0.0])}, converged=[False, True])
    assert table.converged.tolist() == [True, False]
    other = SwarmTable([200.0], {"alpha_N": ([1.5], [0.0])})
    assert table.merged(other).converged.tolist() == [True, True, False]


@pytest.mark.slow
def test_argon_breakdown_command_gives_the_paschen_minimum(tmp_path):
    # Issue 13: the on-demand argon curve has a minimum within 35 % of the Townsend-formula value (188 V).
    proc = subprocess.run([sys.executable, "-m", "avalanche", "breakdown", "--gas", "Ar", "--gamma", "0.01",
                           "--json", "--out", str(tmp_path)], capture_output=True, text=True, cwd=tmp_path)
    assert proc.returncode == 0, proc.stderr
    minimum = json.loads(proc.stdout)["minimum_voltage_V"]
    assert minimum is not None
    assert abs(minimum - townsend_minimum_V()) < 0.35 * townsend_minimum_V()
