"""Speed and scale: secondroof against a hand-written reference, on a sample site (``make bench``).

Not part of ``make test`` (``addopts`` skips ``tests/bench``) and never a timed assertion: it prints a table and
one last line ``bench: sweep_ratio=… slider_ratio=… minute_over_hourly=… steps_exponent=… peak_mb=…
design_ratio=… browser_slider_s=… shade_over_plain=… draws_ratio=… big_load_s=… big_load_mb=…``.
What it does assert is that the reference and secondroof compute the same year (the ratios compare like with
like) and that the compiled engine matches the plain loop to 1e-9. docs/performance.md explains the figures.

* reference: per scenario, a fresh pvlib ModelChain per array, the project's converter rules and its dispatch
  rules as a plain Python loop (``bench_reference.py``); the time per scenario is the median over six
  scenarios of the sweep below, each the best of two runs;
* sweep_ratio: reference ÷ secondroof's time per scenario inside one 500-scenario sweep (2 options × 5 tilts ×
  5 azimuths × 10 counts, site preparation and every orientation included);
* slider_ratio: reference ÷ one count-only change with warm caches (``source_power`` + ``run``, as the explorer's
  cached simulation does), median of 24 moves, each the best of two;
* minute_over_hourly: a year at 60 s (525,600 steps, hourly weather interpolated, the 15-min load resampled) ÷ the
  hourly year, each from nothing (weather, sun, loads, orientations, engine, figures), best of a few runs;
* steps_exponent: slope of log(time) against log(steps) over 15, 5 and 1 min steps;
* design_ratio: the reference per candidate × the design search's candidates ÷ the search's time with the site
  given to both sides (``bench_design.py``; the table adds the figure from nothing and against the simulated ones);
* draws_ratio: 200 independent outage years through the batched engine (``outage_draws``, masks and figures
  included, the site and sources prepared) ÷ the hourly year from nothing;
* peak_mb: peak resident memory (``VmHWM``; ``ru_maxrss`` elsewhere) of a fresh process that runs the one-minute year;
* big_load_s, big_load_mb: reading ten years of one-minute load readings (5.3 million rows, ~120 MB of CSV,
  written by the bench into a temporary folder, never into the repository) in a fresh process: seconds and peak
  resident memory;
* numba's compile is measured apart, in a fresh process with an empty ``NUMBA_CACHE_DIR``;
* browser_slider_s: the explorer itself (``streamlit run``) in headless Chromium at 1280×800: from an arrow key on
  the panel-count slider to the headline's new value, median of eight moves after a first one that warms the
  caches (``tests/browser_timing.py``); ``nan`` without ``/usr/bin/chromium``.
* shade_over_plain: an hourly year from nothing with the new panels as one string on a face with a chimney
  (per-substring shading, I-V curves with bypass diodes) ÷ the same year without the face;
"""

from __future__ import annotations

import dataclasses
import json
import os
import platform
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numba
import numpy as np
import pandas as pd
import pvlib
import pytest
from bench_child import page_update, warm_engine
from bench_design import design_benchmark
from bench_reference import reference_year, shared_inputs

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # tests/: the browser helper shared with the tests
from browser_timing import CHROMIUM, measure_slider  # noqa: E402

from core.analyses.compare import compare
from core.analyses.options import Layout, with_option
from core.analyses.sweep import sweep
from core.model.dispatch import dispatch
from core.scenario import load_scenario
from core.scenario.schema import Face, Obstacle
from core.simulate import OrientationCache, prepare_site, run, simulate, source_power

HERE = Path(__file__).resolve().parent
ROOT = HERE.parents[1]
SCENARIO = ROOT / "sample_sites" / "maple_hollow" / "scenario.toml"

SWEEP_OPTIONS = ("ac_backed_up", "dc")
SWEEP_COUNTS = tuple(range(1, 11))
SWEEP_TILTS = (10.0, 20.0, 30.0, 40.0, 50.0)
SWEEP_AZIMUTHS = (90.0, 135.0, 180.0, 225.0, 270.0)
#: Scenarios of the sweep that the reference runs (each option at each of these layouts).
REFERENCE_LAYOUTS = (Layout(2, 20.0, 225.0), Layout(6, 30.0, 180.0), Layout(10, 50.0, 90.0))
SLIDER_COUNTS = tuple(range(1, 13))
#: Steps (s) of the years timed: hourly for the ratio, the three finer ones for the exponent.
YEAR_STEPS_S = (3600, 900, 300, 60)
EXPONENT_STEPS_S = (900, 300, 60)
REPEATS = {3600: 5, 900: 3, 300: 2, 60: 2}
REFERENCE_REPEATS = 2

