"""Write the malformed-scenario corpus: one small scenario file per mistake, and manifest.json.

Every file starts from BASE (a valid, invented site) and changes one thing, the way people get scenario files
wrong: broken TOML, wrong encodings, typos in keys and section names, units written into values, NaN and
infinity (TOML has nan and inf literals), numbers out of range, missing or dangling references, paths that
leave the folder, and data files that are themselves broken. The manifest says where the loader (or, for the
data files, the simulation) must point: ``where`` is text the message must contain besides the file's name.

``confine`` marks files that must be read with the scenario's folder as the only place data may come from;
``stage`` is "load" when reading the scenario must fail, "simulate" when only running it can find the mistake.

Run from the repository root:  python tests/data/scenarios/make_corpus.py
"""

from __future__ import annotations

import json
from pathlib import Path

HERE = Path(__file__).resolve().parent

BASE = """\
# An invented allotment shed with a small hybrid system (robustness corpus base).
schema = 1
name = "Corpus shed"

[site]
latitude = 47.5
longitude = 9.7
altitude_m = 420
timezone = "Europe/Zurich"

[weather]
source = "monthly"
ghi_kwh_m2_day = [1.1, 2.0, 3.2, 4.4, 5.2, 5.8, 5.9, 5.0, 3.7, 2.3, 1.2, 0.9]
temp_air_c = [0, 1, 5, 9, 13, 17, 19, 18, 14, 10, 4, 1]
seed = 11

[load]
monthly_kwh = [160, 140, 130, 110, 100, 90, 90, 95, 105, 125, 145, 165]

[modules.poly_330]
pmax_w = 330
vmp_v = 33.6
imp_a = 9.82
voc_v = 40.6
isc_a = 10.4

[battery]
usable_kwh = 4.8
nominal_v = 48
reserve_pct = 20
floor_pct = 5

[inverter_charger]
rating_w = 2400
efficiency = 0.93

[controllers.shed_mppt]
max_pv_voltage_v = 100
mppt_min_v = 55
mppt_max_v = 95
max_input_current_a = 20
max_charge_current_a = 30

[microinverters.mi_300]
ac_rating_w = 300
max_dc_input_w = 400
mppt_min_v = 22
mppt_max_v = 45
max_input_voltage_v = 55
max_input_current_a = 12

[[arrays]]
name = "roof"
coupling = "dc"
module = "poly_330"
tilt_deg = 35
azimuth_deg = 185
controller = "shed_mppt"
modules_per_string = 2
strings = 2

[[arrays]]
name = "wall"
coupling = "ac"
side = "backed_up"
module = "poly_330"
tilt_deg = 90
azimuth_deg = 200
microinverter = "mi_300"
modules = 2
"""


def edit(old: str, new: str, count: int = 1):
    def apply(text: str) -> str:
        assert text.count(old) >= 1, old
        return text.replace(old, new, count)
    return apply


def append(extra: str):
    return lambda text: text + extra


