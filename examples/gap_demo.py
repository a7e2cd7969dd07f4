"""Avalanches in two electrode gaps (our own scenario):

1. a proportional tube — a 25 µm wire (radius 12.5 µm) in a 1 cm tube (radius 5 mm) filled with argon–CO2 90/10
   at 1 atm — at a sweep of wire voltages: gain curve against the local-field estimate, the gain distribution of
   the highest voltage with its Pólya fit, and its ionization map;
2. a needle (tip radius 50 µm) 5 mm above a plane in dry air, driven at 20 kHz (2.5 kV peak): primaries released
   300 µm below the tip at several phases of the positive half-cycle (the needle is the anode; the avalanche runs
   into the tip), gain against the instantaneous voltage, and the induced current at the crest.

Every result goes into an HDF5 file (``avalanche.store.gap``) with its provenance, the space-charge note and the
high-voltage caution, which is also printed.

    python examples/gap_demo.py [OUT] [--quick]

``--quick`` runs few primaries (under a minute on one core, without the local-field comparison); the default run
takes some minutes.
"""

from __future__ import annotations

import argparse
import math
import time
from pathlib import Path

import avalanche
from avalanche.gaps.results import SAFETY_NOTE
from avalanche.plots import (
    plot_gain_curve,
    plot_gain_distribution,
    plot_induced_current,
    plot_ionization_map,
    save_figure,
)
from avalanche.store.gap import read_gap, write_gap

FREQUENCY_HZ = 20e3


def run_series(out: Path, name: str, geometry, gas, runs: list[tuple[str, float, dict]], options: dict) -> list[dict]:
    """gap() for each (label, voltage, options) in order of falling |voltage at release|; the first run's α table
    (which spans the others' E/N) serves the rest. Returns the files' data."""
    data, table = [], None
    for label, volts, extra in runs:
        if table is not None:
            options = dict(options, alpha_table=table)
        result = avalanche.gap(geometry, gas, volts, **options, **extra)
        table = result.alpha_table or None
        data.append(read_gap(write_gap(out / f"{name}_{label}.h5", result)))
        print(f"{name} {label:>6} ({result.inputs['start_voltage_V']:6.0f} V): mean gain {result.mean_gain}, "
              f"local-field gain {result.local_field_gain:.4g}, Polya theta {result.polya_theta}")
    return data


def wire_sweep(out: Path, quick: bool) -> list[dict]:
    """The argon–CO2 tube at a sweep of voltages."""
    tube = avalanche.Coaxial(wire_radius_m=12.5e-6, tube_radius_m=5e-3)
    gas = avalanche.Mixture("Ar:0.9,CO2:0.1")  # 300 K, 1 atm
    volts = (1100.0, 900.0) if quick else (1200.0, 1100.0, 1000.0, 900.0, 800.0)
    options = dict(primaries=40 if quick else 300, seed=1, start_position_m=(100e-6, 0.0, 0.0), population_cap=1000,
                   local_field=not quick, map_extent_m=(120e-6, -60e-6, 60e-6))  # maps: the wire's neighbourhood
    return run_series(out, "wire", tube, gas, [(f"{v:.0f}V", v, {}) for v in volts], options)


def needle_cycle(out: Path, quick: bool) -> list[dict]:
    """The needle–plane gap in dry air at 20 kHz, primaries released at phases of the positive half-cycle."""
    needle = avalanche.PointPlane(tip_radius_m=50e-6, gap_m=5e-3)
    start = (0.0, 0.0, 5e-3 - 300e-6)  # on the axis, 300 µm below the tip (E/N there ~50 Td at the crest)
    phases_deg = (90.0, 50.0) if quick else (90.0, 75.0, 60.0, 45.0, 30.0)
    options = dict(primaries=20 if quick else 150, seed=2, frequency_Hz=FREQUENCY_HZ, start_position_m=start,
                   population_cap=1000, local_field=not quick, map_extent_m=(300e-6, 4.7e-3, 5.0e-3))
    runs = [(f"{p:.0f}deg", 2500.0, {"start_time_s": math.radians(p) / (2 * math.pi * FREQUENCY_HZ)})
            for p in phases_deg]
    return run_series(out, "needle", needle, "air", runs, options)


def main(argv=None) -> None:
    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("out", nargs="?", default="runs/gap_demo", help="output folder (runs/gap_demo)")
    parser.add_argument("--quick", action="store_true", help="few primaries, no local-field comparison")
    args = parser.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    start = time.perf_counter()
    wire = wire_sweep(out, args.quick)
    save_figure(plot_gain_curve(wire), out / "wire_gain_curve", ("png",))
    top = max(wire, key=lambda d: d["attrs"]["voltage_V"])
    save_figure(plot_gain_distribution(top), out / "wire_gain_distribution", ("png",))
    save_figure(plot_ionization_map(top), out / "wire_ionization_map", ("png",))
    print(SAFETY_NOTE)  # before the high-voltage air gap, as in its files (attribute "caution")
    needle = needle_cycle(out, args.quick)
    save_figure(plot_gain_curve(needle, at_release=True), out / "needle_gain_curve", ("png",))
    save_figure(plot_induced_current(needle[0]), out / "needle_current", ("png",))
    print(f"note: {needle[0]['attrs']['space_charge']}")
    print(f"files and figures in {out} ({time.perf_counter() - start:.0f} s)")
    print(SAFETY_NOTE)


if __name__ == "__main__":
    main()
