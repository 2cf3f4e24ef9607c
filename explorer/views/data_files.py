"""Data files: upload a measured load or a weather file, with what the importer made of it shown beside it."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import numpy as np
import pandas as pd
import streamlit as st

from core.errors import InputError
from core.present.figures import MONTH_NAMES
from core.scenario import Scenario
from core.simulate import site_timezone
from core.timebase import standard_offset
from explorer import state, uploads
from explorer.guard import private, section

LOAD_TYPES = ["csv", "txt", "tsv"]
WEATHER_TYPES = ["csv", "epw", "tm2", "txt"]
#: The units a scenario's [load] accepts, after "decide from the file".
UNIT_CHOICES = ["decide from the file", "W", "kW", "Wh", "kWh", "kWh_register"]


def _when(stamp) -> str:
    """An ISO time stamp as a reader writes it (2025-01-01 05:00), or the text as it is when it is not one."""
    try:
        return pd.Timestamp(stamp).strftime("%Y-%m-%d %H:%M")
    except (TypeError, ValueError):
        return "" if stamp is None else str(stamp)


def _reason(text: str) -> str:
    """How the unit was decided, in the page's words (the loader speaks of its caller: here, the settings)."""
    return "as set in the scenario or above" if text == "given by the caller" else text


def _quality_rows(q: dict) -> pd.DataFrame:
    """The load summary as a two-column table a person reads top to bottom."""
    def f(value, fmt="{}", unit=""):
        if value is None or (isinstance(value, float) and not np.isfinite(value)):
            return "—"
        return fmt.format(value) + (f" {unit}" if unit else "")

    rows = [
        ("Column read", f(q.get("column"))),
        ("Time column", f(q.get("time_column"))),
        ("Unit", f"{q.get('unit')} — {_reason(q.get('unit_reason', ''))}".strip(" —")),
        ("Interval", f(q.get("interval_s"), "{:,.0f}", "s")),
        ("First / last reading (UTC)", f"{_when(q.get('start_utc'))} … {_when(q.get('end_utc'))}"),
        ("Span", f(q.get("span_days"), "{:,.1f}", "days")),
        ("Coverage", f(q.get("coverage_pct"), "{:.1f}", "%")),
        ("Rows read / used / rejected", f"{q.get('rows_read', 0):,} / {q.get('rows_used', 0):,} / "
                                         f"{q.get('rows_rejected', 0):,}"),
        ("Short gaps filled", f"{q.get('gaps_filled', 0):,} ({q.get('filled_intervals', 0):,} intervals)"),
        ("Longest gap left", f(q.get("longest_gap_h"), "{:,.1f}", "h")),
        ("Energy in the record", f(q.get("energy_kwh"), "{:,.0f}", "kWh")),
        ("Mean / peak power", f"{f(q.get('mean_power_w'), '{:,.0f}', 'W')} / {f(q.get('peak_power_w'), '{:,.0f}', 'W')}"),
        ("Timestamps", f(q.get("timestamp_handling"))),
    ]
    return pd.DataFrame(rows, columns=["Item", "Value"])


def _table(frame) -> None:
    """A two-column summary that wraps long values instead of cutting them."""
    st.table(frame.set_index("Item"))


def _show_quality(q: dict) -> None:
    _table(_quality_rows(q))
    reasons = q.get("rejected_reasons") or {}
    if reasons:
        st.caption("Rejected rows: " + "; ".join(f"{k}: {v:,}" for k, v in reasons.items()))
    for w in q.get("warnings") or []:
        _warn_once(w)


def _warn_once(text: str) -> None:
    """A warning box, unless this view already showed the same text (an upload and the data in use can be the
    same file)."""
    shown = st.session_state.setdefault("_data_warnings_shown", set())
    if text not in shown:
        shown.add(text)
        st.warning(text)


def latlon(latitude: float, longitude: float) -> str:
    """``36.10° N, 79.95° W``."""
    return (f"{abs(latitude):.2f}° {'N' if latitude >= 0 else 'S'}, "
            f"{abs(longitude):.2f}° {'E' if longitude >= 0 else 'W'}")


def _weather_summary(w) -> pd.DataFrame:
    d = w.data
    step_h = w.step_s / 3600.0
    ghi = float(d["ghi"].sum() * step_h / 1000.0)
    rows = [
        ("Source", w.source),
        ("Time step", f"{w.step_s / 60:,.0f} min"),
        ("Rows on the year", f"{len(d):,}"),
        ("Global horizontal irradiation", f"{ghi:,.0f} kWh/m² per year"),
        ("Air temperature: min / mean / max", f"{d['temp_air'].min():.1f} / {d['temp_air'].mean():.1f} / "
                                               f"{d['temp_air'].max():.1f} °C"),
        ("Mean wind speed", f"{d['wind_speed'].mean():.1f} m/s"),
    ]
    if w.latitude is not None and w.longitude is not None:
        rows.append(("File's own location", latlon(w.latitude, w.longitude)))
    return pd.DataFrame(rows, columns=["Item", "Value"])


