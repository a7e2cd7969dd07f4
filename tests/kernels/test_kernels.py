"""Unit tests of the numba kernels: generator, samplers, collision kinematics, free flight, one chunk."""

from __future__ import annotations

import math
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest
import scipy.constants as sc
from scipy import integrate, stats

from avalanche import Mixture
from avalanche import kernels as K
from avalanche.engine.time_of_flight import EnergyGrid, ProcessTable, momentum_transfer_fraction

ROOT = Path(__file__).resolve().parents[2]
KS_LEVEL = 1e-3  # a fixed seed and a small rejection level: a correct sampler fails with probability 1e-3

MASK64 = (1 << 64) - 1


def _reference_xoshiro(state, count):
    """xoshiro256** in plain Python integers, from the algorithm's published definition (Blackman S & Vigna S
    2021, ACM Trans. Math. Softw. 47 36, "xoshiro256**": result = rotl(s1 * 5, 7) * 9; t = s1 << 17; ...)."""
    s = [int(v) for v in state]

    def rotl(x, k):
        return ((x << k) | (x >> (64 - k))) & MASK64

    out = []
    for _ in range(count):
        result = (rotl((s[1] * 5) & MASK64, 7) * 9) & MASK64
        t = (s[1] << 17) & MASK64
        s[2] ^= s[0]
        s[3] ^= s[1]
        s[1] ^= s[2]
        s[0] ^= s[3]
        s[2] ^= t
        s[3] = rotl(s[3], 45)
        out.append((result >> 11) * 2.0 ** -53)
    return out, s


def test_generator_matches_the_published_algorithm():
    state = np.random.SeedSequence(42).generate_state(4, np.uint64)
    expected, final = _reference_xoshiro(state, 50)
    s0, s1, s2, s3 = state
    got = []
    for _ in range(50):
        # (the compiled function returns Python ints; numba would type them int64, so convert back)
        u, *new = K.next_uniform(s0, s1, s2, s3)
        s0, s1, s2, s3 = (np.uint64(v) for v in new)
        got.append(u)
    assert got == expected
    assert [int(s0), int(s1), int(s2), int(s3)] == final


def _uniforms(n, seed=7):
    return np.random.default_rng(seed).random(n)


def test_isotropic_directions_are_uniform_on_the_sphere():
    u, phi = _uniforms(20000, 1), 2 * np.pi * _uniforms(20000, 2)
    dirs = np.array([K.new_direction(K.SCATTER_ISOTROPIC, 0.3, 0.4, math.sqrt(0.75), 1.0, a, b)
                     for a, b in zip(u, phi, strict=True)])
    np.testing.assert_allclose(np.linalg.norm(dirs, axis=1), 1.0, rtol=1e-14)
    # Isotropy: cos θ uniform on [-1, 1] and the azimuth uniform (analytic distributions, KS test).
    assert stats.kstest(dirs[:, 2], stats.uniform(-1, 2).cdf).pvalue > KS_LEVEL
    assert stats.kstest(np.arctan2(dirs[:, 1], dirs[:, 0]), stats.uniform(-np.pi, 2 * np.pi).cdf).pvalue > KS_LEVEL


@pytest.mark.parametrize("incident", [(0.0, 0.0, 1.0), (0.0, 0.0, -1.0), (0.6, 0.0, 0.8), (-0.48, 0.6, 0.64)])
def test_rotation_turns_by_the_requested_angle(incident):
    rng = np.random.default_rng(3)
    for cos_chi, phi in zip(rng.uniform(-1, 1, 50), rng.uniform(0, 2 * np.pi, 50), strict=True):
        n = np.array(K.rotate_direction(*incident, cos_chi, phi))
        assert np.linalg.norm(n) == pytest.approx(1.0, abs=1e-14)
        assert float(np.dot(n, incident)) == pytest.approx(cos_chi, abs=1e-13)


@pytest.mark.parametrize("energy_eV", [0.05, 1.0, 30.0])
def test_screened_coulomb_sampler_follows_its_distribution(energy_eV):
    # Okhrimovskyy, Bogaerts & Gijbels 2002 (Phys. Rev. E 65 037402, from memory): the differential cross section
    # ∝ 1/(1 - ξ cos χ)², ξ = 4ε/(1 + 4ε); its CDF in w = 1 - cos χ is F(w) = w(1 + ξ) / (2(1 - ξ + ξ w)).
    xi = 4 * energy_eV / (1 + 4 * energy_eV)
    cos = np.array([K.scattering_cosine(K.SCATTER_SCREENED_COULOMB, energy_eV, u) for u in _uniforms(20000)])
    w = 1.0 - cos
    assert stats.kstest(w, lambda x: x * (1 + xi) / (2 * (1 - xi + xi * x))).pvalue > KS_LEVEL
    # σ_m/σ_T = <1 - cos χ> of the same density, integrated numerically.
    density = lambda c: 1.0 / (1.0 - xi * c) ** 2  # noqa: E731
    norm = integrate.quad(density, -1, 1)[0]
    mean = integrate.quad(lambda c: (1 - c) * density(c), -1, 1)[0] / norm
    assert float(momentum_transfer_fraction(energy_eV)) == pytest.approx(mean, rel=1e-9, abs=0)


