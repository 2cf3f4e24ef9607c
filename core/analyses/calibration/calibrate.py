"""Calibration against the existing system's monitoring export: read, screen, fit, judge, and a calibrated copy.

The steps and their sources are in the modules of this package: :mod:`.record` (reading), :mod:`.model` (the
scenario's arrays at the record's timestamps), :mod:`.screening` (pvanalytics), :mod:`.fit` (losses, standing draw,
base load), :mod:`.metrics` and :mod:`.goodness` (ASHRAE Guideline 14), :mod:`.calibrated` (the copy).
"""

from __future__ import annotations

import math
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from core.analyses.calibration import fit as fitting
from core.analyses.calibration import goodness
from core.analyses.calibration.calibrated import apply_fit
from core.analyses.calibration.model import (
    ModelledArrays,
    array_output_w,
    clearsky_weather,
    dc_arrays,
    model_arrays,
    near_limit,
    on_record_times,
)
from core.analyses.calibration.record import ALL_DC, MonitoringRecord, read_monitoring
from core.analyses.calibration.screening import REASONS, Screen, screen_pv
from core.errors import InputError
from core.files import MAX_WEATHER_BYTES, check_input_file
from core.model import weather as weather_io
from core.scenario import Scenario
from core.simulate import load_weather, site_timezone
from core.timebase import standard_offset

#: Measured PV peaks above this multiple of the rated output, or below the lower one, point to a wrong unit.
UNIT_HIGH, UNIT_LOW = 1.5, 0.02


@dataclass(frozen=True, eq=False)
class Channel:
    """One measured PV channel: the arrays it covers, its screening and the tables behind the figures."""

    key: str
    column: str
    arrays: tuple[str, ...]
    rating_w: float
    screen: Screen
    clear_days: tuple = ()
    used: pd.Series | None = None  # the intervals the losses were fitted on


@dataclass(frozen=True, eq=False)
class Calibration:
    """What a calibration found (see :meth:`to_dict` for the JSON) and the calibrated scenario."""

    scenario: Scenario
    calibrated: Scenario
    record: MonitoringRecord
    channels: tuple[Channel, ...]
    losses: dict[str, fitting.Fitted]
    standing_draw: fitting.Fitted | None
    base_load: fitting.Fitted | None
    fit: dict[str, Any]
    intervals: pd.DataFrame  # per interval: measured, modelled before/after (W, all channels), excluded reason
    daily: pd.DataFrame  # per local day: measured, modelled before/after (kWh) over the kept intervals
    notes: tuple[str, ...] = field(default=())

    def excluded(self) -> dict[str, int]:
        return {r: sum(c.screen.counts()[r] for c in self.channels) for r in REASONS}

    def to_dict(self) -> dict[str, Any]:
        def r(x: float | None, digits: int) -> float | None:
            return None if x is None or not math.isfinite(x) else round(float(x), digits)

        arrays = {name: {"losses_pct": r(f.value, 1), "uncertainty_pct": r(f.uncertainty, 1), "days": f.days,
                         "scenario_losses_pct": next(a.losses_pct for a in self.scenario.arrays if a.name == name)}
                  for name, f in self.losses.items()}
        sd, bl = self.standing_draw, self.base_load
        index = self.record.index
        return {
            "fitted": {
                "arrays": arrays,
                "standing_draw_w": r(sd.value, 0) if sd else None,
                "standing_draw_uncertainty_w": r(sd.uncertainty, 0) if sd else None,
                "standing_draw_hours": r(sd.hours, 0) if sd else None,
                "base_load_w": r(bl.value, 0) if bl else None,
                "base_load_uncertainty_w": r(bl.uncertainty, 0) if bl else None,
                "base_load_hours": r(bl.hours, 0) if bl else None,
            },
            "excluded": self.excluded(),
            "fit": self.fit,
            "record": {"file": self.record.file, "start_utc": index[0].isoformat(),
                       "end_utc": (index[-1] + pd.Timedelta(seconds=self.record.step_s)).isoformat(),
                       "days": round(self.record.span_days, 1), "interval_s": self.record.step_s,
                       "daytime_intervals": int(sum(c.screen.daytime.sum() for c in self.channels)),
                       "curtailment_found_by": sorted({c.screen.curtailment_method for c in self.channels}),
                       "clear_days": {c.key: len(c.clear_days) for c in self.channels}},
            "notes": list(self.notes),
        }


def _no_progress(fraction: float, stage: str) -> None:
    """Progress sink when the caller wants none."""


