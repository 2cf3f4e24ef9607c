"""`python -m core report`: the page's report without the browser, the steps CSV, exit codes; the progress bar."""

from __future__ import annotations

import html as html_text
import re
import shutil
from pathlib import Path

import pytest

from core.cli import main, stderr_progress
from core.present.safety import SAFETY_CAUTIONS

ROOT = Path(__file__).resolve().parents[1]
MAPLE = ROOT / "sample_sites" / "maple_hollow"


@pytest.fixture()
def site(tmp_path):
    """A private copy of Maple Hollow, so that nothing is written next to the sample."""
    for name in ("scenario.toml", "723170TYA.CSV", "load_backed_up.csv", "load_grid_only.csv"):
        shutil.copy(MAPLE / name, tmp_path / name)
    return tmp_path


def test_report_writes_the_html_report_and_the_steps_csv(site, capsys):
    html, csv = site / "out.html", site / "steps.csv"
    before = (site / "scenario.toml").read_bytes()
    assert main(["report", str(site / "scenario.toml"), "--out", str(html), "--csv", str(csv),
                 "--option", "dc"]) == 0
    text = html.read_text(encoding="utf-8")
    # offline; the monthly bars and the typical day (a DC option has no AC-coupled output to map)
    assert "<script" not in text and text.count("<svg") == 2
    assert "DC-coupled" in text and "Design checks" in text and "The options side by side" in text
    for caution in SAFETY_CAUTIONS:  # docs/design.md §6: the cautions travel with every report
        assert html_text.escape(caution) in text
    lines = csv.read_text(encoding="utf-8").splitlines()
    # one row per step of the year, at the load's own 15-minute step (the simulation's default)
    assert lines[0].startswith("interval_start,") and len(lines) == 8760 * 4 + 1
    assert (site / "scenario.toml").read_bytes() == before  # user files are never modified
    assert "written to" in capsys.readouterr().out


def test_report_to_a_csv_name_writes_only_the_steps(site):
    out = site / "steps.csv"
    assert main(["report", str(site / "scenario.toml"), "--out", str(out)]) == 0
    assert out.read_text(encoding="utf-8").startswith("interval_start,")
    assert not list(site.glob("*.html"))


@pytest.mark.parametrize("args, words", [
    (["--out", "report.pdf"], "neither .html nor .csv"),
    (["--out", "scenario.toml.html", "--option", "nonsense"], "invalid choice"),
])
def test_report_bad_arguments_exit_2_in_one_line(site, capsys, monkeypatch, args, words):
    monkeypatch.chdir(site)
    assert main(["report", "scenario.toml", *args]) == 2
    err = capsys.readouterr().err
    assert err.startswith("error: ") and words in err and len(err.strip().splitlines()) == 1


def test_report_refuses_to_write_over_its_inputs(site, capsys):
    weather = site / "723170TYA.CSV"
    before = weather.read_bytes()
    assert main(["report", str(site / "scenario.toml"), "--out", str(site / "out.html"), "--csv", str(weather)]) == 2
    assert "refusing to write over an input file" in capsys.readouterr().err
    assert weather.read_bytes() == before and not (site / "out.html").exists()


def test_simulate_help_says_which_step_it_runs_at(capsys):
    with pytest.raises(SystemExit):
        main(["simulate", "--help"])
    out = capsys.readouterr().out
    assert "step_s" in out and "weather's own step" in out


def test_progress_bar_reaches_100_percent(capsys):
    report = stderr_progress("work")
    report(0.25, "weather and loads")
    report(1.0, "done")
    err = capsys.readouterr().err
    assert re.search(r"work: weather and loads\s+25%", err) and re.search(r"work: done\s+100%", err)
