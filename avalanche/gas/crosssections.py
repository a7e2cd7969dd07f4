"""Cross-section sets: the data model, the file format, validation, interpolation and extrapolation.

A cross-section set describes the electron collisions with one target species: a header (name, formula, mass,
ionization energy, provenance) and a list of processes, each a table of cross section against electron energy.
The file format is the project's own TOML layout, documented in the README ("Cross-section files").

Interpolation is linear in energy between table points (exact for the ramp and step models of the benchmark
literature, and the natural choice for measured tables with dense points near thresholds). Above the last point a
documented extrapolation per kind applies (see :data:`DEFAULT_EXTRAPOLATION`): a Bethe-like ``ln(ε/ε_th)/ε``
fall-off for ionization and excitation (Inokuti 1971, Rev. Mod. Phys. 43 297, the high-energy form of
inelastic cross sections), a constant value for elastic and attachment processes.
"""

from __future__ import annotations

import difflib
import hashlib
import json
import math
import tomllib
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from ..errors import CrossSectionError
from .levels import LEVEL_TYPES, check_levels, resolve_effective

FORMAT_VERSION = 1
KINDS = ("elastic", "effective", "excitation", "ionization", "attachment")
"""Kinds a file may give. ``effective`` is the total momentum-transfer cross section (elastic momentum transfer plus
every inelastic cross section); loading turns it into the elastic one by :func:`elastic_from_effective`."""
INELASTIC_KINDS = ("excitation", "ionization", "attachment")
SCATTERING_MODELS = ("isotropic", "screened-coulomb")
EXTRAPOLATIONS = ("constant", "bethe", "zero")
DEFAULT_EXTRAPOLATION = {
    "elastic": "constant",
    "effective": "constant",
    "excitation": "bethe",
    "ionization": "bethe",
    "attachment": "constant",
}
UNITS_m2 = {"m2": 1.0, "cm2": 1e-4, "A2": 1e-20}
ENERGY_UNITS_eV = {"eV": 1.0, "meV": 1e-3, "keV": 1e3}
SUSPICIOUS_m2 = 1e-17
"""A cross section above 1e-17 m² (1000 Å²) is almost surely a unit mistake, whatever unit the file declares
(typical electron-atom cross sections are 1e-21–1e-18 m², i.e. 1e-17–1e-14 in cm²; common practice). A process
whose values really are that large says ``allow_large_cross_section = true``."""
IONIZATION_NOTE_LIMIT_eV = 2.0
"""Largest difference [eV] between the ionization energy and the lowest ionization threshold that an
``ionization_energy_note`` may explain (published total-ionization tables of molecules start up to about 1 eV above
the spectroscopic energy, where the measured cross section becomes appreciable)."""
IONIZATION_ENERGY_TOLERANCE_eV = 1e-3
"""[species] ionization_energy_eV and the lowest ionization threshold may differ by at most this much [eV] (the
shipped sets give both to the same digits)."""

_SPECIES_KEYS = {"name", "formula", "mass_amu", "ionization_energy_eV", "ionization_energy_note", "description",
                 "set"}
_PROVENANCE_KEYS = {"date", "sources", "notes"}
_TOP_KEYS = {"format_version", "species", "provenance", "process"}
_PROCESS_KEYS = {
    "kind", "label", "threshold_eV", "energy_eV", "cross_section", "table", "units", "source", "scattering",
    "wavelength_nm", "group", "opb_w_eV", "extrapolation", "three_body", "reference_density_m3", "enabled",
    "allow_large_cross_section",
    "third_body", "original_keyword", "initial_state", "final_state", "statistical_weights", "initial_energy_eV",
    "level_type", "superelastic",
}
_METADATA_KEYS = ("original_keyword", "initial_state", "final_state", "level_type", "third_body")


def _did_you_mean(word: str, choices) -> str:
    close = difflib.get_close_matches(word, list(choices), n=1)
    return f" (did you mean '{close[0]}'?)" if close else ""


