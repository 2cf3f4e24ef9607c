"""The explorer's calibration tab under Streamlit's AppTest: the sample site's monitoring export is fitted, and the
button puts the fitted standing draw and array losses into the what-if."""

from __future__ import annotations

from test_explorer_app import _app, _ok, _tab

from explorer.views.calibration import APPLIED_KEY


def test_calibration_tab_applies_the_fit(monkeypatch):
    at = _app(monkeypatch)
    _ok(at)
    assert at.session_state["c_standing"] == 30.0  # the scenario's standing draw
    _tab(at, "Calibration")
    button = next(b for b in at.button if b.label == "Use the fitted values in the what-if")
    button.click().run()
    _ok(at)
    applied = at.session_state[APPLIED_KEY]
    # The sample export was made with a 38 W standing draw and 13 % losses (sample_sites/make_monitoring.py).
    assert abs(at.session_state["c_standing"] - 38.0) <= 5.0
    assert abs(applied["losses"]["south roof"] - 13.0) <= 1.5
    assert any("The what-if uses the fitted values" in c.value for c in at.caption)
