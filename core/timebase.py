"""The simulation's time base: one nominal non-leap year in the site's standard (no daylight-saving) time.

Every series that enters the engine is indexed by interval *start* times on this year, at a regular step.
"""

from __future__ import annotations

import datetime as dt
from zoneinfo import ZoneInfo, ZoneInfoNotFoundError

import pandas as pd

from core.errors import InputError

#: The nominal year every source is aligned onto (not a leap year; 1 January is a Sunday).
NOMINAL_YEAR = 2023
HOURS_PER_YEAR = 8760


def standard_offset(timezone: str) -> dt.timezone:
    """Fixed UTC offset of an IANA time zone's *standard* time (daylight saving removed).

    Takes the offset on a January and a July day and keeps the one whose ``dst()`` is zero, so that
    southern-hemisphere zones (summer time in January) come out right.
    """
    try:
        zone = ZoneInfo(timezone)
    except (ZoneInfoNotFoundError, ValueError) as exc:
        raise InputError(f"unknown time zone {timezone!r}", where="site.timezone",
                         hint="use an IANA name such as 'America/New_York' or 'Europe/Berlin'") from exc
    for month in (1, 7):
        moment = dt.datetime(NOMINAL_YEAR, month, 15, 12, tzinfo=zone)
        if not moment.dst():
            return dt.timezone(moment.utcoffset())
    moment = dt.datetime(NOMINAL_YEAR, 1, 15, 12, tzinfo=zone)
    return dt.timezone(moment.utcoffset() - moment.dst())


def nominal_index(step_s: int, tz: dt.tzinfo) -> pd.DatetimeIndex:
    """Interval-start times of the nominal year at ``step_s`` seconds, in the fixed-offset zone ``tz``."""
    if step_s <= 0 or 86400 % step_s:
        raise InputError(f"time step of {step_s} s does not divide a day", where="step",
                         hint="use a step such as 60, 300, 900, 1800 or 3600 s")
    start = pd.Timestamp(NOMINAL_YEAR, 1, 1, tz=tz)
    return pd.date_range(start, periods=HOURS_PER_YEAR * 3600 // step_s, freq=pd.Timedelta(seconds=step_s))
