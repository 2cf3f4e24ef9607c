"""The compare, check and spacing subcommands: JSON shapes, exit codes, help examples."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from core.analyses.checks.spacing import min_row_gap
from core.cli import main

approx = pytest.approx
SAMPLE = str(Path(__file__).parents[1] / "sample_sites" / "maple_hollow" / "scenario.toml")
CHECK_KEYS = {"id", "status", "value", "limit", "unit", "sentence", "source", "caution", "subject", "option"}


def run(capsys, *argv):
    code = main(list(argv))
    out, err = capsys.readouterr()
    return code, out, err


def test_compare_json_on_the_sample_site(capsys):
    code, out, err = run(capsys, "compare", SAMPLE, "--count", "3", "--tilt", "25", "--azimuth", "200", "--json")
    assert code == 0 and err == ""  # no progress bar when stderr is not a terminal
    data = json.loads(out)
    assert set(data["options"]) == {"baseline", "ac_backed_up", "ac_grid", "dc"}
    assert data["layout"] == {"count": 3, "tilt_deg": 25.0, "azimuth_deg": 200.0}
    for key, option in data["options"].items():
        assert {"simulate", "delta", "economics", "label"} <= set(option)
        assert "energy_kwh" in option["simulate"] and "ratios" in option["simulate"]
        assert (option["economics"] is None) == (key == "baseline")
    # the delta is the difference of the two simulate objects
    base = data["options"]["baseline"]["simulate"]["energy_kwh"]
    for key in ("ac_backed_up", "dc"):
        o = data["options"][key]
        assert o["delta"]["grid_import_saved_kwh"] == approx(base["grid_import"] - o["simulate"]["energy_kwh"]["grid_import"])
        assert o["economics"]["currency"] == "USD"
    v = data["verdict"]
    assert v["text"]
    valid = [k for k, o in data["options"].items() if k != "baseline" and o["valid"]]
    for o in data["options"].values():
        assert o["valid"] == (not o["failed_checks"])
    if valid:
        assert v["energy"] in valid and v["money"] in valid
    else:
        # no option may be recommended: the verdict says so, names no winner, and sets aside every option
        assert v["energy"] is None and v["money"] is None and "No option passes" in v["text"]
        assert v["text"].count("Set aside:") == len(data["options"]) - 1


def test_compare_prices_the_modules_it_simulates(capsys):
    # Maple Hollow's expansion strings 2 modules in series. Whatever layout the DC option builds for 3 new
    # modules, compare must price the modules it simulates: the file's cost_dc is for its own count, scaled per
    # module (Expansion.priced_for), and the new panels' potential scales with the same count (same orientation).
    # Today parallel strings on one input must be equal (common practice) and 3 forms one whole string of 2.
    # Turned away from the porch (whose tree shades a string and microinverters differently), the new panels stand
    # free and unshaded, so the potential is the same per module either way.
    from core.scenario import load_scenario

    sc = load_scenario(SAMPLE)
    code, out, _ = run(capsys, "compare", SAMPLE, "--count", "3", "--tilt", "25", "--azimuth", "200", "--json")
    data = json.loads(out)
    dc, ac = data["options"]["dc"], data["options"]["ac_backed_up"]
    assert ac["modules"] == 3 and 1 <= dc["modules"] <= 3
    assert dc["economics"]["investment"] == approx(sc.expansion.cost_dc * dc["modules"] / sc.expansion.count,
                                                   abs=0.01)
    assert ac["economics"]["investment"] == approx(sc.expansion.cost_ac * 3 / sc.expansion.count, abs=0.01)
    assert dc["delta"]["expansion_potential_kwh"] == approx(ac["delta"]["expansion_potential_kwh"] * dc["modules"] / 3,
                                                            rel=1e-9)
    said = f"{dc['modules']} new modules are simulated and priced, not 3"
    assert (said in data["verdict"]["text"]) == (dc["modules"] != 3)


def test_compare_text_output(capsys):
    code, out, _ = run(capsys, "compare", SAMPLE, "--count", "1")
    assert code == 0
    assert "Grid import saved (kWh)" in out and "NPV (USD)" in out and "Passes every rule" in out
    # the verdict names a winner on money only among options that pass, or says that none passes
    assert "On money" in out or "No option passes" in out


def test_check_json_on_the_sample_site(capsys):
    code, out, _ = run(capsys, "check", SAMPLE, "--json")
    assert code == 0
    checks = json.loads(out)
    assert checks and all(set(c) == CHECK_KEYS for c in checks)
    assert {c["status"] for c in checks} <= {"pass", "warn", "fail"}
    assert {c["option"] for c in checks} == {"baseline", "ac_backed_up", "ac_grid", "dc"}
    for c in checks:
        assert c["sentence"] and c["source"]
        if c["id"].startswith(("strings.voc", "strings.current", "micro.voc", "ac_coupling.ratio",
                               "ac_coupling.uncontrolled_export", "frequency_watt")):
            assert c["caution"], c["id"]  # safety checks carry their caution (docs/design.md §6)
        if c["id"] == "ac_coupling.uncontrolled_export":
            assert (c["status"] == "fail") == (c["value"] > 1e-3)


def test_check_text_lists_cautions(capsys):
    code, out, _ = run(capsys, "check", SAMPLE)
    assert code == 0 and "Cautions:" in out and "not a design approval" in out


def test_spacing_json_matches_the_rule(capsys):
    code, out, _ = run(capsys, "spacing", "--latitude", "41", "--tilt", "10", "--length", "1.7", "--json")
    assert code == 0
    data = json.loads(out)
    rule = min_row_gap(41.0, 10.0, 1.7)
    assert data["gap_m"] == approx(rule.gap_m) and data["pitch_m"] == approx(rule.pitch_m)
    # common practice: about 0.75 m for 1.7 m rows at 10° around 40–42° latitude
    assert data["gap_m"] == approx(0.75, rel=0.10)
    code, out, _ = run(capsys, "spacing", "--latitude", "41", "--tilt", "10", "--length", "1.7", "--window", "11-13")
    assert code == 0 and "clear gap" in out


@pytest.mark.parametrize("argv, needle", [
    (["compare", "no/such/file.toml"], "not found"),
    (["compare", SAMPLE, "--count", "-1"], "--count"),
    (["compare", SAMPLE, "--tilt", "95"], "--tilt"),
    (["spacing", "--latitude", "41", "--tilt", "10", "--length", "1.7", "--window", "14-10"], "window"),
    (["spacing", "--tilt", "10", "--length", "1.7"], "latitude"),
    (["spacing", "--latitude", "80", "--tilt", "10", "--length", "1.7"], "below the horizon"),
])
def test_bad_input_exits_2_with_one_line(capsys, argv, needle):
    code, out, err = run(capsys, *argv)
    assert code == 2 and out == ""
    assert needle in err and "Traceback" not in err and len(err.strip().splitlines()) == 1


def test_compare_without_an_expansion_is_bad_input(capsys, tmp_path):
    text = Path(SAMPLE).read_text(encoding="utf-8")
    head, _, tail = text.partition("[expansion]")
    tail = tail[tail.index("[tariff]"):]
    scenario = tmp_path / "no_expansion.toml"
    sample_dir = Path(SAMPLE).parent
    body = (head + tail).replace('path = "723170TYA.CSV"', f'path = "{(sample_dir / "723170TYA.CSV").as_posix()}"')
    body = body.replace('"load_backed_up.csv"', f'"{(sample_dir / "load_backed_up.csv").as_posix()}"')
    body = body.replace('"load_grid_only.csv"', f'"{(sample_dir / "load_grid_only.csv").as_posix()}"')
    scenario.write_text(body, encoding="utf-8")
    code, _, err = run(capsys, "compare", str(scenario))
    assert code == 2 and "[expansion]" in err


@pytest.mark.parametrize("command", ["compare", "check", "spacing"])
def test_help_shows_an_example(capsys, command):
    with pytest.raises(SystemExit) as exc:
        main([command, "--help"])
    assert exc.value.code == 0
    assert "example:" in capsys.readouterr().out
