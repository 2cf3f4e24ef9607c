"""The design search on the page: the best front, the table, the scatter chart's specification, loading a design
into the what-if controls (AppTest)."""

from __future__ import annotations

from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

from core.analyses.design import search
from core.analyses.design.rank import cost_energy_front
from core.analyses.design.report import design_frame
from core.present import design_charts
from core.scenario import load_scenario
from explorer.views.design import controls_for

ROOT = Path(__file__).resolve().parent.parent
MAPLE = ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"


@pytest.fixture(scope="module")
def result():
    return search(load_scenario(MAPLE))


def test_front_is_not_dominated(result):
    front = cost_energy_front(result.designs)
    valid = result.valid
    assert front
    for d in valid:
        dominated = any(o.cost.total <= d.cost.total and o.added_self_consumed_kwh >= d.added_self_consumed_kwh
                        and (o.cost.total < d.cost.total or o.added_self_consumed_kwh > d.added_self_consumed_kwh)
                        for o in valid)
        assert (d.id in front) == (not dominated)
    # the cheapest valid design is always on it, as is the one that adds the most
    assert min(valid, key=lambda d: (d.cost.total, -d.added_self_consumed_kwh)).id in front
    assert max(valid, key=lambda d: (d.added_self_consumed_kwh, -d.cost.total)).id in front


def test_frame_ranks_valid_designs_and_explains_invalid_ones(result):
    frame = design_frame(result)
    assert frame["valid"].all() and list(frame["rank"]) == list(range(1, len(frame) + 1))
    full = design_frame(result, include_invalid=True)
    invalid = full[~full["valid"]]
    assert len(full) == len(result.designs) and len(invalid)
    assert invalid["why_invalid"].str.len().gt(0).all()


def test_scatter_spec(result):
    spec = design_charts.design_scatter(design_frame(result), "USD").to_dict()
    layers = spec["layer"]
    titles = {layer["encoding"]["x"]["title"] for layer in layers} | {layer["encoding"]["y"]["title"]
                                                                     for layer in layers}
    assert titles == {"Cost (USD)", "Added self-consumed PV (kWh/yr)"}
    assert "energy" in spec["title"]["text"]
    colour = layers[1]["encoding"]["color"]
    assert colour["legend"]["title"] == "Kind of design"
    # Okabe & Ito (2008) colours, from memory: #0072B2 blue, #E69F00 orange, #009E73 bluish green
    assert set(colour["scale"]["range"]) <= {"#0072B2", "#E69F00", "#009E73"}


def test_controls_for_one_part_designs(result):
    sc = result.scenario
    ac = result.best["ac"]
    values = controls_for(ac, result.spec)
    (part,) = ac.candidate.parts
    assert values["c_count"] == part.modules
    assert values["c_option"] == ("ac_backed_up" if part.side == "backed_up" else "ac_grid")
    assert values["c_limiter"] == (part.export_control == "limiter")
    assert values["c_tilt"] == round(result.spec.face(part.face).tilt_deg)
    two = next(d for d in result.valid if len(d.candidate.parts) == 2)
    assert controls_for(two, result.spec) is None
    assert sc.expansion is not None


def test_page_searches_and_loads_a_design(monkeypatch):
    monkeypatch.setenv("SECONDROOF_SCENARIO", str(MAPLE))
    at = AppTest.from_file(str(ROOT / "explorer" / "app.py"), default_timeout=240)
    at.run()
    at.session_state["view"] = "Best layouts"  # a tab draws only while it is shown
    at.run()
    at.button(key="design_run").click().run()
    assert not at.exception, [e.value for e in at.exception]
    assert not at.error, [e.value for e in at.error]
    assert any("Best design" in m.value for m in at.markdown)
    # choose the best AC-coupled design and load it into the controls
    options = at.selectbox(key="design_pick").options
    # an AC-only design on the face the scenario's [expansion] names (the controls keep the panels on it)
    ac = next(o for o in options if "micro_350" in o and "plus" not in o and "on west porch" in o)
    at.selectbox(key="design_pick").set_value(ac.split(":")[0]).run()
    at.button(key="design_load").click().run()
    assert not at.exception, [e.value for e in at.exception]
    assert at.session_state["c_option"] in ("ac_backed_up", "ac_grid")
    assert at.session_state["c_micro"] == "micro_350"


def test_report_carries_the_search_summary(result):
    from core.analyses.design.report import search_summary
    from core.present.report_html import report_html
    from core.simulate import simulate

    sim = simulate(result.scenario)
    summary = search_summary(result, top=3)
    assert len(summary["rows"]) == min(3, len(result.valid))
    text = report_html(sim, sim, option_label="Existing system", headline=[], designs=summary)
    assert "Best layouts: the design search" in text and result.valid[0].id in text
    assert "<script" not in text
