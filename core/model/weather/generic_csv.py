"""The project's own generic CSV weather format (described in the package docstring)."""

from __future__ import annotations

import datetime as dt
import difflib
import io
import pathlib

import numpy as np
import pandas as pd
import pvlib

from core.errors import InputError
from core.files import decode_text
from core.model.weather.frame import (
    DEFAULT_TEMP_AIR_C,
    DEFAULT_WIND_SPEED_M_S,
    WEATHER_COLUMNS,
    Weather,
    _align_to_nominal,
    _check_range,
    _fixed_tz,
    _labeller,
    _numeric_column,
)
from core.model.weather.sun import erbs_split, sun_at_midpoints


def read_csv(path: pathlib.Path, tz: dt.timezone | None, latitude: float | None, longitude: float | None,
              altitude_m: float | None) -> Weather:
    meta: dict[str, float] = {}
    try:
        text = decode_text(path.read_bytes(), str(path), line_word="line").text
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
                   longitude=None if longitude is None else float(longitude), altitude_m=altitude,
                   file_location=((meta["latitude"], meta["longitude"])
                                  if "latitude" in meta and "longitude" in meta else None))



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


