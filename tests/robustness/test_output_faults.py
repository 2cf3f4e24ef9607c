"""Faults while writing: a termination signal mid-write leaves no partial file, an empty output name is refused,
a full device is the user's disk (exit 2, said so), and a closed stdout is not a silent success."""

from __future__ import annotations

import os
import signal
import subprocess
import sys
from pathlib import Path

import pytest

import core.files
from tests.robustness.common import MAPLE, ROOT, copy_site, run_cli

SCENARIO = MAPLE / "scenario.toml"


@pytest.mark.parametrize("signame", ["SIGTERM", "SIGHUP"])
def test_a_termination_signal_mid_write_removes_the_partial_file(tmp_path, monkeypatch, signame):
    site = copy_site("maple_hollow", tmp_path)
    out = tmp_path / "steps.csv"
    real_fdopen = os.fdopen

    class SignalledWriter:
        """A file whose first write is interrupted by the signal, as `kill` would do while the CSV is written."""

        def __init__(self, fh):
            self.fh = fh

        def __enter__(self):
            return self

        def __exit__(self, *exc):
            self.fh.close()
            return False

        def write(self, data):
            self.fh.write(data[: len(data) // 2])
            self.fh.flush()
            os.kill(os.getpid(), getattr(signal, signame))
            self.fh.write(data[len(data) // 2:])

        def __getattr__(self, name):
            return getattr(self.fh, name)

    monkeypatch.setattr(core.files.os, "fdopen", lambda fd, mode: SignalledWriter(real_fdopen(fd, mode)))
    before = signal.getsignal(getattr(signal, signame))
    run = run_cli(["simulate", site / "scenario.toml", "--steps-csv", out])
    assert run.code != 0 and "interrupted" in run.stderr
    assert not out.exists()
    assert [p.name for p in tmp_path.iterdir() if p.name.endswith(".tmp")] == []
    assert signal.getsignal(getattr(signal, signame)) == before  # the command puts the handlers back


def test_an_empty_output_name_is_refused():
    run = run_cli(["simulate", SCENARIO, "--steps-csv", ""])
    assert run.bad_input_in_one_line() and "--steps-csv needs a file name" in run.stderr


def _cli(args, **kwargs):
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-m", "core", *args], env=env, capture_output=False, text=True,
                          stderr=subprocess.PIPE, **kwargs)


@pytest.mark.skipif(not Path("/dev/full").exists(), reason="needs /dev/full (Linux)")
def test_a_full_device_is_the_users_disk():
    with open("/dev/full", "w") as full:
        done = _cli(["spacing", "--latitude", "41", "--tilt", "10", "--length", "1.7", "--window", "10-14"],
                    stdout=full)
    assert done.returncode == 2, done.stderr
    assert "No space left" in done.stderr and "internal error" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1


def test_a_closed_stdout_is_not_a_success():
    done = subprocess.run(
        ["sh", "-c", f'exec "{sys.executable}" -m core spacing --latitude 41 --tilt 10 --length 1.7 '
                     '--window 10-14 >&-'],
        env={**os.environ, "PYTHONPATH": str(ROOT)}, stderr=subprocess.PIPE, text=True)
    assert done.returncode != 0
    assert "standard output is closed" in done.stderr
