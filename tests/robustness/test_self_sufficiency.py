"""Self-sufficiency is the share of the WHOLE load covered by local production (Luthander, Widén, Nilsson &
Palm, "Photovoltaic self-consumption in buildings: a review", Applied Energy 142 (2015) 80-94), shown with the
load's served and unserved shares; a year of outages can no longer look self-sufficient."""

from __future__ import annotations

import pytest

from core.scenario import load_scenario
from core.simulate import simulate
from tests.robustness.common import copy_site, run_cli


def _outage_year(tmp_path):
    site = copy_site("maple_hollow", tmp_path)
    text = (site / "scenario.toml").read_text(encoding="utf-8")
    text = text.replace("random_outages = { per_year = 3, mean_hours = 4, seed = 7 }",
                        "random_outages = { per_year = 60, mean_hours = 120, seed = 7 }")
    (site / "scenario.toml").write_text(text, encoding="utf-8")
    return site / "scenario.toml"


def test_outages_most_of_the_year_show_in_the_ratios(tmp_path):
    path = _outage_year(tmp_path)
    sim = simulate(load_scenario(path))
    r, e = sim.results.ratios, sim.results.energy_kwh
    assert (~sim.steps["grid_up"].astype(bool)).mean() > 0.5     # the grid is down most of the year
    # The definition, from the year's energies: local supply over the whole load.
    assert r["self_sufficiency"] == pytest.approx((e["load_served"] - e["grid_import"]) / e["load"], abs=1e-9)
    assert r["load_served_share"] + r["load_unserved_share"] == pytest.approx(1.0, abs=1e-6)
    assert r["load_unserved_share"] > 0.05
    # What the old ratio (1 - import / load) said: it counted every unserved kWh as self-supplied.
    old = 1.0 - e["grid_import"] / e["load"]
    assert r["self_sufficiency"] <= r["load_served_share"] < old
    run = run_cli(["simulate", path])
    assert run.code == 0 and "Load served" in run.stdout and "unserved" in run.stdout


def test_without_outages_the_shares_are_whole(tmp_path):
    sim = simulate(load_scenario(copy_site("red_dune", tmp_path) / "scenario.toml"))
    r = sim.results.ratios
    assert 0.0 <= r["self_sufficiency"] <= r["load_served_share"] <= 1.0
