"""The design search: string sizing worked by hand, validity, costs, and written-out designs that reproduce it."""

from __future__ import annotations

import dataclasses
import json

import pytest

from core.analyses.checks import design_temperatures, run_checks
from core.analyses.design import search, write_best
from core.analyses.design.build import design_scenario
from core.analyses.design.candidates import enumerate_candidates
from core.analyses.design.costs import design_cost
from core.analyses.design.evaluate import static_checks
from core.analyses.design.spec import design_spec
from core.analyses.design.strings import factorisations, nearest_arrangements
from core.analyses.options import dc_string_layout
from core.cli import main
from core.scenario import load_scenario, parse_scenario
from core.simulate import OrientationCache, prepare_site, simulate

MAPLE = "sample_sites/maple_hollow/scenario.toml"
MANGROVE = "sample_sites/mangrove_lane/scenario.toml"


def sizing_scenario(*, module: str, controller: str, existing: str = "", design_controllers: str = "[]",
                    low: float = -5.0, high: float = 35.0, new_max: int = 4, room: int = 4) -> str:
    return f"""
name = "sizing"
[site]
latitude = 30.0
longitude = -90.0
timezone = "America/Chicago"
[weather]
source = "monthly"
ghi_kwh_m2_day = [3, 4, 5, 6, 6, 6, 6, 6, 5, 4, 3, 3]
temp_air_c = [10, 12, 16, 20, 24, 27, 28, 28, 26, 21, 15, 11]
[modules.m]
{module}
[battery]
usable_kwh = 10
nominal_v = 51.2
[inverter_charger]
rating_w = 5000
[controllers.main]
{controller}
[controllers.spare]
{controller}
[[faces]]
name = "roof"
tilt_deg = 25
azimuth_deg = 180
max_modules = {room + (10 if existing else 0)}
{existing}
[design]
module = "m"
new_modules_max = {new_max}
controllers = {design_controllers}
microinverters = []
[simulation]
design_low_temp_c = {low}
design_high_temp_c = {high}
"""


# A 380 W module (Voc 44.6 V, β −0.28 %/°C, Isc 10.85 A, Vmp 37.0 V, γ −0.36 %/°C).
MODULE_380 = ("pmax_w = 380\nvmp_v = 37.0\nimp_a = 10.27\nvoc_v = 44.6\nisc_a = 10.85\n"
              "beta_voc_pct_per_c = -0.28\ngamma_pmax_pct_per_c = -0.36")
EXISTING_2X5 = ('[[arrays]]\nname = "old"\ncoupling = "dc"\nmodule = "m"\nface = "roof"\ncontroller = "main"\n'
                "modules_per_string = 5\nstrings = 2")


def passing_dc(text: str) -> set[tuple]:
    """(kind, new modules, per string, strings) of every DC-only candidate that fails no check."""
    sc = parse_scenario(text)
    spec = design_spec(sc)
    temps = design_temperatures(sc)
    out = set()
    for cand in enumerate_candidates(sc, spec):
        (part,) = cand.parts
        checks = static_checks(design_scenario(sc, spec, cand), temps)
        if not any(c.status == "fail" for c in checks):
            kind = "restring" if part.restrung else ("added" if part.joins else part.controller)
            out.add((kind, part.modules, part.modules_per_string, part.strings))
    return out


