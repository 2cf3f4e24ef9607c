"""The compare verdict with the design search: it names a valid design to pick and suggests only checked fixes."""

from __future__ import annotations

import json

import pytest

from core.analyses.checks import design_temperatures
from core.analyses.checks.strings import string_checks
from core.analyses.compare import compare
from core.analyses.design import search
from core.analyses.design_verdict import CHECKED_FIX, PICK, with_design
from core.cli import main
from core.scenario import load_scenario, parse_scenario
from tests.test_design import MAPLE, sizing_scenario

# The 410 W module of the hand-worked sizing in tests/test_design.py (Voc 41.3 V, β −0.26 %/°C, Vmp 34.2 V,
# γ −0.34 %/°C), design low −10 °C, 35 °C air.
MODULE_410 = ("pmax_w = 410\nvmp_v = 34.2\nimp_a = 12.0\nvoc_v = 41.3\nisc_a = 12.7\n"
              "beta_voc_pct_per_c = -0.26\ngamma_pmax_pct_per_c = -0.34")
OLD_2X1 = ('[[arrays]]\nname = "old"\ncoupling = "dc"\nmodule = "m"\nface = "roof"\ncontroller = "main"\n'
           "modules_per_string = 2\nstrings = 1")


def _vmp_hot_sentence(max_v: int) -> str:
    sc = parse_scenario(sizing_scenario(module=MODULE_410, existing=OLD_2X1, low=-10.0, controller=(
        f"max_pv_voltage_v = {max_v}\nmppt_min_v = 58\nmppt_max_v = {max_v - 5}\nmax_input_current_a = 20\n"
        "max_charge_current_a = 15")))
    (check,) = [c for c in string_checks(sc, design_temperatures(sc)) if c.id == "strings.vmp_hot"]
    assert check.status == "fail"
    return check.sentence


def test_a_short_string_is_told_to_lengthen_only_when_the_longer_string_fits():
    # Worked by hand (NEC 690.7(A)(1) coefficient method; hot Vmp by γ scaling at the SAPM cell temperature,
    # King et al. 2004, 84.46 °C at 35 °C air — see tests/test_design.py):
    #   hot Vmp = 34.2 × (1 − 0.0034 × 59.46) = 27.29 V per module; 2 in series = 54.6 V < 51.2 + 5 = 56.2 V, so the
    #   existing 2-module string cannot charge; ⌈56.2 / 27.29⌉ = 3 in series would;
    #   Voc,max = 41.3 × (1 + 0.0026 × 35) = 45.06 V per module; 3 in series = 135.2 V.
    # On a 100 V controller 135 V is over the limit: "more in series" would fail, so it is not advised.
    on_100 = _vmp_hot_sentence(100)
    assert "put at least" not in on_100
    assert "135 V" in on_100 and "higher voltage limit" in on_100
    # On a 150 V controller 135 V fits: lengthening to 3 is the advice.
    on_150 = _vmp_hot_sentence(150)
    assert "put at least 3 modules in series" in on_150


@pytest.fixture(scope="module")
def maple_verdict():
    sc = load_scenario(MAPLE)
    comparison = compare(sc)
    result = search(sc, site=comparison.options["baseline"].simulation.site)
    return comparison, result, with_design(comparison, result)


def test_maple_hollow_verdict_names_the_best_valid_design(maple_verdict):
    comparison, result, checked = maple_verdict
    # As typed, no option passes (the AC options leak, the 2-module DC string cannot charge 51.2 V in hot sun) ...
    assert not any(r.valid for k, r in comparison.options.items() if k != "baseline")
    assert comparison.verdict.design is None
    # ... and with the search the verdict names the best valid design, first.
    best = result.best["overall"]
    assert best is not None and best.valid
    assert checked.verdict.design == best.id
    assert checked.verdict.reasons[0].startswith(f"{PICK} {best.id}")
    assert checked.verdict.to_dict()["design"] == best.id
    # The figures named are the search's own (money without decimals, as the verdict writes it).
    assert f"NPV {best.economics.npv:,.0f} {comparison.scenario.tariff.currency}" in checked.verdict.reasons[0]


def test_maple_hollow_fixes_are_valid_designs_of_the_same_kind(maple_verdict):
    comparison, result, checked = maple_verdict
    fixes = [r for r in checked.verdict.reasons if r.startswith(CHECKED_FIX)]
    assert len(fixes) == 3  # one per option set aside
    valid = {d.id: d for d in result.valid}
    for sentence, kind in zip(fixes, ("ac", "ac", "dc"), strict=True):
        named = sentence.split("design ", 1)[1].split(" ", 1)[0]
        assert named in valid and valid[named].candidate.coupling == kind
        # every named fix leaks nothing (any uncontrolled export makes a design invalid)
        assert valid[named].figures["uncontrolled"] <= 1e-3
    # the AC fixes on a zero-export connection without a limiter need one: the search checked it
    assert all("export limiter" in f for f in fixes[:2])
    # the unchecked generic fix and the advice that fails (more in series on the 100 V controller) are gone
    text = checked.verdict.text
    assert "Uncontrolled export is energy sent into a grid" not in text
    assert "put more modules in series" not in text and "put at least" not in text


def test_cli_compare_names_the_design_when_the_scenario_has_a_design_section(maple_verdict, capsys):
    _, result, _ = maple_verdict
    assert main(["compare", MAPLE, "--json", "--draws", "0"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["verdict"]["design"] == result.best["overall"].id
    assert out["verdict"]["reasons"][0].startswith(PICK)


def test_options_tab_runs_the_search_on_request_and_names_the_design(monkeypatch):
    from tests.test_explorer_app import _app, _ok, _tab

    at = _tab(_app(monkeypatch), "Options")
    _ok(at)
    # without a search the verdict says no option passes and offers the search; nothing was searched yet
    assert "design_result" not in at.session_state
    assert not any(m.value.startswith(PICK) for m in at.markdown)
    at.button(key="compare_search").click().run()
    _ok(at)
    best = at.session_state["design_result"]["result"].best["overall"]
    assert any(m.value.startswith(f"{PICK} {best.id}") for m in at.markdown)
    assert any(m.value.startswith(CHECKED_FIX) for m in at.markdown)
    # the same search serves the Best layouts tab without running again
    at = _tab(at, "Best layouts")
    _ok(at)
    assert at.session_state["design_result"]["result"] is not None
    assert not any("settings changed" in w.value for w in at.warning)
