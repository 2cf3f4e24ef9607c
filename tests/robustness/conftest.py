"""Collects the robustness figures and prints them as the run's closing line, with or without ``-s``.

:mod:`tests.robustness.test_figures` adds its counts to the ``robustness_figures`` fixture; the terminal
summary hook below prints ``robustness: cases=N escapes=0 tracebacks=0 files_modified=0`` once those tests ran.
"""

from __future__ import annotations

import pytest

FIGURES = pytest.StashKey[dict]()
KEYS = ("cases", "escapes", "tracebacks", "files_modified")


def _figures(config: pytest.Config) -> dict:
    if FIGURES not in config.stash:
        config.stash[FIGURES] = {**dict.fromkeys(KEYS, 0), "ran": False}
    return config.stash[FIGURES]


@pytest.fixture
def robustness_figures(request: pytest.FixtureRequest) -> dict:
    """The run's counts: add to them; they are printed at the end."""
    figures = _figures(request.config)
    figures["ran"] = True
    return figures


def robustness_line(figures: dict) -> str:
    return "robustness: " + " ".join(f"{key}={figures[key]}" for key in KEYS)


@pytest.hookimpl(wrapper=True, tryfirst=True)
def pytest_terminal_summary(terminalreporter, exitstatus, config):
    # Outermost wrapper: the line comes after pytest's own summary sections (failures, "short test summary").
    result = yield
    figures = config.stash.get(FIGURES, None)
    if figures and figures["ran"]:
        terminalreporter.write_line(robustness_line(figures))
    return result
