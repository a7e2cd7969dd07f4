"""Penning transfer in mixtures: level groups and their checks, the kernel's transfer, the bookkeeping of the
estimators, the Ne–Ar trend of the Townsend coefficient, and the run-file and command-line forms."""

from __future__ import annotations

import json
import math
import warnings

import numpy as np
import pytest
from scipy import stats

from avalanche import Mixture
from avalanche import kernels as K
from avalanche.cli.main import main
from avalanche.engine.tables import COLD_GAS_GROUPS
from avalanche.engine.time_of_flight import ProcessTable, swarm
from avalanche.errors import ConfigError
from avalanche.gas.penning import applicable_penning, ionization_energy_eV, parse_penning, split_key
from avalanche.sweep.execution import point_task
from avalanche.sweep.runfile import parse_runfile

# Ground-state ionization energies [eV], NIST Atomic Spectra Database (Kramida, Ralchenko, Reader & NIST ASD Team;
# from memory), the values of the shipped sets' headers.
I_AR_eV = 15.75961
I_XE_eV = 12.129843
I_N2_eV = 15.581  # NIST Chemistry WebBook, adiabatic (from memory)
# Excitation energy of Ne 1s5 (2p5 3s [3/2]2), NIST ASD (from memory): the shipped Ne set's threshold.
NE_1S5_eV = 16.6191
NE_1S5 = "1s5 (2p5 3s [3/2]2, metastable)"
KS_LEVEL = 1e-3  # a fixed seed and a small rejection level: a correct sampler fails with probability 1e-3