@dataclass(frozen=True, eq=False)
class Process:
    """One electron collision process with a target species.

    Parameters
    ----------
    kind : {'elastic', 'excitation', 'ionization', 'attachment'}
        Elastic means the momentum-transfer cross section.
    label : str
        Spectroscopic term or plain name, unique within its set.
    threshold_eV : float
        Energy loss [eV] (0 for elastic; the ionization energy for ionization).
    energy_eV, cross_section_m2 : numpy.ndarray
        The table [eV], [m²]. Ignored for evaluation when ``formula`` is given.
    formula : callable, optional
        Analytic cross section ``formula(energy_eV) -> m²`` (model gases); the table then samples it.
    three_body, reference_density_m3, third_body :
        A three-body process (e.g. e + O2 + M → O2⁻ + M): the cross section is given for a partner density
        ``reference_density_m3`` [m⁻³] and scales with the partner's actual density. The partner M is
        ``third_body``: a species name of the mixture (absent species: density 0), ``"*"`` for the whole gas, or
        empty for the target species itself.
    enabled : bool
        Disabled processes are kept in the set but not simulated.
    original_keyword, initial_state, final_state : str
        Structured metadata: the keyword of the source table (e.g. ``EXCITATION``), and the initial and final
        state of the target (e.g. ``"X(v=0)"``, ``"X(v=1)"``).
    statistical_weights : tuple of two floats, optional
        (g_initial, g_final), the statistical weights of the two levels.
    initial_energy_eV : float
        Energy of the initial level above the ground state [eV] (0 for a ground-state process).
    level_type : {'rotational', 'vibrational', 'electronic', ''}
        Which temperature populates the levels (see :func:`level_populations`).
    superelastic : bool
        Add the reverse (de-excitation) process by detailed balance (:func:`superelastic_process`) and weight both
        by the Boltzmann populations of their initial levels. Needs ``statistical_weights`` and ``level_type``.
    """

    kind: str
    label: str
    threshold_eV: float
    energy_eV: np.ndarray
    cross_section_m2: np.ndarray
    source: str = ""
    extrapolation: str = ""
    scattering: str = "isotropic"
    wavelength_nm: float | None = None
    group: str | None = None
    opb_w_eV: float | None = None
    three_body: bool = False
    reference_density_m3: float | None = None
    enabled: bool = True
    formula: Callable[[np.ndarray], np.ndarray] | None = field(default=None, repr=False)
    units: str = "m2"
    table_path: str | None = None
    third_body: str = ""
    original_keyword: str = ""
    initial_state: str = ""
    final_state: str = ""
    statistical_weights: tuple[float, float] | None = None
    initial_energy_eV: float = 0.0
    level_type: str = ""
    superelastic: bool = False

    def __post_init__(self):
        if not self.extrapolation:
            object.__setattr__(self, "extrapolation", DEFAULT_EXTRAPOLATION.get(self.kind, "constant"))

    @property
    def is_inelastic(self) -> bool:
        return self.kind in INELASTIC_KINDS

    @property
    def max_energy_eV(self) -> float:
        """Last tabulated energy [eV] (infinite for an analytic process)."""
        return math.inf if self.formula is not None else float(self.energy_eV[-1])

    def sigma_m2(self, energy_eV) -> np.ndarray:
        """Cross section [m²] at ``energy_eV`` [eV] by linear interpolation and the process's extrapolation.

        Zero below the threshold for inelastic processes; between the threshold and a first table point above
        it, linear from zero at the threshold.
        """
        energy = np.asarray(energy_eV, dtype=float)
        if self.formula is not None:
            sigma = np.asarray(self.formula(energy), dtype=float) * np.ones_like(energy)
            if self.is_inelastic:
                sigma = np.where(energy >= self.threshold_eV, sigma, 0.0)
            return sigma
        e_tab, s_tab = self.energy_eV, self.cross_section_m2
        if self.is_inelastic and e_tab[0] > self.threshold_eV:
            e_tab = np.concatenate(([self.threshold_eV], e_tab))
            s_tab = np.concatenate(([0.0], s_tab))
        sigma = np.interp(energy, e_tab, s_tab)
        above = energy > e_tab[-1]
        if np.any(above):
            sigma = np.where(above, self._extrapolate(energy, e_tab[-1], s_tab[-1]), sigma)
        if self.is_inelastic:
            sigma = np.where(energy >= self.threshold_eV, sigma, 0.0)
        return sigma

    def _extrapolate(self, energy, e_last, s_last):
        if self.extrapolation == "zero":
            return np.zeros_like(energy)
        if self.extrapolation == "bethe" and self.threshold_eV > 0 and e_last > self.threshold_eV:
            with np.errstate(divide="ignore", invalid="ignore"):
                shape = np.log(np.maximum(energy, e_last) / self.threshold_eV) / np.maximum(energy, e_last)
            return s_last * shape / (math.log(e_last / self.threshold_eV) / e_last)
        return np.full_like(energy, s_last)


