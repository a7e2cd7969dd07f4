"""Subcommands that drive simulations and outputs (registered into :mod:`avalanche.cli`)."""

from __future__ import annotations

from .cli import SAFETY_NOTE, command, print_json
from .library import available_gases, get_set

DEMO_FIELDS_Td = (100.0, 200.0, 400.0)
"""The demo's scenario (our own): an argon lamp-cell gas at 300 K and 1 kPa, three reduced fields."""


@command("demo", "run the demonstration job on the shipped data (a few argon swarm points)")
def _demo(args) -> int:
    from .engine import swarm
    from .mixture import Mixture

    print(f"avalanche demo: {len(available_gases())} gases in the library, all validated on load")
    for name in available_gases():
        get_set(name)
    mixture = Mixture("Ar", temperature_K=300.0, pressure_Pa=1000.0)
    print(f"argon at 300 K, 1 kPa (N = {mixture.number_density_m3:.3e} m^-3); Monte Carlo swarm points:")
    header = f"{'E/N [Td]':>9s} {'mean energy [eV]':>18s} {'W bulk [m/s]':>20s} {'alpha/N [m2]':>24s} {'events':>10s}"
    print(header)
    for field in DEMO_FIELDS_Td:
        r = swarm(mixture, field, seed=1, precision=0.05, max_events=120_000_000)
        e, w, a = r.mean_energy_eV, r.drift_velocity_bulk, r.alpha_N
        print(f"{field:9.0f} {e.value:10.3f} ± {e.stderr:5.3f} {w.value:11.4g} ± {w.stderr:6.2g}"
              f" {a.value:12.4g} ± {a.stderr:8.2g} {r.events:10.3g}")
    print(SAFETY_NOTE)
    return 0


def _mixture_arguments(p) -> None:
    p.add_argument("--gas", default="Ar", help='gas or mixture, e.g. "Ar", "Ne:0.99,Ar:0.01", "air" (default Ar)')
    p.add_argument("--temperature", type=float, default=300.0, metavar="K", help="gas temperature [K] (300)")
    density = p.add_mutually_exclusive_group()
    density.add_argument("--pressure", type=float, metavar="PA", help="gas pressure [Pa] (default 1 atm)")
    density.add_argument("--density", type=float, metavar="M3", help="gas number density [m^-3]")


def mixture_from_args(args):
    """The :class:`~avalanche.mixture.Mixture` described by the common gas arguments."""
    from .mixture import Mixture

    return Mixture(args.gas, temperature_K=args.temperature, pressure_Pa=args.pressure,
                   number_density_m3=args.density)


def _swarm_configure(p) -> None:
    _mixture_arguments(p)
    p.add_argument("--en", type=float, required=True, metavar="TD", help="reduced field E/N [Td]")
    p.add_argument("--precision", type=float, default=0.01, help="target relative standard error (0.01)")
    p.add_argument("--max-events", type=float, default=None, help="collision-event budget (null events included)")
    p.add_argument("--electrons", type=int, default=None, help="electrons per ensemble")
    p.add_argument("--seed", type=int, default=0, help="master random seed (0)")
    p.add_argument("--sharing", default=None, help="ionization energy sharing: equal, uniform or opb")
    p.add_argument("--scattering", default=None, help="angular scattering: isotropic or screened-coulomb")
    p.add_argument("--frequency", type=float, default=None, metavar="HZ",
                   help="AC drive frequency [Hz] (--en is then the amplitude); omit for DC")
    p.add_argument("--waveform", default=None, metavar="FILE.csv",
                   help="AC: periodic waveform as a two-column CSV (phase fraction or time_s, value), peak = --en")
    p.add_argument("--phase-bins", type=int, default=None, help="AC: phase bins per period (32)")
    p.add_argument("--dc-offset", type=float, default=None, metavar="TD", help="AC: DC part E_dc/N [Td] (0)")
    p.add_argument("--json", action="store_true", help="print the result as JSON (value and stderr per quantity)")
    p.add_argument("--out", default=None, metavar="FILE.h5", help="also write the result to an HDF5 file")


@command("swarm", "simulate one swarm point: transport, rate and Townsend coefficients with errors",
         configure=_swarm_configure)
def _swarm(args) -> int:
    from .engine import swarm

    options = {k: v for k, v in (("max_events", args.max_events), ("electrons", args.electrons),
                                 ("sharing", args.sharing), ("scattering", args.scattering),
                                 ("frequency_Hz", args.frequency), ("waveform", args.waveform),
                                 ("phase_bins", args.phase_bins), ("dc_offset_Td", args.dc_offset)) if v is not None}
    if "max_events" in options:
        options["max_events"] = int(options["max_events"])
    result = swarm(mixture_from_args(args), args.en, seed=args.seed, precision=args.precision, **options)
    if args.out:
        from .io import save_result

        save_result(args.out, result)
    if args.json:
        print_json(result.to_dict())
    else:
        print(result.format_table())
        if args.out:
            print(f"result written to {args.out}")
    return 0
