"""Reading any supported weather file onto the nominal year (the one entry point for files)."""

from __future__ import annotations

import datetime as dt
import pathlib
from dataclasses import replace

from core.errors import InputError
from core.files import MAX_WEATHER_BYTES, check_input_file
from core.model.weather.fit import distance_km, sun_fit
from core.model.weather.fixed import read_epw, read_tmy2, read_tmy3
from core.model.weather.frame import Weather
from core.model.weather.generic_csv import read_csv
from core.model.weather.place import _check_lat_lon, as_standard_tz

_FORMATS = ("epw", "tmy3", "tmy2", "csv")


def read_weather_file(path: str | pathlib.Path, *, fmt: str | None = None, tz: dt.tzinfo | str | None = None,
                      latitude: float | None = None, longitude: float | None = None,
                      altitude_m: float | None = None, max_distance_km: float = 500.0) -> Weather:
    """Read an EPW, TMY3, TMY2 or generic CSV weather file onto the nominal year.

    Parameters
    ----------
    path : the file (never modified).
    fmt : ``"epw"``, ``"tmy3"``, ``"tmy2"``, ``"csv"`` or None to detect from the extension and first lines.
    tz : the site's time zone; its *standard* offset is used. None keeps the file's own UTC offset (the generic
        CSV then needs offsets in its timestamps).
    latitude, longitude : the site's coordinates (degrees, north and east positive). Only the generic CSV uses
        them: to derive DNI/DHI when the file has GHI only (else its ``# latitude = ...`` comment lines are used).
        EPW/TMY files keep their own coordinates in :class:`Weather`.
    altitude_m : used for the pressure when the file has neither pressure nor an altitude of its own (else 0 m).
    max_distance_km : the farthest the file's own location (TMY/EPW header, CSV comment lines) may be from the
        site; beyond it the file is refused (beyond 50 km a warning is given).

    With the site's coordinates given, the year is checked against the sun (:mod:`core.model.weather.fit`):
    irradiance in hours when the sun is down, a shift of the day against the clear sky, and GHI above the
    extraterrestrial irradiance on the horizontal are refused; small signs are warnings in ``Weather.warnings``.

    Raises
    ------
    InputError naming the file and the line/column for every problem.
    """
    path = check_input_file(path, kind="weather file", max_bytes=MAX_WEATHER_BYTES)
    if fmt is None:
        fmt = _detect_format(path)
    fmt = str(fmt).lower()
    if fmt not in _FORMATS:
        raise InputError(f"unknown weather format {fmt!r}", file=str(path), where="weather.format",
                         hint=f"use one of {', '.join(_FORMATS)}")
    try:  # the reader is where input enters: the helpers' ValueErrors become messages naming the key
        std_tz = as_standard_tz(tz)
        if fmt == "csv" and (latitude is not None or longitude is not None):
            _check_lat_lon(latitude if latitude is not None else 0.0, longitude if longitude is not None else 0.0)
    except ValueError as exc:
        where, _, message = str(exc).partition(": ")
        raise InputError(message or where, file=str(path), where=where if message else "site.timezone",
                         hint="north and east are positive; time zones are IANA names such as "
                              "'America/New_York'") from None
    if fmt == "csv":
        weather = read_csv(path, std_tz, latitude, longitude, altitude_m)
    else:
        weather = {"epw": read_epw, "tmy3": read_tmy3, "tmy2": read_tmy2}[fmt](path, std_tz, altitude_m)
    if latitude is None or longitude is None:
        return weather
    notes = check_site_fit(weather, path, float(latitude), float(longitude), max_distance_km)
    # The irradiance was measured where the file says (when it says): the sun is checked there, so that a file
    # accepted from farther away is judged on its clock and values, not on the distance again.
    sun_lat, sun_lon = weather.file_location or (float(latitude), float(longitude))
    notes += check_sun_fit(weather, path, sun_lat, sun_lon, float(altitude_m or 0.0))
    return replace(weather, warnings=weather.warnings + tuple(notes)) if notes else weather


#: Beyond this distance between the file's location and the site, a warning (km; our choice: about the scale on
#: which a typical year's climate changes noticeably away from coasts and mountains).
WARN_DISTANCE_KM = 50.0
#: Share of the year's GHI energy in hours when the sun is down: a warning above the first, refused above the second.
NIGHT_SHARE_WARN = 0.005
NIGHT_SHARE_REFUSE = 0.03
#: Largest accepted shift (hours) of the measured day against the clear-sky day.
MAX_LAG_H = 1