@dataclass(frozen=True, eq=False)
class CrossSectionSet:
    """The collision processes of electrons with one species, with its header and provenance."""

    name: str
    formula: str
    mass_amu: float
    ionization_energy_eV: float | None
    processes: tuple[Process, ...]
    provenance: dict
    description: str = ""
    path: str | None = None
    parameters: dict = field(default_factory=dict)
    set_name: str = ""
    """Name of the data set (``'phelps'`` in ``'N2@phelps'``); empty for sets without alternatives."""
    ionization_energy_note: str = ""
    """Why the ionization energy differs from the lowest ionization threshold of the tables, when it does (e.g. a
    published table that starts at a rounded or an apparent threshold); see :func:`check_ionization_energy`."""

    @property
    def energy_range_eV(self) -> tuple[float, float]:
        """Smallest and largest tabulated energy over all processes [eV]."""
        lo = min(float(p.energy_eV[0]) for p in self.processes)
        hi = max(p.max_energy_eV for p in self.processes)
        return lo, hi

    def process(self, label: str) -> Process:
        """The process called ``label``."""
        for proc in self.processes:
            if proc.label == label:
                return proc
        raise CrossSectionError(
            f"{self.name}: no process labelled '{label}'{_did_you_mean(label, [p.label for p in self.processes])};"
            f" labels are {[p.label for p in self.processes]}"
        )

    def to_dict(self) -> dict:
        """The set as plain data (the TOML layout with inline tables in m²)."""
        procs = []
        for p in self.processes:
            entry = {"kind": p.kind, "label": p.label, "threshold_eV": float(p.threshold_eV)}
            entry["energy_eV"] = [float(x) for x in p.energy_eV]
            entry["cross_section"] = [float(x) for x in p.cross_section_m2]
            entry["units"] = "m2"
            for key in ("source", "scattering", "wavelength_nm", "group", "opb_w_eV", "extrapolation",
                        "reference_density_m3", *_METADATA_KEYS):
                value = getattr(p, key)
                if value not in (None, ""):
                    entry[key] = value
            if p.statistical_weights is not None:
                entry["statistical_weights"] = [float(g) for g in p.statistical_weights]
            if p.initial_energy_eV:
                entry["initial_energy_eV"] = float(p.initial_energy_eV)
            if p.three_body:
                entry["three_body"] = True
            if p.superelastic:
                entry["superelastic"] = True
            if not p.enabled:
                entry["enabled"] = False
            procs.append(entry)
        species = {"name": self.name, "formula": self.formula, "mass_amu": float(self.mass_amu)}
        if self.ionization_energy_eV is not None:
            species["ionization_energy_eV"] = float(self.ionization_energy_eV)
        if self.ionization_energy_note:
            species["ionization_energy_note"] = self.ionization_energy_note
        if self.description:
            species["description"] = self.description
        if self.set_name:
            species["set"] = self.set_name
        return {"format_version": FORMAT_VERSION, "species": species, "provenance": dict(self.provenance),
                "process": procs}

    def checksum(self) -> str:
        """SHA-256 of the set's physical content (header and every table in SI), stable across formatting."""
        data = self.to_dict()
        data.pop("provenance")
        text = json.dumps(data, sort_keys=True, separators=(",", ":"))
        return hashlib.sha256(text.encode()).hexdigest()


# ---------------------------------------------------------------------------------------------------------- loading

def _require(table: dict, key: str, where: str, fix: str):
    if key not in table:
        raise CrossSectionError(f"{where}: missing field '{key}'; {fix}")
    return table[key]


def _as_float(value, where: str, key: str) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        raise CrossSectionError(f"{where}: field '{key}' must be a number, got {value!r}")
    value = float(value)
    if not math.isfinite(value):
        raise CrossSectionError(f"{where}: field '{key}' must be finite, got {value!r}")
    return value