def _check_units(power_w: pd.Series, rating_w: float, file: str, where: str) -> None:
    finite = power_w.dropna()
    if finite.empty or float(finite.abs().max()) == 0.0:
        raise InputError("the PV output is zero throughout the record", file=file, where=where,
                         hint="check that the column is the PV yield of the existing arrays")
    peak = float(np.percentile(finite, 99.9))
    if peak > UNIT_HIGH * rating_w:
        raise InputError(f"the PV output reaches {peak:,.0f} W, {peak / rating_w:.0f} times what the arrays can give "
                         f"({rating_w:,.0f} W)", file=file, where=where,
                         hint="check measured.unit: per-interval energy (Wh, kWh) or mean power (W, kW)")
    if peak < UNIT_LOW * rating_w:
        raise InputError(f"the PV output peaks at {peak:,.1f} W, only {100 * peak / rating_w:.2f} % of what the arrays "
                         f"can give ({rating_w:,.0f} W)", file=file, where=where,
                         hint="check measured.unit (kWh read as Wh?) and that pv names the arrays' yield columns")


def _channels(sc: Scenario, record: MonitoringRecord) -> list[tuple[str, str, tuple[str, ...]]]:
    names = tuple(a.name for a in dc_arrays(sc))
    return [(key, column, names if key == ALL_DC else (key,)) for key, column in record.pv_columns.items()]


def _sum(parts: dict[str, pd.Series], names: tuple[str, ...]) -> pd.Series:
    return sum(parts[n] for n in names)


