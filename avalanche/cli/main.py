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
                     "--out", default="runs", metavar="DIR", help="folder of the outputs (default: runs)"))
def _demo(args) -> int:
    from .demo import run_demo

    run_demo(args.out, main)
    print(SAFETY_NOTE)
    return 0


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every registered subcommand."""
    parser = argparse.ArgumentParser(prog="avalanche",
                                     description="Electron swarm parameters in gases by Monte Carlo simulation.")
    parser.add_argument("--version", action="version", version=f"avalanche {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    order = {name: k for k, name in enumerate(COMMAND_ORDER)}
    for name, (help_text, configure, run) in sorted(_COMMANDS.items(), key=lambda item: order.get(item[0], 99)):
        p = sub.add_parser(name, help=help_text, description=help_text)
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