def _quiet_swarm(mixture, field_Td, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return swarm(mixture, field_Td, **kwargs)


# ---------------------------------------------------------------------------------------------- level groups

def test_species_group_selects_every_level_above_the_receivers_ionization_energy():
    # Every excited level of Ne (16.6–19.7 eV, NIST ASD) lies above I(Ar) = 15.76 eV and none reaches I(Ne),
    # so "Ne" selects all six excitations of the shipped set; each electron gets ε_level − I(Ar).
    m = Mixture({"Ne": 0.99, "Ar": 0.01}, penning={"Ne": 0.4})
    excitations = [p for p in m.components[0].cross_sections.processes if p.kind == "excitation"]
    assert [c.level for c in m.penning_channels] == [p.label for p in excitations]
    assert all(c.receiver == "Ar" and c.probability == 0.4 for c in m.penning_channels)
    first = m.penning_channels[0]
    assert first.level == NE_1S5
    assert first.electron_energy_eV == pytest.approx(NE_1S5_eV - I_AR_eV, rel=1e-12, abs=0)
    described = m.describe()["penning"]
    assert described["groups"] == {"Ne": 0.4} and len(described["channels"]) == 6


def test_label_prefix_and_glob_groups():
    # Shipped Ne labels: "1s5 …", "1s4 …", "1s3 …", "1s2 …", "2p manifold …", "higher levels …".
    m = Mixture("Ne:0.99,Ar:0.01", penning={"Ne:1s": 0.2, "Ne:2p": 0.5, "Ne:high*": 1.0})
    by_group = {}
    for c in m.penning_channels:
        by_group.setdefault(c.group, []).append(c.level[:3])
    assert by_group == {"Ne:1s": ["1s5", "1s4", "1s3", "1s2"], "Ne:2p": ["2p "], "Ne:high*": ["hig"]}
    exact = Mixture("Ne:0.99,Ar:0.01", penning={f"Ne:{NE_1S5}": 0.3})
    assert [c.level for c in exact.penning_channels] == [NE_1S5]
    # the file's group field: every level of Ne.toml carries group = "Ne*"
    grouped = Mixture("Ne:0.99,Ar:0.01", penning={"Ne:Ne*": 0.3})
    assert len(grouped.penning_channels) == 6


def test_default_receiver_is_the_lowest_ionization_energy_and_can_be_named():
    # Ne–Ar–Xe: I(Xe) = 12.13 eV < I(Ar) = 15.76 eV (NIST ASD), so Xe receives unless Ar is named.
    m = Mixture({"Ne": 0.98, "Ar": 0.01, "Xe": 0.01}, penning={"Ne:1s": 0.5, "Ne:2p -> Ar": 0.5})
    receivers = {c.group: c.receiver for c in m.penning_channels}
    assert receivers == {"Ne:1s": "Xe", "Ne:2p -> Ar": "Ar"}
    xe = [c for c in m.penning_channels if c.receiver == "Xe"][0]
    assert xe.electron_energy_eV == pytest.approx(NE_1S5_eV - I_XE_eV, rel=1e-12, abs=0)
    # He–N2: every He level (19.8–22.7 eV) lies above I(N2) = 15.58 eV.
    he = Mixture({"He": 0.9, "N2": 0.1}, penning={"He": 0.1})
    assert len(he.penning_channels) == 5
    assert all(c.receiver_ionization_eV == pytest.approx(I_N2_eV, rel=1e-12, abs=0) for c in he.penning_channels)


def test_ionization_energy_falls_back_to_the_ionization_threshold():
    # Common practice: the ionization threshold of the set is the ionization energy when the header has none.
    from avalanche import model_gas

    xs = model_gas("lucas-saelee", F=0.5)
    assert ionization_energy_eV(xs) == pytest.approx(15.6, rel=1e-12, abs=0)


def test_zero_probabilities_are_the_plain_mixture():
    plain = Mixture("Ne:0.99,Ar:0.01")
    zero = Mixture("Ne:0.99,Ar:0.01", penning={"Ne": 0.0})
    assert zero.penning == {} and zero.penning_channels == ()
    assert zero.describe() == plain.describe()


@pytest.mark.parametrize("penning, message", [
    ({"Neon": 0.3}, "species 'Neon' is not a component of the mixture (did you mean 'Ne'?)"),
    ({"Ne:3s": 0.3}, "no enabled excitation of Ne matches '3s'"),
    ({"Ar": 0.3}, "can ionize Ne, I = 21.56 eV"),
    ({"Ar:1s5": 0.3}, "cannot ionize Ne, I = 21.56 eV"),
    ({"Ne": 1.5}, "must be a number between 0 and 1"),
    ({"Ne": -0.1}, "must be a number between 0 and 1"),
    ({"Ne": math.nan}, "must be a number between 0 and 1"),
    ({"Ne": True}, "must be a number between 0 and 1"),
    ({"Ne": 0.3, "Ne:1s": 0.5}, "is selected by both 'Ne' and 'Ne:1s'"),
    ({"Ne->Kr": 0.3}, "receiver 'Kr' is not a component"),
    ({"Ne->Ne": 0.3}, "is the excited species itself"),
    ("Ne:0.3", "must be a mapping"),
])
def test_bad_penning_settings_are_config_errors(penning, message):
    with pytest.raises(ConfigError) as info:
        Mixture({"Ne": 0.99, "Ar": 0.01}, penning=penning)
    assert message in str(info.value)


def test_a_pure_gas_has_no_receiver():
    with pytest.raises(ConfigError, match="no other component with an ionization energy"):
        Mixture("Ne", penning={"Ne": 0.3})


def test_parse_penning_and_key_rules():
    assert parse_penning("Ne:0.3") == {"Ne": 0.3}
    assert parse_penning("Ne:1s:0.2, Ne:2p->Ar:0.5") == {"Ne:1s": 0.2, "Ne:2p->Ar": 0.5}
    assert split_key("Ne:2p -> Ar") == ("Ne", "2p", "Ar")
    assert split_key("He") == ("He", "", None)
    for bad, message in (("Ne", "must be GROUP:PROBABILITY"), ("Ne:high", "probability 'high' of 'Ne'")):
        with pytest.raises(ConfigError, match=message):
            parse_penning(bad)
    assert applicable_penning({"Ne": 0.3, "Ne:2p->Xe": 0.1}, ["Ne", "Ar"]) == {"Ne": 0.3}
    assert applicable_penning({"Ne": 0.3}, ["Ne"]) == {}


# --------------------------------------------------------------------------------------------- process table

def test_process_table_has_zero_frequency_penning_rows_after_the_real_ones():
    m = Mixture({"Ne": 0.99, "Ar": 0.01}, penning={"Ne:1s": 0.25})
    table = ProcessTable.build(m, "equal", "isotropic")
    real = [k for k, kind in enumerate(table.kinds) if kind != "penning"]
    pseudo = [k for k, kind in enumerate(table.kinds) if kind == "penning"]
    assert len(pseudo) == 4 and min(pseudo) == max(real) + 1
    assert np.all(table.frequencies(np.linspace(0.0, 100.0, 101))[pseudo] == 0.0)
    # per receiver molecule: the pseudo-rows' target density is argon's
    np.testing.assert_array_equal(table.target_density_m3[pseudo], 0.01 * m.number_density_m3)
    k5 = table.keys.index(f"Ne:{NE_1S5}")
    assert table.penning_probability[k5] == 0.25
    assert table.penning_energy_eV[k5] == pytest.approx(NE_1S5_eV - I_AR_eV, rel=1e-12, abs=0)
    assert table.keys[table.penning_slot[k5]] == f"Penning Ne:{NE_1S5} -> Ar"
    assert np.count_nonzero(table.penning_probability) == 4 and np.all(table.penning_slot[real][
        table.penning_probability[real] == 0] == -1)


# --------------------------------------------------------------------------------------------------- kernel

def _one_level_chunk(probability: float, electrons: int = 2000):
    """Electrons at 17 eV along +z, no field, in a table where only Ne 1s5 excitation has a nonzero frequency:
    every electron excites once (losing 16.6191 eV) and then sits below every threshold."""
    m = Mixture({"Ne": 0.5, "Ar": 0.5}, temperature_K=0.0, number_density_m3=1e24,
                penning={f"Ne:{NE_1S5}": probability})
    table = ProcessTable.build(m, "equal", "isotropic")
    k5 = table.keys.index(f"Ne:{NE_1S5}")
    top, cells = 20.0, 2048
    nodes = np.linspace(0.0, top, cells + 1)
    nu = table.frequencies(nodes)
    nu[np.arange(nu.shape[0]) != k5] = 0.0
    cumulative = np.ascontiguousarray(np.cumsum(nu, axis=0).T)
    total = np.ascontiguousarray(cumulative[:, -1])
    nu_star = 1.001 * total.max()
    nu_17 = np.interp(17.0, nodes, total)
    P, capacity = len(table.keys), 2 * electrons + 8
    x, y, z, vx, vy, vz, birth = (np.zeros((1, capacity)) for _ in range(7))
    vz[0, :electrons] = K.speed_from_energy(17.0)
    count = np.array([electrons], dtype=np.int64)
    rng = np.random.SeedSequence(11).generate_state(4, np.uint64).reshape(1, 4)
    sums, counts = np.zeros((1, K.N_SUMS)), np.zeros((1, K.N_COUNTS), dtype=np.int64)
    hist = np.zeros((1, 10))
    process_counts, extrapolated = np.zeros((1, P), dtype=np.int64), np.zeros((1, P), dtype=np.int64)
    K.advance_chunk(x, y, z, vx, vy, vz, birth, count, rng, 0.0, 60.0 / nu_17, 0.0, 0.0, 0.0, 0.0, cells / top,
                    cells, nu_star, total, cumulative, table.action, table.loss_eV, table.electron_fraction,
                    table.target_fraction, table.thermal_speed, table.scatter, table.sharing, table.w_eV,
                    table.table_max_eV, np.zeros((1, 3)), False, 1.0, sums, counts, hist, process_counts,
                    extrapolated, table.penning_probability, table.penning_energy_eV, table.penning_slot,
                    0.0, *(np.zeros(0),) * 4, np.zeros((1, 0, K.N_PHASE_SUMS)),  # DC: no drive period, no phases
                    np.zeros((1, 0, K.N_PHASE_COUNTS), dtype=np.int64), np.zeros((1, 0, P), dtype=np.int64),
                    COLD_GAS_GROUPS, np.zeros(3),  # cold gas, no B, a constant trial frequency, no threshold cells
                    (np.array([nu_star]), np.array([0.0, np.inf]), np.zeros(cells, dtype=np.int64)),
                    (np.zeros(cells + 1, dtype=np.int64), np.zeros(0, dtype=np.int64), np.zeros(0)),
                    np.zeros((1, cells, 2)), np.zeros((1, P, 2)))
    n = int(count[0])
    energy = K.ENERGY_PER_SPEED2_eV * (vx[0, :n] ** 2 + vy[0, :n] ** 2 + vz[0, :n] ** 2)
    cos_theta = vz[0, :n] / np.sqrt(vx[0, :n] ** 2 + vy[0, :n] ** 2 + vz[0, :n] ** 2)
    return energy, cos_theta, counts[0], process_counts[0], table.penning_slot[k5], k5


def test_kernel_creates_the_electron_with_the_excess_energy_isotropically():
    # r = 1: each of the 2000 excitations (survival of an electron without one: e^-60) creates one electron with
    # ε_level − I(Ar) = 16.6191 − 15.75961 eV (NIST ASD values of the set); the primary keeps 17 − 16.6191 eV.
    energy, cos_theta, counts, process_counts, slot, k5 = _one_level_chunk(1.0)
    assert counts[K.COUNT_CREATED] == process_counts[slot] == process_counts[k5] == 2000
    assert energy.size == 4000
    created = np.isclose(energy, NE_1S5_eV - I_AR_eV, rtol=1e-9, atol=0)
    primary = np.isclose(energy, 17.0 - NE_1S5_eV, rtol=1e-9, atol=0)
    assert created.sum() == 2000 and primary.sum() == 2000
    # isotropic: cos θ uniform on [-1, 1] (Kolmogorov–Smirnov, fixed seed)
    assert stats.kstest(cos_theta[created], stats.uniform(loc=-1.0, scale=2.0).cdf).pvalue > KS_LEVEL


def test_kernel_transfer_count_is_binomial():
    # r = 0.25 over 2000 excitations: Binomial(2000, 0.25), mean 500, σ = 19.4; 4σ bounds it (p ≈ 6e-5).
    _, _, counts, process_counts, slot, k5 = _one_level_chunk(0.25)
    assert process_counts[k5] == 2000
    assert abs(process_counts[slot] - 500) < 4 * math.sqrt(2000 * 0.25 * 0.75)
    assert counts[K.COUNT_CREATED] == process_counts[slot]


# ------------------------------------------------------------------------------------------- swarm estimates

RUN = dict(seed=5, electrons=2048, replicas=8, max_events=3_000_000, precision=1e-9)


def test_zero_probability_gives_bitwise_the_plain_results():
    plain = _quiet_swarm(Mixture("Ne:0.99,Ar:0.01"), 60.0, **RUN)
    zero = _quiet_swarm(Mixture("Ne:0.99,Ar:0.01", penning={"Ne": 0.0}), 60.0, **RUN)
    drop = {"cpu_seconds", "wall_seconds"}
    a = {k: v for k, v in plain.to_dict(time_series=True).items() if k not in drop}
    b = {k: v for k, v in zero.to_dict(time_series=True).items() if k not in drop}
    assert json.dumps(a, sort_keys=True) == json.dumps(b, sort_keys=True)
    for name in plain.tallies.arrays:
        np.testing.assert_array_equal(plain.tallies[name], zero.tallies[name])


def test_penning_counts_follow_the_excitations_and_add_to_the_ionization_frequency():
    m = Mixture({"Ne": 0.99, "Ar": 0.01}, penning={"Ne:1s": 0.3, "Ne:2p": 1.0})
    r = _quiet_swarm(m, 60.0, **RUN)
    t = r.tallies
    keys = r.inputs["processes"]
    counts = t["process_counts"].sum(axis=0)
    for channel in m.penning_channels:
        excited = counts[keys.index(f"Ne:{channel.level}")]
        transferred = counts[keys.index(channel.key)]
        assert excited > 100, channel.level
        # Each excitation of the level transfers with probability r, independently (binomial; 4σ, p ≈ 6e-5).
        sigma = math.sqrt(excited * channel.probability * (1 - channel.probability))
        assert abs(transferred - channel.probability * excited) <= 4 * sigma, channel.level
    # Every created electron is a direct or a Penning ionization (exact bookkeeping).
    kinds = [("penning" if k.startswith("Penning ") else "") for k in keys]
    direct = sum(counts[i] for i, k in enumerate(keys) if k.endswith("total ionization"))
    penning = sum(counts[i] for i, kind in enumerate(kinds) if kind)
    assert t["created"].sum() == direct + penning
    # ν_ion = ν_direct + ν_Penning: the total counted rate coefficient is the density-weighted sum of the per-process
    # ones (per target molecule; Penning rows per receiver molecule), up to rounding.
    N = m.number_density_m3
    fraction = {c.name: c.fraction for c in m.components}
    counted = r.rate_coefficients_counted
    total = sum(fraction[k.split(":")[0]] * counted[k].value for k in keys if k.endswith("ionization"))
    total += sum(fraction["Ar"] * counted[k].value for k in keys if k.startswith("Penning "))
    assert r.ionization_rate_coefficient_counted.value == pytest.approx(total, rel=1e-12, abs=0)
    exposure = t["exposure_s"].sum()
    assert r.penning_ionization_rate_coefficient.value == pytest.approx(penning / exposure / N, rel=1e-12, abs=0)
    assert r.penning_fraction.value == pytest.approx(penning / (direct + penning), rel=1e-12, abs=0)
    assert 0 < r.penning_fraction.value < 1 and r.penning_fraction.stderr > 0


def test_penning_results_round_trip_through_hdf5(tmp_path):
    from avalanche.store.point import load_result, save_result

    m = Mixture({"Ne": 0.99, "Ar": 0.01}, penning={"Ne:2p": 1.0})
    r = _quiet_swarm(m, 60.0, **dict(RUN, max_events=500_000))
    stored = load_result(save_result(tmp_path / "penning.h5", r))
    key = "Penning Ne:2p manifold (2p5 3p, lumped) -> Ar"
    assert stored.rate_coefficients[key] == r.rate_coefficients[key]
    assert stored.penning_fraction == r.penning_fraction
    assert stored.inputs["mixture"]["penning"]["groups"] == {"Ne:2p": 1.0}
    assert stored.inputs["mixture"]["penning"]["channels"][0]["receiver"] == "Ar"


@pytest.mark.slow
def test_argon_admixture_raises_neon_alpha_most_at_low_field():
    # Kruithof A A & Penning F M 1937, Physica 4 430 (from memory): α/p of Ne with 1e-4–1e-2 Ar rises many-fold
    # over pure Ne's at low E/p (up to about an order of magnitude), and the gain shrinks as E/p grows. Check,
    # qualitatively: Ne + 0.5 % Ar with r = 0.5 has α/N at least 3 × pure Ne's at 20 Td (lower 3σ bound of the
    # ratio from the runs' standard errors), and the ratio at 20 Td exceeds the ratio at 60 Td by 3σ.
    # Budgets: neon at 20 Td relaxes in ~2e7 trial events (its energy relaxes by elastic recoil), 60 Td in fewer.
    ratios = {}
    for field, events in ((20.0, 30_000_000), (60.0, 10_000_000)):
        budget = dict(seed=7, electrons=4096, max_events=events, precision=0.03)
        pure = _quiet_swarm(Mixture("Ne", pressure_Pa=1000.0), field, **budget).alpha_N
        mixed = _quiet_swarm(Mixture({"Ne": 0.995, "Ar": 0.005}, pressure_Pa=1000.0, penning={"Ne": 0.5}), field,
                             **budget).alpha_N
        ratio = mixed.value / pure.value
        ratios[field] = (ratio, ratio * math.hypot(mixed.relative_stderr, pure.relative_stderr))
    print("alpha_N(Ne + 0.5 % Ar, r = 0.5) / alpha_N(Ne):", ratios)
    (low, low_err), (high, high_err) = ratios[20.0], ratios[60.0]
    assert low - 3 * low_err > 3.0, ratios
    assert low - high > 3 * math.hypot(low_err, high_err), ratios
    assert high > 1.0, ratios


# --------------------------------------------------------------------------------------- run file, command line

RUNFILE = """
format_version = 1
[sweep]
name = "ne-ar"
seed = 3
[gas]
balance = "Ne"
fractions = {{ Ar = [0.0, 0.01] }}
pressure_Pa = 1000.0
{penning}
[grid]
reduced_field_Td = [20, 60]
"""


def test_runfile_penning_table_applies_where_a_receiver_exists():
    # The pure balance gas (Ar fraction 0) has no receiver: it runs without transfer. Groups with r = 0 are checked
    # but leave the mixture (and its seed) unchanged.
    rf = parse_runfile(RUNFILE.format(penning='penning = { "Ne:1s" = 0.4, "Ne:2p->Ar" = 0.0 }'))
    pure, mixed = rf.mixtures
    assert pure.penning == {} and mixed.penning == {"Ne:1s": 0.4, "Ne:2p->Ar": 0.0}
    assert rf.build_mixture(0).penning == {}
    assert rf.build_mixture(1).penning == {"Ne:1s": 0.4}
    assert '"penning": {"Ne:1s": 0.4}' in mixed.key
    plain = parse_runfile(RUNFILE.format(penning=""))
    assert plain.points[0].seed == rf.points[0].seed  # the pure gas is unchanged
    assert plain.points[2].seed != rf.points[2].seed and plain.config_sha256 != rf.config_sha256
    zero = parse_runfile(RUNFILE.format(penning="penning = { Ne = 0.0 }"))
    assert [p.seed for p in zero.points] == [p.seed for p in plain.points]
    assert zero.config_sha256 == plain.config_sha256
    task = point_task(rf, rf.points[2])
    assert task["mixture"]["penning"] == dict(rf.mixtures[1].penning)


@pytest.mark.parametrize("table, message", [
    ("penning = 0.3", "[gas] penning = 0.3: must be a table"),
    ("penning = { Ne = 1.5 }", "must be a transfer probability between 0 and 1"),
    ("penning = { Kr = 0.5 }", "applies to no mixture of the sweep: 'Kr' is not in any of them"),
    ("penning = { \"Ne->Xe\" = 0.5 }", "'Xe' is not in any of them"),
    ("penning = { \"Ar:1s5\" = 0.5 }", "cannot ionize Ne, I = 21.56 eV"),
])
def test_runfile_penning_errors_name_the_file_and_field(table, message):
    with pytest.raises(ConfigError) as info:
        parse_runfile(RUNFILE.format(penning=table), source="ne-ar.toml")
    assert message in str(info.value) and "ne-ar.toml" in str(info.value)


def test_swarm_command_takes_penning(capsys):
    code = main(["swarm", "--gas", "Ne:0.99,Ar:0.01", "--penning", "Ne:2p:0.5", "--en", "60", "--max-events",
                 "4e5", "--electrons", "256", "--json"])
    assert code == 0
    data = json.loads(capsys.readouterr().out)
    assert data["inputs"]["mixture"]["penning"]["groups"] == {"Ne:2p": 0.5}
    key = "Penning Ne:2p manifold (2p5 3p, lumped) -> Ar"
    name = "rate_coefficient_Penning_Ne_2p_manifold_2p5_3p_lumped_Ar"
    assert data["processes"][name] == key and name in data and "penning_fraction" in data


@pytest.mark.parametrize("value, message", [("Ne", "must be GROUP:PROBABILITY"),
                                            ("Kr:0.3", "species 'Kr' is not a component")])
def test_swarm_command_reports_bad_penning(capsys, value, message):
    assert main(["swarm", "--gas", "Ne:0.99,Ar:0.01", "--penning", value, "--en", "60"]) == 1
    err = capsys.readouterr().err
    assert message in err and "Traceback" not in err
