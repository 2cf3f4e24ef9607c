"""Reading any supported weather file onto the nominal year (the one entry point for files)."""

from __future__ import annotations

import datetime as dt
import pathlib

from core.errors import InputError
from core.model.weather.fixed import read_epw, read_tmy2, read_tmy3
from core.model.weather.frame import Weather
from core.model.weather.generic_csv import read_csv
from core.model.weather.place import _check_lat_lon, as_standard_tz

_FORMATS = ("epw", "tmy3", "tmy2", "csv")


def read_weather_file(path: str | pathlib.Path, *, fmt: str | None = None, tz: dt.tzinfo | str | None = None,
                      latitude: float | None = None, longitude: float | None = None,
                      altitude_m: float | None = None) -> Weather:
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

    Raises
    ------
    InputError naming the file and the line/column for every problem.
    """
    path = pathlib.Path(path)
    try:
        found, is_file = path.exists(), path.is_file()
    except (OSError, ValueError) as exc:  # a name too long, a NUL character, no permission on a folder
        raise InputError(f"weather file cannot be opened ({getattr(exc, 'strerror', None) or exc})",
                         file=str(path)[:300], hint="check the path") from None
    if not found:
        raise InputError("weather file not found", file=str(path),
                         hint="check the path; relative paths are taken from the scenario file's folder")
    if not is_file:
        raise InputError("weather path is not a file", file=str(path), hint="point to an EPW, TMY3, TMY2 or CSV file")
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
        return read_csv(path, std_tz, latitude, longitude, altitude_m)
    reader = {"epw": read_epw, "tmy3": read_tmy3, "tmy2": read_tmy2}[fmt]
    return reader(path, std_tz, altitude_m)


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


