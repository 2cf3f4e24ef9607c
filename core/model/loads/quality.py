"""The data-quality summary of an imported load record, and its JSON-ready form."""

from __future__ import annotations

import math
from dataclasses import dataclass, fields
from typing import Any


def json_ready(value: Any, digits: int | None = None) -> Any:
    """JSON-ready: tuples to lists, NaN to None, numpy scalars to Python numbers, optional rounding."""
    if isinstance(value, dict):
        return {str(k): json_ready(v, digits) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [json_ready(v, digits) for v in value]
    if hasattr(value, "item") and not isinstance(value, (str, bytes)):
        value = value.item()
    if isinstance(value, float):
        if not math.isfinite(value):
            return None
        return round(value, digits) if digits is not None else value
    return value


#: Decimal places kept in the JSON form (the dataclass keeps full precision).
_DIGITS = {"span_days": 3, "coverage_pct": 2, "energy_kwh": 3, "mean_power_w": 1, "peak_power_w": 1,
           "base_load_w": 1, "base_load_day_w": 1, "base_load_night_w": 1, "longest_gap_h": 2,
           "regular_pct": 1}


@dataclass(frozen=True)
class LoadQuality:
    """What was read from a load file and how trustworthy it is.

    ``coverage_pct`` is the share of intervals between the first and the last reading that hold readings
    (filled and missing intervals excluded). ``gaps_filled`` counts runs of missing intervals filled (short
    gaps, see :data:`core.model.loads.read.MAX_GAP_FILL_S`); ``filled_intervals`` the intervals in them.
    ``energy_kwh`` is the energy of the imported series including filled intervals. Rows are numbered as
    lines of the file, from 1. ``base_load_w`` holds 12 monthly values (W, all hours; see
    :func:`core.model.loads.base_load.base_load_w`), None where a month has too little data; ``base_load_day_w``
    and ``base_load_night_w`` split them by day and night.
    """
    span_days: float
    coverage_pct: float
    interval_s: int
    unit: str
    unit_reason: str
    energy_kwh: float
    gaps_filled: int
    rows_rejected: int
    rejected_reasons: dict[str, int]
    warnings: tuple[str, ...]
    base_load_w: tuple[float | None, ...]
    file: str = ""
    start_utc: str = ""
    end_utc: str = ""
    timestamp_handling: str = ""
    timestamp_format: str = ""
    timezone: str | None = None
    time_column: str = ""
    column: str = ""
    encoding: str = ""
    separator: str = ""
    decimal: str = "."
    header_row: int | None = None
    first_data_row: int = 0
    preamble_rows: int = 0
    rows_read: int = 0
    rows_used: int = 0
    regular_pct: float = 100.0
    filled_intervals: int = 0
    missing_intervals: int = 0
    gaps_left: int = 0
    longest_gap_h: float = 0.0
    mean_power_w: float = math.nan
    peak_power_w: float = math.nan
    base_load_day_w: tuple[float | None, ...] = ()
    base_load_night_w: tuple[float | None, ...] = ()
    base_load_method: str = ""
    max_gap_fill_s: int = 7200
    label: str = "start"

    def to_dict(self) -> dict[str, Any]:
        """A JSON-ready dict (lists, None for missing values, rounded for reading)."""
        return {f.name: json_ready(getattr(self, f.name), _DIGITS.get(f.name)) for f in fields(self)}
