"""The ``avalanche townsend`` subcommand (registered into :mod:`avalanche.cli`)."""

from __future__ import annotations

from .cli import SAFETY_NOTE, command, print_json
from .cli_commands import mixture_from_args, point_arguments


def _configure(p) -> None:
    point_arguments(p, 0.02, "electrons followed per pass (4096)")
    p.add_argument("--distance", type=float, default=None, metavar="M",
                   help="distance of the last tally plane from the electrode [m] (adaptive by default)")
    p.add_argument("--margin", type=float, default=None, metavar="M",
                   help="distance followed beyond the last tally plane [m] (adaptive by default)")
    p.add_argument("--compare", action="store_true",
                   help="also run the time-of-flight simulation and show its alpha/N beside the SST values")
    p.add_argument("--json", action="store_true", help="print the result as JSON (value and stderr per quantity)")
    p.add_argument("--out", default=None, metavar="FILE.h5", help="also write the result to an HDF5 file")


@command("townsend", "simulate a steady-state Townsend experiment: alpha/N, eta/N from the spatial growth",
         configure=_configure)
def _townsend(args) -> int:
    from .sst import townsend

    options = {k: v for k, v in (("max_events", args.max_events), ("electrons", args.electrons),
                                 ("sharing", args.sharing), ("scattering", args.scattering),
                                 ("distance_m", args.distance), ("margin_m", args.margin)) if v is not None}
    if "max_events" in options:
        options["max_events"] = int(options["max_events"])
    result = townsend(mixture_from_args(args), args.en, seed=args.seed, precision=args.precision,
                      compare=args.compare, **options)
    if args.out:
        from .io import save_result

        save_result(args.out, result)
    if args.json:
        print_json(result.to_dict())
    else:
        print(result.format_table())
        if args.out:
            print(f"result written to {args.out}")
        print(SAFETY_NOTE)
    return 0
