"""The local-field-approximation gain along a field line: exp(∫ (α − η) ds) with α(E/N), η(E/N) of the package.

In the local-field approximation the electrons at each point are in equilibrium with the local E/N, so the
number of electrons grows as dn/ds = (α − η)(E(s)/N) n along the electrons' drift path (Townsend J S 1910, *The
Theory of Ionization of Gases by Collision*, Constable, London — the growth law; common practice for
non-uniform gaps, e.g. Raizer Y P 1991, *Gas Discharge Physics*, Springer, §4 — from memory). The field line is
traced from the start point along the force on an electron, −sign(V) E₁/|E₁|, with the midpoint rule (RK2) and
steps of 1 % of the field's gradient length (at most 1/400 of the gap), until it enters an electrode.

α/N and η/N come from :func:`avalanche.swarm` (the spatial coefficients of the time-of-flight engine, with the
first-order diffusion correction) at E/N points spaced by a factor 1.4 from the largest E/N on the line down to
the smallest, or from a table the caller supplies; between points they are interpolated linearly in
log E/N – log α (each coefficient where it is positive).
"""

from __future__ import annotations

import math
import warnings

import numpy as np

from ..constants import TOWNSEND_V_m2
from ..errors import ConfigError, PhysicsWarning
from ..kernels import gap as KG

SPACING = 1.4
"""Ratio between successive E/N points of the on-demand α table."""
MAX_POINTS = 16
"""Most E/N points of the on-demand table."""


def trace_field_line(geometry, voltage_V: float, start_m, max_points: int = 200_000) -> dict:
    """The field line followed by an electron from ``start_m`` until it enters an electrode.

    Returns
    -------
    dict
        ``s_m`` (path length [m]), ``position_m`` (N, 3), ``field_V_m`` (|E| [V/m]), ``end_region`` (1 driven,
        2 grounded, 3 outside a map).
    """
    geo = geometry.kernel_geometry()
    sign = -1.0 if voltage_V > 0 else 1.0
    cap = geometry.gap_length_m() / 400.0

    def direction(p):
        ex, ey, ez, length = KG.unit_field(geo, p[0], p[1], p[2])
        e = math.sqrt(ex * ex + ey * ey + ez * ez)
        if e == 0.0:
            raise ConfigError(f"{geometry!r}: the field vanishes at {p.tolist()} m on the field line; the local-"
                              "field gain is undefined there")
        return sign * np.array([ex, ey, ez]) / e, e, length

    p = np.asarray(start_m, dtype=float).copy()
    points, s_values, fields = [p.copy()], [0.0], []
    s = 0.0
    where = KG.GAS
    for _ in range(max_points):
        d, e, length = direction(p)
        fields.append(e)
        ds = min(0.01 * length, cap)
        mid = p + 0.5 * ds * d
        if KG.region(geo, *mid) != KG.GAS:
            d2 = d
        else:
            d2 = direction(mid)[0]
        p = p + ds * d2
        s += ds
        where = KG.region(geo, *p)
        points.append(p.copy())
        s_values.append(s)
        if where != KG.GAS:
            break
    else:
        raise ConfigError(f"{geometry!r}: the field line from {list(start_m)} m did not reach an electrode")
    fields.append(fields[-1])
    return {"s_m": np.array(s_values), "position_m": np.array(points), "field_V_m": abs(voltage_V) * np.array(fields),
            "end_region": int(where)}


def alpha_table_from_swarm(mixture, field_range_Td: tuple[float, float], *, seed=0, precision: float = 0.03,
                           sharing: str = "opb", scattering: str = "isotropic", max_events: int = 50_000_000) -> dict:
    """α/N and η/N [m²] from :func:`avalanche.swarm` on E/N points covering ``field_range_Td``.

    Points go down from 1.02 × the top by factors of :data:`SPACING` until below the bottom, or until both α/N
    and η/N are below 1e-3 of the largest α/N (the coefficients are then negligible for the gain), at most
    :data:`MAX_POINTS`. Each point stops at ``precision`` or after ``max_events`` trial events (where α/N is tiny
    its relative precision is poor, and its weight in the gain small).
    """
    from ..engine.time_of_flight import swarm

    low, high = field_range_Td
    en = 1.02 * high
    rows = []
    top_alpha = 0.0
    for index in range(MAX_POINTS):
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", PhysicsWarning)
            r = swarm(mixture, en, seed=(*np.atleast_1d(seed).tolist(), 7919, index), precision=precision,
                      sharing=sharing, scattering=scattering, max_events=max_events)
        a, h = _finite_coefficient(r.alpha_N, r.alpha_N_simple), _finite_coefficient(r.eta_N, r.eta_N_simple)
        rows.append((en, a, h))
        top_alpha = max(top_alpha, a)
        if en < low or (top_alpha > 0 and max(a, h) < 1e-3 * top_alpha):
            break
        en /= SPACING
    rows.sort()
    table = np.array(rows)
    undefined = table[~np.all(np.isfinite(table), axis=1), 0]
    if undefined.size:
        warnings.warn(f"local-field gain: avalanche.swarm gave no alpha/eta estimate at E/N = "
                      f"{', '.join(f'{v:.4g}' for v in undefined)} Td within max_events = {max_events:g}; those "
                      "points are left out of the interpolation (raise alpha_precision's budget or give alpha_table)",
                      PhysicsWarning, stacklevel=3)
    return {"reduced_field_Td": table[:, 0], "alpha_N": table[:, 1], "eta_N": table[:, 2],
            "source": f"avalanche.swarm at {len(rows)} E/N points (precision {precision})"}


