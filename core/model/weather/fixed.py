"""The fixed formats: EPW, NREL TMY3 and TMY2, read with pvlib's readers (see the package docstring)."""

from __future__ import annotations

import datetime as dt
import pathlib
import re

import numpy as np
import pandas as pd
import pvlib

from core.errors import InputError
from core.model.weather.frame import (
    WEATHER_COLUMNS,
    Weather,
    _align_to_nominal,
    _check_range,
    _fixed_tz,
    _labeller,
    _numeric_column,
)


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



def read_tmy3(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
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


def read_tmy2(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
    data, meta = _call_reader(pvlib.iotools.read_tmy2, path, "TMY2")
    # pvlib already subtracts one hour from the TMY2 hour-ending field: the index is the interval start.
    starts = pd.DatetimeIndex(data.index)
    columns = {"ghi": ("GHI", "GHI", 1.0), "dni": ("DNI", "DNI", 1.0), "dhi": ("DHI", "DHI", 1.0),
               "temp_air": ("DryBulb", "DryBulb (0.1 C)", 0.1), "wind_speed": ("Wspd", "Wspd (0.1 m/s)", 0.1),
               "pressure": ("Pressure", "Pressure (mbar)", 100.0)}
    lines = np.arange(len(data)) + 2  # one header line
    return _assemble(path, "TMY2", data, columns, starts, lines, meta, tz, altitude_m, step_s=3600)


def read_epw(path: pathlib.Path, tz: dt.timezone | None, altitude_m: float | None) -> Weather:
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
                   longitude=float(meta["longitude"]), altitude_m=altitude,
                   file_location=(float(meta["latitude"]), float(meta["longitude"])))