def _read_csv_table(path: Path, where: str) -> tuple[np.ndarray, np.ndarray]:
    """The two columns of a CSV table. Messages give the file and line, never the line's text: a path that is
    not a cross-section table (e.g. a system file) must not have its content echoed."""
    from ..errors import read_user_text

    if not path.exists():
        raise CrossSectionError(f"{where}: table file '{path}' not found; give a path relative to the TOML file")
    text_of_file = read_user_text(path, f"{where}: table file", CrossSectionError)
    rows = []
    for lineno, line in enumerate(text_of_file.splitlines(), start=1):
        text = line.split("#", 1)[0].strip()
        if not text:
            continue
        parts = text.replace(",", " ").split()
        if len(parts) != 2:
            raise CrossSectionError(
                f"{where}: table {path}:{lineno}: expected two columns (energy, cross section), got {len(parts)}; "
                "is this a cross-section table?")
        try:
            rows.append((float(parts[0]), float(parts[1])))
        except ValueError:
            raise CrossSectionError(f"{where}: table {path}:{lineno}: a cell is not a number; is this a "
                                    "cross-section table?") from None
    if not rows:
        raise CrossSectionError(f"{where}: table {path} has no data rows")
    arr = np.array(rows, dtype=float)
    return arr[:, 0], arr[:, 1]


def validate_table(energy_eV: np.ndarray, sigma_m2: np.ndarray, kind: str, threshold_eV: float,
                   where: str) -> None:
    """Check one process table; raise :class:`CrossSectionError` naming ``where`` and the offending value."""
    if energy_eV.shape != sigma_m2.shape or energy_eV.ndim != 1:
        raise CrossSectionError(
            f"{where}: energy_eV has {energy_eV.size} values but cross_section has {sigma_m2.size}; "
            "give one cross section per energy")
    if energy_eV.size < 2:
        raise CrossSectionError(f"{where}: a table needs at least 2 points, got {energy_eV.size}")
    for name, arr in (("energy_eV", energy_eV), ("cross_section", sigma_m2)):
        bad = np.flatnonzero(~np.isfinite(arr))
        if bad.size:
            raise CrossSectionError(f"{where}: {name}[{bad[0]}] = {arr[bad[0]]} is not finite; remove or fix it")
        neg = np.flatnonzero(arr < 0)
        if neg.size:
            raise CrossSectionError(f"{where}: {name}[{neg[0]}] = {arr[neg[0]]} is negative; values must be >= 0")
    steps = np.diff(energy_eV)
    bad = np.flatnonzero(steps <= 0)
    if bad.size:
        i = bad[0]
        what = "duplicate" if steps[i] == 0 else "decreasing"
        raise CrossSectionError(
            f"{where}: energies must be strictly increasing, but energy_eV[{i}] = {energy_eV[i]} and "
            f"energy_eV[{i + 1}] = {energy_eV[i + 1]} are {what}; sort the table and merge duplicates")
    if kind in INELASTIC_KINDS:
        below = np.flatnonzero((energy_eV < threshold_eV * (1 - 1e-9)) & (sigma_m2 > 0))
        if below.size:
            i = below[0]
            raise CrossSectionError(
                f"{where}: cross section {sigma_m2[i]:g} m2 at {energy_eV[i]} eV is below the threshold "
                f"{threshold_eV} eV; an inelastic cross section must be zero below its threshold")


def _as_bool(raw: dict, key: str, where: str, default: bool) -> bool:
    value = raw.get(key, default)
    if not isinstance(value, bool):
        raise CrossSectionError(f"{where}: field '{key}' = {value!r} must be a TOML boolean, true or false "
                                "(without quotes)")
    return value


def _table(value, where: str, name: str) -> dict:
    if not isinstance(value, dict):
        raise CrossSectionError(f"{where}: '{name}' must be a table [{name}] with fields, got {value!r}")
    return value


