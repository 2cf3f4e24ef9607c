"""String layout as a what-if control: modules in series, strings, re-stringing the existing array, the controller."""

from __future__ import annotations

import dataclasses
from pathlib import Path

import pytest

from core.analyses.compare import compare
from core.analyses.options import restring_note, with_option
from core.errors import InputError
from core.scenario import load_scenario, parse_scenario
from explorer import state
from tests.test_design import MANGROVE, MAPLE
from tests.test_explorer_app import _app, _ok, _tab


def test_restring_rewires_the_existing_array_and_counts_only_the_new_modules():
    sc = load_scenario(MAPLE)  # 'south roof': 2 strings of 3 mono_410 on roof_mppt (150 V)
    sc_r = sc.replace(expansion=dataclasses.replace(sc.expansion, restring="south roof", modules_per_string=4))
    (array,) = [a for a in with_option(sc_r, "dc").arrays if a.name == "south roof"]
    assert (array.modules_per_string, array.strings) == (4, 2)  # 6 + 2 = 8 = 2 × 4, every module kept
    assert not any(a.name == "expansion" for a in with_option(sc_r, "dc").arrays)
    result = compare(sc_r, options=("dc",))
    dc = result.options["dc"]
    assert dc.modules == 2  # priced for the 2 new modules, not the 8 re-wired
    assert dc.economics.investment == pytest.approx(sc.expansion.cost_dc)
    # Worked by hand, NEC 690.7(A)(1) coefficient method with the site's design low (the scenario's own figure,
    # read from the check): Voc,max = 4 × 41.3 V × (1 + 0.0026 × (25 − T_low)); at T_low ≈ −21.7 °C that is
    # 4 × 41.3 × 1.1214 = 185.3 V, above roof_mppt's 150 V: 4 in series fails, so the option is set aside.
    (voc,) = [c for c in dc.checks if c.id == "strings.voc_cold"]
    t_low = float(voc.sentence.split("design low temperature of ")[1].split(" °C")[0])
    assert voc.value == pytest.approx(4 * 41.3 * (1 + 0.0026 * (25 - t_low)), abs=0.05)
    assert voc.status == "fail" and not dc.valid
    # the new modules' potential is what the re-wired array gives beyond the existing one: about 2/8 of it (equal
    # modules on one face; the string layout's mismatch moves it a little)
    grown = dc.simulation.sources.per_array_dc_w["south roof"].sum()
    assert dc.delta["expansion_potential_kwh"] == pytest.approx(grown * 0.25 * dc.simulation.site.dt_h / 1000, rel=0.05)


def test_restring_note_and_refusals():
    sc = load_scenario(MAPLE)
    e = dataclasses.replace(sc.expansion, restring="south roof", modules_per_string=3)
    # 6 + 1 = 7 modules form no equal strings of 3: the note says what is simulated instead
    note = restring_note(sc.replace(expansion=e), 1)
    assert "7 modules do not form equal strings of 3" in note
    c = dataclasses.replace(state.controls_from_scenario(sc, "dc"), restring="no such array")
    with pytest.raises(InputError, match="Re-string"):
        state.build_scenario(sc, c)
    text = Path(MAPLE).read_text(encoding="utf-8")
    bad = text.replace("[expansion]\n", '[expansion]\nrestring = "west porch"\n', 1)  # a face, not an array
    assert bad != text
    with pytest.raises(InputError, match="not a DC-coupled array"):
        parse_scenario(bad, base_dir=Path(MAPLE).parent)


def test_controls_carry_the_string_layout_into_the_scenario():
    sc = load_scenario(MAPLE)
    c = dataclasses.replace(state.controls_from_scenario(sc, "dc"), count=12, modules_per_string=3,
                            controller="spare_150", restring=None)
    built = state.build_scenario(sc, c)
    assert (built.expansion.controller, built.expansion.modules_per_string) == ("spare_150", 3)
    (new,) = [a for a in with_option(built, "dc").arrays if a.name == "expansion"]
    assert (new.modules_per_string, new.strings, new.controller) == (3, 4, "spare_150")
    # the controls made from a scenario give it back unchanged (the option looked at first is written down)
    back = state.build_scenario(sc, state.controls_from_scenario(sc, "dc")).expansion
    assert back == dataclasses.replace(sc.expansion, coupling="dc")


def test_sidebar_three_by_four_by_hand(monkeypatch):
    at = _app(monkeypatch)
    at.radio(key="c_option").set_value("dc").run()
    _ok(at)
    at.number_input(key="c_per").set_value(3).run()
    at.number_input(key="c_strings").set_value(4).run()
    _ok(at)
    assert at.session_state["c_count"] == 12  # 3 in series × 4 strings
    at = _tab(at, "Options")
    _ok(at)
    assert any(m.value.startswith("**12 panels") for m in at.markdown)
    # a count that forms no equal strings shows the note
    at.slider(key="c_count").set_value(7).run()
    _ok(at)
    assert any("7 modules do not form equal strings of 3" in c.value for c in at.caption)


def test_sidebar_restring_and_load_a_restrung_design(monkeypatch):
    at = _app(monkeypatch, MANGROVE)
    at.radio(key="c_option").set_value("dc").run()
    _ok(at)
    choices = at.selectbox(key="c_restring").options
    assert any("Re-string 'south slope'" in o for o in choices)
    # the search's best DC design on this site re-strings the existing array: load it into the controls
    at = _tab(at, "Best layouts")
    at.button(key="design_run").click().run()
    _ok(at)
    result = at.session_state["design_result"]["result"]
    best = result.best["dc"]
    (part,) = best.candidate.parts
    assert part.restrung == "south slope"
    at.selectbox(key="design_pick").set_value(best.id).run()
    at.button(key="design_load").click().run()
    _ok(at)
    assert at.session_state["c_restring"] == "south slope"
    assert at.session_state["c_per"] == part.modules_per_string
    assert at.session_state["c_count"] == part.modules
    # the what-if then simulates the same arrays as the design: the same added self-consumed energy
    at = _tab(at, "Options")
    _ok(at)
    sc = load_scenario(MANGROVE)
    c = dataclasses.replace(state.controls_from_scenario(sc, "dc"), option="dc", count=part.modules,
                            modules_per_string=part.modules_per_string, restring="south slope",
                            controller=part.controller)
    dc = compare(state.build_scenario(sc, c), options=("dc",)).options["dc"]
    # metrics.delta's self-consumed (Luthander et al. 2015) equals the search's for the same arrangement
    assert dc.delta["self_consumed_added_kwh"] == pytest.approx(best.added["self_consumed_kwh"], rel=1e-6, abs=1e-3)


def test_choosing_to_restring_starts_from_the_arrays_own_length(monkeypatch):
    at = _app(monkeypatch)
    at.radio(key="c_option").set_value("dc").run()
    assert at.session_state["c_per"] == 2  # the file's [expansion] modules_per_string
    at.selectbox(key="c_restring").set_value("south roof").run()
    _ok(at)
    assert at.session_state["c_per"] == 3  # 'south roof' is wired as 2 strings of 3
    # 6 existing + 2 new = 8 form no equal strings of 3: the note names what is simulated instead
    assert any("8 modules do not form equal strings of 3" in c.value for c in at.caption)
