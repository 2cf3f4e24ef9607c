"""The sweep tab under Streamlit's AppTest: the summary points only at valid cells and the legend names the rules.

Red Dune's zero-export connection and full battery make every AC-coupled cell leak (see tests/test_validity.py);
a zero-export connection forbids any export (the connection's terms; common practice for zero-export hybrid
systems), so no AC-coupled setting may be recommended, and the page must say so rather than point at one.
"""

from __future__ import annotations

from pathlib import Path

from streamlit.testing.v1 import AppTest

from core.analyses.checks.words import rule_words
from core.analyses.validity import LEAK_RULE

ROOT = Path(__file__).resolve().parent.parent
APP = str(ROOT / "explorer" / "app.py")
RED_DUNE = ROOT / "sample_sites" / "red_dune" / "scenario.toml"


def test_sweep_tab_summary_and_legend(monkeypatch):
    monkeypatch.setenv("SECONDROOF_SCENARIO", str(RED_DUNE))
    at = AppTest.from_file(APP, default_timeout=240)
    at.run()
    assert not at.exception, [e.value for e in at.exception]
    at.radio(key="c_option").set_value("ac_backed_up").run()
    at.session_state["view"] = "Sweep"  # a tab draws only while it is shown
    at.run()
    at.slider(key="sweep_top").set_value(2).run()
    at.button(key="sweep_run").click().run()
    assert not at.exception, [e.value for e in at.exception]
    texts = [m.value for m in at.markdown]
    summary = [t for t in texts if t.startswith(("No setting in this sweep passes", "Best that passes"))]
    assert summary and summary[0].startswith("No setting in this sweep passes")
    assert rule_words(LEAK_RULE) in summary[0] and LEAK_RULE not in summary[0]
    legend = [c.value for c in at.caption if c.value.startswith("C: added curtailment")]
    assert legend and "X: uncontrolled export into a grid that may not be fed — set aside." in legend[0]
    assert LEAK_RULE not in legend[0]  # the rules in words, not their ids
    # the cells can be coloured by NPV, in the tariff's currency
    assert "NPV (ZAR)" in at.radio(key="sweep_colour").options
    at.radio(key="sweep_colour").set_value("npv").run()
    assert not at.exception, [e.value for e in at.exception]
