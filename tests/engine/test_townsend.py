"""Steady-state Townsend (SST) mode: plane-crossing bookkeeping, estimators, the run, its file and command, and
validation against the time-of-flight relation and the handbook Townsend formula."""

from __future__ import annotations

import json
import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc

from avalanche import ConfigError, Mixture, model_gas
from avalanche.engine.tables import COLD_GAS_GROUPS
from avalanche.engine.townsend import Layout, initial_velocities, make_townsend_settings, townsend
from avalanche.engine.townsend_estimators import growth_rate, relaxation_start, townsend_estimates
from avalanche.kernels import steady_state as S

ACCEL = 1e15        # e E / m [m s^-2]
FIELD_V_m = ACCEL * sc.m_e / sc.e
SPACING_m = 1e-6


def _ballistic(z0, vz0, z_next, vx0=0.0, planes=11):
    """One electron through the SST kernel with a vanishing trial frequency: one uninterrupted flight."""
    z = np.zeros((1, 4))
    vx, vy, vz = z.copy(), z.copy(), z.copy()
    z[0, 0], vx[0, 0], vz[0, 0] = z0, vx0, vz0
    bank = [np.zeros((1, 4)) for _ in range(3)]
    out = {"crossings": np.zeros((1, planes), np.int64), "energy_flux": np.zeros((1, planes)),
           "ionizations": np.zeros((1, planes - 1), np.int64), "attachments": np.zeros((1, planes - 1), np.int64),
           "path": np.zeros((1, planes - 1)), "counts": np.zeros((1, S.N_COUNTS), np.int64),
           "process_counts": np.zeros((1, 1), np.int64), "extrapolated": np.zeros((1, 1), np.int64),
           "max_energy": np.zeros(1)}
    bank_count = np.zeros(1, np.int64)
    S.advance_pass(z, vx, vy, vz, np.ones(1, np.int64), *bank, bank_count, np.array([[1, 2, 3, 4]], np.uint64),
                   z_next, SPACING_m, ACCEL, FIELD_V_m, 1.0, 1000, 1e-300, np.zeros(1001), np.zeros((1001, 1)),
                   np.zeros(1, np.int64), np.zeros(1), np.zeros(1), np.ones(1), np.zeros(1), np.zeros(1, np.int64),
                   np.zeros(1, np.int64), np.zeros(1), np.full(1, np.inf), out["crossings"], out["energy_flux"],
                   out["ionizations"], out["attachments"], out["path"], out["counts"], out["process_counts"],
                   out["extrapolated"], out["max_energy"], np.zeros(1), np.zeros(1), np.full(1, -1, np.int64),
                   COLD_GAS_GROUPS)
    out["bank_vz"] = bank[2][0, 0]
    out["bank_count"] = int(bank_count[0])
    return out


def _energy_eV(v2):
    return 0.5 * sc.m_e * v2 / sc.e


def test_ballistic_flight_crosses_every_plane_once_with_the_field_energy():
    # No collisions: an electron leaving z = 0 upwards crosses planes 0 < z_j <= z_next once each, with energy
    # ε0 + E z_j (energy conservation in a uniform field, analytic), and reaches z_next with
    # v_z = √(v0² + 2 a z_next) (analytic kinematics).
    v0, z_next = 1e5, 7 * SPACING_m
    out = _ballistic(0.0, v0, z_next, vx0=2e5)
    assert out["bank_count"] == 1 and out["counts"][0, S.COUNT_ABSORBED] == 0
    expected = np.array([0] + [1] * 7 + [0] * 3)
    assert np.array_equal(out["crossings"][0], expected)
    e0 = _energy_eV(v0 ** 2 + 4e10)
    planes = np.arange(11) * SPACING_m
    assert out["energy_flux"][0] == pytest.approx(expected * (e0 + FIELD_V_m * planes), rel=1e-12, abs=0)
    assert out["bank_vz"] == pytest.approx(math.sqrt(v0 ** 2 + 2 * ACCEL * z_next), rel=1e-12, abs=0)
    # The signed path in each slab is the slab width up to z_next (clip(z_b) − clip(z_a), exact).
    assert out["path"][0] == pytest.approx(np.where(np.arange(10) < 7, SPACING_m, 0.0), rel=1e-12, abs=1e-22)


