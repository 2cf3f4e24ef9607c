"""Chart builders and the figure tables behind them, on small hand-made frames.

The tables are checked against arithmetic written out here; the charts against their Vega-Lite specification:
the right fields on the right channels, units in every axis title, a legend in words, the Okabe–Ito colours
(Okabe & Ito, "Color Universal Design", 2008: #009E73 bluish green, #56B4E9 sky blue, #E69F00 orange,
#CC79A7 reddish purple, #D55E00 vermillion, #0072B2 blue — from memory, the published palette's hex values).
"""

from __future__ import annotations

import re

import numpy as np
import pandas as pd
import pytest

from core.present import figures
from explorer import charts


def _spec(chart) -> dict:
    return chart.to_dict()


def _titles(spec: dict) -> list[str]:
    """Every axis title in a (possibly layered) spec."""
    out = []
    layers = spec.get("layer", [spec])
    for layer in layers:
        for channel in ("x", "y"):
            enc = layer.get("encoding", {}).get(channel)
            if enc and enc.get("title"):
                out.append(enc["title"])
    return out


def _has_unit(title: str) -> bool:
    return re.search(r"\((W|kWh|kWh/yr|%|h|°)[^)]*\)", title) is not None or title in ("Month", "Panels added")


def _steps(hours: int = 48) -> pd.DataFrame:
    """Two days of hourly steps with simple, known values."""
    index = pd.date_range("2023-06-01", periods=hours, freq="h", tz="Etc/GMT+5")
    hour = index.hour.to_numpy()
    sun = np.clip(np.sin((hour - 6) / 12 * np.pi), 0, None)  # 0 at night, 1 at noon
    return pd.DataFrame({
        "load_backed_w": np.full(hours, 300.0),
        "load_grid_only_w": np.where(hour == 18, 1000.0, 0.0),
        "ac_backed_out_w": 400.0 * sun,
        "ac_grid_out_w": np.zeros(hours),
        "dc_out_w": 1000.0 * sun,
        "soc_wh": np.linspace(1000.0, 5000.0, hours),
        "grid_up": np.ones(hours, dtype=bool),
        "unserved_w": np.zeros(hours),
    }, index=index)


# ------------------------------------------------------------------------------------------------ tables
def test_destinations_table_keeps_every_month_and_destination():
    months = [{"month": m, "pv_direct": 10.0 * m, "pv_to_battery": 5.0, "curtailed": 1.0, "clipped": 0.0,
               "exported": -1e-9} for m in range(1, 13)]
    frame = figures.pv_destinations_by_month(months)
    assert len(frame) == 12 * len(figures.DESTINATIONS)
    march = frame[frame["month"] == 3].set_index("destination")["kwh"]
    assert march["Used directly by the loads"] == pytest.approx(30.0)
    assert march["Exported"] == 0.0  # a rounding-size negative is shown as zero, never below the axis


def test_typical_day_is_the_hourly_mean_over_the_month():
    steps = _steps()
    day = figures.typical_day(steps, 6, usable_wh=10_000.0, base_load_w=250.0)
    at = day.set_index(["series", "hour"])["value"]
    # noon: sin(pi/2) = 1 -> 400 W AC-coupled and 1000 W DC-coupled on both days
    assert at[("AC-coupled PV output", 12.0)] == pytest.approx(400.0)
    assert at[("DC-coupled PV output", 12.0)] == pytest.approx(1000.0)
    # 18:00 both days: 300 W backed-up + 1000 W grid-only
    assert at[("All loads", 18.0)] == pytest.approx(1300.0)
    assert at[("Daytime base load", 3.0)] == 250.0
    # SOC: the mean of the two days' values at hour 0 (step 0 and step 24), as % of 10 kWh
    soc = steps["soc_wh"].to_numpy()
    assert at[("Battery SOC", 0.0)] == pytest.approx((soc[0] + soc[24]) / 2 / 10_000 * 100)
    assert set(day.loc[day["series"] == "Battery SOC", "unit"]) == {"%"}
    assert set(day.loc[day["series"] != "Battery SOC", "unit"]) == {"W"}


