"""The ``avalanche`` command line.

Every subcommand prints a clear message (not a traceback) and exits non-zero on bad input.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Callable, Sequence

import numpy as np

from . import __version__
from .crosssections import CrossSectionSet, load_set
from .errors import AvalancheError
from .library import available_gases, get_set, named_mixtures

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


def _summary_rows(xs: CrossSectionSet) -> list[str]:
    rows = []
    for p in xs.processes:
        extra = []
        if p.wavelength_nm:
            extra.append(f"λ={p.wavelength_nm:g} nm")
        if p.opb_w_eV:
            extra.append(f"w={p.opb_w_eV:g} eV")
        if p.three_body:
            extra.append("three-body")
        if not p.enabled:
            extra.append("disabled")
        hi = "analytic" if p.formula is not None else f"{p.energy_eV[0]:g}–{p.energy_eV[-1]:g} eV"
        peak = float(np.max(p.cross_section_m2))
        rows.append(f"    {p.kind:<11s} {p.label:<32s} threshold {p.threshold_eV:8.4f} eV  table {hi:<18s}"
                    f" peak {peak:9.3e} m2  {' '.join(extra)}")
    return rows


def describe_set(xs: CrossSectionSet, provenance: bool = True) -> str:
    """A readable summary of a set: header, processes, energy range and provenance."""
    lo, hi = xs.energy_range_eV
    ion = f"{xs.ionization_energy_eV:g} eV" if xs.ionization_energy_eV else "-"
    lines = [f"{xs.name}  ({xs.formula}, {xs.mass_amu:g} amu, ionization energy {ion}, "
             f"{len(xs.processes)} processes, {lo:g}–{hi:g} eV)"]
    if xs.description:
        lines.append(f"  {xs.description}")
    lines += _summary_rows(xs)
    if provenance:
        for src in xs.provenance.get("sources", []):
            lines.append(f"  source: {src}")
        if xs.provenance.get("date"):
            lines.append(f"  date: {xs.provenance['date']}")
    lines.append(f"  checksum: {xs.checksum()[:16]}")
    return "\n".join(lines)


@command("gases", "list the gas library: species, processes, energy range, provenance",
         configure=lambda p: p.add_argument("--brief", action="store_true", help="omit provenance lines"))
def _gases(args) -> int:
    for name in available_gases():
        print(describe_set(get_set(name), provenance=not args.brief))
        print()
    mixtures = named_mixtures()
    if mixtures:
        print("Named mixtures:")
        for name, entry in sorted(mixtures.items()):
            comp = ", ".join(f"{k}:{v}" for k, v in entry["composition"].items())
            print(f"  {name:<8s} {comp}   ({entry.get('source', '')})")
    return 0


@command("check", "validate a cross-section file and print a summary",
         configure=lambda p: p.add_argument("files", nargs="+", metavar="FILE",
                                            help="cross-section file(s) (.toml) to validate"))
def _check(args) -> int:
    for path in args.files:
        xs = load_set(path)
        print(f"OK {path}")
        print(describe_set(xs))
    return 0


def build_parser() -> argparse.ArgumentParser:
    """The argument parser with every registered subcommand."""
    _load_commands()
    parser = argparse.ArgumentParser(prog="avalanche",
                                     description="Electron swarm parameters in gases by Monte Carlo simulation.")
    parser.add_argument("--version", action="version", version=f"avalanche {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for name, (help_text, configure, run) in _COMMANDS.items():
        p = sub.add_parser(name, help=help_text, description=help_text)
        configure(p)
        p.set_defaults(_run=run)
    return parser


def _load_commands() -> None:
    """Import the modules that register further subcommands."""
    from . import cli_commands, outputs_cli, sst_cli, sweep_cli  # noqa: F401


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``avalanche`` command."""
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "_run", None):
        parser.print_help()
        return 2
    try:
        return int(args._run(args) or 0)
    except AvalancheError as exc:
        print(f"avalanche {args.command}: error: {exc}", file=sys.stderr)
        return 1
    except BrokenPipeError:  # output piped into e.g. `head`
        sys.stderr.close()
        return 0
    except KeyboardInterrupt:
        print(f"avalanche {args.command}: interrupted", file=sys.stderr)
        return 130


def print_json(data) -> None:
    """Print ``data`` as indented JSON (numpy values converted)."""
    def default(obj):
        if isinstance(obj, np.ndarray):
            return obj.tolist()
        if isinstance(obj, np.generic):
            return obj.item()
        raise TypeError(f"cannot serialise {type(obj).__name__}")

    print(json.dumps(data, indent=2, default=default))


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
