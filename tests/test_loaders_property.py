"""Property test: random TOML trees fed to the cross-section loader and the run-file loader give either a valid object
or a clean :class:`~avalanche.errors.AvalancheError` — never another exception (issue 17).

The trees are valid inputs with random edits (a value replaced by any TOML value, a key removed, an unknown key
added), so that the search reaches the checks deep inside the loaders; the strategy is common practice of property
testing (Hypothesis documentation, "recursive data"; MacIver D R et al. 2019, J. Open Source Softw. 4 1891).
"""

from __future__ import annotations

import copy
import json
import math
import tempfile
import tomllib
from pathlib import Path

import pytest
from conftest import VALID_SET
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from avalanche.errors import AvalancheError
from avalanche.gas.crosssections import CrossSectionSet, parse_set
from avalanche.sweep.runfile import RunFile, parse_runfile

VALID_RUN = '''
[sweep]
name = "property"
seed = 3
output = "p.h5"

[gas]
mixture = "reid-ramp"
temperature_K = 0
number_density_m3 = 1e25

[grid]
reduced_field_Td = [1, 10]
frequencies_Hz = [0]

[engine]
precision = 0.05
max_events = 1e6

[cluster]
kind = "slurm"
cores = 2
options = { job_name = "x" }
'''

BASE = Path(tempfile.mkdtemp(prefix="avalanche-property-"))
"""An empty folder for relative paths (no table or species file exists there)."""

KEYS = ["kind", "label", "threshold_eV", "energy_eV", "cross_section", "units", "table", "enabled", "three_body",
        "species", "provenance", "process", "mixture", "mixtures", "balance", "fractions", "penning", "output",
        "reduced_field_Td", "frequencies_Hz", "start", "stop", "count", "options", "ionization_energy_eV", "Ar"]

scalars = st.one_of(st.booleans(), st.integers(-2 ** 63, 2 ** 63 - 1),
                    st.floats(allow_nan=True, allow_infinity=True), st.text(max_size=8),
                    st.sampled_from(["Ar", "m2", "cm2", "A2", "elastic", "ionization", "log", "/dev/zero", "..",
                                     "slurm", "reid-ramp:0.5,maxwell:0.5", ""]))
values = st.recursive(scalars, lambda inner: st.lists(inner, max_size=4)
                      | st.dictionaries(st.sampled_from(KEYS) | st.text(max_size=5), inner, max_size=4),
                      max_leaves=8)


def _paths(tree, prefix=()):
    """Every (container path, key) in a tree of dicts and lists."""
    items = tree.items() if isinstance(tree, dict) else enumerate(tree) if isinstance(tree, list) else ()
    for key, value in items:
        yield prefix, key
        yield from _paths(value, (*prefix, key))


def _at(tree, path):
    for key in path:
        tree = tree[key]
    return tree


@st.composite
def edited(draw, base: dict):
    tree = copy.deepcopy(base)
    for _ in range(draw(st.integers(1, 4))):
        places = list(_paths(tree))
        if not places:
            break
        path, key = draw(st.sampled_from(places))
        container = _at(tree, path)
        action = draw(st.sampled_from(["replace", "delete", "add"]))
        if action == "replace":
            container[key] = draw(values)
        elif action == "delete":
            del container[key]
        elif isinstance(container, dict):
            container[draw(st.sampled_from(KEYS) | st.text(max_size=5))] = draw(values)
        else:
            container.append(draw(values))
    return tree


def toml_value(value) -> str:
    """TOML text of a value (inline tables, arrays, basic strings), enough for these trees."""
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        return "nan" if math.isnan(value) else ("inf" if value > 0 else "-inf") if math.isinf(value) else repr(value)
    if isinstance(value, str):
        return json.dumps(value)
    if isinstance(value, list):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return "{" + ", ".join(f"{json.dumps(str(k))} = {toml_value(v)}" for k, v in value.items()) + "}"


def toml_text(tree: dict) -> str:
    return "\n".join(f"{json.dumps(str(k))} = {toml_value(v)}" for k, v in tree.items()) + "\n"


def test_the_toml_writer_round_trips():
    tree = tomllib.loads(VALID_RUN)
    assert tomllib.loads(toml_text(tree)) == tree


@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(edited(tomllib.loads(VALID_SET)))
def test_the_cross_section_loader_gives_a_set_or_a_clean_error(tree):
    try:
        result = parse_set(tree, "<property>", base=BASE)
    except AvalancheError as exc:
        assert str(exc) and "\n" not in str(exc)
    else:
        assert isinstance(result, CrossSectionSet)


@pytest.mark.filterwarnings("ignore")
@settings(max_examples=300, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(edited(tomllib.loads(VALID_RUN)))
def test_the_run_file_loader_gives_a_run_file_or_a_clean_error(tree):
    text = toml_text(tree)
    try:
        result = parse_runfile(text, "<property>", base=BASE)
    except AvalancheError as exc:
        assert str(exc)
    else:
        assert isinstance(result, RunFile)
