"""Weather for the simulation: read a weather file onto the nominal year, resample it, find a site's time zone.

Every source ends up as a :class:`Weather`: interval-*start* times on ``core.timebase.NOMINAL_YEAR`` at a regular
step, in the site's fixed-offset standard time, with the columns

=============  ======  ====================================================
``ghi``        W/m2    global horizontal irradiance, mean over the interval
``dni``        W/m2    direct normal irradiance, mean over the interval
``dhi``        W/m2    diffuse horizontal irradiance, mean over the interval
``temp_air``   C       air (dry-bulb) temperature
``wind_speed`` m/s     wind speed
``pressure``   Pa      station pressure
=============  ======  ====================================================

Supported files (``fmt``):

* ``"epw"`` -- EnergyPlus weather files, read with :func:`pvlib.iotools.read_epw`. Values label the hour that
  *ends* at the stated hour (hour 1 = 00:00-01:00); pvlib already turns them into interval starts.
* ``"tmy3"`` -- NREL TMY3 CSV files (Wilcox & Marion 2008, NREL/TP-581-43156), read with
  :func:`pvlib.iotools.read_tmy3`. pvlib labels each row with the hour it *ends*; we move it to the start.
  Pressure is in mbar in the file and converted to Pa.
* ``"tmy2"`` -- NREL TMY2 fixed-width files (Marion & Urban 1995), read with :func:`pvlib.iotools.read_tmy2`,
  which already labels interval starts. Temperatures and wind speeds are stored in tenths and are scaled here.
* ``"csv"`` -- the project's own generic CSV format, described below.

A file's own years are ignored: every row is placed on the nominal year by month, day and time of day (29 February
is dropped), after converting the file's times to the site's standard time ``tz``. Missing DNI and DHI are derived
from GHI with the Erbs, Klein & Duffie (1982) correlation (:func:`pvlib.irradiance.erbs`); missing pressure comes from
the altitude with :func:`pvlib.atmosphere.alt2pres`. Either fact is stated in :attr:`Weather.source`.

Generic CSV format
------------------
* Plain comma-separated text: UTF-8 (with or without a byte-order mark), UTF-16 or Latin-1. Lines before the header that start with ``#`` are comments and are skipped.
* The first non-comment line is the header. Column names are matched without regard to case or surrounding spaces.
* ``timestamp`` (required): the **start** of each interval, ISO 8601, e.g. ``2023-01-01 00:00`` or
  ``2023-01-01T00:00-05:00``. Timestamps without a UTC offset are read as the site's *standard* time (no daylight
  saving); with an offset they may be in any zone. Any year may be used; 29 February rows are dropped.
* ``ghi`` (required), ``dni`` and ``dhi`` (optional, give both or neither): interval means in W/m2.
* ``temp_air`` (optional, C; default 20 C) and ``wind_speed`` (optional, m/s; default 1 m/s). The defaults are the
  ambient conditions of the NOCT test in IEC 61215 (20 C, 1 m/s), a conservative choice for cell temperature.
* ``pressure`` (optional, Pa; default from the altitude via ``alt2pres``).
* A regular step of 1 hour or a whole fraction of an hour (e.g. 1, 5, 10, 15, 30 min), covering a full year: exactly
  one row for every interval of a non-leap year. Other columns are ignored.

Example::

    timestamp,ghi,dni,dhi,temp_air,wind_speed
    2023-01-01 00:00,0,0,0,4.5,2.1
    2023-01-01 01:00,0,0,0,4.1,2.0
"""

from __future__ import annotations

import datetime as dt
import difflib
import io
import pathlib
import re
from dataclasses import dataclass, replace

import numpy as np
import pandas as pd
import pvlib

from core.errors import InputError
from core.timebase import NOMINAL_YEAR, nominal_index, standard_offset

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
        raise InputError("time zone has no UTC offset", where="site.timezone",
                         hint="use an IANA name such as 'America/New_York'")
    return dt.timezone(offset - (tz.dst(moment) or dt.timedelta(0)))


