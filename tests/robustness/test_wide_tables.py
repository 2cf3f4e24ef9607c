"""A CSV with thousands of columns is refused before its fields are scanned (the scan took minutes and locked an
explorer session); a table of ordinary width is read as before."""

from __future__ import annotations

import pytest

from core.errors import InputError
from core.model.loads import read_load_csv
from core.model.loads.table import MAX_COLUMNS
from tests.robustness.common import run_cli


def _table(path, columns: int, rows: int = 90):
    header = "time," + ",".join(f"c{k}" for k in range(columns - 1))
    body = "".join(f"2024-03-01T{h // 4:02d}:{15 * (h % 4):02d}:00Z," + ",".join(["1.5"] * (columns - 1)) + "\n"
                   for h in range(rows))
    path.write_text(header + "\n" + body, encoding="utf-8")
    return path


def test_twenty_thousand_columns_are_refused_naming_the_limit(tmp_path):
    path = _table(tmp_path / "wide.csv", 20_001, rows=50)
    with pytest.raises(InputError) as err:
        read_load_csv(path, timezone="UTC")
    assert "20,001 columns" in str(err.value) and str(MAX_COLUMNS) in str(err.value)
    run = run_cli(["inspect-load", path, "--timezone", "UTC"])
    assert run.bad_input_in_one_line() and "wide.csv" in run.stderr


def test_a_table_at_the_limit_is_still_read(tmp_path):
    path = _table(tmp_path / "at_limit.csv", MAX_COLUMNS)
    with pytest.raises(InputError, match="c0"):  # many numeric columns: the importer asks which one, by name
        read_load_csv(path, timezone="UTC", column="missing_column")
    measured = read_load_csv(path, timezone="UTC", column="c0", unit="W")
    assert measured.power_w.notna().sum() >= 80