# name, change to BASE (text → text, or bytes), the place the message must name, more words it must contain,
# confine, stage, what the case is about
CASES = [
    ("broken_toml.toml", edit("[battery]", "[battery"), "line 27", ["TOML"], False, "load",
     "a section header without its closing bracket"),
    ("latin1_text.toml", lambda t: t.replace('"Corpus shed"', '"Gärtnerhäuschen"').encode("latin-1"), "byte",
     ["UTF-8"], False, "load", "saved as Latin-1, not UTF-8"),
    ("binary_garbage.toml", lambda t: bytes(range(256)) * 4, "byte", ["UTF-8"], False, "load",
     "not text at all"),
    ("empty.toml", lambda t: "", "name", ["missing"], False, "load", "an empty file"),
    ("typo_section.toml", edit("[battery]", "[batery]"), "batery", ["battery"], False, "load",
     "a section name misspelt: the message suggests the right one"),
    ("typo_key.toml", edit("usable_kwh = 4.8", "usable_kw = 4.8"), "battery.usable_kw", ["usable_kwh"], False,
     "load", "a key misspelt"),
    ("unit_in_value.toml", edit("tilt_deg = 35", 'tilt_deg = "35°"'), "arrays[0].tilt_deg", ["number"], False,
     "load", "a unit written into the value"),
    ("nan_latitude.toml", edit("latitude = 47.5", "latitude = nan"), "site.latitude", ["finite"], False, "load",
     "TOML's nan literal"),
    ("inf_rating.toml", edit("rating_w = 2400", "rating_w = inf"), "inverter_charger.rating_w", ["finite"], False,
     "load", "TOML's inf literal"),
    ("minus_inf_in_list.toml", edit("5.2, 5.8", "-inf, 5.8"), "weather.ghi_kwh_m2_day[4]", ["finite"], False,
     "load", "negative infinity inside a list of monthly figures"),
    ("nan_in_curve.toml", edit("efficiency = 0.93", "efficiency = [[0.1, 0.9], [nan, 0.94]]"),
     "inverter_charger.efficiency", ["finite"], False, "load", "NaN inside a part-load efficiency curve"),
    ("percent_efficiency.toml", edit("max_input_current_a = 12\n", "max_input_current_a = 12\nefficiency = 96\n"),
     "microinverters.mi_300.efficiency", ["above"], False, "load", "an efficiency written in percent"),
    ("section_as_number.toml", lambda t: t.replace("[battery]\nusable_kwh = 4.8\nnominal_v = 48\nreserve_pct = 20\n"
                                                   "floor_pct = 5\n", "").replace('name = "Corpus shed"\n',
                                                                                  'name = "Corpus shed"\nbattery = 10\n'),
     "battery", ["table"], False, "load", "a section written as one number"),
    ("missing_required.toml", edit("pmax_w = 330\n", ""), "modules.poly_330.pmax_w", ["missing"], False, "load",
     "a module without its power"),
    ("eleven_months.toml", edit("[160, 140, 130, ", "[160, 130, "), "load.monthly_kwh", ["12"], False, "load",
     "a month left out of the bills"),
    ("dangling_reference.toml", edit('microinverter = "mi_300"', 'microinverter = "mi_3000"'),
     "arrays[1].microinverter", ["mi_300"], False, "load", "an array naming a microinverter that is not defined"),
    ("dc_without_battery.toml", edit("[battery]\nusable_kwh = 4.8\nnominal_v = 48\nreserve_pct = 20\nfloor_pct = 5\n",
                                     ""), "arrays[0].coupling", ["battery"], False, "load",
     "DC-coupled panels with no battery to charge"),
    ("floor_above_reserve.toml", edit("floor_pct = 5", "floor_pct = 50"), "battery.floor_pct", ["reserve"], False,
     "load", "the outage floor above the reserve"),
    ("schema_two.toml", edit("schema = 1", "schema = 2"), "schema", ["supported"], False, "load",
     "a file from a newer version"),
    ("duplicate_array_name.toml", edit('name = "wall"', 'name = "roof"'), "arrays[1].name", ["twice"], False, "load",
     "two arrays with one name"),
    ("negative_count.toml", edit("modules = 2", "modules = -2"), "arrays[1].modules", ["below"], False, "load",
     "a negative number of modules"),
    ("unknown_timezone.toml", edit('timezone = "Europe/Zurich"', 'timezone = "Europe"'), "site.timezone",
     ["time zone"], False, "load", "a time zone that is a region, not a zone"),
    ("step_one_second.toml", append("\n[simulation]\nstep_s = 1\n"), "simulation.step_s", ["lowest"], False, "load",
     "asking for a year at one-second steps"),
    ("path_escape.toml", append('\n[grid]\noutages_path = "../loads/short_gap.csv"\n'), "grid.outages_path",
     ["outside"], True, "load", "a data path that climbs out of the chosen folder"),
    ("absolute_path.toml", edit('source = "monthly"', 'source = "file"\npath = "/nonexistent/secondroof/weather.csv"'), "weather.path",
     ["outside"], True, "load", "an absolute data path outside the chosen folder"),
    ("nul_in_path.toml", edit("[load]\n", '[load]\npath = "load\\u0000.csv"\n'), "load.path", ["NUL"], False,
     "load", "a NUL character hidden in a path"),
    ("missing_load_file.toml", edit("[load]\n", '[load]\npath = "data/no_such_load.csv"\n'), "no_such_load.csv",
     ["not found"], True, "simulate", "a load file that does not exist"),
    ("binary_load_file.toml", edit("[load]\n", '[load]\npath = "data/binary_load.csv"\n'), "binary_load.csv",
     ["binary"], True, "simulate", "a load file that is not text"),
    ("short_load_file.toml", edit("[load]\nmonthly_kwh", '[load]\npath = "data/three_days_load.csv"\nmonthly_kwh'),
     "three_days_load.csv", ["days"], True, "simulate", "three days of readings, too few to build a year"),
    ("truncated_weather.toml", edit('source = "monthly"', 'source = "file"\npath = "data/truncated_weather.csv"'),
     "truncated_weather.csv", ["missing"], True, "simulate", "a weather file cut off after a day"),
    ("bad_outages.toml", append('\n[grid]\noutages_path = "data/bad_outages.csv"\n'), "row 3", ["empty"], True,
     "simulate", "an outage with no end date"),
    ("sky_cannot_deliver.toml", edit("3.7, 2.3, 1.2, 0.9]", "3.7, 2.3, 1.2, 9.0]"), "weather.ghi_kwh_m2_day[11]",
     ["sky"], False, "simulate", "a December figure that no sky at 47.5° N can give"),
]


def data_files() -> dict[str, bytes]:
    """The broken data files the scenarios point to (invented values)."""
    three_days = ["time,power_w"] + [f"2024-05-{1 + h // 24:02d} {h % 24:02d}:00,{250 + 10 * (h % 24)}"
                                     for h in range(72)]
    weather = ["timestamp,ghi,temp_air"] + [f"2023-01-01 {h:02d}:00,{max(0, 300 - 40 * abs(h - 12))},2"
                                            for h in range(24)]
    return {
        "binary_load.csv": bytes(range(256)) * 8,
        "three_days_load.csv": ("\n".join(three_days) + "\n").encode(),
        "truncated_weather.csv": ("\n".join(weather) + "\n").encode(),
        "bad_outages.csv": b"start,end\n2023-07-04 13:00,2023-07-04 16:30\n2023-11-20 08:00,\n",
    }


def main() -> None:
    (HERE / "data").mkdir(exist_ok=True)
    for name, content in data_files().items():
        (HERE / "data" / name).write_bytes(content)
    manifest = []
    for name, change, where, contains, confine, stage, note in CASES:
        out = change(BASE)
        (HERE / name).write_bytes(out if isinstance(out, bytes) else out.encode("utf-8"))
        manifest.append({"name": name, "where": where, "contains": contains, "confine": confine, "stage": stage,
                         "note": note})
    (HERE / "manifest.json").write_text(json.dumps({"files": manifest}, indent=1) + "\n", encoding="utf-8")


if __name__ == "__main__":
    main()