def test_string_sizing_by_hand_restring_on_a_250_v_controller():
    # Worked by hand. NEC 690.7(A)(1), coefficient method, design low −5 °C:
    #   Voc,max per module = 44.6 × [1 + (−0.0028)(−5 − 25)] = 44.6 × 1.084 = 48.346 V;
    #   250 V / 48.346 V = 5.17 → at most 5 in series (5 × 48.346 = 241.7 V; 6 × = 290.1 V > 250 V).
    # NEC 690.8(A)(1): 1.25 × 10.85 = 13.5625 A per string; 45 A / 13.5625 A = 3.32 → at most 3 strings.
    # Hot Vmp (common practice, γ scaling): SAPM cell temperature (King et al. 2004, close mount glass/glass
    #   a = −2.98, b = −0.0471, ΔT = 1) at 1000 W/m², 1 m/s, 35 °C air: 1000·e^(−3.0271) + 35 + 1 = 84.46 °C;
    #   Vmp = 37.0 × (1 − 0.0036 × 59.46) = 29.08 V per module; the battery needs 51.2 + 5 = 56.2 V → at least
    #   2 in series (58.16 V).
    # So valid strings are 2…5 in series, 1…3 in parallel. The existing 2 × 5 with k new modules:
    #   k = 1: 11 = 11 × 1 | 1 × 11            → none
    #   k = 2: 12 = 12×1 | 6×2 | 4×3 | 3×4 | 2×6 | 1×12 → only 4 in series × 3 strings
    #   k = 3: 13 (prime)                       → none
    #   k = 4: 14 = 14×1 | 7×2 | 2×7 | 1×14     → none
    # Added strings of the existing length 5 need k = 5 > the 4 allowed.
    text = sizing_scenario(module=MODULE_380, existing=EXISTING_2X5, controller=(
        "max_pv_voltage_v = 250\nmppt_min_v = 80\nmppt_max_v = 240\nmax_input_current_a = 45\n"
        "max_charge_current_a = 100"))
    assert passing_dc(text) == {("restring", 2, 4, 3)}


def test_string_sizing_by_hand_new_modules_on_their_own_150_v_controller():
    # Worked by hand, same module and temperatures as above, on a 150 V, 30 A controller (MPPT from 60 V):
    #   150 V / 48.346 V = 3.10 → at most 3 in series (3 × 48.346 = 145.0 V);
    #   30 A / 13.5625 A = 2.21 → at most 2 strings; hot Vmp needs at least 2 in series (58.16 V ≥ 56.2 V).
    #   k = 1: 1 × 1 → none;  k = 2: 2 × 1 ✓, 1 × 2 ✗;  k = 3: 3 × 1 ✓, 1 × 3 ✗;
    #   k = 4: 4 × 1 ✗ (193.4 V), 2 × 2 ✓ (27.1 A), 1 × 4 ✗.
    text = sizing_scenario(module=MODULE_380, design_controllers='["spare"]', controller=(
        "max_pv_voltage_v = 150\nmppt_min_v = 60\nmppt_max_v = 140\nmax_input_current_a = 30\n"
        "max_charge_current_a = 30"))
    assert passing_dc(text) == {("spare", 2, 2, 1), ("spare", 3, 3, 1), ("spare", 4, 2, 2)}


def test_string_sizing_by_hand_no_arrangement_fits_a_100_v_controller():
    # Worked by hand: a 410 W module (Voc 41.3 V, β −0.26 %/°C, Isc 12.7 A, Vmp 34.2 V, γ −0.34 %/°C) on a
    # 100 V, 20 A controller at a design low of −10 °C and 35 °C air:
    #   Voc,max = 41.3 × (1 + 0.0026 × 35) = 45.06 V → at most 2 in series (90.1 V; 3 × = 135.2 V > 100 V);
    #   1.25 × 12.7 = 15.875 A → at most 1 string (2 × = 31.75 A > 20 A);
    #   hot Vmp = 34.2 × (1 − 0.0034 × 59.46) = 27.29 V; 2 in series = 54.6 V < 56.2 V → cannot charge.
    # No arrangement of 1…4 new modules passes.
    module = ("pmax_w = 410\nvmp_v = 34.2\nimp_a = 12.0\nvoc_v = 41.3\nisc_a = 12.7\n"
              "beta_voc_pct_per_c = -0.26\ngamma_pmax_pct_per_c = -0.34")
    text = sizing_scenario(module=module, design_controllers='["spare"]', low=-10.0, controller=(
        "max_pv_voltage_v = 100\nmppt_min_v = 58\nmppt_max_v = 95\nmax_input_current_a = 20\n"
        "max_charge_current_a = 15"))
    assert passing_dc(text) == set()


def test_factorisations_and_counts_never_rounded():
    assert factorisations(12) == [(12, 1), (6, 2), (4, 3), (3, 4), (2, 6), (1, 12)]
    assert factorisations(7) == [(7, 1), (1, 7)]
    assert nearest_arrangements(3, 2) == [(3, 1), (1, 3)]
    for count in range(1, 25):
        for per in range(1, 6):
            p, s = dc_string_layout(count, per)
            assert p * s == count  # every module priced is simulated


