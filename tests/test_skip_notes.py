"""A run without Chromium says so in one line (tests/conftest.py), instead of skipping the browser test silently."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

HERE = Path(__file__).resolve().parent


def _run(tmp_path: Path, body: str) -> str:
    (tmp_path / "tests").mkdir()
    shutil.copy(HERE / "conftest.py", tmp_path / "tests" / "conftest.py")
    (tmp_path / "tests" / "test_browser.py").write_text(body, encoding="utf-8")
    (tmp_path / "pytest.ini").write_text("[pytest]\naddopts = -ra\n", encoding="utf-8")
    out = subprocess.run([sys.executable, "-m", "pytest", "-p", "no:cacheprovider", "tests"], cwd=tmp_path,
                         capture_output=True, text=True, check=False, timeout=300)
    return out.stdout


def test_skipped_browser_test_prints_one_line(tmp_path):
    text = _run(tmp_path, "import pytest\n\n@pytest.mark.skipif(True, reason='needs chromium')\n"
                          "def test_page():\n    pass\n")
    lines = [line for line in text.splitlines() if line.startswith("browser: ")]
    assert len(lines) == 1 and "/usr/bin/chromium is missing" in lines[0]
    assert "SKIPPED" in text and "needs chromium" in text  # the -ra reason as well


def test_no_line_when_the_browser_test_runs(tmp_path):
    assert "browser: " not in _run(tmp_path, "def test_page():\n    pass\n")
