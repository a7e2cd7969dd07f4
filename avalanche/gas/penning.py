"""Penning transfer in gas mixtures: an excited atom of species A ionizes a molecule of species B whose ionization
energy lies below the excitation energy (A* + B → A + B⁺ + e), as in Ne–Ar, Ne–Xe, Ar–Xe or He–N₂.

The model
---------
A fraction r (the transfer probability, set by the user per level group, default 0) of the excitations of the
chosen levels of A is turned into ionizations of B: at such an excitation a new electron is created at the
position and time of the excitation, isotropically, with the energy ε_level − I_B. The exciting electron loses the
level's threshold as for any excitation (its kinematics do not change). Taking the transfer as instantaneous and
giving the whole excess energy to the new electron is our documented choice: it neglects the lifetime of the
excited atom (its diffusion and the delay, which matter for time-resolved signals, not for the steady-state
swarm parameters computed here) and the share of the excess carried by the heavy particles (at most a few eV,
small against the energies the field supplies between ionizing collisions). Competing losses of the excited
atom (radiation, collisional quenching, three-body processes) are what makes r < 1: r is the probability that
the excitation ends in a Penning ionization, and it depends on the admixture fraction and the pressure, which is
why it is an input and not a property of the gases.

Level groups (keys of ``penning``)
----------------------------------
``"<A>"``
    Every enabled excitation of species A whose threshold lies above the receiver's ionization energy.
``"<A>:<pattern>"``
    The enabled excitations of A whose label is ``pattern``, starts with ``pattern`` or, when ``pattern`` holds a
    glob character (``*``, ``?``), matches it as a glob (``fnmatch``), and those whose ``group`` field in the
    cross-section file equals ``pattern``: with the shipped neon set ``"Ne:1s"`` selects the four 3s levels (labels
    ``1s5 …`` to ``1s2 …``), ``"Ne:2p"`` the lumped 3p manifold, ``"Ne:Ne*"`` every level of the file's group
    ``Ne*``. Every matched level must lie above the receiver's ionization energy.
``… -> <B>``
    Either form may end in ``-> B`` to name the receiving species. Without it the receiver is the component other
    than A with the lowest ionization energy.

A level matched by two groups is an error; groups with r = 0 are validated and then dropped, so a mixture whose
probabilities are all 0 is the same mixture (same results, bit for bit) as one without ``penning``.

References
----------
Penning F M (1927) Naturwissenschaften 15 818 (the transfer process; from memory).
Kruithof A A & Penning F M (1937) Physica 4 430 (Townsend coefficients of Ne with 10⁻⁵–10⁻² Ar; from memory).
"""

from __future__ import annotations

import fnmatch
import math
from collections.abc import Mapping
from dataclasses import dataclass

import numpy as np

from ..errors import ConfigError
from .crosssections import _did_you_mean

RECEIVER_ARROW = "->"
"""Separates a level group from its explicit receiving species, e.g. ``"Ne:2p->Ar"``."""
_GLOB_CHARACTERS = "*?"


@dataclass(frozen=True)
class PenningChannel:
    """One Penning-capable level: the excitation ``level`` of ``donor`` transferring to ``receiver``.

    Attributes
    ----------
    group : str
        The user's key that selected the level (e.g. ``"Ne:1s"``).
    donor, level : str
        Species A and the label of its excitation process.
    level_eV : float
        Threshold of the excitation [eV].
    receiver : str
        Species B.
    receiver_ionization_eV : float
        Ionization energy of B [eV].
    probability : float
        Transfer probability r, 0 < r ≤ 1.
    """

    group: str
    donor: str
    level: str
    level_eV: float
    receiver: str
    receiver_ionization_eV: float
    probability: float

    @property
    def electron_energy_eV(self) -> float:
        """Energy of the created electron, ε_level − I_B [eV]."""
        return self.level_eV - self.receiver_ionization_eV

    @property
    def key(self) -> str:
        """Result key of the channel's pseudo-process (its Penning ionization count and rate coefficient)."""
        return f"Penning {self.donor}:{self.level} {RECEIVER_ARROW} {self.receiver}"

    def describe(self) -> dict:
        """Plain data for results files."""
        return {"group": self.group, "donor": self.donor, "level": self.level, "level_eV": self.level_eV,
                "receiver": self.receiver, "receiver_ionization_eV": self.receiver_ionization_eV,
                "probability": self.probability, "electron_energy_eV": self.electron_energy_eV}