#: Session keys of the twelve monthly-figure inputs, January first.
BILL_KEYS = tuple(f"bill_{m}" for m in range(1, 13))
_STORED = "data_overrides"  # the uploads in use (a state.DataOverrides), kept while other tabs show
_NAMES = "data_override_names"  # {"load": file name, "weather": file name} of the uploads in use


def overrides() -> state.DataOverrides:
    """The uploaded files and figures in use (none until a valid upload or figures were given)."""
    return st.session_state.get(_STORED) or state.DataOverrides()


def forget(sc: Scenario) -> None:
    """Another scenario was chosen: its own files and figures apply again."""
    for key in (_STORED, _NAMES, *BILL_KEYS):
        st.session_state.pop(key, None)


def _store(ov: state.DataOverrides, **names: str | None) -> None:
    st.session_state[_STORED] = ov
    st.session_state[_NAMES] = {**st.session_state.get(_NAMES, {}), **names}


def _bills(sc: Scenario, channel: str) -> tuple[float | None, ...] | None:
    """Twelve monthly figures (kWh) for the load channel; None when none is given."""
    own = sc.load.grid_only_monthly_kwh if channel == "grid_only" else sc.load.monthly_kwh
    with st.expander("Monthly figures (kWh), e.g. from bills", expanded=bool(own) or any(
            st.session_state.get(k) is not None for k in BILL_KEYS)):
        st.caption("Each month's energy for the loads above. They scale the days the record does not cover; "
                   "with all twelve, one week of readings is enough to build the year. Leave a month blank "
                   "when it has no figure.")
        for row in (range(0, 6), range(6, 12)):
            cols = st.columns(6, gap="small")
            for col, m in zip(cols, row, strict=True):
                key = BILL_KEYS[m]
                if key not in st.session_state and own is not None:
                    st.session_state[key] = own[m]
                col.number_input(MONTH_NAMES[m], min_value=0.0, max_value=1e6, value=None, step=10.0, format="%.0f",
                                 key=key, placeholder="kWh")
    values = tuple(st.session_state.get(k) for k in BILL_KEYS)
    return None if all(v is None for v in values) else tuple(None if v is None else float(v) for v in values)


def render_uploads(sc: Scenario, folder: Path) -> None:
    """Load and weather uploads with their summaries; a file is used only once the year can be built from it."""
    st.session_state["_data_warnings_shown"] = set()  # a new run of the view: nothing shown yet
    folder = folder / "data"
    folder.mkdir(parents=True, exist_ok=True)
    timezone = sc.load.timezone or site_timezone(sc)
    current = overrides()
    names = st.session_state.get(_NAMES, {})

    left, right = st.columns(2, gap="large")
    below = st.container()  # the monthly figures, full width under both columns (filled once the channel is read)
    with left:
        st.markdown("#### Measured load")
        if current.load_path:
            c1, c2 = st.columns([3, 1], vertical_alignment="center")
            c1.markdown(f"In use: **{names.get('load', 'an uploaded file')}** "
                        f"({state.LOAD_CHANNELS[current.load_channel].lower()}).")
            if c2.button("Stop using it", key="load_forget"):
                current = dataclasses.replace(current, load_path=None, load_column=None, load_unit=None)
                _store(current, load=None)
        upload = st.file_uploader("Load file (CSV export of a meter or logger)", type=LOAD_TYPES, key="load_file",
                                  help=f"Up to {uploads.LIMIT_TEXT}. A timestamp column and "
                                  "a power or energy column; the importer finds both and says what it decided.")
        channel = st.radio("The file holds", list(state.LOAD_CHANNELS), format_func=state.LOAD_CHANNELS.get,
                           key="load_channel", horizontal=True)
        c1, c2 = st.columns(2)
        column = c1.text_input("Column (blank: found from the header)", key="load_column").strip() or None
        unit_choice = c2.selectbox("Unit", UNIT_CHOICES, key="load_unit")
        unit = None if unit_choice == UNIT_CHOICES[0] else unit_choice
    with below:
        bills = _bills(sc, channel)
    with left:
        if upload is not None:
            with section("Load file"):
                data = upload.getvalue()
                path = state.save_upload(state.content_folder(folder, data), upload.name, data)
                summary = _inspect_load(str(path), timezone, unit, column, sc.site.latitude, sc.site.longitude)
                candidate = dataclasses.replace(current, load_path=str(path), load_channel=channel,
                                                load_column=column, load_unit=unit, monthly_kwh=bills)
                try:
                    _check_year(str(path), timezone, unit, column, sc.site.latitude, sc.site.longitude, bills)
                except InputError as exc:
                    kept = "its own load" if not current.load_path else names.get("load", "the earlier upload")
                    short = "days of load data" in exc.message and (bills is None or None in bills)
                    st.error(f"{upload.name} cannot be used: {private(exc.message)}"
                             + (" — or enter all twelve *Monthly figures* below (e.g. from bills): with them, one "
                                "week of readings is enough" if short else
                                f" ({private(exc.hint)})" if exc.hint else "")
                             + f". The simulation keeps {kept}.")
                else:
                    if candidate != current:
                        _store(candidate, load=upload.name)
                    current = candidate
                    st.success(f"Read {upload.name}: the simulation uses it for the "
                               f"{state.LOAD_CHANNELS[channel].lower()}"
                               + (" with the monthly figures" if bills else "")
                               + f" (timestamps without an offset are read as {timezone}).")
                _show_quality(summary)
        else:
            if bills != current.monthly_kwh or channel != current.load_channel:
                with section("Monthly figures"):
                    candidate = dataclasses.replace(current, load_channel=channel, monthly_kwh=bills)
                    if current.load_path:
                        _check_year(current.load_path, timezone, current.load_unit, current.load_column,
                                    sc.site.latitude, sc.site.longitude, bills)
                    _store(candidate)
                    current = candidate
            if not current.load_path:
                st.caption("Without an upload the scenario's own load files are used; their summary is below.")
    with right:
        st.markdown("#### Weather")
        if current.weather_path:
            c1, c2 = st.columns([3, 1], vertical_alignment="center")
            c1.markdown(f"In use: **{names.get('weather', 'an uploaded file')}**.")
            if c2.button("Stop using it", key="weather_forget"):
                current = dataclasses.replace(current, weather_path=None)
                _store(current, weather=None)
        upload = st.file_uploader("Weather file (EPW, TMY3, TMY2 or CSV)", type=WEATHER_TYPES, key="weather_file",
                                  help="A full year at one hour or a whole fraction of an hour.")
        if upload is not None:
            with section("Weather file"):
                data = upload.getvalue()
                path = state.save_upload(state.content_folder(folder, data), upload.name, data)
                w = _read_weather(str(path), timezone, sc.site.latitude, sc.site.longitude, sc.site.altitude_m)
                if current.weather_path != str(path):
                    current = dataclasses.replace(current, weather_path=str(path))
                    _store(current, weather=upload.name)
                st.success(f"Read {upload.name}: the simulation uses it.")
                _table(_weather_summary(w))
        elif not current.weather_path:
            st.caption("Without an upload the scenario's own weather is used; its summary is below.")


