"""`simulate --json`: unserved backed-up energy apart from grid-only load shed by design, the outage statistics
and the money record."""

from __future__ import annotations

import json

import pytest

from core.cli import main
from tests.test_cli import SAMPLE


@pytest.fixture(scope="module")
def out():
    import contextlib
    import io

    buf = io.StringIO()
    with contextlib.redirect_stdout(buf):
        assert main(["simulate", str(SAMPLE), "--json"]) == 0
    return json.loads(buf.getvalue())


def test_unserved_is_split_into_backed_up_and_shed_by_design(out):
    e = out["energy_kwh"]
    assert e["unserved_backed_up"] + e["shed_grid_only"] == pytest.approx(e["unserved"], abs=1e-9)
    assert e["shed_grid_only"] > 0  # the sample's outages drop its grid-only loads, as designed


def test_outage_statistics_as_the_issue_names_them(out):
    o = out["outages"]
    assert o["draws"] == 200
    for key in ("unserved_backed_up_kwh", "unserved_backed_up_hours"):
        s = o[key]
        assert set(s) == {"p50", "p90", "worst"} and s["p50"] <= s["p90"] <= s["worst"]
    assert o["momentary"]["ride_through_limit_ms"] == 20.0


def test_money_for_the_first_year(out):
    m = out["money"]
    assert {"import_cost", "fixed_charges", "export_credit", "standing_draw_cost", "idle_cost"} <= set(m)
    assert m["currency"] == "USD" and m["import_cost"] > 0 and 0 < m["standing_draw_cost"] < m["import_cost"]


def test_draws_can_be_chosen_or_skipped(capsys):
    assert main(["simulate", str(SAMPLE), "--json", "--draws", "0"]) == 0
    o = json.loads(capsys.readouterr().out)["outages"]
    assert o["draws"] == 1  # the one simulated year
    assert main(["simulate", str(SAMPLE), "--json", "--draws", "-3"]) == 2
    assert "--draws" in capsys.readouterr().err


def test_compare_sets_the_options_outage_spread_side_by_side(capsys):
    assert main(["compare", str(SAMPLE), "--json", "--draws", "20"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out["outages"]) == set(out["options"])
    assert all(v["draws"] == 20 for v in out["outages"].values())
    assert "random outage years" in out["verdict"]["reasons"][-1]
    assert main(["compare", str(SAMPLE), "--json", "--draws", "0"]) == 0
    assert "outages" not in json.loads(capsys.readouterr().out)
