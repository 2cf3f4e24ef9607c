"""The explorer in a real browser: start it on a free loopback port, open it in headless Chromium, check that the
headline figures render, move the panel-count slider and see a figure follow, time what the user waits for (printed,
never asserted: speed is the benchmark's job), and keep a screenshot.

Skips only when Debian's chromium is not installed (``.ci/run`` installs it); the skip is printed.
"""

from __future__ import annotations

import re
from pathlib import Path

import pytest
from browser_timing import CHROMIUM, FLAGS, explorer_server, median_move, open_page, time_slider_moves

ROOT = Path(__file__).resolve().parent.parent
SHOTS = ROOT / "screenshots"  # git-ignored

pytestmark = [pytest.mark.browser,
              pytest.mark.skipif(not CHROMIUM.exists(), reason="needs Debian's chromium at /usr/bin/chromium")]


@pytest.fixture(scope="module")
def server():
    with explorer_server() as url:
        yield url


def _metric(page, label: str):
    return page.locator('[data-testid="stMetric"]').filter(has_text=label).first.locator(
        '[data-testid="stMetricValue"]')


def test_headline_renders_and_follows_the_panel_slider(server):
    from playwright.sync_api import expect, sync_playwright

    SHOTS.mkdir(exist_ok=True)
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=str(CHROMIUM), args=FLAGS)
        try:
            page = open_page(browser, server)
            loads = _metric(page, "Loads supplied from PV")
            expect(loads).to_have_text(re.compile(r"^[\d,]+ kWh$"), timeout=120_000)
            expect(_metric(page, "Self-sufficiency")).to_have_text(re.compile(r"^\d+\.\d %$"))
            assert page.get_by_text("licensed electrician").count() >= 1  # the safety cautions are on the page
            assert page.locator('[data-testid="stException"]').count() == 0
            before = loads.inner_text()
            page.screenshot(path=str(SHOTS / "browser_before.png"))

            slider = page.get_by_role("slider", name="Panels added")
            start = int(slider.input_value())
            moves = time_slider_moves(page, 4)
            expect(slider).to_have_value(str(start + 4))
            expect(loads).not_to_have_text(before)
            page.screenshot(path=str(SHOTS / "browser_after.png"))
            assert page.locator('[data-testid="stException"]').count() == 0
            m = median_move(moves[1:])  # the first move of a fresh page warms the caches
            print(f"\nbrowser: slider move to headline {m.headline_s:.2f} s, page settled {m.settled_s:.2f} s "
                  f"(median of {len(moves) - 1}; timed, never asserted)")
        finally:
            browser.close()
