"""Where a weather file belongs: the site's time zone and its standard offset."""

from __future__ import annotations

import datetime as dt
from typing import overload

import numpy as np

from core.timebase import NOMINAL_YEAR, standard_offset

# ----------------------------------------------------------------------------------------------------------------
# time zones


def timezone_for(latitude: float, longitude: float) -> str:
    """IANA time-zone name of a place, found offline with ``timezonefinder``.

    Falls back to ``"Etc/GMT±N"`` from the longitude (15 degrees per hour; note the POSIX sign: ``Etc/GMT+5`` is
    UTC-5) where the place is at sea or the lookup fails.
    """
    _check_lat_lon(latitude, longitude)
    name = None
    try:
        from timezonefinder import TimezoneFinder

        name = TimezoneFinder().timezone_at(lng=float(longitude), lat=float(latitude))
    except Exception:  # noqa: BLE001 - any failure of the optional lookup falls back to the longitude rule
        name = None
    if name:
        return name
    hours = int(round(float(longitude) / 15.0))
    hours = max(-12, min(14, hours))
    if hours == 0:
        return "Etc/GMT"
    return f"Etc/GMT{'-' if hours > 0 else '+'}{abs(hours)}"


@overload
def as_standard_tz(tz: dt.tzinfo | str) -> dt.timezone: ...
@overload
def as_standard_tz(tz: None) -> None: ...
def as_standard_tz(tz: dt.tzinfo | str | None) -> dt.timezone | None:
    """The fixed-offset *standard* time zone for ``tz`` (an IANA name, a zoneinfo zone or a fixed offset)."""
    if tz is None:
        return None
    if isinstance(tz, str):
        return standard_offset(tz)
    if isinstance(tz, dt.timezone):
        return tz
    key = getattr(tz, "key", None) or getattr(tz, "zone", None)
    if isinstance(key, str):
        return standard_offset(key)
    moment = dt.datetime(NOMINAL_YEAR, 1, 15, 12)
    offset = tz.utcoffset(moment)
    if offset is None:
        raise ValueError(f"time zone {tz!r} has no UTC offset; use an IANA name such as 'America/New_York'")
    return dt.timezone(offset - (tz.dst(moment) or dt.timedelta(0)))


def _check_lat_lon(latitude: float, longitude: float) -> None:
    for key, value, limit in (("site.latitude", latitude, 90.0), ("site.longitude", longitude, 180.0)):
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise ValueError(f"{key}: {value!r} is not a number of degrees") from None
        if not np.isfinite(number) or abs(number) > limit:
            raise ValueError(f"{key}: {number!r} is outside -{limit:g}..{limit:g} degrees")