def test_surplus_map_against_the_base_load():
    steps = _steps()
    frame = figures.surplus_by_month_hour(steps, [200.0] * 12)
    noon = frame[(frame["month"] == 6) & (frame["hour"] == 12)].iloc[0]
    assert noon["ac_w"] == pytest.approx(400.0)
    assert noon["surplus_w"] == pytest.approx(200.0)  # 400 W output over a 200 W base load
    # without a base load the mean load of that hour is the reference
    plain = figures.surplus_by_month_hour(steps)
    assert plain[(plain["month"] == 6) & (plain["hour"] == 12)]["surplus_w"].iloc[0] == pytest.approx(100.0)


def test_duration_curve_is_sorted_and_counts_daylight_hours():
    steps = _steps()
    daylight = (steps.index.hour >= 6) & (steps.index.hour < 18)
    d = figures.ac_surplus_duration(steps, daylight, 1.0)
    assert len(d) == daylight.sum()
    assert d["hours"].iloc[-1] == pytest.approx(float(daylight.sum()))
    assert (np.diff(d["surplus_w"]) <= 0).all()
    assert d["surplus_w"].iloc[0] == pytest.approx(100.0)  # noon: 400 W against 300 W


def test_outage_events_from_a_hand_made_outage():
    steps = _steps()
    steps.loc[steps.index[10:14], "grid_up"] = False  # one 4-hour outage
    steps.loc[steps.index[12:14], "unserved_w"] = 500.0  # 2 h at 500 W unserved = 1 kWh
    events = figures.outage_events(steps, 1.0, usable_wh=10_000.0)
    assert len(events) == 1
    e = events.iloc[0]
    assert e["hours"] == 4.0
    assert e["unserved_kwh"] == pytest.approx(1.0)
    assert e["unserved_hours"] == 2.0
    assert e["lowest_soc_pct"] == pytest.approx(steps["soc_wh"].iloc[10] / 100.0)


def test_number_formats():
    # docs/design.md §5: kWh for a year without decimals, W for powers, % with one decimal
    assert figures.fmt_kwh(1234.4) == "1,234 kWh"
    assert figures.fmt_kwh(-0.3, signed=True) == "+0 kWh"
    assert figures.fmt_w(349.6) == "350 W"
    assert figures.fmt_pct(12.345) == "12.3 %"
    assert figures.fmt_pct(-4.56, signed=True) == "-4.6 %"
    assert figures.fmt_years(None) == "—"
    assert figures.fmt_years(float("inf")) == "not within the period"


# ------------------------------------------------------------------------------------------------ charts
def test_destinations_chart_encodings_units_and_colours():
    months = [{"month": m, "pv_direct": 1.0, "pv_to_battery": 2.0, "curtailed": 3.0, "clipped": 0.0,
               "exported": 0.0} for m in range(1, 13)]
    spec = _spec(charts.pv_destinations_chart(figures.pv_destinations_by_month(months)))
    enc = spec["encoding"]
    assert spec["mark"]["type"] == "bar"
    assert enc["x"]["field"] == "month_name" and enc["x"]["sort"][0] == "Jan"
    assert enc["y"]["title"] == "Energy (kWh)"
    assert enc["color"]["legend"]["title"] == "Destination"
    scale = enc["color"]["scale"]
    assert dict(zip(scale["domain"], scale["range"], strict=True))["Used directly by the loads"] == "#009E73"
    assert dict(zip(scale["domain"], scale["range"], strict=True))["Curtailed"] == "#E69F00"
    assert "month by month" in spec["title"]["text"]


def test_typical_day_chart_has_two_axes_with_units_and_covers_the_day():
    day = figures.typical_day(_steps(), 6, usable_wh=10_000.0, base_load_w=250.0)
    spec = _spec(charts.typical_day_chart(day, "June"))
    titles = _titles(spec)
    assert "Power (W)" in titles and "Battery SOC (%)" in titles
    assert spec["resolve"]["scale"]["y"] == "independent"
    assert all(_has_unit(t) for t in titles), titles
    assert "June" in spec["title"]["text"]
    power = spec["datasets"][spec["layer"][0]["data"]["name"]]
    assert max(r["hour"] for r in power) == 24.0  # the last hour's step is drawn to midnight


def test_typical_day_chart_without_a_battery_has_one_axis():
    day = figures.typical_day(_steps(), 6, usable_wh=0.0)
    spec = _spec(charts.typical_day_chart(day, "June"))
    assert len(spec["layer"]) == 1
    name = (spec["layer"][0].get("data") or spec["data"])["name"]  # a lone layer's data sits at the top
    assert "Battery SOC" not in {r["series"] for r in spec["datasets"][name]}