def check_ionization_energy(ionization_energy_eV: float | None, processes: Sequence[Process], where: str,
                            note: str = "") -> None:
    """The species' ionization energy: positive, and equal (within :data:`IONIZATION_ENERGY_TOLERANCE_eV`) to the
    lowest threshold of its ionization processes, since Penning transfer and energy sharing use it — unless
    ``note`` (``[species] ionization_energy_note``) says why a published table starts elsewhere; even then the two
    may differ by at most :data:`IONIZATION_NOTE_LIMIT_eV`."""
    if ionization_energy_eV is None:
        return
    if ionization_energy_eV <= 0:
        raise CrossSectionError(f"{where}: [species] ionization_energy_eV = {ionization_energy_eV} must be positive "
                                "(the first ionization energy in eV, e.g. 15.76 for argon)")
    thresholds = [p.threshold_eV for p in processes if p.kind == "ionization"]
    if not thresholds:
        return
    difference = abs(min(thresholds) - ionization_energy_eV)
    if difference <= IONIZATION_ENERGY_TOLERANCE_eV:
        return
    if note.strip() and difference <= IONIZATION_NOTE_LIMIT_eV:
        return
    reason = (f"more than {IONIZATION_NOTE_LIMIT_eV:g} eV even with the ionization_energy_note" if note.strip() else
              "make them equal (the ionization energy is the threshold of ionization to the ground-state ion), or "
              "say why the tables start elsewhere in [species] ionization_energy_note")
    raise CrossSectionError(f"{where}: [species] ionization_energy_eV = {ionization_energy_eV} differs from the "
                            f"lowest ionization threshold_eV = {min(thresholds)}: {reason}")


