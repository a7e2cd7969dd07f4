"""Processes derived from the published ones: the elastic momentum transfer from an effective (total
momentum-transfer) cross section, level populations at a temperature, and de-excitation by detailed balance.

Published compilations often give an *effective* cross section, the elastic momentum transfer plus every inelastic
cross section (the form two-term Boltzmann solvers use; e.g. Phelps & Pitchford 1985, Phys. Rev. A 31, 2932). A
Monte Carlo simulation needs the elastic part alone: :func:`elastic_from_effective` subtracts the inelastic cross
sections and reports a negative difference instead of clipping it.

A rotational or vibrational excitation flagged ``superelastic`` describes a pair of levels. Their populations follow
Boltzmann's law at the temperature of their kind (:func:`level_populations`), and the reverse collision, in which
the electron gains the level energy Δ, has the Klein–Rosseland cross section (:func:`superelastic_process`).
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from dataclasses import replace

import numpy as np

from ..constants import BOLTZMANN_J_K, EV_J
from ..errors import CrossSectionError

SUPERELASTIC = "superelastic"
"""Kind of the de-excitation processes derived by detailed balance (never written in a file)."""
LEVEL_TYPES = ("rotational", "vibrational", "electronic")
EFFECTIVE_TOLERANCE = 1e-6
"""Rounding allowance of :func:`elastic_from_effective`: a difference above −1e-6 σ_eff counts as zero."""
SUPERELASTIC_FLOOR_eV = 1e-3
"""Below this energy [eV] a superelastic cross section, which grows like 1/ε where the excitation cross section is
finite at its threshold, is held at its value here: a bound for the null-collision trial frequency (our choice; it
changes nothing where σ_exc vanishes at its threshold, as in the model gas of the tests)."""
SUBTRACTED_KINDS = ("excitation", "ionization", "attachment")


def elastic_from_effective(effective, inelastic: Sequence, where: str):
    """The elastic momentum-transfer process: σ_m(ε) = σ_eff(ε) − Σ_k σ_k(ε) over the inelastic processes.

    Parameters
    ----------
    effective : Process
        The effective (total momentum-transfer) cross section, kind ``'effective'``.
    inelastic : sequence of Process
        The set's enabled excitation, ionization and two-body attachment processes (three-body ones scale with a
        partner density and are not part of an effective cross section; superelastic ones are derived later).
    where : str
        Names the file or set in messages.

    Returns
    -------
    Process
        Kind ``'elastic'``, tabulated on the union of the energies of the effective table and the inelastic tables
        (linear interpolation of each, as the sources prescribe) up to the end of the longest inelastic table —
        beyond it every inelastic cross section would be an extrapolation, not data — and constant above; with
        ``original_keyword='EFFECTIVE'``.

    Raises
    ------
    CrossSectionError
        When the difference is negative (below −EFFECTIVE_TOLERANCE σ_eff) anywhere: the energies and values are
        listed; fix the data (e.g. disable a process that the effective cross section does not contain).

    Notes
    -----
    The relation σ_eff = σ_m + Σ σ_inel holds for isotropic inelastic scattering; the compilations state that it is
    how their effective cross sections were built (Phelps & Pitchford 1985, Phys. Rev. A 31, 2932, sec. II).
    """
    parts = [p for p in inelastic if p.kind in SUBTRACTED_KINDS and p.enabled and not p.three_body]
    e_max = float(effective.energy_eV[-1])
    if parts:
        e_max = min(e_max, max(p.max_energy_eV for p in parts))
    grid = [effective.energy_eV[effective.energy_eV <= e_max], np.array([e_max])]
    for p in parts:
        grid.append(p.energy_eV[p.energy_eV <= e_max])
        if p.threshold_eV <= e_max:
            grid.append(np.array([p.threshold_eV]))
    energy = np.unique(np.concatenate(grid))
    sigma_eff = effective.sigma_m2(energy)
    sigma = sigma_eff - sum((p.sigma_m2(energy) for p in parts), np.zeros_like(energy))
    bad = np.flatnonzero(sigma < -EFFECTIVE_TOLERANCE * sigma_eff)
    if bad.size:
        listing = ", ".join(f"{energy[i]:g} eV: {sigma[i]:.3e} m2" for i in bad[:5])
        raise CrossSectionError(
            f"{where}: process '{effective.label}': the effective cross section is smaller than the sum of the "
            f"inelastic ones at {bad.size} energies ({listing}); the elastic momentum transfer would be negative. "
            "Check the tables, or disable the inelastic processes the effective cross section does not include")
    sigma = np.maximum(sigma, 0.0)  # only rounding residues (>= -EFFECTIVE_TOLERANCE sigma_eff) reach here
    note = (f"elastic momentum transfer = effective cross section minus {len(parts)} inelastic cross sections "
            "(derived on loading)")
    return replace(effective, kind="elastic", energy_eV=energy, cross_section_m2=sigma, extrapolation="constant",
                   original_keyword=effective.original_keyword or "EFFECTIVE",
                   source=f"{effective.source}; {note}" if effective.source else note)


def resolve_effective(processes: Sequence, where: str) -> tuple:
    """The processes with an ``effective`` one replaced, in place, by its elastic part
    (:func:`elastic_from_effective`)."""
    out = []
    for p in processes:
        if p.kind == "effective":
            others = [q for q in processes if q is not p]
            p = elastic_from_effective(p, others, where)
        out.append(p)
    return tuple(out)


def _levels(processes: Sequence, where: str) -> dict[str, tuple[float, float, str]]:
    """State name → (energy above the ground state [eV], statistical weight, level type) of every superelastic pair."""
    levels: dict[str, tuple[float, float, str]] = {}
    for p in processes:
        if not p.superelastic:
            continue
        g_i, g_f = p.statistical_weights
        for state, energy, weight in ((p.initial_state, p.initial_energy_eV, g_i),
                                      (p.final_state, p.initial_energy_eV + p.threshold_eV, g_f)):
            entry = (float(energy), float(weight), p.level_type)
            known = levels.setdefault(state, entry)
            if abs(known[0] - entry[0]) > 1e-9 * max(1.0, entry[0]) or known[1] != entry[1] or known[2] != entry[2]:
                raise CrossSectionError(
                    f"{where}: process '{p.label}': level '{state}' has energy {entry[0]:g} eV, weight {entry[1]:g}, "
                    f"type {entry[2]}, but another process gives {known[0]:g} eV, {known[1]:g}, {known[2]}; "
                    "give each level one energy, weight and type")
    return levels


def check_levels(processes: Sequence, where: str) -> None:
    """Set-level check of the superelastic pairs: each level has one energy, weight and type."""
    _levels(processes, where)


def level_populations(processes: Sequence, temperatures_K: dict[str, float], where: str = "set") -> dict[str, float]:
    """Boltzmann populations of the levels of the superelastic pairs of a set.

    Parameters
    ----------
    processes : sequence of Process
    temperatures_K : dict
        Level type → temperature [K] (``'rotational'``, ``'vibrational'``, ``'electronic'``).

    Returns
    -------
    dict
        State name → fraction of the species in that level: n_j/n = g_j exp(−E_j/kT)/Z with Z the sum over the
        levels of the same type that the set declares (Boltzmann distribution; the declared levels must hold the
        population that matters, e.g. a vibrational ladder v = 0…8).
    """
    levels = _levels(processes, where)
    out = {}
    for kind in {entry[2] for entry in levels.values()}:
        temperature = float(temperatures_K[kind])
        members = {s: e for s, e in levels.items() if e[2] == kind}
        lowest = min(e[0] for e in members.values())
        if temperature <= 0:
            factors = {s: (e[1] if e[0] == lowest else 0.0) for s, e in members.items()}
        else:
            kt_eV = BOLTZMANN_J_K * temperature / EV_J
            factors = {s: e[1] * math.exp(-(e[0] - lowest) / kt_eV) for s, e in members.items()}
        total = sum(factors.values())
        out.update({s: f / total for s, f in factors.items()})
    return out


def superelastic_process(process):
    """The de-excitation partner of a ``superelastic`` excitation, from detailed balance.

    Klein–Rosseland relation: σ_sup(ε) = (g_i/g_f) (ε + Δ)/ε σ_exc(ε + Δ), ε the incident energy, Δ the
    threshold, g_i and g_f the weights of the lower (initial) and upper (final) level. The electron gains Δ, which
    the returned process (kind ``'superelastic'``) keeps as its ``threshold_eV`` (no threshold applies). Below
    :data:`SUPERELASTIC_FLOOR_eV` the value at that energy is used (see there).

    References
    ----------
    Klein O & Rosseland S (1921) Z. Phys. 4 46, doi:10.1007/BF01328041 (from memory).
    """
    g_i, g_f = process.statistical_weights
    ratio = g_i / g_f
    delta = float(process.threshold_eV)

    def sigma(energy_eV):
        energy = np.maximum(np.asarray(energy_eV, dtype=float), SUPERELASTIC_FLOOR_eV)
        return ratio * (energy + delta) / energy * process.sigma_m2(energy + delta)

    shifted = process.energy_eV[process.energy_eV > delta] - delta
    energy = np.unique(np.concatenate(([0.0, SUPERELASTIC_FLOOR_eV], shifted)))
    return replace(process, kind=SUPERELASTIC, label=f"{process.label} (de-excitation)", threshold_eV=delta,
                   energy_eV=energy, cross_section_m2=sigma(energy), formula=sigma, superelastic=False,
                   initial_state=process.final_state, final_state=process.initial_state,
                   statistical_weights=(g_f, g_i), initial_energy_eV=process.initial_energy_eV + delta,
                   extrapolation="constant", source=f"detailed balance (Klein-Rosseland) of '{process.label}'")
