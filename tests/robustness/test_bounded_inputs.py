"""Every input path is a regular file under a stated size before it is opened: a device reads forever, a pipe
blocks, a huge file fills memory. A TOML nested thousands deep is bad input, not an internal error."""

from __future__ import annotations

import os

import pytest

from core.errors import InputError
from core.files import MAX_OUTAGES_BYTES, MAX_SCENARIO_BYTES, MAX_WEATHER_BYTES
from core.model.outages import read_outages_csv
from core.model.weather import read_weather_file
from core.scenario import load_scenario, parse_scenario
from explorer.state import read_upload_scenario
from tests.robustness.common import copy_site, run_cli

DEEP = "a = " + "[" * 100_000 + "]" * 100_000 + "\n"   # about 200 KB of brackets


def _with(site, old: str, new: str):
    path = site / "scenario.toml"
    path.write_text(path.read_text(encoding="utf-8").replace(old, new), encoding="utf-8")
    return path


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_a_device_is_refused_as_scenario_and_as_outage_list(tmp_path):
    run = run_cli(["simulate", "/dev/zero"])
    assert run.bad_input_in_one_line() and "not a file" in run.stderr
    site = copy_site("maple_hollow", tmp_path)
    scenario = _with(site, "[grid]\n", '[grid]\noutages_path = "/dev/zero"\n')
    run = run_cli(["simulate", scenario])
    assert run.bad_input_in_one_line() and "/dev/zero" in run.stderr and "not a file" in run.stderr


def test_a_pipe_is_refused_before_it_is_opened(tmp_path):
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)  # opening it for reading would block until a writer comes: the check must come first
    for call in (lambda: load_scenario(fifo), lambda: read_outages_csv(fifo, None),
                 lambda: read_weather_file(fifo, fmt="csv")):
        with pytest.raises(InputError, match="not a file"):
            call()
    run = run_cli(["inspect-load", fifo])
    assert run.bad_input_in_one_line() and "not a file" in run.stderr


@pytest.mark.parametrize("limit, call", [
    (MAX_SCENARIO_BYTES, lambda p: load_scenario(p)),
    (MAX_OUTAGES_BYTES, lambda p: read_outages_csv(p, None)),
    (MAX_WEATHER_BYTES, lambda p: read_weather_file(p, fmt="csv")),
])
def test_files_above_the_stated_size_are_refused_unread(tmp_path, limit, call):
    path = tmp_path / "big.txt"
    with open(path, "wb") as fh:  # sparse: the size without the disk space
        fh.truncate(limit + 1)
    with pytest.raises(InputError, match="MiB this tool reads"):
        call(path)


def test_deeply_nested_toml_is_bad_input_everywhere(tmp_path):
    path = tmp_path / "deep.toml"
    path.write_text(DEEP, encoding="utf-8")
    with pytest.raises(InputError, match="nested too deeply"):
        parse_scenario(DEEP, file="deep.toml")
    run = run_cli(["simulate", path])
    assert run.bad_input_in_one_line() and "deep.toml" in run.stderr
    # The explorer's upload path reads the same way (the page shows the message, not an error box of its own).
    with pytest.raises(InputError, match="nested too deeply"):
        read_upload_scenario(tmp_path, "deep.toml")
