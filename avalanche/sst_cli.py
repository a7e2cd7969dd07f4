"""The ``avalanche townsend`` subcommand (registered into :mod:`avalanche.cli`)."""

from __future__ import annotations

from .cli import SAFETY_NOTE, command
from .cli_commands import mixture_from_args, output_arguments, point_arguments, point_options, report_point


def _configure(p) -> None:
    point_arguments(p, 0.02, "electrons followed per pass (4096)")
    p.add_argument("--distance", type=float, default=None, metavar="M",
                   help="distance of the last tally plane from the electrode [m] (adaptive by default)")
    p.add_argument("--margin", type=float, default=None, metavar="M",
                   help="distance followed beyond the last tally plane [m] (adaptive by default)")
    p.add_argument("--compare", action="store_true",
                   help="also run the time-of-flight simulation and show its alpha/N beside the SST values")
    output_arguments(p)


@command("townsend", "simulate a steady-state Townsend experiment: alpha/N, eta/N from the spatial growth",
         configure=_configure)
def _townsend(args) -> int:
    from .sst import townsend

    options = point_options(args, distance_m=args.distance, margin_m=args.margin)
    result = townsend(mixture_from_args(args), args.en, seed=args.seed, precision=args.precision,
                      compare=args.compare, **options)
    report_point(args, result)
    if not args.json:
        print(SAFETY_NOTE)
    return 0
