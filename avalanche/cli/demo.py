"""The demonstration job of ``avalanche demo``: a small, complete run on the shipped data.

Scenario (our own): the fill gas of an argon lamp cell, 300 K and 1 kPa. The demo

1. validates every shipped cross-section set;
2. sweeps E/N over :data:`DEMO_FIELDS_Td` with the Monte Carlo engine into ``<out>/demo.h5`` (a run file written
   beside it as ``demo.toml`` records the configuration; an existing ``demo.h5`` of the same configuration is
   resumed, so an interrupted demo continues where it stopped);
3. draws the swarm parameters with the empirical Townsend formula overlaid (inside its validity range) and the
   energy distributions;
4. writes a fluid-model rate table (CSV);
5. runs one AC point — the same gas in a 13.56 MHz RF field of amplitude :data:`DEMO_AC_AMPLITUDE_Td` — and prints
   its regime verdict, cycle averages and the amplitude and lag of the drift velocity (``<out>/demo_ac.h5``);
6. computes the Paschen curve of a uniform argon gap (γ = :data:`DEMO_GAMMA`) from the sweep's own ionization
   coefficient ν_iz/(N W) — the sweep's fields cover the breakdown fields of the whole p d range
   :data:`DEMO_PD_TORR_CM`, so no point is computed twice and the rate table of step 4 is the one coefficient
   file — with its caution. (The diffusion-corrected α/N of the sweep has α/E nearly flat from 800 to 1800 Td,
   within its errors, so the Paschen minimum could not be placed inside the table; ν_iz/(N W) peaks near 800 Td.)

and prints where each output went. It needs about 80 s of CPU time (:data:`DEMO_CPU_SECONDS`), the sweep shared
by 2 worker processes: under a minute on 2 idle cores (48 s measured), longer on a busy machine; the first run
after installing also compiles the kernels (about 70 s more CPU).
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path

from ..errors import ConfigError

DEMO_FIELDS_Td = (100.0, 200.0, 300.0, 500.0, 800.0, 1200.0, 1800.0)
"""Reduced fields of the demo sweep [Td]: from the lamp's running field to beyond its Paschen minimum; they cover
the breakdown fields of the demo's p d range (about 121 Td at 20 Torr cm, 1590 Td at 0.6 Torr cm, with the
sweep's ν_iz/(N W))."""
DEMO_GAMMA = 0.01
"""Secondary-electron yield of the demo's Paschen curve (a round value for metal cathodes in argon; common
practice)."""
DEMO_PD_TORR_CM = "0.6:16:25"
"""p d range of the demo's Paschen curve [Torr cm]: both branches around the minimum (near 1.6 Torr cm with the
published argon set); at 20 Torr cm the breakdown field falls below the sweep's lowest field (100 Td)."""
DEMO_CPU_SECONDS = 80
"""CPU time of ``avalanche demo`` (user + system, worker processes included): 77 s measured with /usr/bin/time on
the idle 2-core development machine (48 s wall) with the kernels compiled, rounded up; the README states it."""
DEMO_AC_FREQUENCY_Hz = 13.56e6
DEMO_AC_AMPLITUDE_Td = 300.0
"""The demo's AC point: the 13.56 MHz industrial band, field amplitude E_0/N [Td]."""

DEMO_RUNFILE = f"""\
# The demo of avalanche: the fill gas of an argon lamp cell, written by `avalanche demo`.
format_version = 1

[sweep]
name = "demo-argon-lamp-cell"
description = "Argon lamp-cell fill, 300 K, 1 kPa: E/N from the running field to beyond the Paschen minimum"
seed = 20261202
output = "demo.h5"

[gas]
mixture = "Ar"
temperature_K = 300.0
pressure_Pa = 1000.0

[grid]
reduced_field_Td = [{", ".join(f"{f:g}" for f in DEMO_FIELDS_Td)}]

[engine]
# a demo budget: the points from 300 to 1200 Td reach 2 % on every reported quantity before it; 100, 200 and 1800 Td
# end by it (their worst quantity, the bulk N D_L or alpha/N, at 3-5 %); 2048 electrons relax within its first half
precision = 0.02
electrons = 2048
max_events = 10_000_000
"""