def test_momentum_transfer_fraction_limits():
    # Isotropic at ε → 0 (ξ → 0) and the series 1 - 2ξ/3 join the closed form smoothly.
    assert float(momentum_transfer_fraction(0.0)) == 1.0
    for e in (2e-5, 3e-5):
        xi = 4 * e / (1 + 4 * e)
        assert float(momentum_transfer_fraction(e)) == pytest.approx(1 - 2 * xi / 3, rel=1e-8, abs=0)


def test_opb_sharing_follows_its_distribution():
    # Opal, Peterson & Beaty 1971 (J. Chem. Phys. 55 4100): σ(ε, ε_s) ∝ 1/(1 + (ε_s/w)²) on [0, (ε - I)/2];
    # CDF atan(ε_s/w) / atan((ε - I)/(2w)).
    excess, w = 60.0, 10.0
    e_s = np.array([K.secondary_energy_eV(excess, K.SHARING_OPB, w, u) for u in _uniforms(20000)])
    assert e_s.min() >= 0 and e_s.max() <= excess / 2
    cdf = lambda x: np.arctan(x / w) / np.arctan(excess / (2 * w))  # noqa: E731
    assert stats.kstest(e_s, cdf).pvalue > KS_LEVEL
    uniform = np.array([K.secondary_energy_eV(excess, K.SHARING_UNIFORM, w, u) for u in _uniforms(20000)])
    assert stats.kstest(uniform, stats.uniform(0, excess).cdf).pvalue > KS_LEVEL
    assert K.secondary_energy_eV(excess, K.SHARING_EQUAL, w, 0.3) == excess / 2


@pytest.mark.parametrize("model", [K.SCATTER_ISOTROPIC, K.SCATTER_SCREENED_COULOMB])
def test_elastic_collision_conserves_energy_and_momentum(model):
    # Exact two-body kinematics: momentum and kinetic energy are conserved to round-off (common practice check).
    rng = np.random.default_rng(11)
    m = sc.m_e
    for mass_amu in (4.0, 39.948, 1.008):
        M = mass_amu * sc.atomic_mass
        p, q = m / (m + M), M / (m + M)
        for _ in range(200):
            v = rng.normal(0, 1e6, 3)
            V = rng.normal(0, 1e3, 3)
            energy = 0.5 * m * v @ v / sc.e
            out = np.array(K.elastic_velocity(*v, *V, p, q, model, energy, rng.random(), 2 * np.pi * rng.random()))
            V_out = (m * v + M * V - m * out) / M
            before = 0.5 * m * v @ v + 0.5 * M * V @ V
            after = 0.5 * m * out @ out + 0.5 * M * V_out @ V_out
            assert after == pytest.approx(before, rel=1e-12, abs=0)


def test_elastic_recoil_loss_averages_the_textbook_fraction():
    # A target at rest, isotropic CM scattering: <Δε/ε> = 2 m M/(m + M)² (e.g. Huxley & Crompton 1974, The
    # Diffusion and Drift of Electrons in Gases, ch. 2; common practice). Sampling error ~ 1/√n of the mean.
    m, M = sc.m_e, 4 * sc.atomic_mass
    p, q = m / (m + M), M / (m + M)
    u, phi = _uniforms(40000, 5), 2 * np.pi * _uniforms(40000, 6)
    v = np.array([1e6, 0.0, 0.0])
    loss = np.array([1 - np.sum(np.square(K.elastic_velocity(*v, 0, 0, 0, p, q, 0, 1.0, a, b))) / 1e12
                     for a, b in zip(u, phi, strict=True)])
    expected = 2 * m * M / (m + M) ** 2
    assert loss.mean() == pytest.approx(expected, rel=4 * loss.std() / expected / math.sqrt(loss.size), abs=0)