def test_compare_count_3_simulates_and_prices_three_modules():
    from core.analyses.compare import compare
    from core.analyses.options import Layout

    sc = load_scenario(MAPLE)
    e = sc.expansion
    result = compare(sc, Layout(3, e.tilt_deg, e.azimuth_deg), options=("dc",))
    array = next(a for a in result.options["dc"].scenario.arrays if a.name == "expansion")
    assert array.module_count == 3
    assert result.options["dc"].economics.investment == pytest.approx(e.cost_dc * 3 / e.count)


@pytest.fixture(scope="module")
def maple():
    sc = load_scenario(MAPLE)
    site = prepare_site(sc)
    cache = OrientationCache()
    return sc, site, cache, search(sc, site=site, cache=cache)


def test_maple_hollow_finds_valid_dc_and_ac_designs(maple):
    _, _, _, result = maple
    assert result.best["dc"] is not None and result.best["ac"] is not None
    kinds = {d.candidate.coupling for d in result.valid}
    assert {"dc", "ac"} <= kinds
    # no valid design sends energy into a grid that may not be fed
    assert all(d.figures["uncontrolled"] <= 1e-3 for d in result.valid)
    # ranked by NPV
    npvs = [d.npv for d in result.valid]
    assert npvs == sorted(npvs, reverse=True) or max(abs(a - b) for a, b in zip(npvs, sorted(npvs, reverse=True),
                                                                              strict=True)) <= 0.5


def test_costs_add_up(maple):
    sc, _, _, result = maple
    spec = result.spec
    d = sc.design
    for design in result.designs:
        cost = design_cost(sc, spec, design.candidate)
        assert cost.total == pytest.approx(sum(cost.items.values()))
        # by hand from the file's prices: modules, mounting, fixed, re-stringing, converters bought, limiter
        expected = 0.0
        for p in design.candidate.parts:
            expected += p.modules * (sc.modules[spec.module].price + d.cost_per_module)
            if p.coupling == "dc":
                expected += d.cost_restring if p.restrung else 0.0
                if p.controller == "spare_150" or p.controller == "porch_mppt":  # not used by an existing array
                    expected += sc.controllers[p.controller].price
            else:
                expected += p.units * sc.microinverters[p.microinverter].price
                # a limiter (meter, sensors) or a relay is bought; islanded is a mode of the inverter-charger
                expected += d.cost_limiter if p.export_control in ("limiter", "relay") else 0.0
        couplings = {p.coupling for p in design.candidate.parts}
        expected += (d.cost_fixed_dc if "dc" in couplings else 0.0) + (d.cost_fixed_ac if "ac" in couplings else 0.0)
        assert design.cost.total == pytest.approx(expected)


@pytest.fixture(scope="module")
def mangrove():
    sc = load_scenario(MANGROVE)
    site = prepare_site(sc)
    cache = OrientationCache()
    return sc, site, cache, search(sc, site=site, cache=cache)


@pytest.mark.parametrize("site_fixture", ["maple", "mangrove"])
def test_every_valid_design_passes_check_when_written_out(site_fixture, request, tmp_path):
    from core.analyses.design.build import write_design

    sc, site, cache, result = request.getfixturevalue(site_fixture)
    assert result.valid
    # no valid design sends energy into a grid that may not be fed
    assert all(d.figures["uncontrolled"] <= 1e-3 for d in result.valid)
    for d in result.valid:
        path = write_design(d.scenario, tmp_path / f"{d.id}.toml")
        written = load_scenario(path)
        assert written.design is None and written.expansion is None
        sim = simulate(written, site, cache)
        failed = [c.id for c in run_checks(written, sim, cache=cache) if c.status == "fail"]
        assert failed == [], d.id


def test_written_best_reproduces_the_search(maple, tmp_path):
    sc, site, cache, result = maple
    paths = write_best(result, tmp_path)
    assert paths
    base = simulate(sc, site, cache).results.energy_kwh
    for path in paths:
        d = result.get(path.stem.removeprefix("design_"))
        e = simulate(load_scenario(path)).results.energy_kwh  # from nothing: its own site
        added = (e["harvested"] - e["exported"]) - (base["harvested"] - base["exported"])
        assert added == pytest.approx(d.added_self_consumed_kwh, rel=1e-6, abs=1e-6)
        assert e["grid_import"] == pytest.approx(d.figures["grid_import"], rel=1e-9)
        assert e["exported_uncontrolled"] == pytest.approx(d.figures["uncontrolled"], abs=1e-9)


