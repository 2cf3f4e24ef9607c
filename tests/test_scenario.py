"""The scenario file: loading, validation messages that name the place, and save/reload."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

from core.errors import InputError
from core.scenario import load_scenario, parse_scenario, save_scenario, scenario_to_toml

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"


def sample_text() -> str:
    return SAMPLE.read_text(encoding="utf-8")


def parse(text: str, tmp_path: Path):
    f = tmp_path / "scenario.toml"
    f.write_text(text, encoding="utf-8")
    return load_scenario(f)


def test_sample_loads_with_its_sections():
    sc = load_scenario(SAMPLE)
    assert sc.arrays[0].coupling == "dc"
    assert sc.arrays[0].module_count == 6
    assert sc.expansion is not None and sc.expansion.count == 2
    assert Path(sc.weather.path).is_absolute() and Path(sc.weather.path).exists()


def test_save_reloads_equal_in_the_same_and_another_folder(tmp_path):
    sc = load_scenario(SAMPLE)
    again = tmp_path / "copy.toml"
    save_scenario(sc, again)
    assert load_scenario(again) == sc
    # Text round trip is stable too.
    assert scenario_to_toml(load_scenario(again), relative_to=tmp_path) == again.read_text(encoding="utf-8")


@pytest.mark.parametrize(("edit", "place", "words"), [
    # unknown key: names it and the nearest valid key
    (lambda t: t.replace("tilt_deg = 30\n", "tilt_degs = 30\n", 1), "arrays[0].tilt_degs", "tilt_deg"),
    # a unit in the key that does not exist
    (lambda t: t.replace("rating_w = 5000", "rating_kw = 5"), "inverter_charger.rating_kw", "rating_w"),
    # wrong unit for the load
    (lambda t: t.replace('unit = "W"', 'unit = "kVA"'), "load.unit", "kVA"),
    # a reference to a controller that does not exist
    (lambda t: t.replace('controller = "roof_mppt"', 'controller = "roof_mpt"'), "arrays[0].controller", "roof_mppt"),
    # a number out of range (an efficiency written in percent)
    (lambda t: t.replace("efficiency = 0.97", "efficiency = 97"), "controllers.roof_mppt.efficiency", "above"),
    # text where a number belongs
    (lambda t: t.replace("latitude = 36.1", 'latitude = "36.1 N"'), "site.latitude", "number"),
    # a required key missing
    (lambda t: t.replace("pmax_w = 410\n", ""), "modules.mono_410.pmax_w", "missing"),
    # floor above reserve
    (lambda t: t.replace("floor_pct = 10", "floor_pct = 40"), "battery.floor_pct", "reserve"),
    # broken TOML
    (lambda t: t.replace("[battery]", "[battery"), "scenario.toml", "TOML"),
    # twelve values expected
    (lambda t: t.replace('[load]\n', '[load]\nmonthly_kwh = [300, 280]\n'), "load.monthly_kwh", "12"),
])
def test_bad_scenarios_name_the_place(tmp_path, edit, place, words):
    with pytest.raises(InputError) as err:
        parse(edit(sample_text()), tmp_path)
    message = str(err.value)
    assert place in message
    assert words in message
    assert "scenario.toml" in message


def test_missing_month_in_bills_is_read_as_none(tmp_path):
    text = sample_text().replace("[load]\n", "[load]\nmonthly_kwh = [300, -1, 280, 250, 240, 300, 390, 400, 330, 260, 250, 310]\n")
    sc = parse(text, tmp_path)
    assert sc.load.monthly_kwh[1] is None and sc.load.monthly_kwh[0] == 300.0
    save_scenario(sc, tmp_path / "again.toml")
    assert load_scenario(tmp_path / "again.toml") == sc


def test_paths_outside_a_confined_folder_are_refused(tmp_path):
    text = sample_text().replace('path = "723170TYA.CSV"', 'path = "../../etc/passwd"')
    f = tmp_path / "scenario.toml"
    f.write_text(text, encoding="utf-8")
    with pytest.raises(InputError, match="outside"):
        load_scenario(f, confine_to=tmp_path)


def test_unreadable_file_is_bad_input(tmp_path):
    with pytest.raises(InputError, match="scenario file not found"):
        load_scenario(tmp_path / "nope.toml")
    (tmp_path / "bin.toml").write_bytes(b"\xff\xfe\x00garbage")
    with pytest.raises(InputError):
        load_scenario(tmp_path / "bin.toml")


def test_minimal_scenario_with_optional_sections_missing():
    sc = parse_scenario("""
name = "minimal"
[site]
latitude = 40
longitude = -105
[weather]
source = "monthly"
ghi_kwh_m2_day = [3, 4, 5, 6, 7, 7.5, 7.5, 7, 6, 5, 3.5, 3]
temp_air_c = [0, 2, 6, 10, 15, 20, 24, 23, 18, 12, 5, 1]
[modules.m]
pmax_w = 400
vmp_v = 34
imp_a = 11.8
voc_v = 41
isc_a = 12.4
[inverter_charger]
rating_w = 3000
""")
    assert sc.battery is None and sc.arrays == () and sc.expansion is None


def test_expansion_costs_scale_per_panel_and_coupling_round_trips(tmp_path):
    sc = load_scenario(SAMPLE)
    e = sc.expansion
    # cost_ac / cost_dc are for the expansion's own count: four panels instead of two cost twice as much.
    assert e.priced_for(4).cost_ac == pytest.approx(2 * e.cost_ac)
    assert e.priced_for(0).cost_dc == e.cost_dc
    chosen = sc.replace(expansion=dataclasses.replace(e.priced_for(3), coupling="dc"))
    save_scenario(chosen, tmp_path / "chosen.toml")
    again = load_scenario(tmp_path / "chosen.toml")
    assert again.expansion.coupling == "dc" and again == chosen