def ionization_energy_eV(cross_sections) -> float | None:
    """Ionization energy of a species [eV]: the set's header value, else the lowest threshold of its enabled
    ionization processes, else None (it cannot receive a Penning transfer)."""
    if cross_sections.ionization_energy_eV is not None:
        return float(cross_sections.ionization_energy_eV)
    thresholds = [p.threshold_eV for p in cross_sections.processes if p.kind == "ionization" and p.enabled]
    return float(min(thresholds)) if thresholds else None


def split_key(key: str) -> tuple[str, str, str | None]:
    """``"A:pattern->B"`` → (``"A"``, ``"pattern"``, ``"B"``); pattern ``""`` and receiver None when absent."""
    group, arrow, receiver = key.partition(RECEIVER_ARROW)
    donor, _, pattern = group.partition(":")
    return donor.strip(), pattern.strip(), (receiver.strip() if arrow else None)


def parse_penning(text: str) -> dict[str, float]:
    """Parse the command-line form ``"Ne:0.3"`` or ``"Ne:2p:0.3,Ne:1s->Ar:0.1"`` (GROUP:PROBABILITY, separated by
    commas; the probability follows the last colon).

    Raises
    ------
    ConfigError
        An entry without a probability, or a probability that is not a number.
    """
    out: dict[str, float] = {}
    for item in text.split(","):
        group, sep, value = item.strip().rpartition(":")
        if not sep or not group.strip():
            raise ConfigError(f"Penning transfer '{text}': entry '{item.strip()}' must be GROUP:PROBABILITY, e.g. "
                              "\"Ne:0.3\" or \"Ne:2p:0.3,Ne:1s->Ar:0.1\"")
        try:
            out[group.strip()] = float(value)
        except ValueError:
            raise ConfigError(f"Penning transfer '{text}': probability '{value}' of '{group.strip()}' is not a "
                              "number; give a value between 0 and 1") from None
    return out


def _probability(key: str, value) -> float:
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(float(value)) \
            or not 0.0 <= float(value) <= 1.0:
        raise ConfigError(f"penning['{key}'] = {value!r}: a Penning transfer probability must be a number between 0 "
                          "and 1 (the fraction of the group's excitations that ionize the receiver)")
    return float(value)


def _matches(process, pattern: str) -> bool:
    label = process.label
    if not pattern or label.startswith(pattern) or process.group == pattern:
        return True
    return any(c in pattern for c in _GLOB_CHARACTERS) and fnmatch.fnmatchcase(label, pattern)


def _receiver(key: str, donor: str, named: str | None, energies: dict[str, float | None]) -> tuple[str, float]:
    others = {name: e for name, e in energies.items() if name != donor}
    if named is not None:
        if named == donor:
            raise ConfigError(f"penning['{key}']: the receiver '{named}' is the excited species itself; name another "
                              f"component of the mixture ({sorted(others)})")
        if named not in others:
            raise ConfigError(f"penning['{key}']: receiver '{named}' is not a component of the mixture"
                              f"{_did_you_mean(named, others)}; components are {sorted(energies)}")
        if others[named] is None:
            raise ConfigError(f"penning['{key}']: receiver '{named}' has no ionization energy (its cross-section set "
                              "gives none and has no ionization process), so it cannot be Penning-ionized")
        return named, float(others[named])
    candidates = {name: e for name, e in others.items() if e is not None}
    if not candidates:
        raise ConfigError(f"penning['{key}']: the mixture has no other component with an ionization energy to "
                          f"receive the transfer from '{donor}' (components: {sorted(energies)}); add the receiving "
                          "gas to the mixture or remove this group")
    name = min(candidates, key=lambda n: (candidates[n], n))
    return name, float(candidates[name])


