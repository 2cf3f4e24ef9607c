"""Data files: upload a measured load or a weather file, with what the importer made of it shown beside it."""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd
import streamlit as st

from core.scenario import Scenario
from core.simulate import site_timezone
from core.timebase import standard_offset
from explorer import state, uploads
from explorer.guard import section

LOAD_TYPES = ["csv", "txt", "tsv"]
WEATHER_TYPES = ["csv", "epw", "tm2", "txt"]
#: The units a scenario's [load] accepts, after "decide from the file".
UNIT_CHOICES = ["decide from the file", "W", "kW", "Wh", "kWh", "kWh_register"]


def _quality_rows(q: dict) -> pd.DataFrame:
    """The load summary as a two-column table a person reads top to bottom."""
    def f(value, fmt="{}", unit=""):
        if value is None or (isinstance(value, float) and not np.isfinite(value)):
            return "—"
        return fmt.format(value) + (f" {unit}" if unit else "")

    rows = [
        ("Column read", f(q.get("column"))),
        ("Time column", f(q.get("time_column"))),
        ("Unit", f"{q.get('unit')} — {q.get('unit_reason', '')}".strip(" —")),
        ("Interval", f(q.get("interval_s"), "{:,.0f}", "s")),
        ("First / last reading (UTC)", f"{q.get('start_utc', '')} … {q.get('end_utc', '')}"),
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
        st.warning(w)


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


def render_uploads(sc: Scenario, folder: Path) -> state.DataOverrides:
    """Load and weather uploads with their summaries; returns the files that replace the scenario's."""
    folder = folder / "data"
    folder.mkdir(parents=True, exist_ok=True)
    load_path = load_column = load_unit = weather_path = None
    channel = "backed_up"
    timezone = sc.load.timezone or site_timezone(sc)

    left, right = st.columns(2, gap="large")
    with left:
        st.markdown("#### Measured load")
        upload = st.file_uploader("Load file (CSV export of a meter or logger)", type=LOAD_TYPES, key="load_file",
                                  help=f"Up to {uploads.LIMIT_TEXT}. A timestamp column and "
                                  "a power or energy column; the importer finds both and says what it decided.")
        channel = st.radio("The file holds", list(state.LOAD_CHANNELS), format_func=state.LOAD_CHANNELS.get,
                           key="load_channel", horizontal=True)
        c1, c2 = st.columns(2)
        column = c1.text_input("Column (blank: found from the header)", key="load_column").strip() or None
        unit_choice = c2.selectbox("Unit", UNIT_CHOICES, key="load_unit")
        unit = None if unit_choice == UNIT_CHOICES[0] else unit_choice
        if upload is not None:
            with section("Load file"):
                data = upload.getvalue()
                path = state.save_upload(state.content_folder(folder, data), upload.name, data)
                summary = _inspect_load(str(path), timezone, unit, column, sc.site.latitude, sc.site.longitude)
                st.success(f"Read {upload.name}: the simulation now uses it for the "
                           f"{state.LOAD_CHANNELS[channel].lower()} (timestamps without an offset are read as "
                           f"{timezone}).")
                _show_quality(summary)
                load_path, load_column, load_unit = str(path), column, unit
        else:
            st.caption("Without an upload the scenario's own load files are used; their summary is below.")
    with right:
        st.markdown("#### Weather")
        upload = st.file_uploader("Weather file (EPW, TMY3, TMY2 or CSV)", type=WEATHER_TYPES, key="weather_file",
                                  help="A full year at one hour or a whole fraction of an hour.")
        if upload is not None:
            with section("Weather file"):
                data = upload.getvalue()
                path = state.save_upload(state.content_folder(folder, data), upload.name, data)
                w = _read_weather(str(path), timezone, sc.site.latitude, sc.site.longitude, sc.site.altitude_m)
                st.success(f"Read {upload.name}: the simulation now uses it.")
                _table(_weather_summary(w))
                weather_path = str(path)
        else:
            st.caption("Without an upload the scenario's own weather is used; its summary is below.")
    return state.DataOverrides(load_path=load_path, load_channel=channel, load_column=load_column,
                               load_unit=load_unit, weather_path=weather_path)


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
                            st.warning(w)
                elif notes.get("method"):
                    st.caption(f"No load file: {notes['method']}.")
                else:
                    st.caption("No load of this kind in the scenario.")
    with right:
        st.markdown("#### Weather in use")
        _table(_weather_summary(site.weather))
        for text in site.weather.warnings:
            st.warning(text)