def _check_lat_lon(latitude: float, longitude: float) -> None:
    for key, value, limit in (("site.latitude", latitude, 90.0), ("site.longitude", longitude, 180.0)):
        try:
            number = float(value)
        except (TypeError, ValueError):
            raise InputError(f"{value!r} is not a number", where=key,
                             hint=f"give degrees between -{limit:g} and {limit:g}") from None
        if not np.isfinite(number) or abs(number) > limit:
            raise InputError(f"{number!r} is outside -{limit:g}..{limit:g} degrees", where=key,
                             hint="north and east are positive")


# ----------------------------------------------------------------------------------------------------------------
# reading files


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
    std_tz = as_standard_tz(tz)
    if fmt == "csv":
        if latitude is not None or longitude is not None:
            _check_lat_lon(latitude if latitude is not None else 0.0, longitude if longitude is not None else 0.0)
        return _read_csv(path, std_tz, latitude, longitude, altitude_m)
    reader = {"epw": _read_epw, "tmy3": _read_tmy3, "tmy2": _read_tmy2}[fmt]
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


def _call_reader(func, path: pathlib.Path, kind: str):
    try:
        return func(path)
    except InputError:
        raise
    except Exception as exc:  # noqa: BLE001 - any parser failure is a bad file, reported without a traceback
        line = _first_odd_line(path, kind)
        detail = " ".join(str(exc).replace(str(path), "the file").split())[:200]
        raise InputError(f"cannot read the file as {kind} ({type(exc).__name__}: {detail})", file=str(path),
                         where=None if line is None else f"line {line}",
                         hint=f"check that it is a complete, unmodified {kind} file, "
                              "or convert it to the generic CSV format") from None


#: Header lines of the fixed formats, and whether their data lines are fixed-width (TMY2) or comma-separated.
_LAYOUT = {"TMY2": (1, True), "TMY3": (2, False), "EPW": (8, False)}


def _first_odd_line(path: pathlib.Path, kind: str) -> int | None:
    """The first line (1-based) that breaks its file's pattern, to point at when pvlib's reader gives up: a line
    that is not UTF-8 text; a data line of another length (TMY2, fixed-width) or field count (TMY3, EPW) than most;
    in TMY2, a character other than a digit, space or sign where most lines have a number. None if none stands
    out."""
    try:
        raw_lines = path.read_bytes().replace(b"\r\n", b"\n").replace(b"\r", b"\n").split(b"\n")  # as pvlib
    except OSError:
        return None
    for number, raw in enumerate(raw_lines, start=1):
        try:
            raw.decode("utf-8")
        except UnicodeDecodeError:
            return number
    header, fixed = _LAYOUT.get(kind, (0, False))
    lines = [raw.decode("utf-8") for raw in raw_lines]
    if lines and not lines[-1]:
        lines = lines[:-1]  # the file's closing newline
    data = list(enumerate(lines[header:], start=header + 1))
    if not data:
        return None
    shape = (lambda line: len(line)) if fixed else (lambda line: line.count(","))
    usual = pd.Series([shape(line) for _, line in data]).mode().iloc[0]
    for number, line in data:
        if shape(line) != usual:
            return number
    if fixed:  # columns that hold a number (or a digit) in nearly every line, and the first line that does not
        width = int(usual)
        for allowed in (set("0123456789 -+"), set("0123456789-")):
            counts = np.zeros(width)
            for _, line in data:
                counts += np.fromiter((c in allowed for c in line[:width]), dtype=float, count=width)
            columns = np.flatnonzero(counts >= 0.99 * len(data))
            for number, line in data:
                if any(line[i] not in allowed for i in columns):
                    return number
    else:  # fields that hold a number, date or time in nearly every line, and the first line where one does not
        numeric = re.compile(r"^[+-]?[0-9.:/]*([eE][+-]?[0-9]+)?$")
        fields = [line.split(",") for _, line in data]
        width = int(usual) + 1
        counts = np.zeros(width)
        for parts in fields:
            counts += np.fromiter((bool(numeric.match(f)) for f in parts[:width]), dtype=float, count=width)
        columns = np.flatnonzero(counts >= 0.99 * len(data))
        for (number, _), parts in zip(data, fields, strict=True):
            if any(not numeric.match(parts[i]) for i in columns):
                return number
    return None


def _fixed_tz(hours: float) -> dt.timezone:
    return dt.timezone(dt.timedelta(hours=float(hours)))