def penning_channels(penning: Mapping | None, components) -> tuple[PenningChannel, ...]:
    """Validate the ``penning`` mapping of a mixture against its components and list the Penning-capable levels.

    Parameters
    ----------
    penning : mapping of str to float, or None
        Level group (see the module notes) → transfer probability r in [0, 1].
    components : sequence
        The mixture's components (``name`` and ``cross_sections`` attributes).

    Returns
    -------
    tuple of PenningChannel
        One per selected level with r > 0, in the order of the groups and then of the donor's processes.

    Raises
    ------
    ConfigError
        Not a mapping; an unknown species or receiver (with a did-you-mean); a group that matches no enabled
        excitation; a matched level at or below the receiver's ionization energy; a level matched twice; r outside
        [0, 1].
    """
    if penning is None:
        return ()
    if not isinstance(penning, Mapping):
        raise ConfigError(f"penning must be a mapping of level group to transfer probability, e.g. "
                          f"{{\"Ne\": 0.3}} or {{\"Ne:1s\": 0.2, \"Ne:2p\": 0.5}}; got {penning!r}")
    sets = {c.name: c.cross_sections for c in components}
    energies = {name: ionization_energy_eV(xs) for name, xs in sets.items()}
    channels: list[PenningChannel] = []
    owner: dict[tuple[str, str], str] = {}
    for key, value in penning.items():
        if not isinstance(key, str) or not key.strip():
            raise ConfigError(f"penning: key {key!r} must be a level group such as \"Ne\" or \"Ne:1s\"")
        probability = _probability(key, value)
        donor, pattern, named = split_key(key)
        if donor not in sets:
            raise ConfigError(f"penning['{key}']: species '{donor}' is not a component of the mixture"
                              f"{_did_you_mean(donor, sets)}; components are {sorted(sets)}")
        receiver, threshold = _receiver(key, donor, named, energies)
        levels = [p for p in sets[donor].processes if p.kind == "excitation" and p.enabled]
        matched = [p for p in levels if _matches(p, pattern)]
        if pattern and not matched:
            labels = [p.label for p in levels]
            raise ConfigError(f"penning['{key}']: no enabled excitation of {donor} matches '{pattern}'"
                              f"{_did_you_mean(pattern, labels)}; its excitation labels are {labels} (a group "
                              "matches a label exactly, by its start, as a glob with * and ?, or the file's group "
                              "field)")
        if pattern:
            below = [p for p in matched if p.threshold_eV <= threshold]
            if below:
                p = below[0]
                raise ConfigError(f"penning['{key}']: level '{p.label}' of {donor} ({p.threshold_eV:.4g} eV) cannot "
                                  f"ionize {receiver}, I = {threshold:.4g} eV; select only levels above "
                                  f"{threshold:.4g} eV or name another receiver with '{RECEIVER_ARROW} SPECIES'")
        else:
            matched = [p for p in matched if p.threshold_eV > threshold]
            if not matched:
                top = max((p.threshold_eV for p in levels), default=float("nan"))
                raise ConfigError(f"penning['{key}']: no excitation level of {donor} (highest {top:.4g} eV) can "
                                  f"ionize {receiver}, I = {threshold:.4g} eV; Penning transfer needs levels of the "
                                  "excited species above the receiver's ionization energy")
        for p in matched:
            if (donor, p.label) in owner:
                raise ConfigError(f"penning: level '{p.label}' of {donor} is selected by both "
                                  f"'{owner[(donor, p.label)]}' and '{key}'; give each level one probability")
            owner[(donor, p.label)] = key
            if probability > 0.0:
                channels.append(PenningChannel(group=key, donor=donor, level=p.label, level_eV=float(p.threshold_eV),
                                               receiver=receiver, receiver_ionization_eV=threshold,
                                               probability=probability))
    return tuple(channels)


def applicable_penning(penning: Mapping, species) -> dict[str, float]:
    """The groups of ``penning`` that apply to a mixture of ``species``: those whose donor and receiver (the named
    one, or any other species when none is named) are present. Used by sweeps over compositions, where one
    Penning table serves every mixture (a pure balance gas then runs without transfer)."""
    present = set(species)
    out = {}
    for key, value in penning.items():
        donor, _, named = split_key(key)
        if donor in present and (named in present if named is not None else len(present - {donor}) > 0):
            out[key] = value
    return out


def kernel_arrays(channels, row_species, row_labels) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The kernel's per-process Penning arrays over the real process rows followed by one pseudo-process row per
    channel (in the order of ``channels``).

    Parameters
    ----------
    channels : sequence of PenningChannel
    row_species, row_labels : sequence of str
        Species and process label of each real row of the process table.

    Returns
    -------
    (ndarray, ndarray, ndarray)
        Transfer probability r_k, created electron's energy [eV] and pseudo-row index (−1 where there is none),
        each of length ``len(row_species) + len(channels)``.
    """
    rows = len(row_species)
    size = rows + len(channels)
    probability = np.zeros(size)
    energy_eV = np.zeros(size)
    slot = np.full(size, -1, dtype=np.int64)
    index = {(s, label): k for k, (s, label) in enumerate(zip(row_species, row_labels, strict=True))}
    for j, channel in enumerate(channels):
        k = index[(channel.donor, channel.level)]
        probability[k] = channel.probability
        energy_eV[k] = channel.electron_energy_eV
        slot[k] = rows + j
    return probability, energy_eV, slot
