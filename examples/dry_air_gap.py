"""A dry-air gap: the Townsend coefficients α/N and η/N, the critical field where they balance, and the
breakdown voltage of a 1 cm plane gap at 1 atm (our own scenario).

Caution: breakdown values of idealised gaps are not design values; the caution below is printed with every run.

    python examples/dry_air_gap.py            # full budget (several minutes on 2 cores)
    python examples/dry_air_gap.py --quick    # small budget (about a minute), larger errors
"""

from __future__ import annotations

import argparse
import warnings

import numpy as np
import scipy.constants as sc

import avalanche
from avalanche.analysis.breakdown import CAUTION, critical_reduced_field_Td, paschen_curve
from avalanche.analysis.tables import SwarmTable

PRESSURE_Pa = 101325.0
GAP_m = 0.01
GAMMA = 0.01


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small event budget: about a minute")
    args = parser.parse_args(argv)
    print(f"Caution: {CAUTION}\n")
    fields = [100.0, 120.0, 140.0, 170.0] if args.quick else [90.0, 100.0, 110.0, 120.0, 130.0, 145.0, 160.0, 180.0]
    budget = {"precision": 0.05, "max_events": 1e7, "electrons": 512} if args.quick else \
        {"precision": 0.01, "max_events": 1e8, "electrons": 2048}
    air = avalanche.Mixture(avalanche.named_mixture("air"), temperature_K=300.0, pressure_Pa=PRESSURE_Pa)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", avalanche.PhysicsWarning)
        results = [avalanche.swarm(air, field, seed=30 + k, **budget) for k, field in enumerate(fields)]
    table = SwarmTable.from_swarm_results(results)
    print(f"{'E/N [Td]':>9} {'alpha/N [m2]':>22} {'eta/N [m2]':>22}")
    for result in results:
        print(f"{result.reduced_field_Td:9.0f} {result.alpha_N.value:12.3e} ± {result.alpha_N.stderr:7.1e} "
              f"{result.eta_N.value:12.3e} ± {result.eta_N.stderr:7.1e}")
    coefficients = table.coefficient_table(temperature_K=300.0)
    critical = critical_reduced_field_Td(coefficients)
    text = "outside the computed range" if critical is None else f"{critical:.4g} Td"
    print(f"critical reduced field (alpha = eta): {text}")
    pd_Pa_m = PRESSURE_Pa * GAP_m
    with warnings.catch_warnings():  # one p d only: the curve's minimum (elsewhere) is not asked for
        warnings.filterwarnings("ignore", "paschen_curve: the Paschen minimum", avalanche.PhysicsWarning)
        curve = paschen_curve(coefficients, GAMMA, [pd_Pa_m])
    voltage = float(curve.breakdown_voltage_V[0])
    field_Td = voltage / (pd_Pa_m / (sc.k * 300.0)) / 1e-21
    print(f"1 cm plane gap at 1 atm, gamma = {GAMMA:g}: breakdown near {voltage / 1e3:.3g} kV "
          f"(E/N = {field_Td:.4g} Td)" if np.isfinite(voltage) else "breakdown field beyond the computed range")
    if caught:
        print(f"{len(caught)} physics warning(s), e.g.: {caught[0].message}")
    print(f"\nCaution: {CAUTION}")
    return {"table": table, "critical_Td": critical, "voltage_V": voltage}


if __name__ == "__main__":
    main()
