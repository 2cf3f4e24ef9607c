"""Serving the page safely whatever the working folder: the entry point passes the safe settings itself, the app
guards its own error details, upload folders of closed sessions are removed, and the upload limit is one figure."""

from __future__ import annotations

import os
import signal
import socket
import subprocess
import sys
import time
import tomllib
import urllib.request
from pathlib import Path

import pytest

from explorer import uploads
from explorer.__main__ import SAFE_SETTINGS, streamlit_argv
from tests.robustness.common import ROOT


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


def _listening_addresses(port: int) -> set[str]:
    """Local addresses in LISTEN state on ``port``, from the kernel's socket tables (Linux)."""
    found = set()
    for table in ("/proc/net/tcp", "/proc/net/tcp6"):
        try:
            lines = Path(table).read_text().splitlines()[1:]
        except OSError:
            continue
        for line in lines:
            local, state = line.split()[1], line.split()[3]
            address, hex_port = local.split(":")
            if int(hex_port, 16) == port and state == "0A":  # 0A = LISTEN
                found.add(address)
    return found


def test_the_entry_point_carries_the_safe_settings():
    argv = streamlit_argv(8599)
    assert argv[:3] == ["streamlit", "run", str(ROOT / "explorer" / "app.py")]
    assert "--server.address=127.0.0.1" in argv and "--client.showErrorDetails=none" in argv
    assert f"--server.maxUploadSize={uploads.MAX_UPLOAD_MB}" in argv and "--server.port=8599" in argv


def test_one_upload_limit_everywhere():
    config = tomllib.loads((ROOT / ".streamlit" / "config.toml").read_text(encoding="utf-8"))
    assert config["server"]["maxUploadSize"] == uploads.MAX_UPLOAD_MB == int(SAFE_SETTINGS["server.maxUploadSize"])
    assert uploads.MAX_UPLOAD_BYTES == uploads.MAX_UPLOAD_MB * 2**20
    from explorer import state

    assert state.MAX_UPLOAD_BYTES == uploads.MAX_UPLOAD_BYTES
    # No other figure for the limit in the page's text.
    for path in (ROOT / "explorer").rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        assert "1_000_000} MB" not in text and "/ 1e6" not in text, path


@pytest.mark.skipif(not Path("/proc/net/tcp").exists(), reason="reads Linux socket tables")
def test_started_from_another_folder_it_listens_on_loopback_only(tmp_path):
    port = _free_port()
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    proc = subprocess.Popen([sys.executable, "-m", "explorer", "--port", str(port)], cwd=tmp_path, env=env,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, start_new_session=True)
    try:
        healthy = False
        for _ in range(120):  # wait for the server (not a timed assertion: the loop only waits)
            try:
                with urllib.request.urlopen(f"http://127.0.0.1:{port}/_stcore/health", timeout=2) as r:
                    healthy = r.status == 200
                    break
            except OSError:
                if proc.poll() is not None:
                    break
                time.sleep(0.5)
        assert healthy, "the explorer did not start from another folder"
        addresses = _listening_addresses(port)
        assert addresses and addresses <= {"0100007F", "00000000000000000000000001000000"}, addresses
    finally:
        os.killpg(proc.pid, signal.SIGTERM)
        proc.wait(timeout=30)


def test_the_app_hides_error_details_itself(monkeypatch):
    from streamlit import config
    from streamlit.testing.v1 import AppTest

    monkeypatch.setenv("SECONDROOF_SCENARIO", str(ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"))
    config.set_option("client.showErrorDetails", "full")
    at = AppTest.from_file(str(ROOT / "explorer" / "app.py"), default_timeout=240)
    at.run()
    assert config.get_option("client.showErrorDetails") == "none"


def test_folders_of_closed_sessions_are_swept(tmp_path):
    open_one = uploads.SessionFolder("aaaa-1111", root=str(tmp_path))
    closed = uploads.SessionFolder("bbbb-2222", root=str(tmp_path))
    (closed.path / "load.csv").write_text("time,power_w\n")
    stranger = tmp_path / "someone-else"
    stranger.mkdir()
    removed = uploads.sweep_closed(lambda sid: sid == "aaaa-1111", root=str(tmp_path))
    assert removed == [closed.path] and not closed.path.exists()
    assert open_one.path.exists() and stranger.exists()
    # Outside a server there is no one to ask: nothing is removed.
    assert uploads.server_knows("bbbb-2222") is True