def test_surplus_map_leaves_hours_without_output_blank_and_centres_on_zero():
    frame = figures.surplus_by_month_hour(_steps(), [200.0] * 12)
    spec = _spec(charts.surplus_map_chart(frame))
    rows = spec["datasets"][spec["data"]["name"]]
    assert rows and all(r["ac_w"] > 1.0 for r in rows)  # night hours dropped
    colour = spec["encoding"]["color"]
    assert colour["scale"]["domainMid"] == 0
    assert colour["title"] == "Output − base load (W)"
    assert all(_has_unit(t) or t == "Month" for t in _titles(spec))


def test_duration_and_options_and_outage_charts_have_units():
    steps = _steps()
    daylight = (steps.index.hour >= 6) & (steps.index.hour < 18)
    d = _spec(charts.surplus_duration_chart(figures.ac_surplus_duration(steps, daylight, 1.0)))
    assert all(_has_unit(t) for t in _titles(d)) and len(_titles(d)) >= 2
    options = pd.DataFrame({"option": ["ac_backed_up", "dc"] * 2,
                            "label": ["AC-coupled, backed-up side", "DC-coupled"] * 2,
                            "figure": ["More to the loads from PV"] * 2 + ["More curtailed"] * 2,
                            "kwh": [400.0, 380.0, 120.0, 130.0]})
    o = _spec(charts.options_chart(options))
    assert o["encoding"]["xOffset"]["field"] == "label"
    assert o["encoding"]["y"]["title"] == "Change (kWh/yr)"
    scale = o["encoding"]["color"]["scale"]
    assert scale["domain"] == ["AC-coupled, backed-up side", "DC-coupled"]
    assert scale["range"] == ["#E69F00", "#0072B2"]  # Okabe–Ito orange and blue
    steps.loc[steps.index[10:14], "grid_up"] = False
    out = _spec(charts.outage_chart(figures.outage_events(steps, 1.0, 10_000.0)))
    assert out["encoding"]["y"]["title"] == "Hours (h)"


def test_sweep_heatmap_marks_flagged_cells_and_frames_the_current_one():
    frame = pd.DataFrame({"count": [0, 1, 2, 0, 1, 2], "azimuth_deg": [180, 180, 180, 270, 270, 270],
                          "self_consumed_added_kwh": [0, 300, 550, 0, 250, 450],
                          "flag": ["", "", "C", "", "X", "CX"]})
    spec = _spec(charts.sweep_heatmap(frame, x="azimuth_deg", x_title="Azimuth (°)",
                                      current={"count": 2, "azimuth_deg": 270}))
    marks = [layer["mark"]["type"] for layer in spec["layer"]]
    assert marks == ["rect", "circle", "text", "rect"]
    texts = spec["datasets"][spec["layer"][2]["data"]["name"]]
    assert sorted(r["flag"] for r in texts) == ["C", "CX", "X"]
    assert spec["layer"][0]["encoding"]["color"]["title"] == "Added self-consumed energy (kWh/yr)"
    assert spec["layer"][0]["encoding"]["y"]["title"] == "Panels added"
    # a current setting outside the swept values is not drawn (it would add a column to the map)
    off = _spec(charts.sweep_heatmap(frame, x="azimuth_deg", x_title="Azimuth (°)",
                                     current={"count": 2, "azimuth_deg": 255}))
    assert [layer["mark"]["type"] for layer in off["layer"]] == ["rect", "circle", "text"]


def test_option_colours_follow_the_option_not_its_wording():
    # one mapping, keyed by option: a label reworded (or translated) keeps its option's colour
    frame = pd.DataFrame({"option": ["dc", "ac_grid", "baseline"], "label": ["Auf dem DC-Bus", "Netzseite", "Heute"],
                          "figure": ["x"] * 3, "kwh": [1.0, 2.0, 0.0]})
    scale = _spec(charts.options_chart(frame))["encoding"]["color"]["scale"]
    assert dict(zip(scale["domain"], scale["range"], strict=True)) == {
        "Auf dem DC-Bus": figures.OPTION_COLOURS["dc"], "Netzseite": figures.OPTION_COLOURS["ac_grid"],
        "Heute": figures.OPTION_COLOURS["baseline"]}
    assert set(figures.OPTION_COLOURS) == {"baseline", "ac_backed_up", "ac_grid", "dc"}


