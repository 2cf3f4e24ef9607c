"""The explorer page under Streamlit's AppTest: every sample site, the panel-count and coupling controls, a bad
upload, and a saved scenario that loads back to the same figures.

Expected directions come from the energy balance of docs/design.md §4, not from stored results: more AC-coupled
panels put out more AC-coupled energy, and since the engine never takes away curtailment to make room for
energy it cannot otherwise place, curtailment does not fall as output rises.
"""

from __future__ import annotations

import dataclasses
import re
from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from explorer import state

ROOT = Path(__file__).resolve().parent.parent
APP = str(ROOT / "explorer" / "app.py")
SAMPLES = ROOT / "sample_sites"
MAPLE = SAMPLES / "maple_hollow" / "scenario.toml"
TIMEOUT = 240


def _app(monkeypatch, scenario: Path = MAPLE) -> AppTest:
    monkeypatch.setenv("SECONDROOF_SCENARIO", str(scenario))
    at = AppTest.from_file(APP, default_timeout=TIMEOUT)
    at.run()
    return at


def _tab(at: AppTest, label: str) -> AppTest:
    """Show one tab (a tab draws only while it is shown), as a click on it would."""
    at.session_state["view"] = label
    return at.run()


def _ok(at: AppTest) -> None:
    assert not at.exception, [e.value for e in at.exception]
    assert not at.error, [e.value for e in at.error]


def _number(text: str) -> float:
    m = re.search(r"-?[\d,]+(?:\.\d+)?", text)
    assert m, text
    return float(m.group(0).replace(",", ""))


def _metric(at: AppTest, label: str) -> float:
    for m in at.metric:
        if re.sub(r":red\[\*\*(.*)\*\*\]", r"\1", m.label) == label:
            return _number(m.value)
    raise AssertionError(f"no metric {label!r}: {[m.label for m in at.metric]}")


def _line_figure(at: AppTest, label: str) -> float:
    """A figure shown as a bold label and a value on the next line (the headline's last row)."""
    for md in at.markdown:
        if md.value.startswith(f"**{label}**"):
            return _number(md.value.split("\n", 1)[1])
    raise AssertionError(f"no figure {label!r}")


#: Metrics drawn inside a tab rather than in the headline (the Outages tab, the running costs on the energy tab).
_TAB_METRICS = ("Outages", "Hours without grid", "Grid import this year", "Standing draw costs", "Idle draw costs")


def _headline(at: AppTest) -> dict[str, str]:
    return {m.label: m.value for m in at.metric if m.label not in _TAB_METRICS}


@pytest.mark.parametrize("site", sorted(state.sample_sites(SAMPLES).items()), ids=lambda s: s[0])
def test_runs_on_every_sample_site(monkeypatch, site):
    name, path = site
    at = _app(monkeypatch, path)
    _ok(at)
    assert at.selectbox(key="sample_site").value == name
    headline = _headline(at)
    assert "Loads supplied from PV" in headline and headline["Loads supplied from PV"].endswith("kWh")
    assert headline["Self-sufficiency"].endswith("%")
    # the safety cautions of docs/design.md §6 are on the page
    assert any("licensed electrician" in md.value for md in at.markdown)


@pytest.mark.parametrize("site", sorted(state.sample_sites(SAMPLES).items()), ids=lambda s: s[0])
def test_every_tab_draws_only_when_shown_and_without_an_error(monkeypatch, site):
    from explorer.app import VIEWS

    at = _app(monkeypatch, site[1])
    for label, _ in VIEWS:
        _tab(at, label)
        _ok(at)
        # the safety cautions stay at the foot of every view
        assert any("licensed electrician" in md.value for md in at.markdown), label
    # a hidden tab draws nothing: the options table is on the page only while its tab is shown
    _tab(at, "Energy by month")
    assert not any("Against the existing system" in d.value.columns for d in at.dataframe)
    _tab(at, "Options")
    assert any("Against the existing system" in d.value.columns for d in at.dataframe)


def test_more_panels_raise_ac_harvest_and_never_lower_curtailment(monkeypatch):
    at = _app(monkeypatch)
    _ok(at)
    at.radio(key="c_option").set_value("ac_backed_up").run()
    at.slider(key="c_count").set_value(1).run()
    previous = (_line_figure(at, "AC-coupled PV used"), _metric(at, "Curtailed"))
    for count in (3, 6):
        at.slider(key="c_count").set_value(count).run()
        _ok(at)
        now = (_line_figure(at, "AC-coupled PV used"), _metric(at, "Curtailed"))
        assert now[0] > previous[0], (count, previous, now)
        assert now[1] >= previous[1], (count, previous, now)
        previous = now


