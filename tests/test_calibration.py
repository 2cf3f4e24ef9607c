"""Calibration against a monitoring export: recovery of known values from a record made with pvlib's ModelChain,
ASHRAE Guideline 14's metrics against hand-worked numbers, and bad records refused with a clear message."""

from __future__ import annotations

import math
import shutil
from pathlib import Path

import numpy as np
import pandas as pd
import pytest
from calibration_synthetic import make_record, write_export

from core.analyses.calibration import calibrate, cv_rmse_pct, meets_guideline_14, nmbe_pct
from core.cli import main
from core.errors import InputError
from core.scenario import load_scenario

SITE = Path(__file__).resolve().parent.parent / "sample_sites" / "maple_hollow"
MEASURED = """
[measured]
path = "monitoring.csv"
unit = "kWh"
pv = {pv}
grid_import = "grid_kwh"
load = "load_kwh"
soc = "soc_pct"
"""


def site_with(folder: Path, frame: pd.DataFrame | None, *, pv: str = '"pv_kwh"', decimal_comma: bool = False,
              text: str | None = None) -> Path:
    """Maple Hollow's scenario with a [measured] section, in ``folder`` with its weather and load files."""
    folder.mkdir(parents=True, exist_ok=True)
    for name in ("723170TYA.CSV", "load_backed_up.csv", "load_grid_only.csv"):
        if not (folder / name).exists():
            shutil.copy(SITE / name, folder / name)
    if frame is not None:
        write_export(frame, folder / "monitoring.csv", decimal_comma=decimal_comma)
    if text is not None:
        (folder / "monitoring.csv").write_text(text)
    scenario = folder / "scenario.toml"
    own = (SITE / "scenario.toml").read_text().split("\n[measured]")[0]  # the sample's own export is replaced
    scenario.write_text(own + MEASURED.format(pv=pv))
    return scenario


@pytest.fixture(scope="module")
def synthetic(tmp_path_factory):
    # 14 % array losses against the scenario's 10 %, a 45 W standing draw against its 30 W.
    truth = make_record("2023-05-01", 42, losses_pct=14.0, standing_draw_w=45.0, seed=3)
    scenario = site_with(tmp_path_factory.mktemp("synthetic"), truth.frame, decimal_comma=True)
    return truth, scenario, calibrate(load_scenario(scenario))


def test_recovers_losses_and_standing_draw(synthetic):
    truth, _, cal = synthetic
    fitted = cal.to_dict()["fitted"]
    # The record was made by pvlib's ModelChain (PVWatts DC, Perez, SAPM cell temperature, physical IAM) on
    # Ineichen clear skies: the project's own chain must find the losses put into it within 1.5 points.
    assert abs(fitted["arrays"]["south roof"]["losses_pct"] - truth.losses_pct) <= 1.5
    assert fitted["arrays"]["south roof"]["days"] >= 3
    assert abs(fitted["standing_draw_w"] - truth.standing_draw_w) <= 5.0
    assert fitted["standing_draw_hours"] > 24
    assert fitted["base_load_w"] is not None and 250 <= fitted["base_load_w"] <= 400  # the record's night load


def test_curtailed_afternoons_are_excluded_not_fitted(synthetic):
    truth, _, cal = synthetic
    curtailed = truth.curtailed.reindex(cal.intervals.index, fill_value=False)
    assert curtailed.sum() > 20  # the record does curtail
    reasons = cal.intervals["excluded"][curtailed]
    assert (reasons != "").all()
    assert not (cal.channels[0].used & curtailed).any()  # none of them behind the fitted losses
    assert cal.to_dict()["excluded"]["curtailed"] >= curtailed.sum()
    assert cal.to_dict()["excluded"]["gaps"] > 0  # the record has gaps, counted not filled


def test_fit_improves_and_calibrated_copy_is_accepted(synthetic, tmp_path):
    _, scenario, cal = synthetic
    fit = cal.to_dict()["fit"]
    assert abs(fit["after"]["hourly"]["nmbe_pct"]) < abs(fit["before"]["hourly"]["nmbe_pct"])
    before = scenario.read_bytes()
    out = tmp_path / "calibrated.toml"
    assert main(["calibrate", str(scenario), "--write", str(out)]) == 0
    assert scenario.read_bytes() == before  # the user's file is never changed
    calibrated = load_scenario(out)
    assert calibrated.arrays[0].losses_pct == round(cal.losses["south roof"].value, 1)
    assert calibrated.grid.standing_draw_w == round(cal.standing_draw.value)
    assert main(["simulate", str(out)]) == 0
    assert main(["calibrate", str(scenario), "--write", str(scenario)]) == 2  # never over the user's file


