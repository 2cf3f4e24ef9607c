"""Read the existing system's monitoring export into mean power per channel on one regular UTC grid.

Every channel (PV per array or for all DC-coupled arrays, grid import, load, state of charge) is read by the
measured-load importer (:func:`core.model.loads.read_load_csv`), so the export may use any separator, a decimal
comma, W/kW/Wh/kWh or a cumulative register with resets, local time across daylight saving, and gaps. Gaps are
*not* filled here: a missing interval stays NaN and is counted by the screening, never fitted.

Two things the load importer tolerates are refused here, because a calibration must rest on the record as it
was logged: rows out of time order (a file joined or edited by hand) and a record shorter than a week.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from core.errors import InputError
from core.files import check_input_file
from core.model.loads import read_load_csv
from core.model.loads.decode import MAX_FILE_BYTES, read_text
from core.model.loads.table import LINE_COLUMN, find_table
from core.model.loads.timestamps import find_time_columns, parse_times

#: The shortest record a calibration accepts (days): a week gives a chance of a few clear days.
MIN_RECORD_DAYS = 7.0
#: Key of the PV channel when one column holds all existing DC-coupled arrays.
ALL_DC = "*"
#: What to do with an export above the importer's size limit (``core.model.loads.decode.MAX_FILE_BYTES``).
MONITORING_SIZE_HINT = ("export a shorter period or a coarser interval (a year of 5-minute readings of a few "
                        "channels is a few MB)")


@dataclass(frozen=True, eq=False)
class MonitoringRecord:
    """Mean power (W) per channel on one regular grid of interval starts (UTC); NaN where nothing was logged.

    ``pv_w`` maps an array name (or :data:`ALL_DC`) to its measured PV output; ``soc_pct`` is the state of
    charge in percent.
    """

    file: str
    step_s: int
    pv_w: dict[str, pd.Series]
    grid_import_w: pd.Series | None
    load_w: pd.Series | None
    soc_pct: pd.Series | None
    pv_columns: dict[str, str]
    warnings: tuple[str, ...] = ()

    @property
    def index(self) -> pd.DatetimeIndex:
        for series in (*self.pv_w.values(), self.grid_import_w, self.load_w, self.soc_pct):
            if series is not None:
                return series.index
        raise ValueError("a record without channels")

    @property
    def span_days(self) -> float:
        return len(self.index) * self.step_s / 86400.0


def check_time_order(path: Path, file: str, timezone: str | None) -> None:
    """Refuse a file whose rows step back in time (naming the first such row); daylight saving is not a step
    back, because the timestamps are compared in UTC."""
    try:
        table = find_table(read_text(path).text, file)
        columns = find_time_columns(table.rows, table.names, file)
        times = parse_times(table.rows, columns, timezone, file)
    except InputError as exc:
        raise _in_our_words(exc, "path", file) from exc
    t = times.utc_s
    ok = np.flatnonzero(np.isfinite(t))
    back = np.flatnonzero(np.diff(t[ok]) < 0)
    if back.size:
        row = int(table.rows[LINE_COLUMN].to_numpy()[ok[back[0] + 1]])
        raise InputError(f"timestamps are out of order: {back.size} row(s) go back in time", file=file,
                         where=f"row {row}", hint="a monitoring export is written in time order; re-export it, or "
                                                  "sort the rows by time if the file was joined from parts")


#: What a calibration needs from the export's timing (daily or coarser records cannot show clear-sky hours or
#: curtailed afternoons, which the screening and the fit rest on).
COARSE_HINT = ("a calibration needs readings with a time of day, an hour apart or finer; export the record at "
               "its logging interval (1 to 60 minutes) rather than daily totals")


def _in_our_words(exc: InputError, key: str, file: str, where: str | None = None) -> InputError:
    """The importer's message with the [measured] keys named instead of the [load] ones."""
    message = exc.message.replace("load data need", "a calibration needs").replace("load.column", f"measured.{key}")
    hint = (exc.hint or "").replace("load.column", f"measured.{key}") or None
    if "monthly_kwh" in (exc.hint or "") + exc.message:  # the importer's way out for coarse data is not ours
        hint = COARSE_HINT
    return InputError(message, file=exc.file or file, where=where or exc.where, hint=hint)


