"""A detector drift gas: argon with 10 % CO2 at 1 atm, drift velocity and diffusion against E/N (our own scenario).

Drift chambers run at a few Td (1 kV/cm at 1 atm is about 4 Td). The script prints the flux and bulk drift
velocity and the reduced longitudinal and transverse diffusion N·D_L, N·D_T, and, in the units detector builders
use, the drift velocity in cm/µs and the diffusion spread of a drifting electron, σ = √(2 D L / W) after L = 1 cm,
in µm.

    python examples/drift_gas_ar_co2.py            # full budget (a few minutes on 2 cores)
    python examples/drift_gas_ar_co2.py --quick    # small budget (well under a minute), larger errors
"""

from __future__ import annotations

import argparse
import math
import warnings

import avalanche

GAS = {"Ar": 0.9, "CO2": 0.1}
PRESSURE_Pa = 101325.0


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small event budget: runs in well under a minute")
    args = parser.parse_args(argv)
    fields = [1.0, 4.0, 10.0] if args.quick else [0.5, 1.0, 2.0, 4.0, 7.0, 10.0, 15.0, 20.0]
    budget = {"precision": 0.05, "max_events": 1e7, "electrons": 512} if args.quick else \
        {"precision": 0.01, "max_events": 1e8, "electrons": 2048}
    gas = avalanche.Mixture(GAS, temperature_K=300.0, pressure_Pa=PRESSURE_Pa)
    density = gas.number_density_m3
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", avalanche.PhysicsWarning)
        results = [avalanche.swarm(gas, field, seed=40 + k, **budget) for k, field in enumerate(fields)]
    print(f"Ar:CO2 90:10 at 1 atm, 300 K (N = {density:.4g} m^-3)")
    print(f"{'E/N [Td]':>8} {'E [V/cm]':>9} {'W flux [cm/us]':>15} {'W bulk [cm/us]':>15} "
          f"{'N D_L [1/(m s)]':>16} {'N D_T [1/(m s)]':>16} {'sigma_L [um]':>12} {'sigma_T [um]':>12}")
    rows = []
    for field, result in zip(fields, results, strict=True):
        w_flux, w_bulk = result.drift_velocity_flux.value, result.drift_velocity_bulk.value
        nd_l, nd_t = result.N_D_L_bulk.value, result.N_D_T_bulk.value
        sigma_l = math.sqrt(2 * nd_l / density * 0.01 / w_bulk) * 1e6
        sigma_t = math.sqrt(2 * nd_t / density * 0.01 / w_bulk) * 1e6
        rows.append((field, w_flux, w_bulk, nd_l, nd_t))
        print(f"{field:8.3g} {field * 1e-21 * density / 100:9.4g} {w_flux * 1e-4:15.4g} {w_bulk * 1e-4:15.4g} "
              f"{nd_l:16.4g} {nd_t:16.4g} {sigma_l:12.4g} {sigma_t:12.4g}")
    if caught:
        print(f"{len(caught)} physics warning(s), e.g.: {caught[0].message}")
    return {"results": results, "rows": rows}


if __name__ == "__main__":
    main()
