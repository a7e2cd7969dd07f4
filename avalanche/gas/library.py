"""The gas library: shipped cross-section sets, the analytic model gases of the benchmark literature, and named
mixtures.

Shipped sets live in the top-level ``crosssections/`` folder of the source tree, which the wheel installs as the
package ``avalanche.gasdata``. Set ``AVALANCHE_CROSSSECTIONS`` to a folder to put a library of your own in
front of the shipped one.
"""

from __future__ import annotations

import os
import tomllib
from functools import lru_cache
from pathlib import Path

import numpy as np

from ..constants import ANGSTROM2_m2
from ..errors import ConfigError, CrossSectionError
from .crosssections import CrossSectionSet, Process, _did_you_mean, load_set, make_set

# --------------------------------------------------------------------------------------------------- shipped files


def library_dirs() -> list[Path]:
    """Folders searched for ``<name>.toml`` sets, user folder (``AVALANCHE_CROSSSECTIONS``) first."""
    dirs = []
    user = os.environ.get("AVALANCHE_CROSSSECTIONS")
    if user:
        dirs.append(Path(user))
    dirs.append(shipped_dir())
    return dirs


def shipped_dir() -> Path:
    """The folder of the shipped cross-section sets: the ``crosssections/`` folder beside the imported package in a
    source checkout, else the installed package data (``avalanche.gasdata``)."""
    checkout = Path(__file__).resolve().parents[2] / "crosssections"
    if (checkout / "mixtures.toml").is_file():
        return checkout
    try:
        from importlib.resources import files

        path = Path(str(files("avalanche.gasdata")))
        if path.is_dir():
            return path
    except ModuleNotFoundError:
        pass
    return checkout


def _shipped_names() -> list[str]:
    names = []
    for folder in library_dirs():
        if folder.is_dir():
            names += [p.stem for p in sorted(folder.glob("*.toml")) if p.stem != "mixtures"]
    return sorted(set(names))


# ------------------------------------------------------------------------------------------------------ model gases

def _gas_process(kind, label, threshold_eV, formula, source, energy_max_eV=1000.0, **extra) -> Process:
    """An analytic process; its table samples the formula for display and saving."""
    energy = np.concatenate(([0.0], np.geomspace(1e-4, energy_max_eV, 121)))
    if threshold_eV > 0:
        energy = np.unique(np.concatenate((energy, [threshold_eV])))
    with np.errstate(divide="ignore"):
        sigma = formula(np.maximum(energy, 1e-4))
    if kind != "elastic":
        sigma = np.where(energy >= threshold_eV, sigma, 0.0)
    return Process(kind=kind, label=label, threshold_eV=threshold_eV, energy_eV=energy,
                   cross_section_m2=np.asarray(sigma, float), source=source, formula=formula, **extra)


def _inv_sqrt(coefficient_A2):
    return lambda e: coefficient_A2 * ANGSTROM2_m2 / np.sqrt(np.maximum(np.asarray(e, float), 1e-300))


def _maxwell() -> CrossSectionSet:
    src = ("Constant collision frequency model: sigma_m = 10 eps^-1/2 A^2 (eps in eV), so that sigma_m v is "
           "independent of energy; M = 4 amu (benchmark model, e.g. Ness & Robson 1986, Phys. Rev. A 34 2185)")
    procs = (_gas_process("elastic", "momentum transfer", 0.0, _inv_sqrt(10.0), src),)
    return make_set("maxwell", mass_amu=4.0, processes=procs, formula="model",
                    provenance={"sources": [src], "notes": "Analytic definition; exact.", "date": "2026-12-02"},
                    description="Maxwell model gas: constant elastic collision frequency, elastic only")


