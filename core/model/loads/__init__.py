"""Measured household load: read a CSV export into mean power, summarise its quality, build a nominal year,
and estimate the base load.

- :func:`read_load_csv` → :class:`MeasuredLoad` (mean power on a regular UTC grid + :class:`LoadQuality`)
- :func:`build_year` → one nominal year on :func:`core.timebase.nominal_index` + :class:`YearBuildReport`
- :func:`base_load_w` → monthly night/day base load
- :func:`load_year`, :func:`inspect_load_summary` → one-call conveniences

The reading rules are in :mod:`core.model.loads.read`, the year-building method and its limits in
:mod:`core.model.loads.year_builder` and in docs/load_data.md.
"""

from core.model.loads.base_load import base_load_w
from core.model.loads.load_file import inspect_load_summary, load_year
from core.model.loads.quality import LoadQuality
from core.model.loads.read import MAX_GAP_FILL_S, MAX_POWER_W, MeasuredLoad, read_load_csv
from core.model.loads.units import UNITS
from core.model.loads.year_builder import METHOD_TEXT, MIN_DAYS, YearBuildReport, build_year

__all__ = [
    "MAX_GAP_FILL_S",
    "MAX_POWER_W",
    "METHOD_TEXT",
    "MIN_DAYS",
    "UNITS",
    "LoadQuality",
    "MeasuredLoad",
    "YearBuildReport",
    "base_load_w",
    "build_year",
    "inspect_load_summary",
    "load_year",
    "read_load_csv",
]
