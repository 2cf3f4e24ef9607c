"""A load column whose unit is not stated and not settled by its header is refused, never guessed; importer
warnings reach stderr and the JSON output of every command that loads data."""

from __future__ import annotations

import json
import re

import pandas as pd

from tests.robustness.common import copy_site, run_cli


def _meter_export(site):
    """The site's 15-minute mean power rewritten as a meter export would give it: Wh per interval under the
    neutral header 'value' (1 W over 15 minutes is 0.25 Wh)."""
    frame = pd.read_csv(site / "load_backed_up.csv")
    frame["value"] = frame["power_w"] * 0.25
    frame[["timestamp", "value"]].to_csv(site / "meter.csv", index=False)
    text = (site / "scenario.toml").read_text(encoding="utf-8")
    text = text.replace('path = "load_backed_up.csv"\ncolumn = "power_w"\nunit = "W"\n', 'path = "meter.csv"\n')
    (site / "scenario.toml").write_text(text, encoding="utf-8")
    return frame["power_w"].mean() * 8760 / 1000  # the year's use in kWh, from the mean power


def _numbers(text: str) -> list[float]:
    return [float(n.replace(",", "")) for n in re.findall(r"([\d,]+) kWh a year", text)]


def test_a_neutral_header_at_15_minutes_is_refused_with_both_readings(tmp_path):
    site = copy_site("maple_hollow", tmp_path)
    truth_kwh = _meter_export(site)
    run = run_cli(["simulate", site / "scenario.toml"])
    assert run.bad_input_in_one_line(), run.stderr
    assert "meter.csv" in run.stderr and "load.unit" in run.stderr
    as_power, as_energy = _numbers(run.stderr)
    # Read as power the year would be a quarter of the truth; read as energy per interval it is the truth.
    assert abs(as_energy - truth_kwh) / truth_kwh < 0.01
    assert abs(as_power * 4 - as_energy) / as_energy < 0.01
    # The same for compare and inspect-load.
    assert run_cli(["compare", site / "scenario.toml"]).code == 2
    inspect = run_cli(["inspect-load", site / "meter.csv", "--timezone", "America/New_York"])
    assert inspect.code == 2 and "as Wh per 15-minute interval" in inspect.stderr


def test_stating_the_unit_settles_it(tmp_path):
    site = copy_site("maple_hollow", tmp_path)
    truth_kwh = _meter_export(site)
    text = (site / "scenario.toml").read_text(encoding="utf-8")
    (site / "scenario.toml").write_text(text.replace('path = "meter.csv"', 'path = "meter.csv"\nunit = "Wh"'),
                                        encoding="utf-8")
    run = run_cli(["inspect-load", site / "meter.csv", "--unit", "Wh", "--timezone", "America/New_York"])
    assert run.code == 0, run.stderr
    summary = run_cli(["simulate", site / "scenario.toml", "--json"])
    assert summary.code == 0, summary.stderr
    assert json.loads(summary.stdout)["energy_kwh"]["load"] > 0.5 * truth_kwh


def test_importer_warnings_reach_stderr_and_json(tmp_path):
    # The harbour site's register has a 30-hour gap: the importer says so, and so must the command line.
    run = run_cli(["simulate", copy_site("harbour_view", tmp_path) / "scenario.toml", "--json"])
    assert run.code == 0
    warnings = json.loads(run.stdout)["warnings"]
    assert warnings and all(f"warning: {w}" in run.stderr for w in warnings)
    assert any("gap" in w and "load_backed_up.csv" in w for w in warnings)
    compare = run_cli(["compare", tmp_path / "harbour_view" / "scenario.toml", "--json"])
    assert compare.code == 0 and json.loads(compare.stdout)["warnings"] == warnings
    check = run_cli(["check", tmp_path / "harbour_view" / "scenario.toml", "--json"])
    assert check.code == 0 and all(f"warning: {w}" in check.stderr for w in warnings)
    resolution = run_cli(["resolution", tmp_path / "harbour_view" / "scenario.toml", "--json"])
    assert resolution.code == 0 and set(warnings) <= set(json.loads(resolution.stdout)["warnings"])


def test_importer_warnings_reach_the_page(tmp_path, monkeypatch):
    from streamlit.testing.v1 import AppTest

    from tests.robustness.common import ROOT

    site = copy_site("harbour_view", tmp_path)
    monkeypatch.setenv("SECONDROOF_SCENARIO", str(site / "scenario.toml"))
    at = AppTest.from_file(str(ROOT / "explorer" / "app.py"), default_timeout=240)
    at.run()
    assert not at.exception and not at.error
    notes = [w.value for w in at.warning]
    assert any("The data files need a look" in n and "load_backed_up.csv" in n for n in notes), notes