def test_electrode_absorbs_electrons_that_return_and_turning_points_cancel():
    # Downward start at z0 = 2.5 Δz: the electron reaches z = 0 iff v² >= 2 a z0 (analytic); it then crosses
    # planes 2, 1, 0 downwards (−1 each) and is absorbed. Slower, it turns at z0 − v²/(2a) > 0 and climbs: the
    # planes it crossed twice cancel, only those above z0 count (+1).
    z0 = 2.5 * SPACING_m
    v_reach = math.sqrt(2 * ACCEL * z0)
    fast = _ballistic(z0, -1.01 * v_reach, 9 * SPACING_m)
    assert fast["counts"][0, S.COUNT_ABSORBED] == 1 and fast["bank_count"] == 0
    assert np.array_equal(fast["crossings"][0], [-1, -1, -1] + [0] * 8)
    assert fast["path"][0].sum() == pytest.approx(-z0, rel=1e-12, abs=0)
    slow = _ballistic(z0, -0.99 * v_reach, 9 * SPACING_m)
    assert slow["counts"][0, S.COUNT_ABSORBED] == 0 and slow["bank_count"] == 1
    assert np.array_equal(slow["crossings"][0], [0, 0, 0] + [1] * 7 + [0])  # planes 3 … 9
    assert slow["path"][0].sum() == pytest.approx(9 * SPACING_m - z0, rel=1e-12, abs=0)


def test_absorption_time_is_the_descending_root():
    # z0 + v t + a t²/2 = 0: t = (−v − √(v² − 2 a z0))/a (quadratic formula, analytic).
    z0, v = 3e-6, -2e5
    t = S.absorption_time(z0, v, ACCEL)
    assert t == pytest.approx((-v - math.sqrt(v * v - 2 * ACCEL * z0)) / ACCEL, rel=1e-12, abs=0)
    assert S.absorption_time(z0, 1.0, ACCEL) == math.inf
    assert S.absorption_time(z0, -1.0, ACCEL) == math.inf


def test_first_plane_above_is_exact_at_plane_positions():
    # The smallest j with j Δz > z, with planes exactly on multiples of Δz (definition).
    dz = 0.1
    for j in range(50):
        assert S.first_plane_above(j * dz, dz) == j + 1
    assert S.first_plane_above(-1.0, dz) == 0
    assert S.first_plane_above(0.25, dz) == 3


def test_initial_velocities_point_away_from_the_electrode():
    gen = np.random.default_rng(3)
    beam = make_townsend_settings(initial_energy_eV=2.0, initial_distribution="beam")
    v = initial_velocities(gen, 1000, beam)
    assert np.all(v[:, 2] > 0)
    assert _energy_eV((v ** 2).sum(axis=1)) == pytest.approx(np.full(1000, 2.0), rel=1e-12, abs=0)
    table = make_townsend_settings(initial_energy_eV=([1.0, 3.0], [1.0, 0.0]))
    assert _energy_eV((initial_velocities(gen, 50, table) ** 2).sum(axis=1)) == pytest.approx(
        np.ones(50), rel=1e-12, abs=0)
    # Maxwellian of mean energy 1 eV: the sample mean within 5 standard errors (σ_ε = √(2/3) ⟨ε⟩, analytic).
    maxwell = _energy_eV((initial_velocities(gen, 20000, make_townsend_settings()) ** 2).sum(axis=1))
    assert abs(maxwell.mean() - 1.0) < 5 * math.sqrt(2 / 3) / math.sqrt(20000)


# ------------------------------------------------------------------------------------------- estimators

