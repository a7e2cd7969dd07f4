"""The three examples of ``examples/`` run in their ``--quick`` mode and give sensible numbers (issue 14, part 8).

Each example is run in this process (``main(["--quick"])``); the checks are loose because the quick budgets are
small — they catch a broken example or a result far off, not the last per cent.
"""

from __future__ import annotations

import math
import runpy
from pathlib import Path

import pytest

EXAMPLES = Path(__file__).resolve().parents[1] / "examples"


def _run(name: str) -> dict:
    return runpy.run_path(str(EXAMPLES / f"{name}.py"), run_name="example")["main"](["--quick"])


@pytest.mark.slow
def test_barrier_cell_example(capsys):
    out = _run("barrier_cell_he_n2")
    result, drift = out["result"], out["drift"]
    # At 20 kHz and 1 atm the energy relaxes in ~ns, so the drive is quasi-static (ω/ν_ε < 0.1; Raizer Y P 1991,
    # Gas Discharge Physics, ch. 2, from memory): the drift follows the field without lag and its amplitude is
    # the DC drift at the peak field.
    assert result.regime["verdict"] == "quasi-static"
    assert abs(drift.lag_rad) < 0.01 and drift.amplitude > 0.0
    assert result.ionization_rate_coefficient.value > 0.0
    assert "drift velocity: amplitude" in capsys.readouterr().out


@pytest.mark.slow
def test_dry_air_gap_example(capsys):
    out = _run("dry_air_gap")
    # The critical reduced field of dry air, where α = η, is about 120 Td (Raizer Y P 1991, Gas Discharge Physics,
    # ch. 4, from memory; the quick run has ~5 % errors on α/N, so ±15 %).
    assert out["critical_Td"] == pytest.approx(120.0, rel=0.15)
    # A 1 cm plane gap in air at 1 atm breaks down near 30 kV (the classic ~30 kV/cm of air; common practice)
    assert out["voltage_V"] == pytest.approx(3.0e4, rel=0.2)
    printed = capsys.readouterr().out
    assert printed.count("Caution:") == 2 and "licensed" in printed


@pytest.mark.slow
def test_ar_co2_drift_gas_example(capsys):
    out = _run("drift_gas_ar_co2")
    fields = [row[0] for row in out["rows"]]
    flux = [row[1] for row in out["rows"]]
    # Drift velocity of Ar:CO2 90:10 at 1 atm near 1 kV/cm (4 Td): a few cm/µs, the plateau of this common
    # chamber gas (from memory); the quick budget gives ~5 % errors, so 3–6 cm/µs.
    assert fields == [1.0, 4.0, 10.0] and 3e4 < flux[1] < 6e4
    assert all(math.isfinite(value) and value > 0 for row in out["rows"] for value in row)
    assert "sigma_L [um]" in capsys.readouterr().out
