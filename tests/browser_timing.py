"""The explorer in headless Chromium: start it, open it, and time what a user waits for after a slider move.

Shared by ``tests/test_browser.py`` (which prints the times and never asserts on them) and the benchmark
(``tests/bench``, the ``browser_slider_s`` figure). Needs Debian's chromium at ``/usr/bin/chromium``.
"""

from __future__ import annotations

import contextlib
import os
import socket
import statistics
import subprocess
import sys
import time
import urllib.request
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = Path("/usr/bin/chromium")
FLAGS = ["--no-sandbox", "--disable-gpu", "--disable-background-networking", "--disable-component-update",
         "--disable-sync", "--no-first-run"]
MAPLE = ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"
HEADLINE = "Loads supplied from PV"

# The first headline value on the page, read in the browser: polled on every animation frame, so a change is seen
# within one frame of being drawn.
_VALUE_JS = ("() => { const e = document.querySelector('[data-testid=stMetric] [data-testid=stMetricValue]');"
             " return e ? e.innerText : null }")
_CHANGED_JS = ("(before) => { const e = document.querySelector('[data-testid=stMetric] [data-testid=stMetricValue]');"
               " return e !== null && e.innerText !== before }")
# Streamlit marks the app while a script run is in progress.
_IDLE_JS = ("() => { const a = document.querySelector('[data-testid=stApp]');"
            " return a !== null && a.getAttribute('data-test-script-state') !== 'running' }")


def free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@contextlib.contextmanager
def explorer_server(scenario: Path = MAPLE, port: int | None = None):
    """``streamlit run explorer/app.py`` on a free loopback port; yields its URL and stops it afterwards."""
    port = port or free_port()
    env = {**os.environ, "SECONDROOF_SCENARIO": str(scenario)}
    proc = subprocess.Popen(
        [sys.executable, "-m", "streamlit", "run", str(ROOT / "explorer" / "app.py"), "--server.address",
         "127.0.0.1", "--server.port", str(port), "--server.headless", "true", "--browser.gatherUsageStats",
         "false", "--client.showErrorDetails", "none"],
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
                raise RuntimeError(f"the explorer did not start: {out[-2000:]}")
            time.sleep(0.5)
        yield url
    finally:
        proc.terminate()
        try:
            proc.wait(timeout=15)
        except subprocess.TimeoutExpired:
            proc.kill()
            proc.wait()


@dataclass(frozen=True)
class SliderMove:
    headline_s: float  # key press → the first headline figure shows its new value
    settled_s: float  # key press → the script run is over and the page is drawn


def open_page(browser, url: str, width: int = 1280, height: int = 800):
    """A new page on the explorer, waited for until the headline is drawn."""
    page = browser.new_page(viewport={"width": width, "height": height})
    page.goto(url)
    page.locator('[data-testid="stMetric"]').filter(has_text=HEADLINE).first.wait_for(timeout=120_000)
    page.wait_for_function(_IDLE_JS, timeout=120_000)
    return page


def time_slider_moves(page, moves: int, *, label: str = "Panels added", pause_ms: int = 400) -> list[SliderMove]:
    """Move a slider one step right ``moves`` times (arrow key); time each until the headline changes and until
    the page settles."""
    slider = page.get_by_role("slider", name=label)
    out = []
    for _ in range(moves):
        before = page.evaluate(_VALUE_JS)
        slider.focus()
        t0 = time.perf_counter()
        page.keyboard.press("ArrowRight")
        page.wait_for_function(_CHANGED_JS, arg=before, polling="raf", timeout=60_000)
        t1 = time.perf_counter()
        page.wait_for_function(_IDLE_JS, polling="raf", timeout=60_000)
        t2 = time.perf_counter()
        out.append(SliderMove(t1 - t0, t2 - t0))
        page.wait_for_timeout(pause_ms)
    return out


def median_move(moves: list[SliderMove]) -> SliderMove:
    return SliderMove(statistics.median(m.headline_s for m in moves), statistics.median(m.settled_s for m in moves))


def measure_slider(moves: int = 8, scenario: Path = MAPLE) -> tuple[SliderMove, list[SliderMove]]:
    """Start the explorer and Chromium, open the page, move the panel-count slider ``moves`` times: the median
    move and every move. The first move of a fresh page warms Streamlit's caches and is left out."""
    from playwright.sync_api import sync_playwright

    with explorer_server(scenario) as url, sync_playwright() as p:
        browser = p.chromium.launch(executable_path=str(CHROMIUM), args=FLAGS)
        try:
            page = open_page(browser, url)
            all_moves = time_slider_moves(page, moves + 1)[1:]
        finally:
            browser.close()
    return median_move(all_moves), all_moves