def test_ionization_conserves_energy():
    # The two outgoing electrons carry ε - I exactly (to round-off) whatever the sharing rule.
    rng = np.random.default_rng(2)
    for rule in (K.SHARING_EQUAL, K.SHARING_UNIFORM, K.SHARING_OPB):
        for _ in range(100):
            energy, threshold = rng.uniform(16, 500), 15.76
            v = rng.normal(size=3)
            v *= K.speed_from_energy(energy) / np.linalg.norm(v)
            excess = energy - threshold
            ejected = K.secondary_energy_eV(excess, rule, 10.0, rng.random())
            kept = excess - ejected
            a = np.array(K.turned_velocity(*v, K.speed_from_energy(ejected), 1, ejected, rng.random(), 1.0))
            b = np.array(K.turned_velocity(*v, K.speed_from_energy(kept), 0, kept, rng.random(), 2.0))
            out = K.ENERGY_PER_SPEED2_eV * (a @ a + b @ b)
            assert out + threshold == pytest.approx(energy, rel=1e-13, abs=0)


def test_dc_flight_is_uniform_acceleration():
    dv, dz = K.field_flight(3.0, 2.0, 5.0, 0.0, 0.0, 0.0)
    assert (dv, dz) == (10.0, 10.0)


def test_ac_flight_integrates_the_field():
    # Δv = ∫ a dt and Δz - v0 τ = ∫∫ a, against numerical quadrature (analytic check of the impulse functions).
    a_dc, a_ac, omega, phase, t, tau = 2.0, 3.0, 5.0, 0.7, 1.3, 0.9
    accel = lambda s: a_dc + a_ac * math.sin(omega * s + phase)  # noqa: E731
    dv_ref = integrate.quad(accel, t, t + tau)[0]
    dz_ref = integrate.quad(lambda s: integrate.quad(accel, t, s)[0], t, t + tau)[0]
    dv, dz = K.field_flight(t, tau, a_dc, a_ac, omega, phase)
    assert dv == pytest.approx(dv_ref, rel=1e-10, abs=0)
    assert dz == pytest.approx(dz_ref, rel=1e-10, abs=0)
    # ω = 0 means a constant field a_dc + a_ac sin φ.
    assert K.field_flight(t, tau, a_dc, a_ac, 0.0, phase)[0] == pytest.approx((a_dc + a_ac * math.sin(phase)) * tau)


@pytest.mark.parametrize("delta", [1e-6, 0.01, 0.049, K.SINE_SERIES_LIMIT, 0.051, 0.7, 4.0])
@pytest.mark.parametrize("theta0", [0.0, 0.5 * math.pi, 2.1, 1234.5])
def test_sine_flight_integrates_the_field(delta, theta0):
    # Δv = a_dc τ + a_ac τ ∫₀¹ sin(θ₀ + δu) du and Δz = a_dc τ²/2 + a_ac τ² ∫₀¹ (1 − u) sin(θ₀ + δu) du (the
    # double integral by parts), δ = ωτ, on both sides of the series limit. Reference: 24-point Gauss–Legendre
    # quadrature, exact to rounding for these entire integrands (error ~ δ⁴⁸/48! · 2⁻⁴⁸; Abramowitz & Stegun
    # 1964, eq. 25.4.30). θ₀ = 0 and π/2 isolate the terms 1 − cos δ, δ − sin δ and sin δ of the closed form.
    # Tolerance 1e-12 relative: the closed form's rounding is ≤ 3e-13 relative (q = δ − sin δ just above the
    # series limit), the reference's ~1e-15.
    a_dc, a_ac, omega = 0.3, 2.0, 7.0
    tau = delta / omega
    nodes, weights = np.polynomial.legendre.leggauss(24)
    u, w = 0.5 * (nodes + 1.0), 0.5 * weights
    mean_sin = float(w @ np.sin(theta0 + delta * u))
    ramp_sin = float(w @ ((1.0 - u) * np.sin(theta0 + delta * u)))
    dv, dz, cos1, sin1 = K.sine_flight(tau, a_dc, a_ac, omega, math.cos(theta0), math.sin(theta0))
    assert dv == pytest.approx(a_dc * tau + a_ac * tau * mean_sin, rel=1e-12, abs=0)
    assert dz == pytest.approx(0.5 * a_dc * tau * tau + a_ac * tau * tau * ramp_sin, rel=1e-12, abs=0)
    # the AC part alone (a_dc = 0), where the series carries the whole result
    dv, dz, _, _ = K.sine_flight(tau, 0.0, a_ac, omega, math.cos(theta0), math.sin(theta0))
    assert dv == pytest.approx(a_ac * tau * mean_sin, rel=1e-12, abs=0)
    assert dz == pytest.approx(a_ac * tau * tau * ramp_sin, rel=1e-12, abs=0)
    # the phase at the flight's end (cos, sin of θ₀ + δ: absolute rounding of θ₀ + δ ≤ 2.3e-13 at θ₀ ~ 1e3)
    assert (cos1, sin1) == pytest.approx((math.cos(theta0 + delta), math.sin(theta0 + delta)), rel=0, abs=1e-12)


