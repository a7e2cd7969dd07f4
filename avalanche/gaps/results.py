"""Results of an avalanche run in an electrode gap: gain per primary, its distribution and Pólya fit, arrivals,
maps, induced current, the local-field comparison and the run's provenance.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

import numpy as np
from scipy import optimize, special

from ..engine.results import Estimate, _json_float, _plain

SPACE_CHARGE_NOTE = ("space charge is neglected: electrons move in the vacuum field of the electrodes, and ions are "
                     "not followed (the induced current is the electrons' part)")
SAFETY_NOTE = ("Caution: computed avalanches in an idealised gap. High voltages kill; design and test real apparatus "
               "with safety margins, under your local electrical codes and with licensed practice.")


def polya_fit(gains) -> tuple[Estimate, float]:
    """θ of the Pólya distribution fitted to the positive ``gains`` by maximum likelihood, and the mean gain.

    The Pólya distribution P(n) ∝ (n/n̄)^θ exp(−(1 + θ) n/n̄) is a gamma distribution of shape k = 1 + θ and mean
    n̄; its maximum-likelihood k solves ln k − ψ(k) = ln n̄ − ⟨ln n⟩, with the asymptotic variance
    k / (N (k ψ′(k) − 1)) (common practice for the gamma law; Pólya form after Byrne J 1962, Proc. R. Soc. Edinb.
    A 66 33 — from memory). θ = 0 is the Furry (exponential) limit.

    Returns
    -------
    (Estimate, float)
        θ with its standard error, and the mean of the positive gains. NaN for fewer than 2 positive values.
    """
    g = np.asarray(gains, dtype=float)
    g = g[g > 0]
    if g.size < 2 or np.ptp(g) == 0:
        return Estimate(math.nan, math.nan), float(g.mean()) if g.size else math.nan
    mean = float(g.mean())
    s = math.log(mean) - float(np.log(g).mean())
    if s <= 0:
        return Estimate(math.nan, math.nan), mean

    def f(k):
        return math.log(k) - special.digamma(k) - s

    k = optimize.brentq(f, 1e-6, 1e8)
    var = k / (g.size * (k * special.polygamma(1, k) - 1.0))
    return Estimate(k - 1.0, math.sqrt(var) if var > 0 else math.nan), mean


def polya_density(n, mean_gain: float, theta: float) -> np.ndarray:
    """The Pólya density (1 + θ)^(1+θ)/Γ(1 + θ) (n/n̄)^θ exp(−(1 + θ) n/n̄) / n̄ at ``n``."""
    k = 1.0 + theta
    x = np.asarray(n, dtype=float) / mean_gain
    return np.exp(k * math.log(k) - special.gammaln(k) + (k - 1) * np.log(np.maximum(x, 1e-300)) - k * x) / mean_gain


@dataclass(frozen=True, eq=False)
class GainDistribution:
    """The gain of each primary (the electrons it became: 1 + created − attached, weighted by population control).

    Attributes
    ----------
    per_primary : ndarray
        Gain of each primary, in primary order.
    controlled : ndarray of bool
        Whether population control acted on that avalanche (its gain is then an unbiased estimate, not a count).
    """

    per_primary: np.ndarray
    controlled: np.ndarray

    def histogram(self, bins: int | np.ndarray = 40) -> tuple[np.ndarray, np.ndarray]:
        """(edges, probability per bin) of the gains, log-spaced bins from 1 to the largest gain by default."""
        g = self.per_primary
        if np.ndim(bins) == 0:
            top = max(float(g.max()) if g.size else 1.0, 2.0)
            bins = np.unique(np.round(np.geomspace(1.0, top + 1.0, int(bins) + 1)))
        counts, edges = np.histogram(g, bins=bins)
        return edges, counts / max(g.size, 1)

    def to_dict(self) -> dict:
        g = self.per_primary
        edges, prob = self.histogram()
        q = np.quantile(g, [0.1, 0.5, 0.9]) if g.size else [math.nan] * 3
        return {"primaries": int(g.size), "mean": _json_float(float(g.mean()) if g.size else math.nan),
                "variance": _json_float(float(g.var(ddof=1)) if g.size > 1 else math.nan),
                "quantiles_10_50_90": [_json_float(float(v)) for v in q],
                "zero_fraction": _json_float(float(np.mean(g == 0)) if g.size else math.nan),
                "controlled_fraction": _json_float(float(self.controlled.mean()) if g.size else math.nan),
                "histogram_edges": edges.tolist(), "histogram_probability": prob.tolist()}


@dataclass(eq=False)
class GapResult:
    """Result of :func:`avalanche.gap`.

    Attributes
    ----------
    mean_gain : Estimate
        Mean gain per primary with its standard error.
    gain_distribution : GainDistribution
        Gains of every primary.
    polya_theta : Estimate
        θ of the Pólya fit (0: Furry/exponential).
    local_field_gain : float
        exp(∫ (α − η) ds) along the field line from the start point, with α(E/N), η(E/N) of the package's swarm
        (local-field approximation); NaN when ``local_field=False``.
    local_field_ratio : Estimate
        mean_gain / local_field_gain.
    mean_collected : dict of Estimate
        Electrons absorbed per primary by the 'driven' and the 'grounded' electrode (and 'outside' a map).
    current : dict
        ``time_s`` (bin centres), ``bin_width_s``, ``driven_A`` (the electrons' induced current on the driven
        electrode per primary, Shockley–Ramo; the grounded electrode carries its negative), ``charge_C`` per bin.
    charge_balance : dict
        Per primary: ``induced_C`` (∫ I dt on the driven electrode) and ``expected_C`` = e Σ (φ_w(end) − φ_w(start))
        over the electrons (arrival at the driven electrode counts 1, at the grounded 0), per electrode.
    arrivals : dict
        ``time_edges_s`` and weighted arrivals per primary per bin at each electrode; ``samples`` (x, y, z, t,
        electrode) of the first electrons to arrive in each avalanche.
    maps : dict
        ``rho_edges_m``, ``z_edges_m`` and, per name ('created' and each excitation or ionization process), the
        events per primary per (ρ, z) bin.
    streamer : dict
        ``limit``, ``reached`` (primaries whose avalanche reached it), ``time_s`` and ``position_m`` of the first.
    field_line : dict
        ``s_m``, ``position_m``, ``reduced_field_Td`` and ``alpha_eff_per_m`` along the field line.
    alpha_table : dict
        ``reduced_field_Td``, ``alpha_N``, ``eta_N`` [m²] used for the local-field gain, and its ``source``.
    """

    mean_gain: Estimate
    gain_distribution: GainDistribution
    polya_theta: Estimate
    local_field_gain: float
    local_field_ratio: Estimate
    mean_collected: dict
    current: dict
    charge_balance: dict
    arrivals: dict
    maps: dict
    streamer: dict
    field_line: dict
    alpha_table: dict
    inputs: dict
    anomalies: dict
    events: int = 0
    steps: int = 0
    real_collisions: int = 0
    cpu_seconds: float = 0.0
    wall_seconds: float = 0.0
    notes: list = field(default_factory=lambda: [SPACE_CHARGE_NOTE, SAFETY_NOTE])

    def to_dict(self, arrays: bool = False) -> dict:
        """Plain-JSON summary with the public names (``mean_gain``, ``gain_distribution``, ``local_field_gain``,
        ``polya_theta``, ...); the large arrays only with ``arrays=True``."""
        out = {"mean_gain": self.mean_gain.to_dict(), "gain_distribution": self.gain_distribution.to_dict(),
               "polya_theta": self.polya_theta.to_dict(), "local_field_gain": _json_float(self.local_field_gain),
               "local_field_ratio": self.local_field_ratio.to_dict(),
               "mean_collected": {k: v.to_dict() for k, v in self.mean_collected.items()},
               "streamer": _plain(self.streamer), "charge_balance": _plain(self.charge_balance),
               "geometry": self.inputs.get("geometry"), "voltage_V": self.inputs.get("voltage_V"),
               "mixture": self.inputs.get("label"), "events": self.events, "steps": self.steps,
               "real_collisions": self.real_collisions, "cpu_seconds": self.cpu_seconds,
               "wall_seconds": self.wall_seconds, "anomalies": _plain(self.anomalies), "notes": list(self.notes)}
        if arrays:
            out.update(current=_plain(self.current), field_line=_plain(self.field_line),
                       alpha_table=_plain(self.alpha_table))
        return out

    def __repr__(self) -> str:
        return (f"GapResult(mean_gain={self.mean_gain}, polya_theta={self.polya_theta}, "
                f"local_field_gain={self.local_field_gain:.5g}, streamer_reached={self.streamer.get('reached')})")