def _parse_process(raw: dict, index: int, base: Path, where_file: str) -> Process:
    where = f"{where_file}: process #{index + 1}"
    if not isinstance(raw, dict):
        raise CrossSectionError(f"{where}: each [[process]] must be a table")
    if "label" in raw:
        where = f"{where_file}: process {str(raw['label'])!r}"
    for key in raw:
        if key not in _PROCESS_KEYS:
            raise CrossSectionError(f"{where}: unknown field {key!r}{_did_you_mean(key, _PROCESS_KEYS)}")
    kind = _require(raw, "kind", where, f"set kind to one of {list(KINDS)}")
    if kind not in KINDS:
        raise CrossSectionError(f"{where}: unknown kind '{kind}'{_did_you_mean(str(kind), KINDS)}; "
                                f"choose one of {list(KINDS)}")
    label = str(_require(raw, "label", where, "give the process a label (spectroscopic term or plain name)"))
    threshold = _as_float(_require(raw, "threshold_eV", where,
                                   "give threshold_eV (0 for elastic; the energy loss otherwise)"),
                          where, "threshold_eV")
    if threshold < 0:
        raise CrossSectionError(f"{where}: threshold_eV = {threshold} is negative; it must be >= 0")
    if kind == "elastic" and threshold != 0:
        raise CrossSectionError(f"{where}: threshold_eV = {threshold} for an elastic process; elastic collisions "
                                "lose no threshold energy: set threshold_eV = 0 (or use kind = \"excitation\")")
    flags = {key: _as_bool(raw, key, where, default) for key, default in
             (("three_body", False), ("enabled", True), ("allow_large_cross_section", False), ("superelastic", False))}
    units = raw.get("units", "m2")
    if not isinstance(units, str) or units not in UNITS_m2:
        raise CrossSectionError(f"{where}: unknown units '{units}'{_did_you_mean(str(units), UNITS_m2)}; "
                                f"choose one of {list(UNITS_m2)}")
    table_path = None
    if "table" in raw:
        if "energy_eV" in raw or "cross_section" in raw:
            raise CrossSectionError(f"{where}: give either 'table' or inline 'energy_eV'/'cross_section', not both")
        if not isinstance(raw["table"], str) or not raw["table"].strip():
            raise CrossSectionError(f"{where}: field 'table' must be the path of a CSV file in quotes, got "
                                    f"{raw['table']!r}")
        table_path = raw["table"]
        energy, sigma = _read_csv_table(base / table_path, where)
    else:
        energy = _require(raw, "energy_eV", where, "give energy_eV and cross_section arrays, or a 'table' CSV path")
        sigma = _require(raw, "cross_section", where, "give a cross_section array beside energy_eV")
        try:
            energy = np.array(energy, dtype=float)
            sigma = np.array(sigma, dtype=float)
        except (TypeError, ValueError):
            raise CrossSectionError(f"{where}: energy_eV and cross_section must be arrays of numbers") from None
    sigma = sigma * UNITS_m2[units]
    validate_table(energy, sigma, kind, threshold, where)
    if sigma.max() > SUSPICIOUS_m2 and not flags["allow_large_cross_section"]:
        i = int(np.argmax(sigma))
        hint = "the values look like cm2: add units = \"cm2\"" if "units" not in raw else "check units and the values"
        raise CrossSectionError(
            f"{where}: cross section {sigma[i]:g} m2 at {energy[i]} eV (units = \"{units}\") is implausibly large "
            f"(> {SUSPICIOUS_m2:g} m2); {hint}, or add allow_large_cross_section = true if they really are that "
            "large")
    scattering = raw.get("scattering", "isotropic")
    if scattering not in SCATTERING_MODELS:
        hint = _did_you_mean(str(scattering), SCATTERING_MODELS)
        raise CrossSectionError(f"{where}: unknown scattering '{scattering}'{hint}; choose {list(SCATTERING_MODELS)}")
    extrapolation = raw.get("extrapolation", DEFAULT_EXTRAPOLATION[kind])
    if extrapolation not in EXTRAPOLATIONS:
        raise CrossSectionError(f"{where}: unknown extrapolation '{extrapolation}'; choose {list(EXTRAPOLATIONS)}")
    optional = {}
    for key in ("wavelength_nm", "opb_w_eV", "reference_density_m3"):
        if key in raw:
            optional[key] = _as_float(raw[key], where, key)
            if optional[key] <= 0:
                raise CrossSectionError(f"{where}: {key} = {optional[key]} must be positive")
    three_body = flags["three_body"]
    if three_body and "reference_density_m3" not in raw:
        raise CrossSectionError(f"{where}: a three_body process needs reference_density_m3 (the partner density "
                                "[m^-3] for which the cross section is given)")
    if three_body and kind != "attachment":
        raise CrossSectionError(f"{where}: three_body is supported for attachment only, got kind '{kind}'")
    if "third_body" in raw and not three_body:
        raise CrossSectionError(f"{where}: third_body = {raw['third_body']!r} needs three_body = true")
    metadata = {key: str(raw[key]) for key in _METADATA_KEYS if key in raw}
    if metadata.get("level_type", "") not in ("", *LEVEL_TYPES):
        hint = _did_you_mean(metadata["level_type"], LEVEL_TYPES)
        raise CrossSectionError(f"{where}: unknown level_type '{metadata['level_type']}'{hint}; choose "
                                f"{list(LEVEL_TYPES)}")
    if "statistical_weights" in raw:
        weights = raw["statistical_weights"]
        if not (isinstance(weights, list) and len(weights) == 2):
            raise CrossSectionError(f"{where}: statistical_weights must be [g_initial, g_final], got {weights!r}")
        weights = tuple(_as_float(g, where, "statistical_weights") for g in weights)
        if min(weights) <= 0:
            raise CrossSectionError(f"{where}: statistical_weights = {list(weights)} must be positive")
        optional["statistical_weights"] = weights
    if "initial_energy_eV" in raw:
        optional["initial_energy_eV"] = _as_float(raw["initial_energy_eV"], where, "initial_energy_eV")
        if optional["initial_energy_eV"] < 0:
            raise CrossSectionError(f"{where}: initial_energy_eV = {optional['initial_energy_eV']} is negative")
    superelastic = flags["superelastic"]
    if superelastic:
        if kind != "excitation" or threshold <= 0:
            raise CrossSectionError(f"{where}: superelastic = true needs an excitation with threshold_eV > 0")
        missing = [k for k in ("statistical_weights", "level_type", "initial_state", "final_state") if k not in raw]
        if missing:
            raise CrossSectionError(f"{where}: superelastic = true needs {missing} (the two levels, their "
                                    "statistical weights and which temperature populates them)")
    return Process(kind=kind, label=label, threshold_eV=threshold, energy_eV=energy, cross_section_m2=sigma,
                   source=str(raw.get("source", "")), extrapolation=extrapolation, scattering=scattering,
                   group=raw.get("group"), three_body=three_body, enabled=flags["enabled"],
                   units=units, table_path=table_path, superelastic=superelastic, **metadata, **optional)