def test_sine_flight_phase_does_not_drift():
    # 10⁵ short flights carried from one to the next (as the kernel does for an electron) keep cos θ, sin θ of
    # the elapsed phase θ = φ + Σ ωτ (summed exactly with math.fsum): the rotation is exact to rounding, so its
    # error grows like √n ulp, ~1e-14 here; tolerance 1e-12 (the rounding of θ ~ 1e3 itself is 1.1e-13).
    omega, phase = 2 * math.pi * 5e9, 0.3
    taus = np.random.default_rng(5).exponential(3e-13, 100_000)
    cos_t, sin_t = math.cos(phase), math.sin(phase)
    for tau in taus:
        _, _, cos_t, sin_t = K.sine_flight(tau, 0.0, 1.0, omega, cos_t, sin_t)
    theta = phase + math.fsum(omega * taus)
    assert (cos_t, sin_t) == pytest.approx((math.cos(theta), math.sin(theta)), rel=0, abs=1e-12)


@pytest.mark.parametrize("gas, params", [("reid-ramp", {}), ("lucas-saelee", {"F": 0.5}),
                                         ("ness-robson", {"p": 0.5})])
def test_trial_frequency_bounds_the_collision_frequency(gas, params):
    # Skullerud 1968 (J. Phys. D 1 1567): the null-collision method is exact only if ν* ≥ ν(ε) everywhere. The
    # kernel interpolates the node values linearly, so ν* ≥ every node value bounds it exactly; the true
    # frequency between the nodes is checked on a 16× finer grid.
    from avalanche import model_gas

    mixture = Mixture(gas, temperature_K=0.0, number_density_m3=1e24, sets={gas: model_gas(gas, **params)})
    for scattering in ("isotropic", "screened-coulomb"):
        table = ProcessTable.build(mixture, "uniform", scattering)
        grid = EnergyGrid.build(table, 40.0, 1024)
        assert np.all(grid.nu_total <= grid.nu_star)
        fine = np.linspace(0.0, 40.0, 16 * 1024 + 1)
        assert np.all(table.frequencies(fine).sum(axis=0) <= grid.nu_star)
        np.testing.assert_allclose(grid.nu_cumulative[:, -1], grid.nu_total)


CHUNK_SCRIPT = textwrap.dedent("""
    import json, sys, warnings
    import numpy as np
    from avalanche import Mixture, model_gas
    from avalanche.engine.time_of_flight import swarm
    warnings.simplefilter("ignore")
    with np.errstate(over="ignore"):
        mixture = Mixture("lucas-saelee", temperature_K=300.0, number_density_m3=1e24,
                          sets={"lucas-saelee": model_gas("lucas-saelee", F=0.5)})
        r = swarm(mixture, 400.0, seed=3, electrons=8, replicas=2, max_events=3000, precision=1e-9,
                  events_per_chunk=20, energy_max_eV=80.0, sharing="opb", scattering="screened-coulomb")
    print(json.dumps({"events": r.events, "energy": r.tallies["energy_sum_eV"].tolist(),
                      "counts": r.tallies["process_counts"].tolist()}))
""")


def _run_chunk_script(disable_jit: bool) -> dict:
    import json

    env = dict(os.environ, PYTHONPATH=str(ROOT), NUMBA_DISABLE_JIT="1" if disable_jit else "0")
    proc = subprocess.run([sys.executable, "-c", CHUNK_SCRIPT], capture_output=True, text=True, env=env, cwd=ROOT,
                          timeout=300)
    assert proc.returncode == 0, proc.stderr
    return json.loads(proc.stdout)


def test_kernels_run_as_plain_python_with_the_same_results():
    # The kernels are plain functions: with NUMBA_DISABLE_JIT=1 the same source runs in the interpreter and, with
    # the same IEEE arithmetic, follows the same trajectories.
    compiled = _run_chunk_script(False)
    plain = _run_chunk_script(True)
    assert plain["events"] == compiled["events"] > 1000
    assert plain["counts"] == compiled["counts"]
    np.testing.assert_allclose(plain["energy"], compiled["energy"], rtol=1e-12)