def _reid_ramp() -> CrossSectionSet:
    src = ("Reid I D (1979) Aust. J. Phys. 32 231: sigma_m = 6 A^2; inelastic sigma = 10 (eps - 0.2) A^2 above "
           "0.2 eV; M = 4 amu; gas at 0 K")
    procs = (
        _gas_process("elastic", "momentum transfer", 0.0, lambda e: np.full_like(np.asarray(e, float), 6e-20), src),
        _gas_process("excitation", "ramp", 0.2, lambda e: 10e-20 * np.maximum(np.asarray(e, float) - 0.2, 0.0),
                     src, extrapolation="constant"),
    )
    return make_set("reid-ramp", mass_amu=4.0, processes=procs, formula="model",
                    provenance={"sources": [src], "notes": "Analytic definition; exact. Use temperature_K=0.",
                                "date": "2026-12-02"},
                    description="Reid ramp model: constant elastic, linear inelastic ramp from 0.2 eV")


def _lucas_saelee(F: float = 0.5) -> CrossSectionSet:
    if not 0.0 <= F <= 1.0:
        raise ConfigError(f"lucas-saelee: parameter F = {F} must lie in [0, 1] (fraction of inelastic collisions "
                          "that ionize)")
    src = ("Lucas J & Saelee H T (1975) J. Phys. D 8 640: sigma_el = 4 eps^-1/2 A^2, sigma_ex = 0.1 (1 - F) "
           "(eps - 15.6) A^2, sigma_ion = 0.1 F (eps - 15.6) A^2 above 15.6 eV, M = 4 amu (from memory)")
    procs = [_gas_process("elastic", "momentum transfer", 0.0, _inv_sqrt(4.0), src)]
    if F < 1.0:
        procs.append(_gas_process("excitation", "excitation", 15.6,
                                  lambda e: 0.1e-20 * (1 - F) * np.maximum(np.asarray(e, float) - 15.6, 0.0), src,
                                  extrapolation="constant"))
    if F > 0.0:
        procs.append(_gas_process("ionization", "ionization", 15.6,
                                  lambda e: 0.1e-20 * F * np.maximum(np.asarray(e, float) - 15.6, 0.0), src,
                                  extrapolation="constant"))
    return make_set("lucas-saelee", mass_amu=4.0, processes=tuple(procs), formula="model",
                    ionization_energy_eV=15.6, parameters={"F": float(F)},
                    provenance={"sources": [src], "notes": f"Analytic definition with F = {F}.",
                                "date": "2026-12-02"},
                    description="Lucas-Saelee ionization model gas (parameter F)")


def _ness_robson(a_A2: float = 5e-4, p: float = 0.5) -> CrossSectionSet:
    if a_A2 < 0:
        raise ConfigError(f"ness-robson: parameter a_A2 = {a_A2} must be >= 0")
    src = ("Ness K F & Robson R E (1985) Phys. Rev. A 32 2278 attachment model: sigma_m = 10 eps^-1/2 A^2, "
           "sigma_att = a eps^p A^2, M = 4 amu (from memory)")
    procs = (
        _gas_process("elastic", "momentum transfer", 0.0, _inv_sqrt(10.0), src),
        _gas_process("attachment", "attachment", 0.0,
                     lambda e: a_A2 * ANGSTROM2_m2 * np.power(np.maximum(np.asarray(e, float), 1e-300), p), src),
    )
    return make_set("ness-robson", mass_amu=4.0, processes=procs, formula="model",
                    parameters={"a_A2": float(a_A2), "p": float(p)},
                    provenance={"sources": [src], "notes": f"Analytic definition with a = {a_A2} A^2, p = {p}.",
                                "date": "2026-12-02"},
                    description="Ness-Robson attachment model gas (parameters a_A2, p)")


MODEL_GASES = {
    "maxwell": _maxwell,
    "reid-ramp": _reid_ramp,
    "lucas-saelee": _lucas_saelee,
    "ness-robson": _ness_robson,
}


def model_gas(name: str, **parameters) -> CrossSectionSet:
    """An analytic model gas of the benchmark literature.

    Parameters
    ----------
    name : {'maxwell', 'reid-ramp', 'lucas-saelee', 'ness-robson'}
    parameters :
        ``F`` for 'lucas-saelee' (fraction of the inelastic cross section that ionizes, default 0.5);
        ``a_A2`` and ``p`` for 'ness-robson' (σ_att = a ε^p Å²).
    """
    if name not in MODEL_GASES:
        raise ConfigError(f"unknown model gas '{name}'{_did_you_mean(name, MODEL_GASES)}; "
                          f"model gases are {list(MODEL_GASES)}")
    try:
        return MODEL_GASES[name](**parameters)
    except TypeError:
        raise ConfigError(f"model gas '{name}' got unknown parameters {sorted(parameters)}") from None