def check_site_fit(weather: Weather, path: pathlib.Path, latitude: float, longitude: float,
                   max_distance_km: float) -> list[str]:
    """Refuse a file whose own location is farther than ``max_distance_km`` from the site; warn beyond 50 km."""
    if weather.file_location is None:
        return []
    file_lat, file_lon = weather.file_location
    km = distance_km(file_lat, file_lon, latitude, longitude)
    where = f"the file's location {file_lat:.2f}, {file_lon:.2f} against the site's {latitude:.2f}, {longitude:.2f}"
    if km > max_distance_km:
        raise InputError(f"was recorded {km:,.0f} km from the site ({where}), farther than the "
                         f"{max_distance_km:,.0f} km accepted", file=str(path), where="weather.path",
                         hint="use weather from near the site (or check site.latitude and site.longitude); "
                              "to use it anyway, raise weather.max_distance_km")
    if km > WARN_DISTANCE_KM:
        return [f"weather file {path.name} was recorded {km:,.0f} km from the site ({where}); its climate may "
                "differ"]
    return []


def check_sun_fit(weather: Weather, path: pathlib.Path, latitude: float, longitude: float,
                  altitude_m: float) -> list[str]:
    """Refuse irradiance that does not follow the sun at the site; warn about small signs of a shift."""
    try:
        fit = sun_fit(weather.data["ghi"], weather.step_s, latitude, longitude, altitude_m)
    except ValueError:
        return []  # a step that does not divide an hour: the readers refuse it before this point
    shift = ""
    if fit.best_lag_h:
        later = "later" if fit.best_lag_h > 0 else "earlier"
        shift = (f"; its days come about {abs(fit.best_lag_h)} h {later} than the sun's at the site, as when times "
                 f"in UTC or another zone are read as the site's standard time")
    hint = ("check the file's time zone (timestamps without an offset are read as the site's standard time) and "
            "that the file belongs to this site")
    if abs(fit.best_lag_h) > MAX_LAG_H:
        raise InputError(f"irradiance does not follow the sun at the site{shift}", file=str(path),
                         where="timestamps", hint=hint)
    if fit.night_share > NIGHT_SHARE_REFUSE:
        raise InputError(f"{fit.night_share:.0%} of the year's irradiance falls in hours when the sun is down at the "
                         f"site{shift}", file=str(path), where="column ghi", hint=hint)
    if fit.worst_over_extra is not None:
        when, ghi, extra = fit.worst_over_extra
        raise InputError(f"GHI of {ghi:.0f} W/m2 is above what reaches the top of the atmosphere on the horizontal "
                         f"({extra:.0f} W/m2) in {fit.over_extra_count} hour(s){shift}", file=str(path),
                         where=f"hour starting {when:%m-%d %H:%M} (nominal year, standard time), column ghi",
                         hint=f"no sky can give that; {hint}")
    notes = []
    if fit.best_lag_h or fit.night_share > NIGHT_SHARE_WARN:
        notes.append(f"weather file {path.name}: {fit.night_share:.1%} of the irradiance falls while the sun is "
                     f"down at the site{shift}; {hint}")
    return notes


def _detect_format(path: pathlib.Path) -> str:
    suffix = path.suffix.lower()
    if suffix == ".epw":
        return "epw"
    if suffix in (".tm2", ".tmy2"):
        return "tmy2"
    try:
        with open(path, encoding="utf-8", errors="replace") as handle:
            first = handle.readline()
            second = handle.readline()
    except OSError as exc:
        raise InputError(f"cannot open the file ({exc.strerror})", file=str(path),
                         hint="check the file's permissions") from None
    if first.upper().startswith("LOCATION,"):
        return "epw"
    if second.startswith("Date (MM/DD/YYYY)"):
        return "tmy3"
    if suffix in (".csv", ".txt"):
        return "csv"
    raise InputError(f"cannot tell the weather format from the extension {suffix!r}", file=str(path),
                     hint="use .epw, .tm2 or .csv, or state the format (epw, tmy3, tmy2, csv)")