def test_json_has_the_named_fields(synthetic, capsys):
    _, scenario, _ = synthetic
    import json

    assert main(["calibrate", str(scenario), "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out["fitted"]["arrays"]["south roof"]) >= {"losses_pct", "uncertainty_pct", "days"}
    assert {"standing_draw_w", "base_load_w"} <= set(out["fitted"])
    assert set(out["excluded"]) == {"curtailed", "gaps", "stale", "outliers"}
    for when in ("before", "after"):
        for res in ("monthly", "hourly"):
            assert set(out["fit"][when][res]) >= {"nmbe_pct", "cv_rmse_pct"}
    assert isinstance(out["fit"]["meets_guideline_14"], bool)


def test_nmbe_and_cv_rmse_by_hand():
    # ASHRAE Guideline 14-2014 (from memory): NMBE = Σ(y − ŷ) / ((n − p)·ȳ), CV(RMSE) = √(Σ(y − ŷ)²/(n − p)) / ȳ,
    # p = 1. y = 10, 12, 14, 16 (ȳ = 13); ŷ = 11, 11, 15, 14; y − ŷ = −1, 1, −1, 2 (sum 1, squares 7); n − p = 3.
    measured, modelled = [10, 12, 14, 16], [11, 11, 15, 14]
    assert nmbe_pct(measured, modelled) == pytest.approx(100 * 1 / (3 * 13))  # 2.564 %
    assert cv_rmse_pct(measured, modelled) == pytest.approx(100 * math.sqrt(7 / 3) / 13)  # 11.750 %
    assert nmbe_pct(measured, modelled) == pytest.approx(2.5641, abs=1e-4)
    assert cv_rmse_pct(measured, modelled) == pytest.approx(11.7502, abs=1e-4)
    # Guideline 14's criteria (from memory): monthly ±5 % / 15 %, hourly ±10 % / 30 %.
    assert meets_guideline_14("monthly", 2.56, 11.75)
    assert not meets_guideline_14("monthly", 5.1, 11.75)
    assert not meets_guideline_14("monthly", 2.56, 15.1)
    assert meets_guideline_14("hourly", -9.9, 29.9)
    assert not meets_guideline_14("hourly", -10.1, 20)
    assert math.isnan(nmbe_pct([5], [4]))  # n ≤ p: no figure rather than a division by zero


def _refused(scenario: Path, *, contains: str) -> None:
    with pytest.raises(InputError) as err:
        calibrate(load_scenario(scenario))
    text = str(err.value)
    assert "monitoring.csv" in text, text
    assert contains in text, text
    assert main(["calibrate", str(scenario)]) == 2


def test_bad_records_are_refused(tmp_path):
    truth = make_record("2023-06-01", 10, losses_pct=12.0, standing_draw_w=40.0, seed=5, gaps=0)
    frame = truth.frame
    _refused(site_with(tmp_path / "empty", None, text="time,pv_kwh,grid_kwh,load_kwh,soc_pct\n"), contains="row")
    _refused(site_with(tmp_path / "one_day", frame.iloc[:96]), contains="day")
    zeros = frame.copy()
    zeros["pv_kwh"] = 0.0
    _refused(site_with(tmp_path / "zeros", zeros), contains="zero throughout")
    watts = frame.copy()
    watts["pv_kwh"] = frame["pv_kwh"] * 4000  # mean power in W written under a kWh unit
    _refused(site_with(tmp_path / "units", watts), contains="measured.unit")
    shuffled = site_with(tmp_path / "order", frame)
    lines = shuffled.with_name("monitoring.csv").read_text().splitlines()
    lines[50], lines[60] = lines[60], lines[50]
    shuffled.with_name("monitoring.csv").write_text("\n".join(lines) + "\n")
    _refused(shuffled, contains="out of order")


def test_too_cloudy_is_refused(tmp_path):
    truth = make_record("2023-06-01", 12, losses_pct=12.0, standing_draw_w=40.0, seed=7, clear_share=0.0, gaps=0)
    _refused(site_with(tmp_path, truth.frame), contains="too cloudy")


def test_pv_table_must_name_dc_arrays(tmp_path):
    scenario = site_with(tmp_path, None, pv='{ "north roof" = "pv_kwh" }', text="time,pv_kwh\n")
    with pytest.raises(InputError, match="no DC-coupled array named 'north roof'"):
        load_scenario(scenario)


def test_one_column_per_array(tmp_path):
    truth = make_record("2023-05-10", 21, losses_pct=8.0, standing_draw_w=40.0, seed=11, gaps=0)
    cal = calibrate(load_scenario(site_with(tmp_path, truth.frame, pv='{ "south roof" = "pv_kwh" }')))
    assert abs(cal.losses["south roof"].value - 8.0) <= 1.5
    assert np.isfinite(cal.losses["south roof"].uncertainty)


def test_hour_by_hour_with_the_periods_weather(tmp_path):
    # A cloudy record (a fifth of the days clear) with a year of its own weather as measured.weather_path: every
    # screened daytime hour counts, not only clear days, and Guideline 14 is judged monthly and hourly.
    truth = make_record("2023-05-01", 30, losses_pct=16.0, standing_draw_w=40.0, seed=21, clear_share=0.2,
                        weather_csv=tmp_path / "period_weather.csv")
    scenario = site_with(tmp_path, truth.frame)
    scenario.write_text(scenario.read_text() + 'weather_path = "period_weather.csv"\n')
    cal = calibrate(load_scenario(scenario))
    out = cal.to_dict()
    assert abs(out["fitted"]["arrays"]["south roof"]["losses_pct"] - truth.losses_pct) <= 1.5
    assert out["fit"]["judged_on"] == ["monthly", "hourly"]
    assert abs(out["fit"]["after"]["hourly"]["nmbe_pct"]) < abs(out["fit"]["before"]["hourly"]["nmbe_pct"])
    assert out["fit"]["meets_guideline_14"]


def test_daily_totals_are_refused_with_the_reason(tmp_path):
    # Daily totals cannot show clear-sky hours or curtailed afternoons, which the screening and the fit rest on.
    days = pd.date_range("2023-05-01", periods=40, freq="D")
    text = "date,pv_kwh\n" + "".join(f"{d:%Y-%m-%d},{9.5 + (i % 3):.1f}\n" for i, d in enumerate(days))
    scenario = site_with(tmp_path, None, text=text)
    scenario.write_text(scenario.read_text().replace('grid_import = "grid_kwh"\nload = "load_kwh"\nsoc = "soc_pct"\n',
                                                     ""))
    _refused(scenario, contains="an hour apart or finer")


@pytest.mark.parametrize(("step_s", "days"), [(3600, 35), (300, 28), (60, 21)])
def test_any_interval_from_a_minute_to_an_hour(tmp_path, step_s, days):
    # Hourly records find clear days by their shape against the clear sky; finer ones by Reno & Hansen (2016).
    truth = make_record("2023-05-01", days, losses_pct=14.0, standing_draw_w=45.0, seed=3, step_s=step_s)
    cal = calibrate(load_scenario(site_with(tmp_path, truth.frame)))
    assert cal.record.step_s == step_s
    assert abs(cal.losses["south roof"].value - truth.losses_pct) <= 1.5
    assert abs(cal.standing_draw.value - truth.standing_draw_w) <= 5.0


def test_without_soc_flat_tops_are_found(tmp_path):
    # Without a state-of-charge column the curtailed afternoons are found by their flat tops below the clear sky.
    truth = make_record("2023-05-01", 42, losses_pct=14.0, standing_draw_w=45.0, seed=3)
    scenario = site_with(tmp_path, truth.frame.drop(columns="soc_pct"))
    scenario.write_text(scenario.read_text().replace('soc = "soc_pct"\n', ""))
    cal = calibrate(load_scenario(scenario))
    out = cal.to_dict()
    assert abs(out["fitted"]["arrays"]["south roof"]["losses_pct"] - truth.losses_pct) <= 1.5
    curtailed = truth.curtailed.reindex(cal.intervals.index, fill_value=False)
    assert out["excluded"]["curtailed"] > 0
    assert ((cal.intervals["excluded"] == "curtailed") & curtailed).sum() >= 0.5 * curtailed.sum()
    used = cal.channels[0].used
    assert (used & curtailed).sum() <= 0.02 * used.sum()  # the edges of a held-back stretch, at most
    assert out["fitted"]["standing_draw_w"] is None  # it needs the SOC
    assert any("state of charge" in n for n in out["notes"])
