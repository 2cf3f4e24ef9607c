"""Only valid options are recommended: compare's verdict, the sweep's cells and its summary.

An option (or sweep cell) is set aside when it fails a design check or sends energy into a grid that may not be
fed. A zero-export connection forbids any export (the connection's terms; common practice for zero-export
hybrid systems), so any uncontrolled export sets an option aside however much it adds.
"""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pandas as pd
import pytest
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.checks import Check
from core.analyses.checks.words import rule_words
from core.analyses.compare import compare
from core.analyses.sweep import rule_counts, sweep, sweep_summary
from core.analyses.validity import LEAK_RULE, failed_rules, why_set_aside
from core.present.options_table import options_table
from core.scenario import load_scenario
from explorer.views import sweep as sweep_view

approx = pytest.approx
SAMPLES = Path(__file__).resolve().parents[1] / "sample_sites"


def _check(id_: str, status: str) -> Check:
    return Check(id=id_, status=status, value=None, limit=None, unit="", sentence="", source="common practice")


def test_failed_rules_and_their_words():
    checks = [_check("strings.vmp_hot", "fail"), _check("clipping.share", "warn"), _check(LEAK_RULE, "fail")]
    # a warning does not set an option aside; the leak rule is named once even when its check also fails
    assert failed_rules(checks, 12.0) == ("strings.vmp_hot", LEAK_RULE)
    assert failed_rules(checks[1:2], 0.0) == ()
    assert failed_rules([], 0.0005) == ()  # below the engine's rounding: no leak
    assert failed_rules([], 0.5) == (LEAK_RULE,)
    words = why_set_aside((LEAK_RULE, "strings.vmp_hot"), exported_uncontrolled_kwh=344.4,
                          exported_uncontrolled_hours=120.0)
    assert words == ("uncontrolled export 344 kWh/yr in 120 h/yr; fails the rule: string too short for the "
                     "controller in hot weather")


def test_red_dune_verdict_names_the_options_it_set_aside_in_the_tables_words():
    # Red Dune: the AC options add more to the loads than DC but leak into a zero-export grid. The verdict must
    # not let the reader think DC beats AC on energy: it names DC the winner among the options that pass, and
    # sets aside each AC option with its uncontrolled export, as the table shows it.
    c = compare(load_scenario(SAMPLES / "red_dune" / "scenario.toml"))
    assert c.verdict.energy == "dc" and c.verdict.money == "dc"
    assert c.verdict.reasons[0].startswith("On energy, DC-coupled wins among the options that pass")
    table = options_table(c).set_index("Against the existing system")
    for option in ("ac_backed_up", "ac_grid"):
        r = c.options[option]
        assert not r.valid and LEAK_RULE in r.failed_rules
        assert r.delta["to_loads_added_kwh"] > c.options["dc"].delta["to_loads_added_kwh"]
        said = [x for x in c.verdict.reasons if x.startswith(f"Set aside: {r.label} (")]
        assert len(said) == 1
        # the same figures as the table's rows, in the same words
        kwh = table.loc["Uncontrolled export (kWh/yr)", r.label]
        assert f"uncontrolled export {kwh}/yr" in said[0]
        assert table.loc["Passes every rule", r.label].startswith("no: uncontrolled export")
    assert table.loc["Passes every rule", "DC-coupled"] == "yes"
    # what uncontrolled export is, and the usual fix, is said once, not once per option
    assert c.verdict.text.count("Uncontrolled export is energy sent into a grid") == 1


def test_no_option_passes_is_said_and_no_winner_is_named():
    # A 1 kWh battery, 300 W of load, ten 400 W modules: AC leaks (see test_compare); DC with strings of 2
    # modules fails nothing here, so force it out by asking only for the AC options.
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0, count=10)
    site = synthetic_site(days=2, load_backed_w=300.0)
    c = compare(sc, site=site, options=("ac_backed_up", "ac_grid"))
    assert not any(r.valid for k, r in c.options.items() if k != "baseline")
    assert c.verdict.energy is None and c.verdict.money is None
    assert c.verdict.reasons[0].startswith("No option passes as it stands")
    assert sum(r.startswith("Set aside:") for r in c.verdict.reasons) == 2
    assert not any(r.startswith(("On energy", "On money")) for r in c.verdict.reasons)
    # with the DC option in, it passes and wins, and the AC options are named as set aside
    c = compare(sc, site=site)
    assert c.options["dc"].valid and c.verdict.energy == "dc" and c.verdict.money == "dc"
    assert sum(r.startswith("Set aside:") for r in c.verdict.reasons) == 2