def test_growth_rate_recovers_an_exponential():
    z = np.linspace(0, 1e-3, 30)
    flux = np.vstack([2.0 * np.exp(1234.0 * z), 0.5 * np.exp(-50.0 * z)])
    assert growth_rate(z, flux) == pytest.approx([1234.0, -50.0], rel=1e-10, abs=0)
    assert np.isnan(growth_rate(z, -flux)).all()


def test_relaxation_start_finds_where_the_energy_settles():
    energy = np.concatenate((np.linspace(1.0, 9.0, 20), np.full(80, 10.0)))
    first, eq = relaxation_start(energy, np.zeros(100), 0.03)
    assert eq == 10.0 and first == 20
    # a late excursion beyond the band restarts the region after it
    energy[60] = 11.0
    assert relaxation_start(energy, np.zeros(100), 0.03)[0] == 61


def _synthetic_tallies(alpha_per_m, replicas=8, planes=41, spacing_m=1e-5, noise=0.0, seed=0):
    """Per-replica sums of an exactly exponential flux Γ = e^{α z} with ionizations α ∫Γ dz per slab."""
    rng = np.random.default_rng(seed)
    z = np.arange(planes) * spacing_m
    flux = np.exp(alpha_per_m * z)[None, :] * (1 + noise * rng.standard_normal((replicas, planes)))
    path = np.diff(np.exp(alpha_per_m * z)) / alpha_per_m
    t = {"emitted": np.full(replicas, 1.0), "flux": flux, "energy_flux_eV": 5.0 * flux,
         "ionizations": np.tile(alpha_per_m * path, (replicas, 1)), "attachments": np.zeros((replicas, planes - 1)),
         "path_m": np.tile(path, (replicas, 1))}
    return z, t


def test_townsend_estimates_of_an_exact_exponential():
    # Γ = e^{αz} exactly: slope α, ionizations per path α, flat energy → relaxed at z = 0 (analytic).
    z, t = _synthetic_tallies(2000.0)
    est = townsend_estimates(t, z, 1e23, 0.03)
    for name in ("effective_alpha_N", "alpha_N"):
        assert est.estimates[name].value == pytest.approx(2000.0 / 1e23, rel=1e-9, abs=0)
        assert est.estimates[name].stderr == pytest.approx(0.0, rel=0, abs=1e-9 * 2000.0 / 1e23)
    assert est.estimates["eta_N"].value == 0.0
    assert est.estimates["mean_energy_eV"].value == pytest.approx(5.0, rel=1e-12, abs=0)
    assert est.estimates["relaxation_length_m"].value == 0.0
    assert est.profiles["local_alpha_N"] == pytest.approx(np.full(40, 2000.0 / 1e23), rel=1e-9, abs=0)


def test_jackknife_error_of_the_fit_matches_the_replica_spread():
    # Independent noisy replicas: the jackknife error of the slope agrees with the spread of the slopes of
    # independent repetitions (std of 200 repetitions; 25 % covers the sampling error of a 16-replica jackknife,
    # √(1/(2·15)) ≈ 18 %, common practice).
    slopes, errors = [], []
    for seed in range(200):
        z, t = _synthetic_tallies(1000.0, replicas=16, noise=0.05, seed=seed)
        e = townsend_estimates(t, z, 1.0, 0.03).estimates["effective_alpha_N"]
        slopes.append(e.value)
        errors.append(e.stderr)
    assert np.mean(errors) == pytest.approx(np.std(slopes, ddof=1), rel=0.25, abs=0)


# ------------------------------------------------------------------------------------------- the run

def _lucas_saelee(F=1.0):
    return Mixture("lucas-saelee", temperature_K=0.0, number_density_m3=1e24,
                   sets={"lucas-saelee": model_gas("lucas-saelee", F=F)})


