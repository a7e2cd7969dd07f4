"""A helium–nitrogen barrier-discharge cell driven at 20 kHz (our own scenario).

Helium with 1 % nitrogen at 1 atm and 300 K between two dielectric-covered electrodes; the gap field oscillates at
20 kHz with an amplitude E_0/N chosen near breakdown. At 1 atm the electrons' energy relaxes in nanoseconds, far
faster than the 50 µs period, so the engine recognises the quasi-static regime and builds the cycle from DC points
at the instantaneous field. The script prints the regime verdict, the cycle-averaged rate coefficients, the
phase-resolved mean energy and ionization rate, and the drift velocity's amplitude and lag over the cycle (its
cycle average is about zero).

    python examples/barrier_cell_he_n2.py            # full budget (a few minutes on 2 cores)
    python examples/barrier_cell_he_n2.py --quick    # small budget (well under a minute), larger errors
"""

from __future__ import annotations

import argparse
import warnings

import avalanche
from avalanche.analysis.phase import first_harmonic

GAS = {"He": 0.99, "N2": 0.01}
FREQUENCY_Hz = 20e3
AMPLITUDE_Td = 40.0


def main(argv=None) -> dict:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="small event budget: runs in well under a minute")
    args = parser.parse_args(argv)
    budget = ({"precision": 0.05, "max_events": 2e7, "electrons": 512} if args.quick else
              {"precision": 0.01, "max_events": 2e8, "electrons": 2048})
    cell = avalanche.Mixture(GAS, temperature_K=300.0, pressure_Pa=101325.0)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always", avalanche.PhysicsWarning)
        result = avalanche.swarm(cell, AMPLITUDE_Td, frequency_Hz=FREQUENCY_Hz, phase_bins=16, seed=20,
                                 initial_energy_eV=5.0, **budget)
    regime = result.regime
    print(f"He:N2 99:1 at 1 atm, {FREQUENCY_Hz / 1e3:g} kHz, E0/N = {AMPLITUDE_Td:g} Td")
    print(f"regime: {regime['verdict']} (omega/nu_energy = {regime['omega_over_nu_energy']:.3g})")
    print(f"  {regime['statement']}")
    print(f"cycle average: mean energy {result.mean_energy_eV} eV, "
          f"ionization rate coefficient {result.ionization_rate_coefficient} m^3/s")
    drift = result.phase_resolved["drift_velocity_flux"]
    h = first_harmonic(result.phase, drift.value, drift.stderr)
    print(f"drift velocity: amplitude {h.amplitude:.4g} ± {h.amplitude_stderr:.2g} m/s, lag {h.lag_rad:.3g} rad "
          f"behind the field (cycle average {h.mean:.3g} m/s)")
    print(f"{'phase [rad]':>11} {'E/N [Td]':>9} {'mean energy [eV]':>17} {'k_iz [m^3/s]':>12}")
    energy = result.phase_resolved["mean_energy_eV"].value
    k_iz = result.phase_resolved["ionization_rate_coefficient"].value
    field = result.phase_resolved["reduced_field_Td"].value
    for i in range(0, result.phase.size, 2):
        print(f"{result.phase[i]:11.3f} {field[i]:9.2f} {energy[i]:17.3f} {k_iz[i]:12.3e}")
    if caught:
        print(f"{len(caught)} physics warning(s), e.g.: {caught[0].message}")
    return {"result": result, "drift": h}


if __name__ == "__main__":
    main()
