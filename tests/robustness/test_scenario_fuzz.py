"""Fuzzing the scenario loader: whatever a scenario file holds, only InputError escapes, naming the file and
the place in it.

Four sources of bad files: random bytes, random text, TOML-like lines made of the schema's own keys, sections
and values (broken and not), and structured mutations of the sample scenarios — a value made NaN or infinite
(TOML has nan and inf literals), of the wrong type or far out of range, a key deleted or renamed the way a typo
would. For value mutations the message must name the exact key path (``arrays[0].tilt_deg``,
``weather.ghi_kwh_m2_day[3]``); for a rename, the misspelt key.
"""

from __future__ import annotations

import random

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from core.errors import InputError
from core.scenario import load_scenario, parse_scenario

from . import fuzzcases as fz
from .common import MAPLE, SAMPLES, names_place

FAST = settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                       HealthCheck.function_scoped_fixture])
SAMPLE_TABLES = {name: fz.read_table(SAMPLES / name / "scenario.toml") for name in ("maple_hollow", "red_dune")}


def parse_or_input_error(text: str, folder) -> InputError | None:
    """Parse with the paths confined to ``folder``; return the InputError, None if the text is a valid scenario.
    Any other exception propagates and fails the test."""
    try:
        parse_scenario(text, file="fuzzed.toml", base_dir=folder, confine_to=folder)
    except InputError as exc:
        return exc
    return None


@FAST
@given(data=st.binary(max_size=600))
def test_random_bytes_only_raise_input_error_naming_the_file(tmp_path_factory, data):
    folder = tmp_path_factory.mktemp("bytes")
    path = folder / "fuzzed.toml"
    path.write_bytes(data)
    with pytest.raises(InputError) as err:
        load_scenario(path, confine_to=folder)
    assert names_place(err.value, "fuzzed.toml"), str(err.value)
    assert sorted(p.name for p in folder.iterdir()) == ["fuzzed.toml"]


@FAST
@given(text=st.text(max_size=300))
def test_random_text_only_raises_input_error(text):
    exc = parse_or_input_error(text, SAMPLES)
    assert exc is not None  # no random text is a complete scenario
    assert names_place(exc, "fuzzed.toml"), str(exc)


@FAST
@given(rng=st.randoms(use_true_random=False))
def test_toml_like_lines_only_raise_input_error(rng):
    exc = parse_or_input_error(fz.toml_like_text(rng), SAMPLES)
    if exc is not None:
        assert names_place(exc, "fuzzed.toml"), str(exc)


@settings(max_examples=80, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(rng=st.randoms(use_true_random=False), site=st.sampled_from(sorted(SAMPLE_TABLES)))
def test_mutated_samples_name_the_mutated_key(rng, site):
    text, mutation = fz.mutated_scenario_text(rng, SAMPLE_TABLES[site])
    exc = parse_or_input_error(text, SAMPLES / site)
    if mutation.op in ("nan", "inf", "-inf", "wrong_type"):
        assert exc is not None, f"{mutation} was accepted"
    if exc is None:
        return  # deleting an optional key, a rename of an unused entry, or a value inside a range
    message = str(exc)
    assert names_place(exc, "fuzzed.toml"), message
    if mutation.op in ("nan", "inf", "-inf", "wrong_type"):
        # the key itself, or (for a list) the first bad entry in it
        assert f"{mutation.path}:" in message or f"{mutation.path}[" in message, f"{mutation}: {message}"
    if mutation.op == "out_of_range":
        assert mutation.named_in(message), f"{mutation}: {message}"
    if mutation.op in ("nan", "inf", "-inf") and mutation.path != "schema":
        assert "finite" in message or "whole number" in message, message
    if mutation.op == "rename" and not mutation.named_entry:
        assert mutation.path in message and "unknown key" in message, f"{mutation}: {message}"
    if mutation.op == "delete":
        assert exc.where, message  # the missing key, or the key that needed it


def test_every_key_and_item_of_a_sample_is_reached_by_the_mutator():
    # The mutator picks among all places; make sure the list of places is the full tree, lists included.
    places = {path for _, path in fz.leaf_paths(SAMPLE_TABLES["maple_hollow"])}
    for expected in ("site.latitude", "arrays[0].tilt_deg", "inverter_charger.efficiency[2][1]",
                     "grid.random_outages.per_year", "modules.mono_410.pmax_w", "expansion.cost_dc"):
        assert expected in places
    assert len(places) > 90


def test_a_fixed_sample_of_mutations_of_both_sites(tmp_path):
    """The same property on 60 seeded mutations, so a plain run always covers every kind of mutation."""
    rng = random.Random(7)
    kinds = set()
    for k in range(60):
        site = sorted(SAMPLE_TABLES)[k % 2]
        text, mutation = fz.mutated_scenario_text(rng, SAMPLE_TABLES[site])
        kinds.add(mutation.op)
        exc = parse_or_input_error(text, SAMPLES / site)
        if exc is not None:
            assert names_place(exc, "fuzzed.toml"), str(exc)
            if mutation.op in ("nan", "inf", "-inf", "wrong_type", "out_of_range"):
                assert mutation.named_in(str(exc)), f"{mutation}: {exc}"
    assert kinds == set(fz.OPS)


def test_sample_reloads_unchanged_after_fuzzing():
    # The fuzzers only read the sample sites; the sample still loads.
    assert load_scenario(MAPLE / "scenario.toml").name == "Maple Hollow"