def _quick(**kw):
    # A short LS run with fixed distances (no time-of-flight pilot): seconds.
    options = dict(seed=2, electrons=512, replicas=8, max_events=2e6, precision=1e-9, distance_m=4e-3,
                   margin_m=1e-3, planes=40, sharing="uniform")
    options.update(kw)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return townsend(_lucas_saelee(), 50.0, **options)


@pytest.fixture(scope="module")
def quick_result():
    return _quick()


def test_flux_changes_by_exactly_the_collisions_in_each_slab(quick_result):
    # Particle conservation (the continuity equation, exact): the net flux between planes i and i + 1 changes by
    # the ionizations minus the attachments in the slab between them, per emitted electron — also across the
    # population-control steps (the weight n/M times the M survivors equals the n electrons that arrived).
    t = quick_result.tallies
    per_electron = lambda a: a / t["emitted"][:, None]  # noqa: E731
    change = np.diff(per_electron(t["flux"]), axis=1)
    sources = per_electron(t["ionizations"] - t["attachments"])
    assert change == pytest.approx(sources, rel=1e-9, abs=1e-9)
    assert quick_result.inputs["layout"]["planes_per_pass"] < 39  # several population-control steps happened
    assert quick_result.profiles["flux"][0] < 1  # some electrons returned to the electrode
    assert 0 < quick_result.anomalies["absorbed_fraction"] < 1


def test_run_is_reproducible_and_independent_of_threads(quick_result):
    import numba

    again = _quick(threads=1) if numba.config.NUMBA_NUM_THREADS >= 1 else _quick()
    assert np.array_equal(again.tallies["flux"], quick_result.tallies["flux"])
    assert again.events == quick_result.events


@pytest.mark.parametrize("kw, words", [
    (dict(bogus=1), ["unknown argument 'bogus'"]),
    (dict(initial_distribution="flat"), ["initial_distribution", "'flat'", "maxwellian"]),
    (dict(initial_energy_eV=([1.0, -2.0], [1.0, 1.0])), ["initial_energy_eV", "energies > 0"]),
    (dict(planes=3), ["planes = 3", ">= 10"]),
    (dict(replicas=1), ["replicas = 1"]),
    (dict(precision_on="alpha"), ["precision_on", "did you mean"]),
    (dict(relaxation_tolerance=0.9), ["relaxation_tolerance"]),
])
def test_bad_arguments_are_named(kw, words):
    with pytest.raises(ConfigError) as info:
        townsend("Ar", 300.0, **kw)
    for word in words:
        assert word in str(info.value)


def test_bad_field_and_mixture():
    with pytest.raises(ConfigError, match="reduced_field_Td = -5"):
        townsend("Ar", -5.0)
    with pytest.raises(ConfigError, match="mixture must be a Mixture"):
        townsend(42, 100.0)


def test_layout_puts_bank_planes_beyond_the_tally_planes_by_the_margin():
    layout = Layout.build(1e-3, 2.5e-4, 101, growth_per_m=5000.0)
    assert layout.spacing_m == pytest.approx(1e-5, rel=1e-12, abs=0)
    # 0.25 e-folds per pass at α = 5000 m⁻¹: 5 planes of 10 µm
    assert layout.planes_per_pass == 5
    # without growth, at least 10 passes over the tally planes
    assert Layout.build(1e-3, 2.5e-4, 101, growth_per_m=0.0).planes_per_pass == 10
    assert layout.stop_index % layout.planes_per_pass == 0
    assert layout.stop_index * layout.spacing_m >= 1e-3 + 2.5e-4


def test_townsend_result_hdf5_round_trip(quick_result, tmp_path):
    from avalanche.store.point import load_result, save_result

    path = save_result(tmp_path / "sst.h5", quick_result)
    back = load_result(path)
    assert type(back).__name__ == "TownsendResult"
    for name, est in quick_result.estimates.items():
        assert getattr(back, name).value == pytest.approx(est.value, rel=1e-15, abs=0, nan_ok=True)
        assert getattr(back, name).stderr == pytest.approx(est.stderr, rel=1e-15, abs=0, nan_ok=True)
    for name, values in quick_result.profiles.items():
        np.testing.assert_array_equal(back.profiles[name], values)
    for name, values in quick_result.tallies.items():
        np.testing.assert_array_equal(back.tallies[name], values)
    assert back.inputs["seed"] == quick_result.inputs["seed"]
    assert back.events == quick_result.events and back.stop_reason == quick_result.stop_reason
    assert json.dumps(back.to_dict())  # valid JSON