def test_switching_coupling_changes_the_figures(monkeypatch):
    at = _app(monkeypatch)
    at.radio(key="c_option").set_value("ac_backed_up").run()
    ac = _headline(at)
    ac_used = _line_figure(at, "AC-coupled PV used")
    at.radio(key="c_option").set_value("dc").run()
    _ok(at)
    dc = _headline(at)
    assert dc != ac
    assert ac_used > 0 and _line_figure(at, "AC-coupled PV used") == 0.0  # DC-coupled panels feed the DC bus
    # the options tab names the sidebar's choice
    _tab(at, "Options")
    assert any("*DC-coupled*" in md.value for md in at.markdown)


def test_malformed_load_upload_shows_one_error_and_the_page_keeps_working(monkeypatch):
    at = _app(monkeypatch)
    before = _headline(at)
    garbage = b"this is not,a load file\n\x00\x01\x02 nothing here\n"
    _tab(at, "Data files")
    at.file_uploader(key="load_file").set_value(("meter.csv", garbage, "text/csv")).run()
    assert not at.exception
    assert len(at.error) == 1 and "meter.csv" in at.error[0].value
    assert "Traceback" not in at.error[0].value
    assert "secondroof-upload" not in at.error[0].value  # the file by its name, not the session folder
    assert _headline(at) == before  # the scenario's own load is still used
    at.slider(key="c_count").set_value(4).run()  # and the controls still work
    assert not at.exception and _headline(at) != before


def test_saved_scenario_reloads_to_the_same_figures(monkeypatch):
    at = _app(monkeypatch)
    at.radio(key="c_option").set_value("dc").run()
    at.slider(key="c_count").set_value(4).run()
    at.slider(key="c_tilt").set_value(35).run()
    at.slider(key="c_battery").set_value(14.5).run()
    at.checkbox(key="c_limiter").check().run()
    at.radio(key="c_outages").set_value("random").run()
    _ok(at)
    figures = _headline(at)
    _tab(at, "Save and report")
    text = at.session_state["scenario_download"]
    name = at.session_state["scenario_download_name"]
    assert re.fullmatch(r"maple-hollow_\d{4}-\d{2}-\d{2}\.toml", name)
    assert "count = 4" in text and "usable_kwh = 14.5" in text
    folder = MAPLE.parent
    files = [(name, text.encode("utf-8"), "application/toml")]
    files += [(p, (folder / p).read_bytes(), "text/csv") for p in ("723170TYA.CSV", "load_backed_up.csv",
                                                                   "load_grid_only.csv")]
    at.radio(key="start_mode").set_value("My own scenario file").run()
    at.file_uploader(key="own_files").set_value(files).run()
    _ok(at)
    assert at.radio(key="c_option").value == "dc"
    assert at.slider(key="c_count").value == 4
    assert _headline(at) == figures


def test_uploaded_scenario_without_its_data_files_says_which_file_is_missing(monkeypatch):
    at = _app(monkeypatch)
    at.radio(key="start_mode").set_value("My own scenario file").run()
    at.file_uploader(key="own_files").set_value([("mine.toml", MAPLE.read_bytes(), "application/toml")]).run()
    assert not at.exception
    assert at.error and "723170TYA.CSV" in at.error[0].value
    assert "secondroof-upload" not in at.error[0].value
    assert any("licensed electrician" in md.value for md in at.markdown)  # the rest of the page is still there


def test_uploaded_scenario_cannot_reach_outside_its_folder(monkeypatch):
    at = _app(monkeypatch)
    text = MAPLE.read_text("utf-8").replace('path = "723170TYA.CSV"', 'path = "../../etc/passwd"')
    at.radio(key="start_mode").set_value("My own scenario file").run()
    at.file_uploader(key="own_files").set_value([("mine.toml", text.encode(), "application/toml")]).run()
    assert not at.exception
    assert at.error and "outside" in at.error[0].value


# ------------------------------------------------------------------------------------ the state, without a page
def test_controls_reproduce_every_sample_scenario():
    for path in state.sample_sites(SAMPLES).values():
        from core.scenario import load_scenario

        sc = load_scenario(path)
        c = state.controls_from_scenario(sc)
        assert state.build_scenario(sc, c) == sc, path


def test_other_counts_are_priced_per_panel():
    from core.scenario import load_scenario

    sc = load_scenario(MAPLE)  # [expansion] count = 2, cost_ac = 1150, cost_dc = 980
    c = state.controls_from_scenario(sc)
    five = state.build_scenario(sc, dataclasses.replace(c, count=5))
    assert five.expansion.cost_ac == pytest.approx(1150 * 5 / 2)
    assert five.expansion.cost_dc == pytest.approx(980 * 5 / 2)


