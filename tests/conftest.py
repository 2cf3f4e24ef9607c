"""Test-run settings shared by every test folder.

The browser test needs Debian's chromium at /usr/bin/chromium and is skipped without it; so that a run without
it is not mistaken for a full one, the end of the run says so in one line.
"""

from __future__ import annotations

BROWSER_TEST = "tests/test_browser.py"


def pytest_terminal_summary(terminalreporter, exitstatus, config):
    skipped = [r for r in terminalreporter.stats.get("skipped", []) if r.nodeid.startswith(BROWSER_TEST)
               or str(getattr(r, "location", ("",))[0]).startswith(BROWSER_TEST)]
    if skipped:
        terminalreporter.write_line(
            f"browser: {len(skipped)} test(s) skipped — /usr/bin/chromium is missing "
            "(apt-get install -y chromium, or run: bash .ci/run)", yellow=True)