def test_townsend_command_json(capsys, tmp_path):
    from avalanche.cli.main import main

    out = tmp_path / "cli.h5"
    code = main(["townsend", "--gas", "lucas-saelee", "--temperature", "0", "--density", "1e24", "--en", "50",
                 "--max-events", "1e6", "--precision", "1e-9", "--seed", "4", "--electrons", "256",
                 "--distance", "3e-3", "--margin", "1e-3", "--sharing", "uniform", "--json", "--out", str(out)])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    for key in ("alpha_N", "eta_N", "effective_alpha_N", "relaxation_length_m", "mean_energy_eV", "profiles",
                "time_of_flight", "inputs", "events"):
        assert key in data, key
    assert set(data["alpha_N"]) == {"value", "stderr"}
    assert data["mode"] == "steady-state-townsend"
    assert out.is_file()


def test_townsend_command_bad_gas_message(capsys):
    from avalanche.cli.main import main

    assert main(["townsend", "--gas", "Argn", "--en", "300"]) == 1
    err = capsys.readouterr().err
    assert "Argn" in err and "Traceback" not in err


# ------------------------------------------------------------------------------------------- validation

def _sst_against_tof(result):
    """The SST growth rate against the time-of-flight relation and against the simple ν/(N W).

    Relation: α = [W − √(W² − 4 D_L ν_i)]/(2 D_L) with the bulk time-of-flight W, D_L (Tagashira H, Sakai Y &
    Sakamoto S 1977, J. Phys. D 10 1051; Blevin H A & Fletcher J 1984, Aust. J. Phys. 37 593 — from memory). It is
    the hydrodynamic relation truncated after the diffusion term: it neglects α³D₃ and higher terms of
    ν_i = αW − α²D_L + α³D₃ − … (Kondo K & Tagashira H 1990, J. Phys. D 23 1175 — from memory). The expansion is
    in powers of α D_L/W with coefficients of order one (D₃ of order D_L²/W: common practice), so its truncation
    error is of the order of the square of the first correction, c² · α with c = (ν/(N W) − α_TOF)/α_TOF, the
    relative size of the diffusion term this run measures. Tolerance: that truncation bound plus 3 combined
    standard errors (hypot: the two runs are independent). At 400 Td in argon c² is below the errors; at 1000 Td
    (α D_L/W no longer small) it is not, and a precise run shows the difference.
    """
    sst, tof, simple = result.effective_alpha_N, result.comparison["alpha_N"], result.comparison["alpha_N_simple"]
    truncation = ((simple.value - tof.value) / tof.value) ** 2 * abs(tof.value)
    assert abs(sst.value - tof.value) <= truncation + 3 * math.hypot(sst.stderr, tof.stderr), (sst, tof, simple)
    # ν/(N W) is a different number here: the diffusion correction exceeds the errors (ten or more of them).
    assert abs(sst.value - simple.value) > 5 * math.hypot(sst.stderr, simple.stderr), (sst, simple)
    # Ionizations per flux path and the growth of ln Γ measure the same α without attachment (continuity).
    ion = result.alpha_N
    assert abs(ion.value - sst.value) <= 3 * math.hypot(ion.stderr, sst.stderr)