def _channel(path: Path, file: str, key: str, column: str, unit: str | None, timezone: str | None) -> pd.Series:
    try:
        measured = read_load_csv(path, column=column, unit=unit, timezone=timezone, max_gap_fill_s=0)
    except InputError as exc:
        where = f"measured.{key} (column {column!r})" + (f", {exc.where}" if exc.where else "")
        raise _in_our_words(exc, key, file, where) from exc
    return measured.power_w


def read_monitoring(path: str | Path, *, pv: str | dict[str, str] | None, grid_import: str | None = None,
                    load: str | None = None, soc: str | None = None, unit: str | None = None,
                    timezone: str | None = None, min_days: float = MIN_RECORD_DAYS) -> MonitoringRecord:
    """Read a monitoring export (see the module docstring). ``pv`` is one column for all DC-coupled arrays or a
    mapping {array name: column}; the other channels are optional column names. ``timezone`` is the IANA zone
    of naive timestamps. Every bad input raises :class:`InputError` naming the file."""
    # A regular file under the importer's stated size, checked before anything opens it: a device would be read
    # until memory runs out and a pipe would block; the message names the scenario key.
    path = check_input_file(path, kind="monitoring export", max_bytes=MAX_FILE_BYTES, where="measured.path",
                            size_hint=MONITORING_SIZE_HINT)
    file = str(path)
    check_time_order(path, file, timezone)
    pv_columns = {} if pv is None else ({ALL_DC: pv} if isinstance(pv, str) else dict(pv))
    series: dict[str, pd.Series] = {}
    for name, column in pv_columns.items():
        series[f"pv:{name}"] = _channel(path, file, "pv" if name == ALL_DC else f"pv.{name}", column, unit, timezone)
    for key, column, channel_unit in (("grid_import", grid_import, unit), ("load", load, unit), ("soc", soc, "W")):
        if column is not None:  # the state of charge is read as a "mean power" whose numbers are percent
            series[key] = _channel(path, file, key, column, channel_unit, timezone)
    if not series:
        raise InputError("no column to read", file=file, where="measured", hint="name pv, grid_import or load")
    steps = {int(round(s.index.freq.nanos / 1e9)) if s.index.freq is not None else 0 for s in series.values()}
    step_s = min(s for s in steps if s > 0) if any(steps) else 0
    if step_s <= 0:
        raise InputError("the readings have no regular interval", file=file, where="measured.path")
    start = min(s.index[0] for s in series.values())
    end = max(s.index[-1] for s in series.values())
    index = pd.date_range(start, end, freq=pd.Timedelta(seconds=step_s), name="time_utc")
    frame = {k: s.reindex(index) for k, s in series.items()}
    span_days = len(index) * step_s / 86400.0
    if span_days < min_days:
        raise InputError(f"the record covers {span_days:.1f} day(s); a calibration needs at least {min_days:g} "
                         "days", file=file, where="measured.path",
                         hint="export a longer period: a month or more gives enough clear days")
    soc_pct = frame.get("soc")
    if soc_pct is not None and float(soc_pct.max()) > 100.5:
        raise InputError(f"the state of charge reaches {float(soc_pct.max()):.0f}, above 100 %", file=file,
                         where=f"measured.soc (column {soc!r})", hint="give the column of SOC in percent")
    return MonitoringRecord(file=file, step_s=step_s,
                            pv_w={name: frame[f"pv:{name}"] for name in pv_columns},
                            grid_import_w=frame.get("grid_import"), load_w=frame.get("load"), soc_pct=soc_pct,
                            pv_columns=pv_columns)
