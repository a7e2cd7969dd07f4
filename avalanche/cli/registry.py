"""The command registry: every subcommand module registers its ``run(args)`` here with :func:`command`.

Command modules import this module (never :mod:`avalanche.cli.main`), so the command line has no import loop.
"""

from __future__ import annotations

import json
from collections.abc import Callable

import numpy as np

SAFETY_NOTE = (
    "Caution: these are computed swarm data for ideal conditions. High voltages kill; design and test real "
    "apparatus with safety margins, under your local electrical codes and with licensed practice."
)

# subcommand name -> (help, configure(parser), run(args) -> exit code)
_COMMANDS: dict[str, tuple[str, Callable, Callable]] = {}


def command(name: str, help_text: str, configure: Callable | None = None):
    """Register a subcommand: decorates ``run(args) -> int``; ``configure(parser)`` adds its arguments."""

    def decorate(run):
        _COMMANDS[name] = (help_text, configure or (lambda parser: None), run)
        return run

    return decorate


def print_json(data) -> None:
    """Print ``data`` as indented JSON (numpy values converted)."""
    def default(obj):
        if isinstance(obj, np.ndarray):
            return obj.tolist()
        if isinstance(obj, np.generic):
            return obj.item()
        raise TypeError(f"cannot serialise {type(obj).__name__}")

    print(json.dumps(data, indent=2, default=default))