def test_monthly_chart_draws_the_existing_system_beside_the_new_one():
    months = [{"month": m, "pv_direct": 1.0, "pv_to_battery": 2.0, "curtailed": 3.0, "clipped": 0.0,
               "exported": 0.0} for m in range(1, 13)]
    more = [{**m, "pv_direct": 5.0} for m in months]
    frame = figures.pv_destinations_by_system({"Existing system": months, "With the new panels": more})
    assert set(frame["system"]) == {"Existing system", "With the new panels"}
    assert len(frame) == 2 * 12 * len(figures.DESTINATIONS)
    spec = _spec(charts.pv_destinations_chart(frame))
    assert spec["encoding"]["xOffset"]["field"] == "system"
    assert spec["encoding"]["opacity"]["scale"]["range"] == [0.45, 1.0]  # the existing system's bars are pale
    assert "pale bar is the existing system" in spec["title"]["subtitle"]
    rows = spec["datasets"][spec["data"]["name"]]
    existing = [r for r in rows if r["system"] == "Existing system" and r["destination"] == "Used directly by the loads"]
    assert len(existing) == 12 and all(r["kwh"] == 1.0 for r in existing)


def test_duration_curve_stops_at_the_axis_instead_of_lying_along_it():
    # a deficit far below the surplus: the axis ends at -max(2 x surplus, 500 W) and the curve is not drawn below
    frame = pd.DataFrame({"hours": np.arange(1.0, 7.0), "surplus_w": [300.0, 100.0, -200.0, -700.0, -1500.0,
                                                                       -3000.0]})
    spec = _spec(charts.surplus_duration_chart(frame))
    curve = spec["layer"][1]
    assert curve["encoding"]["y"]["scale"]["domain"] == [-600.0, 300.0]
    assert "clamp" not in curve["encoding"]["y"]["scale"]
    drawn = spec["datasets"][curve["data"]["name"]]
    assert min(r["surplus_w"] for r in drawn) == -200.0
    assert any("not drawn" in line for line in spec["title"]["subtitle"])
    # with nothing below the axis, nothing is said
    calm = _spec(charts.surplus_duration_chart(frame.iloc[:3]))
    assert not any("not drawn" in line for line in calm["title"]["subtitle"])


def test_typical_day_shows_what_the_panels_could_make_and_what_was_lost():
    steps = _steps()
    sun = steps["dc_out_w"] / 1000.0
    steps["pv_potential_dc_w"] = 1100.0 * sun
    steps["pv_potential_ac_w"] = 450.0 * sun
    for col in ("curtailed_dc_w", "curtailed_ac_backed_w", "curtailed_ac_grid_w", "clipped_dc_w"):
        steps[col] = 0.0
    steps["curtailed_ac_backed_w"] = 30.0 * sun
    steps["clipped_dc_w"] = 20.0 * sun
    steps["clipped_ac_w"] = 0.0
    day = figures.typical_day(steps, 6, usable_wh=10_000.0)
    at = day.set_index(["series", "hour"])["value"]
    assert at[("What the panels could make", 12.0)] == pytest.approx(1550.0)
    assert at[("Curtailed or clipped", 12.0)] == pytest.approx(50.0)
    spec = _spec(charts.typical_day_chart(day, "June"))
    scale = spec["layer"][0]["encoding"]["color"]["scale"]
    colours = dict(zip(scale["domain"], scale["range"], strict=True))
    assert "What the panels could make" in colours and "Curtailed or clipped" in colours


def test_cautions_are_said_once_on_a_view():
    # The checks' own cautions overlap one another and the standing safety notes: what they add is said once.
    from core.analyses.checks import CAUTION_AC, CAUTION_BATTERY, CAUTION_DC, CAUTION_MICRO
    from core.present.cautions import distinct_cautions
    from core.present.safety import SAFETY_CAUTIONS

    alone = distinct_cautions([CAUTION_AC, CAUTION_MICRO, CAUTION_MICRO])
    assert sum("licensed electrician" in s for s in alone) == 1
    assert "Microinverters must be certified for the local grid code." in alone
    beside_notes = distinct_cautions([CAUTION_AC, CAUTION_MICRO, CAUTION_BATTERY + " " + CAUTION_MICRO, CAUTION_DC],
                                     already=SAFETY_CAUTIONS)
    assert not any("licensed electrician" in s for s in beside_notes)  # the safety notes say it already
    assert "A battery pushed past its charge limits is a fire risk." in beside_notes
    assert any("qualified installer" in s for s in beside_notes)
    assert len(beside_notes) == len(set(beside_notes))
