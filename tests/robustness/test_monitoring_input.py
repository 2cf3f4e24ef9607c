"""The calibration's monitoring export ([measured] path) is checked like every other input before it is opened: a
pipe would block the reader, a device would be read until memory runs out, a huge file would fill it. Each is
refused as bad input naming the scenario key."""

from __future__ import annotations

import os
import signal

import pytest

from core.analyses.calibration import calibrate
from core.analyses.calibration.record import read_monitoring
from core.errors import InputError
from core.model.loads.decode import MAX_FILE_BYTES
from core.scenario import load_scenario
from tests.robustness.common import copy_site, run_cli


def _measured_at(tmp_path, target: str, key: str = "path"):
    """Maple Hollow's scenario (it has a [measured] section) with ``measured.<key>`` pointing at ``target``."""
    site = copy_site("maple_hollow", tmp_path)
    scenario = site / "scenario.toml"
    text = scenario.read_text(encoding="utf-8")
    old = 'path = "monitoring.csv"\n'
    assert old in text  # the sample site's [measured] section, which the replacement below relies on
    new = f'path = "{target}"\n' if key == "path" else f'{old}{key} = "{target}"\n'
    scenario.write_text(text.replace(old, new), encoding="utf-8")
    return scenario


def test_a_pipe_as_monitoring_export_is_refused_unopened(tmp_path):
    fifo = tmp_path / "pipe.csv"
    os.mkfifo(fifo)  # opening it for reading would block until a writer comes: the check must come first
    signal.signal(signal.SIGALRM, _hung)
    signal.alarm(60)  # a failure, not a hang, if anything opens the pipe
    try:
        _refuse_pipe(tmp_path, fifo)
    finally:
        signal.alarm(0)


def _hung(signum, frame):
    raise AssertionError("the pipe was opened: the reader blocked")


def _refuse_pipe(tmp_path, fifo):
    scenario = _measured_at(tmp_path, str(fifo))
    with pytest.raises(InputError, match="not a file") as info:
        calibrate(load_scenario(scenario))
    assert info.value.where == "measured.path" and str(fifo) in str(info.value)
    run = run_cli(["calibrate", scenario])
    assert run.bad_input_in_one_line() and "measured.path" in run.stderr and "not a file" in run.stderr


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_a_device_as_monitoring_export_is_refused_unread(tmp_path):
    scenario = _measured_at(tmp_path, "/dev/zero")
    run = run_cli(["calibrate", scenario])
    assert run.bad_input_in_one_line(), run.stderr
    assert "/dev/zero" in run.stderr and "measured.path" in run.stderr and "not a file" in run.stderr


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_a_device_as_the_periods_weather_is_refused_unread(tmp_path):
    scenario = _measured_at(tmp_path, "/dev/zero", key="weather_path")
    with pytest.raises(InputError, match="not a file") as info:
        calibrate(load_scenario(scenario))
    assert info.value.where == "measured.weather_path"


def test_an_export_above_the_stated_size_is_refused_unread(tmp_path):
    path = tmp_path / "huge.csv"
    with open(path, "wb") as fh:  # sparse: the size without the disk space
        fh.truncate(MAX_FILE_BYTES + 1)
    with pytest.raises(InputError, match="MiB this tool reads") as info:
        read_monitoring(path, pv="pv_kwh")
    assert info.value.where == "measured.path" and "monitoring export" in str(info.value)