def test_impossible_settings_name_the_control():
    from core.errors import InputError
    from core.scenario import load_scenario

    sc = load_scenario(MAPLE)
    c = state.controls_from_scenario(sc)
    with pytest.raises(InputError, match="Export limit"):
        state.build_scenario(sc, dataclasses.replace(c, export_allowed=True, export_limit_w=0.0))
    with pytest.raises(InputError, match="Outage reserve"):
        state.build_scenario(sc, dataclasses.replace(c, reserve_pct=sc.battery.floor_pct - 1))


def test_uploads_stay_in_their_folder_and_have_a_size_limit(tmp_path):
    from core.errors import InputError

    assert state.safe_upload_name("../../etc/passwd") == "passwd"
    assert state.safe_upload_name("C:\\Users\\me\\my load.csv") == "my_load.csv"
    assert state.safe_upload_name("..hidden") == "hidden"
    path = state.save_upload(tmp_path, "../x.csv", b"a,b\n")
    assert path.parent == tmp_path and path.read_bytes() == b"a,b\n"
    with pytest.raises(InputError, match="MB"):
        state.save_upload(tmp_path, "big.csv", b"x" * 11, limit_bytes=10)
    with pytest.raises(InputError, match="empty"):
        state.save_upload(tmp_path, "empty.csv", b"")


def test_uploading_the_sites_own_load_file_keeps_the_figures_and_shows_its_summary(monkeypatch):
    at = _app(monkeypatch)
    before = _headline(at)
    data = (MAPLE.parent / "load_backed_up.csv").read_bytes()
    _tab(at, "Data files")
    at.file_uploader(key="load_file").set_value(("my_meter.csv", data, "text/csv")).run()
    _ok(at)
    assert any("my_meter.csv" in s.value for s in at.success)
    assert at.table, "the data-quality summary is shown beside the upload"
    assert _headline(at) == before  # the same readings, now read from the upload
    # and the upload is what the simulation reads: twice the backed-up load imports more from the grid
    lines = data.decode().splitlines()
    doubled = "\n".join([lines[0]] + [f"{t},{float(v) * 2:.1f}" for t, v in (ln.split(",") for ln in lines[1:])])
    at.file_uploader(key="load_file").set_value(("my_meter.csv", doubled.encode(), "text/csv")).run()
    _ok(at)
    assert _metric(at, "Grid import") > _number(before["Grid import"])


def test_uploaded_weather_file_is_summarised_and_used(monkeypatch):
    at = _app(monkeypatch)
    before = _headline(at)
    own = (MAPLE.parent / "723170TYA.CSV").read_bytes()
    _tab(at, "Data files")
    at.file_uploader(key="weather_file").set_value(("greensboro.csv", own, "text/csv")).run()
    _ok(at)
    assert _headline(at) == before  # the same TMY3 year under another name
    assert any("Global horizontal irradiation" in str(t.value) for t in at.table)
    # pvlib's Sand Point AK TMY3 file (shipped with pvlib, used by the Harbour View sample) is 6,000 km from this
    # North Carolina site: refused with the distance and the key that would accept it, never used quietly.
    other = (SAMPLES / "harbour_view" / "703165TY.csv").read_bytes()
    at.file_uploader(key="weather_file").set_value(("sand_point.csv", other, "text/csv")).run()
    assert not at.exception
    assert any("km from the site" in e.value and "weather.max_distance_km" in e.value for e in at.error)


def test_resolution_view_shows_what_the_hourly_model_hides(monkeypatch):
    # Maple Hollow's load is measured every 15 minutes: short AC-coupled surpluses average out within an hour,
    # so the hourly year sees less surplus than the load's own step, never more.
    at = _app(monkeypatch)
    _tab(at, "Options")
    _ok(at)
    at.button(key="resolution_run").click().run()
    _ok(at)
    frames = [d.value for d in at.dataframe if "Hidden by the hourly model" in d.value.columns]
    assert len(frames) == 1
    surplus = frames[0].set_index("Figure").loc["AC-coupled surplus over the loads (kWh/yr)"]
    assert surplus["At the load's own step"] >= surplus["Hourly"] > 0