def _finite_coefficient(value, simple) -> float:
    """A coefficient ≥ 0: the swarm's spatial estimate, else its simple form ν/(N W) (the spatial one is NaN where
    W² < 4 D_L ν), else NaN (the run gave no estimate: the point is left out of the interpolation, with a
    warning)."""
    for estimate in (value, simple):
        if math.isfinite(estimate.value):
            return max(float(estimate.value), 0.0)
    return math.nan


def check_alpha_table(table) -> dict:
    """Validate a user table ``(reduced_field_Td, alpha_N_m2[, eta_N_m2])`` or a dict with those keys."""
    if isinstance(table, dict):
        en, alpha, eta = table.get("reduced_field_Td"), table.get("alpha_N"), table.get("eta_N")
    else:
        parts = list(table)
        if len(parts) not in (2, 3):
            raise ConfigError("gap(): alpha_table must be (reduced_field_Td, alpha_N_m2) or (reduced_field_Td, "
                              "alpha_N_m2, eta_N_m2)")
        en, alpha = parts[0], parts[1]
        eta = parts[2] if len(parts) == 3 else None
    en = np.asarray(en, dtype=float).ravel()
    alpha = np.asarray(alpha, dtype=float).ravel()
    eta = np.zeros_like(alpha) if eta is None else np.asarray(eta, dtype=float).ravel()
    if (en.size < 2 or alpha.size != en.size or eta.size != en.size or np.any(en <= 0) or np.any(np.diff(en) <= 0)
            or np.any(alpha < 0) or np.any(eta < 0) or not np.all(np.isfinite(np.concatenate((en, alpha, eta))))):
        raise ConfigError("gap(): alpha_table needs at least 2 increasing E/N values [Td] > 0 and as many alpha_N "
                          "(and eta_N) values [m²] >= 0")
    return {"reduced_field_Td": en, "alpha_N": alpha, "eta_N": eta, "source": "table supplied by the caller"}


def _loglog(x, xs, ys):
    """Interpolate ys(xs) linearly in log–log where ys > 0 (0 where the neighbouring nodes are 0); beyond the
    ends, the end segments are extended (0 below a zero end)."""
    x = np.asarray(x, dtype=float)
    finite = np.isfinite(ys)
    xs, ys = xs[finite], ys[finite]
    positive = ys > 0
    if positive.sum() < 2:
        return np.interp(x, xs, ys)
    lx, ly = np.log(xs[positive]), np.log(ys[positive])
    lxq = np.log(x)
    out = np.exp(np.interp(lxq, lx, ly))
    slope_low = (ly[1] - ly[0]) / (lx[1] - lx[0])
    slope_high = (ly[-1] - ly[-2]) / (lx[-1] - lx[-2])
    below, above = lxq < lx[0], lxq > lx[-1]
    out[below] = np.exp(ly[0] + slope_low * (lxq[below] - lx[0]))
    out[above] = np.exp(ly[-1] + slope_high * (lxq[above] - lx[-1]))
    if not positive[0]:
        first = xs[np.argmax(positive)]
        out[x < first] = np.interp(x[x < first], xs, ys)
    return out


def effective_alpha_per_m(table: dict, reduced_field_Td, number_density_m3: float) -> np.ndarray:
    """(α − η) [1/m] at ``reduced_field_Td`` from the table."""
    en = table["reduced_field_Td"]
    return number_density_m3 * (_loglog(reduced_field_Td, en, table["alpha_N"])
                                 - _loglog(reduced_field_Td, en, table["eta_N"]))


def local_field_gain(line: dict, table: dict, number_density_m3: float) -> tuple[float, dict]:
    """exp(∫ (α − η) ds) along the traced ``line`` (trapezoid rule), and the line with E/N and α_eff added."""
    en = line["field_V_m"] / (number_density_m3 * TOWNSEND_V_m2)
    alpha = effective_alpha_per_m(table, en, number_density_m3)
    s = line["s_m"]
    integral = float(np.sum(0.5 * (alpha[1:] + alpha[:-1]) * np.diff(s)))
    return math.exp(integral), dict(line, reduced_field_Td=en, alpha_eff_per_m=alpha)
