"""The one-point commands ``swarm`` (time of flight, DC or AC) and ``townsend`` (steady-state Townsend), and
the gas and point arguments they share."""

from __future__ import annotations

import math

from .common import magnetic_field_value, magnetic_selection
from .registry import SAFETY_NOTE, command, print_json
from .units import one_reduced_field_Td, pressure_Pa, temperature_K


def _vibrational_temperature(text: str) -> float:
    """``--vibrational-temperature``: a temperature [K] (``2000`` or ``2000K``); a bad value is argparse's one-line
    usage error naming the option and the value."""
    import argparse

    from ..errors import ConfigError

    try:
        return temperature_K(text, "--vibrational-temperature")
    except ConfigError as exc:
        raise argparse.ArgumentTypeError(str(exc)) from None


def _mixture_arguments(p) -> None:
    p.add_argument("--gas", default="Ar", help='gas or mixture, e.g. "Ar", "Ne:0.99,Ar:0.01", "air" (default Ar)')
    p.add_argument("--temperature", type=float, default=300.0, metavar="K", help="gas temperature [K] (300)")
    density = p.add_mutually_exclusive_group()
    density.add_argument("--pressure", type=pressure_Pa, metavar="P",
                         help="gas pressure: Pa, or with a unit: 10torr, 1atm, 5kPa, 100mbar (default 1 atm)")
    density.add_argument("--density", type=float, metavar="M3", help="gas number density [m^-3]")
    p.add_argument("--penning", default=None, metavar="GROUP:R",
                   help='Penning transfer probabilities, e.g. "Ne:0.3" or "Ne:1s:0.2,Ne:2p->Ar:0.5" (default none)')
    p.add_argument("--vibrational-temperature", type=_vibrational_temperature, default=None, metavar="T",
                   help="temperature of the vibrational level populations, e.g. 2000K (default: the gas "
                        "temperature); sets with superelastic vibrational pairs (N2, O2) use it")


def mixture_from_args(args):
    """The :class:`~avalanche.gas.mixture.Mixture` described by the common gas arguments."""
    from ..gas.mixture import Mixture
    from ..gas.penning import parse_penning

    penning = parse_penning(args.penning) if args.penning else None
    return Mixture(args.gas, temperature_K=args.temperature, pressure_Pa=args.pressure,
                   number_density_m3=args.density, penning=penning,
                   vibrational_temperature_K=args.vibrational_temperature)


def point_arguments(p, precision: float, electrons_help: str) -> None:
    """The arguments of one simulated point shared by ``swarm`` and ``townsend``: gas, E/N, precision, budget,
    electrons, seed, sharing and scattering rules."""
    _mixture_arguments(p)
    p.add_argument("--en", type=one_reduced_field_Td, required=True, metavar="TD", help="reduced field E/N [Td]")
    p.add_argument("--precision", type=float, default=precision,
                   help=f"target relative standard error ({precision:g})")
    p.add_argument("--max-events", type=float, default=None, help="collision-event budget (null events included)")
    p.add_argument("--electrons", type=int, default=None, help=electrons_help)
    p.add_argument("--seed", type=int, default=0, help="master random seed (0)")
    p.add_argument("--sharing", default=None, help="ionization energy sharing: equal, uniform or opb")
    p.add_argument("--scattering", default=None, help="angular scattering: isotropic or screened-coulomb")


def output_arguments(p) -> None:
    """``--json``, ``--out`` and ``--force`` of a one-point command (see :func:`report_point`)."""
    p.add_argument("--json", action="store_true", help="print the result as JSON (value and stderr per quantity)")
    p.add_argument("--out", default=None, metavar="FILE.h5", help="also write the result to an HDF5 file (an "
                   "existing file is refused unless --force)")
    p.add_argument("--force", action="store_true", help="overwrite the --out file if it exists")


def check_point_arguments(args) -> None:
    """Checks made before computing: the precision and budget bounds of run files, and the ``--out`` file (not a
    folder, not an existing file without ``--force``, in a writable folder)."""
    from ..errors import ConfigError

    if not (math.isfinite(args.precision) and 0 < args.precision < 1):
        raise ConfigError(f"--precision {args.precision:g}: give a relative standard error between 0 and 1, e.g. "
                          "0.01 (as [engine] precision in run files)")
    if args.max_events is not None and not (math.isfinite(args.max_events) and args.max_events >= 1):
        raise ConfigError(f"--max-events {args.max_events:g}: give a positive number of events, e.g. 1e8")
    if args.out:
        from ..store.files import check_output_file

        check_output_file(args.out, force=args.force)


def run_quietly(compute, command_name: str):
    """Call ``compute()`` and print each distinct warning it raises as one line on stderr (no source path)."""
    import warnings

    from .common import show_warnings

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        result = compute()
    show_warnings(caught, command_name)
    return result


def point_options(args, **more) -> dict:
    """Keyword arguments of the simulation from the shared point arguments and ``more`` (those not given left out,
    so the function's defaults apply)."""
    pairs = {"max_events": args.max_events, "electrons": args.electrons, "sharing": args.sharing,
             "scattering": args.scattering, **more}
    options = {k: v for k, v in pairs.items() if v is not None}
    if "max_events" in options:
        options["max_events"] = int(options["max_events"])
    return options


