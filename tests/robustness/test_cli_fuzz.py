"""Fuzzing the command line: on every bad input ``python -m core`` exits 2 with ONE line on stderr naming the
place, and never shows a traceback (exit 1, "internal error", is a bug too).

Most runs call ``core.cli.main`` in this process with an argv list; a few real subprocess runs check that the
installed entry point behaves the same (exit status, one line, nothing on stdout).
"""

from __future__ import annotations

import subprocess
import sys

import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from . import fuzzcases as fz
from .common import LOAD_CORPUS, ROOT, SCENARIO_CORPUS, run_cli, snapshot

BAD_SCENARIO = SCENARIO_CORPUS / "nan_latitude.toml"
BAD_LOAD = LOAD_CORPUS / "unparseable_timestamps.csv"


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow,
                                                                  HealthCheck.function_scoped_fixture])
@given(rng=st.randoms(use_true_random=False))
def test_random_command_lines(tmp_path_factory, rng):
    outputs = tmp_path_factory.mktemp("outputs")
    argv = fz.cli_argv(rng, {"bad_scenario": BAD_SCENARIO, "bad_load": BAD_LOAD,
                             "corpus_load": LOAD_CORPUS / "utf8_bom.csv",
                             "corpus_scenario": SCENARIO_CORPUS / "eleven_months.toml"}, outputs)
    run = run_cli(argv)
    assert not run.traceback, run.stderr
    assert run.code in (0, 2), f"{argv}: exit {run.code}: {run.stderr}"
    if run.code == 2:
        assert run.bad_input_in_one_line(), f"{argv}: {run.stderr!r}"
        assert run.stderr.startswith("error: ")
    assert list(outputs.iterdir()) == []  # bad input writes nothing


@pytest.mark.parametrize(("argv", "place"), [
    (["simulate", SCENARIO_CORPUS / "nan_latitude.toml"], "site.latitude"),
    (["simulate", SCENARIO_CORPUS / "missing_load_file.toml", "--json"], "no_such_load.csv"),
    (["simulate", SCENARIO_CORPUS / "sky_cannot_deliver.toml"], "sky_cannot_deliver.toml"),  # found while simulating
    (["check", SCENARIO_CORPUS / "typo_section.toml"], "batery"),
    (["compare", SCENARIO_CORPUS / "dangling_reference.toml", "--count", "3"], "arrays[1].microinverter"),
    (["inspect-load", LOAD_CORPUS / "binary_garbage.csv"], "binary_garbage.csv"),
    (["inspect-load", LOAD_CORPUS / "utf8_bom.csv", "--timezone", "Europe"], "timezone"),
    (["inspect-load", "x" * 300], "x" * 50),                       # a name too long for the file system
    (["simulate", "a\x00b.toml"], "a\x00b.toml"),                  # a NUL character (only possible in-process)
    (["compare", ROOT / "sample_sites/maple_hollow/scenario.toml", "--tilt", "nan"], "--tilt"),
    (["compare", ROOT / "sample_sites/maple_hollow/scenario.toml", "--azimuth", "inf"], "--azimuth"),
    (["compare", ROOT / "sample_sites/maple_hollow/scenario.toml", "--count", "-4"], "--count"),
    (["spacing", "--latitude", "40", "--tilt", "10", "--length", "inf"], "length"),
    (["spacing", "--latitude", "40", "--tilt", "10", "--length", "1.7", "--azimuth", "nan"], "azimuth"),
    (["spacing", "--latitude", "nan", "--tilt", "10", "--length", "1.7"], "latitude"),
    (["spacing", "--latitude", "40", "--tilt", "10", "--length", "1.7", "--window", "nan-14"], "window"),
    (["spacing", "--latitude", "89", "--tilt", "10", "--length", "1.7"], "window"),  # the sun stays down
    (["simulate"], "command line"),
    (["frobnicate"], "command line"),
    ([], "command line"),
])
def test_bad_input_exits_2_with_one_line_naming_the_place(argv, place):
    run = run_cli(argv)
    assert run.bad_input_in_one_line(), run.stderr
    assert place in run.stderr, run.stderr
    assert run.stdout == ""


def test_help_still_works():
    run = run_cli(["--help"])
    assert run.code == 0 and "example" in run.stdout


def test_real_processes(tmp_path):
    """The module run as a program: exit 2, exactly one line on stderr, nothing on stdout, no traceback; the
    corpus folder untouched. Started together, so the four interpreters overlap."""
    before = snapshot(SCENARIO_CORPUS)
    cases = [
        (["simulate", str(SCENARIO_CORPUS / "inf_rating.toml"), "--steps-csv", str(tmp_path / "s.csv")],
         "inverter_charger.rating_w"),
        (["simulate", str(SCENARIO_CORPUS / "binary_load_file.toml"), "--json"], "binary_load.csv"),
        (["inspect-load", str(LOAD_CORPUS / "utf16le_no_bom.csv"), "--unit", "kVA"], "kVA"),
        (["spacing", "--latitude", "40", "--tilt", "100", "--length", "1.7"], "tilt"),
    ]
    procs = [subprocess.Popen([sys.executable, "-m", "core", *argv], cwd=ROOT, stdout=subprocess.PIPE,
                              stderr=subprocess.PIPE, text=True) for argv, _ in cases]
    for proc, (argv, place) in zip(procs, cases, strict=True):
        stdout, stderr = proc.communicate(timeout=120)
        assert proc.returncode == 2, (argv, stderr)
        assert len(stderr.splitlines()) == 1 and "Traceback" not in stderr, stderr
        assert place in stderr and stdout == ""
    assert snapshot(SCENARIO_CORPUS) == before
    assert list(tmp_path.iterdir()) == []
