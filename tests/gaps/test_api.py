"""The public gap API: geometries, field maps from files, input checks, result names, population control and the
stop rule.

References: the coaxial field V/(r ln(b/a)) (Kuffel, Zaengl & Kuffel 2000, High Voltage Engineering
Fundamentals, ch. 4 — from memory); bilinear interpolation error ≤ h² max|f''|/8 per axis (common practice).
"""

from __future__ import annotations

import math

import h5py
import numpy as np
import pytest

import avalanche as av
from avalanche import ConfigError, Mixture, model_gas
from avalanche.constants import TOWNSEND_V_m2

N_m3 = 1e25


def lucas_saelee():
    return Mixture({"lucas-saelee": 1.0}, number_density_m3=N_m3, temperature_K=0,
                   sets={"lucas-saelee": model_gas("lucas-saelee", F=0.5)})


def coaxial_map(a=1e-4, b=1e-3, n_r=181, n_z=5, voltage=1000.0):
    """An r–z map of the coaxial field with its mask: wire (1) for r ≤ a, tube (2) for r ≥ b."""
    r = np.linspace(0.0, 1.1 * b, n_r)
    z = np.linspace(-1e-3, 1e-3, n_z)
    R, _ = np.meshgrid(r, z, indexing="ij")
    with np.errstate(divide="ignore"):
        er = np.where(R > 0, voltage / (np.maximum(R, 1e-30) * math.log(b / a)), 0.0)
        pot = np.where(R > 0, voltage * np.log(b / np.maximum(R, 1e-30)) / math.log(b / a), voltage)
    mask = np.where(R <= a, 1, np.where(R >= b, 2, 0))
    return dict(kind="rz", origin=np.array([0.0, z[0]]), spacing=np.array([r[1] - r[0], z[1] - z[0]]),
                field=np.stack((er, np.zeros_like(er))), mask=mask, potential=pot, voltage_V=voltage)


def test_geometries_validate_their_input():
    with pytest.raises(ConfigError, match="tube_radius_m"):
        av.Coaxial(1e-3, 1e-4)
    with pytest.raises(ConfigError, match="gap_m"):
        av.ParallelPlates(-1.0)
    with pytest.raises(ConfigError, match="outer_radius_m"):
        av.ConcentricSpheres(2e-3, 1e-3)
    with pytest.raises(ConfigError, match="tip_radius_m"):
        av.PointPlane(0.0, 1e-2)
    with pytest.raises(ConfigError, match="unknown argument 'primary_count'"):
        av.gap(av.ParallelPlates(1e-4), "Ar", 100.0, primary_count=3)
    with pytest.raises(ConfigError, match="voltage_V"):
        av.gap(av.ParallelPlates(1e-4), "Ar", 0.0)
    with pytest.raises(ConfigError, match="start_position_m"):
        av.gap(av.ParallelPlates(1e-4), "Ar", 100.0, start_position_m=(0, 0, 1.0))


@pytest.mark.parametrize("suffix", [".npz", ".h5", ".csv"])
def test_field_map_files_reproduce_the_coaxial_field(tmp_path, suffix):
    m = coaxial_map()
    path = tmp_path / f"coax{suffix}"
    if suffix == ".npz":
        np.savez(path, kind="rz", voltage_V=m["voltage_V"], length_unit="mm", field_unit="kV/cm",
                 origin=m["origin"] * 1e3, spacing=m["spacing"] * 1e3, field=m["field"] / 1e5, mask=m["mask"],
                 potential=m["potential"])
    elif suffix == ".h5":
        with h5py.File(path, "w") as f:
            f.attrs.update(kind="rz", voltage_V=m["voltage_V"], length_unit="m", field_unit="V/m")
            for key in ("origin", "spacing", "field", "mask", "potential"):
                f[key] = m[key]
    else:
        n_r, n_z = m["mask"].shape
        lines = [f"# kind=rz length_unit=um field_unit=V/m voltage_V={m['voltage_V']}", "r,z,Er,Ez,mask,potential"]
        for i in range(n_r):
            for j in range(n_z):
                lines.append(f"{(m['origin'][0] + i * m['spacing'][0]) * 1e6:.17g},"
                             f"{(m['origin'][1] + j * m['spacing'][1]) * 1e6:.17g},{m['field'][0, i, j]:.17g},0.0,"
                             f"{m['mask'][i, j]},{m['potential'][i, j]:.17g}")
        path.write_text("\n".join(lines) + "\n")
    fmap = av.FieldMap.load(path)
    a, b, V = 1e-4, 1e-3, 2000.0
    analytic = av.Coaxial(a, b)
    h = m["spacing"][0]
    for radius in (1.5e-4, 3.3e-4, 7.7e-4):
        p = np.array([radius * 0.6, radius * 0.8, 2e-4])
        exact = analytic.field_V_m(p, V)
        # bilinear error ≤ h²/8 |d²E/dr²| = h²/8 · 2E/r² (common practice)
        assert np.allclose(fmap.field_V_m(p, V), exact, rtol=h * h / (4 * radius * radius) + 1e-9)
        assert fmap.weighting_potential(p) == pytest.approx(analytic.weighting_potential(p), rel=h * h / radius ** 2)
    assert fmap.region([0.5e-4, 0, 0]) == 1 and fmap.region([1.05e-3, 0, 0]) == 2
    assert fmap.region([5e-4, 0, 0]) == 0 and fmap.region([2e-3, 0, 0]) == 3


