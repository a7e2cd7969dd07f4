"""Collisions with thermal gas targets: sampling at the relative speed, the trial-frequency bands, thermal
equilibrium, the Einstein relation, and the unchanged cold-gas path.

Statistics: an electron exchanges a fraction ~2m/M of its energy per elastic collision, so its energy forgets its
start only after ~M/(2m) collisions (3646 for M = 4 amu, 36 000 for argon); a mean energy to a relative precision δ
needs ~(0.82/δ)² such energy-relaxation times summed over electrons (0.82 = relative spread of a Maxwellian's
energy). The checks at the 0.5 % level therefore use a light target (M = 0.005 amu, and 0.002 amu for the
Einstein relation, whose drift must stand out of the thermal noise with little field heating; same physics:
thermal equilibrium and the Einstein relation are exact for any mass ratio), and the checks with M = 4 amu and the
shipped gases follow the electrons for several energy-relaxation times from a start far from equilibrium, with
tolerances from their standard errors.
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
import scipy.constants as sc
from scipy import special, stats

from avalanche import Mixture, make_set, model_gas, process_from_table
from avalanche import kernels as K
from avalanche.engine.ensemble import Ensemble
from avalanche.engine.tables import (
    THERMAL_MARGIN_SPEEDS,
    EnergyGrid,
    ProcessTable,
    near_equilibrium_energy_eV,
    target_groups,
    window_max,
)
from avalanche.engine.time_of_flight import make_settings, swarm
from avalanche.engine.townsend import townsend

HARD_SPHERE_m2 = 6e-20
"""σ of the hard-sphere model gas [m²] (constant: ν = N σ g)."""


def hard_sphere(mass_amu: float):
    """A hard-sphere model gas: one elastic process of constant cross section, isotropic."""
    proc = process_from_table([[0.0, HARD_SPHERE_m2], [1e3, HARD_SPHERE_m2]], kind="elastic", label="hard sphere",
                              threshold_eV=0.0, source="model gas: constant cross section")
    return make_set("hard-sphere", mass_amu=mass_amu, processes=[proc])


def hard_sphere_mixture(mass_amu: float, temperature_K: float, density_m3: float = 2.5e25) -> Mixture:
    return Mixture("hard-sphere", temperature_K=temperature_K, number_density_m3=density_m3,
                   sets={"hard-sphere": hard_sphere(mass_amu)})


def kT_eV(temperature_K: float) -> float:
    return sc.k * temperature_K / sc.e


def mean_relative_speed(v: float, a: float) -> float:
    """⟨|v − V|⟩ over a Maxwellian V of thermal speed a = √(kT/M) (each component normal with variance a²), for a
    fixed |v|: a [√(2/π) e^{−x²/2} + (x + 1/x) erf(x/√2)], x = v/a (the mean relative speed of kinetic theory,
    e.g. Chapman S & Cowling T G 1970, The Mathematical Theory of Non-Uniform Gases, ch. 5; from memory; limits
    v + a²/v for x → ∞ and the Maxwellian mean speed √(8/π) a for x → 0)."""
    x = v / a
    return a * (math.sqrt(2 / math.pi) * math.exp(-x * x / 2) + (x + 1 / x) * special.erf(x / math.sqrt(2)))


# ------------------------------------------------------------------------------------------------ the tables

def test_cold_gas_tables_are_unchanged():
    # A cold gas (T = 0) keeps the electron grid and ν* = (1 + margin) max ν (Skullerud 1968): no target group.
    table = ProcessTable.build(Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25), "uniform",
                               "isotropic")
    grid = EnergyGrid.build(table, 4.0, 256)
    assert target_groups(table) == [] and grid.thermal_groups[0].size == 0
    assert grid.nu_total.shape == (257,) and grid.nu_star == pytest.approx(1.001 * grid.nu_total.max(), rel=1e-15)


def test_thermal_bands_bound_the_frequency_over_the_thermal_spread():
    # Skullerud 1968 (J. Phys. D 1 1567): the null-collision method is exact only if each band ν*_s bounds
    # N_s σ_s(g) g for every relative speed g reachable from the electron grid, g ≤ v_max + 8 √(kT/M) (a faster
    # target has probability ~1e-13; the kernel counts it). Checked on a 16× finer grid up to that speed.
    mixture = Mixture({"He": 0.5, "Ar": 0.5}, temperature_K=300.0, number_density_m3=2.5e25)
    table = ProcessTable.build(mixture, "uniform", "isotropic")
    groups = target_groups(table)
    assert [table.species[first] for first, _, _ in groups] == ["He", "Ar"]
    top_eV, cells = 2.0, 512
    grid = EnergyGrid.build(table, top_eV, cells)
    upper, first, last, speed, local = grid.thermal_groups
    upper = upper[0]  # one row of band edges: the constant trial frequency
    np.testing.assert_allclose(speed, [math.sqrt(sc.k * 300.0 / (m * sc.atomic_mass)) for m in (4.002602, 39.948)],
                               rtol=1e-3)
    assert grid.nu_star == upper[-1]
    reach_eV = K.ENERGY_PER_SPEED2_eV * (K.speed_from_energy(top_eV) + THERMAL_MARGIN_SPEEDS * speed.max()) ** 2
    nodes_top_eV = (grid.nu_total.size - 1) * top_eV / cells
    assert nodes_top_eV >= reach_eV
    fine = table.frequencies(np.linspace(0.0, reach_eV, 16 * cells + 1))
    bands = np.diff(np.concatenate(([0.0], upper)))
    for s in range(len(groups)):
        assert fine[first[s]:last[s]].sum(axis=0).max() <= bands[s]
    # the bands are at least the cold bound of each species (their sum at least the mixture's)
    assert grid.nu_star >= grid.nu_total[:cells + 1].max()
    # The local bounds (a null event decided before the target is drawn) bound ν_s over every relative energy
    # reachable from the electron's cell, (√ε ∓ 8 √(kT/M)·√(m/2e))², on the fine grid; and never exceed the band.
    fine_eV = np.linspace(0.0, reach_eV, 16 * cells + 1)  # the energies of ``fine``
    root_margin = math.sqrt(K.ENERGY_PER_SPEED2_eV) * THERMAL_MARGIN_SPEEDS * speed.max()
    assert local.shape == (cells, len(groups)) and np.all(local <= bands)
    for c in range(0, cells, 7):
        low = max(math.sqrt(c * top_eV / cells) - root_margin, 0.0) ** 2
        high = (math.sqrt((c + 1) * top_eV / cells) + root_margin) ** 2
        inside = (fine_eV >= low) & (fine_eV <= high)
        for s in range(len(groups)):
            assert fine[first[s]:last[s], inside].sum(axis=0).max() <= local[c, s]


def test_window_max_matches_a_direct_maximum():
    # The sparse-table range maximum (Bender & Farach-Colton 2000, from memory) against numpy's max per window.
    rng = np.random.default_rng(1)
    values = rng.random(1000)
    low = rng.integers(0, 999, 400)
    high = np.minimum(low + rng.integers(1, 400, 400), 1000)
    expected = [values[a:b].max() for a, b in zip(low, high, strict=True)]
    np.testing.assert_array_equal(window_max(values, low, high), expected)


def test_start_energy_of_the_maxwell_model_is_wannier_exact():
    # For a constant collision frequency the two-term balance is exact: ⟨ε⟩ = 3kT/2 + (m + M) W²/2 with
    # W = eE/(μν) (Wannier 1953; maxwell_exact in test_engine), here at 293 K and 1 Td.
    from test_engine import N_m3, maxwell_exact

    mixture = Mixture("maxwell", temperature_K=293.0, number_density_m3=N_m3)
    table = ProcessTable.build(mixture, "uniform", "isotropic")
    start = near_equilibrium_energy_eV(table, N_m3, 1.0, 293.0, 10.0)
    assert start == pytest.approx(maxwell_exact(1.0, 293.0)["mean_energy_eV"], rel=1e-5)
    assert near_equilibrium_energy_eV(table, N_m3, 1e3, 293.0, 1.0) == 1.0  # capped at the cold default


def test_default_start_energy_depends_on_the_temperature():
    # A cold gas keeps the 1 eV start (bitwise unchanged runs); at T > 0 and low field the start is the balance.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        cold = swarm(Mixture("maxwell", temperature_K=0.0, number_density_m3=1e23), 1.0, electrons=64,
                     max_events=2e4)
        warm = swarm(hard_sphere_mixture(4.0, 300.0), 1e-3, electrons=64, max_events=2e4)
    assert cold.inputs["settings"]["initial_energy_eV"] == 1.0
    assert warm.inputs["settings"]["initial_energy_eV"] == pytest.approx(1.5 * kT_eV(300.0), rel=1e-3)


# --------------------------------------------------------------------------------------------- the sampler

def test_target_velocities_are_maxwellian():
    # Sampler against its law (kind b): each component of V is normal with variance kT/M (Maxwell; polar method of
    # Marsaglia & Bray 1964, SIAM Rev. 6 260), components independent (KS on each and on |V|, a χ₃ law).
    state = tuple(np.uint64(x) for x in np.random.SeedSequence(23).generate_state(4, np.uint64))
    speed = 790.0
    samples = np.empty((8_000, 3))
    for i in range(samples.shape[0]):
        *velocity, s0, s1, s2, s3 = K.target_velocity(speed, *state)
        samples[i] = velocity
        state = tuple(np.uint64(x) for x in (s0, s1, s2, s3))
    for column in samples.T:
        assert stats.kstest(column / speed, "norm").pvalue > 1e-3
    assert stats.kstest(np.linalg.norm(samples, axis=1) / speed, stats.chi(3).cdf).pvalue > 1e-3
    assert abs(np.corrcoef(samples.T)[0, 1]) < 4 / math.sqrt(samples.shape[0])


def test_trial_event_accepts_at_the_maxwellian_mean_relative_speed():
    # Sampler against its analytic law (kind b). Two species: group 0 = {A: hard sphere ν = c_A g, B: constant
    # ν_B}, thermal speed a0 = v; group 1 = {C: hard sphere c_C g}, a1 = 2v. Per trial event the probability of a
    # real collision with each process is ⟨ν_k(g)⟩/ν* with ⟨c g⟩ = c ⟨|v − V|⟩ (mean_relative_speed), and the
    # selected process must use the same g as the acceptance. Counts against the multinomial law (chi-square).
    v = 1.0e5
    a0, a1 = v, 2.0 * v
    c_a, nu_b, c_c = 1.0, 0.5 * v, 0.7
    top_speed = v + THERMAL_MARGIN_SPEEDS * a1
    top_eV = K.ENERGY_PER_SPEED2_eV * top_speed ** 2
    nodes = np.linspace(0.0, top_eV, 200_001)
    g = np.sqrt(nodes / K.ENERGY_PER_SPEED2_eV)
    cumulative = np.ascontiguousarray(np.cumsum([c_a * g, np.full_like(g, nu_b), c_c * g], axis=0).T)
    bands = 1.001 * np.array([c_a * top_speed + nu_b, c_c * top_speed])
    inv_cell = (nodes.size - 1) / top_eV
    cell = int(K.ENERGY_PER_SPEED2_eV * v * v * inv_cell)
    local = np.tile(bands, (nodes.size - 1, 1))  # no local bound below the bands: every event draws a target
    groups = (np.cumsum(bands)[None, :], np.array([0, 2]), np.array([2, 3]), np.array([a0, a1]), local)
    rng = np.random.default_rng(3)
    state = np.random.SeedSequence(17).generate_state(4, np.uint64)
    s0, s1, s2, s3 = (np.uint64(x) for x in state)
    n = 50_000
    counts = np.zeros(4, dtype=np.int64)  # A, B, C, null
    above = 0
    directions = rng.normal(size=(n, 3))
    directions *= v / np.linalg.norm(directions, axis=1)[:, None]
    levels = rng.random(n) * groups[0][0, -1]
    for i in range(n):
        k, _, _, _, _, flag, *state = K.thermal_trial(levels[i], *directions[i], cell, inv_cell, cumulative,
                                                      groups, 0, s0, s1, s2, s3)
        s0, s1, s2, s3 = (np.uint64(x) for x in state)  # (returned to Python as int: keep the generator's type)
        counts[k if k >= 0 else 3] += 1
        above += flag
    assert above == 0
    nu_star = groups[0][0, -1]
    p = np.array([c_a * mean_relative_speed(v, a0), nu_b, c_c * mean_relative_speed(v, a1)]) / nu_star
    expected = n * np.append(p, 1.0 - p.sum())
    chi2 = float(((counts - expected) ** 2 / expected).sum())
    assert stats.chi2.sf(chi2, 3) > 1e-3, (counts, expected)
    # The test has power: targets at rest (ν read at the electron speed) would give c_A v instead of
    # c_A ⟨|v − V|⟩ = 1.85 c_A v (a0 = v), hundreds of standard deviations away.
    assert abs(counts[0] - n * c_a * v / nu_star) > 15 * math.sqrt(expected[0])


def test_moving_target_collision_conserves_momentum_and_energy():
    # Exact two-body elastic kinematics (common practice; e.g. Landau & Lifshitz, Mechanics §16, from memory): in
    # the centre-of-mass frame the relative speed is unchanged, so with V' = V_cm − m/(m+M) g' the total momentum
    # and kinetic energy are conserved.
    m, M = sc.m_e, 0.02 * sc.atomic_mass
    p, q = m / (m + M), M / (m + M)
    args = (np.zeros(1), np.array([p]), np.array([q]), np.array([1e4]), np.zeros(1, np.int64),
            np.zeros(1, np.int64), np.zeros(1), np.zeros(1), np.zeros(1))
    rng = np.random.default_rng(5)
    s = tuple(np.uint64(x) for x in np.random.SeedSequence(2).generate_state(4, np.uint64))
    for _ in range(200):
        v, V = rng.normal(size=3) * 1e5, rng.normal(size=3) * 3e4
        energy_rel = K.ENERGY_PER_SPEED2_eV * float(((v - V) ** 2).sum())
        ux, uy, uz, child, *_, s0, s1, s2, s3 = K.scatter_moving_target(K.ACTION_ELASTIC, 0, *v, *V, energy_rel,
                                                                      args, *s)
        s = tuple(np.uint64(x) for x in (s0, s1, s2, s3))
        v_after = np.array([ux, uy, uz])
        V_after = (m * v + M * V - m * v_after) / M
        assert child == K.CHILD_NONE
        assert m * (v_after ** 2).sum() + M * (V_after ** 2).sum() == pytest.approx(
            m * (v ** 2).sum() + M * (V ** 2).sum(), rel=1e-12)
        assert np.linalg.norm(v_after - V_after) == pytest.approx(np.linalg.norm(v - V), rel=1e-10)


def test_inelastic_collision_with_a_moving_target_loses_the_threshold_in_its_frame():
    # Galilean invariance: the cold-gas rule (the threshold lost, target at rest) applied in the target's frame.
    args = (np.array([0.3]), np.array([1e-4]), np.array([1.0]), np.array([1e3]), np.zeros(1, np.int64),
            np.zeros(1, np.int64), np.zeros(1), np.zeros(1), np.zeros(1))
    v, V = np.array([3e5, -1e5, 2e5]), np.array([2e4, 1e4, -3e4])
    energy_rel = K.ENERGY_PER_SPEED2_eV * float(((v - V) ** 2).sum())
    s = tuple(np.uint64(x) for x in (1, 2, 3, 4))
    ux, uy, uz, *_ = K.scatter_moving_target(K.ACTION_EXCITATION, 0, *v, *V, energy_rel, args, *s)
    after = K.ENERGY_PER_SPEED2_eV * float(((np.array([ux, uy, uz]) - V) ** 2).sum())
    assert after == pytest.approx(energy_rel - 0.3, rel=1e-12)


# -------------------------------------------------------------------------------------- thermal equilibrium

def _relax_without_field(mixture: Mixture, start_eV: float, relax_s: float, sample_s: float, electrons: int,
                         replicas: int, seed: int, top_eV: float):
    """Electrons from a Maxwellian of mean ``start_eV`` followed without field (exact thermal equilibrium is the
    only steady state) for ``relax_s``, then ``sample_s`` more; returns (time-averaged mean energy per replica over
    the second part [eV], the electrons' final energies [eV], the kernel counters)."""
    table = ProcessTable.build(mixture, "uniform", "isotropic")
    grid = EnergyGrid.build(table, top_eV, 1024)
    settings = make_settings(seed=seed, electrons=electrons, replicas=replicas, initial_energy_eV=start_eV)
    ens = Ensemble(settings, growing=False)
    R, P = replicas, len(table.keys)
    sums, counts = np.zeros((R, K.N_SUMS)), np.zeros((R, K.N_COUNTS), dtype=np.int64)
    hist, pc, ex = np.zeros((R, 8)), np.zeros((R, P), dtype=np.int64), np.zeros((R, P), np.int64)
    total = np.zeros(K.N_COUNTS, dtype=np.int64)
    for t0, t1 in ((0.0, relax_s), (relax_s, relax_s + sample_s)):
        K.advance_chunk(ens.x, ens.y, ens.z, ens.vx, ens.vy, ens.vz, ens.birth, ens.count, ens.rng, t0, t1, 0.0,
                        0.0, 0.0, 0.0, grid.inv_cell_eV, grid.n_cells, grid.nu_star, grid.nu_total,
                        grid.nu_cumulative, table.action, table.loss_eV, table.electron_fraction,
                        table.target_fraction, table.thermal_speed, table.scatter, table.sharing, table.w_eV,
                        table.table_max_eV, np.zeros((R, 3)), False, 1.0, sums, counts, hist, pc, ex,
                        table.penning_probability, table.penning_energy_eV, table.penning_slot, 0.0,
                        *(np.zeros(0),) * 4, np.zeros((R, 0, K.N_PHASE_SUMS)),
                        np.zeros((R, 0, K.N_PHASE_COUNTS), dtype=np.int64), np.zeros((R, 0, P), dtype=np.int64),
                        grid.thermal_groups, np.zeros(3), grid.constant_trial, grid.expected,
                        np.zeros((R, grid.n_cells, 2)), np.zeros((R, P, 2)))
        total += counts.sum(axis=0)
    mean = sums[:, K.SUM_ENERGY] / counts[:, K.COUNT_EVENTS]
    final = K.ENERGY_PER_SPEED2_eV * (ens.vx ** 2 + ens.vy ** 2 + ens.vz ** 2)[:, :ens.target].ravel()
    return mean, final, total


def _energy_relaxation_time_s(mixture: Mixture, energy_eV: float) -> float:
    """M/(2 m ν_m) [s] at ``energy_eV``: the elastic energy-relaxation time (Huxley & Crompton 1974, The Diffusion
    and Drift of Electrons in Gases, ch. 2; from memory)."""
    table = ProcessTable.build(mixture, "uniform", "isotropic")
    nu = table.frequencies(np.array([energy_eV]))[:, 0]
    return 1.0 / float((2.0 * table.electron_fraction * nu).sum())


def _assert_thermal(mean, final, counts, temperature_K, sigmas=4.0):
    # Thermal equilibrium (exact without field): the energies are Maxwell–Boltzmann at the gas temperature,
    # f(ε) ∝ √ε e^{−ε/kT}, a Γ(3/2, kT) law with mean 3kT/2 (Boltzmann; e.g. Huxley & Crompton 1974 ch. 2).
    kT = kT_eV(temperature_K)
    assert counts[K.COUNT_ABOVE_BOUND] == 0 and counts[K.COUNT_ABOVE_GRID] == 0
    ks = stats.kstest(final, stats.gamma(1.5, scale=kT).cdf)
    assert ks.pvalue > 1e-3, ks
    value, error = mean.mean(), mean.std(ddof=1) / math.sqrt(mean.size)
    assert abs(value - 1.5 * kT) < sigmas * error, (value, error, 1.5 * kT)
    return value / (1.5 * kT) - 1.0, error / (1.5 * kT)


@pytest.mark.slow
def test_hard_sphere_of_4_amu_relaxes_to_maxwell_boltzmann():
    # Hard spheres of 4 amu at 300 K without field, started as a Maxwellian at twice the gas temperature: after
    # 8 energy-relaxation times (e^-8 of the start remains) the energies are Maxwell–Boltzmann at T (KS test on
    # 512 independent electrons) and the time-averaged mean energy is 3kT/2 within four standard errors (~3 %:
    # see the module docstring). The old frequency at the electron speed settled at ~kT.
    mixture = hard_sphere_mixture(4.0, 300.0)
    kT = kT_eV(300.0)
    tau = _energy_relaxation_time_s(mixture, 1.5 * kT)
    mean, final, counts = _relax_without_field(mixture, 3.0 * kT, 8 * tau, 4 * tau, electrons=512, replicas=8,
                                               seed=4, top_eV=30 * kT)
    _, error = _assert_thermal(mean, final, counts, 300.0)
    assert error < 0.04  # expected 0.82 √(2 τ / (4 τ × 512)) ≈ 2.6 % (module docstring)


@pytest.mark.slow
def test_light_hard_sphere_swarm_is_exactly_thermal():
    # Hard spheres of 0.005 amu (target speeds ~0.3 of the electron's: a severe test of the relative-speed
    # sampling; the energy relaxes in ~5 collisions) at 300 K and 1e-3 Td (field heating M W²/2 ~ 1e-10 eV): the
    # mean energy is 3kT/2 within 0.5 % and three standard errors, the standard error is below 0.17 %, and the
    # sampled EEDF is the Maxwell–Boltzmann one at T bin by bin (chi-square with the replicas' standard errors).
    mixture = hard_sphere_mixture(0.005, 300.0)
    kT = kT_eV(300.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(mixture, 1e-3, seed=8, electrons=4096, max_events=2e7, precision=1e-9, eedf_bins=40)
    assert result.anomalies["frequency_above_bound"] == 0 and result.anomalies["not_relaxed"] == 0
    est = result.mean_energy_eV
    assert abs(est.value - 1.5 * kT) < 0.005 * 1.5 * kT, est
    assert abs(est.value - 1.5 * kT) < 3 * est.stderr, est
    assert est.stderr < 0.0017 * 1.5 * kT
    eedf = result.eedf
    edges = eedf.energy_edges_eV
    centre = 0.5 * (edges[1:] + edges[:-1])
    exact = stats.gamma(1.5, scale=kT)
    # the EEDF is normalised as ∫ f ε^½ dε = 1: bin probability / (2/3 (ε₂^3/2 − ε₁^3/2))
    expected = np.diff(exact.cdf(edges)) / ((2 / 3) * np.diff(edges ** 1.5))
    used = (centre < 6 * kT) & (eedf.stderr > 0)
    z = (eedf.value[used] - expected[used]) / eedf.stderr[used]
    assert stats.chi2.sf(float((z ** 2).sum()), int(used.sum())) > 1e-3, z


@pytest.mark.slow
def test_einstein_relation_for_hard_spheres_at_low_field():
    # Einstein 1905 (Ann. Phys. 17 549): as E → 0 the transverse diffusion coefficient and the mobility satisfy
    # D_T/μ = kT/e (exact for any cross section and mass ratio). The drift velocity must stand out of the thermal
    # noise (W/v ~ 0.04) while the field heating M W²/2 stays small: light hard spheres (0.002 amu) at 300 K and
    # 0.2 Td heat the swarm by 0.9 % of 3kT/2, below the 2 % tolerance (with M = 4 amu the same W would heat it
    # 2000 times more). That heating is about three of the run's standard errors (0.34 %), so the 3σ check uses the
    # generalized Einstein relation to first order in it, e D_T/K = k T_T, with k T_T = 2⟨ε⟩/3 for the nearly
    # isotropic electrons (Mason E A & McDaniel E W 1988, Transport Properties of Ions in Gases, Wiley, ch. 5;
    # from memory), the swarm's own transverse temperature measured in the same run (0.91 % above kT).
    mixture = hard_sphere_mixture(0.002, 300.0)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(mixture, 0.2, seed=12, electrons=2048, max_events=1e8, precision=1e-9)
    assert result.anomalies["frequency_above_bound"] == 0
    w, d = result.drift_velocity_flux, result.N_D_T_flux
    N_mu = w.value / (0.2 * 1e-21)               # μN [1/(V m s)]
    ratio = d.value / N_mu                       # D_T/μ [V]
    error = ratio * math.hypot(w.relative_stderr, d.relative_stderr)
    assert abs(ratio - kT_eV(300.0)) < 0.02 * kT_eV(300.0) + 1e-12, (ratio, error)
    kT_T = 2.0 / 3.0 * result.mean_energy_eV.value
    assert 0.0 < kT_T / kT_eV(300.0) - 1.0 < 0.02  # the field heats the swarm a little
    combined = math.hypot(error, 2.0 / 3.0 * result.mean_energy_eV.stderr)
    assert abs(ratio - kT_T) < 3 * combined, (ratio, kT_T, combined)
    assert error < 0.007 * kT_eV(300.0)


@pytest.mark.slow
@pytest.mark.parametrize("gas, temperature_K, electrons, precision", [
    ("He", 300.0, 256, 0.05), ("He", 77.0, 256, 0.05), ("Ar", 300.0, 64, 0.12), ("Ar", 77.0, 64, 0.12)])
def test_shipped_gases_relax_to_thermal_equilibrium(gas, temperature_K, electrons, precision):
    # Thermal equilibrium without field in the shipped sets (exact: the only steady state), from a Maxwellian at
    # twice the gas temperature, after 5 energy-relaxation times: Maxwell–Boltzmann at T (KS) and mean 3kT/2
    # within four standard errors. CI affords a few hundred electrons (helium: ~3646 collisions per relaxation
    # time, argon ~36 000), so the standard error is a few % (helium) to ~10 % (argon), see the module docstring;
    # the 1 % check was run once with longer runs (see the report of issue 18). Targets at rest in the frequency
    # left helium at ~kT, 33 % low.
    mixture = Mixture({gas: 1.0}, temperature_K=temperature_K)
    kT = kT_eV(temperature_K)
    # the slowest relaxation over the energies the swarm passes (argon's Ramsauer minimum makes it slower above 3kT/2)
    tau = max(_energy_relaxation_time_s(mixture, x * kT) for x in (0.75, 1.5, 3.0))
    mean, final, counts = _relax_without_field(mixture, 3.0 * kT, 5 * tau, 3 * tau, electrons=electrons,
                                               replicas=8, seed=21, top_eV=30 * kT)
    _, error = _assert_thermal(mean, final, counts, temperature_K)
    assert error < precision


# ------------------------------------------------------------------------------------------ the cold gas path

def test_cold_gas_results_are_unchanged_at_fixed_seed():
    # Fixed-seed regression (kind c): these numbers were produced by the code before thermal targets were
    # sampled at the relative speed (commit 8c2a327); the cold-gas (T = 0) path must stay bitwise the same. These
    # tiny budgets never relax, so the pilot relaxation (issue 13) would take over: it is switched off here. The
    # energy-dependent trial frequency (issue 13) samples other trial events by design: the constant one is asked
    # for, whose path must stay bitwise the same.
    ls = Mixture("lucas-saelee", temperature_K=0.0, number_density_m3=1e24,
                 sets={"lucas-saelee": model_gas("lucas-saelee", F=0.5)})
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        r = swarm(ls, 300.0, seed=5, electrons=256, replicas=4, max_events=4e5, precision=1e-9, sharing="uniform",
                  relaxation_pilot=False, trial_frequency="constant")
        rr = swarm(Mixture("reid-ramp", temperature_K=0.0, number_density_m3=1e25), 12.0, seed=6, electrons=256,
                   replicas=4, max_events=4e5, precision=1e-9, relaxation_pilot=False, trial_frequency="constant")
        t = townsend(ls, 300.0, seed=2, electrons=256, replicas=4, max_events=3e5, precision=1e-9,
                     distance_m=4e-3, margin_m=1e-3, planes=20, sharing="uniform")
    assert r.events == 773879 and float(r.tallies["energy_sum_eV"].sum()) == float.fromhex("0x1.915ba6740c620p+17")
    assert r.tallies["process_counts"].sum(axis=0).tolist() == [334, 82, 90]
    assert rr.events == 405173 and float(rr.tallies["energy_sum_eV"].sum()) == float.fromhex("0x1.9d25f54868875p+15")
    assert rr.tallies["process_counts"].sum(axis=0).tolist() == [13755, 3261]
    assert t.alpha_N.value == float.fromhex("0x1.bc42ac8a53d8cp-68")
    assert float(t.profiles["flux"].sum()) == float.fromhex("0x1.6360dfb1eec5fp+33")
