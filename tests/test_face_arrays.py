"""Arrays on a shaded face through the whole year (core.face_arrays via core.simulate)."""

import dataclasses
from pathlib import Path

import pytest

from core.analyses.options import with_option
from core.face_arrays import array_breakdown
from core.scenario.toml_io import parse_scenario
from core.simulate import OrientationCache, prepare_site, simulate

SAMPLE = Path(__file__).resolve().parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml"

FACE = '''
[simulation]
step_s = 3600

[[faces]]
name = "east porch"
tilt_deg = 20
azimuth_deg = 120
rows = 1
columns = 2
module_orientation = "portrait"
'''
CHIMNEY = '''
[[faces.obstacles]]
name = "chimney"
azimuth_deg = 60
distance_m = 2.0
height_m = 2.0
width_m = 0.8
depth_m = 0.8
'''


def _scenario(obstacle: bool):
    sc = parse_scenario(SAMPLE.read_text(encoding="utf-8") + FACE + (CHIMNEY if obstacle else ""),
                        base_dir=SAMPLE.parent)
    return _on_face(sc, "east porch")


def _on_face(sc, name: str):
    """The scenario with the new panels on face ``name``, facing the way it does (turned away they stand free)."""
    face = next(f for f in sc.faces if f.name == name)
    return sc.replace(expansion=dataclasses.replace(sc.expansion, face=name, tilt_deg=face.tilt_deg,
                                                    azimuth_deg=face.azimuth_deg))


@pytest.fixture(scope="module")
def runs():
    out = {}
    for obstacle in (True, False):
        sc = _scenario(obstacle)
        site, cache = prepare_site(sc), OrientationCache()
        for option in ("ac_backed_up", "dc"):
            sim = simulate(with_option(sc, option), site, cache)
            out[obstacle, option] = sim, {a["name"]: a for a in array_breakdown(sim)}
    return out


def test_microinverters_lose_less_to_the_chimney_than_one_string(runs):
    # The practitioner's rule (common practice): a shaded module on its own microinverter loses only itself, while
    # in a string it drags the string's current down or is bypassed substring by substring.
    micro = runs[True, "ac_backed_up"][1]["expansion"]["losses_kwh"]["obstacles"]
    string = runs[True, "dc"][1]["expansion"]["losses_kwh"]["obstacles"]
    assert 0.0 < micro < string


def test_no_obstacle_no_obstacle_loss_and_no_horizon_no_horizon_loss(runs):
    for option in ("ac_backed_up", "dc"):
        losses = runs[False, option][1]["expansion"]["losses_kwh"]
        assert losses["obstacles"] == 0.0 and losses["horizon"] == 0.0
    # Manufacturing mismatch is a string's loss only (about 1-2 %, common practice, from memory).
    assert runs[False, "dc"][1]["expansion"]["losses_kwh"]["mismatch"] > 0.0
    assert runs[False, "ac_backed_up"][1]["expansion"]["losses_kwh"]["mismatch"] == pytest.approx(0.0, abs=1e-9)


def test_breakdown_closes_and_balance_holds(runs):
    for (_, _), (sim, arrays) in runs.items():
        energy = sim.results.to_dict()["energy_kwh"]
        assert abs(energy["balance_error"]) < 1e-6
        for a in arrays.values():
            assert a["poa_kwh"] - sum(a["losses_kwh"].values()) == pytest.approx(a["ac_kwh"], rel=1e-9, abs=1e-6)
        delivered = sum(a["ac_kwh"] for a in arrays.values())
        used = sum(float(sim.steps[c].sum()) * sim.site.dt_h / 1000.0
                   for c in ("dc_used_w", "ac_backed_used_w", "ac_grid_used_w"))
        assert delivered == pytest.approx(used, rel=1e-6)


def test_verdict_gives_the_shading_numbers(runs):
    from core.analyses.compare import compare

    sc = _scenario(True)
    verdict = compare(sc).verdict
    line = next(r for r in verdict.reasons if r.startswith("Shading on the new panels' face"))
    micro = runs[True, "ac_backed_up"][1]["expansion"]["losses_kwh"]["obstacles"]
    assert "on microinverters" in line and f"{micro:.0f} kWh" in line


def test_one_cache_keeps_faces_apart():
    # The orientation cache is keyed by the face too: the same orientation with and without a chimney differs.
    cache = OrientationCache()
    with_chimney, without = _scenario(True), _scenario(False)
    site = prepare_site(with_chimney)
    a = simulate(with_option(with_chimney, "dc"), site, cache)
    b = simulate(with_option(without, "dc"), site, cache)
    loss = {k: {x["name"]: x for x in array_breakdown(s)}["expansion"]["losses_kwh"]["obstacles"]
            for k, s in (("a", a), ("b", b))}
    assert loss["a"] > 0.0 and loss["b"] == 0.0
    assert a.sources.per_array_dc_w["expansion"].sum() < b.sources.per_array_dc_w["expansion"].sum()


