"""The :class:`Weather` record, the checks of its values, and placing a file's rows on the nominal year."""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass

import numpy as np
import pandas as pd

from core.errors import InputError
from core.timebase import NOMINAL_YEAR, nominal_index

#: Column order of :attr:`Weather.data`.
WEATHER_COLUMNS = ("ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure")

#: Defaults of the generic CSV format: IEC 61215 NOCT ambient conditions (20 C, 1 m/s).
DEFAULT_TEMP_AIR_C = 20.0
DEFAULT_WIND_SPEED_M_S = 1.0

#: Plausible range of each column after unit conversion; values outside are treated as bad or as missing-data
#: markers (TMY3 uses -9900, EPW 9999 / 99.9 / 999999).
_PLAUSIBLE = {
    "ghi": (0.0, 1500.0, "W/m2"),
    "dni": (0.0, 1500.0, "W/m2"),
    "dhi": (0.0, 1500.0, "W/m2"),
    "temp_air": (-90.0, 70.0, "C"),
    "wind_speed": (0.0, 80.0, "m/s"),
    "pressure": (30000.0, 120000.0, "Pa"),
}

_FORMATS = ("epw", "tmy3", "tmy2", "csv")


@dataclass(frozen=True)
class Weather:
    """A year of weather on the nominal year (see the module docstring for the columns and units)."""

    data: pd.DataFrame
    step_s: int
    source: str
    latitude: float | None = None
    longitude: float | None = None
    altitude_m: float | None = None
    #: (latitude, longitude) the file states for itself (TMY/EPW headers, CSV comment lines), else None.
    file_location: tuple[float, float] | None = None
    #: What the reader noticed but accepted, in words (shown on the page and on the command line's stderr).
    warnings: tuple[str, ...] = ()


def _fixed_tz(hours: float) -> dt.timezone:
    return dt.timezone(dt.timedelta(hours=float(hours)))


def _labeller(starts: pd.DatetimeIndex, lines: np.ndarray):
    def label_at(pos: int) -> str:
        stamp = starts[pos]
        try:
            when = f"{stamp:%Y-%m-%d %H:%M}"
        except (ValueError, NotImplementedError):  # a year before 1 or after 9999: no strftime for it
            when = f"{stamp.year}-{stamp.month:02d}-{stamp.day:02d} {stamp.hour:02d}:{stamp.minute:02d}"
        return f"line {int(lines[pos])} (interval starting {when})"
    return label_at


def _numeric_column(series: pd.Series, path, label: str, label_at) -> np.ndarray:
    """Float values of a column; the first empty, NaN, infinite or non-numeric cell raises with its line."""
    numbers = pd.to_numeric(series, errors="coerce").to_numpy(dtype=float, na_value=np.nan)
    bad = ~np.isfinite(numbers)
    if bad.any():
        pos = int(np.flatnonzero(bad)[0])
        raw = series.iloc[pos]
        text = "" if raw is None else str(raw).strip()
        if np.isinf(numbers[pos]):
            what = f"is not finite ({text})"
        elif text.lower() in ("", "nan", "-nan", "na", "n/a", "nat", "null", "none", "<na>"):
            what = "is empty or NaN"
        else:
            what = f"is not a number ({text!r})"
        raise InputError(f"value in column {label!r} {what}", file=str(path),
                         where=f"{label_at(pos)}, column {label!r}",
                         hint=f"fill in a number for every row ({int(bad.sum())} bad value(s) in this column)")
    return numbers


def _check_range(name: str, values: np.ndarray, path, label: str, label_at) -> None:
    low, high, unit = _PLAUSIBLE[name]
    bad = (values < low) | (values > high)
    if not bad.any():
        return
    pos = int(np.flatnonzero(bad)[0])
    value = values[pos]
    if name == "ghi" and value < 0:
        what, hint = f"negative GHI ({value:g} W/m2)", "irradiance cannot be negative"
    else:
        what, hint = (f"{name} of {value:g} {unit} is outside the plausible range {low:g}..{high:g} {unit}",
                      "check the units")
    raise InputError(what, file=str(path), where=f"{label_at(pos)}, column {label!r}",
                     hint=f"{hint}; missing-data markers (such as -9900 or 9999) must be filled before use "
                          f"({int(bad.sum())} such value(s) in this column)")


def _align_to_nominal(starts: pd.DatetimeIndex, tz: dt.timezone, step_s: int, path, label_at):
    """Place interval starts on the nominal year in ``tz``.

    Returns the nominal index (complete, regular) and the positions of the source rows in that order. Rows on
    29 February are dropped. Raises if a time is repeated, off the step, or missing.
    """
    local = starts.tz_convert(tz).tz_localize(None)
    keep = ~((local.month == 2) & (local.day == 29))
    positions = np.flatnonzero(keep)
    local = local[keep]
    nominal = pd.to_datetime(pd.DataFrame({
        "year": NOMINAL_YEAR, "month": local.month, "day": local.day, "hour": local.hour,
        "minute": local.minute, "second": local.second}))
    nominal = pd.DatetimeIndex(nominal).tz_localize(tz)
    try:
        expected = nominal_index(step_s, tz)
    except InputError as exc:
        raise InputError(exc.message, file=str(path), where="timestamps", hint=exc.hint) from None
    where = expected.get_indexer(nominal)
    if (where < 0).any():
        pos = int(positions[np.flatnonzero(where < 0)[0]])
        raise InputError(f"time is not on the regular {step_s // 60}-minute step", file=str(path),
                         where=label_at(pos), hint="every timestamp must start an interval of the same length")
    seen = np.zeros(len(expected), dtype=bool)
    dup = pd.Index(where).duplicated()
    if dup.any():
        pos = int(positions[np.flatnonzero(dup)[0]])
        raise InputError("this time of year appears twice", file=str(path), where=label_at(pos),
                         hint="give exactly one year of standard-time data (no daylight-saving repeats, "
                              "no overlapping years)")
    seen[where] = True
    if not seen.all():
        missing = expected[~seen]
        raise InputError(f"{len(missing)} interval(s) of the year are missing, the first starting "
                         f"{missing[0]:%m-%d %H:%M} (nominal year, standard time)", file=str(path),
                         where="timestamps", hint="the file must cover a full year with no gaps")
    order = np.empty(len(expected), dtype=int)
    order[where] = positions
    return expected, order

