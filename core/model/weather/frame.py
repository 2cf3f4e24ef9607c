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
    """Place interval starts on the nominal year in ``tz`` (see :func:`_place`): converted to ``tz`` first, as a
    continuous record needs; where that leaves hours missing only because the move crossed 29 February of a leap
    source year (a typical year stitched from several years), by the file's own clock moved around the year."""
    try:
        return _place(starts, tz, step_s, path, label_at, wrap=False)
    except _Missing as missing:
        if not _offset_shift_s(starts, tz):
            raise missing.error from None
        try:
            return _place(starts, tz, step_s, path, label_at, wrap=True)
        except _Missing:
            raise missing.error from None


class _Missing(Exception):
    def __init__(self, error: InputError) -> None:
        super().__init__(str(error))
        self.error = error


def _place(starts: pd.DatetimeIndex, tz: dt.timezone, step_s: int, path, label_at, *, wrap: bool):
    """Place interval starts on the nominal year in ``tz``.

    Returns the nominal index (complete, regular) and the positions of the source rows in that order. Rows on
    29 February *of the file's own clock* are dropped. Raises if a time is repeated, off the step, or missing.

    When the file keeps one UTC offset (TMY, EPW, most CSV), rows are placed by the file's own month, day and time
    and then moved by the difference of offsets, wrapping around the year: a site an hour off the file's zone
    gets every hour of a complete year (converting first would land an hour of a leap source year on
    29 February and drop it).
    """
    shift_s = _offset_shift_s(starts, tz) if wrap else None
    local = starts.tz_localize(None) if shift_s is not None else starts.tz_convert(tz).tz_localize(None)
    keep = ~((local.month == 2) & (local.day == 29))
    positions = np.flatnonzero(keep)
    local = local[keep]
    nominal = pd.to_datetime(pd.DataFrame({
        "year": NOMINAL_YEAR, "month": local.month, "day": local.day, "hour": local.hour,
        "minute": local.minute, "second": local.second}))
    if shift_s:
        origin = pd.Timestamp(NOMINAL_YEAR, 1, 1)
        seconds = (pd.DatetimeIndex(nominal) - origin).total_seconds().to_numpy()
        nominal = origin + pd.to_timedelta((seconds + shift_s) % (365 * 86400), unit="s")
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
        raise _Missing(InputError(f"{len(missing)} interval(s) of the year are missing, the first starting "
                                  f"{missing[0]:%m-%d %H:%M} (nominal year, standard time)", file=str(path),
                                  where="timestamps", hint="the file must cover a full year with no gaps"))
    order = np.empty(len(expected), dtype=int)
    order[where] = positions
    return expected, order



def _offset_shift_s(starts: pd.DatetimeIndex, tz: dt.timezone) -> float | None:
    """Seconds from the file's one UTC offset to ``tz``'s, or None when the file's offsets vary."""
    if starts.tz is None or len(starts) == 0:
        return None
    wall = starts.tz_localize(None)
    utc = starts.tz_convert("UTC").tz_localize(None)
    offsets = np.unique((wall - utc).total_seconds().to_numpy())
    if offsets.size != 1:
        return None
    target = tz.utcoffset(None).total_seconds() if isinstance(tz, dt.timezone) else None
    if target is None:
        return None
    return float(target - offsets[0])
