"""Demo of avalanches in electrode gaps (our own scenario): a 25 µm wire in a 1 cm argon tube at a voltage sweep,
and a needle–plane gap in dry air driven at 20 kHz. Writes one HDF5 file per run and the figures into ``OUT``.

    python examples/gap_demo.py [OUT]        # a few minutes on 2 cores

Space charge is neglected (vacuum field). Caution: high voltages kill; design and test real apparatus with safety
margins, under your local electrical codes and with licensed practice.
"""

from __future__ import annotations

import sys
from pathlib import Path

import avalanche
from avalanche.plots import (
    plot_gain_curve,
    plot_gain_distribution,
    plot_induced_current,
    plot_ionization_map,
    save_figure,
)
from avalanche.store.gap import read_gap, write_gap


def main(out: Path) -> None:
    out.mkdir(parents=True, exist_ok=True)
    tube = avalanche.Coaxial(wire_radius_m=12.5e-6, tube_radius_m=5e-3)  # 25 µm diameter wire, 1 cm tube
    runs = []
    for volts in (500.0, 550.0, 600.0):
        result = avalanche.gap(tube, "Ar", volts, primaries=100, seed=1, start_position_m=(60e-6, 0.0, 0.0),
                               population_cap=2000)
        path = write_gap(out / f"wire_{volts:.0f}V.h5", result)
        runs.append(read_gap(path))
        print(f"wire {volts:.0f} V: gain {result.mean_gain}, local-field {result.local_field_gain:.4g}, "
              f"Polya theta {result.polya_theta}")
    save_figure(plot_gain_curve(runs), out / "wire_gain_curve", ("png",))
    save_figure(plot_gain_distribution(runs[-1]), out / "wire_gain_distribution", ("png",))
    save_figure(plot_ionization_map(runs[-1]), out / "wire_ionization_map", ("png",))
    save_figure(plot_induced_current(runs[-1]), out / "wire_current", ("png",))
    needle = avalanche.PointPlane(tip_radius_m=50e-6, gap_m=5e-3)
    for quarter in (1, 3):  # released at the positive and at the negative crest of the 20 kHz drive
        t0 = quarter / (4 * 20e3)
        result = avalanche.gap(needle, "air", 3000.0, primaries=50, seed=2, frequency_Hz=20e3, start_time_s=t0,
                               population_cap=2000)
        write_gap(out / f"needle_crest{quarter}.h5", result)
        print(f"needle, crest {quarter}: gain {result.mean_gain}, local-field {result.local_field_gain:.4g}")
    print(result.notes[-1])


if __name__ == "__main__":
    main(Path(sys.argv[1]) if len(sys.argv) > 1 else Path("runs/gap_demo"))
