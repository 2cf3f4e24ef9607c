"""Conveniences over the reader and the year builder: one call for the orchestrator, one for ``inspect-load``."""

from __future__ import annotations

import datetime as dt
from collections.abc import Sequence
from os import PathLike
from typing import Any

import pandas as pd

from core.errors import InputError
from core.model.loads.quality import LoadQuality
from core.model.loads.read import Progress, read_load_csv
from core.model.loads.year_builder import YearBuildReport, build_year


def load_year(path: str | PathLike[str], *, step_s: int, tz: dt.tzinfo, timezone_name: str | None,
              column: str | None = None, unit: str | None = None,
              monthly_kwh: Sequence[float | None] | None = None, label: str = "start",
              latitude: float | None = None, longitude: float | None = None,
              progress: Progress | None = None) -> tuple[pd.Series, LoadQuality, YearBuildReport]:
    """Read a load file and build the nominal year from it.

    ``timezone_name`` is the IANA zone of naive timestamps in the file; ``tz`` the site's standard-time zone
    of the simulation grid. Errors from the year builder name the file too.
    """
    measured = read_load_csv(path, column=column, unit=unit, timezone=timezone_name, label=label,
                             latitude=latitude, longitude=longitude, progress=progress)
    try:
        year, report = build_year(measured.power_w, step_s=step_s, tz=tz, monthly_kwh=monthly_kwh)
    except InputError as exc:
        if exc.file is None:
            raise InputError(exc.message, file=str(path), where=exc.where, hint=exc.hint) from exc
        raise
    return year, measured.quality, report


def inspect_load_summary(path: str | PathLike[str], *, timezone: str | None = None, unit: str | None = None,
                         column: str | None = None, label: str = "start", latitude: float | None = None,
                         longitude: float | None = None) -> dict[str, Any]:
    """The data-quality summary of a load file as a JSON-ready dict (see :class:`LoadQuality`)."""
    measured = read_load_csv(path, column=column, unit=unit, timezone=timezone, label=label,
                             latitude=latitude, longitude=longitude)
    return measured.quality.to_dict()