# -------------------------------------------------------------------------------------------------------- look-ups

def available_gases() -> list[str]:
    """Library names of every known gas: shipped sets first, then the model gases."""
    return _shipped_names() + list(MODEL_GASES)


@lru_cache(maxsize=64)
def _load_cached(path: str, mtime: float) -> CrossSectionSet:
    return load_set(path)


def get_set(name: str, **parameters) -> CrossSectionSet:
    """The set for a library name (``'Ar'``, ``'reid-ramp'``...), a named data set of a species (``'N2@itikawa'``:
    file ``N2@itikawa.toml``, or the default file ``N2.toml`` when its ``[species] set`` is that name) or a path to
    a user's ``.toml`` file."""
    if name in MODEL_GASES:
        return model_gas(name, **parameters)
    if parameters:
        raise ConfigError(f"gas '{name}' takes no parameters, got {sorted(parameters)}")
    candidate = Path(name)
    if candidate.suffix == ".toml" or os.sep in name:
        if not candidate.is_file():
            raise ConfigError(f"cross-section file '{name}' not found")
        return _load_cached(str(candidate.resolve()), candidate.stat().st_mtime)
    for folder in library_dirs():
        path = folder / f"{name}.toml"
        if path.is_file():
            return _load_cached(str(path), path.stat().st_mtime)
    species, sep, set_name = name.partition("@")
    if sep:
        for folder in library_dirs():
            path = folder / f"{species}.toml"
            if path.is_file():
                xs = _load_cached(str(path), path.stat().st_mtime)
                if xs.set_name == set_name:
                    return xs
        sets = data_sets(species)
        if sets:
            raise ConfigError(f"unknown data set '{set_name}' of {species}{_did_you_mean(set_name, sets)}; the "
                              f"sets of {species} are {sets} (spelled '{species}@<set>')")
    known = available_gases()
    raise ConfigError(f"unknown gas '{name}'{_did_you_mean(name, known)}; known gases are {known}, "
                      "or give the path of a .toml cross-section file")


def data_sets(species: str) -> list[str]:
    """Names of the shipped data sets of ``species``, the default first (``data_sets('N2')`` → ``['phelps',
    'itikawa', ...]``); empty when the species has no named sets."""
    names = []
    for folder in library_dirs():
        default = folder / f"{species}.toml"
        if default.is_file() and not names:
            set_name = get_set(str(default)).set_name
            if set_name:
                names.append(set_name)
        names += [p.stem.partition("@")[2] for p in sorted(folder.glob(f"{species}@*.toml"))]
    return list(dict.fromkeys(names))


def named_mixtures() -> dict[str, dict]:
    """Named mixtures of the library (``crosssections/mixtures.toml``): name → {'composition', 'description',
    'source'}."""
    out: dict[str, dict] = {}
    for folder in reversed(library_dirs()):
        path = folder / "mixtures.toml"
        if not path.is_file():
            continue
        try:
            data = tomllib.loads(path.read_text())
        except tomllib.TOMLDecodeError as exc:
            raise CrossSectionError(f"{path}: malformed TOML: {exc}") from None
        for mix_name, entry in data.get("mixture", {}).items():
            if "composition" not in entry:
                raise CrossSectionError(f"{path}: [mixture.{mix_name}] has no composition")
            out[mix_name] = dict(entry)
    return out


def named_mixture(name: str) -> dict[str, float]:
    """Mole fractions of a named mixture, e.g. ``named_mixture('air')``."""
    mixtures = named_mixtures()
    if name not in mixtures:
        raise ConfigError(f"unknown named mixture '{name}'{_did_you_mean(name, mixtures)}; "
                          f"named mixtures are {sorted(mixtures)}")
    return {k: float(v) for k, v in mixtures[name]["composition"].items()}
