"""The command line's `simulate` and `inspect-load`: the JSON contract, exit codes and messages."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pvlib
import pytest

from core.cli import main

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"
ENERGY = ("load", "load_served", "unserved", "pv_potential", "pv_potential_dc", "pv_potential_ac", "harvested",
          "curtailed", "curtailed_dc", "curtailed_ac", "clipped", "exported", "exported_uncontrolled", "grid_import",
          "grid_import_standing", "battery_charge", "battery_discharge", "losses", "stored_change", "balance_error")


@pytest.fixture(scope="module")
def sample_json():
    out = subprocess.run([sys.executable, "-m", "core", "simulate", str(SAMPLE), "--json"], capture_output=True,
                         text=True, cwd=ROOT, check=False)
    assert out.returncode == 0, out.stderr
    return json.loads(out.stdout)


def test_simulate_json_has_the_promised_keys(sample_json):
    d = sample_json
    assert set(ENERGY) <= set(d["energy_kwh"])
    assert set(d["ratios"]) >= {"self_consumption", "self_sufficiency", "pv_utilisation"}
    assert set(d["hours"]) >= {"export", "export_uncontrolled", "outage", "unserved"}
    assert "equivalent_full_cycles" in d["battery"]
    assert len(d["months"]) == 12 and all(set(ENERGY) <= set(m) for m in d["months"])
    assert len(d["weather"]["months"]) == 12
    assert d["step_s"] == 900
    losses = {"horizon", "obstacles", "row_shading", "mismatch", "temperature", "clipping", "conversion",
              "curtailment", "other"}
    for a in d["arrays"]:
        assert {"name", "face", "coupling", "poa_kwh", "losses_kwh", "dc_kwh", "ac_kwh"} <= set(a)
        assert set(a["losses_kwh"]) == losses
        assert a["poa_kwh"] - sum(a["losses_kwh"].values()) == pytest.approx(a["ac_kwh"], rel=1e-9)


def test_simulate_balance_closes_and_months_add_up(sample_json):
    e = sample_json["energy_kwh"]
    # docs/design.md §4: the balance error stays under 1e-6 of the load.
    assert abs(e["balance_error"]) < 1e-6 * e["load"]
    for key in ("load", "harvested", "grid_import", "curtailed"):
        assert sum(m[key] for m in sample_json["months"]) == pytest.approx(e[key], rel=1e-9)


def test_simulate_reports_the_weather_files_irradiation(sample_json):
    # NREL TMY3 Greensboro (pvlib's data folder): the year's GHI as read by pvlib itself.
    data, _ = pvlib.iotools.read_tmy3(SAMPLE.parent / "723170TYA.CSV", map_variables=True)
    assert sample_json["weather"]["ghi_kwh_m2"] == pytest.approx(data["ghi"].sum() / 1000.0, rel=1e-6)


def test_readable_table_and_steps_csv(tmp_path, capsys):
    target = tmp_path / "steps.csv"
    assert main(["simulate", str(SAMPLE), "--steps-csv", str(target)]) == 0
    out = capsys.readouterr().out
    assert "Balance error" in out and "Self-sufficiency" in out
    header = target.read_text(encoding="utf-8").splitlines()[0]
    assert header.startswith("interval_start,") and "grid_import_w" in header
    # The year runs at the load's own step (15 min in the sample) and says so.
    assert len(target.read_text(encoding="utf-8").splitlines()) == 4 * 8760 + 1
    assert "Step: 15 min" in out


def _bad(tmp_path: Path, text: str) -> Path:
    for name in ("723170TYA.CSV", "load_backed_up.csv", "load_grid_only.csv"):
        link = tmp_path / name
        if not link.exists():
            link.symlink_to(SAMPLE.parent / name)
    f = tmp_path / "scenario.toml"
    f.write_text(text, encoding="utf-8")
    return f


@pytest.mark.parametrize(("edit", "expected"), [
    (lambda t: t.replace("standing_draw_w = 30", "standing_draw_kw = 0.03"), "grid.standing_draw_kw"),
    (lambda t: t.replace('unit = "W"', 'unit = "A"'), "load.unit"),
    (lambda t: t.replace('microinverter = "micro_350"', 'microinverter = "micro_530"'), "expansion.microinverter"),
    (lambda t: t.replace('path = "723170TYA.CSV"', 'path = "missing_weather.csv"'), "missing_weather.csv"),
    (lambda t: t.replace('path = "load_backed_up.csv"', 'path = "scenario.toml"'), "scenario.toml"),
])
def test_bad_input_exits_2_with_one_line_naming_the_place(tmp_path, capsys, edit, expected):
    scenario = _bad(tmp_path, edit(SAMPLE.read_text(encoding="utf-8")))
    assert main(["simulate", str(scenario)]) == 2
    err = capsys.readouterr().err.strip()
    assert len(err.splitlines()) == 1
    assert expected in err
    assert "Traceback" not in err


def test_bad_input_in_a_real_process(tmp_path):
    scenario = _bad(tmp_path, SAMPLE.read_text(encoding="utf-8").replace("[battery]", "[batery]"))
    out = subprocess.run([sys.executable, "-m", "core", "simulate", str(scenario), "--json"], capture_output=True,
                         text=True, cwd=ROOT, check=False)
    assert out.returncode == 2
    assert out.stdout == ""
    assert "batery" in out.stderr and "battery" in out.stderr and "Traceback" not in out.stderr


def test_usage_errors_are_bad_input(capsys):
    assert main(["simulate"]) == 2
    assert main(["no-such-command"]) == 2
    assert len(capsys.readouterr().err.strip().splitlines()) == 2


@pytest.mark.parametrize("command", ["simulate", "inspect-load"])
def test_help_shows_an_example(command, capsys):
    with pytest.raises(SystemExit) as done:
        main([command, "--help"])
    assert done.value.code == 0
    assert "example" in capsys.readouterr().out


def test_inspect_load_json(capsys):
    assert main(["inspect-load", str(SAMPLE.parent / "load_backed_up.csv"), "--timezone", "America/New_York",
                 "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert {"span_days", "coverage_pct", "interval_s", "unit", "energy_kwh", "gaps_filled", "rows_rejected",
            "base_load_w"} <= set(d)
    assert d["interval_s"] == 900 and len(d["base_load_w"]) == 12


def test_resolution_shows_what_an_hourly_model_hides(capsys):
    # Maple Hollow's load is measured every 15 minutes: short surpluses average out within an hour, so the
    # hourly model sees less AC-coupled surplus than the native step (never more).
    assert main(["resolution", str(SAMPLE), "--option", "ac_backed_up", "--json"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["native_step_s"] == 900 and d["applicable"]
    assert d["native_surplus"]["ac_surplus_kwh"] >= d["hourly_surplus"]["ac_surplus_kwh"]
    assert main(["resolution", str(SAMPLE), "--count", "-1"]) == 2