@pytest.mark.slow
@pytest.mark.parametrize("F", [0.5, 1.0])
def test_lucas_saelee_sst_alpha_follows_the_time_of_flight_relation(F, validation_budget):
    # Lucas J & Saelee H T 1975, J. Phys. D 8 640 model gas (avalanche.gas.library.model_gas), uniform energy sharing
    # as in the benchmark definition (Ness K F & Robson R E 1986, Phys. Rev. A 34 2185 — from memory). At 50 Td
    # the spatial energy oscillations are damped within ~2 mm at N = 1e24 m⁻³ (at 10 Td they are not).
    # Reduced budget: precision 0.02 (measured, seed 7: |SST − TOF| at 0.08 (F = 1) and 0.05 (F = 0.5) of its
    # tolerance, SST and ν/(N W) 33 and 14 standard errors apart, relaxation length 0.47 and 0.36 of the range).
    precision = validation_budget.pick(0.01, 0.02)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = townsend(_lucas_saelee(F), 50.0, seed=7, precision=precision, sharing="uniform", compare=True)
    _sst_against_tof(result)
    assert result.relaxation_length_m.value < 0.6 * result.profiles["z_m"][-1]


@pytest.mark.slow
@pytest.mark.parametrize("reduced_field_Td", [400.0, 1000.0])
def test_argon_sst_alpha_against_tof_and_the_handbook_formula(reduced_field_Td):
    from avalanche.analysis.coefficients import handbook_alpha_N

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = townsend(Mixture("Ar"), reduced_field_Td, seed=3, precision=0.02, compare=True)
    _sst_against_tof(result)
    # Townsend formula α/p = A exp(−B p/E) with Raizer's argon constants (Raizer Yu P 1991, Gas Discharge
    # Physics, Springer, table 4.1 — from memory; avalanche.analysis.coefficients.handbook_alpha_N), valid 100–600
    # V/(cm Torr), i.e. about 300–1800 Td. A two-parameter fit of measurements good to some tens of per cent
    # (common practice): 35 %, far above the run's ~2 % error.
    handbook = handbook_alpha_N("Ar", reduced_field_Td)
    assert result.alpha_N.value == pytest.approx(handbook, rel=0.35, abs=0)


SST_SWEEP = '''
[sweep]
name = "sst-sweep"
mode = "steady-state-townsend"
seed = 5

[gas]
mixture = "lucas-saelee"
temperature_K = 0
number_density_m3 = 1e24

[gas.parameters]
lucas-saelee = { F = 1.0 }

[grid]
reduced_field_Td = [50, 70]

[engine]
precision = 0.5
max_events = 1e6
electrons = 256
replicas = 8
planes = 30
distance_m = 3e-3
margin_m = 1e-3
sharing = "uniform"
'''
"""Two tiny steady-state Townsend points of the Lucas–Saelee model gas (fixed distances: no pilot)."""


def test_a_steady_state_townsend_sweep(tmp_path):
    from avalanche import open_results, run_sweep
    from avalanche.sweep.runfile import engine_features, parse_runfile

    assert "steady-state-townsend" in engine_features()["modes"]
    path = tmp_path / "sst.toml"
    path.write_text(SST_SWEEP)
    assert parse_runfile(SST_SWEEP).mode == "steady-state-townsend"
    report = run_sweep(path, workers=1, out=tmp_path / "sst.h5", quiet=True)
    assert report.computed == 2 and report.failed == [] and report.complete
    results = open_results(tmp_path / "sst.h5")
    alpha = results.value("alpha_N")
    assert np.all(np.isfinite(alpha)) and alpha[1] > alpha[0] > 0  # α/N grows with E/N (LS: ionization rises)
    point = results.point(1)
    assert type(point).__name__ == "TownsendResult" and point.reduced_field_Td == 70.0
    assert point.alpha_N.value == alpha[1]
    # an option only the time-of-flight engine has is refused before anything runs, naming it
    with pytest.raises(ConfigError, match="diffusion_skip"):
        parse_runfile(SST_SWEEP.replace("planes = 30", "diffusion_skip = 2.0"))
    # AC frequencies are refused in SST mode before anything runs
    with pytest.raises(ConfigError, match=r"frequencies_Hz = \[0.0, 1000000.0\] with \[sweep\] mode"):
        parse_runfile(SST_SWEEP.replace("reduced_field_Td = [50, 70]",
                                        "reduced_field_Td = [50, 70]\nfrequencies_Hz = [0, 1e6]"))