def test_every_sweep_cell_carries_validity_and_npv_and_the_summary_points_only_at_valid_cells():
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0)
    site = synthetic_site(days=2, load_backed_w=300.0)
    table = sweep(sc, counts=[0, 1, 4, 10], azimuths=[150.0, 210.0], site=site, options=["ac_grid", "dc"])
    assert table["npv"].notna().all() and table["valid"].dtype == bool
    # economics from the same first-year saving as compare: NPV rises and falls with the import saved
    assert (table.loc[table["count"] == 0, "npv"] == 0).all()
    added = table[table["count"] > 0]
    assert ((added["failed_checks"] == "") == added["valid"]).all()
    assert (~added[added["exported_uncontrolled_kwh"] > 1e-3]["valid"]).all()
    text = sweep_summary(table, axis="azimuth_deg", currency="EUR")
    valid = added[added["valid"]]
    best = valid.loc[valid["npv"].idxmax()]
    assert text.startswith(f"Best that passes, on money: {int(best['count'])} panel")
    assert f"NPV {best['npv']:,.0f} EUR" in text
    # two days of sun cannot repay a year's investment: the best is still named, and said not to pay
    assert best["npv"] < 0 and "it does not pay" in text
    # the AC cells at 4 and 10 panels leak; a one-module DC string fails the hot-Vmp check (see test_checks_strings)
    assert (~added["valid"]).sum() >= 4
    # the rules are named in words, not by their ids
    assert "set aside" in text and f"{rule_words(LEAK_RULE)} in 4" in text and LEAK_RULE not in text

    # with no valid cell the summary says so and names no setting to pick
    none = table.assign(valid=table["count"] == 0,
                        failed_checks=["" if n == 0 else LEAK_RULE for n in table["count"]])
    text = sweep_summary(none, axis="azimuth_deg")
    assert text.startswith("No setting in this sweep passes") and "Best" not in text
    assert f"{rule_words(LEAK_RULE)} in {int((none['count'] > 0).sum())}" in text


def test_sweep_summary_names_a_better_cell_it_set_aside():
    # Hand-made table: 3 panels add the most but leak; 2 panels pass and pay best; 1 panel passes.
    table = pd.DataFrame({
        "option": ["ac_grid"] * 4, "count": [0, 1, 2, 3], "azimuth_deg": [180.0] * 4,
        "self_consumed_added_kwh": [0.0, 150.0, 280.0, 390.0], "npv": [0.0, 90.0, 210.0, 260.0],
        "valid": [True, True, True, False], "failed_checks": ["", "", "", LEAK_RULE]})
    text = sweep_summary(table, axis="azimuth_deg", currency="USD")
    assert text.startswith("Best that passes, on money: 2 panels at azimuth 180°, NPV 210 USD")
    assert "does not pay" not in text
    assert "On energy: 2 panels at azimuth 180°, 280 kWh/yr" in text
    assert (f"More would come from 3 panels at azimuth 180° (390 kWh/yr), but it breaks: {rule_words(LEAK_RULE)}."
            in text)
    assert "1 of 3 settings with panels added are set aside" in text
    assert rule_counts(table) == {LEAK_RULE: 1}
    # the page marks the leaking cell X and names the rule in the legend
    frame = table.assign(curtailed_share=0.0, clipped_share=0.0)
    assert sweep_view.flags(frame).tolist() == ["", "", "", "X"]
    two = frame.assign(failed_checks=["", "strings.vmp_hot", "", f"strings.vmp_hot, {LEAK_RULE}"])
    assert sweep_view.rule_codes(two) == {"strings.vmp_hot": "1", LEAK_RULE: "X"}
    assert sweep_view.flags(two).tolist() == ["", "1", "", "1X"]
    assert f"1: fails the design check: {rule_words('strings.vmp_hot')}" in sweep_view.legend(two)
    assert "strings.vmp_hot" not in sweep_view.legend(two)


def test_a_limiter_turns_leaking_cells_valid():
    # With an export limiter the microinverters are curtailed instead of leaking: the same cells pass.
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0)
    limited = dataclasses.replace(sc, grid=dataclasses.replace(sc.grid, ac_export_control="limiter"))
    site = synthetic_site(days=2, load_backed_w=300.0)
    leaky = sweep(sc, counts=[10], site=site, options=["ac_grid"])
    fixed = sweep(limited, counts=[10], site=site, options=["ac_grid"])
    assert not leaky["valid"].iloc[0] and LEAK_RULE in leaky["failed_checks"].iloc[0]
    assert fixed["exported_uncontrolled_kwh"].iloc[0] == approx(0.0, abs=1e-9)
    assert LEAK_RULE not in fixed["failed_checks"].iloc[0]
