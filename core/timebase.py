"""The simulation's time base: one nominal non-leap year in the site's standard (no daylight-saving) time.

Every series that enters the engine is indexed by interval *start* times on this year, at a regular step.
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import numpy as np
import pandas as pd

from core.errors import InputError

#: The nominal year every source is aligned onto (not a leap year; 1 January is a Sunday).
NOMINAL_YEAR = 2023
HOURS_PER_YEAR = 8760
#: Month abbreviations in English whatever the locale, for labels and messages.
MONTH_NAMES = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
#: Finest simulation step. A year at one minute is 525,600 steps (a few hundred MB of flows); at one second it
#: would be 31.5 million (many GB), so finer readings are averaged to the step instead.
MIN_STEP_S = 60


def standard_offset(timezone: str) -> dt.timezone:
    """Fixed UTC offset of an IANA time zone's *standard* time (daylight saving removed).

    Takes the offset on a January and a July day and keeps the one whose ``dst()`` is zero, so that
    southern-hemisphere zones (summer time in January) come out right.
    """
    try:
        zone = ZoneInfo(timezone)
    except (ZoneInfoNotFoundError, ValueError, OSError) as exc:  # OSError: "Europe" is a folder, or too long
        raise InputError(f"unknown time zone {str(timezone)[:60]!r}", where="site.timezone",
                         hint="use an IANA name such as 'America/New_York' or 'Europe/Berlin'") from exc
    no_shift = dt.timedelta(0)  # a zoneinfo zone always gives both; the fallback only satisfies their Optional type
    for month in (1, 7):
        moment = dt.datetime(NOMINAL_YEAR, month, 15, 12, tzinfo=zone)
        if not moment.dst():
            return dt.timezone(moment.utcoffset() or no_shift)
    moment = dt.datetime(NOMINAL_YEAR, 1, 15, 12, tzinfo=zone)
    return dt.timezone((moment.utcoffset() or no_shift) - (moment.dst() or no_shift))


def nominal_index(step_s: int, tz: dt.tzinfo) -> pd.DatetimeIndex:
    """Interval-start times of the nominal year at ``step_s`` seconds, in the fixed-offset zone ``tz``."""
    if step_s <= 0 or 86400 % step_s:
        raise InputError(f"time step of {step_s} s does not divide a day", where="step",
                         hint="use a step such as 60, 300, 900, 1800 or 3600 s")
    if step_s < MIN_STEP_S:
        raise InputError(f"a time step of {step_s} s is finer than the {MIN_STEP_S} s this tool simulates a year at",
                         where="step", hint="use a step of 60 s or more; finer readings are averaged to the step")
    start = pd.Timestamp(NOMINAL_YEAR, 1, 1, tz=tz)
    return pd.date_range(start, periods=HOURS_PER_YEAR * 3600 // step_s, freq=pd.Timedelta(seconds=step_s))


def check_site(latitude: float, longitude: float, altitude_m: float) -> None:
    """Latitude, longitude and altitude of a site as numbers in range, else an error naming the key."""
    for key, value, low, high in (("site.latitude", latitude, -90.0, 90.0),
                                  ("site.longitude", longitude, -180.0, 180.0),
                                  ("site.altitude_m", altitude_m, -500.0, 9000.0)):
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise InputError(f"{value!r} is not a number", where=key, hint=f"give a value in {low:g}..{high:g}") from None
        if not np.isfinite(number) or not low <= number <= high:
            raise InputError(f"{number!r} is outside {low:g}..{high:g}", where=key,
                             hint="latitude and longitude in degrees (north and east positive), altitude in metres")
