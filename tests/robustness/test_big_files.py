"""Big load files take the fast readers (pandas' pyarrow engine, pyarrow's strict ISO 8601 cast, a plain-number
path), and those give exactly what the careful row-by-row readers give. Speed and memory on ten years of minutes
are the benchmark's (`make bench`: big_load_s, big_load_mb), never asserted here."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

import core.model.loads.numbers as numbers
import core.model.loads.table as table
import core.model.loads.timestamps as timestamps
from core.model.loads import read_load_csv


@pytest.fixture(scope="module")
def big_file(tmp_path_factory):
    """Half a year of one-minute readings (260,000 rows: above the fast paths' thresholds), our own shape."""
    path = tmp_path_factory.mktemp("big") / "half_year_minutes.csv"
    index = pd.date_range("2024-01-01", periods=260_000, freq="min")
    rng = np.random.default_rng(3)  # random-number seed
    watts = np.round(250 + 150 * np.sin(np.arange(len(index)) * 2 * np.pi / 1440) ** 2 + rng.gamma(2, 40, len(index)), 1)
    pd.DataFrame({"timestamp": index.strftime("%Y-%m-%d %H:%M"), "power_w": watts}).to_csv(path, index=False)
    return path


def test_the_fast_readers_agree_with_the_careful_ones(big_file, monkeypatch):
    fast = read_load_csv(big_file, timezone="Europe/Berlin")
    monkeypatch.setattr(table, "_read_plain_rows", lambda *a, **k: None)
    monkeypatch.setattr(timestamps, "_strptime_arrow", lambda *a, **k: None)
    monkeypatch.setattr(numbers, "_plain_numbers", lambda *a, **k: None)
    careful = read_load_csv(big_file, timezone="Europe/Berlin")
    pd.testing.assert_series_equal(fast.power_w, careful.power_w)
    assert fast.quality.to_dict() == careful.quality.to_dict()


def test_a_bad_row_in_a_big_file_is_still_named(big_file, tmp_path):
    lines = big_file.read_text(encoding="utf-8").splitlines()
    lines[150_001] = "2024-04-31 10:00,300.0"  # 31 April does not exist
    path = tmp_path / "one_bad_date.csv"
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    measured = read_load_csv(path, timezone="Europe/Berlin")
    clean = read_load_csv(big_file, timezone="Europe/Berlin")  # (its skipped spring hour is rejected too)
    assert measured.quality.rows_rejected == clean.quality.rows_rejected + 1
    assert any("row 150002" in w and "2024-04-31" in w for w in measured.quality.warnings)