def calibrate(sc: Scenario, *, progress: Callable[[float, str], None] | None = None) -> Calibration:
    """Calibrate the scenario against its [measured] monitoring export (see the package docstring)."""
    progress = progress or _no_progress
    m = sc.measured
    if m is None or not m.path:
        raise InputError("the scenario has no [measured] section", where="measured",
                         hint='add [measured] with path = "monitoring.csv" and the columns (see README)')
    timezone = site_timezone(sc)
    tz = standard_offset(timezone)
    progress(0.0, "reading the monitoring export")
    record = read_monitoring(sc.resolve(m.path, "measured.path"), pv=m.pv, grid_import=m.grid_import, load=m.load,
                             soc=m.soc, unit=m.unit, timezone=m.timezone or timezone)
    index, step = record.index, record.step_s
    file = record.file
    progress(0.3, "modelling the arrays")
    typical = load_weather(sc, tz)
    cs_model = model_arrays(sc, index, step, clearsky_weather(index, step, sc, typical), "clear sky (Ineichen)")
    period_model: ModelledArrays | None = None
    if m.weather_path:
        weather_path = check_input_file(sc.resolve(m.weather_path, "measured.weather_path"), kind="weather file",
                                        max_bytes=MAX_WEATHER_BYTES, where="measured.weather_path")
        period = weather_io.read_weather_file(weather_path, tz=tz,
                                              latitude=sc.site.latitude, longitude=sc.site.longitude,
                                              altitude_m=sc.site.altitude_m)
        period_model = model_arrays(sc, index, step, on_record_times(period, index, sc), "the period's weather")
    typical_model = period_model or model_arrays(sc, index, step, on_record_times(typical, index, sc),
                                                 "the scenario's typical year")
    scenario_losses = {a.name: a.losses_pct for a in dc_arrays(sc)}
    day = pd.Series(index.tz_convert(tz).date, index=index)
    elevation = cs_model.sun_elevation_deg
    clipping_cs = near_limit(cs_model, scenario_losses)
    progress(0.5, "screening and fitting")
    channels, losses, notes = [], {}, []
    for key, column, names in _channels(sc, record):
        measured = record.pv_w[key]
        where = "measured.pv" if key == ALL_DC else f"measured.pv.{key}"
        cs = _sum(cs_model.lossless_w, names)
        rating = sum(sc.modules[a.module].pmax_w * a.module_count * sc.controllers[a.controller].efficiency
                     for a in dc_arrays(sc) if a.name in names)
        _check_units(measured, rating, file, f"{where} (column {column!r})")
        screen = screen_pv(measured, sun_elevation_deg=elevation, clearsky_lossless_w=cs, rating_w=rating,
                           step_s=step, soc_pct=record.soc_pct)
        usable = screen.kept & (elevation > fitting.MIN_ELEVATION_DEG)
        try:
            if period_model is not None:
                model = _sum(period_model.lossless_w, names)
                usable = usable & ~near_limit(period_model, scenario_losses) & (model > fitting.LOW_MODEL * rating)
                days = sorted(set(day[usable]))
                fitted = fitting.losses_from_days(measured, model, usable, day, days, step, fitting.MIN_WEATHER_DAYS)
                clear: list = []
                used = usable
            else:
                usable = usable & ~clipping_cs
                clear, clear_usable = fitting.clear_days(measured, cs, usable, day, rating, step)
                if len(clear) < fitting.MIN_CLEAR_DAYS:
                    raise fitting.NotFitted(f"too cloudy or too short: {len(clear)} clear-sky day(s) among "
                                            f"{record.span_days:.0f} days, at least {fitting.MIN_CLEAR_DAYS} needed")
                fitted = fitting.losses_from_days(measured, cs, clear_usable, day, clear, step,
                                                  fitting.MIN_CLEAR_DAYS)
                used = clear_usable
        except fitting.NotFitted as exc:
            raise InputError(f"cannot fit the array losses: {exc}", file=file, where=where,
                             hint="export a longer record (a month or more, with some sunny days), or give the "
                                  "period's own measured weather as measured.weather_path") from None
        losses.update({n: fitted for n in names})
        channels.append(Channel(key=key, column=column, arrays=names, rating_w=rating, screen=screen,
                                clear_days=tuple(clear), used=used))

    standing = None
    if record.grid_import_w is not None and record.soc_pct is not None and sc.battery is not None:
        try:
            standing = fitting.standing_draw(record.grid_import_w, record.soc_pct, sc.battery.reserve_pct, step)
        except fitting.NotFitted as exc:
            notes.append(f"standing draw not fitted: {exc}")
    elif record.grid_import_w is not None:
        notes.append("standing draw not fitted: it needs the state of charge (measured.soc) beside grid import")
    base = None
    if record.load_w is not None:
        try:
            base = fitting.base_load(record.load_w, latitude=sc.site.latitude, longitude=sc.site.longitude, tz=tz,
                                     step_s=step)
        except fitting.NotFitted as exc:
            notes.append(f"base load not fitted: {exc}")

    progress(0.8, "judging the fit")
    fitted_losses = {**scenario_losses, **{n: f.value for n, f in losses.items()}}
    hourly_model = period_model or cs_model
    tables: dict[str, dict[str, pd.DataFrame]] = {"before": {}, "after": {}}
    measured_all = sum((record.pv_w[c.key] for c in channels), pd.Series(0.0, index=index))
    kept_all = np.logical_and.reduce([c.screen.kept.to_numpy() for c in channels]) if channels else \
        np.zeros(len(index), bool)
    kept_all = pd.Series(kept_all, index=index) & (elevation > 0)
    on_clear = day.isin(set().union(*[set(c.clear_days) for c in channels])) if channels else kept_all
    hourly_use = kept_all if period_model is not None else kept_all & on_clear
    names_all = tuple(n for c in channels for n in c.arrays)
    series = {}
    for when, lossmap in (("before", scenario_losses), ("after", fitted_losses)):
        hourly_out = _sum(array_output_w(hourly_model, lossmap), names_all) if names_all else measured_all * 0
        monthly_out = _sum(array_output_w(typical_model, lossmap), names_all) if names_all else measured_all * 0
        tables[when]["hourly"] = goodness.sums(measured_all, hourly_out, hourly_use, step, "1h", tz)
        tables[when]["monthly"] = goodness.sums(measured_all, monthly_out, kept_all, step, "MS", tz)
        # Days and intervals for the figures: on the hourly basis, where the model's weather is the record's.
        tables[when]["daily"] = goodness.sums(measured_all, hourly_out, hourly_use, step, "D", tz)
        series[when] = hourly_out
    fit = {when: {res: goodness.scores(tables[when][res]) for res in ("monthly", "hourly")} for when in tables}
    # Guideline 14 judges a model run on the period's own weather; against a typical year the monthly figures
    # show the weather's difference as much as the model's, so they are reported but not judged.
    judged = ("monthly", "hourly") if period_model is not None else ("hourly",)
    fit["meets_guideline_14"] = goodness.judge({res: fit["after"][res] for res in judged})
    fit["judged_on"] = list(judged)
    fit["basis"] = {"hourly": f"{hourly_model.basis}" + ("" if period_model else ", clear-sky days only"),
                    "monthly": typical_model.basis}
    reason = pd.Series("", index=index, dtype=object)
    for c in channels:
        reason = reason.where(reason != "", c.screen.reason)
    intervals = pd.DataFrame({"measured_w": measured_all.where(measured_all.notna()), "modelled_before_w": series["before"],
                              "modelled_after_w": series["after"], "excluded": reason})
    daily = tables["before"]["daily"].rename(columns={"modelled_kwh": "modelled_before_kwh"})
    daily["modelled_after_kwh"] = tables["after"]["daily"]["modelled_kwh"]
    if period_model is None:
        notes.append("the losses rest on pvlib's clear sky (Ineichen, shipped Linke turbidity); a hazier or clearer "
                     "sky than that climatology shows up in them")
    calibrated = apply_fit(sc, {n: f.value for n, f in losses.items()}, standing.value if standing else None)
    progress(1.0, "done")
    return Calibration(scenario=sc, calibrated=calibrated, record=record, channels=tuple(channels), losses=losses,
                       standing_draw=standing, base_load=base, fit=fit, intervals=intervals, daily=daily,
                       notes=tuple(notes))
