"""One figure, one definition: year totals, option deltas and the AC surplus are computed once
(core.model.metrics) and every reader — compare, the sweep, the headline, the checks, the resolution view and
the base-load view — agrees with them and with figures worked out by hand here.

Sources: the self-consumption and self-sufficiency ratios follow Luthander et al., "Photovoltaic
self-consumption in buildings: a review", Applied Energy 142 (2015) 80–94; anti-islanding (grid-side
microinverters stop in an outage) is required by IEEE 1547 and EN 50549 (from memory); the rest is the energy
balance, worked step by step in the comments.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd
import pytest
from expansion_cases import hand_scenario, synthetic_site

from core.analyses.checks.ac_coupling import worst_ac_surplus_w
from core.analyses.compare import LOADS_ROW, compare
from core.analyses.options import OPTION_LABELS, OPTIONS, Option, as_option, with_option
from core.analyses.resolution import ac_surplus
from core.errors import InputError
from core.model import metrics
from core.present import figures

approx = pytest.approx


def _columns(**over) -> dict[str, np.ndarray]:
    """Three one-hour steps, every input column zero unless given (W)."""
    c = {name: np.zeros(3) for name in metrics.INPUT_COLUMNS}
    c["grid_up"] = np.ones(3, dtype=bool)
    for key, value in over.items():
        c[key] = np.asarray(value, dtype=bool if key == "grid_up" else float)
    return c


# Step by step (W, 1 h each):
#   step 1, night: load 500, battery gives 300 (so 300 served from it), grid 200 → load_served 500.
#   step 2, noon:  load 400, DC potential 1200, 100 curtailed, 50 clipped, AC potential 200 (used), export
#                  allowed 80, uncontrolled 20 → harvested 1200 + 200 − 100 − 50 = 1250.
#   step 3, outage: load 300 backed-up + 100 grid-only, 150 unserved (100 grid-only + 50 backed-up).
HAND = dict(
    load_backed_w=[500.0, 400.0, 300.0], load_grid_only_w=[0.0, 0.0, 100.0], grid_up=[True, True, False],
    load_served_w=[500.0, 400.0, 250.0], unserved_w=[0.0, 0.0, 150.0], pv_potential_dc_w=[0.0, 1200.0, 0.0],
    pv_potential_ac_w=[0.0, 200.0, 0.0], curtailed_dc_w=[0.0, 100.0, 0.0], clipped_dc_w=[0.0, 50.0, 0.0],
    export_allowed_w=[0.0, 80.0, 0.0], export_uncontrolled_w=[0.0, 20.0, 0.0], grid_import_w=[200.0, 0.0, 0.0],
    battery_discharge_w=[300.0, 0.0, 250.0], soc_wh=[0.0, 0.0, 0.0],
)


def test_year_totals_by_hand():
    t = metrics.year_totals(_columns(**HAND), dt_h=1.0, initial_wh=0.0)
    e = t.energy_kwh
    assert set(e) == set(metrics.TOTAL_KEYS)
    assert e["load"] == approx(1.3)  # 0.5 + 0.4 + 0.4
    assert e["harvested"] == approx(1.25)  # 1.4 potential − 0.1 curtailed − 0.05 clipped
    assert e["exported"] == approx(0.1) and e["exported_allowed"] == approx(0.08)
    assert e["exported_uncontrolled"] == approx(0.02)
    assert e["clipped_dc"] == approx(0.05) and e["clipped_ac"] == approx(0.0)
    # loads supplied from PV = load served − grid import = 1.15 − 0.2
    assert e["loads_from_pv"] == approx(0.95)
    # hours: one step each with export, uncontrolled export, curtailment; one outage hour with unserved load, of
    # which 50 W on the backed-up side (grid-only loads are dropped in an outage by design); never off-grid by choice
    assert t.hours == approx({"export": 1.0, "export_uncontrolled": 1.0, "outage": 1.0, "unserved": 1.0,
                              "unserved_backed_up": 1.0, "curtailment": 1.0, "islanded": 0.0})


def test_summarise_reads_the_same_totals():
    c = _columns(**HAND)
    r = metrics.summarise_columns(c, months=metrics.MonthGroups(np.ones(3, dtype=int)), dt_h=1.0, initial_wh=0.0,
                                  usable_wh=1000.0, daylight=np.array([False, True, False]))
    t = metrics.year_totals(c, dt_h=1.0, initial_wh=0.0)
    assert r.energy_kwh == t.energy_kwh and r.hours == t.hours
    # Luthander et al. (2015): self-consumption = 1 − export / harvested PV = 1 − 0.1 / 1.25
    assert r.ratios["self_consumption"] == approx(0.92)


def test_delta_by_hand():
    base = metrics.YearTotals(
        energy_kwh={**dict.fromkeys(metrics.TOTAL_KEYS, 0.0), "grid_import": 1000.0, "unserved": 10.0,
                    "load_served": 3990.0, "loads_from_pv": 2990.0, "harvested": 3000.0, "exported": 0.0},
        hours={"export_uncontrolled": 0.0})
    option = metrics.YearTotals(
        energy_kwh={**base.energy_kwh, "grid_import": 700.0, "unserved": 4.0, "load_served": 3996.0,
                    "loads_from_pv": 3296.0, "harvested": 3400.0, "exported": 30.0, "exported_uncontrolled": 30.0,
                    "curtailed": 40.0, "clipped": 10.0, "battery_discharge": 100.0},
        hours={"export_uncontrolled": 12.0})
    d = metrics.delta(base, option, expansion_potential_kwh=500.0, usable_kwh=10.0)
    assert set(d) == set(metrics.DELTA_KEYS)
    # grid import saved 300 kWh + 6 kWh served in outages that went unserved before = 306 kWh more to the loads
    assert d["grid_import_saved_kwh"] == approx(300.0) and d["unserved_added_kwh"] == approx(-6.0)
    assert d["to_loads_added_kwh"] == approx(306.0)
    # self-consumed added (Luthander et al. 2015: harvested − exported): (3400 − 30) − 3000 = 370
    assert d["self_consumed_added_kwh"] == approx(370.0)
    assert d["curtailed_share"] == approx(40.0 / 500.0) and d["clipped_share"] == approx(10.0 / 500.0)
    assert d["battery_cycles_added"] == approx(10.0)  # 100 kWh more through a 10 kWh battery
    assert d["exported_uncontrolled_kwh"] == approx(30.0) and d["exported_uncontrolled_hours"] == approx(12.0)


def test_ac_surplus_one_definition_by_hand():
    # step 1, grid up: 900 W backed-up and 300 W grid-side output, 400 W backed-up and 200 W grid-only loads
    # step 2, outage: the same output and loads; grid-side units stop (anti-islanding), grid-only loads drop
    acb, acg, lb, lg = [900.0, 900.0], [300.0, 300.0], [400.0, 400.0], [200.0, 200.0]
    up = [True, False]
    site = metrics.ac_surplus_w(acb, acg, lb, lg, up)
    assert site.tolist() == approx([600.0, 500.0])  # 900 + 300 − 400 − 200; then 900 − 400
    inverter = metrics.ac_surplus_w(acb, acg, lb, lg, up, metering="inverter")
    assert inverter.tolist() == approx([500.0, 500.0])  # the inverter sees only its own output side
    with pytest.raises(ValueError):
        metrics.ac_surplus_w(acb, acg, lb, lg, up, metering="meter")
    # every reader uses it: the check's worst step, the resolution view, and the base-load duration curve
    steps = pd.DataFrame({"ac_backed_out_w": acb, "ac_grid_out_w": acg, "load_backed_w": lb,
                          "load_grid_only_w": lg, "grid_up": up},
                         index=pd.date_range("2023-06-01 11:00", periods=2, freq="h"))
    assert worst_ac_surplus_w(steps, "site") == approx(600.0)
    assert worst_ac_surplus_w(steps, "inverter") == approx(500.0)
    assert ac_surplus(steps, 1.0)["ac_surplus_kwh"] == approx(1.1)
    duration = figures.ac_surplus_duration(steps, np.array([True, True]), 1.0)
    assert duration["surplus_w"].tolist() == approx([600.0, 500.0])


def test_headline_and_options_table_give_the_same_loads_from_pv():
    # "Loads supplied from PV" in the headline and the options table's "Loads supplied from PV, added" are one
    # figure: the headline's change equals the table's row, and the sweep's column of the same name.
    sc = hand_scenario(battery_kwh=2.0, initial_pct=50.0, reserve_pct=20.0)
    site = synthetic_site(days=2, load_backed_w=600.0)
    c = compare(sc, site=site)
    base = c.options["baseline"].simulation.results
    for option in ("ac_backed_up", "dc"):
        r = c.options[option]
        head = {h.key: h for h in figures.headline_figures(r.simulation.results, base)}["loads_from_pv"]
        assert head.delta == approx(r.delta["to_loads_added_kwh"], rel=1e-12, abs=1e-9)
        e, b = r.simulation.results.energy_kwh, base.energy_kwh
        assert head.value == approx(e["load_served"] - e["grid_import"])
        assert head.delta == approx((b["grid_import"] - e["grid_import"]) + (b["unserved"] - e["unserved"]))
    assert LOADS_ROW == "Loads supplied from PV, added"


def test_option_vocabulary_keeps_plain_spellings():
    # Values stay the spellings of JSON, scenario files ([expansion] coupling) and the command line.
    assert [o.value for o in OPTIONS] == ["baseline", "ac_backed_up", "ac_grid", "dc"]
    assert Option.DC == "dc" and json.dumps({Option.AC_GRID: Option.DC}) == '{"ac_grid": "dc"}'
    assert OPTION_LABELS["dc"] == Option.DC.label == "DC-coupled"
    assert Option.AC_BACKED_UP.is_ac and not Option.DC.is_ac
    with pytest.raises(InputError, match="ac_backed_up"):
        as_option("micro_backed")
    # the backed-up AC option puts an array on the "backed_up" side; the grid option on the "grid" side
    sc = hand_scenario()
    for option, side in ((Option.AC_BACKED_UP, "backed_up"), ("ac_grid", "grid")):
        added = with_option(sc, option).arrays[-1]
        assert added.coupling == "ac" and added.side == side
    # colours are keyed by option, one per option
    assert set(figures.OPTION_COLOURS) == set(OPTIONS) and len(set(figures.OPTION_COLOURS.values())) == 4


def test_secondary_figures_read_the_year_totals():
    # "AC-coupled PV used" and "Export within the limit" are year totals too: the same numbers from the step table
    sc = hand_scenario(battery_kwh=1.0, initial_pct=50.0, reserve_pct=20.0, count=10)
    site = synthetic_site(days=2, load_backed_w=300.0)
    c = compare(sc, site=site, options=("ac_backed_up",))
    sim, base = c.options["ac_backed_up"].simulation, c.options["baseline"].simulation
    more = {h.key: h for h in figures.secondary_figures(sim, base)}
    assert more["ac_harvest"].value == approx(figures.ac_harvest_kwh(sim.steps, sim.site.dt_h), rel=1e-12)
    assert more["ac_harvest"].value > 1.0
    kwh = float(sim.steps["export_allowed_w"].sum() * sim.site.dt_h / 1000.0)
    assert more["exported_allowed"].value == approx(kwh, abs=1e-12)