@st.cache_data(max_entries=16, show_spinner=False)
def _check_year(path: str, timezone: str, unit: str | None, column: str | None, latitude: float, longitude: float,
                bills: tuple | None) -> None:
    """Build the year from the file (hourly) as the simulation will, so that a record too short to build one
    is refused here, beside the upload, and never reaches the simulation."""
    from core.model.loads.load_file import load_year

    load_year(path, step_s=3600, tz=standard_offset(timezone), timezone_name=timezone, column=column, unit=unit,
              monthly_kwh=bills, latitude=latitude, longitude=longitude)


@st.cache_data(max_entries=16, show_spinner=False)
def _inspect_load(path: str, timezone: str, unit: str | None, column: str | None, latitude: float,
                  longitude: float) -> dict:
    from core.model.loads import inspect_load_summary

    return inspect_load_summary(path, timezone=timezone, unit=unit, column=column, latitude=latitude,
                                longitude=longitude)


@st.cache_resource(max_entries=8, show_spinner=False)
def _read_weather(path: str, timezone: str, latitude: float, longitude: float, altitude_m: float):
    from core.model.weather import read_weather_file

    return read_weather_file(path, tz=standard_offset(timezone), latitude=latitude, longitude=longitude,
                             altitude_m=altitude_m)


def render(m) -> None:
    """The tab's second half (the uploads are drawn before the figures): what the simulation reads."""
    st.divider()
    render_current(m.sim)


def render_warning_notice(site) -> None:
    """One line under the headline when the importers noticed something (each note is in *Data files*)."""
    found = list(site.warnings)
    if found:
        more = f" (and {len(found) - 1} more)" if len(found) > 1 else ""
        st.warning(f"The data files need a look: {found[0]}{more}. Every note is under *Data files*.")


def render_current(sim) -> None:
    """What the running simulation reads: the load records' summaries and the weather's."""
    site = sim.site
    left, right = st.columns(2, gap="large")
    with left:
        st.markdown("#### Loads in use")
        for channel, label in (("backed_up", "Backed-up loads"), ("grid_only", "Grid-only loads")):
            notes = site.load_notes.get(channel) or {}
            quality = notes.get("quality")
            series = site.load_backed_w if channel == "backed_up" else site.load_grid_only_w
            total = float(np.sum(series) * site.dt_h / 1000.0)
            with st.expander(f"{label}: {total:,.0f} kWh per year", expanded=channel == "backed_up"):
                if quality is not None:
                    _show_quality(quality.to_dict())
                    year = notes.get("year")
                    if year is not None:
                        st.caption(f"The simulated year holds {year.measured_days} measured days, "
                                   f"{year.partial_days} partly measured and {year.filled_days} filled days "
                                   f"({year.annual_kwh:,.0f} kWh). {year.method}")
                        for w in year.warnings:
                            _warn_once(w)
                elif notes.get("method"):
                    st.caption(f"No load file: {notes['method']}.")
                else:
                    st.caption("No load of this kind in the scenario.")
    with right:
        st.markdown("#### Weather in use")
        _table(_weather_summary(site.weather))
        for text in site.weather.warnings:
            st.warning(text)