def test_mangrove_lane_restringing_is_the_best_dc_answer_and_a_micro_part_pays_on_top(mangrove):
    result = mangrove[3]
    dc, overall = result.best["dc"], result.best["overall"]
    assert dc.candidate.parts[0].restrung is not None
    assert overall.candidate.coupling == "dc+ac"
    restring, micro = overall.candidate.parts
    assert restring.restrung is not None and micro.coupling == "ac" and micro.modules in (1, 2)
    assert micro.face != restring.face
    assert overall.npv > dc.npv


def test_design_from_expansion_when_design_is_absent():
    sc = load_scenario(MAPLE)
    sc = sc.replace(design=None, faces=(), arrays=tuple(dataclasses.replace(a, face=None) for a in sc.arrays))
    spec = design_spec(sc)
    assert spec.new_modules_max == sc.expansion.count and spec.from_expansion
    assert spec.controllers == (sc.expansion.controller,) and spec.microinverters == (sc.expansion.microinverter,)
    result = search(sc)
    # costs per panel as [expansion] prices them
    for d in result.designs:
        (part,) = d.candidate.parts if len(d.candidate.parts) == 1 else (None,)
        if part is not None and part.coupling == "ac":
            assert d.cost.total == pytest.approx(sc.expansion.cost_ac * part.modules / sc.expansion.count)


def test_cli_design_json_and_write_best(tmp_path, capsys):
    assert main(["design", MAPLE, "--json", "--write-best", str(tmp_path)]) == 0
    out = json.loads(capsys.readouterr().out)
    assert set(out) == {"designs", "best"} and set(out["best"]) == {"dc", "ac", "overall"}
    d = out["designs"][0]
    for key in ("id", "coupling", "new_modules", "parts", "valid", "failed_checks", "warnings", "cost", "npv", "irr",
                "simple_payback_years", "added_self_consumed_kwh", "curtailed_added_kwh", "uncontrolled_export_kwh",
                "uncontrolled_export_hours"):
        assert key in d
    assert d["id"] == out["best"]["overall"]
    assert list(tmp_path.glob("design_*.toml"))
    assert main(["design", MAPLE, "--top", "0"]) == 2


def test_cli_compare_export_control(capsys):
    assert main(["compare", MAPLE, "--export-control", "limiter", "--json"]) == 0
    out = json.loads(capsys.readouterr().out)
    assert out["options"]["ac_backed_up"]["delta"]["exported_uncontrolled_kwh"] == pytest.approx(0.0, abs=1e-6)
    assert main(["compare", MAPLE, "--export-control", "sometimes"]) == 2


def test_cli_design_top_keeps_the_best_of_each_kind_and_bad_input_exits_2(tmp_path, capsys):
    assert main(["design", MANGROVE, "--json", "--top", "1"]) == 0
    out = json.loads(capsys.readouterr().out)
    ids = {d["id"] for d in out["designs"]}
    assert {i for i in out["best"].values() if i} <= ids
    assert all(d["valid"] for d in out["designs"])
    # nothing to design: neither [design] nor [expansion]
    text = open(MANGROVE, encoding="utf-8").read()
    bare = text[:text.index("[expansion]")] + text[text.index("[tariff]"):]
    path = tmp_path / "scenario.toml"
    path.write_text(bare.replace('"12839.tm2"', f'"{load_scenario(MANGROVE).weather.path}"'), encoding="utf-8")
    (tmp_path / "load_backed_up.csv").write_bytes(open("sample_sites/mangrove_lane/load_backed_up.csv", "rb").read())
    (tmp_path / "load_grid_only.csv").write_bytes(open("sample_sites/mangrove_lane/load_grid_only.csv", "rb").read())
    assert main(["design", str(path)]) == 2
    assert "nothing to design" in capsys.readouterr().err


def test_search_reports_progress_to_the_end(mangrove):
    sc, site, cache, _ = mangrove
    seen = []
    search(sc, site=site, cache=cache, progress=lambda f, what: seen.append((f, what)))
    fractions = [f for f, _ in seen]
    assert fractions == sorted(fractions) and fractions[0] == 0.0 and fractions[-1] == 1.0
    assert any("simulated" in what for _, what in seen)