TARGETS = {"sweep_ratio": (">=", 50.0), "slider_ratio": (">=", 20.0), "minute_over_hourly": ("<=", 15.0),
           "steps_exponent": ("<=", 1.1), "peak_mb": ("<=", 1500.0), "design_ratio": (">=", 50.0),
           "browser_slider_s": ("<=", 0.3), "shade_over_plain": ("<=", 3.0), "draws_ratio": ("<=", 10.0),
           "big_load_s": ("<=", 10.0), "big_load_mb": ("<=", 1500.0)}
FORMATS = {"sweep_ratio": ".1f", "slider_ratio": ".1f", "minute_over_hourly": ".2f", "steps_exponent": ".3f",
           "peak_mb": ".0f", "design_ratio": ".1f", "browser_slider_s": ".2f", "shade_over_plain": ".2f",
           "draws_ratio": ".2f", "big_load_s": ".1f", "big_load_mb": ".0f"}


def _child(args: list[str], env: dict | None = None) -> dict:
    out = subprocess.run([sys.executable, str(HERE / "bench_child.py"), *args], capture_output=True, text=True,
                         cwd=ROOT, env={**os.environ, **(env or {})}, check=False, timeout=600)
    assert out.returncode == 0, out.stderr
    return json.loads(out.stdout.strip().splitlines()[-1])


def _timed(fn, repeats: int) -> tuple[float, object]:
    """Best wall time of ``repeats`` calls, and that call's result.

    The best of a few runs is the usual estimate of a piece of work's own time on a machine that other
    processes share (it drops their interference); both sides of every ratio are taken the same way.
    """
    best, result = float("inf"), None
    for _ in range(repeats):
        t = time.perf_counter()
        out = fn()
        seconds = time.perf_counter() - t
        if seconds < best:
            best, result = seconds, out
    return best, result


def _shaded(sc):
    """The DC option with the new panels on a face with a chimney that shades one of them in the morning."""
    face = Face(name="east porch", tilt_deg=20.0, azimuth_deg=120.0, rows=1, columns=sc.expansion.count,
                obstacles=(Obstacle(name="chimney", azimuth_deg=60.0, distance_m=2.0, height_m=2.0, width_m=0.8,
                                    depth_m=0.8),))
    moved = dataclasses.replace(sc, faces=(*sc.faces, face), expansion=dataclasses.replace(sc.expansion, face=face.name))
    return with_option(moved, "dc")


def _with_step(sc, step_s: int):
    return dataclasses.replace(sc, simulation=dataclasses.replace(sc.simulation, step_s=step_s))


def _machine() -> str:
    model = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                model = line.split(":", 1)[1].strip()
                break
    except OSError:
        pass
    return (f"{model}, {os.cpu_count()} CPUs, numba {numba.__version__} ({numba.config.NUMBA_NUM_THREADS} threads), "
            f"numpy {np.__version__}, pandas {pd.__version__}, pvlib {pvlib.__version__}, "
            f"Python {platform.python_version()}")


def _verdict(key: str, value: float) -> str:
    op, target = TARGETS[key]
    if value != value:  # nan: not measured here
        return f"target {op} {target:g}: not measured"
    ok = value >= target if op == ">=" else value <= target
    return f"target {op} {target:g}: {'met' if ok else 'MISSED'}"