def check_processes(processes: Sequence[Process], where: str) -> None:
    """Set-level checks: at least one elastic process, unique labels."""
    if not processes:
        raise CrossSectionError(f"{where}: the set has no [[process]] entries")
    momentum = [p for p in processes if p.kind in ("elastic", "effective")]
    if not momentum:
        raise CrossSectionError(f"{where}: no elastic (momentum-transfer) process; every set needs one, "
                                "add a [[process]] with kind = \"elastic\" (or \"effective\")")
    if any(p.kind == "effective" for p in processes) and len(momentum) > 1:
        raise CrossSectionError(f"{where}: an 'effective' cross section already holds the elastic momentum "
                                f"transfer; remove the other momentum-transfer processes {[p.label for p in momentum]}")
    seen = set()
    for p in processes:
        if p.label in seen:
            raise CrossSectionError(f"{where}: two processes are labelled '{p.label}'; labels must be unique")
        seen.add(p.label)


def parse_set(data: dict, where: str, base: Path | None = None) -> CrossSectionSet:
    """Build a :class:`CrossSectionSet` from parsed TOML data; ``where`` names the source in messages."""
    base = Path(".") if base is None else base
    for key in data:
        if key not in _TOP_KEYS:
            raise CrossSectionError(f"{where}: unknown top-level field {key!r}{_did_you_mean(key, _TOP_KEYS)}")
    version = data.get("format_version", FORMAT_VERSION)
    if version != FORMAT_VERSION:
        raise CrossSectionError(f"{where}: format_version = {version!r}; this avalanche reads version {FORMAT_VERSION}")
    species = _table(_require(data, "species", where, "add a [species] table with name, formula, mass_amu"), where,
                     "species")
    for key in species:
        if key not in _SPECIES_KEYS:
            raise CrossSectionError(f"{where}: [species] unknown field {key!r}{_did_you_mean(key, _SPECIES_KEYS)}")
    name = str(_require(species, "name", f"{where}: [species]", "give the species name"))
    mass = _as_float(_require(species, "mass_amu", f"{where}: [species]", "give the target mass in amu"),
                     f"{where}: [species]", "mass_amu")
    if mass <= 0:
        raise CrossSectionError(f"{where}: [species] mass_amu = {mass} must be positive")
    ion = species.get("ionization_energy_eV")
    if ion is not None:
        ion = _as_float(ion, f"{where}: [species]", "ionization_energy_eV")
    note = species.get("ionization_energy_note", "")
    if not isinstance(note, str):
        raise CrossSectionError(f"{where}: [species] ionization_energy_note must be text in quotes, got {note!r}")
    provenance = _table(data.get("provenance", {}), where, "provenance")
    for key in provenance:
        if key not in _PROVENANCE_KEYS:
            hint = _did_you_mean(key, _PROVENANCE_KEYS)
            raise CrossSectionError(f"{where}: [provenance] unknown field {key!r}{hint}")
    raw_processes = data.get("process", [])
    if not isinstance(raw_processes, list):
        raise CrossSectionError(f"{where}: 'process' must be an array of tables ([[process]])")
    processes = tuple(_parse_process(raw, i, base, where) for i, raw in enumerate(raw_processes))
    check_processes(processes, where)
    processes = resolve_effective(processes, where)
    check_levels(processes, where)
    check_ionization_energy(ion, processes, where, note)
    return CrossSectionSet(name=name, formula=str(species.get("formula", name)), mass_amu=mass,
                           ionization_energy_eV=ion, processes=processes, provenance=dict(provenance),
                           description=str(species.get("description", "")), path=None,
                           set_name=str(species.get("set", "")), ionization_energy_note=note)


def load_set(path: str | Path) -> CrossSectionSet:
    """Load and validate a cross-section set file.

    Raises
    ------
    CrossSectionError
        With the file name, the process label, the field and the offending value.
    """
    from ..errors import read_user_text

    path = Path(path)
    if not path.exists():
        raise CrossSectionError(f"{path}: no such cross-section file")
    try:
        data = tomllib.loads(read_user_text(path, "cross-section file", CrossSectionError))
    except tomllib.TOMLDecodeError as exc:
        raise CrossSectionError(f"{path}: malformed TOML: {exc}") from None
    result = parse_set(data, str(path), base=path.parent)
    return replace(result, path=str(path))


# ----------------------------------------------------------------------------------------------------------- saving

def _toml_value(value) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(float(value)) if isinstance(value, float) else str(value)
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(_toml_value(v) for v in value) + "]"
    raise TypeError(f"cannot write {value!r} as TOML")


