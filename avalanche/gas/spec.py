"""A mixture description that travels without the cross sections: composition, model-gas parameters, Penning
groups; it builds a :class:`~avalanche.gas.mixture.Mixture` at a given state (used by run files and tables)."""

from __future__ import annotations

import json
from dataclasses import dataclass, field
from pathlib import Path

from .library import model_gas
from .mixture import Mixture


@dataclass(frozen=True)
class MixtureSpec:
    """One gas composition of a sweep.

    Attributes
    ----------
    composition : dict
        Species (library name, or absolute path of a ``.toml`` set) → mole fraction; zero fractions removed.
    parameters : dict
        Model-gas parameters per species (e.g. ``{"lucas-saelee": {"F": 0.5}}``).
    penning : dict
        Penning transfer groups that apply to this composition → probability (see :mod:`avalanche.gas.penning`).
    label : str
        The string form, e.g. ``"Ne:0.99,Ar:0.01"`` (or ``"Ar"``).
    """

    composition: dict
    parameters: dict = field(default_factory=dict)
    penning: dict = field(default_factory=dict)

    @property
    def label(self) -> str:
        if len(self.composition) == 1:
            return species_label(next(iter(self.composition)))
        return ",".join(f"{species_label(k)}:{v:.6g}" for k, v in self.composition.items())

    @property
    def key(self) -> str:
        """Canonical text of the composition, parameters and Penning groups (exact values; ``penning`` only for
        groups with r > 0, so that r = 0 is the same mixture as no transfer, seed included); the mixture's seed
        coordinate."""
        data = {"composition": {species_label(k): v for k, v in sorted(self.composition.items())},
                "parameters": {k: self.parameters[k] for k in sorted(self.parameters)}}
        active = {k: v for k, v in sorted(self.penning.items()) if v > 0}
        if active:
            data["penning"] = active
        return json.dumps(data, sort_keys=True)

    def build(self, temperature_K: float, pressure_Pa: float | None = None,
              number_density_m3: float | None = None, vibrational_temperature_K: float | None = None) -> Mixture:
        """The :class:`~avalanche.gas.mixture.Mixture` of this composition at the given state
        (``vibrational_temperature_K``: that of the vibrational level populations, default the gas temperature)."""
        sets = {name: model_gas(name, **params) for name, params in self.parameters.items()}
        return Mixture(dict(self.composition), temperature_K=temperature_K, pressure_Pa=pressure_Pa,
                       number_density_m3=number_density_m3, sets=sets, penning=self.penning or None,
                       vibrational_temperature_K=vibrational_temperature_K)


def species_label(name: str) -> str:
    """The label of a species: its library name, or the stem of a ``.toml`` path."""
    return Path(name).stem if name.endswith(".toml") else name
