"""The energy-dependent (piecewise-constant) trial frequency of the null-collision method (issue 13).

The trial frequency is a constant bound of the collision frequency over each of a few energy intervals; a flight
that reaches an interval edge stops there without an event and continues at the next interval's rate with the rest
of its unit-rate optical depth, so the trial events stay a Poisson process of rate ν*(t) and the method stays exact
(Skullerud H R 1968, J. Phys. D 1 1567, doi:10.1088/0022-3727/1/11/423).
"""

from __future__ import annotations

import math
import warnings

import numpy as np
import pytest
from scipy import constants as sc
from scipy.special import gamma
from test_thermal import HARD_SPHERE_m2, hard_sphere_mixture

from avalanche import Mixture, swarm
from avalanche import kernels as K
from avalanche.engine.tables import TRIAL_RATE_FLOOR, EnergyGrid, ProcessTable, trial_intervals


def test_interval_exit_is_the_exact_crossing_of_a_uniformly_accelerated_electron():
    # v²(t) = v_⊥² + (u_z + a t)² (uniform acceleration, exact): at the returned time v² is on the edge named, and
    # before it v² stays inside the interval.
    rng = np.random.default_rng(5)
    a = 3e15
    for _ in range(2000):
        low2, high2 = np.sort(rng.uniform(1e10, 1e12, 2))
        v2 = rng.uniform(low2, high2)
        cos = rng.uniform(-1, 1)
        uz, vperp2 = math.sqrt(v2) * cos, v2 * (1 - cos * cos)
        t, step = K.interval_exit(vperp2, uz, a, low2, high2)
        end2 = vperp2 + (uz + a * t) ** 2
        assert end2 == pytest.approx(low2 if step < 0 else high2, rel=1e-9)
        inside = vperp2 + (uz + a * t * np.linspace(0, 1, 50)[1:-1]) ** 2
        assert np.all((inside >= low2 * (1 - 1e-9)) & (inside <= high2 * (1 + 1e-9)))
    assert K.interval_exit(1e10, 1e5, 0.0, 0.0, 1e12) == (math.inf, 0)  # no field: the energy never changes
    assert K.interval_exit(1e10, 1e5, a, 0.0, math.inf)[0] == math.inf  # the top interval has no upper edge


def test_intervals_group_cells_of_similar_frequency():
    bound = np.array([1.0, 1.1, 1.2, 5.0, 5.5, 6.0, 6.2, 100.0])
    assert trial_intervals(bound, ratio=1.3, min_cells=1).tolist() == [0, 3, 7]
    assert trial_intervals(bound, ratio=1.3, min_cells=4).tolist() == [0, 4]


@pytest.mark.parametrize("gas, temperature_K", [("Ar", 300.0), ("air", 0.0), ("N2", 300.0)])
def test_every_interval_rate_bounds_the_collision_frequency_in_it(gas, temperature_K):
    mixture = Mixture(gas, temperature_K=temperature_K, number_density_m3=2.5e25)
    table = ProcessTable.build(mixture, "opb", "isotropic")
    grid = EnergyGrid.build(table, 60.0, 2048)
    rates, edges, cell_interval = grid.trial
    assert rates.max() <= grid.nu_star * (1 + 1e-12) and rates.min() >= TRIAL_RATE_FLOOR * rates.max() * (1 - 1e-12)
    assert edges[0] == 0.0 and edges[-1] == math.inf and np.all(np.diff(edges) > 0)
    # every cell's interval is the one its energies lie in
    cell_top_v2 = np.arange(1, grid.n_cells + 1) * 60.0 / grid.n_cells / K.ENERGY_PER_SPEED2_eV
    assert np.all(edges[cell_interval] < cell_top_v2) and np.all(cell_top_v2 <= edges[cell_interval + 1] * (1 + 1e-12))
    # the frequency as the kernel reads it (linear between nodes) on a 16× finer grid stays below its interval's
    # rate (at T > 0 the bands also bound the relative energies, tested in test_thermal)
    fine_eV = np.linspace(0.0, 60.0, 16 * grid.n_cells, endpoint=False)
    nu = np.interp(fine_eV, np.linspace(0.0, 60.0, grid.n_cells + 1), grid.nu_total[:grid.n_cells + 1])
    assert np.all(nu <= rates[cell_interval[(fine_eV * grid.n_cells / 60.0).astype(int)]])
    assert len(rates) < 64  # few edges to cross


def test_druyvesteyn_mean_energy_of_a_hard_sphere_gas():
    # Constant cross section, elastic, cold gas: ν ∝ v changes over the whole distribution, so the trial frequency has
    # many intervals. The two-term result is Druyvesteyn's f(ε) ∝ exp[−(ε/ε0)²], ε0 = eEλ √(M/(3m)), λ = 1/(Nσ),
    # so ⟨ε⟩ = ε0 Γ(5/4)/Γ(3/4) (Druyvesteyn M J 1930, Physica 10 61; e.g. Raizer Y P 1991, Gas Discharge Physics,
    # Springer, §2.4; from memory). For M = 4 u its neglected terms are of order m/M ~ 1e-4 and (W/v)² ~ 1e-4:
    # 1 % is generous beside them, plus 3 standard errors of the run.
    mass_amu, field_Td = 4.0, 1.0
    eps0_eV = field_Td * 1e-21 / HARD_SPHERE_m2 * math.sqrt(mass_amu * sc.atomic_mass / (3 * sc.m_e))
    reference = eps0_eV * gamma(1.25) / gamma(0.75)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        result = swarm(hard_sphere_mixture(mass_amu, 0.0), field_Td, seed=4, precision=1e-9, max_events=1.5e7,
                       electrons=4096)
    energy = result.mean_energy_eV
    assert result.anomalies["frequency_above_bound"] == 0
    assert abs(energy.value - reference) < 0.01 * reference + 3 * energy.stderr, (energy, reference)


def test_piecewise_trial_frequency_wastes_fewer_null_events_and_agrees_with_the_constant_one():
    # Argon at 100 Td, 300 K: the same swarm with both trial frequencies; the collision rate per trial event rises, the
    # frequency never exceeds its bound, and the mean energy and the drift velocity agree within 4 combined errors.
    out = {}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for mode in ("constant", "piecewise"):
            out[mode] = swarm("Ar", 100.0, seed=7, precision=1e-9, max_events=6e6, electrons=2048, trial_frequency=mode)
    real = {m: r.tallies["real_collisions"].sum() / r.tallies["events"].sum() for m, r in out.items()}
    assert real["piecewise"] > 1.5 * real["constant"]
    for r in out.values():
        assert r.anomalies["frequency_above_bound"] == 0
    for name in ("mean_energy_eV", "drift_velocity_flux"):
        a, b = out["constant"].estimates[name], out["piecewise"].estimates[name]
        assert abs(a.value - b.value) < 4 * math.hypot(a.stderr, b.stderr), (name, a, b)
