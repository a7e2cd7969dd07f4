"""The ``avalanche`` command line: the parser built from the registry and the entry point.

Every subcommand prints a clear message (not a traceback) and exits non-zero on bad input.
"""

from __future__ import annotations

import argparse
import sys
import warnings
from collections.abc import Sequence

from .. import __version__
from ..errors import AvalancheError
from . import breakdown, gap, library, outputs, point, sweep  # noqa: F401  (importing a command module registers it)
from .registry import _COMMANDS, SAFETY_NOTE, command

COMMAND_ORDER = ("gases", "check", "swarm", "townsend", "sweep", "plot", "table", "breakdown", "emission", "gap",
                 "demo")
"""The order of the commands in ``avalanche --help``: library, one point, sweeps, outputs, the demo."""


@command("demo", "run the demonstration job on the shipped data: an argon sweep, plots, a rate table and a "
                 "Paschen curve", configure=lambda p: p.add_argument(
                     "--out-dir", "--out", dest="out", default="runs", metavar="DIR",
                     help="folder of the outputs (default: runs; --out is the older spelling)"))
def _demo(args) -> int:
    from .demo import run_demo

    run_demo(args.out, main)
    print(SAFETY_NOTE)
    return 0


COMMAND_GROUPS = (
    ("gas data", ("gases", "check")),
    ("one point", ("swarm", "townsend", "gap")),
    ("many points", ("sweep",)),
    ("outputs from a results file", ("plot", "table", "emission", "breakdown")),
    ("try it", ("demo",)),
)
"""The command list of ``avalanche --help``, grouped by what the commands work on."""

EXAMPLES = {
    "gases": "avalanche gases --brief",
    "check": "avalanche check my_gas.toml",
    "swarm": "avalanche swarm --gas Ar --en 100 --pressure 10torr\n"
             "avalanche swarm --gas \"Ne:0.99,Ar:0.01\" --penning \"Ne:0.5\" --en 30 --json\n"
             "avalanche swarm --gas Ar --pressure 10 --en 100 --frequency 13.56e6",
    "townsend": "avalanche townsend --gas Ar --en 300 --compare",
    "gap": "avalanche gap --help   (the geometry options and an example are listed below)",
    "sweep": "avalanche sweep runs/quick.toml --out quick.h5\navalanche sweep runs/argon.toml --workers 2 --resume",
    "plot": "avalanche plot quick.h5 --out-dir plots/ --quantity alpha_N,drift_velocity",
    "table": "avalanche table quick.h5 --out rates.csv",
    "emission": "avalanche emission quick.h5 --en 100,300",
    "breakdown": "avalanche breakdown --gas Ar --gamma 0.01 --pd 0.5:20:25 --results quick.h5",
    "demo": "avalanche demo --out-dir runs",
}
"""One example per command, printed at the end of its ``--help``."""


class _HelpFormatter(argparse.RawDescriptionHelpFormatter):
    """Keeps the example's line breaks and shows every option's default that its help text does not already say."""

    def _get_help_string(self, action):
        text = action.help or ""
        if ("default" not in text and action.default not in (None, False, argparse.SUPPRESS)
                and action.option_strings and action.nargs != 0):
            text += " (default: %(default)s)"
        return text


def _command_list() -> str:
    width = max(len(name) for name in _COMMANDS)
    lines = ["commands:"]
    listed = set()
    for title, names in COMMAND_GROUPS:
        present = [name for name in names if name in _COMMANDS]
        if present:
            lines.append(f"  {title}:")
            lines += [f"    {name:<{width}}  {_COMMANDS[name][0]}" for name in present]
            listed.update(present)
    others = [name for name in _COMMANDS if name not in listed]
    if others:
        lines.append("  more:")
        lines += [f"    {name:<{width}}  {_COMMANDS[name][0]}" for name in others]
    return "\n".join(lines)


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every registered subcommand, its defaults and an example."""
    parser = argparse.ArgumentParser(
        prog="avalanche", formatter_class=_HelpFormatter,
        description="Electron swarm parameters in gases by Monte Carlo simulation.\n\n" + _command_list(),
        epilog="Run 'avalanche COMMAND --help' for a command's options and an example.")
    parser.add_argument("--version", action="version", version=f"avalanche {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", help=argparse.SUPPRESS)
    order = {name: k for k, name in enumerate(COMMAND_ORDER)}
    for name, (help_text, configure, run) in sorted(_COMMANDS.items(), key=lambda item: order.get(item[0], 99)):
        example = EXAMPLES.get(name)
        p = sub.add_parser(name, help=help_text, description=help_text, formatter_class=_HelpFormatter,
                           epilog=f"example:\n  {example.replace(chr(10), chr(10) + '  ')}" if example else None)
        configure(p)
        p.set_defaults(_run=run)
    return parser


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``avalanche`` command."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    def one_line(message, category, filename, lineno, file=None, line=None):  # no source path, no code line
        print(f"avalanche {args.command}: warning: {' '.join(str(message).split())}", file=sys.stderr)

    try:
        with warnings.catch_warnings():
            warnings.showwarning = one_line
            return int(args._run(args) or 0)
    except AvalancheError as exc:
        message = str(exc).replace("\r", "\\r").replace("\n", "\\n")  # one line, whatever the input held
        print(f"avalanche {args.command}: error: {message}", file=sys.stderr)
        return 1
    except BrokenPipeError:  # output piped into e.g. `head`
        sys.stderr.close()
        return 0
    except KeyboardInterrupt:
        print(f"avalanche {args.command}: interrupted", file=sys.stderr)
        return 130