def _read_tmy3(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
    data, meta = _call_reader(lambda p: pvlib.iotools.read_tmy3(p, map_variables=True), path, "TMY3")
    # Each TMY3 row holds the hour that ENDS at its time (01:00 ... 24:00). pvlib's index turns 24:00 into the next
    # day and moves 29 February to 1 March, which would misplace the last hour of 28 February of a leap source
    # year; so the interval starts are built from the file's own date and time columns: date + (hour - 1).
    starts = _tmy3_interval_starts(data, meta, path)
    columns = {"ghi": ("ghi", "GHI (W/m^2)", 1.0), "dni": ("dni", "DNI (W/m^2)", 1.0),
               "dhi": ("dhi", "DHI (W/m^2)", 1.0), "temp_air": ("temp_air", "Dry-bulb (C)", 1.0),
               "wind_speed": ("wind_speed", "Wspd (m/s)", 1.0), "pressure": ("pressure", "Pressure (mbar)", 100.0)}
    lines = np.arange(len(data)) + 3  # two header lines; file lines are 1-based
    return _assemble(path, "TMY3", data, columns, starts, lines, meta, tz, altitude_m, step_s=3600)


def _tmy3_interval_starts(data: pd.DataFrame, meta: dict, path) -> pd.DatetimeIndex:
    try:
        dates = pd.to_datetime(data["Date (MM/DD/YYYY)"], format="%m/%d/%Y")
        hh_mm = data["Time (HH:MM)"].astype(str).str.split(":", expand=True).astype(int)
    except (KeyError, ValueError, TypeError) as exc:
        raise InputError(f"cannot read the date and time columns ({exc})", file=str(path),
                         where="columns 'Date (MM/DD/YYYY)', 'Time (HH:MM)'",
                         hint="use a complete, unmodified TMY3 file") from None
    starts = dates + pd.to_timedelta(hh_mm[0] - 1, unit="h") + pd.to_timedelta(hh_mm[1], unit="min")
    return pd.DatetimeIndex(starts).tz_localize(_fixed_tz(meta["TZ"]))


def _read_tmy2(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
    data, meta = _call_reader(pvlib.iotools.read_tmy2, path, "TMY2")
    # pvlib already subtracts one hour from the TMY2 hour-ending field: the index is the interval start.
    starts = pd.DatetimeIndex(data.index)
    columns = {"ghi": ("GHI", "GHI", 1.0), "dni": ("DNI", "DNI", 1.0), "dhi": ("DHI", "DHI", 1.0),
               "temp_air": ("DryBulb", "DryBulb (0.1 C)", 0.1), "wind_speed": ("Wspd", "Wspd (0.1 m/s)", 0.1),
               "pressure": ("Pressure", "Pressure (mbar)", 100.0)}
    lines = np.arange(len(data)) + 2  # one header line
    return _assemble(path, "TMY2", data, columns, starts, lines, meta, tz, altitude_m, step_s=3600)


def _read_epw(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
    data, meta = _call_reader(pvlib.iotools.read_epw, path, "EPW")
    # pvlib builds the index from hour - 1: EPW hour 1 (00:00-01:00) becomes 00:00, the interval start.
    starts = pd.DatetimeIndex(data.index)
    columns = {"ghi": ("ghi", "Global Horizontal Radiation", 1.0),
               "dni": ("dni", "Direct Normal Radiation", 1.0),
               "dhi": ("dhi", "Diffuse Horizontal Radiation", 1.0),
               "temp_air": ("temp_air", "Dry Bulb Temperature", 1.0),
               "wind_speed": ("wind_speed", "Wind Speed", 1.0),
               "pressure": ("atmospheric_pressure", "Atmospheric Station Pressure", 1.0)}
    lines = np.arange(len(data)) + 9  # eight header lines
    return _assemble(path, "EPW", data, columns, starts, lines, meta, tz, altitude_m, step_s=3600)


def _assemble(path, kind, data, columns, starts, lines, meta, tz, altitude_m, *, step_s) -> Weather:
    """Common tail of the TMY/EPW readers: check values, convert units, align to the nominal year."""
    file_tz = _fixed_tz(meta["TZ"])
    target_tz = tz if tz is not None else file_tz
    if len(data) not in (8760, 8784):
        raise InputError(f"has {len(data)} data rows, expected 8760 (one per hour of a year)", file=str(path),
                         where=f"line {int(lines[-1]) + 1 if len(lines) else 1} (where the data end)",
                         hint=f"use a complete {kind} file; truncated or edited files cannot be used")
    label_at = _labeller(starts, lines)
    values = {}
    for name, (col, label, scale) in columns.items():
        if col not in data.columns:
            raise InputError(f"column {label!r} is missing", file=str(path), where=f"column {label!r}",
                             hint=f"use a complete {kind} file")
        values[name] = _numeric_column(data[col], path, label, label_at) * scale
        _check_range(name, values[name], path, label, label_at)
    frame = pd.DataFrame(values)
    index, order = _align_to_nominal(starts, target_tz, step_s, path, label_at)
    frame = frame.iloc[order].set_index(index)
    altitude = float(meta.get("altitude", altitude_m if altitude_m is not None else 0.0))
    return Weather(data=frame[list(WEATHER_COLUMNS)].astype(float), step_s=step_s,
                   source=f"{kind} file {path.name}", latitude=float(meta["latitude"]),
                   longitude=float(meta["longitude"]), altitude_m=altitude)


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


# ---- generic CSV


def _read_csv(path: pathlib.Path, tz: dt.timezone | None, latitude: float | None, longitude: float | None,
              altitude_m: float | None) -> Weather:
    meta: dict[str, float] = {}
    try:
        text = _decode_csv_bytes(path.read_bytes(), path)
        comment_lines = 0
        for line in text.split("\n"):
            if not line.startswith("#"):
                break
            comment_lines += 1
            _read_comment_metadata(line, meta, path, comment_lines)
        raw = pd.read_csv(io.StringIO(text), skiprows=comment_lines, dtype=str, skip_blank_lines=False,
                          keep_default_na=False)
    except pd.errors.EmptyDataError:
        raise InputError("has no header line", file=str(path), where=f"line {comment_lines + 1}",
                         hint="the first line after the comments names the columns, e.g. timestamp,ghi") from None
    except (OSError, pd.errors.ParserError) as exc:  # pandas names the line: "Expected 3 fields in line 5, saw 4"
        raise InputError(f"cannot read the file as CSV ({' '.join(str(exc).split())})", file=str(path),
                         hint="use comma-separated text with one header line (see the generic CSV format)") from None
    header_line = comment_lines + 1
    lines = np.arange(len(raw)) + header_line + 1
    names = {str(c).strip().lower(): c for c in raw.columns}
    known = ("timestamp", "ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure")
    for required in ("timestamp", "ghi"):
        if required not in names:
            close = difflib.get_close_matches(required, list(names), n=1)
            hint = f"did you mean {raw.columns[list(names).index(close[0])]!r}? " if close else ""
            raise InputError(f"required column {required!r} is missing", file=str(path),
                             where=f"line {header_line} (header)",
                             hint=f"{hint}columns found: {', '.join(map(str, raw.columns))}; "
                                  f"known columns: {', '.join(known)}")
    if ("dni" in names) != ("dhi" in names):
        have, lack = ("dni", "dhi") if "dni" in names else ("dhi", "dni")
        raise InputError(f"column {have!r} is given without {lack!r}", file=str(path),
                         where=f"line {header_line} (header)",
                         hint="give both dni and dhi, or neither (they are then derived from ghi)")
    if len(raw) == 0:
        raise InputError("has no data rows", file=str(path), where=f"line {header_line + 1}",
                         hint="add one row per interval of a year")

    starts = _parse_timestamps(raw[names["timestamp"]], tz, path, lines)
    target_tz = tz if tz is not None else _fixed_tz(starts[0].utcoffset().total_seconds() / 3600.0)
    label_at = _labeller(starts.tz_convert(target_tz), lines)
    step_s = _infer_step(starts, path, label_at)

    values: dict[str, np.ndarray] = {}
    for name in ("ghi", "dni", "dhi", "temp_air", "wind_speed", "pressure"):
        if name in names:
            values[name] = _numeric_column(raw[names[name]], path, names[name], label_at)
            _check_range(name, values[name], path, names[name], label_at)
    notes = []
    n = len(raw)
    if "temp_air" not in values:
        values["temp_air"] = np.full(n, DEFAULT_TEMP_AIR_C)
        notes.append(f"temp_air {DEFAULT_TEMP_AIR_C:g} C assumed")
    if "wind_speed" not in values:
        values["wind_speed"] = np.full(n, DEFAULT_WIND_SPEED_M_S)
        notes.append(f"wind_speed {DEFAULT_WIND_SPEED_M_S:g} m/s assumed")
    altitude = float(altitude_m) if altitude_m is not None else meta.get("altitude_m", 0.0)
    if "pressure" not in values:
        values["pressure"] = np.full(n, float(pvlib.atmosphere.alt2pres(altitude)))
        notes.append(f"pressure from altitude {altitude:g} m")
    frame = pd.DataFrame(values)
    index, order = _align_to_nominal(starts, target_tz, step_s, path, label_at)
    frame = frame.iloc[order].set_index(index)
    latitude = latitude if latitude is not None else meta.get("latitude")
    longitude = longitude if longitude is not None else meta.get("longitude")
    if "dni" not in frame.columns:
        if latitude is None or longitude is None:
            raise InputError("has GHI only, and deriving DNI and DHI needs the site's latitude and longitude",
                             file=str(path), where=f"line {header_line} (header)",
                             hint="add dni and dhi columns, or give the site's coordinates (or '# latitude = ...' "
                                  "and '# longitude = ...' comment lines at the top of the file)")
        pos = sun_at_midpoints(frame.index, step_s, latitude, longitude, altitude, pressure_pa=frame["pressure"],
                               temp_air_c=frame["temp_air"])
        dni, dhi = erbs_split(frame["ghi"].to_numpy(), pos["zenith"].to_numpy(), frame.index)
        frame = frame.assign(dni=dni, dhi=dhi)
        notes.insert(0, "DNI/DHI derived from GHI by Erbs")
    source = f"CSV file {path.name}" + (f" ({'; '.join(notes)})" if notes else "")
    return Weather(data=frame[list(WEATHER_COLUMNS)].astype(float), step_s=step_s, source=source,
                   latitude=None if latitude is None else float(latitude),
                   longitude=None if longitude is None else float(longitude), altitude_m=altitude)


def _decode_csv_bytes(raw: bytes, path) -> str:
    """Text of a CSV file: UTF-8 with or without a byte-order mark, UTF-16 (with a mark, or detected from its NUL
    bytes), else Latin-1 (in which every byte is a character). NUL bytes that are not UTF-16 mean binary data."""
    codec = None
    for bom, name in ((b"\xef\xbb\xbf", "utf-8-sig"), (b"\xff\xfe", "utf-16"), (b"\xfe\xff", "utf-16")):
        if raw.startswith(bom):
            codec = name
            break
    head = raw[:4096 - 4096 % 2]
    if codec is None and b"\x00" in head:
        odd, even = head[1::2].count(0), head[0::2].count(0)
        if odd > 0.9 * len(head) / 2 and even == 0:
            codec = "utf-16-le"
        elif even > 0.9 * len(head) / 2 and odd == 0:
            codec = "utf-16-be"
        else:
            line = raw[:raw.index(0)].count(b"\n") + 1
            raise InputError("looks like binary data, not CSV text", file=str(path), where=f"line {line}",
                             hint="give a comma-separated text file (see the generic CSV format)")
    try:
        text = raw.decode(codec or "utf-8")
    except UnicodeDecodeError as exc:
        if codec is not None:
            line = raw[:exc.start].decode(codec, errors="replace").count("\n") + 1
            raise InputError(f"is not valid {codec} text", file=str(path), where=f"line {line}",
                             hint="save the CSV as UTF-8") from None
        text = raw.decode("latin-1")
    text = text.lstrip("\ufeff").replace("\r\n", "\n").replace("\r", "\n")
    if "\x00" in text:
        line = text[:text.index("\x00")].count("\n") + 1
        raise InputError("holds NUL characters, not CSV text", file=str(path), where=f"line {line}",
                         hint="give a comma-separated text file (see the generic CSV format)")
    return text


def _read_comment_metadata(line: str, meta: dict[str, float], path, line_no: int) -> None:
    """Read ``# latitude = 36.1`` style comment lines (keys latitude, longitude, altitude_m; ``=`` or ``:``)."""
    body = line[1:].strip()
    for sep in ("=", ":"):
        if sep not in body:
            continue
        key, _, value = body.partition(sep)
        key = key.strip().lower()
        if key in ("latitude", "longitude", "altitude_m"):
            try:
                number = float(value.strip())
            except ValueError:
                raise InputError(f"{key} {value.strip()!r} is not a number", file=str(path), where=f"line {line_no}",
                                 hint=f"write e.g. '# {key} = 12.5'") from None
            limit = {"latitude": 90.0, "longitude": 180.0, "altitude_m": 9000.0}[key]
            if not np.isfinite(number) or abs(number) > limit:
                raise InputError(f"{key} {number:g} is outside -{limit:g}..{limit:g}", file=str(path),
                                 where=f"line {line_no}", hint="degrees north/east positive; altitude in metres")
            meta[key] = number
        return


def _parse_timestamps(column: pd.Series, tz: dt.timezone | None, path, lines) -> pd.DatetimeIndex:
    text = column.astype(str).str.strip()
    empty = (text == "").to_numpy()
    if empty.any():
        pos = int(np.flatnonzero(empty)[0])
        raise InputError("timestamp is empty", file=str(path), where=f"line {int(lines[pos])}, column 'timestamp'",
                         hint="every row needs an ISO 8601 timestamp such as 2023-01-01 00:00")
    stamps = None
    try:
        stamps = pd.DatetimeIndex(pd.to_datetime(text, format="ISO8601"))
    except (ValueError, TypeError):
        try:  # several UTC offsets (e.g. daylight saving): take them as instants
            stamps = pd.DatetimeIndex(pd.to_datetime(text, format="ISO8601", utc=True))
        except (ValueError, TypeError):
            stamps = None
    if stamps is None or stamps.isna().any():
        coerced = pd.to_datetime(text, format="ISO8601", utc=True, errors="coerce")
        bad = np.flatnonzero(pd.isna(coerced))
        pos = int(bad[0]) if len(bad) else 0
        raise InputError(f"timestamp {text.iloc[pos]!r} cannot be read", file=str(path),
                         where=f"line {int(lines[pos])}, column 'timestamp'",
                         hint="use ISO 8601 such as 2023-01-01 00:00 or 2023-01-01T00:00-05:00")
    if stamps.tz is None:
        if tz is None:
            raise InputError("timestamps carry no UTC offset and no time zone was given", file=str(path),
                             where="column 'timestamp'",
                             hint="set site.timezone, or write offsets such as 2023-01-01T00:00-05:00")
        stamps = stamps.tz_localize(tz)
    return stamps


def _infer_step(starts: pd.DatetimeIndex, path, label_at) -> int:
    if len(starts) < 2:
        raise InputError("needs a full year of rows", file=str(path), where="column 'timestamp'",
                         hint="add one row per interval of a year")
    seconds = pd.Series(np.diff(starts.as_unit("s").asi8))
    step = int(seconds.mode().iloc[0])
    if step <= 0 or step > 3600 or 3600 % step:
        raise InputError(f"time step of {step} s is not 1 hour or a whole fraction of an hour", file=str(path),
                         where="column 'timestamp'",
                         hint="use rows every 1, 5, 10, 15, 30 or 60 minutes, sorted in time")
    return step


# ----------------------------------------------------------------------------------------------------------------
# irradiance helpers shared by the readers and the monthly generator


def sun_at_midpoints(index: pd.DatetimeIndex, step_s: int, latitude: float, longitude: float,
                     altitude_m: float, pressure_pa=None, temp_air_c=None) -> pd.DataFrame:
    """Solar position (pvlib SPA, ``nrel_numpy``) at the interval midpoints of ``index``.

    The returned frame carries ``index`` (interval starts), not the midpoints.
    """
    mid = index + pd.Timedelta(seconds=step_s / 2)
    pressure = pvlib.atmosphere.alt2pres(altitude_m) if pressure_pa is None else np.asarray(pressure_pa, float)
    temperature = 12.0 if temp_air_c is None else np.asarray(temp_air_c, float)
    pos = pvlib.solarposition.get_solarposition(mid, latitude, longitude, altitude=altitude_m,
                                                pressure=pressure, method="nrel_numpy", temperature=temperature)
    pos.index = index
    return pos


def erbs_split(ghi_w_m2, zenith_deg, index: pd.DatetimeIndex) -> tuple[np.ndarray, np.ndarray]:
    """DNI and DHI (W/m2) from GHI by Erbs, Klein & Duffie, Solar Energy 28 (1982) 293-302.

    ``zenith_deg`` is the true (not refraction-corrected) zenith, as pvlib asks. Closure holds by construction:
    ``dhi + dni * cos(zenith) == ghi`` (when the sun is too low pvlib puts all of GHI into DHI).
    """
    ghi = np.asarray(ghi_w_m2, float)
    out = pvlib.irradiance.erbs(ghi, np.asarray(zenith_deg, float), index.day_of_year.to_numpy())
    dni = np.nan_to_num(np.asarray(out["dni"], float), nan=0.0)
    dhi = np.nan_to_num(np.asarray(out["dhi"], float), nan=0.0)
    return np.maximum(dni, 0.0), np.clip(dhi, 0.0, ghi)


def clearsky_ghi(index: pd.DatetimeIndex, step_s: int, latitude: float, longitude: float, altitude_m: float,
                 solpos: pd.DataFrame | None = None) -> np.ndarray:
    """Clear-sky GHI (W/m2) at the interval midpoints: Ineichen & Perez (2002) with the Linke turbidity climatology
    that pvlib ships (Remund et al. 2003, ``LinkeTurbidities.h5``; read from disk, no network)."""
    if solpos is None:
        solpos = sun_at_midpoints(index, step_s, latitude, longitude, altitude_m)
    mid = index + pd.Timedelta(seconds=step_s / 2)
    linke = pvlib.clearsky.lookup_linke_turbidity(mid, latitude, longitude).to_numpy()
    apparent = solpos["apparent_zenith"].to_numpy()
    am_rel = pvlib.atmosphere.get_relative_airmass(apparent)
    am_abs = pvlib.atmosphere.get_absolute_airmass(am_rel, pvlib.atmosphere.alt2pres(altitude_m))
    dni_extra = pvlib.irradiance.get_extra_radiation(mid).to_numpy()
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):  # night rows give NaN/inf, zeroed below
        cs = pvlib.clearsky.ineichen(apparent, am_abs, linke, altitude=altitude_m, dni_extra=dni_extra)
    return np.nan_to_num(np.asarray(cs["ghi"], float), nan=0.0).clip(min=0.0)


# ----------------------------------------------------------------------------------------------------------------
# resampling


def interpolate_weather(weather: Weather, step_s: int, *, latitude: float, longitude: float,
                        altitude_m: float, solpos: pd.DataFrame | None = None) -> Weather:
    """Resample weather to another step, keeping the energy of every original interval.

    Finer step: the clear-sky index ``kc = GHI / GHI_clear`` of each original interval (clear sky by
    :func:`clearsky_ghi`, averaged over the interval) is interpolated linearly between interval midpoints and
    multiplied by the fine clear-sky GHI, so that sunrise, noon and sunset keep their shape; each original interval
    is then rescaled so its mean GHI is exactly the original value (interval energy preserved). The diffuse fraction
    is interpolated the same way and rescaled to keep each interval's DHI; DNI follows from closure
    ``DNI = (GHI - DHI) / cos(zenith)`` (zero when the sun is below 86.3 degrees zenith, cos < 0.065, as in pvlib's Erbs).
    Temperature, wind speed and pressure are interpolated linearly between interval midpoints (the year wraps).

    Coarser step: block means (energy preserved exactly).
    ``solpos``: the sun position at the fine step's midpoints (as :func:`sun_at_midpoints` gives it), when the
    caller has it already.
    """
    old = weather.step_s
    if step_s == old:
        return weather
    if step_s <= 0 or 86400 % step_s:
        raise InputError(f"time step of {step_s} s does not divide a day", where="step",
                         hint="use a step such as 60, 300, 900, 1800 or 3600 s")
    tz = weather.data.index.tz
    data = weather.data
    if step_s > old:
        if step_s % old:
            raise InputError(f"cannot resample a {old} s series to {step_s} s", where="step",
                             hint="use a multiple of the weather's own step")
        k = step_s // old
        means = data.to_numpy().reshape(-1, k, data.shape[1]).mean(axis=1)
        frame = pd.DataFrame(means, columns=data.columns, index=nominal_index(step_s, tz))
        return replace(weather, data=frame, step_s=step_s, source=f"{weather.source}, averaged to {step_s} s")
    if old % step_s:
        raise InputError(f"cannot resample a {old} s series to {step_s} s", where="step",
                         hint="use a step that divides the weather's own step")
    k = old // step_s
    n = len(data)
    fine_index = nominal_index(step_s, tz)
    if solpos is None or len(solpos) != len(fine_index):
        solpos = sun_at_midpoints(fine_index, step_s, latitude, longitude, altitude_m)
    cs_fine = clearsky_ghi(fine_index, step_s, latitude, longitude, altitude_m, solpos=solpos)
    cs_block = cs_fine.reshape(n, k)
    cs_coarse = cs_block.mean(axis=1)

    # positions (in seconds from the year start) of coarse and fine interval midpoints; the year is periodic
    year_s = 8760 * 3600
    coarse_mid = np.arange(n) * old + old / 2
    fine_mid = np.arange(n * k) * step_s + step_s / 2

    def interp(anchor_values: np.ndarray, valid: np.ndarray) -> np.ndarray:
        if not valid.any():
            return np.zeros(n * k)
        return np.interp(fine_mid, coarse_mid[valid], anchor_values[valid], period=year_s)

    ghi_c = data["ghi"].to_numpy()
    has_sky = cs_coarse > 1.0
    kc = np.where(has_sky, ghi_c / np.where(has_sky, cs_coarse, 1.0), 0.0)
    ghi_f = (interp(kc, has_sky).clip(0.0, 2.0) * cs_fine).reshape(n, k)
    ghi_f = _rescale_blocks(ghi_f, ghi_c)

    dhi_c = data["dhi"].to_numpy()
    lit = ghi_c > 0
    kd = np.where(lit, dhi_c / np.where(lit, ghi_c, 1.0), 1.0)
    dhi_f = (interp(kd, lit).clip(0.0, 1.0).reshape(n, k) * ghi_f)
    dhi_f = np.minimum(_rescale_blocks(dhi_f, dhi_c), ghi_f)

    cosz = np.cos(np.radians(solpos["zenith"].to_numpy())).reshape(n, k)
    up = cosz >= 0.065
    dni_f = np.where(up, (ghi_f - dhi_f) / np.where(up, cosz, 1.0), 0.0)
    dhi_f = np.where(up, dhi_f, ghi_f)
    dni_extra = pvlib.irradiance.get_extra_radiation(fine_index).to_numpy().reshape(n, k)
    dni_f = np.minimum(dni_f, dni_extra)

    frame = pd.DataFrame({"ghi": ghi_f.ravel(), "dni": dni_f.ravel(), "dhi": dhi_f.ravel()}, index=fine_index)
    for name in ("temp_air", "wind_speed", "pressure"):
        frame[name] = np.interp(fine_mid, coarse_mid, data[name].to_numpy(), period=year_s)
    return replace(weather, data=frame[list(WEATHER_COLUMNS)], step_s=step_s,
                   source=f"{weather.source}, interpolated to {step_s} s by clear-sky index")


def _rescale_blocks(fine: np.ndarray, coarse_mean: np.ndarray) -> np.ndarray:
    """Scale each row of ``fine`` (n, k) so its mean equals ``coarse_mean``; rows with no shape get a flat profile."""
    mean = fine.mean(axis=1)
    shaped = mean > 1e-9
    factor = np.where(shaped, coarse_mean / np.where(shaped, mean, 1.0), 0.0)
    out = fine * factor[:, None]
    flat = ~shaped & (coarse_mean > 0)
    out[flat] = coarse_mean[flat, None]
    return out