def dumps_set(xs: CrossSectionSet) -> str:
    """The set as TOML text in the project's format (inline tables, values in m², full float precision)."""
    return dumps_data(xs.to_dict())


def dumps_data(data: dict) -> str:
    """Plain set data (the layout of :meth:`CrossSectionSet.to_dict`) as TOML text in the project's format."""
    lines = [f"format_version = {FORMAT_VERSION}", "", "[species]"]
    lines += [f"{k} = {_toml_value(v)}" for k, v in data["species"].items()]
    lines += ["", "[provenance]"]
    lines += [f"{k} = {_toml_value(v)}" for k, v in data["provenance"].items()]
    for proc in data["process"]:
        lines += ["", "[[process]]"]
        lines += [f"{k} = {_toml_value(v)}" for k, v in proc.items()]
    return "\n".join(lines) + "\n"


def save_set(xs: CrossSectionSet, path: str | Path) -> Path:
    """Write ``xs`` to ``path`` in the project's TOML format; :func:`load_set` reads it back unchanged."""
    path = Path(path)
    path.write_text(dumps_set(xs))
    return path


# --------------------------------------------------------------------------------------------------------- importing

def process_from_table(table, *, kind: str, label: str, threshold_eV: float, energy_unit: str = "eV",
                       cross_section_unit: str = "m2", source: str = "", **metadata) -> Process:
    """Make a :class:`Process` from a plain two-column table (energy, cross section), e.g. digitised from a paper.

    Parameters
    ----------
    table : path or array-like of shape (n, 2)
        A CSV/whitespace file (``#`` comments) or an array of (energy, cross section) rows.
    kind, label, threshold_eV :
        As in the file format.
    energy_unit : {'eV', 'meV', 'keV'}
    cross_section_unit : {'m2', 'cm2', 'A2'}
    metadata :
        Optional process fields (``wavelength_nm``, ``opb_w_eV``, ``group``, ``scattering``, ``extrapolation``).
    """
    where = f"imported table '{label}'"
    if energy_unit not in ENERGY_UNITS_eV:
        raise CrossSectionError(f"{where}: unknown energy unit '{energy_unit}'; choose {list(ENERGY_UNITS_eV)}")
    if cross_section_unit not in UNITS_m2:
        raise CrossSectionError(f"{where}: unknown cross-section unit '{cross_section_unit}'; choose {list(UNITS_m2)}")
    if isinstance(table, (str, Path)):
        energy, sigma = _read_csv_table(Path(table), where)
    else:
        arr = np.asarray(table, dtype=float)
        if arr.ndim != 2 or arr.shape[1] != 2:
            raise CrossSectionError(
                f"{where}: expected an (n, 2) array of (energy, cross section), got shape {arr.shape}")
        energy, sigma = arr[:, 0].copy(), arr[:, 1].copy()
    raw = {"kind": kind, "label": label, "threshold_eV": threshold_eV,
           "energy_eV": list(energy * ENERGY_UNITS_eV[energy_unit]), "cross_section": list(sigma),
           "units": cross_section_unit, "source": source, **metadata}
    return _parse_process(raw, 0, Path("."), where)


def make_set(name: str, *, mass_amu: float, processes: Sequence[Process], formula: str | None = None,
             ionization_energy_eV: float | None = None, provenance: dict | None = None,
             description: str = "", parameters: dict | None = None,
             ionization_energy_note: str = "") -> CrossSectionSet:
    """Assemble a validated :class:`CrossSectionSet` in Python (e.g. from :func:`process_from_table` results);
    ``ionization_energy_note`` as in :func:`check_ionization_energy`."""
    where = f"set '{name}'"
    if not (isinstance(mass_amu, (int, float)) and mass_amu > 0 and math.isfinite(mass_amu)):
        raise CrossSectionError(f"{where}: mass_amu = {mass_amu!r} must be a positive number")
    check_processes(tuple(processes), where)
    processes = resolve_effective(tuple(processes), where)
    check_levels(processes, where)
    check_ionization_energy(ionization_energy_eV, processes, where, ionization_energy_note)
    return CrossSectionSet(name=name, formula=formula or name, mass_amu=float(mass_amu),
                           ionization_energy_eV=ionization_energy_eV, processes=tuple(processes),
                           provenance=dict(provenance or {}), description=description,
                           parameters=dict(parameters or {}), ionization_energy_note=ionization_energy_note)