def test_face_scenario_round_trips_and_a_too_small_layout_is_bad_input():
    from core.errors import InputError
    from core.scenario import scenario_to_toml

    sc = _scenario(True)
    again = parse_scenario(scenario_to_toml(sc), base_dir=SAMPLE.parent)
    assert again.faces == sc.faces and again.expansion.face == "east porch"
    # three modules on the two-module porch, named in the file (the what-if's extra panels would stand free instead)
    new = next(a for a in with_option(sc, "ac_backed_up").arrays if a.name == "expansion")
    crowded = sc.replace(arrays=(*sc.arrays, dataclasses.replace(new, modules=3)))
    with pytest.raises(InputError) as err:
        simulate(crowded)
    where = f"faces[{[f.name for f in sc.faces].index('east porch')}].rows"
    assert where in str(err.value) and "holds 2" in str(err.value)


def test_a_hill_climbing_tracker_loses_more_to_the_chimney():
    # A tracker that climbs from open circuit stops on the first power maximum of a partly shaded string (the
    # classic local-maximum trap, e.g. Bishop 1988's curves); a scanning one finds the global maximum.
    sc = _scenario(True)
    site = prepare_site(sc)
    local = sc.replace(simulation=dataclasses.replace(sc.simulation, mppt_tracker="local"))
    loss = {}
    for name, variant in (("global", sc), ("local", local)):
        sim = simulate(with_option(variant, "dc"), site, OrientationCache())
        loss[name] = {a["name"]: a for a in array_breakdown(sim)}["expansion"]["losses_kwh"]["obstacles"]
    assert loss["local"] > loss["global"] > 0.0


def test_shade_hours_per_module_for_the_drawing():
    from core.face_arrays import module_shade_hours

    sc = _scenario(True)
    site = prepare_site(sc)
    porch = next(f for f in sc.faces if f.name == "east porch")
    layout, hours = module_shade_hours(site, porch, sc.modules["mono_410"])
    assert layout.n_modules == 2 and hours.max() > 0.0
    assert hours.min() < hours.max()  # the chimney stands off one end of the row: one module sees more shade
    _, none = module_shade_hours(site, dataclasses.replace(porch, obstacles=()), sc.modules["mono_410"])
    assert not none.any()


RACKS = '''
[simulation]
step_s = 3600

[[faces]]
name = "flat roof"
tilt_deg = 25
azimuth_deg = 180
mount = "rack"
row_pitch_m = PITCH
rows = 2
columns = 1
module_orientation = "ORIENT"
'''


def test_racked_rows_on_a_flat_roof_portrait_loses_more():
    # Martínez-Moreno et al. (2010): with bypass diodes, a portrait row loses more to the row in front than a
    # landscape one at the same ground cover ratio; here through the whole year on microinverters.
    text = SAMPLE.read_text(encoding="utf-8")
    loss = {}
    for orient, pitch in (("portrait", 2.6), ("landscape", 2.6 * 1.13 / 1.72)):
        sc = _on_face(parse_scenario(text + RACKS.replace("PITCH", str(pitch)).replace("ORIENT", orient),
                                     base_dir=SAMPLE.parent), "flat roof")
        sim = simulate(with_option(sc, "ac_backed_up"))
        a = {x["name"]: x for x in array_breakdown(sim)}["expansion"]
        loss[orient] = a["losses_kwh"]["row_shading"] / a["poa_kwh"]
        assert a["losses_kwh"]["obstacles"] == 0.0
    assert loss["portrait"] > loss["landscape"] > 0.0


def test_new_panels_turned_away_from_their_face_stand_free():
    # The sample's new panels lie on the west porch, where a tree shades them; turned to face south they are no
    # longer on that roof (the explorer's tilt and azimuth, a sweep cell), so they take neither its layout nor its
    # shade. The obstacle's loss is a share of the potential between none and all of it (the box only stands off
    # one end of the row).
    sc = parse_scenario(SAMPLE.read_text(encoding="utf-8"), base_dir=SAMPLE.parent)
    assert sc.expansion.face == "west porch" and any(f.obstacles for f in sc.faces)
    site, cache = prepare_site(sc), OrientationCache()
    on = with_option(sc, "ac_backed_up")
    a = {x["name"]: x for x in array_breakdown(simulate(on, site, cache))}["expansion"]
    assert next(x for x in on.arrays if x.name == "expansion").face == "west porch"
    assert 0.0 < a["losses_kwh"]["obstacles"] < a["poa_kwh"]
    turned = with_option(sc.replace(expansion=dataclasses.replace(sc.expansion, azimuth_deg=180.0)), "ac_backed_up")
    array = next(x for x in turned.arrays if x.name == "expansion")
    assert array.face is None and array.azimuth_deg == 180.0
    b = {x["name"]: x for x in array_breakdown(simulate(turned, site, cache))}["expansion"]
    assert b["losses_kwh"]["obstacles"] == 0.0
    # more panels than the porch's row of three holds stand free too, rather than refuse the setting
    many = with_option(sc.replace(expansion=sc.expansion.priced_for(4)), "ac_backed_up")
    assert next(x for x in many.arrays if x.name == "expansion").face is None
    assert next(x for x in with_option(sc.replace(expansion=sc.expansion.priced_for(3)), "dc").arrays
                if x.name == "expansion").face == "west porch"
