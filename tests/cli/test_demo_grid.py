"""The demo's sweep covers the breakdown fields of its own Paschen range, so its Paschen step computes nothing more
(issue 14, part 6)."""

from __future__ import annotations

import numpy as np
import scipy.constants as sc

from avalanche.analysis.breakdown import paschen_curve
from avalanche.analysis.coefficients import CoefficientTable, townsend_formula
from avalanche.cli.demo import DEMO_GAMMA, DEMO_PD_TORR_CM, DEMO_FIELDS_Td


def test_demo_fields_cover_the_breakdown_fields_of_its_paschen_range():
    # Argon's empirical Townsend formula α/p = A exp(−B p/E), A = 12 /(cm Torr), B = 180 V/(cm Torr) (Raizer Y P
    # 1991, Gas Discharge Physics, Springer, table 4.1; from memory) gives the breakdown field E/N = V/(N d) at both
    # ends of the demo's p d range; both lie inside the demo sweep's fields, with a 10 % margin for the difference
    # between the formula and the Monte Carlo coefficients the demo uses.
    low, high, _ = (float(x) for x in DEMO_PD_TORR_CM.split(":"))
    pd_Pa_m = np.array([low, high]) * sc.torr / 100.0
    field = np.geomspace(30.0, 5000.0, 400)
    alpha = townsend_formula(12.0, 180.0, field, 300.0)
    curve = paschen_curve(CoefficientTable(field, alpha, np.zeros_like(field), temperature_K=300.0), DEMO_GAMMA,
                          pd_Pa_m)
    n_d = pd_Pa_m / (sc.k * 300.0)
    breakdown_Td = curve.breakdown_voltage_V / n_d / 1e-21
    assert np.all(np.isfinite(breakdown_Td))
    assert min(DEMO_FIELDS_Td) <= 0.9 * breakdown_Td.min() and 1.1 * breakdown_Td.max() <= max(DEMO_FIELDS_Td)