def report_point(args, result) -> None:
    """Write ``result`` to ``--out`` if given, and print it as JSON (``--json``) or as its table."""
    if args.out:
        from ..store.point import save_result

        save_result(args.out, result, overwrite=args.force)
    if not getattr(result, "converged", True):
        import sys

        print(f"avalanche {args.command}: warning: the result is not converged: "
              f"{'; '.join(result.convergence_notes)}", file=sys.stderr)
    if args.json:
        print_json(result.to_dict())
    else:
        print(result.format_table())
        if args.out:
            print(f"result written to {args.out}")


def _swarm_configure(p) -> None:
    point_arguments(p, 0.01, "electrons per ensemble")
    p.add_argument("--frequency", type=float, default=None, metavar="HZ",
                   help="AC drive frequency [Hz] (--en is then the amplitude); omit for DC")
    p.add_argument("--waveform", default=None, metavar="FILE.csv",
                   help="AC: periodic waveform as a two-column CSV (phase fraction or time_s, value), peak = --en")
    p.add_argument("--phase-bins", type=int, default=None, help="AC: phase bins per period (32)")
    p.add_argument("--dc-offset", type=float, default=None, metavar="TD", help="AC: DC part E_dc/N [Td] (0)")
    p.add_argument("--magnetic-field", type=magnetic_field_value, default=None, metavar="B",
                   help='magnetic field: tesla ("0.5" or "0.5T") or reduced B/N in Hx ("300Hx"); default none')
    p.add_argument("--angle", type=float, default=None, metavar="DEG",
                   help="angle between E and B [deg], 0 to 180 (90: crossed fields, the default)")
    p.add_argument("--ac-method", default=None, choices=["auto", "exact", "quasi-static"],
                   help="AC: 'auto' (default) computes quasi-static drives from DC points at the instantaneous field "
                        "and tracks the others exactly")
    p.add_argument("--max-wall-seconds", type=float, default=None, metavar="S",
                   help="wall-clock limit of the run [s], always honoured (sampling starts and the run stops)")
    p.add_argument("--quiet", action="store_true", help="no progress lines on stderr")
    output_arguments(p)


PROGRESS_INTERVAL_S = 5.0
"""Seconds between two progress lines of a single point."""


def progress_printer(stream=None, interval_s: float = PROGRESS_INTERVAL_S):
    """A callback for the engine's ``progress`` argument that prints, on ``stream`` (stderr), a notice while the
    kernels load or compile, then at most every ``interval_s`` seconds the quantity that limits the run, its
    relative error over its target and a rough time left."""
    import sys
    import time

    stream = stream or sys.stderr
    last = [-math.inf]

    def show(state: dict) -> None:
        if state.get("stage") == "compiling":
            print("avalanche swarm: loading the numba kernels (the first run after an install compiles them, about "
                  "a minute)...", file=stream, flush=True)
            return
        now = time.perf_counter()
        if now - last[0] < interval_s:
            return
        last[0] = now
        if state.get("stage") == "relaxing":
            print(f"avalanche swarm: relaxing, {state['events']:.3g} of at most {state['max_events']:.3g} events",
                  file=stream, flush=True)
            return
        ratio, eta = state["ratio_to_target"], state["eta_s"]
        left = f", about {eta:.0f} s left" if math.isfinite(eta) else ""
        print(f"avalanche swarm: {state['events']:.3g} events; limiting: {state['quantity'] or '-'} at "
              f"{ratio:.3g} x its target precision{left}", file=stream, flush=True)

    return show


@command("swarm", "simulate one swarm point: transport, rate and Townsend coefficients with errors",
         configure=_swarm_configure)
def _swarm(args) -> int:
    from ..engine.time_of_flight import swarm

    check_point_arguments(args)
    options = point_options(args, frequency_Hz=args.frequency, waveform=args.waveform,
                            phase_bins=args.phase_bins, dc_offset_Td=args.dc_offset, ac_method=args.ac_method,
                            max_wall_seconds=args.max_wall_seconds)
    mixture = mixture_from_args(args)
    magnetic = magnetic_selection(args)
    progress = None if args.quiet or args.json else progress_printer()
    result = run_quietly(lambda: swarm(mixture, args.en, seed=args.seed, precision=args.precision, **options,
                                       progress=progress, **magnetic), "swarm")
    report_point(args, result)
    return 0


def _townsend_configure(p) -> None:
    point_arguments(p, 0.02, "electrons followed per pass (4096)")
    p.add_argument("--distance", type=float, default=None, metavar="M",
                   help="distance of the last tally plane from the electrode [m] (adaptive by default)")
    p.add_argument("--margin", type=float, default=None, metavar="M",
                   help="distance followed beyond the last tally plane [m] (adaptive by default)")
    p.add_argument("--compare", action="store_true",
                   help="also run the time-of-flight simulation and show its alpha/N beside the SST values")
    output_arguments(p)


@command("townsend", "simulate a steady-state Townsend experiment: alpha/N, eta/N from the spatial growth",
         configure=_townsend_configure)
def _townsend(args) -> int:
    from ..engine.townsend import townsend

    check_point_arguments(args)
    options = point_options(args, distance_m=args.distance, margin_m=args.margin)
    mixture = mixture_from_args(args)
    result = run_quietly(lambda: townsend(mixture, args.en, seed=args.seed, precision=args.precision,
                                          compare=args.compare, **options), "townsend")
    report_point(args, result)
    if not args.json:
        print(SAFETY_NOTE)
    return 0
