"""The ``gap`` command: avalanches in an electrode gap (:func:`avalanche.gap`), printed as a summary or JSON and
optionally written to HDF5."""

from __future__ import annotations

from .point import _mixture_arguments
from .registry import command, print_json

GEOMETRIES = ("plates", "coaxial", "spheres", "point-plane", "map")


def _configure(p) -> None:
    _mixture_arguments(p)
    p.add_argument("--geometry", required=True, choices=GEOMETRIES,
                   help="plates (--gap), coaxial (--inner wire, --outer tube radius), spheres (--inner, --outer), "
                        "point-plane (--tip radius, --gap), map (--map FILE)")
    p.add_argument("--gap", type=float, metavar="M", help="electrode distance [m] (plates, point-plane)")
    p.add_argument("--inner", type=float, metavar="M", help="wire or inner sphere radius [m]")
    p.add_argument("--outer", type=float, metavar="M", help="tube or outer sphere radius [m]")
    p.add_argument("--tip", type=float, metavar="M", help="tip radius of the point [m]")
    p.add_argument("--map", metavar="FILE", help="field map (.npz, .h5, .csv) for --geometry map")
    p.add_argument("--voltage", type=float, required=True, metavar="V",
                   help="voltage of the driven electrode [V] (AC: peak)")
    p.add_argument("--primaries", type=int, default=1000, help="primary electrons (1000)")
    p.add_argument("--seed", type=int, default=0, help="master random seed (0)")
    p.add_argument("--frequency", type=float, default=None, metavar="HZ", help="AC drive frequency [Hz]")
    p.add_argument("--start", default=None, metavar="X,Y,Z",
                   help="start point of the primaries [m] (default: on the electrode the electrons leave)")
    p.add_argument("--start-time", type=float, default=None, metavar="S", help="release time of the primaries [s]")
    p.add_argument("--limit", type=float, default=None, metavar="N",
                   help="stop an avalanche at N electrons (streamer criterion; default 1e8)")
    p.add_argument("--no-local-field", action="store_true", help="skip the local-field-approximation gain")
    p.add_argument("--sharing", default=None, help="ionization energy sharing: equal, uniform or opb")
    p.add_argument("--json", action="store_true", help="print the result as JSON")
    p.add_argument("--out", default=None, metavar="FILE.h5", help="also write the result to an HDF5 file")


def geometry_from_args(args):
    """The geometry object of the command's arguments."""
    from ..errors import ConfigError
    from ..gaps.geometry import Coaxial, ConcentricSpheres, FieldMap, ParallelPlates, PointPlane

    need = {"plates": ("gap",), "coaxial": ("inner", "outer"), "spheres": ("inner", "outer"),
            "point-plane": ("tip", "gap"), "map": ("map",)}[args.geometry]
    missing = [f"--{n}" for n in need if getattr(args, n) is None]
    if missing:
        raise ConfigError(f"--geometry {args.geometry} needs {', '.join(missing)}")
    if args.geometry == "plates":
        return ParallelPlates(args.gap)
    if args.geometry == "coaxial":
        return Coaxial(args.inner, args.outer)
    if args.geometry == "spheres":
        return ConcentricSpheres(args.inner, args.outer)
    if args.geometry == "point-plane":
        return PointPlane(args.tip, args.gap)
    return FieldMap.load(args.map)


@command("gap", "avalanches in an electrode gap (plates, coaxial, spheres, point-plane, field map): gain, its "
                "distribution, Polya fit, local-field gain, induced current", configure=_configure)
def _gap(args) -> int:
    from ..gaps.results import SAFETY_NOTE
    from ..gaps.simulation import gap
    from .point import mixture_from_args

    options = {"frequency_Hz": args.frequency, "start_time_s": args.start_time, "electron_limit": args.limit,
               "sharing": args.sharing}
    if args.start:
        try:
            options["start_position_m"] = tuple(float(v) for v in args.start.split(","))
        except ValueError:
            from ..errors import ConfigError

            raise ConfigError(f"--start {args.start!r}: give three numbers x,y,z in metres, e.g. 60e-6,0,0") from None
    options = {k: v for k, v in options.items() if v is not None}
    if args.no_local_field:
        options["local_field"] = False
    result = gap(geometry_from_args(args), mixture_from_args(args), args.voltage, primaries=args.primaries,
                 seed=args.seed, **options)
    if args.out:
        from ..store.gap import write_gap

        write_gap(args.out, result)
    if args.json:
        print_json(result.to_dict())
        return 0
    d = result.to_dict()
    print(f"geometry {d['geometry']}, {args.voltage:g} V, {args.primaries} primaries in {d['mixture']}")
    print(f"mean gain          {result.mean_gain}")
    print(f"Polya theta        {result.polya_theta}")
    print(f"local-field gain   {result.local_field_gain:.5g}  (ratio {result.local_field_ratio})")
    if result.streamer["reached"]:
        print(result.streamer["message"] + f", centroid {result.streamer['position_m']} m")
    for note in result.notes[:-1]:
        print(f"note: {note}")
    if args.out:
        print(f"result written to {args.out}")
    print(SAFETY_NOTE)
    return 0
