"""Scenario keys for charge acceptance, AC control, the charge window and time-of-use tariffs."""

from __future__ import annotations

from pathlib import Path

import pytest

from core.errors import InputError
from core.scenario import load_scenario, parse_scenario
from core.scenario.schema import AC_CONTROL_MODES
from core.simulate import dispatch_params

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"


def with_grid(tmp_path: Path, extra: str, *, drop_alias: bool = False, tail: str = ""):
    text = SAMPLE.read_text(encoding="utf-8")
    if drop_alias:
        text = text.replace('ac_export_control = "none"\n', "")
    text = text.replace("[grid]\n", "[grid]\n" + extra + "\n", 1) + tail
    return text


def read(text: str):
    return parse_scenario(text, file="scenario.toml", base_dir=SAMPLE.parent)


def test_every_mode_is_offered_to_the_design_search():
    assert AC_CONTROL_MODES == ("none", "limiter", "islanded", "relay")


@pytest.mark.parametrize("mode", AC_CONTROL_MODES)
def test_ac_control_reaches_the_engine(tmp_path, mode):
    sc = read(with_grid(tmp_path, f'ac_control = "{mode}"', drop_alias=True))
    assert sc.grid.ac_control_mode == mode
    assert dispatch_params(sc, 1.0).ac_control == AC_CONTROL_MODES.index(mode)


def test_the_earlier_name_still_works_and_agreeing_is_fine(tmp_path):
    sc = read(with_grid(tmp_path, 'ac_control = "none"'))
    assert sc.grid.ac_control_mode == "none"


def test_both_names_disagreeing_is_an_error_naming_both(tmp_path):
    with pytest.raises(InputError) as err:
        read(with_grid(tmp_path, 'ac_control = "relay"'))
    text = str(err.value)
    assert "grid.ac_control" in text and "grid.ac_export_control" in text


def test_relay_thresholds_need_hysteresis(tmp_path):
    with pytest.raises(InputError, match="relay_close_pct"):
        read(with_grid(tmp_path, 'ac_control = "relay"\nrelay_open_pct = 90\nrelay_close_pct = 92',
                                drop_alias=True))


def test_charge_window_and_tariff_periods_are_read(tmp_path):
    tail = ('\nfixed_per_month = 12.0\nholidays = "US"\n[[tariff.periods]]\nname = "evening peak"\n'
            'price_per_kwh = 0.32\nhours = [16, 21]\ndays = "weekdays"\nmonths = [6, 7, 8, 9]\n')
    f = with_grid(tmp_path, "charge_window = { hours = [1, 5], target_pct = 60 }", tail=tail)
    sc = read(f)
    assert sc.grid.charge_window.hours == (1, 5)
    assert sc.tariff.periods[0].hours == (16, 21) and sc.tariff.periods[0].months == (6, 7, 8, 9)
    assert dispatch_params(sc, 1.0).charge_window_target_wh == pytest.approx(sc.battery.usable_kwh * 600.0)


def test_bad_holiday_country_and_hours_are_named(tmp_path):
    with pytest.raises(InputError, match="tariff.holidays"):
        read(with_grid(tmp_path, "", tail='\nholidays = "XX"\n'))
    with pytest.raises(InputError, match=r"charge_window\.hours"):
        read(with_grid(tmp_path, "charge_window = { hours = [5, 5] }"))


def test_taper_defaults_and_off(tmp_path):
    sc = load_scenario(SAMPLE)
    p = dispatch_params(sc, 1.0)
    assert p.taper_start_wh == pytest.approx(sc.battery.usable_kwh * 900.0)  # 90 % by default
    off = sc.replace(battery=sc.battery.__class__(**{**vars(sc.battery), "taper_start_pct": 100.0}))
    assert dispatch_params(off, 1.0).taper_start_wh == float("inf")


def test_the_kinetic_model_replaces_the_taper(tmp_path):
    text = SAMPLE.read_text(encoding="utf-8").replace("[battery]\n", '[battery]\nmodel = "kibam"\nkibam_c = 0.5\n', 1)
    p = dispatch_params(read(text), 1.0)
    assert p.kibam_c == 0.5 and p.taper_start_wh == float("inf")
    assert dispatch_params(load_scenario(SAMPLE), 1.0).kibam_c == 0.0  # the taper by default


def test_new_keys_survive_save_and_reload(tmp_path):
    from core.scenario import save_scenario

    tail = ('\nfixed_per_month = 12.0\nholidays = "US"\n[[tariff.periods]]\nname = "evening peak"\n'
            'price_per_kwh = 0.32\nhours = [16, 21]\ndays = "weekdays"\nmonths = [6, 7, 8, 9]\n')
    extra = ('ac_control = "relay"\nrelay_open_pct = 97\ncharge_window = { hours = [1, 5], target_pct = 60 }\n'
             'momentary_per_month = 1.5\nrestore_delay_s = 30')
    sc = read(with_grid(tmp_path, extra, drop_alias=True, tail=tail))
    target = tmp_path / "copy.toml"
    save_scenario(sc, target)
    again = load_scenario(target)
    assert again.grid == sc.grid and again.tariff == sc.tariff and again.battery == sc.battery