def test_field_map_errors_name_the_problem(tmp_path):
    bad = tmp_path / "bad.npz"
    np.savez(bad, kind="rz", voltage_V=1.0, length_unit="furlong", field_unit="V/m", origin=[0, 0],
             spacing=[1, 1], field=np.zeros((2, 3, 3)), mask=np.zeros((3, 3), int))
    with pytest.raises(ConfigError, match="length_unit = 'furlong'"):
        av.FieldMap.load(bad)
    with pytest.raises(ConfigError, match="not found"):
        av.FieldMap.load(tmp_path / "missing.npz")
    with pytest.raises(ConfigError, match="mask"):
        av.FieldMap("rz", [0, 0], [1, 1], np.zeros((2, 3, 3)), np.full((3, 3), 7), 1.0)


def test_map_run_agrees_with_the_analytic_run():
    # the same avalanches (same seeds) in the analytic coaxial field and in its r–z map: the map's interpolation
    # error is ~1e-4 of the field, so mean gains agree within their standard errors (3 σ), and the map's
    # Shockley–Ramo balance holds with the weighting potential derived from the map's potential
    m = coaxial_map(n_r=441)
    fmap = av.FieldMap(m["kind"], m["origin"], m["spacing"], m["field"], m["mask"], m["voltage_V"],
                       potential_V=m["potential"])
    a, b = 1e-4, 1e-3
    V = 180 * TOWNSEND_V_m2 * N_m3 * a * math.log(b / a)
    common = dict(primaries=60, seed=3, sharing="uniform", local_field=False, start_position_m=(2.5e-4, 0, 0))
    analytic = av.gap(av.Coaxial(a, b), lucas_saelee(), V, **common)
    mapped = av.gap(fmap, lucas_saelee(), V, **common)
    sigma = math.hypot(analytic.mean_gain.stderr, mapped.mean_gain.stderr)
    assert abs(analytic.mean_gain.value - mapped.mean_gain.value) < 3 * sigma
    balance = mapped.charge_balance
    assert balance["induced_driven_C"] == pytest.approx(balance["expected_driven_C"], rel=2e-3)


def test_result_names_population_control_and_streamer_stop():
    mixture = lucas_saelee()
    d = 150e-6
    V = 200 * TOWNSEND_V_m2 * N_m3 * d
    r = av.gap(av.ParallelPlates(d), mixture, V, primaries=8, seed=1, sharing="uniform", local_field=False,
               population_cap=64, electron_limit=300)
    data = r.to_dict()
    for name in ("mean_gain", "gain_distribution", "local_field_gain", "polya_theta"):
        assert name in data
    assert r.streamer["reached"] > 0 and "streamer criterion reached" in r.streamer["message"]
    assert 0 <= r.streamer["position_m"][2] <= d
    assert np.all(r.gain_distribution.per_primary[np.isfinite(r.gain_distribution.per_primary)] >= 1)
    assert any("space charge is neglected" in note for note in r.notes)
    # unbiased population control: capped and uncapped runs of a smaller gap agree on the mean gain (3 σ)
    d = 80e-6
    V = 200 * TOWNSEND_V_m2 * N_m3 * d
    capped = av.gap(av.ParallelPlates(d), mixture, V, primaries=300, seed=2, sharing="uniform", local_field=False,
                    population_cap=16)
    free = av.gap(av.ParallelPlates(d), mixture, V, primaries=300, seed=3, sharing="uniform", local_field=False)
    assert capped.gain_distribution.controlled.any() and not free.gain_distribution.controlled.any()
    sigma = math.hypot(capped.mean_gain.stderr, free.mean_gain.stderr)
    assert abs(capped.mean_gain.value - free.mean_gain.value) < 3 * sigma


def test_local_field_gain_between_plates_is_exp_alpha_d():
    # uniform field: the local-field gain is exp((α − η) d) exactly, for a supplied table (log–log interpolation)
    d = 1e-4
    table = ([100.0, 200.0, 400.0], [1e-21, 4e-21, 8e-21])
    r = av.gap(av.ParallelPlates(d), lucas_saelee(), 200 * TOWNSEND_V_m2 * N_m3 * d, primaries=4,
               sharing="uniform", alpha_table=table)
    assert r.local_field_gain == pytest.approx(math.exp(4e-21 * N_m3 * d), rel=1e-9)
    assert r.local_field_ratio.value == pytest.approx(r.mean_gain.value / r.local_field_gain)


def test_a_map_window_holds_the_events_inside_it():
    # histogram bookkeeping (common practice): a window over the lower half of the default map, with as many bins,
    # holds exactly the default map's lower half (same seed, so the same events)
    d = 60e-6
    V = 250 * TOWNSEND_V_m2 * N_m3 * d
    geometry = av.ParallelPlates(d)
    full = av.gap(geometry, lucas_saelee(), V, primaries=20, seed=3, sharing="uniform", local_field=False)
    rho_max, z_min, z_max = geometry.map_extent()
    half = av.gap(geometry, lucas_saelee(), V, primaries=20, seed=3, sharing="uniform", local_field=False,
                  map_extent_m=(rho_max, z_min, 0.5 * (z_min + z_max)))
    np.testing.assert_array_equal(half.gain_distribution.per_primary, full.gain_distribution.per_primary)
    lower = full.maps["created"][:, :20].sum()
    assert 0 < lower < full.maps["created"].sum()
    assert half.maps["created"].sum() == pytest.approx(lower, rel=0.02)
    assert half.maps["z_edges_m"][-1] == pytest.approx(0.5 * (z_min + z_max))
    with pytest.raises(ConfigError, match="map_extent_m"):
        av.gap(geometry, lucas_saelee(), V, map_extent_m=(1e-3, 1e-3, 0.0))