def run_demo(out_dir: str | Path, run_command: Callable[[list[str]], int],
             workers: int | None = None) -> dict[str, list[Path]]:
    """Run the demonstration job, writing into ``out_dir``; returns the written files by step.

    Parameters
    ----------
    out_dir : str or Path
        Folder of the outputs (created if missing).
    run_command : callable
        Runs one ``avalanche`` command line (``avalanche.cli.main.main``) and returns its exit code.
    workers : int, optional
        Local worker processes of the sweep (default: one per core, at most 2).
    """
    from ..gas.library import available_gases, get_set

    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    names = available_gases()
    for name in names:
        get_set(name)
    print(f"avalanche demo: five steps, about {DEMO_CPU_SECONDS} s of CPU time in all")
    print(f"avalanche demo: {len(names)} gases in the library ({', '.join(names)}), all validated on load")

    runfile = out / "demo.toml"
    runfile.write_text(DEMO_RUNFILE, encoding="utf-8")
    results = out / "demo.h5"
    workers = workers or max(1, min(2, os.cpu_count() or 1))
    print(f"\n[1/5] argon swarm at {len(DEMO_FIELDS_Td)} reduced fields, {workers} worker(s) -> {results}")
    sweep = ["sweep", str(runfile), "--out", str(results), "--workers", str(workers), "--quiet"]
    if results.exists():
        print(f"      {results} exists: finished points are kept (delete it to start afresh)")
        sweep.append("--resume")
    _step(run_command, sweep)
    from ..analysis.tables import SwarmTable
    from ..store.sweep_file import open_results

    table = SwarmTable.from_results(open_results(results))
    print(table_summary(table))

    print(f"\n[2/5] plots with the handbook Townsend formula -> {out / 'demo_plots'}")
    _step(run_command, ["plot", str(results), "--out-dir", str(out / "demo_plots"), "--format", "png", "--force"])
    print(f"\n[3/5] fluid-model rate table -> {out / 'demo_rates.csv'}")
    _step(run_command, ["table", str(results), "--out", str(out / "demo_rates.csv"), "--force"])
    print(f"\n[4/5] one RF point: {DEMO_AC_AMPLITUDE_Td:g} Td amplitude at {DEMO_AC_FREQUENCY_Hz / 1e6:g} MHz -> "
          f"{out / 'demo_ac.h5'}")
    ac_file = run_ac_point(out / "demo_ac.h5")
    print(f"\n[5/5] Paschen curve of a uniform argon gap, gamma = {DEMO_GAMMA:g}, from the sweep's nu_iz/(N W) "
          f"-> {out / 'demo_paschen'}")
    _step(run_command, ["breakdown", "--results", str(results), "--coefficients", "simple",
                        "--gamma", f"{DEMO_GAMMA:g}",
                        "--pd", DEMO_PD_TORR_CM, "--out-dir", str(out / "demo_paschen"), "--format", "png"])
    written = {"sweep": [runfile, results], "plots": sorted((out / "demo_plots").glob("demo_*")),
               "table": [out / "demo_rates.csv"], "ac": [ac_file],
               "paschen": sorted((out / "demo_paschen").glob("paschen_*"))}
    print("\noutputs:")
    for step, paths in written.items():
        for path in paths:
            print(f"  {step:8s} {path}")
    return written


def run_ac_point(path: Path) -> Path:
    """The demo's RF point (argon lamp-cell gas at 13.56 MHz): prints its result with the regime verdict and writes
    it to ``path`` (HDF5)."""
    from ..analysis.phase import first_harmonic
    from ..engine.time_of_flight import swarm
    from ..gas.mixture import Mixture
    from ..store.point import save_result

    mixture = Mixture("Ar", temperature_K=300.0, pressure_Pa=1000.0)
    result = swarm(mixture, DEMO_AC_AMPLITUDE_Td, frequency_Hz=DEMO_AC_FREQUENCY_Hz, phase_bins=16, seed=3,
                   precision=0.03, electrons=2048, max_events=40_000_000)
    regime = result.regime
    print(f"      regime: {regime['verdict']} (omega/nu_m = {regime['omega_over_nu_m']:.3g}, omega/nu_energy = "
          f"{regime['omega_over_nu_energy']:.3g}, E_eff/N = {regime['effective_field_Td']:.4g} Td)")
    print(f"      {regime['statement']}")
    print("      cycle average: mean energy " f"{result.mean_energy_eV}" " eV, ionization rate coefficient "
          f"{result.ionization_rate_coefficient} m^3/s")
    drift = result.phase_resolved["drift_velocity_flux"]
    h = first_harmonic(result.phase, drift.value, drift.stderr)
    print(f"      drift velocity over the cycle: amplitude {h.amplitude:.4g} ± {h.amplitude_stderr:.2g} m/s, lag "
          f"{h.lag_rad:.3g} ± {h.lag_stderr:.2g} rad behind the field (cycle average {h.mean:.3g} m/s)")
    if path.exists():
        path.unlink()
    save_result(path, result)
    return path


def _step(run_command, argv: list[str]) -> None:
    code = run_command(argv)
    if code:
        raise ConfigError(f"avalanche demo: the step 'avalanche {' '.join(argv)}' failed (exit code {code}); see the "
                          "message above")


def table_summary(table) -> str:
    """The demo's one-line-per-point summary of a :class:`~avalanche.analysis.tables.SwarmTable`."""
    header = (f"      {'E/N [Td]':>9s} {'mean energy [eV]':>18s} {'W bulk [m/s]':>20s} {'alpha/N [m^2]':>24s}")
    rows = [header]
    for k, field in enumerate(table.reduced_field_Td):
        (e, de), (w, dw), (a, da) = ((v[k], s[k]) for v, s in (table.get("mean_energy_eV"),
                                                                table.get("drift_velocity_bulk"), table.get("alpha_N")))
        rows.append(f"      {field:9.0f} {e:10.3f} ± {de:5.3f} {w:11.4g} ± {dw:6.2g} {a:12.4g} ± {da:8.2g}")
    return "\n".join(rows)
