"""Subcommands that drive simulations and outputs (registered into :mod:`avalanche.cli`)."""

from __future__ import annotations

from .cli import command, describe_set
from .library import available_gases, get_set


@command("demo", "run the demonstration job on the shipped data")
def _demo(args) -> int:
    print("avalanche demo: the gas library")
    for name in available_gases():
        xs = get_set(name)
        print(describe_set(xs, provenance=False))
        print()
    print(f"{len(available_gases())} gases loaded and validated.")
    return 0