def test_plot_of_a_steady_state_townsend_sweep_draws_the_spatial_profiles(tmp_path):
    # The profile panels carry the file's own numbers (no pixel comparison); the flux of each point is drawn
    # against the plane positions of its result.
    from matplotlib.figure import Figure

    from avalanche import open_results, run_sweep
    from avalanche.cli.main import main
    from avalanche.cli.outputs import sst_profile
    from avalanche.plots import plot_sst_profiles

    path = tmp_path / "sst.toml"
    path.write_text(SST_SWEEP)
    run_sweep(path, workers=1, out=tmp_path / "sst.h5", quiet=True)
    assert main(["plot", str(tmp_path / "sst.h5"), "--out", str(tmp_path), "--format", "png", "--eedf", "none"]) == 0
    assert (tmp_path / "sst_sst_profiles.png").stat().st_size > 0
    point = open_results(tmp_path / "sst.h5").point(1)
    profile = sst_profile(point)
    figure = plot_sst_profiles([profile])
    assert isinstance(figure, Figure)
    lines = [line for ax in figure.axes for line in ax.get_lines() if line.get_gid() == "sst:flux:70.0"]
    assert lines, "the flux profile of the 70 Td point"
    np.testing.assert_array_equal(lines[0].get_xdata(), point.profiles["z_m"])
    np.testing.assert_array_equal(lines[0].get_ydata(), point.profiles["flux"])
    assert profile.effective_alpha_per_m == pytest.approx(point.effective_alpha_N.value * 1e24, rel=1e-12, abs=0)


@pytest.mark.slow
def test_penning_transfer_raises_the_steady_state_alpha_like_the_time_of_flight_one():
    # Penning transfer in the SST kernel: Ne + 0.5 % Ar at 20 Td with r = 0.5 (an illustrative value). The
    # Ne-Ar Penning effect multiplies α/N at low E/N (Kruithof A A & Penning F M 1937, Physica 4 430 — from memory);
    # here the SST value must agree with the time-of-flight one of the same mixture within 3 combined standard
    # errors plus 5 % (the first-order relation between the two, Tagashira et al. 1977 — from memory).
    from avalanche import Mixture, swarm, townsend

    mixture = Mixture("Ne:0.995,Ar:0.005", pressure_Pa=1000.0, penning={"Ne": 0.5})
    sst = townsend(mixture, 40.0, seed=3, electrons=2048, precision=0.03, max_events=4e7)
    tof = swarm(mixture, 40.0, seed=3, electrons=2048, precision=0.03, max_events=4e7)
    plain = townsend(Mixture("Ne:0.995,Ar:0.005", pressure_Pa=1000.0), 40.0, seed=3, electrons=2048,
                     precision=0.03, max_events=4e7)
    assert sst.alpha_N.value > 3 * plain.alpha_N.value
    error = 3 * math.hypot(sst.alpha_N.stderr, tof.alpha_N.stderr) + 0.05 * tof.alpha_N.value
    assert abs(sst.alpha_N.value - tof.alpha_N.value) < error, (sst.alpha_N, tof.alpha_N)


def test_the_public_townsend_function_is_not_shadowed_by_a_module():
    # avalanche.townsend is a public function; importing every module (as the command line does) keeps it one
    import avalanche
    import avalanche.cli.main  # noqa: F401  (imports every command module)
    import avalanche.engine.townsend  # noqa: F401

    assert callable(avalanche.townsend) and avalanche.townsend.__module__ == "avalanche.engine.townsend"
    assert callable(avalanche.swarm) and avalanche.swarm.__module__ == "avalanche.engine.time_of_flight"
