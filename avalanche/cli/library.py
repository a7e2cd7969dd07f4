"""The ``gases`` and ``check`` commands: the gas library and the validation of cross-section files."""

from __future__ import annotations

import re

import numpy as np

from ..gas.crosssections import CrossSectionSet, load_set
from ..gas.library import available_gases, get_set, named_mixtures
from .registry import command


def _summary_rows(xs: CrossSectionSet) -> list[str]:
    rows = []
    for p in xs.processes:
        extra = []
        if p.wavelength_nm:
            extra.append(f"λ={p.wavelength_nm:g} nm")
        if p.opb_w_eV:
            extra.append(f"w={p.opb_w_eV:g} eV")
        if p.three_body:
            extra.append(f"three-body (M = {p.third_body or xs.name})")
        if p.superelastic:
            extra.append(f"+ de-excitation ({p.level_type})")
        if not p.enabled:
            extra.append("disabled")
        hi = "analytic" if p.formula is not None else f"{p.energy_eV[0]:g}–{p.energy_eV[-1]:g} eV"
        peak = float(np.max(p.cross_section_m2))
        rows.append(f"    {p.kind:<11s} {p.label:<32s} threshold {p.threshold_eV:8.4f} eV  table {hi:<18s}"
                    f" peak {peak:9.3e} m2  {' '.join(extra)}")
    return rows


def describe_set(xs: CrossSectionSet, provenance: bool = True, library_name: str | None = None) -> str:
    """A readable summary of a set: header, processes, energy range and provenance (``library_name``: the name the
    library knows it by, to mark a species' default data set)."""
    lo, hi = xs.energy_range_eV
    ion = f"{xs.ionization_energy_eV:g} eV" if xs.ionization_energy_eV else "-"
    lines = [f"{xs.name}  ({xs.formula}, {xs.mass_amu:g} amu, ionization energy {ion}, "
             f"{len(xs.processes)} processes, {lo:g}–{hi:g} eV)"]
    if xs.set_name:
        default = ", the default" if library_name == xs.name else ""
        lines[0] += f"  data set '{xs.set_name}' ({xs.name}@{xs.set_name}{default})"
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


def short_source(xs: CrossSectionSet, width: int = 100) -> str:
    """The first source of a set's provenance, cut before its DOI (or its description after a colon) to ``width``
    characters: authors, year and publication, for one-line listings."""
    sources = xs.provenance.get("sources", [])
    if not xs.set_name and "from memory" in xs.provenance.get("notes", ""):
        return "written for avalanche from the literature, values from memory (see its provenance)"
    if not sources:
        return "no source given"
    text = re.split(r", doi:|: (?=[a-z])", sources[0], maxsplit=1)[0]
    return text if len(text) <= width else text[:width - 1] + "…"


def data_set_index(names: list[str]) -> list[str]:
    """One line per data set of the shipped library, grouped by species, the default first: how to select it
    (``SPECIES`` or ``SPECIES@SET``) and its source."""
    lines = ["Data sets (select with SPECIES for the default, SPECIES@SET for an alternative):"]
    for name in names:
        xs = get_set(name)
        if xs.formula == "model":
            continue
        spelling = name if xs.set_name == "" or "@" in name else f"{name} (= {name}@{xs.set_name}, the default)"
        lines.append(f"  {spelling:<38s} {short_source(xs)}")
    return lines


@command("gases", "list the gas library: data sets with their sources, processes, energy range, provenance",
         configure=lambda p: p.add_argument("--brief", action="store_true", help="omit provenance lines"))
def _gases(args) -> int:
    print("\n".join(data_set_index(available_gases())))
    print()
    for name in available_gases():
        print(describe_set(get_set(name), provenance=not args.brief, library_name=name))
        print()
    mixtures = named_mixtures()
    if mixtures:
        print("Named mixtures:")
        for name, entry in sorted(mixtures.items()):
            comp = ", ".join(f"{k}:{v}" for k, v in entry["composition"].items())
            print(f"  {name:<8s} {comp}   ({entry.get('source', '')})")
    return 0


@command("check", "validate cross-section files and run files, reporting every problem of each",
         configure=lambda p: p.add_argument("files", nargs="+", metavar="FILE",
                                            help="cross-section set(s) or run file(s) (.toml) to validate"))
def _check(args) -> int:
    import sys

    from ..sweep.runfile import load_runfile
    from .check import file_problems

    failed = 0
    for path in args.files:
        kind, problems = file_problems(path)
        if problems:
            failed += 1
            print(f"avalanche check: {path}: {len(problems)} problem(s) in this {kind}:", file=sys.stderr)
            for number, problem in enumerate(problems, start=1):
                print(f"  {number}. {' '.join(problem.split())}", file=sys.stderr)
            continue
        print(f"OK {path} ({kind})")
        if kind == "cross-section set":
            print(describe_set(load_set(path)))
        else:
            runfile = load_runfile(path)
            print(f"  {len(runfile.points)} points, {len(runfile.mixtures)} mixture(s), output {runfile.output}")
    return 1 if failed else 0
