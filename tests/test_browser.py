"""The explorer in a real browser: start it on a free loopback port, open it in headless Chromium, check that the
headline figures render, move the panel-count slider and see a figure follow, and keep a screenshot.

Skips only when Debian's chromium is not installed (``.ci/run`` installs it).
"""

from __future__ import annotations

import os
import re
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = Path("/usr/bin/chromium")
SHOTS = ROOT / "screenshots"  # git-ignored
FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
         "--disable-sync", "--no-first-run"]

pytestmark = [pytest.mark.browser,
              pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's chromium at /usr/bin/chromium")]


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def server():
    port = _free_port()
    env = {**os.environ, "SECONDROOF_SCENARIO": str(ROOT / "sample_sites" / "maple_hollow" / "scenario.toml")}
    proc = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", str(ROOT / "explorer" / "app.py"), "--server.address", "127.0.0.1",
         "--server.port", str(port), "--server.headless", "true", "--browser.gatherUsageStats", "false",
         "--client.showErrorDetails", "none"],
        cwd=ROOT, env=env, stdout=subprocess.PIPE, stderr=subprocess.STDOUT)
    url = f"http://127.0.0.1:{port}"
    try:
        deadline = time.monotonic() + 120
        while True:
            try:
                with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as r:
                    if r.status == 200:
                        break
            except OSError:
                pass
            if proc.poll() is not None or time.monotonic() > deadline:
                out = proc.stdout.read().decode(errors="replace") if proc.poll() is not None else ""
                pytest.fail(f"the explorer did not start: {out[-2000:]}")
            time.sleep(0.5)
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()


def _metric(page, label: str):
    return page.locator('[data-testid="stMetric"]').filter(has_text=label).first.locator(
        '[data-testid="stMetricValue"]')


def test_headline_renders_and_follows_the_panel_slider(server):
    from playwright.sync_api import expect, sync_playwright

    SHOTS.mkdir(exist_ok=True)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=str(CHROMIUM), args=FLAGS)
        try:
            page = browser.new_page(viewport={"width": 1280, "height": 800})
            page.goto(server)
            loads = _metric(page, "Loads supplied from PV")
            expect(loads).to_have_text(re.compile(r"^[\d,]+ kWh$"), timeout=120_000)
            expect(_metric(page, "Self-sufficiency")).to_have_text(re.compile(r"^\d+\.\d %$"))
            assert page.get_by_text("licensed electrician").count() >= 1  # the safety cautions are on the page
            assert page.locator('[data-testid="stException"]').count() == 0
            before = loads.inner_text()
            page.screenshot(path=str(SHOTS / "browser_before.png"))

            slider = page.get_by_role("slider", name="Panels added")
            start = int(slider.input_value())
            slider.focus()
            for _ in range(3):
                page.keyboard.press("ArrowRight")
            expect(slider).to_have_value(str(start + 3))
            expect(loads).not_to_have_text(before, timeout=60_000)
            page.wait_for_timeout(500)
            page.screenshot(path=str(SHOTS / "browser_after.png"))
            assert page.locator('[data-testid="stException"]').count() == 0
        finally:
            browser.close()