# ------------------------------------------------------------------------------------------- rough edges
def _week(path: Path, days: int = 7) -> bytes:
    """The first ``days`` days of a load file (its header and rows in time order)."""
    lines = path.read_text("utf-8").splitlines()
    step_s = 900  # Maple Hollow's load: one reading every 15 minutes
    return ("\n".join(lines[: 1 + days * 86400 // step_s]) + "\n").encode()


def test_a_one_week_load_file_is_refused_beside_no_success_and_twelve_monthly_figures_build_the_year(monkeypatch):
    at = _app(monkeypatch)
    before = _headline(at)
    _tab(at, "Data files")
    at.file_uploader(key="load_file").set_value(("week.csv", _week(MAPLE.parent / "load_backed_up.csv"),
                                                 "text/csv")).run()
    assert not at.exception
    # one error that names the file and the rule, and no claim of success beside it
    assert len(at.error) == 1 and "week.csv cannot be used" in at.error[0].value
    assert "21 days" in at.error[0].value and "keeps its own load" in at.error[0].value
    assert not at.success
    assert at.table, "the data-quality summary is still shown, so the user sees the 7-day span"
    # the scenario's own load stays in use: the figures are there, and the tab's own summary of it
    assert _headline(at) == before
    assert any("3,815 kWh per year" in e.label for e in at.expander)

    # twelve monthly figures (from bills): with all twelve, the week gives the shape of the days
    bills = [620, 540, 480, 380, 330, 330, 360, 370, 320, 360, 450, 580]  # kWh, an invented household
    for key, kwh in zip(state_keys(), bills, strict=True):
        at.number_input(key=key).set_value(float(kwh))
    at.run()
    assert not at.exception and not at.error, [e.value for e in at.error]
    assert any("week.csv" in s.value and "monthly figures" in s.value for s in at.success)
    # the year now holds the bills' energy: Maple Hollow's own backed-up load is 3,815 kWh a year
    assert _headline(at) != before
    assert any(f"{sum(bills):,.0f} kWh per year" in e.label for e in at.expander)
    # and stays in use on every other tab
    _tab(at, "Energy by month")
    _ok(at)
    assert not any("Fix the setting" in i.value for i in at.info)
    assert _headline(at) != before


def state_keys():
    from explorer.views.data_files import BILL_KEYS

    return BILL_KEYS


def test_the_resolution_table_is_never_shown_for_another_setting(monkeypatch):
    at = _app(monkeypatch)
    _tab(at, "Options")
    at.button(key="resolution_run").click().run()
    _ok(at)
    assert any("Hidden by the hourly model" in d.value.columns for d in at.dataframe)
    at.slider(key="c_battery").set_value(at.slider(key="c_battery").value + 2.0).run()  # not the layout
    _ok(at)
    assert not any("Hidden by the hourly model" in d.value.columns for d in at.dataframe)
    assert any("settings changed" in i.value for i in at.info)


def test_the_payback_card_fits_and_says_what_it_leaves_out():
    import math

    from core.present.figures import Headline
    from explorer.views.headline import card_value

    never = Headline("payback", "Simple payback", "years", math.inf, None, False)
    value, note = card_value(never, 20)
    assert value == "> 20 years" and len(value) <= 11  # a quarter of a 1280-px page holds about 11 characters
    assert "20-year analysis period" in note
    assert card_value(Headline("payback", "Simple payback", "years", 9.84, None, False), 20) == ("9.8 years", "")


def test_the_checks_view_says_each_caution_once(monkeypatch):
    at = _app(monkeypatch)  # Maple Hollow's AC-coupled option leaks and warns: its checks carry cautions
    _tab(at, "Checks")
    _ok(at)
    text = " ".join([w.value for w in at.warning] + [md.value for md in at.markdown])
    assert text.count("licensed electrician") == 1  # the safety notes at the foot, and nowhere else
    assert any("fire risk" in w.value for w in at.warning)


def test_the_verdict_lists_each_option_it_set_aside(monkeypatch):
    # Red Dune: DC-coupled wins on energy while the AC-coupled options, which give the loads more, leak into a
    # zero-export grid; the verdict shown says so beside the table, not only inside "Why".
    at = _app(monkeypatch, SAMPLES / "red_dune" / "scenario.toml")
    _tab(at, "Options")
    _ok(at)
    shown = [md.value for md in at.markdown]
    assert any(t.startswith("On energy, DC-coupled wins among the options that pass") for t in shown)
    for label in ("AC-coupled, backed-up side", "AC-coupled, grid side"):
        line = next(t for t in shown if t.startswith(f"Set aside: {label}"))
        assert "uncontrolled export" in line and "more from PV" in line


def test_losses_and_shade_tab_shows_the_porch_trees_shade(monkeypatch):
    # Maple Hollow's new panels lie on the west porch, where a tree stands off one end of the row: the tab draws
    # their losses with an obstacle loss, and the porch drawing with shade hours on its modules.
    at = _tab(_app(monkeypatch), "Losses and shade")
    _ok(at)
    assert at.selectbox(key="losses_array").value == "expansion"  # shown as "the new panels"
    assert at.selectbox(key="face_pick").value == "west porch"  # the new panels' face comes first
    table = next(d.value for d in at.dataframe if "Loss" in d.value.columns)
    obstacles = float(table.loc[table["Loss"] == "Obstacles", "kWh a year"].iloc[0])
    assert obstacles > 0.5, table
    assert not any(c.value.startswith("Nothing shades") for c in at.caption)
    # a face without obstacles says that nothing shades it
    at.selectbox(key="face_pick").set_value("south roof").run()
    _ok(at)
    assert any(c.value.startswith("Nothing shades") for c in at.caption)