@pytest.mark.filterwarnings("ignore")
def test_benchmark():
    started = time.perf_counter()
    rows: list[tuple[str, str, str]] = []

    # -- numba: cold compile and load from the disk cache, each in a fresh process ------------------------------
    with tempfile.TemporaryDirectory() as cache_dir:
        cold = _child(["compile"], {"NUMBA_CACHE_DIR": cache_dir})
        cached = _child(["compile"], {"NUMBA_CACHE_DIR": cache_dir})
    warm_engine()  # this process: load from the project's own disk cache before anything is timed

    sc = _with_step(load_scenario(SCENARIO), 3600)  # the sweep and slider figures are hourly years
    t = time.perf_counter()
    site = prepare_site(sc)
    t_site = time.perf_counter() - t
    shared = shared_inputs(sc, site)

    # -- reference against secondroof on the same scenarios -------------------------------------------------------
    ref_times, pv_times, loop_times, worst_flow, worst_potential, worst_import = [], [], [], 0.0, 0.0, 0.0
    cache = OrientationCache()
    for option in SWEEP_OPTIONS:
        for layout in REFERENCE_LAYOUTS:
            variant = with_option(sc, option, layout)
            runs = [reference_year(variant, shared) for _ in range(REFERENCE_REPEATS)]
            ref = min(runs, key=lambda r: r.seconds)
            ref_times.append(ref.seconds)
            pv_times.append(ref.seconds_pv)
            loop_times.append(ref.seconds_loop)
            ours = simulate(variant, site, cache).results.energy_kwh
            # The same year: pvlib's ModelChain and our chain differ only in the diffuse IAM (ours integrates the
            # physical IAM over the sky dome after Marion 2017, ModelChain leaves diffuse light unmodified).
            worst_potential = max(worst_potential, abs(ours["pv_potential"] / ref.figures["pv_potential"] - 1.0))
            worst_import = max(worst_import, abs(ours["grid_import"] / ref.figures["grid_import"] - 1.0))
            fast = dispatch(ref.inputs, ref.params, compiled=True).flows
            worst_flow = max(worst_flow, float(np.abs(fast - ref.flows).max()))
    assert worst_potential < 0.05, worst_potential
    assert worst_import < 0.05, worst_import
    assert worst_flow <= 1e-9, worst_flow  # compiled results match the plain loop to 1e-9
    reference_s = statistics.median(ref_times)

    # -- a 500-scenario sweep from nothing but the scenario file ---------------------------------------------------
    def one_sweep():
        return sweep(sc, counts=SWEEP_COUNTS, tilts=SWEEP_TILTS, azimuths=SWEEP_AZIMUTHS, options=SWEEP_OPTIONS,
                     site=prepare_site(sc), cache=OrientationCache())

    sweep_s, table = _timed(one_sweep, 2)
    n_sweep = len(table)
    assert n_sweep == len(SWEEP_OPTIONS) * len(SWEEP_COUNTS) * len(SWEEP_TILTS) * len(SWEEP_AZIMUTHS) == 500
    sweep_per = sweep_s / n_sweep

    # -- a count-only change with warm caches (the explorer's cached simulation of one option) ---------------------
    lay = Layout(sc.expansion.count, sc.expansion.tilt_deg, sc.expansion.azimuth_deg)
    warm = OrientationCache()
    simulate(with_option(sc, "ac_backed_up", lay), site, warm)
    moves = []
    for option in SWEEP_OPTIONS:
        for count in SLIDER_COUNTS:
            def move(option=option, count=count):
                moved = with_option(sc, option, Layout(count, lay.tilt_deg, lay.azimuth_deg))
                return run(moved, site, source_power(moved, site, warm))

            moves.append(_timed(move, REFERENCE_REPEATS)[0])
    slider_s = statistics.median(moves)
    # The explorer's whole page update on a count change: every option side by side, economics and verdict.
    compare_s, _ = _timed(lambda: compare(sc, Layout(lay.count + 3, lay.tilt_deg, lay.azimuth_deg), site=site,
                                          cache=warm), 5)
    page_s, _ = _timed(lambda: page_update(sc, lay.count + 1, site, warm), 5)
    tilt_moves = []
    for tilt in (12.0, 17.0, 22.0, 27.0):
        t = time.perf_counter()
        moved = with_option(sc, "ac_backed_up", Layout(lay.count, tilt, lay.azimuth_deg))
        run(moved, site, source_power(moved, site, warm))
        tilt_moves.append(time.perf_counter() - t)

    # -- years at finer steps, each from nothing ------------------------------------------------------------------
    def year(v):
        t = time.perf_counter()
        prepared = prepare_site(v)  # what simulate(v) does first when given no site; timed apart for the table
        t_prepared = time.perf_counter() - t
        return t_prepared, len(simulate(v, prepared, OrientationCache()).steps)

    year_s, year_site_s, year_steps = {}, {}, {}
    for step_s in YEAR_STEPS_S:
        variant = with_option(_with_step(sc, step_s), "ac_backed_up")
        year_s[step_s], (year_site_s[step_s], year_steps[step_s]) = _timed(lambda v=variant: year(v),
                                                                            REPEATS[step_s])
    assert year_steps[60] == 525_600 and year_steps[3600] == 8_760
    minute_over_hourly = year_s[60] / year_s[3600]
    x = np.log([year_steps[s] for s in EXPONENT_STEPS_S])
    y = np.log([year_s[s] for s in EXPONENT_STEPS_S])
    exponent = float(np.polyfit(x, y, 1)[0])

    # -- a year with one obstacle and per-substring strings over the same year without shading ---------------------
    shaded_sc, plain_sc = _shaded(sc), with_option(sc, "dc")

    def from_nothing(v):
        return len(simulate(v, prepare_site(v), OrientationCache()).steps)

    shaded_s, _ = _timed(lambda: from_nothing(shaded_sc), 3)
    plain_s, _ = _timed(lambda: from_nothing(plain_sc), 3)
    shade_over_plain = shaded_s / plain_s
    # -- 200 outage years through the batched engine, against the hourly year ----------------------------------
    from core.analyses.outage_draws import outage_draws
    from core.scenario.schema import RandomOutages

    drawn = with_option(sc, "ac_backed_up", lay)
    drawn = drawn.replace(grid=dataclasses.replace(drawn.grid, random_outages=drawn.grid.random_outages
                                                   or RandomOutages()))
    drawn_sources = source_power(drawn, site, warm)
    outage_draws(drawn, site, drawn_sources, draws=2)  # compiled already; this warms the masks' code paths
    draws_s, _ = _timed(lambda: outage_draws(drawn, site, drawn_sources, draws=200), 2)
    draws_ratio = draws_s / year_s[3600]

    # -- peak memory of the one-minute year in a process of its own -----------------------------------------------
    mem = _child(["year", "60", str(SCENARIO)])
    assert mem["steps"] == 525_600
    peak_mb = mem["peak_mb"]

    # -- the design search: ≥ 100 candidates against a hand-built run per candidate -------------------
    design = design_benchmark(sc, shared, site)
    assert design["candidates"] >= 100, design["candidates"]
    assert design["worst_import"] < 0.05, design["worst_import"]
    # -- the explorer in a real browser: what a user waits for after a slider move ---------------------------------
    if CHROMIUM.exists():
        browser, browser_moves = measure_slider(8)
        browser_note = (f"headline; page settled {browser.settled_s:.2f} s; moves "
                        + " ".join(f"{m.headline_s:.2f}" for m in browser_moves))
    else:
        browser, browser_note = None, "no /usr/bin/chromium: not measured"
    browser_slider_s = browser.headline_s if browser else float("nan")
    # -- ten years of one-minute load readings, written to a temporary folder and read in a fresh process ---------
    with tempfile.TemporaryDirectory(prefix="secondroof-bench-") as folder:
        big_path = str(Path(folder) / "ten_years_minutes.csv")
        written = _child(["write_big_load", big_path])
        big_mb_file = Path(big_path).stat().st_size / 2**20
        big = _child(["big_load", big_path])
    # The same energy read back (the file's mean power, one-minute cells): the importer read every row.
    assert abs(big["mean_w"] / written["mean_w"] - 1.0) < 1e-3, (big, written)

    sweep_ratio = reference_s / sweep_per
    slider_ratio = reference_s / slider_s
    figures = {"sweep_ratio": sweep_ratio, "slider_ratio": slider_ratio, "minute_over_hourly": minute_over_hourly,
               "steps_exponent": exponent, "peak_mb": peak_mb, "design_ratio": design["design_ratio"],
               "browser_slider_s": browser_slider_s, "shade_over_plain": shade_over_plain, "draws_ratio": draws_ratio,
               "big_load_s": big["seconds"], "big_load_mb": big["peak_mb"]}

    rows += [
        ("machine", _machine(), ""),
        ("site", f"{sc.name}: {site.weather.source}", f"prepare_site {t_site:.2f} s (hourly)"),
        ("numba compile, cold", f"{cold['dispatch_s'] + cold['dispatch_many_s']:.1f} s",
         f"dispatch {cold['dispatch_s']:.1f} s + dispatch_many {cold['dispatch_many_s']:.1f} s, empty NUMBA_CACHE_DIR"),
        ("numba first call, disk cache", f"{cached['dispatch_s'] + cached['dispatch_many_s']:.2f} s",
         "a fresh process loading both compiled functions"),
        ("reference, per scenario", f"{reference_s * 1000:.0f} ms",
         f"median of {len(ref_times)} (best of {REFERENCE_REPEATS} each): ModelChain × "
         f"{len(with_option(sc, 'dc', lay).arrays)} arrays "
         f"{statistics.median(pv_times) * 1000:.0f} ms + plain loop {statistics.median(loop_times) * 1000:.0f} ms"),
        ("  same year as secondroof", f"PV {worst_potential * 100:.1f} %, grid {worst_import * 100:.1f} %",
         f"largest differences; compiled − plain loop ≤ {worst_flow:.1e} W"),
        ("sweep, 500 scenarios", f"{sweep_s:.2f} s", "site, 25 orientations, converters, batched engine, figures"),
        ("  per scenario", f"{sweep_per * 1000:.2f} ms", _verdict("sweep_ratio", sweep_ratio)),
        ("count change, warm caches", f"{slider_s * 1000:.1f} ms", _verdict("slider_ratio", slider_ratio)),
        ("  every option side by side", f"{compare_s * 1000:.0f} ms", "core.analyses.compare, all four options"),
        ("  the page's core work", f"{page_s * 1000:.0f} ms", "compare (with the design checks), page model, "
         "day and surplus tables, outages"),
        ("  tilt change (new orientation)", f"{statistics.median(tilt_moves) * 1000:.0f} ms",
         "one orientation computed, then as a count change"),
    ]
    for step_s in YEAR_STEPS_S:
        rows.append((f"year at {step_s} s", f"{year_s[step_s]:.2f} s",
                     f"{year_steps[step_s]:,} steps, best of {REPEATS[step_s]}, from nothing; "
                     f"of which the site {year_site_s[step_s]:.2f} s"))
    rows += [
        ("minute over hourly", f"{minute_over_hourly:.2f}", _verdict("minute_over_hourly", minute_over_hourly)),
        ("steps exponent", f"{exponent:.3f}", f"15/5/1-min years; {_verdict('steps_exponent', exponent)}"),
        ("peak memory, minute year", f"{peak_mb:.0f} MB",
         f"fresh process ({mem['seconds']:.1f} s), {mem['rss_before_mb']:.0f} MB after imports; "
         f"{_verdict('peak_mb', peak_mb)}"),
        ("design search", f"{design['search_s']:.2f} s",
         f"{design['candidates']} candidates, {design['simulated']} simulated, site given ("
         f"{design['from_nothing_s']:.2f} s from nothing); reference "
         f"{design['reference_per_s'] * 1000:.0f} ms per candidate (median of {design['reference_designs']})"),
        ("  design ratio", f"{design['design_ratio']:.1f}",
         f"{_verdict('design_ratio', design['design_ratio'])}; against the simulated ones only "
         f"{design['design_ratio_simulated']:.1f}; from nothing "
         f"{design['design_ratio'] * design['search_s'] / design['from_nothing_s']:.1f}"),
        ("shaded year over plain", f"{shade_over_plain:.2f}",
         f"{shaded_s:.2f} s against {plain_s:.2f} s, hourly, from nothing: the new panels as one string on a face "
         f"with a chimney (per-substring shading, I-V curves); {_verdict('shade_over_plain', shade_over_plain)}"),
        ("200 outage years", f"{draws_s:.2f} s", "batched engine, site and sources prepared"),
        ("draws ratio", f"{draws_ratio:.2f}", _verdict("draws_ratio", draws_ratio)),
        ("ten years of minutes, read", f"{big['seconds']:.1f} s",
         f"{written['rows']:,} rows, {big_mb_file:.0f} MB of CSV; {_verdict('big_load_s', big['seconds'])}"),
        ("  peak memory", f"{big['peak_mb']:.0f} MB",
         f"fresh process, {big['rss_before_mb']:.0f} MB after imports; {_verdict('big_load_mb', big['peak_mb'])}"),
        ("sweep ratio", f"{sweep_ratio:.1f}", _verdict("sweep_ratio", sweep_ratio)),
        ("slider ratio", f"{slider_ratio:.1f}", _verdict("slider_ratio", slider_ratio)),
        ("browser slider move", f"{browser_slider_s:.2f} s",
         f"{browser_note}; {_verdict('browser_slider_s', browser_slider_s)}"),
        ("bench wall time", f"{time.perf_counter() - started:.0f} s", ""),
    ]
    width = max(len(r[0]) for r in rows) + 2
    value_width = max(len(r[1]) for r in rows if r[0] != "machine") + 2
    print()
    print("secondroof benchmark")
    for name, value, note in rows:
        if name == "machine":
            print(f"{name:<{width}}{value}")
        else:
            print(f"{name:<{width}}{value:<{value_width}}{note}")
    print("bench: " + " ".join(f"{k}={v:{FORMATS[k]}}" for k, v in figures.items()))
